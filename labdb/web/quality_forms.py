"""Forms of the quality pages: flag filters and a part's quality settings (bench units)."""

from __future__ import annotations

from django import forms

from labdb.catalog.models import Part
from labdb.quality.models import FlagState
from labdb.quality.services import RULES, PartSettings


class FlagFilterForm(forms.Form):
    state = forms.ChoiceField(
        choices=[("", "any state")] + list(FlagState.choices),
        required=False,
        initial=FlagState.OPEN,
    )
    rule = forms.ChoiceField(choices=[("", "any rule")] + list(RULES.items()), required=False)
    part = forms.CharField(required=False, max_length=80)
    lot = forms.IntegerField(required=False, widget=forms.HiddenInput)
    current = forms.ChoiceField(
        choices=[("1", "rule still fires"), ("0", "rule no longer fires"), ("", "either")],
        required=False,
        initial="1",
        label="Current",
    )

    def apply(self, qs):
        d = self.cleaned_data
        # A form sent without a field means its default, not "any" (a bare /flags/ link).
        state = d["state"] if "state" in self.data else FlagState.OPEN
        current = d["current"] if "current" in self.data else "1"
        if state:
            qs = qs.filter(state=state)
        if current:
            qs = qs.filter(active=current == "1")
        if d["rule"]:
            qs = qs.filter(rule=d["rule"])
        if d["part"]:
            qs = qs.filter(part__part_number=d["part"])
        if d["lot"]:
            qs = qs.filter(lot_id=d["lot"])
        return qs


def _optional(label: str, help_text: str, **kw) -> forms.FloatField:
    return forms.FloatField(required=False, label=label, help_text=help_text, **kw)


class PartSettingsForm(forms.Form):
    """The settings of :class:`PartSettings` in bench units: V, pF, plain ratio, per cent."""

    ref_bias_low_v = _optional(
        "Reference window, low end (V)", "Blank: 0 V, or the lowest measured bias."
    )
    ref_bias_high_v = _optional(
        "Reference window, high end (V)",
        "Blank: the rated reverse voltage, or the highest measured bias if the sweeps stop short of it.",
    )
    spec_bias_v = _optional("Spec bias (V)", "Reverse bias the capacitance limits apply at.")
    spec_c_min_pf = _optional("Spec minimum C (pF)", "Blank: no lower limit.")
    spec_c_max_pf = _optional("Spec maximum C (pF)", "Blank: no upper limit.")
    spec_min_swing = _optional(
        "Spec minimum swing", "C(low end)/C(high end) of the reference window."
    )
    shift_tolerance_pct = forms.FloatField(
        label="Lot shift tolerance (%)",
        help_text="A lot-to-lot shift smaller than this is not flagged even when significant.",
    )

    _TO_SETTINGS = {
        "spec_c_min_pf": "spec_c_min_f",
        "spec_c_max_pf": "spec_c_max_f",
        "shift_tolerance_pct": "shift_tolerance",
    }

    def __init__(self, *args, part: Part, **kwargs):
        if not args and "initial" not in kwargs:
            s = PartSettings.of(part)
            kwargs["initial"] = {
                "ref_bias_low_v": s.ref_bias_low_v,
                "ref_bias_high_v": s.ref_bias_high_v,
                "spec_bias_v": s.spec_bias_v,
                "spec_c_min_pf": None if s.spec_c_min_f is None else s.spec_c_min_f * 1e12,
                "spec_c_max_pf": None if s.spec_c_max_f is None else s.spec_c_max_f * 1e12,
                "spec_min_swing": s.spec_min_swing,
                "shift_tolerance_pct": s.shift_tolerance * 100,
            }
        super().__init__(*args, **kwargs)
        self.part = part

    def settings(self) -> PartSettings:
        d = self.cleaned_data
        return PartSettings(
            ref_bias_low_v=d["ref_bias_low_v"],
            ref_bias_high_v=d["ref_bias_high_v"],
            spec_bias_v=d["spec_bias_v"],
            spec_c_min_f=None if d["spec_c_min_pf"] is None else d["spec_c_min_pf"] / 1e12,
            spec_c_max_f=None if d["spec_c_max_pf"] is None else d["spec_c_max_pf"] / 1e12,
            spec_min_swing=d["spec_min_swing"],
            shift_tolerance=d["shift_tolerance_pct"] / 100,
        )

    def field_for(self, settings_field: str) -> str | None:
        """The form field showing a SettingsRefused about ``settings_field`` (None: whole form)."""
        back = {v: k for k, v in self._TO_SETTINGS.items()}
        name = back.get(settings_field, settings_field)
        return name if name in self.fields else None
