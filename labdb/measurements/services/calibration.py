"""Oscillator-fixture calibrations: record one, find the one in force at a time."""

from __future__ import annotations

from datetime import datetime

from django.db import IntegrityError, transaction

from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.models import Calibration, Fixture, FixtureKind
from labdb.physics import PhysicsInputError, calibrate_oscillator
from labdb.physics.oscillator import OscillatorCalibration


def record_calibration(
    fixture: Fixture,
    measured_at: datetime,
    ref_capacitance_f: list[float],
    freq_hz: list[float],
    *,
    user=None,
    notes: str = "",
) -> Calibration:
    """Fit L and C_stray to reference readings and store them as a dated calibration."""
    if fixture.kind != FixtureKind.OSCILLATOR:
        raise Rejected(Problem(f"fixture '{fixture.name}' is a meter; only oscillators calibrate"))
    try:
        cal = calibrate_oscillator(ref_capacitance_f, freq_hz, coupling_f=fixture.coupling_f)
    except PhysicsInputError as exc:
        raise Rejected(Problem(str(exc))) from None
    d = cal.to_dict()
    try:
        with transaction.atomic():
            return Calibration.objects.create(
                fixture=fixture,
                measured_at=measured_at,
                ref_capacitance_f=[float(c) for c in ref_capacitance_f],
                freq_hz=[float(f) for f in freq_hz],
                inductance_h=cal.inductance_h,
                stray_f=cal.stray_f,
                covariance=d["covariance"],
                residuals=d["residuals_hz"],
                coupling_f=fixture.coupling_f,
                notes=notes,
                created_by=user,
            )
    except IntegrityError:
        raise Rejected(
            Problem(
                f"fixture '{fixture.name}' already has a calibration at {measured_at:%Y-%m-%d %H:%M}"
            )
        ) from None


def as_physics(calibration: Calibration) -> OscillatorCalibration:
    """The stored calibration as the physics core's object."""
    return OscillatorCalibration.from_dict(
        {
            "inductance_h": calibration.inductance_h,
            "stray_f": calibration.stray_f,
            "covariance": calibration.covariance,
            "residuals_hz": calibration.residuals,
            "ref_capacitance_f": calibration.ref_capacitance_f,
            "freq_hz": calibration.freq_hz,
            "coupling_f": calibration.coupling_f,
        }
    )


def calibration_in_force(fixture: Fixture, at: datetime) -> Calibration:
    """The newest calibration of ``fixture`` taken at or before ``at``; Rejected if none."""
    cal = (
        Calibration.objects.filter(fixture=fixture, measured_at__lte=at)
        .order_by("-measured_at")
        .first()
    )
    if cal is None:
        raise Rejected(
            Problem(
                f"fixture '{fixture.name}' has no calibration before {at:%Y-%m-%d}; "
                "record one on the fixture's page first",
                field="fixture",
            )
        )
    return cal
