"""Subcommand ``guess``: HSP and molar volume of a molecule from its SMILES (or a CSV batch)."""
from __future__ import annotations

import argparse

from .cli_core import INTERVAL_FIELDS
from .errors import SelectorError, plural

GUESS_COLUMNS = ["name", "smiles", "source", "hsp_source", "delta_d", "delta_d_low", "delta_d_high",
                 "delta_p", "delta_p_low", "delta_p_high", "delta_h", "delta_h_low", "delta_h_high",
                 "molar_volume", "molar_volume_low", "molar_volume_high", "in_domain", "similarity",
                 "nearest", "duplicate_of", "message"]
SHORT_COLUMNS = ["name", "smiles", "source", "delta_d", "delta_p", "delta_h", "molar_volume",
                 "in_domain", "message"]
#: digits of the values and their intervals in the table format (HSP 0.01 MPa^0.5, volume 0.1 cm3/mol;
#: the same table serves `show`)
DIGITS = INTERVAL_FIELDS

NOTE = ("Source: 'estimated' = estimated from structure, with 90 % prediction intervals (out-of-fold "
        "calibrated); 'library' = the library's published values; 'published' = HSP from the published "
        "table the model is trained on (chemicals.solubility, source key in hsp_source), molar volume "
        "estimated. Estimates are not measurements: confirm before use.")



def register(sub) -> None:
    p = sub.add_parser(
        "guess", help="estimate HSP and molar volume from a SMILES string or a CSV of them",
        description=("Estimate delta_d, delta_p, delta_h (MPa^0.5) and molar volume (cm3/mol, 25 C) "
                     "of a molecule from its SMILES, with 90 % intervals and a check of how close it "
                     "is to the molecules the model was trained on. A molecule already in the "
                     "library is answered with its published values ('library'); one in the "
                     "published table the model is trained on, with that table's HSP and an estimated "
                     "molar volume ('published'). Isotope labels are removed first (CDCl3 is answered "
                     "as chloroform); without an exact match, a match that ignores stereo answers. "
                     "Batch rows are numbered from 1 (the first row under the header)."),
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="exit status: 0, 1 when --save-mine had to skip rows (named on stderr), 2 on an error")
    p.add_argument("smiles", help="one SMILES string, or a CSV file with a 'smiles' column (optional 'name')")
    p.add_argument("--name", help="name for a single SMILES (used when saving)")
    p.add_argument("--long", action="store_true", help="show the intervals, sources and nearest compounds "
                   "(one SMILES: one line per value)")
    p.add_argument("--save-mine", metavar="CSV", help="add the estimated and published rows to a CSV of your "
                   "own liquids (written atomically; a row with the same name is replaced and named; rows "
                   "that cannot be saved are skipped and named; usable with --mine in the other commands)")
    g = p.add_argument_group("output")
    g.add_argument("--format", choices=["table", "csv", "json"], default="table",
                   help="table (default), csv or json")
    g.add_argument("--output", "-o", metavar="FILE", help="write to FILE (atomically) instead of the screen")
    g.add_argument("--overwrite", action="store_true",
                   help="let -o replace an existing file (never the input batch or a read-only one)")
    p.set_defaults(func=cmd_guess)


def _shown(res, cols):
    """The table-format frame: each interval printed to the precision of its value."""
    import pandas as pd

    out = res[[c for c in cols if c in res.columns]].copy()
    for c, d in DIGITS.items():
        for s in ("_low", "_high"):
            if c + s in out.columns:
                out[c + s] = [("-" if pd.isna(v) else f"{float(v):.{d}f}") for v in out[c + s]]
    if "duplicate_of" in out.columns:
        out["duplicate_of"] = ["" if pd.isna(v) else str(int(v)) for v in out["duplicate_of"]]
    return out


def _vertical(row) -> str:
    """One estimate as name/value lines (``--long`` for a single SMILES)."""
    import pandas as pd

    unit = {"delta_d": "MPa^0.5", "delta_p": "MPa^0.5", "delta_h": "MPa^0.5", "molar_volume": "cm3/mol"}
    lines = []
    for f in ("name", "smiles", "source", "hsp_source"):
        v = row.get(f, "")
        if str(v).strip():
            lines.append(f"{f:14s} {v}")
    for c, d in DIGITS.items():
        v, lo, hi = row[c], row.get(c + "_low"), row.get(c + "_high")
        if pd.isna(v):
            lines.append(f"{c:14s} -")
            continue
        iv = f"   90 % interval {lo:.{d}f} .. {hi:.{d}f}" if pd.notna(lo) and pd.notna(hi) else ""
        lines.append(f"{c:14s} {v:.{d}f} {unit[c]}{iv}")
    lines.append(f"{'in_domain':14s} {bool(row['in_domain'])}")
    if pd.notna(row.get("similarity")) and row.get("source") == "estimated":
        lines.append(f"{'similarity':14s} {row['similarity']:.2f} (Tanimoto to the nearest training compound)")
    for f in ("nearest", "message"):
        if str(row.get(f, "")).strip():
            lines.append(f"{f:14s} {row[f]}")
    return "\n".join(lines)


def cmd_guess(a) -> int:
    import sys
    from pathlib import Path

    from .cli_common import CAUTION, check_file_args, emit
    from .errors import SelectorError
    from .estimation import _looks_like_path, estimate

    check_file_args(a)   # refuse a bad -o / --save-mine before the model trains
    if a.save_mine:
        _mine_table(a.save_mine)
    batch = _looks_like_path(a.smiles)
    names = [a.name] if (a.name and not batch) else None
    res = estimate(a.smiles, names=names, progress=batch)
    if "name" not in res.columns:
        res.insert(0, "name", "")
    res["name"] = res["name"].where(res["name"].astype(str).str.strip() != "", res["matched_name"])
    cols = GUESS_COLUMNS if (a.long or a.format != "table") else SHORT_COLUMNS
    if a.format == "table" and a.long and len(res) == 1 and not a.output:
        sys.stdout.write(NOTE + "\n\n" + _vertical(res.iloc[0]) + "\n\n" + CAUTION + "\n")
    else:
        emit(_shown(res, cols) if a.format == "table" else res, a, cols, caution=True, header=NOTE)
    status = 0
    if a.save_mine:
        status = _save_mine(res, Path(a.save_mine))
    failed = int((res["source"] == "").sum())
    if failed and batch:
        print(f"{failed} of {len(res)} rows could not be estimated (see the message column); exit status 1",
              file=sys.stderr)
    if failed == len(res):
        raise SelectorError("no row could be estimated")
    # a script that runs a batch learns that some rows failed without reading the table
    return 1 if failed else status


def _mine_table(path):
    """The user-liquid table already at ``path`` (None for a new or empty file); a file that is
    not one (no name/delta_d/delta_p/delta_h columns) is refused before anything is written."""
    from pathlib import Path

    from .library import _as_frame

    path = Path(path)
    if not path.exists() or path.stat().st_size == 0:
        return None
    old = _as_frame(path, as_text=True)
    missing = [c for c in ("name", "delta_d", "delta_p", "delta_h") if c not in old.columns]
    if missing:
        raise SelectorError(f"{path} is not a table of your liquids (no {', '.join(missing)} "
                            f"{'column' if len(missing) == 1 else 'columns'}): nothing was saved and "
                            "the file is as it was; give --save-mine a new file or your liquids CSV")
    return old


def _save_mine(res, path) -> int:
    """Add the saveable rows of ``res`` to the user-liquid file ``path``; 1 when rows were skipped."""
    import sys

    from .estimation import saveable_rows, with_user_rows
    from .io import guard_cells
    from .library import _as_frame, file_fingerprint, save_user_liquids

    good, skipped, n_lib, n_dup = saveable_rows(res)
    if good is None:
        print("nothing saved: no row was estimated (library matches and failed rows are not saved)",
              file=sys.stderr)
        return 0
    if good.empty:
        print(f"nothing saved to {path}: {plural(len(skipped), 'row')} cannot be user liquids:\n  "
              + "\n  ".join(skipped), file=sys.stderr)
        return 1
    # fingerprint before reading: a file another program (the app) wrote meanwhile is not
    # overwritten; save_user_liquids validates (a table the other commands could not read is
    # refused) and writes atomically
    fp = file_fingerprint(path)
    old = _mine_table(path)
    table, replaced = with_user_rows(old, good)
    notes = []
    save_user_liquids(guard_cells(table), path, unchanged_since=fp, notes=notes)
    for n in notes:
        print(f"note: {n}", file=sys.stderr)
    kinds = good["origin"].value_counts()
    detail = ", ".join(f"{n} {k}" for k, n in kinds.items())
    msg = f"saved {plural(len(good), 'row')} to {path} ({detail})"
    if replaced:
        msg += f"; replaced {plural(len(replaced), 'earlier row')} of the same name: " + ", ".join(replaced)
    if n_lib or n_dup:
        msg += "; not saved: " + ", ".join(x for x in (
            f"{n_lib} in the library" if n_lib else "",
            f"{plural(n_dup, 'repeated molecule')} (saved once)" if n_dup else "") if x)
    if skipped:
        msg += f"; skipped {plural(len(skipped), 'row')} that cannot be user liquids:\n  " + "\n  ".join(skipped)
    print(msg, file=sys.stderr)
    return 1 if skipped else 0
