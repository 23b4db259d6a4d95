"""Accuracy of the miscibility models on the reference pairs; writes parameters/miscibility_accuracy.md.

Run ``python -m selector.mixing_report`` (about a minute; needs ``thermo`` for UNIFAC).

What it measures, on ``parameters/miscibility_pairs.csv`` (miscible in all proportions at 25 C
or not; and, where the source gives it, the three-way state by the 1 wt % rule of
:mod:`selector.mixing`):

* the donor/acceptor model with the bundled numbers (:data:`selector.mixing.HBOND`, fitted on
  all pairs: an in-sample figure);
* leave-one-liquid-out: for every liquid, all pairs that contain it are held out, the four
  fitted numbers (w_p, w_h, polyol_c, tau) are refitted on the remaining pairs
  (:mod:`selector.mixing_fit`) and the held-out pairs are predicted. Each pair is held out
  twice (once per liquid); both predictions count (tau, the scale of the fitted probability,
  is refitted with them). The set numbers (Kamlet-Taft floor, entropy
  volume floor, aromatic induction factor, the three numbers of the cross hydrogen-bond term)
  come from published values and are not refitted (the Keesom factor too); sensitivity tables show how much they
  matter;
* the plain Hansen Flory-Huggins form (nothing fitted);
* UNIFAC, original (Fredenslund, Jones & Prausnitz, AIChE J. 21 (1975) 1086; parameters as
  carried by ``thermo.unifac``, UFSG/UFIP) and Dortmund (Weidlich & Gmehling, Ind. Eng. Chem.
  Res. 26 (1987) 1372; ``thermo.unifac`` DOUFSG/DOUFIP2016), with groups from
  ``thermo.Chemical(cas).UNIFAC_groups`` / ``UNIFAC_Dortmund_groups``. A pair splits when the
  Gibbs energy of mixing g(x) = GE/RT + x ln x + (1 - x) ln(1 - x) on a fine grid lies above its
  lower convex hull (the common-tangent construction); the hull segment spanning the gap gives
  the two phase compositions. Pairs with a missing group or group-interaction parameter are
  not covered and are reported as such.
"""
from __future__ import annotations

import dataclasses
import math
import sys
import time

import numpy as np
import pandas as pd

from .library import PARAMETERS_DIR, load_library
from .mixing import (ASSOC_ENERGY, ASSOC_K0, HBOND, PLAIN, MixingModel, _arrays, _classify,
                     _compute, mole_to_mass, ucst)
from .mixing_fit import GridScores, features

REPORT_MD = PARAMETERS_DIR / "miscibility_accuracy.md"


# ---------------------------------------------------------------- the HSP models

def predict_states(model: MixingModel, f, rows=None) -> np.ndarray:
    """Three-way states at 25 C for the reference pairs ``rows`` (default all) under ``model``."""
    lib = load_library()
    h, v, s, m, al = _arrays(lib)
    idx = np.arange(len(f.ia)) if rows is None else np.asarray(rows)
    ia, ib = f.ia[idx], f.ib[idx]
    _, _, _, _, _, _, pa, pb = _compute(h[ia], h[ib], s[ia], s[ib], v[ia], v[ib], 25.0, model)
    return _classify(pa, pb, v[ia], v[ib], m[ia], m[ib])


def lolo_binary(f, gs: GridScores, allowed=None, objective: str = "likelihood") -> float:
    """Leave-one-liquid-out miscible-or-not accuracy, refitting on the ``allowed`` grid points."""
    pairs = f.pairs
    right = []
    for c in sorted(set(pairs["cas_a"]) | set(pairs["cas_b"])):
        test = ((pairs["cas_a"] == c) | (pairs["cas_b"] == c)).to_numpy()
        k, _ = gs.best_index(~test, allowed, objective)
        right += list(gs.right[k, test])
    return float(np.mean(right))


def leave_one_liquid_out(f, gs: GridScores):
    """(per-prediction table, parameters per fold) for the leave-one-liquid-out protocol."""
    pairs = f.pairs
    liquids = sorted(set(pairs["cas_a"]) | set(pairs["cas_b"]))
    names = dict(zip(pairs["cas_a"], pairs["liquid_a"])) | dict(zip(pairs["cas_b"], pairs["liquid_b"]))
    rows, folds = [], []
    for c in liquids:
        test = ((pairs["cas_a"] == c) | (pairs["cas_b"] == c)).to_numpy()
        kbest, tau = gs.best_index(~test)
        wp, wh, pc = gs.G[kbest]
        mdl = MixingModel("fold", 1.0, wp, wh, gs.acid_floor, gs.v_min, aromatic_q=gs.aromatic_q,
                          polyol_c=pc, assoc_z=gs.assoc_z, tau=tau, keesom=HBOND.keesom)
        idx = np.flatnonzero(test)
        st = predict_states(mdl, f, idx)
        folds.append({"held_out": names[c], "pairs": int(test.sum()), "w_p": wp, "w_h": wh,
                      "polyol_c": pc, "tau": tau})
        for i, s_ in zip(idx, st):
            rows.append({"pair": i, "held_out": names[c], "state": s_,
                         "right": (s_ == "miscible") == bool(f.miscible[i])})
    return pd.DataFrame(rows), pd.DataFrame(folds)


# ---------------------------------------------------------------- UNIFAC

from .unifac import covered as _covered, unifac_split  # noqa: E402  (one implementation, shared)


def unifac_states(f, version) -> pd.DataFrame:
    from thermo import Chemical

    lib = load_library()
    mm = lib["molar_mass"].to_numpy(float)
    cache: dict[str, dict | None] = {}

    def groups(cas):
        if cas not in cache:
            try:
                c = Chemical(cas)
                cache[cas] = c.UNIFAC_groups if version == 0 else c.UNIFAC_Dortmund_groups
            except Exception:  # thermo could not build the chemical: not covered
                cache[cas] = None
        return cache[cas]

    out = []
    for k, (a, b) in enumerate(zip(f.pairs["cas_a"], f.pairs["cas_b"])):
        gr = [groups(a), groups(b)]
        why = _covered(gr, version)
        if why is not None:
            out.append({"pair": k, "covered": False, "why": why, "state": ""})
            continue
        split = unifac_split(gr, version=version)
        if split is None:
            out.append({"pair": k, "covered": True, "why": "", "state": "miscible"})
            continue
        m1, m2 = mm[f.ia[k]], mm[f.ib[k]]
        w_a = float(mole_to_mass(split[0], m1, m2))
        w_b = float(mole_to_mass(split[1], m1, m2))
        smaller = min(100 * w_a, 100 * (1 - w_b))
        from .mixing import IMMISCIBLE_BELOW_WT_PCT

        state = "immiscible" if smaller < IMMISCIBLE_BELOW_WT_PCT else "partially miscible"
        out.append({"pair": k, "covered": True, "why": "", "state": state})
    return pd.DataFrame(out)


# ---------------------------------------------------------------- report

def _pct(x):
    return f"{100 * x:.1f} %"


def _acc(states, truth):
    return float(np.mean((np.asarray(states) == "miscible") == np.asarray(truth)))


def _acc3(states, truth3):
    t = np.asarray(truth3)
    k = t != ""
    return float(np.mean(np.asarray(states)[k] == t[k])), int(k.sum())


def second_states(pairs: pd.DataFrame) -> np.ndarray:
    """UNIFAC's state at 25 C for each reference pair, "" where it covers none: the very
    :func:`selector.unifac.second_opinion` that :func:`selector.miscibility` uses."""
    from .unifac import second_opinion

    lib = load_library().drop_duplicates("cas").set_index("cas")
    return np.array([second_opinion(lib.at[a, "inchikey"], lib.at[b, "inchikey"], lib.at[a, "molar_mass"],
                                    lib.at[b, "molar_mass"], 25.0)["state"]
                     for a, b in zip(pairs["cas_a"], pairs["cas_b"])], dtype=object)


def _check_pairs_section(with_unifac: bool) -> list[str]:
    """The models on ``parameters/miscibility_facts.csv``: pairs known from the trade that no fit
    has seen (a held-out set; :func:`selector.miscibility` answers them from the table)."""
    from .mixing_fit import FACTS_CSV, load_pairs

    if not FACTS_CSV.exists():
        return []
    fc = features(load_pairs(FACTS_CSV))
    n = len(fc.pairs)
    st = predict_states(HBOND, fc)
    right = (st == "miscible") == fc.miscible
    truth3 = fc.pairs["state_25c"].to_numpy()
    a3, n3 = _acc3(st, truth3)
    wrong = [f"{a} - {b}" for a, b, ok in zip(fc.pairs.liquid_a, fc.pairs.liquid_b, right) if not ok]
    out = ["", f"Check pairs outside the fit (`parameters/miscibility_facts.csv`, {n} pairs known from the trade, "
               "never used in a fit; gathered after reviews of the model's answers, so they lean towards its "
               "misses and are no random sample): the bundled model is right on "
               f"{int(right.sum())} of {n} (miscible or not; three-way state {_pct(a3)} of {n3}); wrong on "
               + (", ".join(wrong) if wrong else "none") + "."]
    if with_unifac:
        second = second_states(fc.pairs)
        has = second != ""
        u_right = has & ((second == "miscible") == fc.miscible)
        dis = has & ((second == "miscible") != (st == "miscible"))
        out[-1] += (f" The UNIFAC second opinion covers {int(has.sum())} of them and is right on {int(u_right.sum())}; "
                    f"it disagrees with the model on {int(dis.sum())}, {int((dis & ~right).sum())} of them model misses "
                    "(those answer \"uncertain\" when the table is not consulted).")
    return out


def build_report(with_unifac: bool = True) -> str:
    t0 = time.time()
    f = features()
    gs = GridScores(f)
    pairs = f.pairs
    truth3 = pairs["state_25c"].to_numpy()
    n = len(pairs)
    k_all, tau_all = gs.best_index(np.ones(n, bool))
    fitted_all = gs.G[k_all]

    st_h = predict_states(HBOND, f)
    st_p = predict_states(PLAIN, f)
    lolo, folds = leave_one_liquid_out(f, gs)
    lolo_acc = float(lolo["right"].mean())
    both = lolo.groupby("pair")["right"].all()
    lolo3 = lolo.assign(truth=truth3[lolo["pair"]])
    k3 = lolo3["truth"] != ""
    lolo3_acc = float((lolo3.loc[k3, "state"] == lolo3.loc[k3, "truth"]).mean())

    lines = ["# Miscibility: accuracy on the reference pairs", "",
             "Generated by `python -m selector.mixing_report`; do not edit by hand.", "",
             f"Reference set: `parameters/miscibility_pairs.csv`, {n} pairs of {len(set(pairs.cas_a) | set(pairs.cas_b))} "
             f"liquids ({int(f.miscible.sum())} miscible in all proportions at 25 C, {int((~f.miscible).sum())} not; "
             f"{int((truth3 != '').sum())} with a three-way state). Sources: see `parameters/miscibility_pairs.md`.", "",
             "Miscible-or-not accuracy at 25 C (three-way state accuracy where the source gives it):", "",
             "| model | pairs covered | miscible or not | three-way state |",
             "|---|---|---|---|"]
    a3h, n3 = _acc3(st_h, truth3)
    a3p, _ = _acc3(st_p, truth3)
    lines.append(f"| donor/acceptor Flory-Huggins, leave-one-liquid-out ({len(lolo)} held-out predictions) | {n} | "
                 f"**{_pct(lolo_acc)}** (pairs right in both folds: {_pct(float(both.mean()))}) | {_pct(lolo3_acc)} |")
    lines.append(f"| donor/acceptor Flory-Huggins, bundled numbers (in-sample) | {n} | {_pct(_acc(st_h, f.miscible))} | "
                 f"{_pct(a3h)} ({n3} pairs) |")
    lines.append(f"| plain Hansen Flory-Huggins (nothing fitted) | {n} | {_pct(_acc(st_p, f.miscible))} | {_pct(a3p)} |")
    unifac_rows = {}
    if with_unifac:
        for version, label in ((0, "UNIFAC original (thermo UFSG/UFIP)"),
                               (1, "UNIFAC Dortmund (thermo DOUFSG/DOUFIP2016)")):
            u = unifac_states(f, version)
            unifac_rows[version] = u
            cov = u["covered"].to_numpy()
            sub = u[cov]
            acc = _acc(sub["state"], f.miscible[sub["pair"]]) if len(sub) else math.nan
            a3, n3u = _acc3(sub["state"], truth3[sub["pair"]])
            hb_same = _acc(st_h[sub["pair"]], f.miscible[sub["pair"]])
            lines.append(f"| {label} | {int(cov.sum())} of {n} | {_pct(acc)} (bundled donor/acceptor model on the same "
                         f"pairs: {_pct(hb_same)}) | {_pct(a3)} ({n3u} pairs) |")
    if with_unifac and len(unifac_rows) == 2:
        second = second_states(pairs)
        has = second != ""
        model_one = st_h == "miscible"
        dis = has & ((second == "miscible") != model_one)
        model_right = model_one == f.miscible
        agree = has & ~dis
        lines += ["", "Second opinion (`selector.unifac.second_opinion`, as `selector.miscibility` uses it: Dortmund "
                  f"UNIFAC where it covers the pair, else the original): covers {int(has.sum())} of {n} pairs and "
                  f"disagrees with the bundled model on {int(dis.sum())} "
                  f"({', '.join(f'{a} - {b}' for a, b in zip(pairs.liquid_a[dis], pairs.liquid_b[dis]))}); "
                  f"{int((dis & ~model_right).sum())} of these are among the model's {int((~model_right).sum())} misses. "
                  f"Where the two agree ({int(agree.sum())} pairs) the model is right on "
                  f"{_pct(float(model_right[agree].mean()))}."]
    lines += _check_pairs_section(with_unifac)
    lines += ["", f"Bundled numbers (`selector.mixing.HBOND`): fitted w_p = {HBOND.w_p:g}, w_h = {HBOND.w_h:g}, "
              f"polyol_c = {HBOND.polyol_c:g}, probability scale tau = {HBOND.tau:g} (a fit on all pairs now gives "
              f"w_p = {fitted_all[0]:g}, w_h = {fitted_all[1]:g}, polyol_c = {fitted_all[2]:g}, tau = {tau_all:.4f}; "
              "fitted by maximum likelihood of P(miscible) = 1 / (1 + exp(ln(chi/chi_c) / tau)), "
              "see `selector/mixing_fit.py`); set, not fitted: "
              f"Kamlet-Taft floor f = {HBOND.acid_floor:g}, entropy volume floor V_min = {HBOND.v_min:g} cm3/mol, "
              f"aromatic induction factor q = {HBOND.aromatic_q:g}, cross hydrogen bonds from Abraham's "
              f"relation (E = {ASSOC_ENERGY / 1000:.1f} kJ/mol per unit strength gain, K0 = {ASSOC_K0:.4f} dm3/mol) "
              f"on a lattice of z = {HBOND.assoc_z:g}, Keesom factor (298.15 K / T)^{HBOND.keesom:g} on the polar "
              "term away from 25 C (sources in `selector/mixing.py`).", ""]
    byfold = lolo.groupby("held_out")["right"].agg(["mean", "count", "sum"])
    byfold["wrong"] = byfold["count"] - byfold["sum"]
    worst = byfold.sort_values("wrong", ascending=False).head(5)
    water = lolo["held_out"] == "water"
    lines += ["Leave-one-liquid-out by fold: the water fold holds out "
              f"{int(water.sum())} pairs and gets {_pct(float(lolo.loc[water, 'right'].mean()))} right; "
              f"all other folds together {_pct(float(lolo.loc[~water, 'right'].mean()))}. "
              "Folds with most misses: " + ", ".join(f"{k} {int(r.wrong)} of {int(r['count'])}"
                                                     for k, r in worst.iterrows()) + ".", ""]
    lines += ["Ablation, leave-one-liquid-out miscible-or-not accuracy with parts of the model switched off "
              "(the fitted numbers refitted per fold):", "", "| variant | in-sample (refitted on all pairs) | leave-one-liquid-out |",
              "|---|---|---|"]
    for label, fl, vm, aq in (("the model (donor/acceptor split, entropy floor, aromatic induction, polyol entropy, "
                               "cross hydrogen bonds)", None, None, None),
                              ("without the donor/acceptor split (plain (dH1 - dH2)^2)", 0.0, None, None),
                              ("without the entropy floor (V_min = 0)", None, 0.0, None),
                              ("without the aromatic induction factor (q = 1)", None, None, 1.0),
                              ("without the polyol entropy (polyol_c = 0)", None, None, None),
                              ("without the cross hydrogen-bond term (z = 0)", None, None, None),
                              ("none of these (w_p, w_h fitted on the plain form)", 0.0, 0.0, 1.0)):
        no_assoc = label.startswith("without the cross") or label.startswith("none")
        if fl is None and vm is None and aq is None and not no_assoc:
            g2 = gs
        else:
            g2 = GridScores(f, acid_floor=fl, v_min=vm, aromatic_q=aq, assoc_z=0.0 if no_assoc else None)
        no_polyol = label.startswith("without the polyol") or label.startswith("none")
        mask = (g2.G[:, 2] == 0) if no_polyol else None
        ins = float(g2.right[g2.best_index(np.ones(n, bool), mask)[0]].mean())
        lines.append(f"| {label} | {_pct(ins)} | {_pct(lolo_binary(f, g2, mask))} |")
    k_acc, _ = gs.best_index(np.ones(n, bool), objective="accuracy")
    lines.append(f"| the model, fitted by the fraction right (the fit used until 2026-12) in place of the likelihood | "
                 f"{_pct(float(gs.right[k_acc].mean()))} | {_pct(lolo_binary(f, gs, objective='accuracy'))} |")
    lines.append("")
    lines += ["Sensitivity to two of the set numbers (leave-one-liquid-out miscible-or-not, the fitted numbers "
              "refitted per fold; bold: the bundled values). These numbers are not fitted; the table shows how much the "
              "result depends on them:", ""]
    floors = (0.05, HBOND.acid_floor, 0.15, 0.2)
    vmins = (30.0, 40.0, HBOND.v_min, 50.0)
    lines += ["| Kamlet-Taft floor (rows), V_min in cm3/mol (columns) | " + " | ".join(f"{x:g}" for x in vmins) + " |",
              "|---|" + "---|" * len(vmins)]
    for fl in floors:
        cells = []
        for vm in vmins:
            g2 = gs if (fl == HBOND.acid_floor and vm == HBOND.v_min) else GridScores(f, acid_floor=fl, v_min=vm)
            c = _pct(lolo_binary(f, g2))
            cells.append(f"**{c}**" if g2 is gs else c)
        lines.append(f"| {fl:g} | " + " | ".join(cells) + " |")
    lines.append("")
    zs = (6.0, 8.0, HBOND.assoc_z, 12.0)
    cells = []
    for z in zs:
        g2 = gs if z == HBOND.assoc_z else GridScores(f, assoc_z=z)
        c = _pct(lolo_binary(f, g2))
        cells.append(f"**{c}**" if g2 is gs else c)
    lines += ["Sensitivity to the lattice coordination number z of the cross hydrogen-bond term "
              "(leave-one-liquid-out miscible-or-not, the fitted numbers refitted per fold):", "",
              "| z | " + " | ".join(f"{z:g}" for z in zs) + " |", "|---|" + "---|" * len(zs),
              "| leave-one-liquid-out | " + " | ".join(cells) + " |", ""]
    lines += ["Fold-to-fold spread of the refitted numbers (leave-one-liquid-out): "
              + ", ".join(f"{c} {folds[c].min():g}..{folds[c].max():g} (median {folds[c].median():g})"
                          for c in ("w_p", "w_h", "polyol_c")) + f", tau {folds['tau'].min():.3f}..{folds['tau'].max():.3f}.", ""]

    # confidence calibration
    from .mixing import miscibility

    conf = []
    for r in pairs.itertuples():
        res = miscibility(r.cas_a, r.cas_b, reference=False)   # the models' own answer, not the table's
        conf.append((res.confidence, (res.state == "miscible") == (r.miscible_25c == "yes")))
    cdf = pd.DataFrame(conf, columns=["confidence", "right"])
    lines += ["Confidence levels of `miscibility(..., reference=False)` (the models' own answer, with the "
              "UNIFAC second opinion) against the reference pairs (bundled numbers):", "",
              "| confidence | pairs | right |", "|---|---|---|"]
    for lev in ("high", "medium", "low"):
        s = cdf[cdf.confidence == lev]
        lines.append(f"| {lev} | {len(s)} | {_pct(s.right.mean()) if len(s) else '-'} |")
    lines.append("")

    # UCST table
    lines += ["Upper critical solution temperatures (published values from memory, see the pairs file; the "
              "methanol-hexane value is never used in a fit; last column: the bundled numbers without the Keesom "
              "factor, which leaves 25 C unchanged):", "",
              "| pair | published, C | model, C | without the Keesom factor, C |", "|---|---|---|---|"]
    no_keesom = dataclasses.replace(HBOND, keesom=0.0)
    lib = load_library()
    h, v, s, _, al = _arrays(lib)
    for k in np.flatnonzero(pairs["ucst_c"].notna().to_numpy()):
        i, j = f.ia[k], f.ib[k]
        u = float(ucst(h[i], h[j], s[i], s[j], v[i], v[j], HBOND, al[i], al[j]))
        u0 = float(ucst(h[i], h[j], s[i], s[j], v[i], v[j], no_keesom, al[i], al[j]))
        lines.append(f"| {pairs.liquid_a[k]} - {pairs.liquid_b[k]} | {pairs.ucst_c[k]:g} | "
                     f"{'none' if not math.isfinite(u) else f'{u:.1f}'} | "
                     f"{'none' if not math.isfinite(u0) else f'{u0:.1f}'} |")
    lines.append("")

    # wrong pairs
    lines += ["Pairs the bundled model gets wrong (miscible or not):", ""]
    for k in range(n):
        if (st_h[k] == "miscible") != bool(f.miscible[k]):
            lines.append(f"- {pairs.liquid_a[k]} - {pairs.liquid_b[k]}: reference "
                         f"{pairs.state_25c[k] or ('miscible' if f.miscible[k] else 'not miscible')}, model {st_h[k]}")
    lines.append("")
    if with_unifac:
        for version, label in ((0, "original"), (1, "Dortmund")):
            u = unifac_rows[version]
            nc = u[~u["covered"]]
            if len(nc):
                lines.append(f"UNIFAC {label}: pairs not covered: " + "; ".join(
                    f"{pairs.liquid_a[r.pair]} - {pairs.liquid_b[r.pair]} ({r.why})" for r in nc.itertuples()) + ".")
                lines.append("")
    lines.append("UNIFAC notes: `thermo.unifac` version 0 is the original UNIFAC with its vapour-liquid "
                 "parameter table (not the separate liquid-liquid table); version 1 is Dortmund (modified) "
                 "UNIFAC with the 2016 parameters. Phase split: Gibbs energy of mixing on 401 mole fractions "
                 "(logit-spaced, 1e-8 to 1 - 1e-8) against its lower convex hull; the same 1 wt % rule gives "
                 "the three-way state.")
    lines.append("")
    lines.append(f"Run time {time.time() - t0:.0f} s.")
    return "\n".join(lines) + "\n"


def main(argv=None) -> int:
    from .io import write_atomic

    argv = sys.argv[1:] if argv is None else argv
    text = build_report(with_unifac="--no-unifac" not in argv)
    if "--print-only" not in argv:
        write_atomic(REPORT_MD, text)
    print(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
