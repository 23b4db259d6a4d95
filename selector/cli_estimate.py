"""Subcommand ``guess``: HSP and molar volume of a molecule from its SMILES (or a CSV batch)."""
from __future__ import annotations

import argparse

GUESS_COLUMNS = ["name", "smiles", "source", "delta_d", "delta_d_low", "delta_d_high",
                 "delta_p", "delta_p_low", "delta_p_high", "delta_h", "delta_h_low", "delta_h_high",
                 "molar_volume", "molar_volume_low", "molar_volume_high", "in_domain", "similarity",
                 "nearest", "message"]
SHORT_COLUMNS = ["name", "smiles", "source", "delta_d", "delta_p", "delta_h", "molar_volume",
                 "in_domain", "message"]

NOTE = ("Estimated values carry 90 % prediction intervals (out-of-fold calibrated); "
        "'library' rows are published values. Estimates are not measurements: confirm before use.")


def register(sub) -> None:
    p = sub.add_parser(
        "guess", help="estimate HSP and molar volume from a SMILES string or a CSV of them",
        description=("Estimate delta_d, delta_p, delta_h (MPa^0.5) and molar volume (cm3/mol, 25 C) "
                     "of a molecule from its SMILES, with 90 % intervals and a check of how close it "
                     "is to the molecules the model was trained on. A molecule already in the "
                     "library is answered with its published values."),
        formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("smiles", help="one SMILES string, or a CSV file with a 'smiles' column (optional 'name')")
    p.add_argument("--name", help="name for a single SMILES (used when saving)")
    p.add_argument("--long", action="store_true", help="table format: show the intervals and nearest compounds")
    p.add_argument("--save-mine", metavar="CSV", help="append the estimated rows to a CSV of your own "
                   "liquids (written atomically; usable with --mine in the other commands)")
    g = p.add_argument_group("output")
    g.add_argument("--format", choices=["table", "csv", "json"], default="table",
                   help="table (default), csv or json")
    g.add_argument("--output", "-o", metavar="FILE", help="write to FILE (atomically) instead of the screen")
    g.add_argument("--overwrite", action="store_true",
                   help="let -o replace an existing file (never the input batch or a read-only one)")
    p.set_defaults(func=cmd_guess)


def cmd_guess(a) -> int:
    from pathlib import Path

    from .cli_common import check_file_args, emit
    from .errors import SelectorError
    from .estimation import _looks_like_path, estimate

    check_file_args(a)   # refuse a bad -o / --save-mine before the model trains
    batch = _looks_like_path(a.smiles)
    names = [a.name] if (a.name and not batch) else None
    res = estimate(a.smiles, names=names, progress=batch)
    if "name" not in res.columns:
        res.insert(0, "name", "")
    res["name"] = res["name"].where(res["name"].astype(str).str.strip() != "", res["library_name"])
    cols = GUESS_COLUMNS if (a.long or a.format != "table") else SHORT_COLUMNS
    emit(res, a, cols, caution=True, header=NOTE)
    if a.save_mine:
        _save_mine(res, Path(a.save_mine))
    failed = int((res["source"] == "").sum())
    if failed and batch:
        import sys

        print(f"{failed} of {len(res)} rows could not be estimated (see the message column)", file=sys.stderr)
    if failed == len(res):
        raise SelectorError("no row could be estimated")
    return 0


def _save_mine(res, path) -> None:
    import sys

    import pandas as pd

    from .estimation import as_library_rows
    from .io import write_atomic
    from .library import _as_frame, validate_user_table

    if not res["source"].eq("estimated").any():
        print("nothing saved: no row was estimated (library matches and failed rows are not saved)",
              file=sys.stderr)
        return
    rows = as_library_rows(res)
    keep = ["name", "smiles", "delta_d", "delta_p", "delta_h", "molar_volume", "hsp_source",
            "delta_d_low", "delta_d_high", "delta_p_low", "delta_p_high", "delta_h_low", "delta_h_high",
            "molar_volume_low", "molar_volume_high", "in_domain"]
    new = rows[keep].copy()
    num = [c for c in keep if c.startswith(("delta_", "molar_volume"))]
    new[num] = new[num].astype(float).round(3)
    if path.exists():
        old = _as_frame(path)
        old = old[~old["name"].astype(str).str.lower().isin(new["name"].str.lower())] if "name" in old else old
        table = pd.concat([old, new], ignore_index=True)
    else:
        table = new
    validate_user_table(table)  # refuse to write a table the other commands could not read
    from .io import to_csv_text

    write_atomic(path, to_csv_text(table), make_parents=False)
    print(f"saved {len(new)} estimated row(s) to {path}", file=sys.stderr)
