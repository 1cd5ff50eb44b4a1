"""Points given as arrays (JSON payloads) get the same checks as files."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.ingest import ParseError, sweep_from_arrays

RTOL = 1e-12


def test_it_builds_a_capacitance_sweep_from_arrays():
    s = sweep_from_arrays([0, 2, 1], capacitance_f=[12.5e-12, 8.125e-12, 9.75e-12])
    assert s.kind == "cv" and s.source == "json"
    assert_allclose(s.bias_v, [0, 1, 2], rtol=RTOL)
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)
    assert s.lines == [1, 3, 2]
    assert s.columns == {"bias": "bias_v", "capacitance": "capacitance_f"}


def test_it_builds_a_frequency_sweep_and_negates_diode_voltage():
    s = sweep_from_arrays(np.array([0.0, -1.0, -2.0]), frequency_hz=[10.25e6, 11.5e6, 12.375e6])
    assert s.kind == "fv" and s.bias_negated
    assert_allclose(s.bias_v, [0, 1, 2], rtol=RTOL)


def test_it_reads_raw_metadata_with_the_arrays():
    s = sweep_from_arrays([0, 1, 2], [3e-12, 2e-12, 1e-12], metadata={"Temperature": "25 °C"})
    assert s.metadata["temperature_c"] == 25.0


def test_it_locates_bad_values_by_index_and_field():
    with pytest.raises(ParseError) as info:
        sweep_from_arrays([0, "1", 2, None], capacitance_f=[1e-12, float("nan"), -1e-12, 2e-12])
    got = [(i.line, i.column) for i in info.value.issues]
    assert got == [(2, "bias_v"), (4, "bias_v"), (2, "capacitance_f"), (3, "capacitance_f")]
    assert "'1' is not a number" in info.value.issues[0].message
    assert "not a finite number" in info.value.issues[2].message
    assert "not a positive capacitance" in info.value.issues[3].message
    assert str(info.value.issues[0]) == "json line 2, column 'bias_v': '1' is not a number"


@pytest.mark.parametrize(
    ("kwargs", "phrase"),
    [
        ({"bias_v": [0, 1, 2], "capacitance_f": [1e-12, 2e-12]}, "has 2 values but bias_v has 3"),
        ({"bias_v": [0, 1], "capacitance_f": [1e-12, 2e-12]}, "only 2 points"),
        ({"bias_v": [0, 1, 2]}, "exactly one of them"),
        (
            {"bias_v": [0, 1, 2], "capacitance_f": [1e-12] * 3, "frequency_hz": [1e6] * 3},
            "exactly one of them",
        ),
        ({"bias_v": [0, 1, 2], "capacitance_f": [12.5, 9.75, 8.1]}, "did you send pF"),
        ({"bias_v": [0, 1, 2], "frequency_hz": [10.25, 11.5, 12.4]}, "did you send MHz"),
        ({"bias_v": "0,1,2", "capacitance_f": [1e-12] * 3}, "must be a list of numbers"),
        ({"bias_v": [[0, 1, 2]], "capacitance_f": [1e-12]}, "is not a number"),
        ({"bias_v": [0, 1, 10**400], "capacitance_f": [1e-12] * 3}, "not a finite number"),
        ({"bias_v": [-5, -1, 0, 2], "capacitance_f": [1e-12] * 4}, "both signs"),
    ],
)
def test_it_refuses_bad_payloads_with_a_message(kwargs, phrase):
    with pytest.raises(ParseError, match=phrase):
        sweep_from_arrays(**kwargs)
