"""Drying check: the evaporation path against analytic solutions and physical facts."""
from __future__ import annotations

import numpy as np
import pytest

import selector
from selector.cli import main
from selector.drying import _gamma_hsp, drying_path
from selector.errors import SelectorError
from selector.hansen import R_GAS, ra
from selector.library import vapour_pressure_kpa

LIB = selector.load_library()


def _row(name):
    return LIB.loc[LIB["name"] == name]


def _moles(path, names):
    """Moles per cm3 of initial liquid from the table (volume fractions x remaining volume / V)."""
    v = np.array([float(_row(n)["molar_volume"].iloc[0]) for n in names])
    phi = path[[f"phi_{n}" for n in names]].to_numpy()
    return phi * path["remaining_fraction"].to_numpy()[:, None] / v


@pytest.mark.parametrize("pair,fr,t", [
    (("acetone", "butyl acetate"), (0.5, 0.5), 25.0),
    (("ethanol", "water"), (0.3, 0.7), 25.0),
    (("toluene", "o-xylene"), (0.7, 0.3), 40.0),
])
def test_ideal_binary_matches_rayleigh(pair, fr, t):
    # Rayleigh (Phil. Mag. 4 (1902) 521): for dn_i ~ x_i P_i, n1/n1_0 = (n2/n2_0)^(P1/P2)
    p = drying_path(list(pair), list(fr), temperature=t, points=50, max_evaporated=0.95)
    n = _moles(p, pair)
    P = vapour_pressure_kpa(LIB[LIB["name"].isin(pair)].set_index("name").loc[list(pair)].reset_index(), t)
    alpha = P[0] / P[1]
    pred = n[0, 0] * (n[:, 1] / n[0, 1]) ** alpha
    mask = pred > 1e-8 * n[0, 0]
    assert np.allclose(n[mask, 0], pred[mask], rtol=1e-4, atol=1e-10)
    # the evaporated volume is what the table says it is
    v = np.array([float(_row(x)["molar_volume"].iloc[0]) for x in pair])
    assert np.allclose((n * v).sum(1), 1 - p["evaporated_fraction"].to_numpy(), atol=1e-9)


def test_tail_solvent_is_the_least_volatile():
    # physical fact: in an ideal blend the liquid with the lowest vapour pressure is left last
    names = ["acetone", "toluene", "butyl acetate"]
    p = drying_path(names, [0.4, 0.3, 0.3])
    assert p.attrs["tail_solvent"] == "butyl acetate"
    phi = p[[f"phi_{n}" for n in names]].to_numpy()
    assert np.all(np.diff(phi[:, 0]) <= 1e-12)   # acetone only leaves
    assert phi[-1, 2] > 0.95


def test_single_liquid_keeps_its_composition():
    p = drying_path(["toluene"], [1.0], target=(18.0, 1.4, 2.0, 5.0))
    assert np.allclose(p["phi_toluene"], 1.0)
    assert np.allclose(p["red"], 0.0)


def test_hsp_follow_remaining_liquid_and_flag():
    # acetone inside a small sphere centred on it; the tail (dimethyl sulfoxide) is far outside
    tgt = tuple(_row("acetone")[["delta_d", "delta_p", "delta_h"]].iloc[0]) + (4.0,)
    p = drying_path(["acetone", "dimethyl sulfoxide"], [0.8, 0.2], target=tgt, must_stay_until=0.9)
    hsp = np.vstack([_row(n)[["delta_d", "delta_p", "delta_h"]].to_numpy(float) for n in
                     ["acetone", "dimethyl sulfoxide"]])
    phi = p[["phi_acetone", "phi_dimethyl sulfoxide"]].to_numpy()
    mix = phi @ hsp
    assert np.allclose(p[["delta_d", "delta_p", "delta_h"]].to_numpy(), mix, atol=1e-9)
    assert np.allclose(p["red"], ra(mix, np.asarray(tgt[:3])) / 4.0, atol=1e-9)
    assert p["red"].iloc[0] < 1 < p["red"].iloc[-1]
    first_out = float(p.loc[p["red"] >= 1, "evaporated_fraction"].iloc[0])
    assert p.attrs["leaves_sphere_at"] == pytest.approx(first_out)
    assert p.attrs["flag"] is True and first_out < 0.9
    assert any("leaves the sphere" in w for w in p.attrs["warnings"])
    # a looser deadline clears the flag
    q = drying_path(["acetone", "dimethyl sulfoxide"], [0.8, 0.2], target=tgt, must_stay_until=first_out / 2)
    assert q.attrs["flag"] is False


def test_flory_huggins_activity_matches_binary_formula():
    # binary Flory-Huggins (Flory 1953): ln g1 = ln(phi1/x1) + 1 - phi1/x1 + chi phi2^2 with
    # chi = V1 A12 / RT and A12 = dD^2 + dP^2/4 + dH^2/4 (Hansen interaction)
    h = np.vstack([_row(n)[["delta_d", "delta_p", "delta_h"]].to_numpy(float) for n in ["toluene", "ethanol"]])
    v = np.array([float(_row(n)["molar_volume"].iloc[0]) for n in ["toluene", "ethanol"]])
    T = 298.15
    d = h[0] - h[1]
    A = d[0] ** 2 + 0.25 * d[1] ** 2 + 0.25 * d[2] ** 2
    for x1 in [0.1, 0.5, 0.9]:
        x = np.array([x1, 1 - x1])
        phi = x * v / (x @ v)
        exp = [np.log(phi[i] / x[i]) + 1 - phi[i] / x[i] + v[i] * A / (R_GAS * T) * phi[1 - i] ** 2
               for i in range(2)]
        assert np.allclose(_gamma_hsp(x, v, h, T), exp, rtol=1e-12)


def test_activity_model_changes_the_path():
    a = drying_path(["ethanol", "toluene"], [0.5, 0.5], activity="raoult")
    b = drying_path(["ethanol", "toluene"], [0.5, 0.5], activity="hsp")
    # positive deviations (gamma > 1) speed up the minority component; the paths must differ
    assert np.abs(a["phi_ethanol"].to_numpy() - b["phi_ethanol"].to_numpy()).max() > 0.01


def test_humid_air_keeps_water_in_the_film():
    # physical fact: at 100 % relative humidity water does not evaporate
    p = drying_path(["ethanol", "water"], [0.5, 0.5], relative_humidity=100.0, max_evaporated=0.45)
    n = _moles(p, ["ethanol", "water"])
    assert np.allclose(n[:, 1], n[0, 1], rtol=1e-9)
    assert p["phi_water"].iloc[-1] > 0.85
    dry = drying_path(["ethanol", "water"], [0.5, 0.5], relative_humidity=0.0, max_evaporated=0.45)
    assert dry["phi_water"].iloc[-1] < p["phi_water"].iloc[-1]


def test_bad_input():
    with pytest.raises(SelectorError, match="sum to 1"):
        drying_path(["toluene", "ethanol"], [0.5, 0.7])
    with pytest.raises(SelectorError, match="fractions"):
        drying_path(["toluene", "ethanol"], [1.0])
    with pytest.raises(SelectorError, match="positive"):
        drying_path(["toluene", "ethanol"], [1.2, -0.2])
    with pytest.raises(SelectorError, match="unknown liquid"):
        drying_path(["toluene", "unobtainium"], [0.5, 0.5])
    with pytest.raises(SelectorError, match="twice"):
        drying_path(["toluene", "toluene"], [0.5, 0.5])
    with pytest.raises(SelectorError, match="activity"):
        drying_path(["toluene"], [1.0], activity="magic")
    with pytest.raises(SelectorError, match="humidity"):
        drying_path(["water"], [1.0], relative_humidity=120)


def test_cli_dry(capsys):
    assert main(["dry", "acetone,dimethyl sulfoxide", "--shares", "0.8,0.2", "--target", "acetone",
                 "--radius", "4", "--strict", "--format", "csv"]) == 1
    out = capsys.readouterr().out
    assert "evaporated_fraction" in out and "phi_acetone" in out
    assert main(["dry", "toluene,butyl acetate", "--shares", "0.5,0.5"]) == 0
    assert "tail solvent" in capsys.readouterr().out


def test_unifac_option():
    from selector.drying import unifac_gammas

    # ethanol-water deviates positively from Raoult's law (minimum-boiling azeotrope, a fact of
    # the trade); gamma of water infinitely dilute in ethanol at 25 C is about 2.5 (measured,
    # from memory)
    rows = LIB[LIB["name"].isin(["ethanol", "water"])].set_index("name").loc[["ethanol", "water"]].reset_index()
    g = unifac_gammas(rows, 25.0)
    g_e_inf = g([1e-9, 1 - 1e-9])[0]
    g_w_inf = g([1 - 1e-9, 1e-9])[1]
    assert g_e_inf > 1.5 and 2.0 < g_w_inf < 3.2
    # toluene + ethylbenzene is close to ideal: the UNIFAC path follows Raoult's law
    a = drying_path(["toluene", "ethylbenzene"], [0.5, 0.5], activity="unifac")
    b = drying_path(["toluene", "ethylbenzene"], [0.5, 0.5], activity="raoult")
    assert np.abs(a["phi_toluene"].to_numpy() - b["phi_toluene"].to_numpy()).max() < 0.03
    # water leaves faster than Raoult predicts when it is the minority in ethanol
    u = drying_path(["ethanol", "water"], [0.9, 0.1], activity="unifac", max_evaporated=0.3)
    r = drying_path(["ethanol", "water"], [0.9, 0.1], activity="raoult", max_evaporated=0.3)
    assert u["phi_water"].iloc[-1] < r["phi_water"].iloc[-1]


def test_missing_vapour_pressure_is_named_per_liquid():
    # a liquid of one's own without a vapour pressure cannot evaporate in the model: the message
    # names that liquid and what it lacks (its molar volume is known, so only the vapour pressure)
    import pandas as pd

    lib = selector.load_library(pd.DataFrame({"name": ["house solvent W"], "delta_d": [17.0], "delta_p": [4.0],
                                              "delta_h": [5.0], "molar_volume": [100.0]}))
    with pytest.raises(selector.SelectorError) as e:
        selector.drying_path(["house solvent W", "toluene"], [0.5, 0.5], library=lib)
    msg = str(e.value)
    assert "house solvent W has no vapour pressure" in msg and "molar volume" not in msg.split("(")[0]
    assert "toluene" not in msg


def test_no_drying_path_above_a_boiling_point():
    # README walk-through: `dry toluene,butyl acetate --at 150` ran; both boil below 150 C
    # (toluene 110.6 C, butyl acetate 126 C: chemicals, via the library)
    with pytest.raises(SelectorError, match=r"toluene boils at 111 C; butyl acetate boils at 126 C"):
        drying_path(["toluene", "butyl acetate"], [0.4, 0.6], temperature=150)
    assert len(drying_path(["toluene", "butyl acetate"], [0.4, 0.6], temperature=60)) > 10


def test_drying_warns_on_two_phases_and_on_raoult_with_water():
    # numbers review, round 4: toluene + water (immiscible, common practice) was dried as one
    # phase without a word, and the ideal model made 1-butanol the last to leave a 10/90 blend
    # with water (5/95 here: one phase, about 4 wt % butanol against its solubility of about 7.5 wt %,
    # from memory), where the water-butanol azeotrope takes the butanol out first (from memory)
    from selector.drying import drying_path

    tw = drying_path(["toluene", "water"], [0.5, 0.5])
    assert any(w.startswith("not miscible in all proportions at 25 C: toluene + water (immiscible)")
               for w in tw.attrs["warnings"])
    bw = drying_path(["1-butanol", "water"], [0.05, 0.95])
    assert any("compare activity='unifac'" in w for w in bw.attrs["warnings"])
    assert bw.attrs["tail_solvent"] == "1-butanol"             # what Raoult's law says ...
    uw = drying_path(["1-butanol", "water"], [0.05, 0.95], activity="unifac")
    assert uw.attrs["tail_solvent"] == "water"                 # ... and UNIFAC (thermo) corrects
    assert not any("compare activity" in w for w in uw.attrs["warnings"])
    # a miscible, water-free blend gets neither note (toluene + butyl acetate, common practice)
    ok = drying_path(["toluene", "butyl acetate"], [0.4, 0.6])
    assert not any(w.startswith("not miscible") or "compare activity" in w for w in ok.attrs["warnings"])


def test_drying_hot_names_the_liquids_past_their_flash_point():
    # numbers review, round 5: `dry --at 60` gave no word on flammability. Butyl acetate flashes
    # at 22 C and toluene at 4 C (library values, from chemicals); at 60 C both are past it
    # (common practice: vapour over the liquid can burn); at 25 C toluene alone.
    import selector

    hot = selector.drying_path(["butyl acetate", "toluene"], [0.5, 0.5], temperature=60).attrs["warnings"]
    assert ("butyl acetate: ABOVE ITS FLASH POINT (22 C) at 60 C, as at room temperature: flammable vapour "
            "over the liquid") in hot
    assert any(w.startswith("toluene: ABOVE ITS FLASH POINT (4 C)") for w in hot)
    cool = selector.drying_path(["butyl acetate", "toluene"], [0.5, 0.5]).attrs["warnings"]
    assert not any("FLASH POINT" in w for w in cool)
