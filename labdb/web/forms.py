"""Forms of the pages; they validate and hand clean values to the services."""

from __future__ import annotations

from django import forms

from labdb.catalog.models import Part, PartKind
from labdb.measurements.models import Fixture, FixtureKind, Illumination


class MultipleFileInput(forms.ClearableFileInput):
    allow_multiple_selected = True


class MultipleFileField(forms.FileField):
    def __init__(self, *args, **kwargs):
        kwargs.setdefault("widget", MultipleFileInput(attrs={"multiple": True}))
        super().__init__(*args, **kwargs)

    def clean(self, data, initial=None):
        single = super().clean
        if isinstance(data, list | tuple):
            return [single(d, initial) for d in data]
        return [single(data, initial)] if data else []


class UploadForm(forms.Form):
    files = MultipleFileField(
        required=False,
        help_text="CSV/TSV/TXT, .xlsx, Touchstone one-port .s1p, or a .zip with a manifest.csv; "
        "drop files here or browse.",
    )
    part = forms.ModelChoiceField(
        Part.objects.filter(archived=False),
        to_field_name="part_number",
        required=False,
        help_text="Leave empty to use the part named in each file.",
    )
    new_part_number = forms.CharField(max_length=80, required=False, label="…or a new part number")
    new_part_kind = forms.ChoiceField(
        choices=[("", "—")] + list(PartKind.choices), required=False, label="New part kind"
    )
    new_part_rated_reverse_v = forms.FloatField(
        required=False, min_value=0.01, label="New part rated reverse voltage (V)"
    )
    lot = forms.CharField(max_length=80, required=False, help_text="Lot code; created if new.")
    unit = forms.CharField(max_length=80, required=False, help_text="Unit label; created if new.")
    fixture = forms.ModelChoiceField(
        Fixture.objects.filter(archived=False), to_field_name="name", required=False
    )
    kind = forms.ChoiceField(
        choices=[
            ("", "from the file"),
            ("cv", "C–V"),
            ("fv", "f–V (oscillator)"),
            ("zf", "Z–f (impedance sweep at one bias)"),
        ],
        required=False,
    )
    bias_v = forms.FloatField(
        required=False,
        min_value=-1.0,
        label="Bias of an impedance sweep (V)",
        help_text="Reverse bias of .s1p or impedance files that do not say it themselves.",
    )
    temperature_c = forms.FloatField(
        required=False, min_value=-273.15, max_value=500, label="Temperature (°C)"
    )
    illumination = forms.ChoiceField(
        choices=[("", "from the file")] + list(Illumination.choices), required=False
    )
    measured_at = forms.DateTimeField(required=False, help_text="e.g. 2026-11-30 14:05")
    operator = forms.CharField(max_length=80, required=False)
    model = forms.ChoiceField(
        choices=[
            ("auto", "choose by AICc"),
            ("junction", "junction (CJO, VJ, M)"),
            ("junction+cp", "junction + package capacitance"),
        ],
        initial="auto",
    )
    staged = forms.CharField(required=False, widget=forms.HiddenInput)

    def clean(self):
        data = super().clean()
        if data.get("part") and data.get("new_part_number"):
            self.add_error("new_part_number", "choose an existing part or name a new one, not both")
        if data.get("new_part_number") and not data.get("new_part_kind"):
            self.add_error("new_part_kind", "say what kind of part the new part is")
        return data


class CalibrationForm(forms.Form):
    measured_at = forms.DateTimeField(help_text="When the reference readings were taken.")
    readings = forms.CharField(
        widget=forms.Textarea(attrs={"rows": 6}),
        help_text="One reading a line: reference capacitance in pF, frequency in MHz "
        "(e.g. '0, 12.345678' for the open fixture, then '22, 10.9876').",
    )
    notes = forms.CharField(required=False, max_length=500)

    def clean_readings(self):
        refs, freqs = [], []
        for n, line in enumerate(self.cleaned_data["readings"].splitlines(), 1):
            line = line.strip()
            if not line or line.startswith("#"):
                continue
            cells = [c for c in line.replace(";", ",").replace("\t", ",").split(",") if c.strip()]
            if len(cells) != 2:
                raise forms.ValidationError(
                    f"line {n}: expected two numbers (pF, MHz), got {line!r}"
                )
            try:
                refs.append(float(cells[0]) * 1e-12)
                freqs.append(float(cells[1]) * 1e6)
            except ValueError:
                raise forms.ValidationError(f"line {n}: {line!r} is not two numbers") from None
        if len(refs) < 2:
            raise forms.ValidationError(
                "give at least two readings (the open fixture and one reference)"
            )
        return refs, freqs


class FixtureForm(forms.ModelForm):
    class Meta:
        model = Fixture
        fields = [
            "name",
            "kind",
            "description",
            "test_frequency_hz",
            "test_level_v",
            "nominal_inductance_h",
            "coupling_f",
        ]
        labels = {
            "test_frequency_hz": "Test-signal frequency (Hz)",
            "test_level_v": "Test-signal level (V)",
            "nominal_inductance_h": "Nominal inductance (H)",
            "coupling_f": "Series coupling capacitor (F)",
        }

    def clean(self):
        data = super().clean()
        if data.get("kind") == FixtureKind.OSCILLATOR and not data.get("nominal_inductance_h"):
            self.add_error(
                "nominal_inductance_h", "an oscillator fixture needs its nominal inductance"
            )
        return data
