"""Sign and order of bias: diode voltage negated, small forward points kept, sorting."""

from numpy.testing import assert_allclose

from labdb.ingest import parse_file

RTOL = 1e-12


def test_it_negates_diode_voltage_to_positive_reverse_bias(sample):
    (s,) = parse_file(sample("cv_negative_bias.csv"), "cv_negative_bias.csv")
    assert s.bias_negated
    assert_allclose(s.bias_v, [0, 1, 2, 4], rtol=RTOL)
    assert not any(str(v) == "-0.0" for v in s.bias_v)  # no negative zero left behind
    assert_allclose(s.capacitance_f, [45.0e-12, 31.5e-12, 26.0e-12, 20.25e-12], rtol=RTOL)
    assert any("negated" in n for n in s.notes)


def test_it_keeps_a_few_small_forward_points(sample):
    (s,) = parse_file(sample("cv_small_forward.csv"), "cv_small_forward.csv")
    assert not s.bias_negated
    assert_allclose(s.bias_v, [-0.3, -0.1, 0, 1, 2, 4], rtol=RTOL)
    assert any("forward-bias" in n for n in s.notes)


def test_it_sorts_unsorted_bias_and_keeps_repeats(sample):
    (s,) = parse_file(sample("cv_unsorted_repeats.csv"), "cv_unsorted_repeats.csv")
    assert_allclose(s.bias_v, [0, 1, 2, 2, 4], rtol=RTOL)
    # each capacitance travels with its own bias; repeats keep file order (stable sort)
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12, 8.25e-12, 6.5e-12], rtol=RTOL)
    assert s.lines == [3, 6, 4, 5, 2]
    assert any("sorted" in n for n in s.notes)
    assert any("1 repeated bias" in n for n in s.notes)


def test_it_leaves_an_ordered_sweep_without_notes(sample):
    (s,) = parse_file(sample("cv_comma.csv"), "cv_comma.csv")
    assert s.notes == [] and not s.bias_negated
