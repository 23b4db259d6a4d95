"""Helpers shared by the command-line subcommands: filter options, output formats, errors.

Every subcommand module ``selector/cli_*.py`` defines ``register(subparsers)`` and is listed in
:data:`selector.cli.COMMAND_MODULES`; its handler returns an exit code.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

CAUTION = ("Caution: solvents can be flammable, toxic or reactive. Check the supplier's safety data "
           "sheet, work with ventilation and exposure limits in mind, and follow local regulation.")


def add_filter_args(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("candidate filters")
    g.add_argument("--only", metavar="NAMES", help="comma-separated liquids to consider (names or CAS)")
    g.add_argument("--without", metavar="NAMES", help="comma-separated liquids never to propose")
    g.add_argument("--bp", metavar="LOW:HIGH", help="boiling-point window in C, e.g. 80:180 or 100:")
    g.add_argument("--min-flash", type=float, metavar="C", help="minimum flash point in C "
                   "(liquids without flash-point data are dropped)")
    g.add_argument("--flash", metavar="LOW:HIGH", help="flash-point window in C, e.g. 23:100 or 40: "
                   "(liquids without flash-point data are dropped)")
    g.add_argument("--max-class", choices=["recommended", "problematic", "hazardous", "highly-hazardous"],
                   help="worst CHEM21 hazard class allowed for every liquid (unclassified liquids are dropped)")
    g.add_argument("--max-volume", type=float, metavar="CM3", help="maximum molar volume, cm3/mol")
    g.add_argument("--agreed-only", action="store_true",
                   help="only liquids whose published HSP sources agree within 1 MPa^0.5")
    g.add_argument("--mine", metavar="CSV", help="CSV of your own liquids merged over the library")


def _names(s):
    return [x.strip() for x in s.split(",") if x.strip()] if s else None


def parse_window(s, option="--bp"):
    if not s:
        return None
    if ":" not in s:
        raise ValueError(f"{option} expects LOW:HIGH in C (either side may be empty), got {s!r}")
    lo, hi = s.split(":", 1)
    try:
        return (float(lo) if lo.strip() else None, float(hi) if hi.strip() else None)
    except ValueError:
        raise ValueError(f"{option} expects numbers in C, got {s!r}") from None


def filters_from_args(a) -> dict:
    f = {}
    if getattr(a, "only", None):
        f["include"] = _names(a.only)
    if getattr(a, "without", None):
        f["exclude"] = _names(a.without)
    if getattr(a, "bp", None):
        f["boiling_point_c"] = parse_window(a.bp)
    if getattr(a, "flash", None):
        f["flash_point_c"] = parse_window(a.flash, "--flash")
    if getattr(a, "max_class", None):
        f["max_hazard_class"] = a.max_class.replace("-", " ")
    if getattr(a, "min_flash", None) is not None:
        f["min_flash_point_c"] = a.min_flash
    if getattr(a, "max_volume", None) is not None:
        f["max_molar_volume"] = a.max_volume
    if getattr(a, "agreed_only", False):
        f["consistent_sources_only"] = True
    return f


def library_from_args(a):
    from .library import load_library

    return load_library(getattr(a, "mine", None))


def add_output_args(p: argparse.ArgumentParser, default_top: int | None = 20) -> None:
    g = p.add_argument_group("output")
    g.add_argument("--format", choices=["table", "csv", "json"], default="table",
                   help="table (default, for reading), csv or json (for other programs)")
    g.add_argument("--output", "-o", metavar="FILE", help="write to FILE (atomically) instead of the screen")
    if default_top is not None:
        g.add_argument("--top", type=int, default=default_top, metavar="N", help=f"rows to show (default {default_top})")


def emit(df, a, columns=None, caution: bool = False, header: str | None = None) -> None:
    """Print or write a result table in the chosen format."""
    from .io import to_csv_text, to_json_text, write_atomic

    if columns is not None:
        df = df[[c for c in columns if c in df.columns]]
    fmt = getattr(a, "format", "table")
    if fmt == "csv":
        text = to_csv_text(df)
    elif fmt == "json":
        text = to_json_text(df)
    else:
        import pandas as pd

        with pd.option_context("display.max_rows", 500, "display.max_columns", 50,
                               "display.width", 200, "display.float_format", "{:.3f}".format):
            text = df.to_string(index=False)
        if header:
            text = header + "\n" + text
        if caution:
            text += "\n\n" + CAUTION
        text += "\n"
    out = getattr(a, "output", None)
    if out:
        write_atomic(Path(out), text)
        print(f"wrote {len(df)} rows to {out}", file=sys.stderr)
    else:
        sys.stdout.write(text if text.endswith("\n") else text + "\n")
