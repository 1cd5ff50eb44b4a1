"""A part's quality settings (reference window, spec limits, shift tolerance), checked and saved."""

from __future__ import annotations

from dataclasses import dataclass, fields

from django.db import transaction

from labdb.quality.errors import SettingsRefused
from labdb.quality.services.recompute import RecomputeReport, recompute_part


@dataclass
class PartSettings:
    """The curator-edited settings of a part, SI units; None means "not set".

    Attributes
    ----------
    ref_bias_low_v, ref_bias_high_v : float or None
        Reference window [V], reverse bias positive; unset ends take the defaults of
        :func:`labdb.quality.services.reference_window`.
    spec_bias_v : float or None
        Bias of the capacitance spec [V].
    spec_c_min_f, spec_c_max_f : float or None
        Capacitance limits at ``spec_bias_v`` [F].
    spec_min_swing : float or None
        Smallest acceptable swing over the reference window [1], ≥ 1.
    shift_tolerance : float
        Relative lot-to-lot shift treated as practically large [1], 0 < t < 1.
    """

    ref_bias_low_v: float | None = None
    ref_bias_high_v: float | None = None
    spec_bias_v: float | None = None
    spec_c_min_f: float | None = None
    spec_c_max_f: float | None = None
    spec_min_swing: float | None = None
    shift_tolerance: float = 0.05

    @classmethod
    def of(cls, part) -> PartSettings:
        return cls(**{f.name: getattr(part, f.name) for f in fields(cls)})


def check_settings(part, s: PartSettings) -> None:
    """Raise SettingsRefused (naming the field) when the settings contradict each other."""
    rated = part.rated_reverse_v
    lo, hi = s.ref_bias_low_v, s.ref_bias_high_v
    if lo is not None and hi is not None and not lo < hi:
        raise SettingsRefused(
            f"the window's low end {lo:g} V must be below its high end {hi:g} V", "ref_bias_low_v"
        )
    for name, v in (("ref_bias_high_v", hi), ("spec_bias_v", s.spec_bias_v)):
        if v is not None and rated is not None and v > rated:
            raise SettingsRefused(
                f"{v:g} V is beyond the part's rated reverse voltage {rated:g} V", name
            )
    has_c = s.spec_c_min_f is not None or s.spec_c_max_f is not None
    if has_c and s.spec_bias_v is None:
        raise SettingsRefused("a capacitance spec needs the bias it applies at", "spec_bias_v")
    for name, v in (("spec_c_min_f", s.spec_c_min_f), ("spec_c_max_f", s.spec_c_max_f)):
        if v is not None and not v > 0:
            raise SettingsRefused("a capacitance limit must be above 0", name)
    if (
        s.spec_c_min_f is not None
        and s.spec_c_max_f is not None
        and not s.spec_c_min_f < s.spec_c_max_f
    ):
        raise SettingsRefused("the spec minimum must be below the spec maximum", "spec_c_min_f")
    if s.spec_min_swing is not None and s.spec_min_swing < 1:
        raise SettingsRefused("a swing C(low)/C(high) is at least 1", "spec_min_swing")
    if not 0 < s.shift_tolerance < 1:
        raise SettingsRefused("give a fraction between 0 and 1 (0.05 = 5 %)", "shift_tolerance")


def update_part_settings(part, new: PartSettings) -> RecomputeReport:
    """Check and save a part's quality settings, then recompute its lots under them.

    Raises
    ------
    SettingsRefused
        Settings that contradict each other or the part's rating; nothing is saved.
    """
    check_settings(part, new)
    with transaction.atomic():
        for f in fields(PartSettings):
            setattr(part, f.name, getattr(new, f.name))
        part.save(update_fields=[f.name for f in fields(PartSettings)])
        return recompute_part(part)
