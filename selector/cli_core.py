"""Subcommands ``rank``, ``show``, ``list`` and ``demo``."""
from __future__ import annotations

import argparse
import json

from .cli_common import add_filter_args, add_output_args, emit, filters_from_args, library_from_args

RANK_COLUMNS = ["rank", "name", "cas", "delta_d", "delta_p", "delta_h", "ra", "red", "polarity_match",
                "score", "molar_volume", "boiling_point_c", "flash_point_c", "hazard_class", "hsp_source",
                "sources_disagree"]
SHOW_FIELDS = ["name", "cas", "smiles", "formula", "molar_mass", "delta_d", "delta_p", "delta_h",
               "hsp_source", "hsp_sources_available", "hsp_spread", "sources_disagree", "molar_volume",
               "density", "melting_point_c", "boiling_point_c", "flash_point_c", "autoignition_c",
               "vapour_pressure_kpa", "hvap_kj_mol", "expansion_coeff", "viscosity_mpa_s",
               "exposure_limit", "exposure_limit_unit", "exposure_limit_source", "short_term_limit",
               "short_term_limit_unit", "synonyms",
               "melting_point_source", "boiling_point_source", "volume_method",
               "vapour_pressure_method", "viscosity_method", "viscosity_estimated", "flash_point_source", "origin",
               "reactive_reason", "data_note"]


def target_from_text(text: str, radius: float | None = None, library=None):
    """A target from command-line text.

    'dD,dP,dH[,R0]' (MPa^0.5) -> tuple; anything else is a liquid name, CAS or SMILES, returned
    as is, or as a :class:`~selector.targets.Target` at that liquid's point with ``radius`` as R0.
    A name is looked up first when the text is not all numbers (``1,4-dioxane``); numbers that
    are not 3 or 4 of them, and a SMILES that is not in the library, get a message that says what
    to do.
    """
    from .errors import SelectorError
    from .library import find_liquid, load_library

    parts = [p.strip() for p in text.split(",")]
    nums = [float(p) for p in parts] if all(_is_number(p) for p in parts) else None
    if nums is not None:
        if len(nums) not in (3, 4):
            raise SelectorError(f"target {text!r}: expected 'dD,dP,dH' or 'dD,dP,dH,R0' in MPa^0.5, "
                                f"got {len(nums)} number{'s' if len(nums) != 1 else ''}")
        nums = tuple(nums)
        if radius is not None:
            if len(nums) == 4:
                raise SelectorError("R0 given twice: in the target and with --radius")
            nums = nums + (radius,)
        from .targets import as_target

        as_target(nums)   # range and sign checks, with their messages
        return nums
    lib = load_library() if library is None else library
    try:
        row = find_liquid(text, lib)   # names such as 1,4-dioxane contain commas and digits
    except SelectorError as err:
        if len(parts) > 1 and _is_number(parts[0]):
            raise SelectorError(f"{err}; as numbers, a target is 'dD,dP,dH' or 'dD,dP,dH,R0' in "
                                "MPa^0.5") from None
        from rdkit import Chem, RDLogger

        RDLogger.DisableLog("rdApp.*")
        if Chem.MolFromSmiles(text) is not None and any(ch in text for ch in "=#()[]1cC"):
            raise SelectorError(f"unknown liquid {text!r}: it reads as a SMILES that is not in the library; "
                                f"estimate its HSP with  likewise guess '{text}' --save-mine my_liquids.csv  "
                                "and then add --mine my_liquids.csv") from None
        raise
    if radius is None:
        return text
    from .targets import Target

    return Target(float(row.delta_d), float(row.delta_p), float(row.delta_h), radius,
                  name=str(row["name"]), source="library point with given R0")


def _is_number(s: str) -> bool:
    try:
        float(s)
    except ValueError:
        return False
    return True


def cmd_rank(a) -> int:
    from .ranking import rank

    lib = library_from_args(a)
    res = rank(target_from_text(a.target, a.radius, lib), temperature=a.at, library=lib,
               polarity_weight=a.polarity_weight, **filters_from_args(a))
    tgt = res.attrs["target"]
    cols = RANK_COLUMNS if res["red"].notna().any() else [c for c in RANK_COLUMNS if c != "red"]
    header = (f"Target {tgt.describe()} at {a.at:g} C; {len(res)} candidates; "
              "score = distance + polarity weight x (1 - polarity match), lower is better; "
              "hazard class: CHEM21 (unclassified = no hazard data here, not safe)"
              + _reagent_note(res))
    shown = _with_hazard_class(res, lib)
    if (shown["reagent"] != "").any():
        cols = cols + ["reagent"]
    emit(shown.head(a.top), a, cols, caution=True, header=header + data_note_line(shown.head(a.top)))
    return 0


def data_note_line(rows) -> str:
    """A header line naming the liquids of ``rows`` whose library data carry a ``data_note``
    (boiling point or vapour pressure in doubt), or ""."""
    if "data_note" not in rows:
        return ""
    has = rows["data_note"].astype("string").fillna("").str.strip() != ""
    if not has.any():
        return ""
    names = rows.loc[has.to_numpy(), "name"].astype(str).tolist()
    more = f" and {len(names) - 6} more" if len(names) > 6 else ""
    return ("\nData in doubt (boiling point or vapour pressure; `likewise show NAME` says which): "
            + ", ".join(names[:6]) + more)


def _with_hazard_class(res, lib):
    """``res`` with the CHEM21 ``hazard_class`` of each liquid
    (:func:`selector.hazards.attach_hazards`) and its ``reagent`` reason
    (:func:`selector.cautions.reactive_reasons`)."""
    from .cautions import reactive_reasons
    from .hazards import attach_hazards

    out = attach_hazards(res, lib)
    out["reagent"] = reactive_reasons(out)
    return out


def _reagent_note(res) -> str:
    n = res.attrs.get("reagents_left_out", 0)
    return (f"\n{n} reagents (reactive, explosive or very toxic liquids) are left out; "
            "--include-reactive lists them" if n else "")


def cmd_show(a) -> int:
    import pandas as pd

    from .cautions import reactive_reasons
    from .library import find_liquid

    lib = library_from_args(a)
    rows = [find_liquid(q, lib) for q in a.liquids]
    why = reactive_reasons(pd.DataFrame(rows))
    rows = [r.copy() for r in rows]
    for r, w in zip(rows, why):
        r["reactive_reason"] = w
    if a.format == "table":
        for r in rows:
            for f in SHOW_FIELDS:
                if f in r.index:
                    v = r[f]
                    print(f"{f:24s} {'' if (isinstance(v, float) and v != v) else v}")
            print()
        print("HSP from chemicals.solubility (source key above); properties from thermo/chemicals "
              "(method names above). Missing values are blank: no data, not zero.")
        return 0
    emit(pd.DataFrame(rows)[[f for f in SHOW_FIELDS if f in rows[0].index]], a)
    return 0


def cmd_list(a) -> int:
    import numpy as np

    from .filters import filter_mask
    from .library import _key

    lib = library_from_args(a)
    m = filter_mask(lib, **dict(filters_from_args(a), include_reactive=True))  # browsing: everything
    if a.search:
        k = _key(a.search)
        hay = (lib["name"] + "|" + lib["synonyms"].astype(str) + "|" + lib["cas"]).map(_key)
        m &= hay.str.contains(k, regex=False).to_numpy()
    from .cautions import reactive_reasons

    out = lib.loc[m].sort_values("name")
    out = out.assign(reagent=reactive_reasons(out))
    cols = ["name", "cas", "delta_d", "delta_p", "delta_h", "molar_volume", "boiling_point_c",
            "flash_point_c", "hsp_source", "sources_disagree", "reagent"]
    emit(out.head(a.top) if a.top else out, a, cols, header=f"{int(np.sum(m))} liquids match")
    return 0


def demo_scenario() -> dict:
    """The bundled invented demo scenario (``parameters/demo/scenario.json``)."""
    from .library import PARAMETERS_DIR

    with open(PARAMETERS_DIR / "demo" / "scenario.json", encoding="utf-8") as fh:
        return json.load(fh)


def cmd_demo(a) -> int:
    from .ranking import rank

    sc = demo_scenario()
    r = sc["resin"]
    f = dict(sc["filters"])
    f["boiling_point_c"] = tuple(f["boiling_point_c"])
    res = rank((r["delta_d"], r["delta_p"], r["delta_h"], r["radius"]), temperature=sc["temperature_c"], **f)
    print(sc["label"])
    print(sc["story"])
    print()
    header = (f"Thinners for {r['name']} (dD {r['delta_d']}, dP {r['delta_p']}, dH {r['delta_h']}, "
              f"R0 {r['radius']} MPa^0.5), boiling point {f['boiling_point_c'][0]:g}-{f['boiling_point_c'][1]:g} C, "
              f"flash point >= {f['min_flash_point_c']:g} C; hazard class: CHEM21 (unclassified = no "
              "hazard data here, not safe; the scenario wants a better class than its current thinner):"
              + _reagent_note(res))
    from .library import load_library

    lib = load_library()
    shown = _with_hazard_class(res, lib)
    from .hazards import HAZARD_CLASSES, hazard

    cur = sc.get("current_solvent", "toluene")
    cur_cls = hazard(cur, lib).hazard_class
    better = shown[(shown["red"] < 1) & shown["hazard_class"].isin(
        HAZARD_CLASSES[:HAZARD_CLASSES.index(cur_cls)] if cur_cls in HAZARD_CLASSES else [])].head(5)
    footer = ""
    if len(better):
        footer = (f"Inside the sphere with a better CHEM21 class than {cur} ({cur_cls}): "
                  + ", ".join(f"{n} (RED {r:.2f}, {c})" for n, r, c in
                              zip(better["name"], better["red"], better["hazard_class"]))
                  + ". A shortlist for test mixes, not an endorsement: read each safety data sheet.")
    emit(shown.head(a.top), a, RANK_COLUMNS, caution=True, header=header + ("\n" + footer if footer else ""))
    return 0


def register(sub) -> None:
    p = sub.add_parser("rank", help="rank liquids against a target point or sphere",
                       description="Rank every liquid in the library against a target. TARGET is "
                       "'dD,dP,dH' or 'dD,dP,dH,R0' in MPa^0.5, or a liquid name/CAS/SMILES.",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="examples:\n  likewise rank 21.3,5.8,4.3,12.7 --bp 80:180\n"
                       "  likewise rank toluene --radius 6 --min-flash 40 --format csv -o out.csv")
    p.add_argument("target", help="'dD,dP,dH[,R0]' in MPa^0.5, or a liquid name, CAS or SMILES")
    p.add_argument("--radius", type=float, metavar="R0", help="interaction radius R0 (MPa^0.5) for a named target")
    p.add_argument("--at", type=float, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--polarity-weight", type=float, default=0.3, metavar="W",
                   help="weight of the polarity mismatch in the score (default 0.3; 0 = Ra/RED only)")
    add_filter_args(p)
    add_output_args(p)
    p.set_defaults(func=cmd_rank)

    p = sub.add_parser("show", help="show one or more liquids with every value and its source")
    p.add_argument("liquids", nargs="+", help="names, synonyms, CAS numbers or SMILES")
    p.add_argument("--mine", metavar="CSV", help="CSV of your own liquids merged over the library")
    add_output_args(p, default_top=None)
    p.set_defaults(func=cmd_show)

    p = sub.add_parser("list", help="list or filter the library")
    p.add_argument("--search", metavar="TEXT", help="part of a name, synonym or CAS number")
    add_filter_args(p)
    add_output_args(p, default_top=0)
    p.set_defaults(func=cmd_list)

    p = sub.add_parser("demo", help="rank thinners for the bundled (invented) varnish scenario")
    add_output_args(p, default_top=15)
    p.set_defaults(func=cmd_demo)
