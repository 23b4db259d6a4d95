"""Subcommands ``rank``, ``show``, ``list`` and ``demo``."""
from __future__ import annotations

import argparse
import json
import sys

from .cli_common import add_filter_args, add_output_args, emit, filters_from_args, library_from_args, number

RANK_COLUMNS = ["rank", "name", "cas", "delta_d", "delta_p", "delta_h", "ra", "red", "polarity_match",
                "score", "molar_volume", "boiling_point_c", "flash_point_c", "hazard_class", "hsp_source",
                "sources_disagree", "hazard_notes"]
SHOW_FIELDS = ["name", "cas", "smiles", "formula", "molar_mass", "delta_d", "delta_p", "delta_h",
               "hsp_source", "hsp_sources_available", "hsp_spread", "sources_disagree", "hsp_note",
               "molar_volume", "density", "melting_point_c", "boiling_point_c", "flash_point_c", "autoignition_c",
               "vapour_pressure_kpa", "hvap_kj_mol", "expansion_coeff", "viscosity_mpa_s",
               "exposure_limit", "exposure_limit_unit", "exposure_limit_source", "short_term_limit",
               "short_term_limit_unit", "synonyms",
               "melting_point_source", "boiling_point_source", "volume_method", "expansion_method",
               "vapour_pressure_method", "viscosity_method", "viscosity_estimated", "flash_point_source", "origin",
               "molar_volume_estimated", "in_domain", "filled_from_library", "reactive_reason", "data_note",
               "hazard_class", "hazard_class_default", "h_statements", "hazard_notes"]
#: units printed after a value by ``show`` (its table has no column headers to carry them)
SHOW_UNITS = {"molar_mass": "g/mol", "delta_d": "MPa^0.5", "delta_p": "MPa^0.5", "delta_h": "MPa^0.5",
              "hsp_spread": "MPa^0.5", "molar_volume": "cm3/mol", "density": "g/cm3 at 25 C",
              "melting_point_c": "C", "boiling_point_c": "C", "flash_point_c": "C", "autoignition_c": "C",
              "vapour_pressure_kpa": "kPa at 25 C", "hvap_kj_mol": "kJ/mol", "expansion_coeff": "1/K",
              "viscosity_mpa_s": "mPa s at 25 C"}
#: values that may carry a 90 % interval (``<name>_low``/``<name>_high``, estimated liquids)
INTERVAL_FIELDS = {"delta_d": 2, "delta_p": 2, "delta_h": 2, "molar_volume": 1}
#: origins whose HSP did not come from the library's comparison of published sources
NOT_COMPARED = ("estimated", "published")


def for_display(df):
    """A copy of library rows for output: ``sources_disagree`` is blank (not False) where the HSP
    were not compared across published sources (estimated or published-table rows), and
    ``viscosity_estimated`` is blank where there is no viscosity; exposure-limit sources are named
    as in the reports (:func:`selector.report.exposure_source_names`)."""
    import numpy as np

    out = df.copy()
    if "sources_disagree" in out.columns and "origin" in out.columns:
        blank = out["origin"].astype(str).isin(NOT_COMPARED).to_numpy()
        if blank.any():
            out["sources_disagree"] = np.where(blank, "", out["sources_disagree"].astype(object))
    if "viscosity_estimated" in out.columns and "viscosity_mpa_s" in out.columns:
        none = out["viscosity_mpa_s"].isna().to_numpy()
        if none.any():
            out["viscosity_estimated"] = np.where(none, "", out["viscosity_estimated"].astype(object))
    if "exposure_limit_source" in out.columns:
        from .report import exposure_source_names

        src = out["exposure_limit_source"]
        out["exposure_limit_source"] = exposure_source_names(src.fillna("")).where(src.notna(), src)
    return out


def describe_target(tgt, lib) -> str:
    """``tgt.describe()`` with the mark of a target whose HSP are estimated ("estimated from
    structure (90 % intervals ...)", :func:`selector.library.estimate_note`)."""
    from .library import estimate_note

    text = tgt.describe()
    if "name" in lib.columns and tgt.name != "target":
        hit = lib.loc[lib["name"].astype(str) == str(tgt.name)]
        if len(hit):
            note = estimate_note(hit.iloc[0])
            if note:
                text += f" ({note})"
    return text


def target_notes(tgt) -> str:
    """Header lines for a target's notes (a dD that looks like cal units, ...), "" without any."""
    return "".join(f"\nNOTE: {n}" for n in getattr(tgt, "notes", ()))


def unknown_liquid_hint(text: str, err, target: bool = True) -> Exception:
    """The error for an unknown liquid: when ``text`` reads as a SMILES, a message that says how to
    estimate it (``likewise guess ... --save-mine``); where a target is asked for (``target``) and
    ``text`` is three or four numbers with the wrong separator, the dD,dP,dH[,R0] form; otherwise
    ``err`` itself."""
    import re

    from rdkit import Chem, RDLogger

    from .errors import SelectorError

    from .errors import GenericNameError
    from .library import _CAS_RE

    RDLogger.DisableLog("rdApp.*")
    if isinstance(err, GenericNameError) or _CAS_RE.match(text.strip()):
        return err   # a mixture's name, or a CAS number: not a SMILES to check
    number = r"[-+]?(\d+\.?\d*|\.\d+)"
    nums = re.split(r"[;:/|\s]+", text.strip())
    if target and len(nums) in (3, 4) and all(re.fullmatch(number, n) for n in nums):
        return SelectorError(f"unknown liquid {text!r}: a target given as numbers is dD,dP,dH[,R0] in "
                             f"MPa^0.5 separated by commas, e.g. {','.join(nums)}")
    nums = re.split(r"[,;:/|\s]+", text.strip())
    if not target and len(nums) in (3, 4) and all(re.fullmatch(number, n) for n in nums):
        point = ",".join(nums)
        return SelectorError(f"unknown liquid {text!r}: it reads as HSP numbers, but a liquid (name, CAS number "
                             f"or SMILES) is asked for here; for liquids or blends near a point use  likewise "
                             f"rank {point}  or  likewise blend {point}")
    if Chem.MolFromSmiles(text) is not None and any(ch in text for ch in "=#()[]1cC"):
        return SelectorError(f"unknown liquid {text!r}: it reads as a SMILES that is not in the library; "
                             f"estimate its HSP with  likewise guess '{text}' --save-mine my_liquids.csv  "
                             "and then add --mine my_liquids.csv")
    from .library import _looks_like_smiles

    if _looks_like_smiles(text.strip()) and Chem.MolFromSmiles(text) is None:
        return SelectorError(f"{err}; read as a SMILES it is not valid either (check ring-closure digits, "
                             "brackets and bond symbols)")
    return err


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
    from .errors import NotLiquidError

    try:
        find_liquid(text, lib)   # names such as 1,4-dioxane contain commas and digits
    except NotLiquidError:
        # a solid with published HSP (sulfolane, tert-butanol) is a target by its published point
        from .targets import as_target

        from dataclasses import replace

        t = as_target(text, lib)
        return t if radius is None else replace(t, radius=radius)
    except SelectorError as err:
        if len(parts) > 1 and _is_number(parts[0]):
            raise SelectorError(f"{err}; as numbers, a target is 'dD,dP,dH' or 'dD,dP,dH,R0' in "
                                "MPa^0.5") from None
        hint = unknown_liquid_hint(text, err)
        if hint is not err:
            raise hint from None
        raise
    if radius is None:
        return text
    from .targets import liquid_point

    return liquid_point(text, radius, lib)   # corrected for temperature like the candidates


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
    liquid_at = "" if abs(a.at - 25.0) < 1e-9 else f" (only those liquid at {a.at:g} C)"
    header = (f"Target {describe_target(tgt, lib)} at {a.at:g} C; {len(res)} candidates{liquid_at}; "
              "score = distance + polarity weight x (1 - polarity match), lower is better; "
              "hazard class: CHEM21 (unclassified = no hazard data here, not safe)"
              + _reagent_note(res) + target_notes(tgt))
    shown = for_display(_with_hazard_class(res, lib))
    if (shown["reagent"] != "").any():
        cols = cols + ["reagent"]
    top = shown.head(a.top)
    reag = top.loc[top["reagent"] != "", "name"].astype(str).tolist()
    if reag:
        # --include-reactive: a reagent may head the table; say so where it is read first
        header += ("\nWARNING: reagents among these rows (reactive, explosive or very toxic; not solvents): "
                   + ", ".join(reag[:10]) + (f" and {len(reag) - 10} more" if len(reag) > 10 else "")
                   + "; read their safety data sheets before any contact")
    emit(top, a, cols, caution=True, header=header + data_note_line(top))
    return 0


#: header lines for the liquids of a table whose library row carries a note column
NOTE_LINES = {
    "data_note": "Data in doubt (boiling point or vapour pressure; `likewise show NAME` says which): ",
    "hsp_note": "HSP note (which published source is kept, or a published row that matches another "
                "compound's; `likewise show NAME`): ",
}


def data_note_line(rows) -> str:
    """Header lines naming the liquids of ``rows`` whose library data carry a ``data_note``
    (boiling point or vapour pressure in doubt) or an ``hsp_note`` (which published HSP source
    was kept and why), or ""."""
    out = ""
    for col, text in NOTE_LINES.items():
        if col not in rows:
            continue
        has = rows[col].astype("string").fillna("").str.strip() != ""
        if not has.any():
            continue
        names = rows.loc[has.to_numpy(), "name"].astype(str).tolist()
        more = f" and {len(names) - 6} more" if len(names) > 6 else ""
        out += "\n" + text + ", ".join(names[:6]) + more
    return out


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

    lib = library_from_args(a)
    rows = [find_liquid_or_hint(q, lib) for q in a.liquids]
    why = reactive_reasons(pd.DataFrame(rows))
    rows = [r.copy() for r in rows]
    for r, w in zip(rows, why):
        r["reactive_reason"] = w
    shown = for_display(_with_hazard_summary(pd.DataFrame(rows), lib))
    if a.format == "table":
        for _, r in shown.iterrows():
            for f in SHOW_FIELDS:
                if f in r.index:
                    v = r[f]
                    text = "" if (isinstance(v, float) and v != v) else v
                    lo, hi = r.get(f + "_low"), r.get(f + "_high")
                    if f in INTERVAL_FIELDS and pd.notna(lo) and pd.notna(hi) and text != "":
                        d = INTERVAL_FIELDS[f]
                        text = f"{float(v):.{d}f}   (90 % interval {float(lo):.{d}f} .. {float(hi):.{d}f})"
                    unit = SHOW_UNITS.get(f, "") if str(text) != "" else ""
                    print(f"{f:24s} {text}" + (f" {unit}" if unit and "interval" not in str(text) else "")
                          + (f" ({unit})" if unit and "interval" in str(text) else ""))
            print()
        print(show_footer(shown))
        return 0
    extra = [f + s for f in INTERVAL_FIELDS for s in ("_low", "_high") if f + s in shown.columns]
    emit(shown[[f for f in SHOW_FIELDS + extra if f in shown.columns]], a)
    return 0


def _with_hazard_summary(rows, lib):
    """``rows`` with ``hazard_class`` (CHEM21), ``h_statements`` and ``hazard_notes`` (flags such
    as toxic, CMR, peroxide former, or "no hazard data ...") from :mod:`selector.hazards`."""
    from .hazards import attach_hazards, hazard_columns, liquid_notes

    out = attach_hazards(rows, lib, columns=("hazard_class", "hazard_class_default", "h_statements"))
    # the default ranking spelled out only where the guide revised it (methanol, pyridine, ...)
    same = out["hazard_class_default"].astype(str) == out["hazard_class"].astype(str)
    out["hazard_class_default"] = out["hazard_class_default"].where(~same, "same (not revised)")
    out["hazard_notes"] = liquid_notes(out, hazard_columns(out))
    return out


def show_footer(rows) -> str:
    """Where the values of ``rows`` come from, by origin (library, your file, estimated, published)."""
    import pandas as pd

    origin = (rows["origin"].astype(str) if "origin" in rows.columns
              else pd.Series("library", index=rows.index))
    names = rows["name"].astype(str)
    lines = []
    if (origin == "library").any():
        lines.append("Library liquids: HSP from chemicals.solubility (source key above); properties from "
                     "thermo/chemicals (method names above).")
    for kind, text in (("user", "values from your file (--mine); properties listed in filled_from_library "
                        "come from the library liquid of the same name or CAS"),
                       ("estimated", "HSP and molar volume estimated from structure (likewise guess), with "
                        "their 90 % intervals where the file carries them; estimates, not measurements"),
                       ("published", "HSP from the published table the estimator is trained on "
                        "(chemicals.solubility, source key above); molar volume estimated from structure")):
        hit = (origin == kind).to_numpy()
        if hit.any():
            lines.append(f"{', '.join(names[hit])}: {text}.")
    if "hazard_class" in rows.columns:
        lines.append("Hazard class: CHEM21 method (Prat et al., Green Chem. 18 (2016) 288-296) on the GHS "
                     "statements of parameters/hazards.csv, quoted from memory of the EU CLP classification: "
                     "confirm them with the supplier's safety data sheet (`likewise hazard` shows the scores).")
    if "exposure_limit" in rows.columns and pd.to_numeric(rows["exposure_limit"], errors="coerce").notna().any():
        from .report import EXPOSURE_NOTE

        lines.append(EXPOSURE_NOTE)
    lines.append("Missing values are blank: no data, not zero.")
    return "\n".join(lines)


def find_liquid_or_hint(query, lib):
    """:func:`selector.library.find_liquid`, with the ``likewise guess`` hint for an unknown SMILES."""
    from .errors import SelectorError
    from .library import find_liquid

    try:
        return find_liquid(query, lib)
    except SelectorError as err:
        hint = unknown_liquid_hint(str(query), err, target=False)
        if hint is not err:
            raise hint from None
        raise


def cmd_list(a) -> int:
    from .errors import SelectorError
    from .filters import filter_mask

    lib = library_from_args(a)
    m = filter_mask(lib, **dict(filters_from_args(a), include_reactive=True))  # browsing: everything
    from .cautions import reactive_reasons

    cols = ["name", "cas", "delta_d", "delta_p", "delta_h", "molar_volume", "boiling_point_c",
            "flash_point_c", "hsp_source", "sources_disagree", "reagent"]
    if a.search:
        from .library import search

        out = search(a.search, lib.loc[m])
        if out.empty:
            raise SelectorError(f"no liquid's name, synonym or CAS number contains {a.search!r}"
                                + ("" if m.all() else " among those the filters let through")
                                + ": check the spelling or give a shorter part")
        cols.insert(1, "matched")   # the synonym or CAS number that matched, where not the name
    else:
        out = lib.loc[m].sort_values("name")
    n = len(out)
    out = for_display(out.assign(reagent=reactive_reasons(out)))
    emit(out.head(a.top) if a.top else out, a, cols, header=f"{n} {'liquid matches' if n == 1 else 'liquids match'}")
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
    # the story is for people: on stderr when the table is CSV or JSON, so stdout stays parseable
    story = sys.stderr if a.format != "table" else sys.stdout
    print(sc["label"], file=story)
    print(sc["story"], file=story)
    print(file=story)
    header = (f"Thinners for {r['name']} (dD {r['delta_d']}, dP {r['delta_p']}, dH {r['delta_h']}, "
              f"R0 {r['radius']} MPa^0.5), boiling point {f['boiling_point_c'][0]:g}-{f['boiling_point_c'][1]:g} C, "
              f"flash point >= {f['min_flash_point_c']:g} C"
              + (f", CHEM21 class {f['max_hazard_class']} or better (liquids without hazard data are "
                 "left out: nothing shows they are safer)" if f.get("max_hazard_class") else
                 "; hazard class: CHEM21 (unclassified = no hazard data here, not safe)")
              + "; the scenario wants a better class than its current thinner:"
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
    p.add_argument("--radius", type=number, metavar="R0", help="interaction radius R0 (MPa^0.5) for a named target")
    p.add_argument("--at", type=number, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--polarity-weight", type=number, default=0.3, metavar="W",
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
