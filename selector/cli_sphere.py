"""Subcommand ``sphere``: fit a solute's Hansen sphere from a CSV of lab tests."""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from .cli_common import CAUTION, add_filter_args, filters_from_args, library_from_args, number, whole_number

NEXT_COLUMNS = ["name", "cas", "delta_d", "delta_p", "delta_h", "red", "p_inside", "information",
                "boiling_point_c", "flash_point_c", "hazard_class"]


def register(sub) -> None:
    from .spheres import DEFAULT_BOOTSTRAP

    p = sub.add_parser(
        "sphere", help="fit a solute's Hansen sphere from your lab tests",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        description=(
            "Fit the centre (dD, dP, dH) and radius R0 of a solute's Hansen sphere from a CSV of\n"
            "lab tests, with intervals, the tests the sphere gets wrong, and the liquids worth\n"
            "testing next.\n\n"
            "CSV columns: solvent (library name or CAS, or a blend 'toluene [60] & ethanol [40]'),\n"
            "or delta_d,delta_p,delta_h for a liquid of your own; an outcome column (outcome,\n"
            "result, dissolved or good: good/bad, yes/no, true/false, 1/0) or numeric grades with\n"
            "--pass-mark; optional weight and temperature (C)."))
    p.add_argument("tests", help="CSV file of lab tests")
    g = p.add_argument_group("reading the tests")
    g.add_argument("--outcome", metavar="COLUMN", help="column holding the outcome or grade")
    g.add_argument("--pass-mark", type=number, metavar="GRADE",
                   help="read the outcome as numeric grades; this grade and above count as good")
    g.add_argument("--scale", metavar="LOW:HIGH", help="the grade scale, e.g. 1:6 (default: grades seen)")
    g.add_argument("--at", type=number, default=25.0, metavar="C",
                   help="test temperature in C for rows without one (default 25)")
    f = p.add_argument_group("fitting")
    f.add_argument("--two", action="store_true",
                   help="also try two spheres (adopted only if the BIC prefers them)")
    f.add_argument("--bootstrap", type=whole_number, default=DEFAULT_BOOTSTRAP, metavar="N",
                   help=f"bootstrap resamples for the intervals (default {DEFAULT_BOOTSTRAP}; 0 = none)")
    f.add_argument("--seed", type=whole_number, default=0, help="random seed (default 0)")
    n = p.add_argument_group("next tests")
    n.add_argument("--next", type=whole_number, default=5, metavar="N", help="liquids to suggest testing next (default 5)")
    n.add_argument("--shelf", metavar="NAMES", help="comma-separated liquids you have on the shelf")
    add_filter_args(p)
    o = p.add_argument_group("output")
    o.add_argument("--format", choices=["table", "csv", "json"], default="table",
                   help="table (default), csv or json")
    o.add_argument("--part", choices=["sphere", "misfits", "next", "tests"], default=None,
                   help="which table --format csv writes (default sphere)")
    o.add_argument("--output", "-o", metavar="FILE", help="write to FILE (atomically) instead of the screen")
    o.add_argument("--overwrite", action="store_true",
                   help="let -o replace an existing file (never the lab-test file or a read-only one)")
    p.set_defaults(func=cmd_sphere)


def _scale(text):
    if not text:
        return None
    if ":" not in text:
        raise ValueError(f"--scale expects LOW:HIGH, e.g. 1:6, got {text!r}")
    lo, hi = text.split(":", 1)
    try:
        return (float(lo), float(hi))
    except ValueError:
        raise ValueError(f"--scale expects numbers, e.g. 1:6, got {text!r}") from None


def _sphere_table(fit):
    import pandas as pd

    rows = []
    for i, (s, iv) in enumerate(zip(fit.spheres, fit.all_intervals)):
        r = {"sphere": i + 1}
        for k, v in zip(["delta_d", "delta_p", "delta_h", "radius"], [s.delta_d, s.delta_p, s.delta_h, s.radius]):
            r[k] = v
            r[k + "_low"], r[k + "_high"] = iv[k]
        r["score"] = fit.score
        r["tests"] = len(fit.tests)
        r["misfits"] = len(fit.misfits)
        rows.append(r)
    return pd.DataFrame(rows)


def cmd_sphere(a) -> int:
    import pandas as pd

    from .io import to_csv_text, to_json_text, write_atomic
    from .spheres import fit_sphere

    if a.part is not None and a.format != "csv":
        raise ValueError("--part picks the table that --format csv writes: give --format csv too")
    if a.next < 0:
        raise ValueError(f"--next must be 0 (no suggestions) or more, got {a.next}")
    lib = library_from_args(a)
    fit = fit_sphere(a.tests, seed=a.seed, bootstrap=a.bootstrap, outcome=a.outcome,
                     threshold=a.pass_mark, scale=_scale(a.scale), temperature=a.at,
                     two_spheres=a.two, library=lib, name=Path(a.tests).stem)
    shelf = [x.strip() for x in a.shelf.split(",") if x.strip()] if a.shelf else None
    nxt = (fit.suggest_tests(a.next, shelf=shelf, temperature=a.at, **filters_from_args(a))
           if a.next > 0 else pd.DataFrame())
    if a.format == "json":
        doc = {
            "method": fit.method, "score": fit.score, "tests": len(fit.tests),
            "spheres": json.loads(to_json_text(_sphere_table(fit))),
            "warnings": fit.warnings,
            "misfits": json.loads(to_json_text(fit.misfits)),
            "next_tests": json.loads(to_json_text(nxt[[c for c in NEXT_COLUMNS if c in nxt.columns]])),
            "caution": CAUTION,
        }
        text = json.dumps(doc, indent=1, ensure_ascii=False) + "\n"
    elif a.format == "csv":
        part = {"sphere": _sphere_table(fit), "misfits": fit.misfits,
                "next": nxt[[c for c in NEXT_COLUMNS if c in nxt.columns]],
                "tests": fit.tests}[a.part or "sphere"]
        text = to_csv_text(part)
    else:
        col = fit.tests.attrs.get("outcome_column")
        lines = [f"Sphere fitted to {len(fit.tests)} tests ({fit.method}"
                 + (f"; outcome read from the column '{col}'" if col else "")
                 + f"); fit score {fit.score:.3f} (1 = every test classified right)"]
        for i, (s, iv) in enumerate(zip(fit.spheres, fit.all_intervals)):
            if len(fit.spheres) > 1:
                lines.append(f"sphere {i + 1}:")
            for k, lab, v in zip(["delta_d", "delta_p", "delta_h", "radius"], ["dD", "dP", "dH", "R0"],
                                 [s.delta_d, s.delta_p, s.delta_h, s.radius]):
                lo, hi = iv[k]
                lines.append(f"  {lab:3s} {v:6.2f}   interval {lo:6.2f} .. {hi:6.2f} MPa^0.5")
        if fit.surface_note():
            lines.append("  " + fit.surface_note())
        if fit.warnings:
            lines.append("")
            lines += [f"note: {w}" for w in fit.warnings]
        lines.append("")
        if len(fit.misfits):
            lines.append("Tests the sphere gets wrong:")
            with pd.option_context("display.width", 200, "display.float_format", "{:.2f}".format):
                lines.append(fit.misfits.to_string(index=False))
        else:
            lines.append("Every test is classified right.")
        if len(nxt):
            lines.append("")
            lines.append("Worth testing next (p_inside: share of plausible spheres that contain it):")
            lines.append("Units: dD/dP/dH in MPa^0.5; temperatures in C; RED = Ra/R0 of the fitted sphere; "
                         "- or no data = not known")
            from .cautions import with_flash_texts

            with pd.option_context("display.width", 200, "display.float_format", "{:.2f}".format):
                shown = with_flash_texts(nxt[[c for c in NEXT_COLUMNS if c in nxt.columns]], fmt="{:.0f}")
                lines.append(shown.to_string(index=False))
            lines += [f"- {n}" for n in nxt.attrs.get("notes", [])]
        lines += ["", CAUTION]
        text = "\n".join(lines) + "\n"
    if a.output:
        write_atomic(Path(a.output), text, make_parents=False)
        print(f"wrote {a.output}", file=sys.stderr)
    else:
        sys.stdout.write(text)
    return 0
