"""Helpers shared by the command-line subcommands: filter options, output formats, errors.

Every subcommand module ``selector/cli_*.py`` defines ``register(subparsers)`` and is listed in
:data:`selector.cli.COMMAND_MODULES`; its handler returns an exit code.
"""
from __future__ import annotations

import argparse
import os
import re
import sys
from pathlib import Path

CAUTION = ("Caution: solvents can be flammable, toxic or reactive. Check the supplier's safety data "
           "sheet, work with ventilation and exposure limits in mind, and follow local regulation.")


#: Dashes that people type or paste for a minus sign: the minus sign, en dash, figure dash and
#: non-breaking hyphen.
MINUS_LOOKALIKES = dict.fromkeys(map(ord, "\u2212\u2013\u2012\u2011"), "-")


def _not_a_number(s: str, kind: str) -> str:
    """Why ``s`` was refused as ``kind``, with the fix when the decimal separator was a comma."""
    t = s.strip().translate(MINUS_LOOKALIKES)
    if re.fullmatch(r"[+-]?\d*,\d+", t):
        return f"{s!r} is not {kind}: write decimals with a point ({t.replace(',', '.')})"
    return f"{s!r} is not {kind}"


def number(s: str) -> float:
    """argparse type for a number: a typographic minus sign is read as "-"; a decimal comma
    ("17,5") is refused with the fix, since "1,500" could mean either.

    >>> number("\u22125")
    -5.0
    """
    try:
        return float(s.strip().translate(MINUS_LOOKALIKES))
    except ValueError:
        raise argparse.ArgumentTypeError(_not_a_number(s, "a number")) from None


def whole_number(s: str) -> int:
    """argparse type for a whole number (same minus-sign and comma handling as :func:`number`)."""
    try:
        return int(s.strip().translate(MINUS_LOOKALIKES))
    except ValueError:
        raise argparse.ArgumentTypeError(_not_a_number(s, "a whole number")) from None


def add_filter_args(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("candidate filters")
    g.add_argument("--only", metavar="NAMES", help="comma-separated liquids to consider (names or CAS)")
    g.add_argument("--without", metavar="NAMES", help="comma-separated liquids never to propose")
    g.add_argument("--bp", metavar="LOW:HIGH", help="boiling-point window in C, e.g. 80:180 or 100:")
    g.add_argument("--min-flash", type=number, metavar="C", help="minimum flash point in C "
                   "(liquids without flash-point data are dropped, except those known not to burn)")
    g.add_argument("--flash", metavar="LOW:HIGH", help="flash-point window in C, e.g. 23:100 or 40: "
                   "(liquids without flash-point data are dropped; with no upper end, liquids known "
                   "not to burn pass)")
    g.add_argument("--max-class", choices=["recommended", "problematic", "hazardous", "highly-hazardous"],
                   help="worst CHEM21 hazard class allowed for every liquid (unclassified liquids are dropped)")
    g.add_argument("--max-volume", type=number, metavar="CM3", help="maximum molar volume, cm3/mol")
    g.add_argument("--agreed-only", action="store_true",
                   help="only liquids whose published HSP sources agree within 1 MPa^0.5")
    g.add_argument("--halogen-free", action="store_true",
                   help="no liquids containing fluorine, chlorine, bromine or iodine (halogenated waste)")
    g.add_argument("--no-cmr", action="store_true",
                   help="no carcinogens, mutagens or reprotoxics, proven or suspected (H340/341/350/351/"
                        "360/361), and no liquids without hazard data")
    g.add_argument("--include-reactive", action="store_true",
                   help="also propose reagents that are not solvents: reactive, explosive or very toxic "
                   "liquids (acid chlorides, isocyanates, epoxides, benzene, ...); left out by default")
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
        return tuple(number(x) if x.strip() else None for x in (lo, hi))
    except argparse.ArgumentTypeError as e:
        raise ValueError(f"{option} expects numbers in C: {e}") from None


def filters_from_args(a) -> dict:
    f = {}
    if getattr(a, "only", None) is not None and not _names(a.only):
        raise ValueError(f"--only {a.only!r} names no liquid: give comma-separated names or CAS numbers")
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
    if getattr(a, "halogen_free", False):
        f["halogen_free"] = True
    if getattr(a, "no_cmr", False):
        f["cmr_free"] = True
    if getattr(a, "include_reactive", False):
        f["include_reactive"] = True
    return f


#: Options and positionals whose value is a file the command reads (checked before any work).
INPUT_FILE_OPTIONS = ("mine", "prices", "tests")
#: Commands whose --top bounds a search (blends), not only the rows shown: a file output keeps
#: their --top default instead of receiving every row.
SEARCH_TOP_COMMANDS = ("blend", "replace")
EMPTY_MESSAGE = "no liquids match the conditions given (try fewer or wider filters)"


def _label(dest: str) -> str:
    return (f"the {dest.upper()} argument" if dest in ("tests", "smiles", "target", "liquids")
            else "--" + dest.replace("_", "-"))


def _same_file(a, b) -> bool:
    try:
        return os.path.samefile(a, b)
    except (OSError, ValueError, TypeError):
        return False


def check_file_args(a) -> None:
    """Vet the files named on the command line before any work is done.

    Input files (:data:`INPUT_FILE_OPTIONS`) must exist. ``--output``/``-o`` must not be any
    file the command reads (every argument value that names an existing file counts), must not
    replace an existing file without ``--overwrite``, and never a read-only file, a folder or a
    file in a missing folder. ``--save-mine`` (merged into on purpose) gets the last three
    checks. Raises :class:`~selector.errors.SelectorError` (one line; exit code 2).
    """
    from .errors import SelectorError
    from .io import check_output_path

    args = vars(a)
    for dest in INPUT_FILE_OPTIONS:
        v = args.get(dest)
        if isinstance(v, str) and v:
            p = Path(v)
            if not p.exists():
                raise SelectorError(f"file not found: {p}")
            if p.is_dir():
                raise SelectorError(f"{p} is a folder, not a CSV file ({_label(dest)})")
    out = args.get("output")
    if out is not None and not str(out).strip():
        raise SelectorError("-o/--output was given an empty file name")
    if out:
        for dest, v in args.items():
            if dest in ("output", "func") or dest.startswith("_"):
                continue
            for item in (v if isinstance(v, (list, tuple)) else [v]):
                if isinstance(item, str) and item and os.path.isfile(item) and _same_file(item, out):
                    raise SelectorError(f"{out} is also an input of this command ({_label(dest)} {item}); "
                                        "write the output to another file")
        has_flag = "overwrite" in args
        check_output_path(out, overwrite=bool(args.get("overwrite")), make_parents=False,
                          option="--overwrite" if has_flag else None)
    mine_out = args.get("save_mine")
    if mine_out:
        if out and (_same_file(mine_out, out) if os.path.exists(out) and os.path.exists(mine_out)
                    else os.path.abspath(mine_out) == os.path.abspath(out)):
            raise SelectorError(f"--save-mine and -o name the same file ({out}): the table of estimates and "
                                "your liquids file must be two files")
        check_output_path(mine_out, overwrite=True, make_parents=False)


def library_from_args(a):
    """The library with ``--mine`` merged; first vets the command's files (:func:`check_file_args`),
    so a bad ``-o`` is refused before a long computation."""
    from .library import load_library

    check_file_args(a)
    mine = getattr(a, "mine", None)
    lib = load_library(mine)
    if mine:
        import sys

        from .library import unused_user_columns

        unused = unused_user_columns(mine)
        if unused:
            print(f"note: {mine}: {'column' if len(unused) == 1 else 'columns'} {', '.join(unused)} "
                  f"{'is' if len(unused) == 1 else 'are'} not used (check the spelling: e.g. bp, "
                  "fp, V, R0)", file=sys.stderr)
    return lib


def _top_count(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expects a whole number of rows, 1 or more; got {text!r}") from None
    if n < 1:
        raise argparse.ArgumentTypeError(f"must be 1 or more, got {n} (leave --top out for the default)")
    return n


class _TopAction(argparse.Action):
    """``--top N``: stores N and notes that it was given (a file output then keeps it)."""

    def __call__(self, parser, namespace, values, option_string=None):
        setattr(namespace, self.dest, values)
        namespace._top_given = True


class _OutputAction(argparse.Action):
    """``-o FILE``: stores FILE; unless ``--top`` is given, a file receives every row."""

    def __init__(self, option_strings, dest, all_rows=False, **kw):
        self.all_rows = all_rows
        super().__init__(option_strings, dest, **kw)

    def __call__(self, parser, namespace, values, option_string=None):
        setattr(namespace, self.dest, values)
        if self.all_rows and not getattr(namespace, "_top_given", False):
            namespace.top = None


def add_output_args(p: argparse.ArgumentParser, default_top: int | None = 20) -> None:
    """``--format``, ``-o/--output``, ``--overwrite`` and (unless ``default_top`` is None)
    ``--top N`` (N >= 1). ``default_top=0`` means every row by default. A file written with
    ``-o`` gets every row unless ``--top`` is given (except for :data:`SEARCH_TOP_COMMANDS`)."""
    command = p.prog.split()[-1] if p.prog else ""
    all_rows = default_top not in (None, 0) and command not in SEARCH_TOP_COMMANDS
    g = p.add_argument_group("output")
    g.add_argument("--format", choices=["table", "csv", "json"], default="table",
                   help="table (default, for reading), csv or json (for other programs)")
    g.add_argument("--output", "-o", metavar="FILE", action=_OutputAction, all_rows=all_rows,
                   help="write to FILE (atomically) instead of the screen; FILE must not exist yet "
                   "(see --overwrite) and its folder must exist")
    g.add_argument("--overwrite", action="store_true",
                   help="let -o replace an existing file (never an input file or a read-only one)")
    if default_top is None:
        return
    if default_top == 0:
        help_ = "rows to show (default: all)"
    elif all_rows:
        help_ = f"rows to show (default {default_top}; a file written with -o gets all rows unless --top is given)"
    else:
        help_ = f"rows to show (default {default_top}, also with -o)"
    g.add_argument("--top", type=_top_count, action=_TopAction, default=default_top or None,
                   metavar="N", help=help_)


def _fmt(spec):
    import pandas as pd

    def f(v):
        try:
            return "-" if pd.isna(v) else spec.format(v)  # no data: "-", not "nan" / "<NA>"
        except (TypeError, ValueError):
            return str(v)
    return f


def _sig3(v) -> str:
    """Three significant figures without an exponent (1000 -> "1000", 0.00123 -> "0.00123")."""
    import math

    import pandas as pd

    if pd.isna(v):
        return "-"
    v = float(v)
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    if abs(v) < 1e-3:
        return f"{v:.2e}"
    digits = max(0, 2 - int(math.floor(math.log10(abs(v)))))
    return f"{v:.{digits}f}"


#: temperature columns (C), shown to 0.1 C
_TEMPERATURE_COLUMNS = {"boiling_point_c", "flash_point_c", "melting_point_c", "autoignition_c", "bp_low_c",
                        "bp_high_c", "lowest_flash_point_c", "critical_temperature_c", "antoine_tmin_c",
                        "antoine_tmax_c", "temperature_c", "ucst_c"}


def _formatters(df) -> dict:
    """Per-column number formats for tables: data to the precision they carry (temperatures
    0.1 C, HSP and R0 0.01 MPa^0.5, volumes 0.1 cm3/mol), small quantities to 3 significant
    figures without exponents."""
    out = {}
    for c in df.columns:
        if not (df[c].dtype.kind == "f" or str(df[c].dtype) == "Float64"):
            continue  # integers and text print as they are
        if c in _TEMPERATURE_COLUMNS:
            out[c] = _fmt("{:.1f}")
        elif c.startswith("delta_") or c in ("radius", "r0"):
            out[c] = _fmt("{:.2f}")
        elif c in ("molar_volume", "molar_mass"):
            out[c] = _fmt("{:.1f}")
        elif c in ("vapour_pressure_kpa", "viscosity_mpa_s", "exposure_limit", "short_term_limit",
                   "evaporation_rate", "cost_per_litre", "hvap_kj_mol"):
            out[c] = _sig3
        else:
            out[c] = _fmt("{:.3f}")
    return out


def flash_texts(df):
    """``df`` with its flash-point columns as text for a table: the value (0.1 C), "not
    flammable" for liquids (or blends) known not to burn, "no data" for a missing value
    (:func:`selector.cautions.with_flash_texts`; a blank once meant both). Other formats keep
    the numbers."""
    from .cautions import with_flash_texts

    return with_flash_texts(df)


def short_notes(df):
    """``df`` with the long "no hazard data: treat as hazardous until ..." note shortened for a
    table (the full wording stays in CSV and JSON, and the table header says what it means)."""
    if "hazard_notes" not in df.columns:
        return df
    from .hazards import NO_DATA_NOTE

    out = df.copy()
    out["hazard_notes"] = out["hazard_notes"].astype(object).where(out["hazard_notes"].notna(), "")
    out["hazard_notes"] = out["hazard_notes"].astype(str).str.replace(NO_DATA_NOTE, SHORT_NO_DATA_NOTE, regex=False)
    return out


#: the table form of :data:`selector.hazards.NO_DATA_NOTE`
SHORT_NO_DATA_NOTE = "no hazard data (treat as hazardous)"


#: unit notes for the columns a table may carry
_HSP_UNITS = ((("delta_d", "delta_p", "delta_h"), "dD/dP/dH"), (("ra",), "Ra"), (("radius",), "R0"))
_UNITS = (
    (("boiling_point_c", "flash_point_c", "bp_low_c", "bp_high_c", "lowest_flash_point_c"), "temperatures in C"),
    (("molar_volume",), "molar volume in cm3/mol"),
    (("vapour_pressure_kpa",), "vapour pressure in kPa at 25 C"),
    (("viscosity_mpa_s",), "viscosity in mPa s"),
    (("evaporation_rate",), "evaporation rate relative to n-butyl acetate = 1"),
    (("blend",), "blend shares by volume"),
    (("evaporated_fraction", "remaining_fraction"), "fractions (evaporated, remaining, phi_ of each liquid) by volume"),
    (("density", "density_g_cm3"), "density in g/cm3"),
    (("expansion_coeff",), "expansion coefficient in 1/K"),
    (("molar_mass",), "molar mass in g/mol"),
)


def units_line(columns) -> str:
    """One "Units: ..." line for the columns present, or ""."""
    cols = set(columns)
    hsp = [lab for keys, lab in _HSP_UNITS if cols & set(keys)]   # only the Hansen quantities shown
    parts = ([", ".join(hsp) + " in MPa^0.5"] if hsp else []) + [text for keys, text in _UNITS if cols & set(keys)]
    return ("Units: " + "; ".join(parts) + "; - = no data") if parts else ""


def emit(df, a, columns=None, caution: bool = False, header: str | None = None,
         empty: str = EMPTY_MESSAGE) -> None:
    """Print or write a result table in the chosen format.

    An empty table prints ``empty`` (one line) instead of an empty grid. ``-o`` is vetted by
    :func:`check_file_args` and written atomically. In CSV and JSON the ``header`` lines and the
    caution go to stderr, so that nothing the table would have said is lost.
    """
    from .io import to_csv_text, to_json_text, write_atomic

    out = getattr(a, "output", None)
    check_file_args(a)
    fmt = getattr(a, "format", "table")
    df = df.copy(deep=False)
    df.attrs = {}   # the header says what they held; pandas deep-copies attrs on every column access
    if fmt == "table":
        df = short_notes(flash_texts(df))
    if columns is not None:
        df = df[[c for c in columns if c in df.columns]]
    if fmt == "csv":
        text = to_csv_text(df)
    elif fmt == "json":
        text = to_json_text(df)
    elif len(df) == 0:
        text = (header + "\n" if header else "") + empty + "\n"
    else:
        import pandas as pd

        with pd.option_context("display.max_rows", 500, "display.max_columns", 50,
                               "display.width", 200, "display.float_format", "{:.3f}".format):
            text = df.to_string(index=False, formatters=_formatters(df), na_rep="-")
        units = units_line(df.columns)
        header = "\n".join(x for x in (header, units) if x)
        if header:
            text = header + "\n" + text
        if caution:
            text += "\n\n" + CAUTION
        text += "\n"
    if fmt != "table":
        # the table's header lines (warnings, uncertain or reacting pairs) and the caution must not
        # vanish with the machine-readable formats: they go to stderr, stdout stays CSV or JSON
        for extra in (header, CAUTION if caution else None):
            if extra:
                print(extra, file=sys.stderr)
    if len(df) == 0 and (fmt != "table" or out):
        print(empty, file=sys.stderr)
    if out:
        write_atomic(Path(out), text, make_parents=False)
        note = ""
        top = getattr(a, "top", None)
        if top and not getattr(a, "_top_given", False) and len(df) >= top:
            note = f" (the --top default of {top}; give --top N for more)"
        print(f"wrote {len(df)} row{'' if len(df) == 1 else 's'} to {out}{note}", file=sys.stderr)
    else:
        sys.stdout.write(text if text.endswith("\n") else text + "\n")
