"""File helpers shared by the command line and the web front end.

* :func:`write_atomic` - write text or a table to a temporary file in the same folder, then
  rename over the target, so a crash or a bad input never leaves a half-written user file.
* :func:`guard_cells` - neutralise spreadsheet formula injection in exported text cells
  (cells starting with ``= + - @`` or a tab / carriage return get a leading apostrophe; OWASP
  "CSV Injection" guidance).
* :func:`check_output_path` - refuse an output path that is a folder, sits in a missing folder,
  is read-only, or (without ``overwrite``) already exists.
* :func:`read_user_csv` - read a CSV a user made: UTF-8 (with or without BOM), UTF-16 with BOM,
  else Windows-1252 (Excel's "CSV" on Western-European Windows); comma, semicolon or tab
  separated (sniffed from the header line); decimal commas ("17,9") in semicolon or tab files
  read as numbers. Every failure is a one-line :class:`~selector.errors.SelectorError`.
* :func:`rename_aliases` - map header spellings (``dD``, ``δD``, ``delta_d``...) to one name.
"""
from __future__ import annotations

import csv
import io
import json
import os
import re
import stat
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputTableError, SelectorError

_DANGEROUS = ("=", "+", "-", "@", "\t", "\r")


# ---------------------------------------------------------------- writing

def _read_only(path: Path) -> bool:
    """True for a file without any write permission bit (``chmod 444``), or one this user may
    not write; the mode bits are checked too because ``os.access`` says yes to root."""
    try:
        mode = path.stat().st_mode
    except OSError:
        return False
    return not (mode & (stat.S_IWUSR | stat.S_IWGRP | stat.S_IWOTH)) or not os.access(path, os.W_OK)


def check_output_path(path, *, overwrite: bool = True, make_parents: bool = False,
                      option: str = "--overwrite") -> Path:
    """Check that ``path`` can receive a new file; returns it as a :class:`~pathlib.Path`.

    Raises :class:`~selector.errors.SelectorError` with a one-line reason when ``path`` is a
    folder, when its folder does not exist (unless ``make_parents``) or is not writable, when
    it is an existing read-only file (whatever ``overwrite`` says: a file made read-only is one
    its owner wants kept), or when it exists and ``overwrite`` is false (the message names
    ``option``, the switch that allows it; ``option=None`` suggests another name instead).
    """
    path = Path(path)
    if str(path).strip() == "":
        raise SelectorError("the output file name is empty")
    if path.is_dir():
        raise SelectorError(f"{path} is a folder; give a file name, e.g. {path / 'results.csv'}")
    parent = path.parent
    if not parent.exists():
        if not make_parents:
            raise SelectorError(f"folder {parent} does not exist; create it first or write elsewhere")
    elif not parent.is_dir():
        raise SelectorError(f"cannot write {path}: {parent} is a file, not a folder")
    elif not os.access(parent, os.W_OK | os.X_OK):
        raise SelectorError(f"cannot write in folder {parent}: permission denied")
    if path.exists() or path.is_symlink():
        if not path.is_file():
            raise SelectorError(f"{path} exists and is not a regular file; not replaced")
        if _read_only(path):
            raise SelectorError(f"{path} is read-only; it is left as it is (make it writable, or write "
                                "to another file)")
        if not overwrite:
            how = f"use {option} to replace it" if option else "choose another name or delete it first"
            raise SelectorError(f"{path} already exists; {how}")
    return path


def write_atomic(path, data: str | bytes, *, make_parents: bool = True) -> Path:
    """Write ``data`` to ``path`` atomically (temp file + ``os.replace``); returns the path.

    A folder, a read-only file or a missing folder (with ``make_parents=False``) is refused
    with a one-line :class:`~selector.errors.SelectorError` (see :func:`check_output_path`);
    an existing writable file is replaced (through a symbolic link: the file it names).
    User-facing output passes ``make_parents=False``.
    """
    path = check_output_path(path, overwrite=True, make_parents=make_parents)
    if path.is_symlink() and path.exists():
        # write through a link to the file it names: renaming over the link would replace the link
        # and leave that file as it was
        path = Path(os.path.realpath(path))
    if make_parents:
        path.parent.mkdir(parents=True, exist_ok=True)
    mode = "wb" if isinstance(data, bytes) else "w"
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except PermissionError:
        raise SelectorError(f"cannot write in folder {path.parent}: permission denied") from None
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
    """Copy of ``df`` with text cells that a spreadsheet would run as formulas neutralised. The
    copy drops ``df.attrs``: pandas deep-copies them on every column access, which for a
    whole-library matrix (its list of reacting pairs) took minutes."""
    out = df.copy()
    out.attrs = {}
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
    df = df.copy(deep=False)
    df.attrs = {}
    recs = [{k: _jsonable(v) for k, v in r.items()} for r in df.to_dict(orient="records")]
    return json.dumps(recs, indent=1, ensure_ascii=False)


# ---------------------------------------------------------------- reading user CSV files

_DELIMITERS = (",", ";", "\t")
_DECIMAL_COMMA = re.compile(r"^\s*[-+]?(\d+([.,]\d*)?|[.,]\d+)([eE][-+]?\d+)?\s*$")


def decode_text(data: bytes) -> tuple[str, str]:
    """``(text, encoding)`` of file bytes: UTF-16 with BOM, UTF-8 (BOM dropped), else
    Windows-1252, else Latin-1 (which maps every byte)."""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16"), "utf-16"
        except UnicodeDecodeError:
            pass
    try:
        return data.decode("utf-8-sig"), "utf-8"
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252"), "cp1252"
    except UnicodeDecodeError:
        return data.decode("latin-1"), "latin-1"


def sniff_delimiter(text: str) -> str:
    """The field separator of CSV ``text``: whichever of comma, semicolon and tab occurs most
    often outside quotes on the first non-blank line (comma on a tie or when none occurs)."""
    line = next((ln for ln in text.splitlines() if ln.strip()), "")
    counts = dict.fromkeys(_DELIMITERS, 0)
    quoted = False
    for ch in line:
        if ch == '"':
            quoted = not quoted
        elif not quoted and ch in counts:
            counts[ch] += 1
    best = max(_DELIMITERS, key=lambda d: (counts[d], -_DELIMITERS.index(d)))
    return best if counts[best] else ","


def file_dialect(path) -> dict | None:
    """How an existing CSV file is written, so that a program saving it again keeps to it:
    ``sep`` (comma, semicolon or tab), ``encoding`` (as :func:`decode_text` reads it), ``bom``
    (a UTF-8 byte-order mark), ``newline`` (Windows or Unix line ends), ``decimal`` ("," when a
    semicolon or tab file writes its numbers with a decimal comma). None when the file is
    missing, unreadable or empty."""
    try:
        data = Path(path).read_bytes()
    except OSError:
        return None
    if not data.strip():
        return None
    text, encoding = decode_text(data)
    sep = sniff_delimiter(text)
    decimal = "."
    if sep != ",":
        cells = [c.strip().strip('"') for ln in text.splitlines()[1:] for c in ln.split(sep)]
        numbers = [c for c in cells if c and _DECIMAL_COMMA.match(c)]
        if any("," in c for c in numbers) and not any("." in c for c in numbers):
            decimal = ","
    return {"sep": sep, "encoding": encoding, "bom": data.startswith(b"\xef\xbb\xbf"), "decimal": decimal,
            "newline": "\r\n" if b"\r\n" in data else "\n"}


def csv_bytes(df: pd.DataFrame, dialect: dict | None = None) -> tuple[bytes, str]:
    """``(data, note)``: ``df`` as CSV bytes in ``dialect`` (:func:`file_dialect`; default a UTF-8
    comma file). Numbers are written in their shortest exact form (120, not 120.0). When a
    character cannot be written in the file's own encoding (a Greek letter in Windows-1252),
    the file becomes UTF-8 with a byte-order mark, which spreadsheets read, and ``note`` says so."""
    d = dialect or {}
    text = df.to_csv(index=False, lineterminator=d.get("newline", "\n"), sep=d.get("sep", ","),
                     decimal=d.get("decimal", "."),
                     float_format="%.15g")
    enc = d.get("encoding", "utf-8")
    if enc == "utf-8":
        return (b"\xef\xbb\xbf" if d.get("bom") else b"") + text.encode("utf-8"), ""
    try:
        return text.encode(enc), ""
    except UnicodeEncodeError as e:
        return (b"\xef\xbb\xbf" + text.encode("utf-8"),
                f"{text[e.start:e.end]!r} cannot be written in {enc}: the file is now UTF-8 (with a byte-order mark)")


def _fix_decimal_commas(df: pd.DataFrame) -> pd.DataFrame:
    """Columns whose every non-blank cell is a number written with a decimal comma (or a plain
    integer) get the comma replaced by a point; text columns are left alone."""
    for c in df.columns:
        col = df[c]
        if not (col.dtype == object or pd.api.types.is_string_dtype(col)):
            continue
        vals = col.fillna("").astype(str)
        filled = vals[vals.str.strip() != ""]
        if len(filled) and filled.str.contains(",", regex=False).any() and filled.str.match(_DECIMAL_COMMA).all():
            df[c] = vals.str.replace(",", ".", regex=False).where(col.notna(), col)
    return df


def _ragged_rows(text: str, delimiter: str, longer_only: bool = False) -> list[str]:
    rows = list(csv.reader(io.StringIO(text), delimiter=delimiter))
    width = len(rows[0]) if rows else 0
    return [f"row {i + 1} has {len(r)} fields, the header has {width}"
            + (" (a decimal comma, or a comma inside a name without quotes?)" if len(r) > width else "")
            for i, r in enumerate(rows[1:], start=1)
            if r and (len(r) > width if longer_only else len(r) != width)]


def _source_bytes(source) -> tuple[bytes, str]:
    if isinstance(source, (str, os.PathLike)):
        p = Path(source)
        if not p.exists():
            raise SelectorError(f"file not found: {p}")
        if p.is_dir():
            raise SelectorError(f"{p} is a folder, not a CSV file")
        try:
            return p.read_bytes(), p.name
        except PermissionError:
            raise SelectorError(f"cannot read {p}: permission denied") from None
        except OSError as e:
            raise SelectorError(f"cannot read {p}: {e.strerror or e}") from None
    if isinstance(source, (bytes, bytearray, memoryview)):
        return bytes(source), "the file"
    if hasattr(source, "getvalue"):  # io.BytesIO, io.StringIO, a Streamlit upload
        data = source.getvalue()
    elif hasattr(source, "read"):
        data = source.read()
    else:
        raise SelectorError("a CSV must be given as a file path, bytes or an open file")
    name = str(getattr(source, "name", "") or "the file")
    return (data.encode("utf-8") if isinstance(data, str) else bytes(data)), name


def read_user_csv(source, *, what: str | None = None, strict_rows: bool = False, **read_kw) -> pd.DataFrame:
    """Read a CSV file a user made (see the module docstring for encodings and separators).

    ``source``: a path, the file's bytes, or a file-like object (``getvalue()``/``read()``).
    ``what`` names the file in messages (default: its file name). ``strict_rows``: rows with
    more or fewer fields than the header are an :class:`~selector.errors.InputTableError`
    listing them (pandas would fill or fail on them); ``"longer"``: only rows with more fields
    (pandas would shift such a row's cells one column to the right, silently). ``read_kw`` go to :func:`pandas.read_csv`
    (``dtype``, ``keep_default_na``, ``na_values``...). The result's ``attrs`` hold
    ``encoding`` and ``delimiter``. A missing file is "file not found: PATH".
    """
    data, name = _source_bytes(source)
    label = what or name
    if not data.strip():
        raise SelectorError(f"{label} is empty")
    text, encoding = decode_text(data)
    if "\x00" in text:
        raise SelectorError(f"{label} is not a readable CSV file: it holds binary data (save it as CSV text)")
    sep = sniff_delimiter(text)
    try:
        if strict_rows:
            ragged = _ragged_rows(text, sep, longer_only=strict_rows == "longer")
            if ragged:
                raise InputTableError(label, ragged[:20])
        if sep == ",":
            df = pd.read_csv(io.StringIO(text), sep=sep, **read_kw)
        else:
            raw = pd.read_csv(io.StringIO(text), sep=sep, dtype=str, keep_default_na=False,
                              index_col=False)
            raw = _fix_decimal_commas(raw)
            # read again as a plain comma CSV so the caller's dtype / NA options apply unchanged
            df = pd.read_csv(io.StringIO(raw.to_csv(index=False)), **read_kw)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, csv.Error, UnicodeError) as e:
        msg = str(e).strip().splitlines()[0] if str(e).strip() else type(e).__name__
        raise SelectorError(f"{label} is not a readable CSV file: {msg}") from None
    df.attrs["encoding"] = encoding
    df.attrs["delimiter"] = sep
    return df


def _header_key(name) -> str:
    """A header reduced for matching: lower case, unit in brackets dropped, separators as '_'."""
    s = str(name).strip().lower()
    s = re.sub(r"\s*[\(\[][^\)\]]*[\)\]]\s*$", "", s)  # "dD (MPa½)" -> "dd"
    s = re.sub(r"[\s\-./]+", "_", s).strip("_")
    return s


def rename_aliases(df: pd.DataFrame, aliases: dict[str, tuple[str, ...]], what: str = "table") -> pd.DataFrame:
    """Rename the columns of ``df`` to canonical names, case-insensitively.

    ``aliases`` maps each canonical name to other spellings (compared after
    :func:`_header_key`: lower case, a trailing unit in brackets dropped, spaces and hyphens as
    underscores). Other columns are lower-cased and stripped. A column already named canonically
    wins: an alias beside it keeps its own name. Two aliases (or two columns equal up to case)
    meaning the same thing are an :class:`~selector.errors.InputTableError`.
    """
    lookup = {}
    for canon, alts in aliases.items():
        for a in (canon, *alts):
            lookup[_header_key(a)] = canon
    keys = [_header_key(c) for c in df.columns]
    present = {k for k in keys if k in aliases}  # canonical names given as such win over aliases
    new, seen, clash = [], {}, []
    for c, key in zip(df.columns, keys):
        name = lookup.get(key, str(c).strip().lower())
        if name != key and name in present:
            name = str(c).strip().lower()
        if name in seen:
            clash.append(f"columns {seen[name]!r} and {str(c)!r} both mean {name}")
        seen.setdefault(name, str(c))
        new.append(name)
    if clash:
        raise InputTableError(what, clash)
    out = df.copy()
    out.columns = new
    return out
