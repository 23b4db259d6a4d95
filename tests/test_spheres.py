"""Sphere fitting from lab tests (selector.spheres, ``likewise sphere``).

Reference points outside the project:
* the classical desirability method (Hansen, Hansen Solubility Parameters: A User's Handbook,
  2nd ed., CRC Press, 2007, ch. 1): a sphere that generated the outcomes must be recovered;
  true spheres are generated inside the tests with fixed seeds, and outcomes are the true
  inside/outside verdicts of real liquids whose HSP come from the published tables that the
  `chemicals` library carries (bundled in the project library);
* common practice of the trade for polystyrene solvents and non-solvents;
* the volume-fraction blending rule and Hansen-Beerbower temperature rule (handbook, ch. 1).

Intervals in these tests use a smaller bootstrap (20-30 samples instead of the default 200) to
stay inside the time budget; the profile-region part of each interval is unaffected by it.
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import selector
from selector.errors import InputTableError, SelectorError
from selector.hansen import blend_hsp, hsp_at_temperature
from selector.library import HSP, load_library
from selector.spheres import TIE, fit_sphere, parse_blend, read_tests
from sphere_cases import exhaustive, make_case, ra

LIB = load_library()
H = LIB[HSP].to_numpy(float)
PARAMS = ["delta_d", "delta_p", "delta_h", "radius"]


_ra = ra
_case = make_case


# ----------------------------------------------------------------------------- recovery

@pytest.mark.parametrize("seed", [11, 12, 13])
def test_whole_library_clean_recovery(seed):
    # Method definition (Hansen's handbook, ch. 1): with every library liquid tested and clean
    # outcomes, the fitted sphere must be the generating one (centre within 0.5 MPa^0.5 on each
    # axis, R0 within 10 %). Centres are library liquids in the well-sampled middle of HSP space.
    r = np.random.default_rng(seed)
    core = np.flatnonzero((H[:, 0] > 15) & (H[:, 0] < 19) & (H[:, 1] > 3) & (H[:, 1] < 11)
                          & (H[:, 2] > 3) & (H[:, 2] < 11))
    c = H[r.choice(core)]
    R = r.uniform(7, 10)
    df = pd.DataFrame({"delta_d": H[:, 0], "delta_p": H[:, 1], "delta_h": H[:, 2],
                       "outcome": _ra(H, c) < R})
    fit = fit_sphere(df, bootstrap=0, seed=seed)
    assert np.all(np.abs(fit.hsp - c) <= 0.5), (fit.hsp, c)
    assert abs(fit.radius - R) <= 0.10 * R, (fit.radius, R)
    assert fit.score == pytest.approx(1.0)
    assert len(fit.misfits) == 0


@pytest.mark.parametrize("noise", [0.0, 0.05])
def test_interval_coverage_40_tests(noise):
    # 40 tests, clean or 5 % flipped: each true value inside its interval in >= 85 % of 20 seeded
    # cases (true spheres generated here; outcomes from real library HSP).
    cases = 20
    hits = np.zeros(4)
    for s in range(cases):
        df, c, R = _case(300 + s, noise=noise)
        fit = fit_sphere(df, bootstrap=20, seed=s)
        for j, (k, tv) in enumerate(zip(PARAMS, [*c, R])):
            lo, hi = fit.intervals[k]
            assert lo <= getattr(fit, k) <= hi + 1e-9
            hits[j] += lo <= tv <= hi
    assert np.all(hits / cases >= 0.85), hits / cases


def test_interval_shrinks_with_informative_tests():
    # Adding tests near the true boundary (0.8 < RED < 1.25) must narrow the intervals: the
    # information argument behind choosing borderline liquids (common practice).
    r = np.random.default_rng(5)
    c, R = np.array([17.5, 7.0, 6.5]), 8.0
    d = _ra(H, c)
    base = r.choice(len(LIB), 20, replace=False)
    near = np.setdiff1d(np.flatnonzero((d / R > 0.8) & (d / R < 1.25)), base)
    more = np.concatenate([base, r.choice(near, 30, replace=False)])

    def widths(idx):
        df = pd.DataFrame({"solvent": LIB["name"].iloc[idx].to_numpy(), "outcome": d[idx] < R})
        f = fit_sphere(df, bootstrap=30, seed=1)
        return np.array([f.intervals[k][1] - f.intervals[k][0] for k in PARAMS])

    w20, w50 = widths(base), widths(more)
    assert np.all(w50 < w20), (w20, w50)


# ----------------------------------------------------------------------------- global optimum

def _brute(tab, step=0.5, margin=2.5):
    return exhaustive(tab, step=step, margin=margin)[0]


@pytest.mark.parametrize("seed", [21, 22])
def test_global_optimum_against_exhaustive_grid(seed):
    # The classical score (handbook ch. 1) by brute force over a grid of centres with every
    # tested Ra as R0; the fit must be at least as good (5 % flipped: plateaus, local optima).
    df, _, _ = _case(seed, noise=0.05)
    tab = read_tests(df)
    fit = fit_sphere(tab, bootstrap=0, seed=seed)
    P = tab[HSP].to_numpy(float)
    d = _ra(P, fit.hsp)
    g = tab["good"].to_numpy(bool)
    mine = float(np.where(g, np.maximum(d - fit.radius, 0), np.maximum(fit.radius - d, 0)).mean()
                 + TIE * fit.radius)
    assert mine <= _brute(tab) + 1e-9
    assert fit.score == pytest.approx(np.exp(-(mine - TIE * fit.radius)), rel=1e-6)


# ----------------------------------------------------------------------------- common practice

PS_GOOD = ["toluene", "chloroform", "tetrahydrofuran", "benzene", "dichloromethane", "o-xylene",
           "2-butanone", "cyclohexanone", "ethylbenzene", "1,4-dioxane"]
PS_BAD = ["methanol", "water", "hexane", "ethanol", "ethylene glycol", "acetonitrile",
          "heptane", "1-propanol", "formamide", "glycerol"]


@pytest.fixture(scope="module")
def ps_fit():
    df = pd.DataFrame({"solvent": PS_GOOD + PS_BAD,
                       "outcome": ["dissolves"] * len(PS_GOOD) + ["insoluble"] * len(PS_BAD)})
    return fit_sphere(df, bootstrap=30, seed=0)


def test_polystyrene_like_results(ps_fit):
    # Common practice: polystyrene dissolves in aromatics, chlorinated solvents, THF, ketones;
    # not in alcohols, water, alkanes. The fitted sphere must contain toluene, exclude methanol
    # and classify every test right.
    fit = ps_fit
    tol = LIB.loc[LIB.name == "toluene", HSP].to_numpy(float)
    meoh = LIB.loc[LIB.name == "methanol", HSP].to_numpy(float)
    assert fit.contains(tol)[0]
    assert not fit.contains(meoh)[0]
    assert fit.score == pytest.approx(1.0) and len(fit.misfits) == 0
    # Polystyrene sphere 21.3, 5.8, 4.3, R0 12.7 (from memory of Hansen's handbook, polymer
    # table): it also puts toluene inside and methanol outside; the fitted centre lies within
    # that published sphere.
    ps = np.array([21.3, 5.8, 4.3])
    assert _ra(tol, ps)[0] < 12.7 < _ra(meoh, ps)[0]
    assert _ra(fit.hsp, ps) < 12.7


def test_fit_works_as_a_target(ps_fit):
    t = selector.as_target(ps_fit)
    assert (t.delta_d, t.delta_p, t.delta_h, t.radius) == (ps_fit.delta_d, ps_fit.delta_p,
                                                           ps_fit.delta_h, ps_fit.radius)
    ranked = selector.rank(ps_fit, polarity_weight=0.0)
    red = dict(zip(ranked["name"], ranked["red"]))
    assert red["toluene"] < 1 < red["methanol"]
    assert np.all(np.diff(ranked["red"].to_numpy()) >= -0.01)


def test_suggest_tests(ps_fit):
    # Common practice: the most informative next tests are borderline liquids - outside the
    # shell of the good results (the smallest consistent sphere, where everything is certain)
    # but well within the span of the bad ones - never liquids already tested.
    nxt = ps_fit.suggest_tests(6)
    assert len(nxt) == 6
    tested = set(PS_GOOD + PS_BAD)
    assert not tested & set(nxt["name"])
    assert np.all((nxt["p_inside"] > 0) & (nxt["p_inside"] < 1))
    assert np.all(np.diff(nxt["information"].to_numpy()) <= 0.005 + 1e-9)  # ties within 0.01
    assert np.all((nxt["p_inside"] > 0.2) & (nxt["p_inside"] < 0.8))
    red_tests = ps_fit.tests["red"].to_numpy()
    good = ps_fit.tests["good"].to_numpy(bool)
    assert np.all((nxt["red"] > red_tests[good].max() - 1e-6) & (nxt["red"] < 0.5 * red_tests[~good].max()))
    np.testing.assert_allclose(nxt["information"], nxt["p_inside"] * (1 - nxt["p_inside"]))
    shelf = ["acetone", "ethyl acetate", "toluene", "butyl acetate", "pyridine"]
    s = ps_fit.suggest_tests(10, shelf=shelf)
    assert set(s["name"]) <= set(shelf) - {"toluene"} and len(s) == 4
    # the shelf liquids left out are named with the reason (toluene was tested; acetyl chloride
    # is a reagent, selector.cautions; diethyl ether (bp 35 C) fails the boiling-point window)
    s2 = ps_fit.suggest_tests(10, shelf=shelf + ["acetyl chloride", "diethyl ether"], boiling_point_c=(50, None))
    notes = " | ".join(s2.attrs["notes"])
    assert "already tested, so not suggested: toluene" in notes
    assert "acetyl chloride (acyl halide" in notes
    assert "outside the filters: " in notes and "diethyl ether" in notes.split("outside the filters: ")[1]
    assert "acetyl chloride" not in set(s2["name"]) and "diethyl ether" not in set(s2["name"])
    f = ps_fit.suggest_tests(5, min_flash_point_c=40)
    assert np.all(f["flash_point_c"] >= 40)
    with pytest.raises(SelectorError):
        ps_fit.suggest_tests(0)
    with pytest.raises(SelectorError):
        ps_fit.suggest_tests(3, colour="red")


# ----------------------------------------------------------------------------- invariance

def test_row_order_and_consistent_duplicates():
    df, _, _ = _case(42, noise=0.05)
    a = fit_sphere(df, bootstrap=20, seed=3)
    b = fit_sphere(df.sample(frac=1.0, random_state=9), bootstrap=20, seed=3)
    dup = pd.concat([df, df.iloc[[0, 3, 7]]], ignore_index=True)
    c = fit_sphere(dup, bootstrap=20, seed=3)
    for other in (b, c):
        np.testing.assert_allclose([getattr(other, k) for k in PARAMS], [getattr(a, k) for k in PARAMS],
                                   atol=1e-9)
        for k in PARAMS:
            np.testing.assert_allclose(other.intervals[k], a.intervals[k], atol=1e-9)
    assert any("merged" in w for w in c.warnings)
    # same seed, same answer; scaling every weight changes nothing
    d = fit_sphere(df.assign(weight=3.0), bootstrap=20, seed=3)
    np.testing.assert_allclose([getattr(d, k) for k in PARAMS], [getattr(a, k) for k in PARAMS], atol=1e-9)


def test_weights_matter():
    # A bad result recorded for the liquid nearest the centre of the polystyrene-like goods:
    # with weight 1 the sphere keeps it well inside (a misfit); a heavy weight pushes it out to
    # the surface, as far as the centre box allows (the fit says its centre is pinned there).
    base = pd.DataFrame({"solvent": PS_GOOD + PS_BAD, "outcome": [True] * len(PS_GOOD) + [False] * len(PS_BAD)})
    first = fit_sphere(base, bootstrap=0)
    ranked = selector.rank(first, polarity_weight=0.0, exclude=PS_GOOD + PS_BAD)
    odd = str(ranked["name"].iloc[0])
    df = pd.concat([base, pd.DataFrame({"solvent": [odd], "outcome": [False]})], ignore_index=True)
    h_odd = LIB.loc[LIB.name == odd, HSP].to_numpy(float)
    light = fit_sphere(df, bootstrap=0)
    heavy = fit_sphere(df.assign(weight=[1.0] * len(base) + [50.0]), bootstrap=0)
    assert light.contains(h_odd)[0] and odd in set(light.misfits["label"])

    def red(f):
        return float(np.sqrt(4 * (h_odd[0, 0] - f.delta_d) ** 2 + (h_odd[0, 1] - f.delta_p) ** 2
                             + (h_odd[0, 2] - f.delta_h) ** 2) / f.radius)

    # the heavy weight pushes it out to the surface (no further: the centre box stops the fit at
    # dD 30, the most a typed target may have); the light one leaves it well inside
    assert red(light) < 0.999 and red(heavy) >= 1 - 1e-9
    assert heavy.delta_d <= 30.0 + 1e-9
    assert any(w.startswith("the centre stops at the edge of the range") for w in heavy.warnings)


# ----------------------------------------------------------------------------- input handling

def test_every_problem_reported_at_once():
    df = pd.DataFrame({"solvent": ["tolune", "water", "methanol", "acetone", "hexane", "water"],
                       "outcome": ["good", "maybe", "bad", "yes", "no", "good"],
                       "weight": [1, 1, 1, -2, 1, 1]})
    with pytest.raises(InputTableError) as e:
        read_tests(df)
    msg = str(e.value)
    assert "did you mean" in msg and "toluene" in msg
    assert "'maybe'" in msg
    assert "weight" in msg
    assert len(e.value.problems) >= 3


def test_disagreeing_duplicates_and_too_few():
    df = pd.DataFrame({"solvent": ["toluene", "Toluene", "water", "hexane", "acetone"],
                       "outcome": [True, False, False, False, True]})
    with pytest.raises(InputTableError, match="recorded good 1 time and bad 1 time"):
        read_tests(df)
    with pytest.raises(InputTableError, match="too few tests"):
        read_tests(pd.DataFrame({"solvent": ["toluene", "benzene", "water"], "outcome": [1, 1, 0]}))
    with pytest.raises(InputTableError, match="good result"):
        read_tests(pd.DataFrame({"solvent": ["toluene", "benzene", "water", "hexane"],
                                 "outcome": [1, 0, 0, 0]}))
    with pytest.raises(InputTableError, match="no outcome"):
        read_tests(pd.DataFrame({"solvent": ["toluene"], "verdict": [1]}))


def test_bad_numbers_and_files(tmp_path):
    bad = pd.DataFrame({"delta_d": [18.0, np.nan, 17.0, -1.0, 16.0],
                        "delta_p": [1.4, 2.0, 3.0, 4.0, 5.0], "delta_h": [2.0, 2.0, 2.0, 2.0, 2.0],
                        "outcome": [1, 1, 0, 0, 0]})
    with pytest.raises(InputTableError) as e:
        read_tests(bad)
    assert len(e.value.problems) == 2
    p = tmp_path / "empty.csv"
    p.write_text("")
    with pytest.raises(SelectorError):
        read_tests(p)
    with pytest.raises(SelectorError, match="not found"):
        read_tests(tmp_path / "missing.csv")
    with pytest.raises(SelectorError):
        fit_sphere(pd.DataFrame({"solvent": ["toluene"] * 2, "outcome": [1, 1]}), bootstrap=-1)


def test_malformed_csv_files(tmp_path):
    ragged = tmp_path / "ragged.csv"
    ragged.write_text("solvent,outcome\ntoluene,good,extra\nwater,bad\n")
    with pytest.raises(InputTableError, match="row 2 has 3 fields"):
        read_tests(ragged)
    semi = tmp_path / "semi.csv"  # semicolon files (spreadsheet exports) are read
    semi.write_text("solvent;outcome\ntoluene;good\nacetone;good\nwater;bad\nhexane;bad\n")
    assert read_tests(semi)["good"].tolist() == [True, True, False, False]
    binary = tmp_path / "bin.csv"
    binary.write_bytes(b"\x00\xff\xfe\x01")
    with pytest.raises(SelectorError, match="not a readable CSV"):
        read_tests(binary)


@settings(max_examples=25, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(["toluene", "water", "hexane", "tolune", "", "1,4-dioxane",
                                           "toluene [1] & water [1]", "acetone [x] & water [1]"]),
                          st.one_of(st.text(max_size=6), st.booleans(), st.integers(-2, 7),
                                    st.floats(allow_nan=True))),
                min_size=0, max_size=8))
def test_read_tests_never_crashes(rows):
    # Any junk table either validates or raises a SelectorError naming the problem.
    df = pd.DataFrame(rows, columns=["solvent", "outcome"])
    try:
        tab = read_tests(df)
    except SelectorError:
        return
    assert len(tab) >= 4 and tab["good"].sum() >= 2


def test_degenerate_warnings():
    only_good = pd.DataFrame({"solvent": ["toluene", "benzene", "o-xylene", "chloroform", "ethylbenzene"],
                              "outcome": [True] * 5})
    fit = fit_sphere(only_good, bootstrap=10)
    text = " ".join(fit.warnings)
    assert "no bad result" in text and "only 5 tests" in text
    assert np.isfinite(fit.radius) and fit.radius > 0
    # the centre of an all-good set lies inside the box of the good liquids
    pts = LIB.set_index("name").loc[only_good.solvent, HSP].to_numpy(float)
    assert np.all(fit.hsp >= pts.min(0) - 1e-6) and np.all(fit.hsp <= pts.max(0) + 1e-6)


def test_few_good_liquids_warning():
    # PVC: THF and cyclohexanone dissolve it; toluene, acetone, the alcohols, water, hexane, ethyl
    # acetate and DMSO do not at room temperature in a short test (common practice). Two good liquids
    # pin R0 to about half their distance, far below PVC's published R0 of about 3.5 (from memory).
    df = pd.DataFrame({"solvent": ["tetrahydrofuran", "cyclohexanone", "toluene", "acetone", "methanol",
                                   "water", "hexane", "ethanol", "ethyl acetate", "dimethyl sulfoxide"],
                       "outcome": ["good", "good"] + ["bad"] * 8})
    fit = fit_sphere(df, bootstrap=10)
    goods = LIB.set_index("name").loc[["tetrahydrofuran", "cyclohexanone"], HSP].to_numpy(float)
    half_gap = ra(goods[0], goods[1]) / 2
    assert fit.radius == pytest.approx(half_gap, abs=0.3)
    msg = [w for w in fit.warnings if w.startswith("only 2 good liquids")]
    assert msg and f"R0 ({fit.radius:.1f}) may be far too small" in msg[0]
    # with four good liquids the warning goes (1,4-dioxane and dichloromethane also dissolve PVC,
    # common practice)
    more = pd.concat([df, pd.DataFrame({"solvent": ["1,4-dioxane", "dichloromethane"], "outcome": ["good"] * 2})])
    assert not any("good liquid" in w for w in fit_sphere(more, bootstrap=10).warnings)


def test_untested_edge_warning():
    # Water-like solute (common practice: glycols, water and short alcohols dissolve it, the rest
    # do not): nothing tested beyond water's dH bounds the sphere there, and the fit says so.
    df = pd.DataFrame({"solvent": ["methanol", "ethanol", "water", "ethylene glycol", "1-propanol",
                                   "hexane", "toluene", "acetone", "ethyl acetate", "chloroform",
                                   "diethyl ether", "heptane"],
                       "outcome": [1, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0, 0]})
    fit = fit_sphere(df, bootstrap=10)
    assert any("outside the tested region" in w for w in fit.warnings)
    assert fit.contains(LIB.loc[LIB.name == "water", HSP].to_numpy(float))[0]


def test_graded_outcomes_need_threshold_and_scale():
    df = pd.DataFrame({"solvent": PS_GOOD[:4] + PS_BAD[:4], "score": [6, 5, 6, 4, 1, 1, 2, 3]})
    with pytest.raises(InputTableError, match="threshold"):
        read_tests(df, outcome="score")
    with pytest.raises(InputTableError, match="outside the declared scale"):
        read_tests(df, threshold=4, scale=(1, 5))
    tab = read_tests(df, threshold=4, scale=(1, 6))
    assert tab.attrs["graded"] and tab["good"].sum() == 4


def test_graded_fit_uses_the_grades():
    # Grades generated from the true RED (6: RED < 0.6 ... 1: RED > 1.5); the graded fit should
    # place the centre at least as well as the good/bad split in most seeded cases.
    e_bin, e_grd = [], []
    for s in range(8):
        r = np.random.default_rng(700 + s)
        c = np.array([r.uniform(16, 20), r.uniform(3, 12), r.uniform(3, 12)])
        R = r.uniform(6, 10)
        idx = r.choice(len(LIB), 40, replace=False)
        red = _ra(H[idx], c) / R
        grade = 6 - np.digitize(red, [0.6, 0.8, 1.0, 1.2, 1.5])
        df = pd.DataFrame({"solvent": LIB["name"].iloc[idx].to_numpy(), "grade": grade})
        if (grade >= 4).sum() < 2:
            continue
        fb = fit_sphere(df.assign(outcome=grade >= 4), bootstrap=0)
        fg = fit_sphere(df, threshold=4, scale=(1, 6), bootstrap=0)
        assert fg.method.startswith("graded")
        e_bin.append(_ra(fb.hsp, c))
        e_grd.append(_ra(fg.hsp, c))
    assert np.median(e_grd) <= np.median(e_bin)


def test_blend_and_temperature():
    # Blend rule (handbook ch. 1): volume-fraction mean of the components.
    pos, frac = parse_blend("toluene [60] & ethanol [40]", LIB)
    tol = LIB.loc[LIB.name == "toluene", HSP].to_numpy(float)[0]
    eth = LIB.loc[LIB.name == "ethanol", HSP].to_numpy(float)[0]
    df = pd.DataFrame({"solvent": ["toluene [60] & ethanol [40]", "toluene", "water", "hexane",
                                   "benzene"],
                       "outcome": ["good", "good", "bad", "bad", "good"],
                       "temperature": [25, 60, 25, 25, 25]})
    tab = read_tests(df)
    row = tab.loc[tab.kind == "blend"].iloc[0]
    np.testing.assert_allclose(row[HSP].to_numpy(float), 0.6 * tol + 0.4 * eth, atol=1e-12)
    # Hansen-Beerbower: solubility parameters fall as temperature rises (handbook ch. 1)
    t60 = tab.loc[(tab.kind == "library") & (tab.temperature == 60)].iloc[0]
    assert np.all(t60[HSP].to_numpy(float) < tol)
    alpha = float(LIB.loc[LIB.name == "toluene", "expansion_coeff"].iloc[0])
    np.testing.assert_allclose(t60[HSP].to_numpy(float), hsp_at_temperature(tol, alpha, 60.0))
    assert not any("boiling point" in n for n in tab.attrs.get("notes", []))
    # a test at or above a liquid's boiling point (hexane 68.7 C, chemicals) is possible only under
    # pressure: the rows are named (README walk-through: --at 150 passed silently)
    hot = read_tests(pd.DataFrame({"solvent": ["hexane", "toluene", "water", "benzene", "ethanol"],
                                   "outcome": ["bad", "good", "bad", "good", "bad"]}), temperature=90)
    note = [n for n in hot.attrs["notes"] if "boiling point" in n]
    assert note and "hexane (boils at 69 C, tested at 90 C)" in note[0] and "toluene" not in note[0]
    for bad in ["toluene [x] & ethanol [1]", "toluene [1]", "toluene [1] & tolune [1]", "toluene & ethanol"]:
        with pytest.raises(SelectorError):
            parse_blend(bad, LIB)
    np.testing.assert_allclose(frac, [0.6, 0.4])
    assert blend_hsp(np.array([tol, eth]), frac).shape == (3,)


# ----------------------------------------------------------------------------- two spheres

def _two_sphere_df(seed, n=80):
    r = np.random.default_rng(seed)
    c1, c2 = np.array([17.5, 3.0, 3.5]), np.array([16.0, 11.0, 17.0])
    idx = r.choice(len(LIB), n, replace=False)
    g = (_ra(H[idx], c1) < 5.0) | (_ra(H[idx], c2) < 6.0)
    return pd.DataFrame({"solvent": LIB["name"].iloc[idx].to_numpy(), "outcome": g}), c1, c2


def test_two_spheres_adopted_only_when_they_pay():
    df, c1, c2 = _two_sphere_df(8)
    fit = fit_sphere(df, bootstrap=10, two_spheres=True, seed=0)
    assert len(fit.spheres) == 2 and len(fit.all_intervals) == 2
    for s, iv in zip(fit.spheres, fit.all_intervals):
        assert all(iv[k][0] <= getattr(s, k) <= iv[k][1] + 1e-9 for k in PARAMS)
    assert fit.bic["two_spheres"] < fit.bic["one_sphere"]
    cents = np.array([s.hsp for s in fit.spheres])
    # the compact sphere's centre is recovered (how well the pair classifies unseen liquids, over
    # several random test sets, is checked below)
    assert _ra(cents, c1).min() < 1.5
    assert fit.score >= fit_sphere(df, bootstrap=0).score
    # next tests are the liquids the bootstrap spheres disagree on most (p_inside near 0.5), which
    # mostly sit at the edge of one of the two spheres; a loosely pinned sphere can make one of
    # them lie further out
    nxt = fit.suggest_tests(5)
    assert np.all((nxt["p_inside"] > 0.2) & (nxt["p_inside"] < 0.8))
    assert (np.abs(nxt["red"] - 1) < 0.5).sum() >= 3
    # one-sphere data: the second sphere does not pay for its parameters
    one, _, _ = _case(77, n=40)
    f1 = fit_sphere(one, bootstrap=0, two_spheres=True)
    assert len(f1.spheres) == 1 and f1.bic["two_spheres"] >= f1.bic["one_sphere"]


def test_two_sphere_fits_over_several_test_sets():
    # Synthetic truth (no outside value): 80 library liquids scored by two spheres, eight random
    # draws, judged on the other ~740 library liquids the fit never saw. A fitted sphere is the
    # smallest that separates the tests (common practice), so it errs on the side of "outside":
    # it must almost never call a poor liquid good (specificity >= 0.95 in every draw), and get
    # most liquids right overall (median agreement >= 0.90, none below 0.85). The compact sphere's
    # centre is pinned by many tests (median error < 1.5 MPa^0.5); the wide polar one holds only a
    # handful of liquids on one side, so its centre is not checked.
    agree, d1 = [], []
    for seed in range(8):
        df, c1, c2 = _two_sphere_df(seed)
        seen = set(df["solvent"])
        rest = ~LIB["name"].isin(seen).to_numpy()
        truth = (_ra(H[rest], c1) < 5.0) | (_ra(H[rest], c2) < 6.0)
        fit = fit_sphere(df, bootstrap=0, two_spheres=True, seed=0)
        assert len(fit.spheres) == 2
        pred = fit.contains(H[rest])
        assert (~pred & ~truth).sum() / (~truth).sum() >= 0.95
        agree.append((pred == truth).mean())
        d1.append(_ra(np.array([s.hsp for s in fit.spheres]), c1).min())
    assert np.median(agree) >= 0.90 and min(agree) >= 0.85
    assert np.median(d1) < 1.5


# ----------------------------------------------------------------------------- command line

def test_cli_sphere(tmp_path, capsys):
    from selector.cli import main

    demo = "parameters/demo/lab_tests.csv"
    out = tmp_path / "fit.json"
    assert main(["sphere", demo, "--bootstrap", "10", "--format", "json", "-o", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert {"spheres", "misfits", "next_tests", "warnings", "caution"} <= set(doc)
    assert doc["tests"] == 28 and len(doc["next_tests"]) == 5
    assert main(["sphere", demo, "--outcome", "score", "--pass-mark", "4", "--scale", "1:6",
                 "--bootstrap", "10", "--format", "csv", "--part", "next", "--next", "3"]) == 0
    csv = capsys.readouterr().out
    assert csv.splitlines()[0].startswith("name,cas") and len(csv.strip().splitlines()) == 4
    assert main(["sphere", demo, "--bootstrap", "0"]) == 0
    text = capsys.readouterr().out
    assert "R0" in text and "safety data sheet" in text
    # the file has both a grade column and a dissolved column: the output says which one was read,
    # and names the good tests on the fitted surface (the fit is the tightest sphere holding them)
    assert "outcome read from the column 'dissolved'); fit score" in text
    fit = selector.fit_sphere(demo, bootstrap=0)
    edge = fit.on_surface()
    assert edge and all(n in text.split("sit on the surface")[0] for n in edge)
    # the next-test table gives a missing flash point as "no data" (or "not flammable"), never NaN;
    # with the default bootstrap the demo's list holds phenyl acetate, which has no flash point
    # in the library
    assert main(["sphere", demo, "--next", "8"]) == 0
    nxt = capsys.readouterr().out.split("Worth testing next")[1]
    assert "no data" in nxt and "NaN" not in nxt and "nan" not in nxt
    bad = tmp_path / "bad.csv"
    bad.write_text("solvent,outcome\ntolune,good\nwater,perhaps\n")
    assert main(["sphere", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "did you mean" in err and "perhaps" in err
    keep = tmp_path / "keep.json"
    keep.write_text("previous")
    assert main(["sphere", str(bad), "-o", str(keep)]) == 2
    assert keep.read_text() == "previous"


def test_demo_fit_intervals_hold_the_demo_sphere():
    # The invented demo: its lab tests were written to agree with its invented sphere. Checked
    # here only for consistency of the demo text (README, app), not as a reference value.
    from selector.cli_core import demo_scenario

    sc = demo_scenario()
    r = sc["resin"]
    fit = fit_sphere(pd.read_csv("parameters/demo/lab_tests.csv"), seed=0)
    for k in PARAMS:
        lo, hi = fit.intervals[k]
        assert lo <= r[k] <= hi, (k, lo, r[k], hi)


def test_a_lab_table_without_a_header_row_is_named_as_such():
    # app review: a file whose first line is a test (no header) was answered with a column
    # message that did not say what was wrong; toluene and acetone are library liquids
    import io

    from selector.errors import InputTableError

    with pytest.raises(InputTableError, match="no header row: the first line \\(toluene, 1\\)"):
        read_tests(io.StringIO("toluene,1\nacetone,0\nethanol,1\nhexane,0\n"))
    with pytest.raises(InputTableError, match="columns found: a, b, c"):
        read_tests(io.StringIO("a,b,c\n1,2,3\n"))


def test_trying_two_spheres_leaves_the_one_sphere_intervals_alone():
    # README walk-through: `sphere --two` gave another one-sphere R0 interval (4.82 against 4.48)
    # when one sphere was kept; the trial now draws from a random stream of its own. Data: a
    # sphere placed through published HSP of common liquids (library values, chemicals).
    tests = pd.DataFrame({"solvent": ["toluene", "o-xylene", "ethyl acetate", "acetone", "2-butanone", "chloroform",
                                      "water", "methanol", "hexane", "ethanol", "glycerol", "cyclohexane"],
                          "outcome": ["good"] * 6 + ["bad"] * 6})
    one = fit_sphere(tests, seed=3, bootstrap=40)
    both = fit_sphere(tests, seed=3, bootstrap=40, two_spheres=True)
    assert len(both.spheres) == 1                     # one sphere kept by the BIC
    assert both.intervals == one.intervals and len(one.intervals) >= 4


def test_one_mislabelled_test_is_named_and_the_centre_stays_in_the_target_box():
    # numbers review, round 4: polymethyl methacrylate's sphere (dD 18.6, dP 10.5, dH 5.1, R0 8.6,
    # from memory of Hansen's handbook) decides 22 common liquids; water marked "good" by mistake
    # sent the centre to dD 81.7, dP 67.9 (R0 144) with no hint of which result to doubt
    names = ["acetone", "toluene", "ethanol", "methanol", "hexane", "water", "ethyl acetate", "2-butanone",
             "chloroform", "dichloromethane", "tetrahydrofuran", "DMSO", "DMF", "NMP", "acetonitrile",
             "cyclohexane", "1-butanol", "diethyl ether", "o-xylene", "propylene carbonate", "heptane",
             "isopropanol"]
    centre, r0 = np.array([18.6, 10.5, 5.1]), 8.6
    h = np.array([[getattr(selector.find_liquid(n, LIB), k) for k in HSP] for n in names])
    inside = np.sqrt(4 * (h[:, 0] - centre[0]) ** 2 + ((h[:, 1:] - centre[1:]) ** 2).sum(1)) < r0
    clean = pd.DataFrame({"solvent": names, "outcome": inside})
    wrong = clean.assign(outcome=clean["outcome"] | (clean["solvent"] == "water"))
    assert not clean["outcome"][names.index("water")]          # water does not dissolve PMMA (common practice)
    ok = fit_sphere(clean, bootstrap=0)
    f = fit_sphere(wrong, bootstrap=0)
    # the centre stays in the box a typed target is held to (dD <= 30, dP <= 40, dH <= 50), and
    # says when it is pinned at its edge
    assert f.delta_d <= 30 + 1e-9 and f.delta_p <= 40 + 1e-9 and f.delta_h <= 50 + 1e-9
    assert any(w.startswith("the centre stops at the edge of the range it is searched in (dD 30")
               for w in f.warnings)
    selector.rank(f)                                           # usable as a target
    said = [w for w in f.warnings if w.startswith("one result decides this fit: without water (marked good)")]
    assert len(said) == 1
    # and the sphere it names is the clean fit's
    assert f"R0 {ok.radius:.1f}" in said[0] and f"dD {ok.delta_d:.1f}" in said[0]
    assert not any("decides" in w or "hangs on" in w for w in ok.warnings)


def test_lab_tests_in_cal_units_are_refused_with_the_converted_values():
    # practitioner review: tests typed with dD 7-9 fitted a sphere at dD 8.3 without a word; no
    # liquid has dD below 11.3 MPa^0.5 (perfluoropentane, chemicals), 1 (cal/cm3)^0.5 = 2.0455
    # MPa^0.5 (Hansen's handbook)
    import pandas as pd

    from selector.errors import InputTableError

    tests = pd.DataFrame({"solvent": ["a", "b", "c", "d"], "delta_d": [7.6, 8.0, 9.0, 8.5],
                          "delta_p": [2, 3, 4, 1], "delta_h": [3, 1, 5, 2],
                          "dissolved": ["yes", "no", "yes", "no"]})
    with pytest.raises(InputTableError, match=r"4 problems") as e:
        selector.fit_sphere(tests)
    assert "row 2 (a): dD 7.6 is lower than any liquid" in str(e.value) and "dD 15.5, dP 4.1, dH 6.1" in str(e.value)


def test_replicates_that_disagree_are_settled_by_majority_or_mean_grade():
    # practitioner review: toluene yes, yes, no was refused outright. Common practice: repeated
    # tests that disagree mark a borderline liquid; the majority (or, for grades, the mean against
    # the pass mark) is the usual reading, with a re-test advised. A tie stays refused.
    base = {"solvent": ["water", "hexane", "acetone", "ethanol", "chloroform"],
            "outcome": [0, 0, 1, 0, 1]}
    df = pd.DataFrame({"solvent": base["solvent"] + ["toluene"] * 3, "outcome": base["outcome"] + [1, 1, 0]})
    t = read_tests(df)
    assert bool(t.set_index("label").loc["toluene", "good"]) is True
    assert any("2 good and 1 bad results; the majority (good) is used" in n for n in t.attrs["notes"])
    graded = pd.DataFrame({"solvent": base["solvent"] + ["toluene", "toluene"],
                           "score": [1, 1, 5, 2, 6] + [5, 3]})
    g = read_tests(graded, outcome="score", threshold=4)
    row = g.set_index("label").loc["toluene"]
    assert row["grade"] == 4.0 and bool(row["good"]) is True      # mean 4 reaches the pass mark 4
    assert any("straddle the pass mark 4" in n for n in g.attrs["notes"])
    with pytest.raises(InputTableError, match=r"no grade reaches the pass mark 9 \(the highest given is 6\)"):
        read_tests(graded, outcome="score", threshold=9)


def test_one_name_for_two_sets_of_given_hsp_is_refused():
    # two of the user's own liquids typed under one name with different numbers: a typing slip
    df = pd.DataFrame({"solvent": ["mine", "mine", "water", "hexane", "acetone", "ethanol"],
                       "delta_d": [17.0, 18.5, None, None, None, None],
                       "delta_p": [5.0, 9.0, None, None, None, None],
                       "delta_h": [6.0, 4.0, None, None, None, None],
                       "outcome": [1, 0, 0, 0, 1, 1]})
    with pytest.raises(InputTableError, match="the name 'mine' is given to 2 different sets of HSP"):
        read_tests(df)


def test_grades_without_a_pass_mark_are_told_once():
    # practitioner review: `--outcome score` without `--pass-mark` repeated one message per row
    grades = pd.DataFrame({"solvent": ["water", "hexane", "acetone", "ethanol", "chloroform", "toluene"],
                           "score": [2, 3, 5, 4, 6, 5]})
    with pytest.raises(InputTableError) as e:
        read_tests(grades, outcome="score")
    msg = str(e.value)
    assert "1 problem" in msg and msg.count("need a pass mark") == 1 and "rows 2 (2), 3 (3)" in msg


def test_lab_tests_below_a_liquids_melting_point_are_refused():
    # crash hunt: tests "at -90 C" fitted a sphere though water melts at 0 C and cyclohexane at
    # 6.5 C (chemicals, via the library)
    df = pd.DataFrame({"solvent": ["water", "cyclohexane", "acetone", "ethanol", "toluene"],
                       "outcome": [0, 0, 1, 0, 1]})
    with pytest.raises(InputTableError) as e:
        read_tests(df, temperature=-90)
    msg = str(e.value)
    assert "water melts at 0 C, so it is no liquid at -90 C" in msg and "cyclohexane melts at 7 C" in msg
    assert "acetone melts" not in msg            # acetone melts at -95 C
    assert len(read_tests(df)) == 5              # at 25 C the same tests are fine
