"""Blend design and substitutes: exact fractions, constraints, non-solvent pairs, miscibility."""
from __future__ import annotations

import io
import itertools
import json

import numpy as np
import pandas as pd
import pytest

import selector
from selector.blends import (binary_fractions, blend_fractions, find_blends, relative_evaporation_rate,
                             search_arrays, substitutes, ternary_fractions)
from selector.cli import main
from selector.errors import SelectorError
from selector.hazards import hazard_columns, hazard_statements
from selector.hansen import ra

LIB = selector.load_library()
HSP = ["delta_d", "delta_p", "delta_h"]

# Nitrocellulose (H-23, 1/2 s) sphere from the polymer table of Hansen's handbook, 2nd ed.
# (from memory): dD 15.4, dP 14.7, dH 8.8, R0 11.5 MPa^0.5.
NITROCELLULOSE = (15.4, 14.7, 8.8, 11.5)
# Polystyrene sphere (Hansen's handbook, from memory), as in test_ranking.
PS = (21.3, 5.8, 4.3, 12.7)
SMALL = ["toluene", "ethanol", "acetone", "heptane", "ethyl acetate", "1-butanol", "water",
         "cyclohexanone", "dimethyl sulfoxide", "methanol", "diethyl ether", "propylene carbonate"]


def _hsp(names):
    return np.array([LIB.loc[LIB["name"] == n, HSP].iloc[0].to_numpy(float) for n in names])


def _grid_best(hsp, target, m, step=0.001):
    """Brute force on a 0.1 % grid of volume fractions (independent of the closed form)."""
    k = len(hsp)
    g = np.round(np.arange(m, 1 - m * (k - 1) + 1e-12, step), 10)
    if k == 2:
        f = np.column_stack([g, 1 - g])
    else:
        a, b = np.meshgrid(g, g, indexing="ij")
        c = 1 - a - b
        ok = c >= m - 1e-12
        f = np.column_stack([a[ok], b[ok], c[ok]])
    mix = f @ hsp
    d = ra(mix, np.asarray(target))
    i = int(np.argmin(d))
    return f[i], float(d[i])


@pytest.mark.parametrize("combo,target", [
    (("toluene", "ethanol"), (17.0, 5.0, 10.0)),
    (("heptane", "acetone"), (15.5, 5.0, 3.0)),
    (("water", "dimethyl sulfoxide"), (17.0, 16.0, 30.0)),
    (("toluene", "heptane"), (20.0, 1.0, 1.0)),          # target off the line, clipped at 5 %
    (("toluene", "ethanol", "acetone"), (16.5, 7.0, 9.0)),
    (("heptane", "water", "dimethyl sulfoxide"), (16.0, 9.0, 12.0)),
    (("toluene", "heptane", "water"), (25.0, 20.0, 2.0)),  # far outside: an edge or vertex wins
    (("methanol", "propylene carbonate", "cyclohexanone"), (18.0, 12.0, 9.0)),
])
@pytest.mark.parametrize("m", [0.05, 0.2])
def test_fractions_agree_with_brute_force_grid(combo, target, m):
    h = _hsp(combo)
    f, d = blend_fractions(h, target, m)
    fg, dg = _grid_best(h, target, m)
    assert d <= dg + 1e-9                       # exact optimum is never worse than the grid
    assert d >= dg - 0.02                       # and the grid comes within its resolution
    assert np.all(f >= m - 1e-12) and abs(f.sum() - 1) < 1e-12
    assert np.abs(f - fg).max() < 0.01
    # the reported Ra is that of the volume-weighted mean (Hansen's handbook, ch. 1)
    assert abs(float(ra(f @ h, np.asarray(target))) - d) < 1e-9


def test_search_equals_exhaustive_enumeration():
    # the pruned, vectorised search returns exactly what enumerating every triple returns
    rng = np.random.default_rng(7)
    for _ in range(6):
        n = int(rng.integers(8, 22))
        X = rng.normal(size=(n, 3)) * 6
        t = rng.normal(size=3) * 2
        res = search_arrays(X, t, max_components=3, min_fraction=0.05, pool=40, ternary_pool=40, min_gain=0.1)
        B = {p: float(binary_fractions(X[p[0]], X[p[1]], t, 0.05)[1]) for p in itertools.combinations(range(n), 2)}
        exp = []
        for i, j, k in itertools.combinations(range(n), 3):
            d = float(ternary_fractions(X[i], X[j], X[k], t, 0.05)[1])
            if d < min(B[(i, j)], B[(i, k)], B[(j, k)]) - 0.1:
                exp.append(d)
        got = np.sort(res["ra"][res["idx"][:, 2] >= 0])
        exp = np.sort(exp)[:40]
        assert len(got) == len(exp)
        assert np.allclose(got, exp, atol=1e-9)
        two = search_arrays(X, t, max_components=3, min_fraction=0.05, pool=40, ternary_pool=40,
                            min_gain=0.1, workers=2)
        assert np.allclose(np.sort(two["ra"][two["idx"][:, 2] >= 0]), got, atol=1e-12)


def _enumerated_pool(X, t, hz, m, gain, pool, res, cap=np.inf):
    """Every triple solved one by one (closed form), kept if it beats its pairs by ``gain``,
    ranked by the search's documented key: Ra step, worst hazard level, Ra."""
    n = len(X)
    B = {p: float(binary_fractions(X[p[0]], X[p[1]], t, m)[1]) for p in itertools.combinations(range(n), 2)}
    rows = []
    for i, j, k in itertools.combinations(range(n), 3):
        d = float(ternary_fractions(X[i], X[j], X[k], t, m)[1])
        if d < min(B[(i, j)], B[(i, k)], B[(j, k)]) - gain and d < cap:
            b = np.floor(d / res)
            rows.append((b * 10 + max(hz[i], hz[j], hz[k]) + min(d / res - b, 0.999), d, frozenset((i, j, k))))
    rows.sort(key=lambda r: r[0])
    return rows[:pool]


@pytest.mark.parametrize("seed", range(5))
def test_screened_search_equals_enumeration_with_hazard_levels(seed):
    # random clouds (some targets outside the cloud, where the row cuts along a direction act),
    # random hazard levels 0-4, Ra cap: the screened search keeps exactly the enumerated pool
    rng = np.random.default_rng(100 + seed)
    n = int(rng.integers(14, 26))
    X = rng.normal(size=(n, 3)) * 6
    t = rng.normal(size=3) * (2 if seed % 2 else 9)
    hz = rng.integers(0, 5, n).astype(float)
    cap = [np.inf, 6.0][seed % 2]
    res = search_arrays(X, t, max_components=3, min_fraction=0.05, pool=30, ternary_pool=30, min_gain=0.1,
                        hazard_rank=hz, ra_cap=None if np.isinf(cap) else cap)
    tern = res["idx"][:, 2] >= 0
    exp = _enumerated_pool(X, t, hz, 0.05, 0.1, 30, 0.5, cap)
    assert np.allclose(res["key"][tern], [r[0] for r in exp], atol=1e-9)
    assert np.allclose(res["ra"][tern], [r[1] for r in exp], atol=1e-9)
    assert [frozenset(r) for r in res["idx"][tern]] == [r[2] for r in exp]
    plane = search_arrays(X, t, max_components=3, min_fraction=0.05, pool=30, ternary_pool=30, min_gain=0.1,
                          hazard_rank=hz, method="plane")
    pt = plane["idx"][:, 2] >= 0
    k = res["key"][tern]
    assert np.allclose(np.sort(plane["key"][pt])[:len(k)], k, atol=1e-9)


@pytest.mark.parametrize("target", [
    (21.3, 5.8, 4.3),   # polystyrene, Hansen's handbook (from memory): high dD, few liquids beyond
    (18.0, 10.0, 7.0),  # a polar point inside the library's cloud
])
def test_screened_search_same_pool_as_plane_method_on_full_library(target):
    # the whole bundled library (823 liquids, ~92.6 million triples) with its CHEM21 hazard
    # levels: the screened search and the per-triple plane scan keep the same pool
    X = LIB[HSP].to_numpy(float) * np.array([2.0, 1.0, 1.0])
    t = np.asarray(target) * np.array([2.0, 1.0, 1.0])
    hz = hazard_columns(LIB)["hazard_rank"].to_numpy(float)
    a = search_arrays(X, t, max_components=3, hazard_rank=hz)
    b = search_arrays(X, t, max_components=3, hazard_rank=hz, method="plane")
    ta, tb = a["idx"][:, 2] >= 0, b["idx"][:, 2] >= 0
    assert ta.sum() == tb.sum() == 200
    assert np.allclose(a["key"][ta], b["key"][tb], atol=1e-6)
    # same triples wherever the key is not tied with another one
    ka, kb = a["key"][ta], b["key"][tb]
    sa = {frozenset(r): k for r, k in zip(a["idx"][ta], ka)}
    sb = {frozenset(r): k for r, k in zip(b["idx"][tb], kb)}
    lone = [r for r, k in sa.items() if np.sum(np.abs(ka - k) < 1e-6) == 1 and k < ka.max() - 1e-6]
    assert len(lone) > 100
    assert all(r in sb for r in lone)


# NMP (HSP from the library, i.e. the published tables carried by `chemicals`) and the
# polystyrene sphere (Hansen's handbook, from memory)
@pytest.mark.parametrize("target", ["1-methyl-2-pyrrolidinone", PS])
def test_find_blends_three_liquids_same_as_plane_method(target, monkeypatch):
    # the display cap (no blend of three from an Ra step where it cannot be shown) changes
    # nothing in the rows shown: compare with the uncapped per-triple scan
    import selector.blends as sb

    fast = find_blends(target, max_components=3, top=20)
    orig = sb.search_arrays

    def plane(*a, **k):
        k.pop("ra_cap", None)
        return orig(*a, **k, method="plane")

    monkeypatch.setattr(sb, "search_arrays", plane)
    slow = find_blends(target, max_components=3, top=20)
    assert fast["components"].tolist() == slow["components"].tolist()
    assert np.allclose(fast["ra"], slow["ra"], atol=1e-9)


@pytest.mark.parametrize("target", ["perfluorohexane"])
def test_trial_cap_at_the_edge_of_the_library_changes_no_row(target, monkeypatch):
    # Targets at the edge of the library's HSP range (HSP from the published tables bundled in
    # the library): few liquids lie close, so the safe display cap is loose and the tighter
    # trial cap is taken; the rows shown must be those of the uncapped search.
    import selector.blends as sb

    used = []
    trial = sb._display_trial

    def spy(*a, **k):
        r = trial(*a, **k)
        used.append(r is not None)
        return r

    monkeypatch.setattr(sb, "_display_trial", spy)
    fast = find_blends(target, max_components=3, top=20)
    assert used == [True]
    orig = sb.search_arrays

    def uncapped(*a, **k):
        k["ra_cap"] = None
        return orig(*a, **k)

    monkeypatch.setattr(sb, "search_arrays", uncapped)
    slow = find_blends(target, max_components=3, top=20)
    assert fast["components"].tolist() == slow["components"].tolist()
    assert np.allclose(fast["ra"], slow["ra"], atol=1e-9)


@pytest.mark.parametrize("target", [PS, NITROCELLULOSE, (18.0, 12.3, 7.2, 6.0)])
@pytest.mark.parametrize("top,max_uses", [(3, 3), (4, 2), (6, 3)])
def test_display_cap_never_changes_the_rows_shown(target, top, max_uses, monkeypatch):
    # on a small candidate set (where blends of three do get shown) the capped search shows the
    # same rows as the uncapped per-triple scan. Targets: polystyrene and nitrocellulose spheres
    # (Hansen's handbook, from memory) and a polar point chosen here (an input only: the check
    # compares two search paths of the same rule).
    import selector.blends as sb

    names = SMALL + ["2-butanone", "butyl acetate", "1-propanol", "cyclohexane", "n,n-dimethylformamide",
                     "tetrahydrofuran", "propylene glycol", "anisole"]
    kw = dict(include=names, max_components=3, top=top, max_uses=max_uses, min_gain=0.0)
    fast = find_blends(target, **kw)
    orig = sb.search_arrays

    def plane(*a, **k):
        k.pop("ra_cap", None)
        return orig(*a, **k, method="plane")

    monkeypatch.setattr(sb, "search_arrays", plane)
    slow = find_blends(target, **kw)
    assert fast["components"].tolist() == slow["components"].tolist()
    assert np.allclose(fast["ra"], slow["ra"], atol=1e-9)


@pytest.fixture(scope="module")
def blends_small():
    return find_blends(PS, include=SMALL, max_components=3, top=30, min_gain=0.0, max_uses=30)


def test_blend_hsp_is_volume_weighted_mean(blends_small):
    for r in blends_small.itertuples():
        h = _hsp(r.components)
        mix = np.asarray(r.fractions) @ h
        assert np.allclose(mix, [r.delta_d, r.delta_p, r.delta_h], atol=1e-3)
        assert abs(float(ra(mix, PS[:3])) - r.ra) < 1e-3
        assert abs(r.red - r.ra / PS[3]) < 1e-12


def test_constraints_never_violated():
    from selector.cautions import not_flammable

    lib = LIB
    res = find_blends((17.0, 7.0, 7.0, 6.0), max_components=3, min_fraction=0.1, top=40,
                      boiling_point_c=(60, 160), flash_point_c=(0, None), max_hazard_class="problematic",
                      exclude=["toluene"], min_gain=0.0)
    assert len(res) > 0
    hz = {r.name: r.hazard_class for r in hazard_columns(lib).assign(name=lib["name"]).itertuples()}
    for r in res.itertuples():
        assert 1 <= len(r.components) <= 3
        assert len(r.components) == 1 or min(r.fractions) >= 0.1 - 1e-4
        assert abs(sum(r.fractions) - 1) < 1e-3
        assert "toluene" not in r.components
        for c in r.components:
            row = lib.loc[lib["name"] == c].iloc[0]
            assert 60 <= row.boiling_point_c <= 160
            # a flash point of at least 0 C, or none at all because the liquid does not burn
            assert row.flash_point_c >= 0 or bool(not_flammable(lib.loc[lib["name"] == c]).all())
            assert hz[c] in ("recommended", "problematic")
        assert r.hazard_class in ("recommended", "problematic")


def _unclassified_never_heads_a_step(b, resolution=0.5):
    # within an Ra step (resolution), no row with an unclassified component precedes a classified one
    step = np.floor(b["ra"].to_numpy() / resolution)
    unc = (b["hazard_class"] == "unclassified").to_numpy()
    for s in np.unique(step):
        u = unc[step == s]
        assert not (u[:-1] & ~u[1:]).any(), b.loc[step == s, ["components", "ra", "hazard_class"]]


def test_unclassified_liquid_never_heads_classified_blends():
    # Reviewer's case: near estimated tert-butyl cyclohexanecarboxylate (16.5, 4.5, 5.5, R0 5),
    # "100% divinyl sulfide" (no hazard data, Ra 0.14) came first, above classified blends of the
    # same Ra step (recommended, Ra < 0.1). Unclassified counts as no better than the worst class.
    b = find_blends((16.5, 4.5, 5.5, 5.0), top=10, include_reactive=True)
    _unclassified_never_heads_a_step(b)
    assert b["components"].iloc[0] != ("divinyl sulfide",)
    assert b["hazard_class"].iloc[0] != "unclassified"
    # menthyl acetate's own HSP (16.8, 4.7, 4.9, library values): the liquid itself (Ra 0, no
    # hazard data in parameters/hazards.csv) comes after the classified rows of its step (Ra
    # steps of 0.1 MPa^0.5; before, a single liquid came first in its step whatever its class)
    lib = selector.load_library()
    row = lib.set_index("name").loc["menthyl acetate"]
    hsp = tuple(float(row[c]) for c in ("delta_d", "delta_p", "delta_h"))
    b = find_blends(hsp + (5.0,), top=6, max_components=2, resolution=0.1)
    _unclassified_never_heads_a_step(b, 0.1)
    first = b.index[b["components"].map(lambda c: c == ("menthyl acetate",)).to_numpy()]
    assert len(first) == 1 and (b["hazard_class"].iloc[:first[0]] != "unclassified").all() and first[0] > 0
    assert "no hazard data: treat as hazardous" in b["hazard_notes"].iloc[first[0]]


def test_own_liquid_without_hazard_data_is_not_pushed_out():
    # A liquid the user added (origin "user") at the target itself: it has no hazard data but is
    # ranked as the worst class, not after every classified blend, so it still shows (Ra 0) -
    # with its "no hazard data" note. Same target as above (menthyl acetate's library HSP).
    lib0 = selector.load_library()
    row = lib0.set_index("name").loc["menthyl acetate"]
    hsp = tuple(float(row[c]) for c in ("delta_d", "delta_p", "delta_h"))
    mine = pd.DataFrame({"name": ["house thinner Z"], "delta_d": [hsp[0]], "delta_p": [hsp[1]],
                         "delta_h": [hsp[2]], "molar_volume": [200.0], "boiling_point_c": [180.0]})
    lib = selector.load_library(mine)
    b = find_blends(hsp + (5.0,), top=10, library=lib)
    hit = b.index[b["components"].map(lambda c: c == ("house thinner Z",)).to_numpy()]
    assert len(hit) == 1 and hit[0] == 0        # a single at Ra 0 heads its step among the classified
    assert "no hazard data" in b["hazard_notes"].iloc[hit[0]]

def test_blend_flash_point_text_tells_not_flammable_from_no_data(capsys):
    # Common practice: dichloromethane, chloroform and tetrachloroethylene do not burn
    # (parameters/hazards.csv "none", from memory); divinyl sulfide has no flash-point data.
    from selector.cautions import flash_point_text

    names = ["dichloromethane", "tetrachloroethylene", "chloroform", "divinyl sulfide"]
    b = find_blends((17.5, 5.5, 5.5, 5.0), include=names, max_components=2, top=10)
    text = dict(zip(b["components"].map(frozenset), flash_point_text(b, "lowest_flash_point_c")))
    assert text[frozenset({"chloroform", "dichloromethane"})] == "not flammable"
    assert text[frozenset({"tetrachloroethylene"})] == "not flammable"
    assert text[frozenset({"dichloromethane", "divinyl sulfide"})] == "no data"
    assert main(["blend", "17.5,5.5,5.5,5", "--only", ",".join(names), "--parts", "2"]) == 0
    out = capsys.readouterr().out
    row = next(ln for ln in out.splitlines() if "chloroform" in ln and "dichloromethane" in ln)
    assert "not flammable" in row
    row = next(ln for ln in out.splitlines() if "divinyl sulfide" in ln and "dichloromethane" in ln)
    assert "no data" in row


def test_diversity_limits_repeats():
    res = find_blends((17.0, 7.0, 7.0, 6.0), max_components=2, top=20, max_uses=2)
    counts = pd.Series([c for cs in res["components"] for c in cs]).value_counts()
    assert counts.max() <= 2
    assert not res["components"].map(frozenset).duplicated().any()


def test_non_solvent_pair_dissolves_nitrocellulose():
    # Common practice (collodion, pharmacopoeia preparation, from memory): cellulose nitrate
    # dissolves in a diethyl ether / ethanol mixture (about 3:1 by volume) but in neither liquid
    # alone - Hansen's handbook discusses such non-solvent pairs (ch. 1, from memory).
    res = find_blends(NITROCELLULOSE, include=["diethyl ether", "ethanol", "water", "heptane"],
                      max_components=2, top=10)
    for name in ["diethyl ether", "ethanol"]:
        assert float(ra(_hsp([name])[0], NITROCELLULOSE[:3])) / NITROCELLULOSE[3] > 1, name
    row = res[res["components"].map(set) == {"diethyl ether", "ethanol"}]
    assert len(row) == 1
    assert bool(row["non_solvent_pair"].iloc[0]) and float(row["red"].iloc[0]) < 1
    # the collodion proportion itself lands inside the sphere
    mix = np.array([0.75, 0.25]) @ _hsp(["diethyl ether", "ethanol"])
    assert float(ra(mix, NITROCELLULOSE[:3])) / NITROCELLULOSE[3] < 1
    assert not res.loc[res["n_components"] == 1, "non_solvent_pair"].any()


def test_immiscible_components_never_proposed_together():
    # Common practice: water does not mix with heptane, hexane or toluene; yet the mean of water
    # and a hydrocarbon is the closest point to this target.
    names = ["water", "heptane", "hexane", "toluene", "ethanol", "acetone", "1-butanol"]
    target = (15.2, 8.0, 21.0, 4.0)
    mix = 0.5 * (_hsp(["water"])[0] + _hsp(["heptane"])[0])
    assert float(ra(mix, target[:3])) < 1.0  # the unconstrained best would be water + heptane
    res = find_blends(target, include=names, max_components=3, top=50, min_gain=0.0, max_uses=50)
    assert len(res) > 0
    for cs in res["components"]:
        if len(cs) > 1:
            assert selector.check_blend_miscible(list(cs)).ok, cs
        assert not ({"water", "heptane"} <= set(cs) or {"water", "hexane"} <= set(cs)
                    or {"water", "toluene"} <= set(cs)), cs
    free = find_blends(target, include=names, max_components=2, top=50, require_miscible=False)
    assert any({"water", "heptane"} <= set(cs) or {"water", "hexane"} <= set(cs) for cs in free["components"])


def test_cost_pareto_front():
    prices = {"toluene": 2.0, "ethanol": 1.0, "acetone": 1.5, "ethyl acetate": 1.8, "cyclohexanone": 4.0,
              "1-butanol": 2.2, "heptane": 1.2}
    res = find_blends(PS, cost_per_litre=prices, max_components=2, top=30, max_uses=30, min_gain=0.0)
    assert set(c for cs in res["components"] for c in cs) <= set(prices)
    for r in res.itertuples():
        assert abs(r.cost_per_litre - sum(f * prices[c] for c, f in zip(r.components, r.fractions))) < 1e-3
    front = res.attrs["pareto"]
    assert len(front) >= 1
    # nothing in the front is dominated by any other proposal
    allr = res[["ra", "cost_per_litre"]].to_numpy()
    for r in front[["ra", "cost_per_litre"]].to_numpy():
        dom = (allr[:, 0] <= r[0]) & (allr[:, 1] <= r[1]) & ((allr[:, 0] < r[0]) | (allr[:, 1] < r[1]))
        assert not dom.any()
    with pytest.raises(SelectorError, match="cost"):
        find_blends(PS, cost_per_litre={"toluene": -1})


def test_prices_matched_by_synonym_are_named_and_double_prices_refused():
    # "1,2-dimethylbenzene" is a synonym of o-xylene in the library (names from chemicals); the
    # prices are arbitrary numbers, not check values
    prices = {"1,2-dimethylbenzene": 2.0, "acetone": 1.5, "ethyl acetate": 1.8}
    res = find_blends(PS, cost_per_litre=prices, max_components=2, top=10, min_gain=0.0)
    assert res.attrs["price_notes"] == ["price of '1,2-dimethylbenzene' used for o-xylene"]
    assert "o-xylene" in {c for cs in res["components"] for c in cs}
    with pytest.raises(SelectorError, match="prices o-xylene twice"):
        find_blends(PS, cost_per_litre={"1,2-dimethylbenzene": 2.0, "o-xylene": 2.5, "acetone": 1.5})
    # the same name on two rows of a price table (a dict would silently keep the last price)
    with pytest.raises(SelectorError, match="prices toluene on two rows"):
        find_blends(PS, cost_per_litre=pd.DataFrame({"name": ["toluene", "toluene", "acetone"],
                                                     "cost_per_litre": [1.0, 9.0, 2.0]}))
    # a Series works like a dict
    ser = find_blends(PS, cost_per_litre=pd.Series(prices), max_components=2, top=10, min_gain=0.0)
    assert ser["cost_per_litre"].tolist() == res["cost_per_litre"].tolist()


def test_mass_fractions_follow_the_densities():
    # toluene 0.862 and ethanol 0.785 g/cm3 at 25 C (CRC Handbook, from memory): by weight the
    # denser toluene takes the larger share, w = phi rho / sum(phi rho) (ideal mixing)
    res = find_blends((17.0, 4.0, 9.0), include=["toluene", "ethanol"], max_components=2, top=5)
    row = res.loc[res["n_components"] == 2].iloc[0]
    phi = dict(zip(row["components"], row["fractions"]))
    w = dict(zip(row["components"], row["mass_fractions"]))
    expect = phi["toluene"] * 0.862 / (phi["toluene"] * 0.862 + phi["ethanol"] * 0.785)
    assert w["toluene"] == pytest.approx(expect, abs=0.003)
    assert sum(row["mass_fractions"]) == pytest.approx(1.0, abs=1e-12)
    assert row["density"] == pytest.approx(phi["toluene"] * 0.862 + phi["ethanol"] * 0.785, abs=0.003)
    from selector.blends import blend_labels

    lab = blend_labels(res.loc[[row.name]], "mass")[0]
    assert lab.endswith(f"{w['toluene']:.1%} toluene") or lab.startswith(f"{w['toluene']:.1%} toluene")
    # a component without a density: no mass fractions, no label, rather than a wrong one
    lib = selector.load_library()
    no_rho = lib.assign(density=np.where(lib["name"].eq("ethanol"), np.nan, lib["density"]))
    res2 = find_blends((17.0, 4.0, 9.0), include=["toluene", "ethanol"], max_components=2, top=5, library=no_rho)
    two = res2.loc[res2["n_components"] == 2]
    assert two["density"].isna().all() and blend_labels(two, "mass") == [""] * len(two)


def test_prices_per_kg_are_turned_into_prices_per_litre_with_the_density():
    # arbitrary prices (not check values); toluene's density 0.862 g/cm3 at 25 C (CRC, from memory)
    per_kg = {"toluene": 2.0, "ethanol": 1.0, "acetone": 1.5, "ethyl acetate": 1.8}
    res = find_blends(PS, cost_per_kg=per_kg, max_components=2, top=30, max_uses=30, min_gain=0.0)
    assert res.attrs["cost_basis"] == "cost_per_kg"
    one = res.loc[res["components"] == ("toluene",)].iloc[0]
    assert one["cost_per_kg"] == pytest.approx(2.0, abs=1e-12)
    assert one["cost_per_litre"] == pytest.approx(2.0 * 0.862, abs=0.01)
    for r in res.itertuples():   # a blend's cost per kg is the mass-weighted price per kg
        assert r.cost_per_kg == pytest.approx(sum(w * per_kg[c] for c, w in zip(r.components, r.mass_fractions)))
    # the front is on the basis the prices came in, best Ra first, and holds the cheapest blend
    # that dissolves (RED <= 1: ethanol alone, the cheapest, lies outside the polystyrene sphere)
    front = res.attrs["pareto"]
    assert front["ra"].is_monotonic_increasing and (front["red"] <= 1).all()
    inside = res.loc[res["red"] <= 1]
    assert front["cost_per_kg"].min() == pytest.approx(inside["cost_per_kg"].min())
    assert res["cost_per_kg"].min() < inside["cost_per_kg"].min()
    with pytest.raises(SelectorError, match="not both"):
        find_blends(PS, cost_per_kg=per_kg, cost_per_litre=per_kg)


def test_every_problem_of_a_price_list_is_reported_at_once():
    with pytest.raises(SelectorError) as err:
        find_blends(PS, cost_per_litre={"tolune": 1.0, "ethanol": "x", "acetone": -1.0, "heptane": 2.0})
    msg = str(err.value)
    assert "3 problems" in msg and "tolune" in msg and "'x'" in msg and "-1.0" in msg


def test_cli_prices_per_kg_and_the_whole_front(tmp_path, capsys):
    p = tmp_path / "prices.csv"   # arbitrary prices
    p.write_text("name,cost_per_kg\ntoluene,2.0\nethanol,1.0\nacetone,1.5\nethyl acetate,1.8\nheptane,1.2\n")
    assert main(["blend", "21.3,5.8,4.3,12.7", "--parts", "2", "--prices", str(p), "--max-uses", "1",
                 "--top", "2"]) == 0
    out = capsys.readouterr().out
    assert "by_mass" in out and "cost_per_kg" in out and "Cost-versus-Ra front (pareto)" in out
    assert "not in this table (--front lists them all)" in out
    f = tmp_path / "front.json"
    assert main(["blend", "21.3,5.8,4.3,12.7", "--parts", "2", "--prices", str(p), "--front", "--format", "json",
                 "-o", str(f)]) == 0
    recs = json.loads(f.read_text())
    assert recs and all(r["pareto"] for r in recs)
    # the front carries the safety notes too: toluene is a suspected reprotoxicant (H361d) and
    # highly flammable (H225; GHS classification, common practice)
    tol = [r for r in recs if "toluene" in r["components"]]
    assert tol and all("toluene: suspected carcinogen, mutagen or reprotoxic" in r["hazard_notes"] for r in tol)
    assert all("mixing_note" in r for r in recs)
    ra = [r["ra"] for r in recs]
    cost = [r["cost_per_kg"] for r in recs]
    assert ra == sorted(ra) and cost == sorted(cost, reverse=True)   # a front: better Ra costs more
    assert main(["blend", "21.3,5.8,4.3,12.7", "--parts", "2", "--prices", str(p), "--front", "--top", "1"]) == 0
    out = capsys.readouterr().out
    assert "the table lists all of them" in out and "not in this table" not in out
    assert main(["blend", "21.3,5.8,4.3,12.7", "--front"]) == 2
    assert "give --prices too" in capsys.readouterr().err


def test_full_library_ternary_search():
    res = find_blends((18.0, 10.0, 7.0, 5.0), max_components=3, top=20)
    assert len(res) == 20
    assert (res["red"] < 1).all()
    assert res["ra"].iloc[0] <= res["ra"].max()
    assert res["fractions"].map(lambda f: len(f) == 1 or min(f) >= 0.05 - 1e-4).all()
    assert res.attrs["caution"].startswith("Caution")


def test_bad_input():
    with pytest.raises(SelectorError, match="max_components"):
        find_blends(PS, max_components=4)
    with pytest.raises(SelectorError, match="min_fraction"):
        find_blends(PS, min_fraction=0.4)
    with pytest.raises(SelectorError, match="unknown liquid"):
        find_blends(PS, include=["toluene", "no such liquid"])
    with pytest.raises(SelectorError, match="no liquid passes"):
        find_blends(PS, boiling_point_c=(500, 600))
    with pytest.raises(SelectorError, match="unknown filter"):
        find_blends(PS, colour="blue")
    with pytest.raises(SelectorError):
        find_blends((float("nan"), 1.0, 1.0))


# ---------------------------------------------------------------- substitutes

def test_relative_evaporation_rate_against_tables():
    # ASTM D3539-type tables (n-butyl acetate = 1), values from memory: toluene ~2.0,
    # water ~0.3, o-xylene ~0.6, ethanol ~1.7, acetone ~5.6. The estimate is rough: factor 2.
    rer = relative_evaporation_rate(LIB)
    ref = {"toluene": 2.0, "water": 0.3, "o-xylene": 0.6, "ethanol": 1.7, "acetone": 5.6}
    for name, v in ref.items():
        got = float(rer[(LIB["name"] == name).to_numpy()][0])
        assert v / 2 < got < v * 2, (name, got)
    # ordering is right: acetone > toluene > butyl acetate > o-xylene
    get = lambda n: float(rer[(LIB["name"] == n).to_numpy()][0])  # noqa: E731
    assert get("acetone") > get("toluene") > get("butyl acetate") > get("o-xylene")


@pytest.fixture(scope="module")
def nmp_subs():
    return substitutes("NMP", top=10)


def test_substitutes_are_strictly_safer(nmp_subs):
    s = nmp_subs
    assert s["role"].iloc[0] == "replaced"
    assert s["components"].iloc[0] == ("1-methyl-2-pyrrolidinone",)
    assert s["hazard_class"].iloc[0] == "hazardous"
    assert (s["hazard_rank"].iloc[1:] < s["hazard_rank"].iloc[0]).all()
    assert not s["components"].iloc[1:].map(lambda c: "1-methyl-2-pyrrolidinone" in c).any()
    assert "Annex XVII" in s.attrs["regulatory_note"]
    # trade-offs shown side by side with the liquid replaced
    for col in ["boiling_point_c", "evaporation_rate", "viscosity_mpa_s", "ra", "score"]:
        assert col in s.columns


def test_substitute_viscosity_match_ignores_corresponding_states_estimates(nmp_subs):
    # thermo has no data-based viscosity for NMP (the library's comes from parameters/viscosities.csv,
    # from memory). Without any value, and with a Letsou-Stiel value given instead (as a user row
    # might), the scores are the same: such an estimate is shown, but not used to judge the match.
    # Toluene's comes from a data-based correlation and does count. (Rule documented in
    # parameters/README.md.)
    lib0 = LIB.copy()
    nmp = lib0["cas"] == "872-50-4"
    assert lib0.loc[nmp, "viscosity_method"].iloc[0] == "parameters/viscosities.csv (from memory)"
    lib0.loc[nmp, "viscosity_mpa_s"] = np.nan
    none = substitutes("NMP", top=10, library=lib0)
    lib = lib0.copy()
    lib.loc[nmp, "viscosity_mpa_s"] = 5.0
    lib.loc[nmp, "viscosity_method"] = "LETSOU_STIEL"
    s = substitutes("NMP", top=10, library=lib)
    assert s["viscosity_mpa_s"].iloc[0] == pytest.approx(5.0)
    np.testing.assert_allclose(s["score"].to_numpy(), none["score"].to_numpy())
    # the value from viscosities.csv does count
    assert not np.allclose(nmp_subs["score"].to_numpy()[1:], none["score"].to_numpy()[1:])
    base = substitutes("toluene", top=5, max_components=1)
    lib2 = LIB.copy()
    tol = lib2["cas"] == "108-88-3"
    assert not lib2.loc[tol, "viscosity_estimated"].iloc[0]
    lib2.loc[tol, "viscosity_mpa_s"] *= 3.0
    moved = substitutes("toluene", top=5, max_components=1, library=lib2)
    assert not np.allclose(moved["mismatch"].iloc[1:].to_numpy(), base["mismatch"].iloc[1:].to_numpy())


def test_substitutes_for_a_solute_sphere():
    s = substitutes("toluene", solute=PS, top=5, max_components=1)
    assert s["role"].iloc[0] == "replaced"
    assert s["red"].iloc[1:].notna().all()
    assert set(s["hazard_class"].iloc[1:]) <= {"recommended"}


def test_substitutes_need_hazard_data():
    unclassified = LIB.loc[~LIB["cas"].isin(hazard_statements()["cas"]), "name"].iloc[0]
    with pytest.raises(SelectorError, match="unclassified"):
        substitutes(unclassified)
    with pytest.raises(SelectorError, match="already"):
        substitutes("ethanol")


# ---------------------------------------------------------------- command line

def test_cli_blend_csv(capsys):
    assert main(["blend", "21.3,5.8,4.3,12.7", "--only", ",".join(SMALL), "--parts", "2",
                 "--format", "csv", "--top", "5"]) == 0
    df = pd.read_csv(io.StringIO(capsys.readouterr().out))
    assert len(df) == 5 and {"blend", "ra", "red", "hazard_class", "fractions"} <= set(df.columns)


def test_cli_replace_json_and_hazard(capsys):
    assert main(["replace", "dichloromethane", "--parts", "1", "--format", "json", "--top", "3"]) == 0
    recs = json.loads(capsys.readouterr().out)
    assert recs[0]["role"] == "replaced" and len(recs) == 4
    assert main(["hazard", "toluene", "water"]) == 0
    out = capsys.readouterr().out
    assert "problematic" in out and "safety data sheet" in out


def test_cli_errors(capsys):
    assert main(["blend", "21.3,5.8,4.3,12.7", "--parts", "3", "--min-share", "0.5"]) == 2
    assert "min_fraction" in capsys.readouterr().err
    assert main(["replace", "no such liquid"]) == 2


def test_cli_prices_and_bad_price_file(tmp_path, capsys):
    good = tmp_path / "prices.csv"
    good.write_text("name,cost_per_litre\ntoluene,2.0\nethanol,1.0\nacetone,1.5\nethyl acetate,1.8\n")
    out = tmp_path / "blends.json"
    assert main(["blend", "21.3,5.8,4.3,12.7", "--parts", "2", "--prices", str(good), "--format", "json",
                 "-o", str(out)]) == 0
    recs = json.loads(out.read_text())
    assert recs and all(set(r["components"]) <= {"toluene", "ethanol", "acetone", "ethyl acetate"} for r in recs)
    assert all("pareto" in r and r["cost_per_litre"] is not None for r in recs)
    bad = tmp_path / "bad.csv"
    bad.write_text("liquid;price\ntoluene;2\n")
    assert main(["blend", "21.3,5.8,4.3,12.7", "--prices", str(bad), "-o", str(out), "--overwrite"]) == 2
    assert "cost_per_litre" in capsys.readouterr().err
    assert json.loads(out.read_text()) == recs  # the earlier output file is untouched
    # every message names the file; blank cells are told as blank, not as "nan"
    empty = tmp_path / "empty.csv"
    empty.write_text("name,cost_per_litre\n")
    assert main(["blend", "21.3,5.8,4.3,12.7", "--prices", str(empty)]) == 2
    assert f"the price list {empty} has a header but no rows" in capsys.readouterr().err
    holes = tmp_path / "holes.csv"
    holes.write_text("name,cost_per_litre\ntoluene,\n,2\ntolune,3\n")
    assert main(["blend", "21.3,5.8,4.3,12.7", "--prices", str(holes)]) == 2
    err = capsys.readouterr().err
    assert f"the price list {holes}: 3 problems" in err and "nan" not in err
    assert "no price for 'toluene' (empty cell)" in err and "has no liquid name" in err and "'tolune'" in err
    one = tmp_path / "one.csv"
    one.write_text("name,cost_per_litre\ntolune,3\n")
    assert main(["blend", "21.3,5.8,4.3,12.7", "--prices", str(one)]) == 2
    assert f"the price list {one}: unknown liquid 'tolune'" in capsys.readouterr().err


from hypothesis import given, settings, strategies as st  # noqa: E402

_pt = st.tuples(st.floats(12, 24), st.floats(0, 25), st.floats(0, 40))


@settings(max_examples=60, deadline=None)
@given(pts=st.lists(_pt, min_size=2, max_size=3), target=_pt, m=st.floats(0.0, 0.3),
       probe=st.lists(st.floats(0.0, 1.0), min_size=3, max_size=3))
def test_optimum_beats_any_feasible_mix(pts, target, m, probe):
    # optimality (convex problem): no feasible volume-fraction vector gets closer than the optimum
    h = np.array(pts)
    k = len(h)
    m = min(m, 1.0 / k)
    f, d = blend_fractions(h, target, m)
    assert np.all(f >= m - 1e-9) and abs(f.sum() - 1) < 1e-9
    g = np.array(probe[:k]) + 1e-12
    g = m + (1 - k * m) * g / g.sum()              # a random feasible mix
    assert d <= float(ra(g @ h, np.asarray(target))) + 1e-7


def test_substitutes_warn_when_a_non_burning_solvent_is_replaced_by_flammable_ones():
    # Common practice: tetrachloroethylene does not burn (parameters/hazards.csv, from memory);
    # every safer liquid near its HSP does, and the user must hear that the fire risk changes.
    from selector.blends import substitutes

    res = substitutes("tetrachloroethylene", top=5)
    fire = [w for w in res.attrs["warnings"] if "has no flash point" in w]
    assert len(fire) == 1
    low = np.nanmin(res.loc[res["role"] == "substitute", "lowest_flash_point_c"].to_numpy(float))
    assert f"lowest flash point {low:.0f} C" in fire[0]
    # with a 60 C flash-point floor the survivors are far away (Ra > 8 MPa^0.5): said too
    far = substitutes("tetrachloroethylene", top=5, min_flash_point_c=60).attrs["warnings"]
    ra = substitutes("tetrachloroethylene", top=5, min_flash_point_c=60)
    n_far = int((ra.loc[ra["role"] == "substitute", "ra"] > 8).sum())
    assert n_far > 0 and any(w.startswith(f"{n_far} of the 5 substitutes shown lie more than Ra 8") for w in far)
    # toluene burns: no fire warning when it is replaced
    assert not [w for w in substitutes("toluene", top=5).attrs["warnings"] if "has no flash point" in w]
    # with a flash-point floor already set the warning does not suggest one; with a solute the
    # distance is to the solute and the text says so
    assert not any("set a minimum flash point" in w for w in far)
    sol = substitutes("dichloromethane", top=3, solute=(24.0, 2.0, 30.0)).attrs["warnings"]
    assert any("from the solute: they are unlikely to dissolve the solute" in w for w in sol)


def test_fire_warning_counts_agree_in_number():
    # one burning and one unknown substitute: singular verbs (reviewer's "1 have no flash-point data")
    from selector.blends import substitute_warnings

    t = pd.DataFrame({"role": ["substitute"] * 3, "lowest_flash_point_c": [20.0, np.nan, np.inf],
                      "ra": [1.0, 2.0, 3.0], "red": [np.nan] * 3})
    w = substitute_warnings(t, "tetrachloroethylene", True, None)[0]
    assert "1 of the 3 substitutes shown does (lowest flash point 20 C) and 1 has no flash-point data " \
           "(treat it as flammable)" in w


def test_energetic_nitroalkanes_are_not_offered_as_safer_replacements():
    # Nitroethane and 1-nitropropane have a high energy of decomposition (hazards.csv, from memory)
    # and the CHEM21 default ranking still calls them recommended; inside the (demo-like) window bp 100-200 C, flash
    # point >= 23 C it would head the toluene replacements for a resin at (17.9, 6.1, 6.4) R0 8.6
    # (a made-up target used only to reach the case). Project rule: left out unless asked for, and named.
    sol = (17.9, 6.1, 6.4, 8.6)
    kw = dict(solute=sol, top=10, boiling_point_c=(100, 200), min_flash_point_c=23)
    res = substitutes("toluene", **kw)
    used = {c for cs in res["components"] for c in cs}
    assert not {"nitroethane", "1-nitropropane"} & used
    # 1-nitropropane (bp 131 C, flash point 35 C) now has a hazards.csv row (EU CLP, from
    # memory: H226 H302 H312 H332) and is named too; unclassified, it was never offered
    assert res.attrs["left_out"] == ["1-nitropropane", "nitroethane"]
    assert any(w.startswith("Left out as energetic (high energy of decomposition): 1-nitropropane, nitroethane.")
               for w in res.attrs["warnings"])
    every = substitutes("toluene", include_energetic=True, **kw)
    assert "nitroethane" in {c for cs in every["components"] for c in cs}
    assert every.attrs["left_out"] == []
    # asked for, they are shown with a standing warning that names them
    assert any(w.startswith("Energetic liquids in these candidates: ") and "nitroethane" in w
               for w in every.attrs["warnings"])
    # a window that nitroethane (bp 114 C) fails anyway does not name it (1-nitropropane, bp 131 C,
    # is inside it)
    hot = substitutes("toluene", top=5, boiling_point_c=(130, 200))
    assert hot.attrs["left_out"] == ["1-nitropropane"]


def test_replaced_liquid_is_at_ra_zero_from_itself_at_any_temperature():
    # Reviewer's case: at 15 C the replaced NMP sat at Ra 0.39 from itself (the target stayed at
    # 25 C while the candidates were corrected). Candidates and target now share the temperature.
    from selector.blends import substitutes
    from selector.ranking import corrected_hsp

    res = substitutes("NMP", temperature=15, top=3)
    assert res.loc[res["role"] == "replaced", "ra"].iloc[0] == pytest.approx(0.0, abs=1e-9)
    lib = selector.load_library()
    nmp = lib.loc[lib["cas"] == "872-50-4"]
    np.testing.assert_allclose(res.attrs["target"].hsp, corrected_hsp(nmp, 15.0)[0])


def test_blend_with_an_unclassified_component_still_shows_a_known_worst_class():
    # Reviewer's case: 1,2-dibromobenzene (no hazard data) + carbon disulfide read "unclassified"
    # with flash point "no data", although CS2 is highly hazardous in the CHEM21 guide (Prat et al.
    # 2016, from memory) and flashes at -30 C (chemicals). A blend is as bad as its worst part.
    lib = selector.load_library()
    rows = lib.loc[lib["name"].isin(["1,2-dibromobenzene", "carbon disulfide", "toluene"])]
    res = find_blends((21.3, 5.8, 4.3, 12.7), library=rows, max_components=2, top=10, min_gain=0.0)
    pair = res.loc[res["components"].map(set) == {"1,2-dibromobenzene", "carbon disulfide"}].iloc[0]
    assert pair["hazard_class"] == "highly hazardous (+ unclassified)"
    assert np.isnan(pair["lowest_flash_point_c"])       # unknown for the blend as a whole ...
    fp_cs2 = float(selector.find_liquid("carbon disulfide", lib).flash_point_c)
    # ... but the lowest known one is named
    assert pair["lowest_flash_component"] == f"carbon disulfide at {fp_cs2:.0f} C; no data for 1,2-dibromobenzene"
    from selector.cautions import with_flash_texts

    shown = with_flash_texts(res.loc[[pair.name]], fmt="{:.0f}")["lowest_flash_point_c"].iloc[0]
    assert shown == f"at most {fp_cs2:.0f} (part no data)"
    # an unclassified liquid with a recommended one stays unclassified (nothing shows it is safe)
    mild = find_blends((17.0, 2.0, 3.0, 8.0), library=lib.loc[lib["name"].isin(["1,2-dibromobenzene",
                                                                                "ethyl acetate"])],
                       max_components=2, top=5, min_gain=0.0)
    both = mild.loc[mild["n_components"] == 2]
    assert len(both) and (both["hazard_class"] == "unclassified").all()


def test_replacing_a_liquid_outside_the_boiling_window_says_so():
    # NMP boils at about 202-204 C (chemicals; common practice): a 100-200 C window cannot pass a
    # like-for-like candidate, and the warnings say so; without the window they do not
    w = substitutes("NMP", boiling_point_c=(100, 200), top=3).attrs["warnings"]
    bp = float(selector.find_liquid("NMP").boiling_point_c)
    assert f"1-methyl-2-pyrrolidinone itself boils at {bp:.0f} C, outside the boiling-point window in force " \
           "(100 to 200 C)" in " ".join(w)
    assert not any("outside the boiling-point window" in x for x in substitutes("NMP", top=3).attrs["warnings"])


def test_substitutes_warn_of_a_more_flammable_class_and_of_halogens_brought_in():
    # Flash points (chemicals, via the library): o-xylene 30 C; the GHS limits are 23 C and 60 C
    # (common practice). A numbers review found ethylbenzene (15 C) blends offered for xylene, and
    # 1-chlorobutane / dibromomethane blends for toluene, without a word.
    sub = substitutes("o-xylene", top=10)
    fire = [w for w in sub.attrs["warnings"] if "a more flammable class" in w]
    assert len(fire) == 1 and "below 23 C where o-xylene's is 30 C" in fire[0]
    fps = sub.loc[sub["role"] == "substitute", "lowest_flash_point_c"].to_numpy(float)
    assert f"{int((fps < 23).sum())} of the 10 substitutes" in fire[0]
    # a minimum flash point of 23 C removes the cause and the warning
    safe = substitutes("o-xylene", top=10, min_flash_point_c=23)
    assert not any("a more flammable class" in w for w in safe.attrs["warnings"])
    # NMP (flash point 86 C, chemicals): GHS category 3 ends at 60 C inclusive, so the advice is a
    # minimum of 61 C, which clears the warning
    nmp = [w for w in substitutes("NMP", top=10).attrs["warnings"] if "a more flammable class" in w]
    assert nmp and "at or below 60 C where 1-methyl-2-pyrrolidinone's is 86 C" in nmp[0]
    assert "set a minimum flash point of 61 C" in nmp[0]
    assert not any("a more flammable class" in w for w in
                   substitutes("NMP", top=10, min_flash_point_c=61).attrs["warnings"])
    tol = substitutes("toluene", top=10)
    hal = [w for w in tol.attrs["warnings"] if "bring in a halogenated liquid" in w]
    assert len(hal) == 1 and "which toluene is not" in hal[0] and "--halogen-free" in hal[0]
    assert not any("halogenated" in w for w in substitutes("toluene", top=10, halogen_free=True).attrs["warnings"])


def test_blends_say_when_unifac_doubts_a_pair_the_model_lets_through():
    # numbers review, round 4: water + triacetin and water + dimethyl adipate sat in blends under
    # "every pair miscible"; about 7 wt % triacetin and 3 wt % dimethyl adipate dissolve in water
    # (from memory), and UNIFAC as thermo carries it splits both pairs
    from selector import miscibility

    res = find_blends((15.5, 16.0, 30.0), top=10)
    noted = res.loc[res["mixing_note"] != ""]
    assert len(noted) >= 2
    for comps, note in zip(res["components"], res["mixing_note"]):
        doubted = []
        for i in range(len(comps)):
            for j in range(i + 1, len(comps)):
                r = miscibility(comps[i], comps[j])
                if not r.reference and r.second_opinion.get("state") not in ("", None, "miscible"):
                    doubted.append(f"{comps[i]} + {comps[j]} {r.second_opinion['state']}")
        # the note names exactly the pairs the pair answer calls "uncertain" through UNIFAC
        assert note == (f"UNIFAC, pair by pair: {'; '.join(doubted)} (the HSP model: miscible); test a small mix"
                        if doubted else ""), comps
    assert any("water + triacetin" in n for n in noted["mixing_note"])
    # water + 2-(2-ethoxyethoxy)ethanol mix in all proportions (common practice, producer data
    # sheets; now a check pair in parameters/miscibility_facts.csv), where Dortmund UNIFAC splits
    # them: the recorded state wins, so the blend holding them carries no doubt about that pair
    degee = [n for c, n in zip(res["components"], res["mixing_note"])
             if {"water", "2-(2-ethoxyethoxy)ethanol"} <= set(c)]
    assert degee and not any("2-(2-ethoxyethoxy)ethanol" in n for n in degee)
    assert miscibility("water", "2-(2-ethoxyethoxy)ethanol", reference=False).models_disagree


def test_blend_header_says_what_was_checked_for_miscibility(capsys):
    # a header that said "every pair miscible ... (not checked)" contradicted itself; single liquids
    # have no pair at all. Target: polystyrene (PS, Hansen's handbook, from memory)
    pt = ",".join(f"{v:g}" for v in PS)
    assert main(["blend", pt, "--parts", "1", "--top", "2"]) == 0
    first = capsys.readouterr().out.splitlines()[0]
    assert "single liquids only" in first and "every pair" not in first
    assert main(["blend", pt, "--parts", "2", "--top", "2", "--skip-mixing-check"]) == 0
    first = capsys.readouterr().out.splitlines()[0]
    assert "NOT checked for miscibility" in first and "every pair" not in first
    assert main(["blend", pt, "--parts", "2", "--top", "2"]) == 0
    assert "every pair miscible" in capsys.readouterr().out.splitlines()[0]
    assert find_blends(PS, max_components=2, top=2, require_miscible=False).attrs["miscibility"] == "not checked"


def test_rounded_shares_sum_to_one_hundred_per_cent():
    from selector.blends import blend_labels, rounded_shares

    # arithmetic: thirds shown to whole per cents cannot all read 33 %
    assert rounded_shares([1 / 3, 1 / 3, 1 / 3], 0) == [0.33, 0.33, 0.34]
    assert rounded_shares([0.125, 0.875], 0) == [0.12, 0.88]   # a tie goes to the later share
    rng = np.random.default_rng(3)
    for _ in range(200):
        f = rng.dirichlet(np.ones(rng.integers(2, 5)))
        for d in (0, 1):
            r = rounded_shares(f, d)
            assert round(sum(r) * 10 ** (d + 2)) == 10 ** (d + 2)
            assert max(abs(a - b) for a, b in zip(r, f)) < 10.0 ** -(d + 2)
    tab = pd.DataFrame({"components": [("a", "b", "c")], "fractions": [(1 / 3, 1 / 3, 1 / 3)]})
    assert blend_labels(tab, "volume", digits=0) == ["33% a + 33% b + 34% c"]


def test_estimated_densities_are_named_beside_by_mass_shares():
    lib = selector.load_library()
    est = lib.loc[lib["molar_volume_estimated"] & lib["density"].notna(), "name"].iloc[0]
    measured = "toluene"   # density from a data-based correlation (thermo)
    assert not lib.loc[lib["name"] == measured, "molar_volume_estimated"].iloc[0]
    from selector.blends import estimated_density_note

    tab = pd.DataFrame({"components": [(measured, est)]})
    note = estimated_density_note(tab, lib)
    assert est in note and measured not in note and "estimated" in note
    assert estimated_density_note(pd.DataFrame({"components": [(measured,)]}), lib) == ""


def test_a_priced_liquid_that_cannot_be_a_candidate_is_named():
    # arbitrary prices (not check values). Benzyl chloride is an alkylating agent and lachrymator
    # (common practice), held back as a reagent; glycerol boils at 290 C (chemicals), outside a
    # 50-200 C window. Neither may vanish from a price list without a word.
    res = selector.find_blends((18.0, 6.0, 6.0, 7.0), max_components=2, boiling_point_c=(50, 200),
                               cost_per_litre={"toluene": 2.0, "acetone": 1.5, "benzyl chloride": 3.0,
                                               "anisole": 4.0, "glycerol": 2.0})
    notes = res.attrs["price_notes"]
    assert any(n.startswith("benzyl chloride left out as a reagent") for n in notes)
    assert any("left out by the conditions" in n and "glycerol" in n for n in notes)
    assert not any("toluene" in n or "anisole" in n for n in notes)
    used = {c for cs in res["components"] for c in cs}
    assert used <= {"toluene", "acetone", "anisole"}


def test_substitutes_always_show_the_best_single_liquids():
    # practitioner review: `replace NMP` showed 20 blends and no single liquid, though
    # gamma-butyrolactone alone scored better than the last blend shown; a drop-in replacement
    # is what a formulator tries first (common practice)
    from selector.blends import MIN_SINGLES, substitutes

    mixed = substitutes("NMP", top=20)
    alone = substitutes("NMP", max_components=1, top=MIN_SINGLES)
    best = [c[0] for c in alone.loc[alone["role"] == "substitute", "components"]]
    shown = [c[0] for c in mixed.loc[mixed["role"] == "substitute", "components"] if len(c) == 1]
    assert len(best) == MIN_SINGLES and set(best) <= set(shown)
    sub = mixed.loc[mixed["role"] == "substitute"]
    assert len(sub) == 20 and sub["score"].is_monotonic_increasing


def test_the_blend_header_names_the_reacting_pairs_left_out(capsys):
    # practitioner review: morpholine + cyclohexanone (a secondary amine and a ketone condense,
    # enamine chemistry: common practice) was left out without a word
    assert main(["blend", "18.5,8,8,5", "--only", "morpholine,cyclohexanone,ethanol", "--parts", "2"]) == 0
    out = capsys.readouterr().out
    assert "Never blended, as they react (pair screen; likewise mix A B says why): cyclohexanone + morpholine" in out
    res = selector.find_blends((18.5, 8, 8, 5), include=["morpholine", "cyclohexanone", "ethanol"], max_components=2)
    assert res.attrs["reacting_pairs"] == [("cyclohexanone", "morpholine")]
    assert not any(set(c) == {"morpholine", "cyclohexanone"} for c in res["components"])


def test_a_blend_pair_the_model_is_unsure_of_says_so():
    # practitioner review: 82 % benzonitrile + 18 % ethylene glycol, the one "recommended" NMP blend,
    # rested on a pair the model gives about even odds (mix: MISCIBLE, confidence low) with no
    # UNIFAC parameters, and its mixing_note was blank
    from selector.blends import UNSURE_P_MISCIBLE, second_opinion_notes

    lib = selector.load_library()
    m = selector.miscibility("benzonitrile", "ethylene glycol", unifac=False, reference=False)
    assert m.state == "miscible" and m.p_miscible < UNSURE_P_MISCIBLE
    note = second_opinion_notes([("benzonitrile", "ethylene glycol")], lib)[0]
    assert "the HSP model is unsure of benzonitrile + ethylene glycol" in note
    assert f"{m.p_miscible:.0%} chance of one phase" in note
    # a pair the model is sure of, and UNIFAC agrees: no note (toluene + ethyl acetate mix,
    # common practice)
    assert second_opinion_notes([("toluene", "ethyl acetate")], lib) == [""]


def test_priced_liquids_left_out_by_the_use_temperature_say_why(tmp_path, capsys):
    # acetone boils at 56 C (chemicals, via the library): at 60 C it is no candidate, and the
    # price notes say why; a list with both price columns is refused with the reason
    res = selector.find_blends((18.0, 6.0, 6.0, 7.0), temperature=60, max_components=2,
                               cost_per_litre={"toluene": 2.0, "acetone": 1.5, "anisole": 3.0})
    assert "acetone left out: it boils at 56 C, below the use temperature 60 C" in res.attrs["price_notes"]
    both = tmp_path / "both.csv"
    both.write_text("name,cost_per_litre,cost_per_kg\ntoluene,2,3\n")
    assert main(["blend", "18,6,6,7", "--prices", str(both)]) == 2
    assert "gives both cost_per_litre and cost_per_kg: keep one column" in capsys.readouterr().err
