"""File helpers shared by the command line and the web front end.

* :func:`write_atomic` - write text or a table to a temporary file in the same folder, then
  rename over the target, so a crash or a bad input never leaves a half-written user file.
* :func:`guard_cells` - neutralise spreadsheet formula injection in exported text cells
  (cells starting with ``= + - @`` or a tab / carriage return get a leading apostrophe; OWASP
  "CSV Injection" guidance).
"""
from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

_DANGEROUS = ("=", "+", "-", "@", "\t", "\r")


def write_atomic(path, data: str | bytes) -> Path:
    """Write ``data`` to ``path`` atomically (temp file + ``os.replace``); returns the path."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    mode = "wb" if isinstance(data, bytes) else "w"
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, mode, **({} if mode == "wb" else {"encoding": "utf-8", "newline": ""})) as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        # mkstemp creates 0600 files: keep the mode of the file being replaced, or the umask default
        if path.exists():
            os.chmod(tmp, path.stat().st_mode & 0o777)
        else:
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return path


def _guard(v):
    if isinstance(v, str) and v.startswith(_DANGEROUS):
        # a plain negative number is data, not a formula
        try:
            float(v)
            return v
        except ValueError:
            return "'" + v
    if isinstance(v, tuple):
        return "; ".join(str(_guard(x)) for x in v)
    return v


def guard_cells(df: pd.DataFrame) -> pd.DataFrame:
    """Copy of ``df`` with text cells that a spreadsheet would run as formulas neutralised."""
    out = df.copy()
    for c in out.columns:
        if out[c].dtype == object or pd.api.types.is_string_dtype(out[c]):
            out[c] = out[c].map(_guard)
    return out


def to_csv_text(df: pd.DataFrame) -> str:
    """CSV text of a result table, guarded against formula injection."""
    return guard_cells(df).to_csv(index=False, lineterminator="\n")


def _jsonable(v):
    if isinstance(v, (np.floating, float)):
        return None if not np.isfinite(v) else float(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, (np.bool_,)):
        return bool(v)
    if isinstance(v, tuple):
        return [_jsonable(x) for x in v]
    return v


def to_json_text(df: pd.DataFrame) -> str:
    """JSON list of records (NaN as null)."""
    recs = [{k: _jsonable(v) for k, v in r.items()} for r in df.to_dict(orient="records")]
    return json.dumps(recs, indent=1, ensure_ascii=False)
