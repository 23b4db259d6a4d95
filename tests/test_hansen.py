"""The Hansen core functions against published definitions and worked examples."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector import hansen

hsp_values = st.tuples(st.floats(10, 25), st.floats(0, 30), st.floats(0, 45))


def test_ra_definition():
    # Hansen's handbook eq. 1.9: Ra^2 = 4 dD^2 + dP^2 + dH^2 (differences); worked by hand:
    # toluene (18.0, 1.4, 2.0) vs ethanol (15.8, 8.8, 19.4): 4*2.2^2 + 7.4^2 + 17.4^2 = 376.88
    assert float(hansen.ra([18.0, 1.4, 2.0], [15.8, 8.8, 19.4])) == pytest.approx(np.sqrt(376.88))


def test_ra_is_euclidean_in_scaled_space():
    # Hansen's handbook ch. 1: the factor 4 makes Ra a Euclidean distance in (2 dD, dP, dH).
    rng = np.random.default_rng(0)
    a, b = rng.uniform(0, 30, (50, 3)), rng.uniform(0, 30, (50, 3))
    np.testing.assert_allclose(hansen.ra(a, b), np.linalg.norm(hansen.scaled(a) - hansen.scaled(b), axis=1))


@settings(max_examples=100, deadline=None)
@given(hsp_values, hsp_values, st.floats(1, 20))
def test_red_properties(a, b, r0):
    # RED = Ra / R0 (handbook eq. 1.10): symmetric distance, zero only for the same point.
    assert float(hansen.red(a, b, r0)) == pytest.approx(float(hansen.ra(b, a)) / r0)
    assert float(hansen.ra(a, a)) == 0.0


def test_red_rejects_bad_radius():
    for r0 in (0.0, -1.0, float("nan")):
        with pytest.raises(ValueError):
            hansen.red([18, 1, 2], [18, 1, 2], r0)


def test_blend_is_volume_weighted_mean():
    # Hansen's handbook ch. 1: blend HSP is the volume-fraction-weighted average.
    # Worked example: 60 % toluene (18.0, 1.4, 2.0) + 40 % ethanol (15.8, 8.8, 19.4)
    # dD = 0.6*18.0 + 0.4*15.8 = 17.12; dP = 0.84 + 3.52 = 4.36; dH = 1.2 + 7.76 = 8.96
    out = hansen.blend_hsp([[18.0, 1.4, 2.0], [15.8, 8.8, 19.4]], [0.6, 0.4])
    np.testing.assert_allclose(out, [17.12, 4.36, 8.96])
    # unnormalised fractions are normalised; batch shapes broadcast
    np.testing.assert_allclose(hansen.blend_hsp([[18.0, 1.4, 2.0], [15.8, 8.8, 19.4]], [3, 2]), out)
    with pytest.raises(ValueError):
        hansen.blend_hsp([[18.0, 1.4, 2.0]], [-1.0])
    with pytest.raises(ValueError):
        hansen.blend_hsp([[18.0, 1.4, 2.0], [1, 1, 1]], [0.0, 0.0])


def test_teas_fractions():
    # Teas (1968): fd = dD / (dD + dP + dH). Acetone (15.5, 10.4, 7.0): sum 32.9
    f = hansen.teas_fractions([15.5, 10.4, 7.0])
    np.testing.assert_allclose(f, [15.5 / 32.9, 10.4 / 32.9, 7.0 / 32.9])
    assert f.sum() == pytest.approx(1.0)


def test_unit_conversion():
    # Hansen's handbook: 1 (cal/cm3)^0.5 = 2.0455 MPa^0.5. Worked example: polystyrene's
    # Hildebrand value 9.1 (cal/cm3)^0.5 (from memory) is 18.61 MPa^0.5.
    assert float(hansen.cal_to_mpa(9.1)) == pytest.approx(18.614, abs=1e-3)
    assert float(hansen.mpa_to_cal(hansen.cal_to_mpa(7.3))) == pytest.approx(7.3)


def test_total_parameter():
    # dT^2 = dD^2 + dP^2 + dH^2 (handbook eq. 1.4); water (15.5, 16.0, 42.3) -> 47.8 (handbook
    # lists 47.8 for water, from memory).
    assert float(hansen.total_parameter([15.5, 16.0, 42.3])) == pytest.approx(47.8, abs=0.05)


def test_temperature_correction_differential_form():
    # Hansen and Beerbower (1971), from memory: d(dD)/dT = -1.25 a dD, d(dP)/dT = -0.5 a dP,
    # d(dH)/dT = -dH (1.22e-3 + 0.5 a). Check the derivative numerically at 25 C.
    h0, a, eps = np.array([18.0, 1.4, 2.0]), 1.08e-3, 1e-4
    up = hansen.hsp_at_temperature(h0, a, 25 + eps)
    dn = hansen.hsp_at_temperature(h0, a, 25 - eps)
    deriv = (up - dn) / (2 * eps)
    np.testing.assert_allclose(deriv, [-1.25 * a * 18.0, -0.5 * a * 1.4, -2.0 * (1.22e-3 + 0.5 * a)],
                               rtol=1e-6)


def test_temperature_correction_worked_example():
    # Worked by hand from the same relations (constant alpha, integrated): water-like dH = 42.3
    # with a = 2.57e-4 1/K from 25 to 75 C: k = 1.22e-3 + 1.285e-4 = 1.3485e-3;
    # dH(75) = 42.3 * exp(-0.067425) = 39.542
    out = hansen.hsp_at_temperature([15.5, 16.0, 42.3], 2.57e-4, 75.0)
    assert float(out[2]) == pytest.approx(39.542, abs=2e-3)
    # dD falls by exp(-1.25 * 2.57e-4 * 50) = 0.98406
    assert float(out[0]) == pytest.approx(15.5 * 0.98406, abs=1e-3)
    with pytest.raises(ValueError):
        hansen.hsp_at_temperature([18, 1, 2], -1e-3, 50.0)
    assert np.isnan(hansen.hsp_at_temperature([18, 1, 2], np.nan, 50.0)).all()


def test_energy_fractions_sum_to_one():
    f = hansen.energy_fractions(np.array([[18.0, 1.4, 2.0], [15.5, 16.0, 42.3]]))
    np.testing.assert_allclose(f.sum(axis=1), 1.0)
