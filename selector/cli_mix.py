"""Subcommands ``mix`` (will two liquids mix?) and ``mix-grid`` (states for a set of liquids)."""
from __future__ import annotations

import argparse
import math
import re

from .cli_common import (CAUTION, add_filter_args, add_output_args,
                          emit, filters_from_args, library_from_args, number)

PAIR_COLUMNS = ["a", "b", "temperature_c", "state", "chi", "chi_critical", "ucst_c", "lcst_c", "lcst_prone", "trend_doubtful",
                "confidence", "p_miscible", "a_in_b_vol_pct", "a_in_b_wt_pct", "a_in_b_mol_pct", "b_in_a_vol_pct", "b_in_a_wt_pct",
                "b_in_a_mol_pct", "spinodal_low", "spinodal_high", "v_ref", "interaction_mpa", "model",
                "headline", "unifac_state", "unifac_method", "reference_state", "reference_source", "notes"]

SHORT = {"miscible": "mix", "partially miscible": "part", "immiscible": "no"}


def _pair_row(r) -> dict:
    d = {k: getattr(r, k) for k in ("a", "b", "temperature_c", "state", "chi", "chi_critical", "ucst_c",
                                    "lcst_c", "lcst_prone", "trend_doubtful", "confidence", "p_miscible", "v_ref", "interaction_mpa",
                                    "model")}
    for side in ("a_in_b", "b_in_a"):
        for unit in ("vol_pct", "wt_pct", "mol_pct"):
            d[f"{side}_{unit}"] = r.binodal[side][unit] if r.binodal else None
    d["spinodal_low"], d["spinodal_high"] = r.spinodal if r.spinodal else (None, None)
    d["headline"] = r.headline
    so, ref = r.second_opinion or {}, r.reference or {}
    d["unifac_state"], d["unifac_method"] = so.get("state", ""), so.get("method", "")
    d["reference_state"], d["reference_source"] = ref.get("state", ""), ref.get("source", "")
    d["notes"] = " | ".join(r.notes)
    return d


def _fmt(x, nd=2):
    return "-" if x is None or (isinstance(x, float) and not math.isfinite(x)) else f"{x:.{nd}f}"


def one_figure(x) -> str:
    """A model percentage to one significant figure: the mutual solubilities are often off tenfold,
    so a second figure would claim what the model does not know."""
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "-"
    return f"{float(f'{x:.1g}'):g}"


def cmd_mix(a) -> int:
    import pandas as pd

    from .mixing import miscibility

    from .cli_core import find_liquid_or_hint

    lib = library_from_args(a)
    for q in (a.first, a.second):
        find_liquid_or_hint(q, lib)      # an unknown SMILES: say how to estimate it
    r = miscibility(a.first, a.second, temperature=a.at, library=lib, model=a.model)
    if a.format != "table" or a.output:
        emit(pd.DataFrame([_pair_row(r)]), a, PAIR_COLUMNS)
        return 0
    word, _, rest = r.headline.partition(" (")   # "uncertain (model: ...)" keeps its lower case
    print(f"{r.a} + {r.b} at {r.temperature_c:g} C: {word.upper()}{' (' + rest if rest else ''} "
          f"(confidence {r.confidence})")
    if math.isfinite(r.p_miscible):
        print(f"  {'the model' + chr(39) + 's ' if r.reference else ''}probability of one phase in all proportions: "
              f"{100 * r.p_miscible:.0f} % "
              + ("(logistic fit on the reference pairs at 25 C)" if abs(r.temperature_c - 25.0) < 1e-9 else
                 f"(at {r.temperature_c:g} C, from a logistic fit calibrated on reference pairs at 25 C)"))
    print(f"  chi {r.chi:.3f} (per {r.v_ref:.1f} cm3/mol), critical chi {r.chi_critical:.3f}; "
          f"model: {r.model}")
    lcst_pair = r.lcst_prone
    print(f"  model UCST: {_fmt(r.ucst_c, 1) + ' C' if r.ucst_c is not None else 'none in this model'}"
          + (" (does not apply to this pair, see the notes)" if lcst_pair and r.ucst_c is not None else ""))
    if r.lcst_c is not None:
        print(f"  model LCST: {_fmt(r.lcst_c, 1)} C (a gap opens on heating)")
    if r.binodal:
        ab, ba = r.binodal["a_in_b"], r.binodal["b_in_a"]
        contradicted = r.reference_contradicts
        print("  coexisting phases (model binodal, to one significant figure: mutual solubilities are often off tenfold"
              + (f"; the reference data say {r.answer}, so this gap is the model's error" if contradicted else "")
              + "):")
        print(f"    {r.a} in the {r.b}-rich phase: {one_figure(ab['vol_pct'])} vol %, {one_figure(ab['wt_pct'])} wt %, "
              f"{one_figure(ab['mol_pct'])} mol %")
        print(f"    {r.b} in the {r.a}-rich phase: {one_figure(ba['vol_pct'])} vol %, {one_figure(ba['wt_pct'])} wt %, "
              f"{one_figure(ba['mol_pct'])} mol %")
        src = (r.reference or {}).get("source", "")
        if not contradicted and re.search(r"\d\s*wt\s*%", src):
            # measured solubilities beat the model's, which are often off tenfold
            print(f"    measured instead (reference data): {src}")
        lo, hi = r.spinodal
        print(f"  spinodal (volume fraction of {r.a}): {lo:.4f} .. {hi:.4f}")
    for n in r.notes:
        print(f"  - {n}")
    print("\n" + CAUTION)
    return 0


def _names(s):
    out = []
    for item in s:
        out += [x.strip() for x in item.split(",") if x.strip()]
    return out


#: Pairs (or liquids) named in one header line of the square grid; ``--long`` lists them all.
HEADER_LIST_MAX = 30


def _listed(items, column: str = "") -> str:
    """``items`` joined with ", ", cut after :data:`HEADER_LIST_MAX` with a count of the rest and
    where to find them (a whole-library grid has thousands of reacting pairs)."""
    items = list(items)
    if len(items) <= HEADER_LIST_MAX:
        return ", ".join(items)
    where = f" (--long lists every pair: see its {column} column)" if column else ""
    return ", ".join(items[:HEADER_LIST_MAX]) + f" ... and {len(items) - HEADER_LIST_MAX} more{where}"


def _marked(grid, doubtful, reacting):
    """The square grid of short states with "?" on the doubtful pairs and "!" on the reacting
    ones (both cells of each pair)."""
    import numpy as np
    import pandas as pd

    where = {n: k for k, n in enumerate(grid.index)}
    marks = np.full(grid.shape, "", dtype=object)
    for pairs, mark in ((doubtful, "?"), (reacting, "!")):
        ij = np.array([(where[x], where[y]) for x, y in pairs if x in where and y in where], dtype=int).reshape(-1, 2)
        for a, b in (ij.T, ij[:, ::-1].T):   # both cells of each pair, all at once
            marks[a, b] = marks[a, b] + mark
    # one array operation: thousands of reacting pairs in a whole-library grid took minutes cell by cell
    return pd.DataFrame(grid.to_numpy(dtype=object) + marks, index=grid.index, columns=grid.columns)


def cmd_grid(a) -> int:
    import pandas as pd

    from .filters import filter_mask
    from .library import locate_many
    from .mixing import UNIFAC_MATRIX_MAX, miscibility_matrix

    from .cli_core import find_liquid_or_hint
    from .errors import SelectorError
    from .library import hsp_estimated

    lib = library_from_args(a)
    if a.not_miscible and not a.long:
        raise ValueError("--not-miscible picks pairs from the one-row-per-pair list: give --long too")
    dropped = []
    if a.liquids and a.all:
        raise ValueError("name the liquids or give --all, not both")
    if a.liquids:
        try:
            df = lib.iloc[locate_many(_names(a.liquids), lib)]
        except SelectorError:
            for q in _names(a.liquids):
                find_liquid_or_hint(q, lib)      # an unknown SMILES: say how to estimate it
            raise
        flt = filters_from_args(a)
        if flt.get("include") is not None:
            raise ValueError("--only picks liquids from the library; with liquids named, leave it out")
        if flt:
            keep = filter_mask(df, temperature=a.at, **dict(flt, include_reactive=True))
            dropped = df["name"].astype(str)[~keep].tolist()
            df = df.loc[keep]
            if len(df) < 2:
                raise ValueError(f"the filters leave {len(df)} of the named liquids (dropped: "
                                 f"{', '.join(dropped)}); a grid needs two")
    else:
        flt = filters_from_args(a)
        if not flt and not a.all:
            raise ValueError("name the liquids (e.g. water,ethanol,hexane), or use --all or a filter "
                             "such as --only/--bp to pick them")
        # checking miscibility proposes nothing: reagents stay in the grid (selector.cautions)
        df = lib.loc[filter_mask(lib, temperature=a.at, **dict(flt, include_reactive=True))]
    m = miscibility_matrix(df, temperature=a.at, library=lib, model=a.model)
    est = df["name"].astype(str)[hsp_estimated(df)].tolist()
    est_note = ("\nHSP estimated from structure (not measured; states as uncertain as the estimates, "
                "`likewise mix` checks their intervals): " + _listed(est)) if est else ""
    if dropped:
        est_note += "\nLeft out by the filters: " + ", ".join(dropped)
    no_unifac = ("" if m.attrs.get("unifac_checked", True) else
                 f"\nNo UNIFAC second opinion for more than {UNIFAC_MATRIX_MAX} liquids: `likewise mix A B` "
                 "gives it for a pair")
    if a.long:
        import numpy as np

        iu, ju = np.triu_indices(len(m), 1)
        st = m.to_numpy()
        from .cautions import reactive_pair_matrix

        out = pd.DataFrame({"a": m.index.to_numpy()[iu], "b": m.columns.to_numpy()[ju], "state": st[iu, ju],
                            "reacts": reactive_pair_matrix(df)[iu, ju]})
        unsure = {frozenset(p) for p in m.attrs.get("uncertain_pairs", [])}
        out["uncertain"] = [frozenset((x, y)) in unsure for x, y in zip(out["a"], out["b"])]
        second = {frozenset((x, y)): f"{mt}: {s_}" for x, y, mt, s_ in m.attrs.get("disagreeing_pairs", [])}
        out["unifac_disagrees"] = [second.get(frozenset((x, y)), "") for x, y in zip(out["a"], out["b"])]
        if a.not_miscible:
            # a pair that may split (uncertain, or UNIFAC says so) is kept with the ones that do
            out = out[(out.state != "miscible") | out.reacts | out.uncertain]
            if out.empty:
                print(f"Every pair of the {len(m)} liquids mixes in all proportions at {a.at:g} C (none is "
                      "partially miscible, immiscible, uncertain or reacting)." + est_note + no_unifac)
                print("\n" + CAUTION)
                return 0
        emit(out, a, caution=True, header=f"{len(out)} pairs at {a.at:g} C" + est_note + no_unifac)
        return 0
    split = m.attrs.get("disagreeing_pairs", [])
    apart = {frozenset((x, y)) for x, y, _, _ in split}
    unsure = [p for p in m.attrs.get("uncertain_pairs", []) if frozenset(p) not in apart]
    shown = m if a.format != "table" else _marked(m.replace(SHORT), [(x, y) for x, y, _, _ in split] + unsure,
                                                   m.attrs.get("reactive_pairs", []))
    out = shown.reset_index().rename(columns={"index": "liquid"})
    header = (f"{len(m)} liquids at {a.at:g} C" + ("" if a.format != "table" else
              "; mix = miscible in all proportions, part = partially miscible, no = immiscible; "
              "? = uncertain or the models disagree, ! = they react (both listed below)")) + est_note
    if unsure:
        header += ("\nUNCERTAIN (water with a glycol ether, amine or pyridine; the model cannot be trusted on "
                   "them, test them): " + _listed((f"{x} + {y}" for x, y in unsure), "uncertain"))
    if split:
        header += ("\nMODELS DISAGREE (UNIFAC's second opinion against the model shown; test them): "
                   + _listed((f"{x} + {y} ({mt}: {s_})" for x, y, mt, s_ in split), "unifac_disagrees"))
    header += no_unifac
    pairs = m.attrs.get("reactive_pairs", [])
    if pairs:
        header += ("\nREACTIVE PAIRS (they react whatever the state; do not mix them except as a planned "
                   "reaction): " + _listed((f"{x} + {y}" for x, y in pairs), "reacts"))
    emit(out, a, caution=True, header=header)
    return 0


def register(sub) -> None:
    p = sub.add_parser("mix", help="will two liquids mix? state, chi, UCST, phase compositions",
                       description="Predict whether two liquids stay one phase at a temperature: state, "
                       "Flory-Huggins chi and its critical value, UCST, the coexisting compositions "
                       "(vol/wt/mol %) and the spinodal, with a confidence level.",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="examples:\n  likewise mix water 'ethyl acetate'\n"
                       "  likewise mix methanol hexane --at 35 --format json")
    p.add_argument("first", help="liquid name, synonym, CAS number or SMILES")
    p.add_argument("second", help="liquid name, synonym, CAS number or SMILES")
    p.add_argument("--at", type=number, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--model", choices=["hbond", "plain"], default="hbond",
                   help="hbond (default: donor/acceptor-aware) or plain (Hansen Flory-Huggins)")
    p.add_argument("--mine", metavar="CSV", help="CSV of your own liquids merged over the library")
    add_output_args(p, default_top=None)
    p.set_defaults(func=cmd_mix)

    p = sub.add_parser("mix-grid", help="miscibility states for every pair of a set of liquids",
                       description="States (miscible / partially miscible / immiscible) for every pair of the "
                       "chosen liquids, up to the whole library.",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="examples:\n  likewise mix-grid water,ethanol,hexane,toluene\n"
                       "  likewise mix-grid --all --long --not-miscible --format csv -o gaps.csv")
    p.add_argument("liquids", nargs="*", help="liquids (names/CAS, comma- or space-separated)")
    p.add_argument("--all", action="store_true", help="every liquid in the library (after filters)")
    p.add_argument("--long", action="store_true", help="one row per pair instead of a square table")
    p.add_argument("--not-miscible", action="store_true", help="with --long: only pairs that split")
    p.add_argument("--at", type=number, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--model", choices=["hbond", "plain"], default="hbond", help="hbond (default) or plain")
    add_filter_args(p)
    add_output_args(p, default_top=None)
    p.set_defaults(func=cmd_grid)
