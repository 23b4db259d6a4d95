"""Subcommands ``blend``, ``replace``, ``hazard`` and ``dry``."""
from __future__ import annotations

import argparse

from .cli_common import (add_filter_args, add_output_args, emit,
                          filters_from_args, library_from_args, number, whole_number)

BLEND_COLUMNS = ["blend", "by_mass", "n_components", "delta_d", "delta_p", "delta_h", "ra", "red", "non_solvent_pair",
                 "hazard_class", "bp_low_c", "bp_high_c", "lowest_flash_point_c", "lowest_flash_component",
                 "density", "cost_per_litre", "cost_per_kg", "pareto", "hazard_notes", "mixing_note"]
REPLACE_COLUMNS = ["role", "blend", "by_mass", "ra", "red", "hazard_class", "boiling_point_c", "bp_low_c", "bp_high_c",
                   "evaporation_rate",
                   "viscosity_mpa_s", "lowest_flash_point_c", "mismatch", "score", "hazard_notes",
                   "mixing_note"]
CLASS_CHOICES = ["recommended", "problematic", "hazardous", "highly-hazardous"]


def _filters(a) -> dict:
    return filters_from_args(a)  # includes --flash and --max-class


def _label(df):
    from .blends import blend_labels

    df = df.copy()
    df.insert(0, "blend", blend_labels(df, "volume"))
    if "mass_fractions" in df.columns:
        df.insert(1, "by_mass", blend_labels(df, "mass"))
    return df


#: Header line for tables with a ``by_mass`` column.
BY_MASS_NOTE = ("\nShares in blend are by volume; by_mass is the same blend by weight, for the balance "
                "(ideal mixing, 25 C densities; blank where a density is unknown).")


def _prices(path):
    from .blends import read_price_list

    return read_price_list(path, what=f"the price list {path}")


def _target(a, lib):
    from .cli_core import target_from_text

    return target_from_text(a.target, a.radius, lib)


def cmd_blend(a) -> int:
    from .blends import find_blends, price_error_named
    from .errors import SelectorError

    lib = library_from_args(a)
    prices = _prices(a.prices) if a.prices else {}
    try:
        res = find_blends(_target(a, lib), max_components=a.parts, min_fraction=a.min_share, temperature=a.at,
                          top=a.top, library=lib, max_uses=a.max_uses, **prices,
                          require_miscible=not a.skip_mixing_check, **_filters(a))
    except SelectorError as e:   # the price list's problems, under the file's name
        named = price_error_named(e, f"the price list {a.prices}") if a.prices else None
        if named is not None:
            raise named from None
        raise
    from .cli_core import describe_target, target_notes

    tgt = res.attrs["target"]
    mix = res.attrs["miscibility"]
    mix = ("single liquids only" if mix.startswith("single") else
           "pairs NOT checked for miscibility (--skip-mixing-check): test every mix" if mix == "not checked" else
           f"every pair miscible by the HSP model and the reference tables ({mix})")
    header = (f"Blends for {describe_target(tgt, lib)} at {a.at:g} C; {res.attrs['candidates']} candidate "
              f"liquids; smallest share {a.min_share:g}; {mix}. Hazard class = worst component (CHEM21)."
              + target_notes(tgt))
    if res.attrs.get("mixing_warning"):
        header += "\n" + res.attrs["mixing_warning"]
    header += reacting_line(res.attrs.get("reacting_pairs", []))
    if res.attrs.get("price_notes"):
        header += "\nPrices: " + "; ".join(res.attrs["price_notes"])
    header += BY_MASS_NOTE
    if "pareto" in res.attrs:
        header += _front_line(res, a.front)
        if a.front:
            res = res.attrs["pareto"].assign(pareto=True)
    elif a.front:
        raise ValueError("--front lists the cost-versus-Ra front: give --prices too")
    from .blends import estimated_density_note

    dnote = estimated_density_note(res, lib)
    header += ("\n" + dnote) if dnote else ""
    res, est_cols, note = _with_estimated(res, lib, a)
    cols = [c for c in BLEND_COLUMNS if c != "red" or res["red"].notna().any()] + est_cols
    emit(_label(res), a, cols + (["components", "fractions", "mass_fractions"] if a.format != "table" else []),
         caution=True, header=header + note)
    return 0


def reacting_line(pairs) -> str:
    """Header line naming the pairs of candidates that are never blended because they react
    (up to eight; a count beyond), "" when none."""
    if not pairs:
        return ""
    if len(pairs) > 8:
        return (f"\n{len(pairs)} pairs of these candidates react (acid + amine, amine + ester or ketone, ...) "
                "and are never blended (pair screen; likewise mix A B says why)")
    shown = ", ".join(f"{a} + {b}" for a, b in pairs)
    return f"\nNever blended, as they react (pair screen; likewise mix A B says why): {shown}"


def _front_line(res, listing: bool = False) -> str:
    """Header line on the cost-versus-Ra front: its size, its cheapest and best rows, and how many
    of its rows the table leaves out (``--max-uses``, ``--top``); ``listing``: the table is the
    front itself (``--front``)."""
    from .blends import blend_labels

    front, basis = res.attrs["pareto"], res.attrs["cost_basis"]
    unit = "per litre" if basis == "cost_per_litre" else "per kg"
    lab = blend_labels(front, "volume")
    cheap = int(front[basis].to_numpy(float).argmin())
    shown = int(res["pareto"].sum())
    where = " inside the sphere (RED <= 1)" if getattr(res.attrs.get("target"), "radius", None) else ""
    line = (f"\nCost-versus-Ra front (pareto){where}: {len(front)} {'blend' if len(front) == 1 else 'blends'}, from {lab[0]} (Ra {front['ra'].iloc[0]:.3f}, "
            f"{front[basis].iloc[0]:.3f} {unit}) to the cheapest, {lab[cheap]} (Ra {front['ra'].iloc[cheap]:.3f}, "
            f"{front[basis].iloc[cheap]:.3f} {unit})")
    if listing:
        line += "; the table lists all of them, best Ra first (--top does not apply)"
    elif shown < len(front):
        gone = len(front) - shown
        line += f"; {gone} of them {'is' if gone == 1 else 'are'} not in this table (--front lists them all)"
    return line


def _with_estimated(res, lib, a):
    """``res`` with an ``estimated`` column naming the components whose HSP are estimated from
    structure (:func:`selector.library.hsp_estimated`), the columns to add and a header note."""
    from .library import estimated_components

    res = res.copy()
    res["estimated"] = estimated_components(res, lib)
    used = res["estimated"].ne("").any()
    note = ("\nestimated = components whose HSP are estimated from structure (not measured): the blend "
            "point is as uncertain as they are") if used else ""
    return res, (["estimated"] if used or a.format != "table" else []), note


def cmd_replace(a) -> int:
    from .blends import substitutes

    if a.solute_radius is not None and not a.solute:
        raise ValueError("--solute-radius is the R0 of the solute named with --solute: give --solute too")
    lib = library_from_args(a)
    solute = None
    if a.solute:
        from .cli_core import target_from_text

        solute = target_from_text(a.solute, a.solute_radius, lib)
    res = substitutes(a.liquid, solute=solute, max_components=a.parts, min_fraction=a.min_share,
                      temperature=a.at, top=a.top, library=lib, include_energetic=a.include_energetic,
                      **_filters(a))
    note = res.attrs.get("regulatory_note") or ""
    header = (f"Safer candidates for {res.attrs['replaced']} (first row; class "
              f"{res['hazard_class'].iloc[0]}{'; ' + note if note else ''}). Only liquids with a strictly "
              "better CHEM21 class; score = distance + 0.5 x property mismatch, lower is better. A blend's "
              "boiling_point_c is the middle of its boiling range (bp_low_c to bp_high_c) and its evaporation "
              "rate the volume-weighted mean: the parts still leave at their own rates (likewise dry)."
              + "".join(f"\nWARNING: {w}" for w in res.attrs.get("warnings", [])))
    from .blends import estimated_density_note

    dnote = estimated_density_note(res, lib)
    header += ("\n" + dnote) if dnote else ""
    res, est_cols, est_note = _with_estimated(res, lib, a)
    cols = [c for c in REPLACE_COLUMNS if c != "red" or res["red"].notna().any()] + est_cols
    emit(_label(res), a, cols + (["components", "fractions"] if a.format != "table" else []),
         caution=True, header=header + BY_MASS_NOTE + est_note)
    return 0


def cmd_hazard(a) -> int:
    import pandas as pd

    from .hazards import hazard

    lib = library_from_args(a)
    recs = [hazard(q, lib) for q in a.liquids]
    rows = []
    for r in recs:
        d = r.as_dict()
        d["statements"] = " ".join(r.statements)
        src = d.pop("sources")
        d["statements_source"] = src["statements"]
        d["flash_point_basis"] = src["flash_point"]
        d.pop("caution")
        rows.append(d)
    df = pd.DataFrame(rows)
    for c in ("safety_score", "health_score", "environment_score"):
        df[c] = pd.array(df[c].astype(float).round(), dtype="Int64")   # whole numbers; <NA> = no data
    df["peroxide_former"] = pd.array(df["peroxide_former"].tolist(), dtype="boolean")  # <NA>: no data
    header = ("CHEM21 scores 1 (best) to 10 (Prat et al., Green Chem. 18 (2016) 288; tables from memory). "
              "Statements from memory: confirm with the supplier's safety data sheet.")
    if a.format == "table":
        for c in ("safety_score", "health_score", "environment_score", "peroxide_former"):
            df[c] = df[c].astype(object).where(df[c].notna(), "-")   # "- = no data", as elsewhere
        # a sentence the same on every row goes once into the header, so that a row fits a terminal
        for col, label in (("statements_source", "Statements"), ("flash_point_basis", "Flash points")):
            if col in df and df[col].astype(str).nunique() == 1:
                header += f"\n{label}: {df[col].iloc[0]}"
                df = df.drop(columns=col)
    emit(df, a, None, caution=True, header=header)
    return 0


def cmd_dry(a) -> int:
    from .drying import drying_path

    lib = library_from_args(a)
    comps = [c.strip() for c in a.components.split(",") if c.strip()]
    try:
        shares = [float(x) for x in a.shares.split(",")]
    except ValueError:
        raise ValueError(f"--shares expects comma-separated volume fractions, got {a.shares!r}") from None
    if a.radius is not None and not a.target:
        raise ValueError("--radius is the R0 of the target named with --target: give --target too")
    tgt = _target(a, lib) if a.target else None
    p = drying_path(comps, shares, temperature=a.at, target=tgt, library=lib,
                    relative_humidity=a.humidity, activity=a.model, must_stay_until=a.keep_until,
                    points=a.points)
    lines = [p.attrs["message"]] + [f"warning: {w}" for w in p.attrs["warnings"]]
    if a.format != "table":
        lines.append(p.attrs["caution"])     # with the header on stderr (emit)
    emit(p, a, None, caution=False, header="\n".join(lines))
    if a.format == "table":
        print(p.attrs["caution"])
    return 1 if (a.strict and p.attrs["flag"]) else 0


def _blend_options(p, parts_default=3):
    p.add_argument("--parts", type=whole_number, choices=[1, 2, 3], default=parts_default,
                   help=f"most liquids per blend (default {parts_default})")
    p.add_argument("--min-share", type=number, default=0.05, metavar="F",
                   help="smallest volume fraction of any liquid in a blend (default 0.05)")
    p.add_argument("--at", type=number, default=25.0, metavar="C", help="use temperature in C (default 25)")


def register(sub) -> None:
    p = sub.add_parser("blend", help="design blends of one to three liquids for a target",
                       description="Best single liquids and blends of two or three whose volume-weighted "
                       "HSP land on TARGET ('dD,dP,dH[,R0]' in MPa^0.5 or a liquid name). Fractions are the "
                       "exact optimum; every pair in a blend is miscible at the use temperature (unless "
                       "--skip-mixing-check).",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="examples:\n  likewise blend 17.9,6.1,6.4,8.6 --bp 100:200 --flash 23:\n"
                       "  likewise blend 18.5,9,5,4 --parts 2 --max-class problematic --format csv -o b.csv")
    p.add_argument("target", help="'dD,dP,dH[,R0]' in MPa^0.5, or a liquid name, CAS or SMILES")
    p.add_argument("--radius", type=number, metavar="R0", help="interaction radius R0 for a named target")
    _blend_options(p)
    p.add_argument("--prices", metavar="CSV", help="CSV with name and cost_per_litre or cost_per_kg: only "
                   "priced liquids are used and the cost-versus-Ra front is marked")
    p.add_argument("--front", action="store_true",
                   help="with --prices: list the whole cost-versus-Ra front instead of the ranked blends "
                   "(all of it: --top does not apply)")
    p.add_argument("--max-uses", type=whole_number, default=3, metavar="N",
                   help="a liquid appears in at most N rows (default 3)")
    p.add_argument("--skip-mixing-check", action="store_true",
                   help="do not require every pair to be miscible (not recommended)")
    add_filter_args(p)
    add_output_args(p)
    p.set_defaults(func=cmd_blend)

    p = sub.add_parser("replace", help="safer liquids or blends to replace a liquid",
                       description="Candidates close to LIQUID in Hansen space (or inside a solute's "
                       "sphere) with a strictly better CHEM21 hazard class and similar boiling point, "
                       "evaporation rate and viscosity. LIQUID is the first row.",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="examples:\n  likewise replace NMP\n  likewise replace toluene "
                       "--solute 17.9,6.1,6.4,8.6 --bp 100:200")
    p.add_argument("liquid", help="the liquid to replace (name, synonym, CAS or SMILES)")
    p.add_argument("--solute", metavar="TARGET", help="'dD,dP,dH[,R0]' or a name: judge candidates "
                   "against this solute instead of the liquid's own HSP")
    p.add_argument("--solute-radius", type=number, metavar="R0", help="R0 for a named solute")
    p.add_argument("--include-energetic", action="store_true",
                   help="also propose liquids with a high energy of decomposition (nitroethane); "
                   "left out by default")
    _blend_options(p, parts_default=2)
    add_filter_args(p)
    add_output_args(p)
    p.set_defaults(func=cmd_replace)

    p = sub.add_parser("hazard", help="CHEM21 safety/health/environment scores and class of liquids")
    p.add_argument("liquids", nargs="+", help="names, synonyms, CAS numbers or SMILES")
    p.add_argument("--mine", metavar="CSV", help="CSV of your own liquids merged over the library")
    add_output_args(p, default_top=None)
    p.set_defaults(func=cmd_hazard)

    p = sub.add_parser("dry", help="follow a blend's composition and RED while it evaporates",
                       description="Evaporation of a blend (Raoult's law, or Flory-Huggins with HSP): "
                       "composition and RED versus the evaporated volume fraction, the tail solvent, and "
                       "a warning when the liquid leaves the sphere too early.",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="example:\n  likewise dry 'toluene,butyl acetate' --shares 0.4,0.6 "
                       "--target 17.9,6.1,6.4,8.6 --keep-until 0.9")
    p.add_argument("components", help="comma-separated liquids")
    p.add_argument("--shares", required=True, metavar="F1,F2", help="initial volume fractions (sum 1)")
    p.add_argument("--target", metavar="TARGET", help="'dD,dP,dH[,R0]' or a liquid name")
    p.add_argument("--radius", type=number, metavar="R0", help="R0 for a named target")
    p.add_argument("--at", type=number, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--humidity", type=number, default=0.0, metavar="PCT", help="relative humidity of the air, %% "
                   "(acts on water only; default 0)")
    p.add_argument("--model", choices=["raoult", "hsp", "unifac"], default="raoult",
                   help="raoult (ideal, default), hsp (Flory-Huggins activity from Hansen parameters) "
                   "or unifac (original UNIFAC from the thermo library)")
    p.add_argument("--keep-until", type=number, default=0.9, metavar="F",
                   help="warn when RED reaches 1 before this fraction has evaporated (default 0.9)")
    p.add_argument("--points", type=whole_number, default=21, metavar="N", help="rows in the table (default 21)")
    p.add_argument("--strict", action="store_true", help="exit status 1 when the warning is raised")
    p.add_argument("--mine", metavar="CSV", help="CSV of your own liquids merged over the library")
    add_output_args(p, default_top=None)
    p.set_defaults(func=cmd_dry)
