"""Fit a solute's Hansen sphere (centre dD, dP, dH and radius R0, MPa^0.5) from lab tests.

A formulator shakes the solute with 15-40 liquids and records which dissolve it. This module
turns that table into the solute's sphere, says how sure the fit is, and proposes the liquids
whose result would teach the most.

Method
------
*Classical desirability fit* (C. M. Hansen, *Hansen Solubility Parameters: A User's Handbook*,
2nd ed., CRC Press, 2007, ch. 1). For a trial centre and R0 each test scores A_i = 1 when it is
classified right; a good liquid outside scores exp(R0 - Ra), a bad one inside exp(Ra - R0). The
fit maximises the (weighted) geometric mean of the A_i and, among equal scores, prefers the
smaller R0. Written as a loss, -ln A_i is ``max(0, Ra - R0)`` for a good result and
``max(0, R0 - Ra)`` for a bad one.

*Global strategy* (this module's own). For a fixed centre the summed loss is a convex,
piecewise-linear function of R0 whose slope is ``W(Ra <= R0) - G`` (W: weight of all tests
closer than R0, G: weight of the good ones), so the best R0 is found exactly: it is the
smallest sorted Ra at which the cumulative weight reaches G. The centre is then searched by
(1) vectorised evaluation over a coarse grid spanning the good results, (2) a pattern search
from the best eight well-separated grid points (the best three of them carried on below 1/16
of the grid step), each step trying 26 directions whose orientation
is drawn from the seeded random generator (so no direction is systematically missed on the
ridges of the surface), halving the step when no direction improves, down to 5e-4 MPa^0.5.
Ties in the score are broken towards the smaller R0 by a 1e-9 penalty per MPa^0.5.

*Graded results* (this module's own design, "graded desirability"). A grade g on a declared
scale ``(lo, hi)`` with pass mark ``t`` is read as a statement about RED: a good grade says
RED <= m(g), a poor one RED >= m(g), with m(g) = 1 - s (g - t) / (hi - lo) and s the
``grade_spread`` (default 0.4). A top grade thus claims "well inside", a bottom one "well
outside". The loss of test i is m_i max(0, Ra_i/m_i - R0) (good) or m_i max(0, R0 - Ra_i/m_i)
(bad), the classical loss on rescaled distances, so the same exact-R0 search applies.

*Intervals*. Two sources of uncertainty are combined per parameter (the reported interval is
their hull): (a) a stratified bootstrap (goods and bads resampled separately, ``bootstrap``
samples, seeded), each sample refitted globally; percentile interval at ``confidence``; and
(b) the profile region of the likelihood-type score: reading A_i as a likelihood, every
(centre, R0) whose summed loss is within chi2(1, confidence)/2 (1.92 at 95 %) of the best is
kept (the range of equally good spheres that the classical method leaves open when results
are clean).

*Two spheres* (block copolymers, surfactants): a good result is inside either sphere, a bad one
must be outside both (loss summed over spheres). Goods are split by 2-means in the scaled space
(several seeded starts), each sphere refitted on its goods plus all bads, goods reassigned to
the sphere they fit best, until stable. The two-sphere model is adopted only when its Bayesian
information criterion, BIC = 2 sum(loss) + k ln n (k = 4 or 8 parameters, weights normalised to
mean 1), is lower than the one-sphere BIC.

*Next tests*. The bootstrap spheres and a sample of the profile region form an ensemble; for
each untested liquid p is the share of ensemble spheres that contain it (with two spheres,
p = 1 - (1 - p1)(1 - p2)), and p (1 - p) (largest where the ensemble disagrees most) ranks the
liquids worth testing next.

Blend notation
--------------
A test liquid may be a blend written as volume parts in square brackets joined by ``&``:
``"toluene [60] & ethanol [40]"`` (parts are normalised; ``[0.6]`` works as well). Its HSP is
the volume-fraction mean of the components (:func:`selector.hansen.blend_hsp`).

Safety: a fitted sphere points at liquids to test; it is not a safety assessment. Read the
supplier's safety data sheet and follow local regulation before handling any solvent.
"""
from __future__ import annotations

import io
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputTableError, SelectorError, UnknownLiquidError, plural
from .hansen import blend_hsp, hsp_at_temperature
from .library import HSP, load_library, locate

#: Scaling of (dD, dP, dH) into the space in which Ra is Euclidean (Hansen's handbook, ch. 1).
SCALE = np.array([2.0, 1.0, 1.0])
#: Tie-break: penalty on the mean loss per MPa^0.5 of R0 (prefer the smaller R0).
TIE = 1e-9
#: Grid points per axis of the coarse global search.
COARSE_POINTS = 17
#: Pattern-search stopping step, MPa^0.5 (scaled space).
FINE_STEP = 5e-4
#: Default number of separated coarse-grid starts for the pattern search.
STARTS = 8
#: Multiplier on chi2(1, confidence)/2 for the profile region (1 = the likelihood-ratio level).
PROFILE_FACTOR = 1.0
#: Fewer tests than this gets a warning (four parameters need well spread tests).
FEW_TESTS = 12
#: Fewer good liquids than this (with some bad ones) gets a warning: the sphere is drawn around them.
FEW_GOOD = 4
#: Fewer tests than this is an error.
MIN_TESTS = 4

GOOD_WORDS = {"good", "yes", "y", "true", "t", "1", "1.0", "dissolves", "dissolved", "soluble",
              "swells", "swelled", "swollen", "swelling", "+", "pass", "ok", "in"}
BAD_WORDS = {"bad", "no", "n", "false", "f", "0", "0.0", "insoluble", "undissolved", "none",
             "not", "-", "fail", "out", "no change"}
OUTCOME_COLUMNS = ("outcome", "result", "dissolved", "good")
GRADE_COLUMNS = ("grade", "score")
_BLEND_PART = re.compile(r"^\s*(?P<name>.+?)\s*\[\s*(?P<part>[^\]]*?)\s*%?\s*\]\s*$")

_CUBE = np.array([(i, j, k) for i in (-1, 0, 1) for j in (-1, 0, 1) for k in (-1, 0, 1)
                  if (i, j, k) != (0, 0, 0)], dtype=float)
_CUBE /= np.linalg.norm(_CUBE, axis=1, keepdims=True)


# ============================================================================ reading tests

#: Header spellings accepted in a lab-test table (case-insensitive; a trailing unit in brackets
#: is ignored; see :func:`selector.io.rename_aliases`).
TEST_COLUMN_ALIASES = {
    "solvent": ("liquid", "name", "solvent name", "liquid name"),
    "delta_d": ("dd", "δd", "δ_d", "deltad", "delta d", "d_d"),
    "delta_p": ("dp", "δp", "δ_p", "deltap", "delta p", "d_p"),
    "delta_h": ("dh", "δh", "δ_h", "deltah", "delta h", "d_h"),
    "temperature": ("temp", "temperature_c", "t_c"),
}

#: Most bootstrap resamples :func:`fit_sphere` accepts (memory and time grow with each).
MAX_BOOTSTRAP = 20_000


def normalise_test_columns(df: pd.DataFrame) -> pd.DataFrame:
    """``df`` with lab-test headers in canonical lower-case form (``dD`` -> ``delta_d``, ``Liquid``
    -> ``solvent``...; :data:`TEST_COLUMN_ALIASES`)."""
    from .io import rename_aliases

    return rename_aliases(df, TEST_COLUMN_ALIASES, "lab tests")


def _frame(source) -> pd.DataFrame:
    if isinstance(source, pd.DataFrame):
        return source.copy()
    if isinstance(source, (str, Path, bytes, bytearray, io.IOBase)) or hasattr(source, "getvalue"):
        from .io import read_user_csv

        if isinstance(source, (str, Path)) and Path(source).is_dir():
            raise SelectorError(f"{source} is a folder, not a CSV file of lab tests")
        return read_user_csv(source, strict_rows=True, keep_default_na=False, na_values=[""], dtype=str,
                             index_col=False)
    raise SelectorError("lab tests must be a pandas DataFrame or the path of a CSV file")


def _blank(v) -> bool:
    return v is None or (isinstance(v, float) and math.isnan(v)) or (isinstance(v, str) and not v.strip())


def _parse_binary(v):
    """True/False for an outcome cell, or None when it cannot be read."""
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, (int, float, np.integer, np.floating)):
        if float(v) == 1.0:
            return True
        if float(v) == 0.0:
            return False
        return None
    s = str(v).strip().lower()
    if s in GOOD_WORDS:
        return True
    if s in BAD_WORDS:
        return False
    return None


def _to_float(v):
    if isinstance(v, (bool, np.bool_)):
        return None
    try:
        f = float(str(v).strip()) if isinstance(v, str) else float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def parse_blend(text: str, library: pd.DataFrame):
    """Parse the blend notation ``"name [part] & name [part] ..."``.

    Returns ``(positions, fractions)`` (library row positions and volume fractions summing to
    one). Raises :class:`SelectorError` naming the problem.

    >>> lib = load_library()
    >>> pos, frac = parse_blend("toluene [3] & ethanol [1]", lib)
    >>> [str(lib.name.iloc[p]) for p in pos], frac.tolist()
    (['toluene', 'ethanol'], [0.75, 0.25])
    """
    parts = [p for p in text.split("&")]
    names, shares, problems = [], [], []
    for p in parts:
        m = _BLEND_PART.match(p)
        if not m:
            problems.append(f"blend part {p.strip()!r} should read 'name [volume part]'")
            continue
        share = _to_float(m.group("part"))
        if share is None or share < 0:
            problems.append(f"blend part {p.strip()!r}: the volume part must be a number >= 0")
            continue
        names.append(m.group("name"))
        shares.append(share)
    if problems:
        raise SelectorError("; ".join(problems))
    if len(names) < 2:
        raise SelectorError(f"a blend needs at least two parts joined by '&', got {text!r}")
    if sum(shares) <= 0:
        raise SelectorError(f"blend {text!r}: the volume parts are all zero")
    pos = []
    for n in names:
        pos.append(locate(n, library))  # UnknownLiquidError carries "did you mean"
    if len(set(pos)) < len(pos):
        raise SelectorError(f"blend {text!r} names the same liquid twice")
    f = np.asarray(shares, float)
    return np.asarray(pos, int), f / f.sum()


def test_columns_problem(df: pd.DataFrame, library: pd.DataFrame | None = None) -> str:
    """What is wrong with the columns of a lab-test table (after :func:`normalise_test_columns`),
    "" when it names the liquids (a ``solvent`` column, or delta_d/delta_p/delta_h). Says so when
    the first line reads like a test rather than a header (a liquid's name or a number)."""
    if "solvent" in df.columns or all(c in df.columns for c in HSP):
        return ""
    cols = [str(c) for c in df.columns]
    found = f"columns found: {', '.join(cols)}"
    if len(cols) == 1 and re.search(r"[;\t]", cols[0]):
        return f"no 'solvent' column ({found}); the file looks separated by semicolons or tabs: use commas"
    lib = load_library() if library is None else library
    names = set(lib["name"].astype(str).str.lower())
    if any(c.strip().lower() in names or _to_float(c) is not None for c in cols):
        return (f"no header row: the first line ({', '.join(cols)}) reads like a test. Add a first line "
                "naming the columns, e.g. solvent,dissolved")
    return ("no 'solvent' column and no delta_d, delta_p, delta_h columns: say which liquid each "
            f"test used ({found})")


def read_tests(source, *, library: pd.DataFrame | None = None, outcome: str | None = None,
               threshold: float | None = None, scale=None, temperature: float = 25.0) -> pd.DataFrame:
    """Read and validate a table of lab tests; every problem is reported at once.

    ``source``: a DataFrame, a CSV path or CSV bytes (UTF-8 or Windows-1252; comma, semicolon or
    tab separated; decimal commas in semicolon files: :func:`selector.io.read_user_csv`).
    Columns (case-insensitive; ``dD``/``δD``, ``liquid``, ``temp``... accepted, see
    :data:`TEST_COLUMN_ALIASES`):

    * ``solvent`` - library name, synonym or CAS, or a blend ``"a [60] & b [40]"``; or
      ``delta_d, delta_p, delta_h`` (MPa^0.5) for a liquid of your own (``solvent`` then only
      labels it). Numbers win over the name when both are given.
    * the outcome: column ``outcome`` (or ``result``, ``dissolved``, ``good``; or the one named by
      ``outcome=``) holding good/bad words (good, yes, true, 1, dissolves, swells / bad, no,
      false, 0, insoluble). With ``threshold`` the column (default ``grade`` or ``score``) holds
      numeric grades; grade >= threshold counts as good, and ``scale=(lo, hi)`` declares the
      scale (default: the grades seen).
    * optional ``weight`` (> 0) and ``temperature`` (C; default ``temperature``). Library liquids
      are corrected to the test temperature by Hansen-Beerbower
      (:func:`selector.hansen.hsp_at_temperature`); your own numbers are taken as valid there.

    Consistent duplicates (same liquid and temperature, same verdict) are merged into one test
    (mean grade and weight); duplicates that disagree are an error. Returns a DataFrame with
    ``label, delta_d, delta_p, delta_h, good, grade, weight, temperature, kind, liquid_index``
    (``kind``: "library", "estimated" for a library row whose HSP are estimated from structure,
    "given" or "blend"; ``liquid_index``: library row or -1), with ``attrs`` ``graded, threshold, scale, notes``. Raises
    :class:`~selector.errors.InputTableError` listing every problem.
    """
    lib = load_library() if library is None else library
    df = normalise_test_columns(_frame(source))
    problems: list[str] = []
    notes: list[str] = []
    if len(df) == 0:
        raise InputTableError("lab tests", ["the table has no rows"])
    problem = test_columns_problem(df, lib)
    if problem:
        raise InputTableError("lab tests", [problem])
    has_numbers = all(c in df.columns for c in HSP)
    graded = threshold is not None
    if graded:
        thr = _to_float(threshold)
        if thr is None:
            raise SelectorError(f"threshold must be a number on the grade scale, got {threshold!r}")
    col = outcome.strip().lower() if isinstance(outcome, str) else None
    if col is None:
        for c in (GRADE_COLUMNS + OUTCOME_COLUMNS) if graded else OUTCOME_COLUMNS:
            if c in df.columns:
                col = c
                break
    if col is None or col not in df.columns:
        want = ("a grade column ('grade' or 'score')" if graded else
                "an outcome column ('outcome', 'result', 'dissolved' or 'good')")
        if col is not None:
            want = f"the column {col!r}"
        extra = ""
        if not graded and any(c in df.columns for c in GRADE_COLUMNS):
            extra = ("; for numeric grades give a pass mark, the lowest grade that counts as good (threshold= in "
                     "Python, --pass-mark and --outcome on the command line, Grades in the score column in the app)")
        raise InputTableError("lab tests", [f"no outcome: the table needs {want} "
                                            f"(columns found: {', '.join(df.columns)}){extra}"])
    lo_hi = None
    if scale is not None:
        try:
            lo_hi = (float(scale[0]), float(scale[1]))
        except (TypeError, ValueError, IndexError):
            raise SelectorError(f"scale must be (lowest grade, highest grade), got {scale!r}") from None
        if not all(map(math.isfinite, lo_hi)) or lo_hi[0] >= lo_hi[1]:
            raise SelectorError(f"scale must be (lowest, highest) with lowest < highest, got {scale!r}")
        if graded and not (lo_hi[0] < thr <= lo_hi[1]):
            raise SelectorError(f"the pass mark (threshold) {thr:g} does not fit the scale {lo_hi[0]:g}..{lo_hi[1]:g}: "
                                + ("no grade could reach it" if thr > lo_hi[1] else "every grade would pass")
                                + "; give one above the lowest grade and at most the highest")
    try:
        t_default = float(temperature)
    except (TypeError, ValueError):
        raise SelectorError(f"temperature must be a number in C, got {temperature!r}") from None
    if not math.isfinite(t_default) or t_default <= -273.15:
        raise SelectorError(f"temperature must be a finite number above -273.15 C, got {temperature!r}")
    tcol = "temperature" if "temperature" in df.columns else (
        "temperature_c" if "temperature_c" in df.columns else None)

    rows = []
    alpha_all = lib["expansion_coeff"].to_numpy(float) if "expansion_coeff" in lib else np.full(len(lib), np.nan)
    lib_hsp = lib[HSP].to_numpy(float)
    from .library import hsp_estimated
    from .targets import CAL_HINT_DD, cal_units_hint

    lib_estimated = hsp_estimated(lib)   # a liquid of your own whose HSP are estimated from structure
    no_alpha = []
    boiling = []
    grades_without_mark: list = []
    for i, r in enumerate(df.to_dict(orient="records")):
        where = f"row {i + 2}"
        label = "" if "solvent" not in df.columns or _blank(r.get("solvent")) else str(r["solvent"]).strip()
        if label:
            where += f" ({label})"
        ok = True
        # --- temperature
        t = t_default
        if tcol and not _blank(r.get(tcol)):
            tv = _to_float(r[tcol])
            if tv is None or tv <= -273.15:
                problems.append(f"{where}: temperature {r[tcol]!r} is not a temperature in C")
                ok = False
            else:
                t = tv
        # --- the liquid
        nums = [r.get(c) for c in HSP] if has_numbers else [None, None, None]
        given = [not _blank(v) for v in nums]
        hsp = None
        kind, lib_index, key = "", -1, None
        if any(given):
            vals = [_to_float(v) for v in nums]
            if not all(given) or any(v is None for v in vals):
                problems.append(f"{where}: delta_d, delta_p, delta_h must all be numbers (MPa^0.5)")
                ok = False
            elif vals[0] <= 0 or vals[1] < 0 or vals[2] < 0:
                problems.append(f"{where}: HSP must be positive (dD) and non-negative (dP, dH), "
                                f"got {vals[0]:g}, {vals[1]:g}, {vals[2]:g}")
                ok = False
            elif vals[0] > 30 or vals[1] > 40 or vals[2] > 50:
                problems.append(f"{where}: HSP {vals[0]:g}, {vals[1]:g}, {vals[2]:g} is outside the range "
                                "of real liquids (dD <= 30, dP <= 40, dH <= 50 MPa^0.5)")
                ok = False
            elif vals[0] < CAL_HINT_DD:
                problems.append(f"{where}: {cal_units_hint(vals)}")
                ok = False
            else:
                hsp = np.array(vals, float)
                kind = "given"
                key = ("given", tuple(np.round(hsp, 3)), round(t, 3))
                if not label:
                    label = f"({vals[0]:g}, {vals[1]:g}, {vals[2]:g})"
        elif label:
            try:
                if "&" in label or "[" in label:
                    pos, frac = parse_blend(label, lib)
                    comp = lib_hsp[pos]
                    al = alpha_all[pos]
                    if abs(t - 25.0) > 1e-9:
                        if np.any(~np.isfinite(al)):
                            no_alpha.append(label)
                        hc = hsp_at_temperature(comp, al, t)
                        comp = np.where(np.isfinite(hc), hc, comp)
                    hsp = blend_hsp(comp, frac)
                    kind = "blend"
                    order = np.argsort(pos)
                    key = ("blend", tuple(pos[order]), tuple(np.round(frac[order], 4)), round(t, 3))
                else:
                    p = locate(label, lib)
                    hsp = lib_hsp[p].copy()
                    if abs(t - 25.0) > 1e-9:
                        hc = hsp_at_temperature(hsp, alpha_all[p], t)
                        if np.all(np.isfinite(hc)):
                            hsp = hc
                        else:
                            no_alpha.append(label)
                    kind, lib_index = ("estimated" if lib_estimated[p] else "library"), int(p)
                    key = ("library", int(p), round(t, 3))
                    bp_p = float(lib["boiling_point_c"].iat[p]) if "boiling_point_c" in lib else math.nan
                    if math.isfinite(bp_p) and t >= bp_p:
                        boiling.append(f"{label} (boils at {bp_p:.0f} C, tested at {t:g} C)")
                    mp_p = float(lib["melting_point_c"].iat[p]) if "melting_point_c" in lib else math.nan
                    if math.isfinite(mp_p) and t < mp_p:
                        problems.append(f"{where}: {lib['name'].iat[p]} melts at {mp_p:.0f} C, so it is no liquid "
                                        f"at {t:g} C: check the temperature")
                        ok = False
                if not np.all(np.isfinite(hsp)):
                    problems.append(f"{where}: the library has no HSP for this liquid")
                    ok = False
            except UnknownLiquidError as e:
                problems.append(f"{where}: {e}")
                ok = False
            except SelectorError as e:
                problems.append(f"{where}: {e}")
                ok = False
        else:
            problems.append(f"{where}: no liquid given (empty solvent and no delta_d, delta_p, delta_h)")
            ok = False
        # --- outcome
        v = r.get(col)
        grade = np.nan
        good = None
        if _blank(v):
            problems.append(f"{where}: the outcome ({col}) is empty")
            ok = False
        elif graded:
            g = _to_float(v)
            if g is None:
                problems.append(f"{where}: grade {v!r} is not a number")
                ok = False
            elif lo_hi is not None and not (lo_hi[0] <= g <= lo_hi[1]):
                problems.append(f"{where}: grade {g:g} is outside the declared scale {lo_hi[0]:g}..{lo_hi[1]:g}")
                ok = False
            else:
                grade, good = g, bool(g >= thr)
        else:
            good = _parse_binary(v)
            if good is None:
                if _to_float(v) is not None:
                    grades_without_mark.append((i + 2, v))   # told once, below
                else:
                    problems.append(f"{where}: cannot read the outcome {v!r} (use good/bad, yes/no, "
                                    "true/false or 1/0)")
                ok = False
        # --- weight
        w = 1.0
        if "weight" in df.columns and not _blank(r.get("weight")):
            wv = _to_float(r["weight"])
            if wv is None or wv <= 0:
                problems.append(f"{where}: weight {r['weight']!r} must be a positive number")
                ok = False
            else:
                w = wv
        if ok:
            rows.append(dict(label=label, delta_d=float(hsp[0]), delta_p=float(hsp[1]),
                             delta_h=float(hsp[2]), good=bool(good), grade=grade, weight=w,
                             temperature=t, kind=kind, liquid_index=lib_index, _key=key,
                             _row=i + 2))
    if grades_without_mark:
        shown = ", ".join(f"{n} ({v!r})" for n, v in grades_without_mark[:6])
        more = f" and {len(grades_without_mark) - 6} more" if len(grades_without_mark) > 6 else ""
        problems.append(f"rows {shown}{more}: numeric grades in the outcome column ({col}) need a pass mark "
                        "(threshold= in Python, --pass-mark on the command line, Grades in the score column "
                        "in the app): the lowest grade that counts as dissolved")
    # --- duplicates
    merged = []
    groups: dict = {}
    for r in rows:
        groups.setdefault(r["_key"], []).append(r)
    for key, grp in groups.items():
        if len(grp) == 1:
            merged.append(grp[0])
            continue
        verdicts = {g["good"] for g in grp}
        where = ", ".join(str(g["_row"]) for g in grp)
        first = dict(grp[0])
        first["weight"] = float(np.mean([g["weight"] for g in grp]))
        if graded:
            # replicate grades are averaged; the mean decides against the pass mark
            first["grade"] = float(np.mean([g["grade"] for g in grp]))
            first["good"] = bool(first["grade"] >= thr)
            if len(verdicts) > 1:
                notes.append(f"rows {where} ({grp[0]['label']}): grades "
                             + ", ".join(f"{g['grade']:g}" for g in grp)
                             + f" straddle the pass mark {thr:g}; their mean {first['grade']:.3g} is used "
                             f"({'good' if first['good'] else 'bad'}): a borderline liquid, worth re-testing")
                merged.append(first)
                continue
        elif len(verdicts) > 1:
            n_good = sum(g["good"] for g in grp)
            n_bad = len(grp) - n_good
            if n_good == n_bad:
                problems.append(f"rows {where} ({grp[0]['label']}): the same liquid is recorded good "
                                f"{plural(n_good, 'time')} and bad {plural(n_bad, 'time')}; re-test it, or drop "
                                "the rows you trust least")
                continue
            first["good"] = n_good > n_bad
            notes.append(f"rows {where} ({grp[0]['label']}): {n_good} good and {n_bad} bad results; the "
                         f"majority ({'good' if first['good'] else 'bad'}) is used: a borderline liquid, "
                         "worth re-testing")
            merged.append(first)
            continue
        merged.append(first)
        notes.append(f"{grp[0]['label']}: {len(grp)} consistent rows merged into one test")
    # one name for two different liquids of the user's own (HSP given): a typing slip
    given_keys: dict[str, set] = {}
    for r in rows:
        if r["kind"] == "given" and r["label"] and not r["label"].startswith("("):
            given_keys.setdefault(r["label"].lower(), set()).add(r["_key"][1])
    for lab, keys in sorted(given_keys.items()):
        if len(keys) > 1:
            at = ", ".join(str(r["_row"]) for r in rows if r["kind"] == "given" and r["label"].lower() == lab)
            problems.append(f"rows {at}: the name {lab!r} is given to {len(keys)} different sets of HSP; give "
                            "each liquid a name of its own")
    if not problems:
        if len(merged) < MIN_TESTS:
            problems.append(f"too few tests: {plural(len(merged), 'distinct liquid')}; a sphere has four "
                            f"parameters, so at least {MIN_TESTS} (better 15-40) are needed")
        n_good = sum(1 for r in merged if r["good"])
        if n_good < 2:
            got = "no good result" if n_good == 0 else "only one good result"
            if graded and n_good == 0:
                top_grade = max(r["grade"] for r in merged) if merged else float("nan")
                got = f"no grade reaches the pass mark {thr:g} (the highest given is {top_grade:g})"
            problems.append(f"{got}: at least two liquids that dissolve the solute are needed to place a sphere")
    if problems:
        raise InputTableError("lab tests", problems)
    if no_alpha:
        notes.append("no expansion coefficient, 25 C HSP used for: " + ", ".join(sorted(set(no_alpha))))
    if boiling:
        notes.append("tested at or above their boiling point (only possible under pressure; their HSP there is "
                     "an extrapolation, so check these rows): " + ", ".join(sorted(set(boiling))))
    out = pd.DataFrame(merged).drop(columns=["_key", "_row"])
    if graded:
        g = out["grade"].to_numpy(float)
        if lo_hi is None:
            lo_hi = (float(min(g.min(), thr)), float(max(g.max(), thr)))
            if lo_hi[1] <= lo_hi[0]:
                lo_hi = (lo_hi[0], lo_hi[0] + 1.0)
        out.attrs.update(graded=True, threshold=float(thr), scale=lo_hi)
    else:
        out.attrs.update(graded=False, threshold=None, scale=None)
    out.attrs["notes"] = notes
    out.attrs["outcome_column"] = col
    return out


# ============================================================================ fitting engine

def _loss_at(q, wm, good, R):
    """Summed loss at radius R (broadcast over leading axes)."""
    Rx = R[..., None]
    return (wm * np.where(good, np.maximum(q - Rx, 0.0), np.maximum(Rx - q, 0.0))).sum(-1)


def _best_radius(q, wm, good):
    """Exact optimal R0 per leading index for (rescaled) distances ``q`` (..., n).

    ``wm`` weights and ``good`` flags broadcast to ``q``. Returns (R, S): the smallest R0 that
    minimises the summed loss S (see module doc: slope = W(q <= R) - G).
    """
    if np.all(wm == 1.0):
        # unit weights: the optimum is the G-th smallest distance (G = number of goods)
        G = np.broadcast_to(good, q.shape[:-1] + np.shape(good)[-1:]).sum(-1)
        g0 = int(G.flat[0])
        if np.all(G == g0) and 1 <= g0:
            R = np.partition(q, g0 - 1, axis=-1)[..., g0 - 1]
            return R, _loss_at(q, wm, good, R)
    wm = np.broadcast_to(wm, q.shape)
    good = np.broadcast_to(good, q.shape)
    order = np.argsort(q, axis=-1, kind="stable")
    qs = np.take_along_axis(q, order, -1)
    cum = np.cumsum(np.take_along_axis(wm, order, -1), -1)
    G = (wm * good).sum(-1)
    k = np.argmax(cum >= (G * (1 - 1e-12))[..., None], axis=-1)
    R = np.take_along_axis(qs, k[..., None], -1)[..., 0]
    return R, _loss_at(q, wm, good, R)


def _dist(C, P, m):
    """Rescaled distances q (..., M, n) from centres C (..., M, 3) to points P (..., n, 3)."""
    ref = P.mean(-2, keepdims=True)  # centring keeps the expanded form accurate
    C = C - ref
    P = P - ref
    cc = (C * C).sum(-1)[..., :, None]
    pp = (P * P).sum(-1)[..., None, :]
    d2 = cc + pp - 2.0 * np.matmul(C, np.swapaxes(P, -1, -2))
    return np.sqrt(np.maximum(d2, 0.0)) / m[..., None, :]


#: Box the fitted centre stays in (MPa^0.5, scaled like the tests: dD doubled): dD 5-30, dP 0-40,
#: dH 0-50, the bounds a typed target is held to (:data:`selector.targets.TARGET_MAX`), so that a
#: fitted sphere can always be used as a target.
CENTRE_LO = np.array([2 * 5.0, 0.0, 0.0])
CENTRE_HI = np.array([2 * 30.0, 40.0, 50.0])


def _clip(C):
    return np.minimum(np.maximum(C, CENTRE_LO), CENTRE_HI)


def _objective(C, P, wm, good, m, W):
    q = _dist(C, P, m)
    R, S = _best_radius(q, wm[..., None, :], good[..., None, :])
    return S / W[..., None] + TIE * R, R, S


def _rotations(rng, k=32):
    """k random rotations (QR of Gaussian matrices, sign-fixed), drawn from ``rng``."""
    qm, r = np.linalg.qr(rng.normal(size=(k, 3, 3)))
    return qm * np.sign(np.diagonal(r, axis1=-2, axis2=-1))[:, None, :]


def _pattern_search(C0, h0, P, wm, good, m, W, rng, min_step=FINE_STEP, max_iter=400):
    """Batched pattern search. C0 (..., K, 3); returns best C, f per (..., K)."""
    C = _clip(np.array(C0, float))
    f, _, _ = _objective(C, P, wm, good, m, W)
    h = np.full(f.shape, float(h0))
    dirs = _CUBE[None] @ np.swapaxes(_rotations(rng), -1, -2)  # (32, 26, 3)
    for it in range(max_iter):
        active = h >= min_step
        if not active.any():
            break
        D = dirs[it % len(dirs)]  # (26, 3)
        cand = _clip(C[..., None, :] + h[..., None, None] * D)  # (..., K, 26, 3)
        shp = cand.shape
        cf, _, _ = _objective(cand.reshape(shp[:-3] + (-1, 3)), P, wm, good, m, W)
        cf = cf.reshape(shp[:-1])
        j = np.argmin(cf, axis=-1)
        best = np.take_along_axis(cf, j[..., None], -1)[..., 0]
        better = (best < f - 1e-15) & active
        newC = np.take_along_axis(cand, j[..., None, None], -2)[..., 0, :]
        C = np.where(better[..., None], newC, C)
        f = np.where(better, best, f)
        h = np.where(better | ~active, h, h * 0.5)
    return C, f


def _grid_axes(P, good, points=COARSE_POINTS):
    g = P[good]
    lo = g.min(0)
    hi = g.max(0)
    span = max(float((hi - lo).max()), 4.0)
    margin = 0.15 * span + 1.0
    lo = np.maximum(lo - margin, CENTRE_LO)
    hi = np.minimum(hi + margin, CENTRE_HI)
    step = float((hi - lo).max()) / (points - 1)
    axes = [np.arange(lo[a], hi[a] + 0.5 * step, step) for a in range(3)]
    return axes, step


def _grid(axes):
    X, Y, Z = np.meshgrid(*axes, indexing="ij")
    return np.stack([X.ravel(), Y.ravel(), Z.ravel()], -1)


def _separated(C, f, k, min_gap):
    order = np.argsort(f, kind="stable")
    picked = []
    for i in order[: max(50 * k, 200)]:
        if all(np.linalg.norm(C[i] - C[j]) >= min_gap for j in picked):
            picked.append(i)
            if len(picked) >= k:
                break
    return np.array(picked, int)


@dataclass
class _Fit:
    centre: np.ndarray  # scaled space
    radius: float
    loss: float  # summed
    mean_loss: float
    grid: np.ndarray  # coarse centres (scaled)
    grid_f: np.ndarray
    grid_S: np.ndarray
    step: float


def _fit_one(P, w, good, m, rng, starts=STARTS):
    """Global one-sphere fit in the scaled space. P (n,3) scaled points."""
    wm = w * m
    W = np.asarray(wm.sum())
    axes, step = _grid_axes(P, good)
    G = _grid(axes)
    f, R, S = _objective(G, P, wm, good, m, W)
    idx = _separated(G, f, starts, 1.5 * step)
    # all starts down to 1/16 of the grid step, then the best three to the end
    C, fc = _pattern_search(G[idx], step, P, wm, good, m, W, rng, min_step=step / 16)
    keep = np.argsort(fc, kind="stable")[:3]
    C, fc = _pattern_search(C[keep], step / 16, P, wm, good, m, W, rng)
    b = int(np.argmin(fc))
    c = C[b]
    Rb, Sb = _best_radius(_dist(c[None], P, m)[0], wm, good)
    return _Fit(c, float(Rb), float(Sb), float(Sb / W), G, f, S, step)


def _radius_range(q, wm, good, level):
    """Range [a, b] of R0 with summed loss <= level per leading index (NaN when none)."""
    wm = np.broadcast_to(wm, q.shape)
    good = np.broadcast_to(good, q.shape)
    order = np.argsort(q, axis=-1, kind="stable")
    qs = np.take_along_axis(q, order, -1)
    ws = np.take_along_axis(wm, order, -1)
    gs = np.take_along_axis(good, order, -1)
    wg, wb = ws * gs, ws * ~gs
    # S at R = qs[k]: goods beyond k, bads before k
    sufw = np.cumsum(wg[..., ::-1], -1)[..., ::-1] - wg
    sufq = np.cumsum((wg * qs)[..., ::-1], -1)[..., ::-1] - wg * qs
    prew = np.cumsum(wb, -1) - wb
    preq = np.cumsum(wb * qs, -1) - wb * qs
    Sk = sufq - qs * sufw + qs * prew - preq
    inside = Sk <= level[..., None]
    anyin = inside.any(-1)
    n = q.shape[-1]
    ka = np.argmax(inside, -1)
    kb = n - 1 - np.argmax(inside[..., ::-1], -1)
    take = lambda a, k: np.take_along_axis(a, k[..., None], -1)[..., 0]  # noqa: E731
    qa, Sa = take(qs, ka), take(Sk, ka)
    qb, Sb = take(qs, kb), take(Sk, kb)
    Gt, Bt = wg.sum(-1), wb.sum(-1)
    lev = level
    with np.errstate(divide="ignore", invalid="ignore"):
        # left end
        kap = np.maximum(ka - 1, 0)
        qp, Sp = take(qs, kap), take(Sk, kap)
        a_int = qa - (lev - Sa) * (qa - qp) / np.where(Sp - Sa > 0, Sp - Sa, np.inf)
        a_left = qa - (lev - Sa) / np.where(Gt > 0, Gt, np.inf)
        a = np.where(ka == 0, a_left, a_int)
        kbn = np.minimum(kb + 1, n - 1)
        qn, Sn = take(qs, kbn), take(Sk, kbn)
        b_int = qb + (lev - Sb) * (qn - qb) / np.where(Sn - Sb > 0, Sn - Sb, np.inf)
        b_right = qb + (lev - Sb) / np.where(Bt > 0, Bt, np.nan)
        b = np.where(kb == n - 1, b_right, b_int)
    a = np.maximum(a, 0.0)
    b = np.where(np.isfinite(b), b, np.nan)
    return np.where(anyin, a, np.nan), np.where(anyin, b, np.nan)


def _profile(fit: _Fit, P, w, good, m, level, max_points=8000):
    """Near-optimal region: centres (scaled) with their R0 ranges, summed loss <= best + level."""
    wm = w * m
    thr = fit.loss + level
    sel = fit.grid[fit.grid_S <= thr]
    pts = np.vstack([sel, fit.centre[None]]) if len(sel) else fit.centre[None]
    lo = pts.min(0) - fit.step
    hi = pts.max(0) + fit.step
    vol = float(np.prod(hi - lo))
    step = max(fit.step / 3.0, (vol / max_points) ** (1 / 3))
    axes = [np.arange(lo[a], hi[a] + 0.5 * step, step) for a in range(3)]
    Gf = _clip(np.vstack([_grid(axes), fit.centre[None]]))
    a_all, b_all = [], []
    for s in range(0, len(Gf), 4000):
        Cc = Gf[s:s + 4000]
        q = _dist(Cc, P, m)
        a, b = _radius_range(q, wm, good, np.full(len(Cc), thr))
        a_all.append(a)
        b_all.append(b)
    a = np.concatenate(a_all)
    b = np.concatenate(b_all)
    ok = np.isfinite(a)
    return Gf[ok], a[ok], b[ok], step


def _bootstrap(fit: _Fit, P, w, good, m, n_boot, rng, keep=150):
    """Stratified bootstrap refits, vectorised over samples. Returns (B, 4) unscaled spheres."""
    gi = np.flatnonzero(good)
    bi = np.flatnonzero(~good)
    B = int(n_boot)
    gidx = gi[rng.integers(0, len(gi), (B, len(gi)))]
    if len(gi) >= 2:
        # a resample that repeats one good liquid only has no sphere to place (R0 would be 0):
        # draw such rows again, so that the R0 interval does not reach down to an impossible 0
        for _ in range(50):
            one = np.all(gidx == gidx[:, :1], axis=1)
            if not one.any():
                break
            gidx[one] = gi[rng.integers(0, len(gi), (int(one.sum()), len(gi)))]
    idx = np.concatenate([gidx,
                          bi[rng.integers(0, len(bi), (B, len(bi)))] if len(bi) else np.zeros((B, 0), int)],
                         axis=1)
    Pb, wb, gb, mb = P[idx], w[idx], good[idx], m[idx]
    wmb = wb * mb
    W = wmb.sum(-1)
    order = np.argsort(fit.grid_f, kind="stable")[:keep]
    Gk = np.vstack([fit.grid[order], fit.centre[None]])
    out = np.empty((B, 4))
    chunk = 50
    for s in range(0, B, chunk):
        sl = slice(s, min(B, s + chunk))
        f, _, _ = _objective(np.broadcast_to(Gk, (sl.stop - sl.start,) + Gk.shape), Pb[sl], wmb[sl],
                             gb[sl], mb[sl], W[sl])
        j = np.argmin(f, -1)
        C0 = Gk[j][:, None, :]
        C, _ = _pattern_search(C0, fit.step, Pb[sl], wmb[sl], gb[sl], mb[sl], W[sl], rng, min_step=1e-2)
        C = C[:, 0, :]
        R, _ = _best_radius(_dist(C[:, None, :], Pb[sl], mb[sl])[:, 0, :], wmb[sl], gb[sl])
        out[sl, :3] = C / SCALE
        out[sl, 3] = R
    return out


def _two_loss(P, wm, good, m, C, R):
    """Summed loss of two spheres (C (2,3) scaled, R (2,))."""
    q = _dist(C, P, m)  # (2, n)
    out_by = q - R[:, None]
    lg = np.maximum(out_by.min(0), 0.0)
    lb = np.maximum(-out_by, 0.0).sum(0)
    return float((wm * np.where(good, lg, lb)).sum()), out_by


def _fit_two(P, w, good, m, rng, restarts=4):
    """Two-sphere fit by alternating assignment of the goods (module doc)."""
    gi = np.flatnonzero(good)
    if len(gi) < 4:
        return None
    wm = w * m
    Pg = P[gi]
    inits = []
    dd = np.sqrt(((Pg[:, None] - Pg[None]) ** 2).sum(-1))
    a, b = np.unravel_index(np.argmax(dd), dd.shape)
    inits.append(np.array([Pg[a], Pg[b]]))
    for _ in range(restarts):
        inits.append(Pg[rng.choice(len(gi), 2, replace=False)])
    best = None
    for cent in inits:
        lab = np.argmin(((Pg[:, None] - cent[None]) ** 2).sum(-1), 1)
        for _ in range(10):  # 2-means on the goods
            newc = np.array([Pg[lab == j].mean(0) if np.any(lab == j) else cent[j] for j in range(2)])
            nl = np.argmin(((Pg[:, None] - newc[None]) ** 2).sum(-1), 1)
            cent = newc
            if np.array_equal(nl, lab):
                break
            lab = nl
        seen = set()
        for _ in range(6):
            if min(np.sum(lab == 0), np.sum(lab == 1)) < 2 or lab.tobytes() in seen:
                break
            seen.add(lab.tobytes())
            Cs, Rs = [], []
            for j in range(2):
                sel = np.concatenate([gi[lab == j], np.flatnonzero(~good)])
                fj = _fit_one(P[sel], w[sel], good[sel], m[sel], rng, starts=4)
                Cs.append(fj.centre)
                Rs.append(fj.radius)
            C, R = np.array(Cs), np.array(Rs)
            S, out_by = _two_loss(P, wm, good, m, C, R)
            key = S / wm.sum() + TIE * R.sum()
            if best is None or key < best[0] - 1e-15:
                best = (key, S, C, R, lab.copy())
            lab = np.argmin(out_by[:, gi], 0)
    return best


# ============================================================================ result

@dataclass
class SphereFit:
    """A fitted Hansen sphere; usable as a target anywhere (``selector.rank(fit)``).

    Attributes: ``delta_d, delta_p, delta_h, radius`` (MPa^0.5, the main sphere), ``intervals``
    (parameter -> (low, high) MPa^0.5), ``misfits`` (DataFrame of tests the sphere gets wrong),
    ``score`` (weighted geometric mean of the desirability A_i, 1 = every test right),
    ``warnings`` (list of str), ``spheres`` (list of :class:`~selector.targets.Target`, two when
    the two-sphere model was adopted; as a target the fit stands for ``spheres[0]``, the one with
    more good results), ``all_intervals`` (one interval dict per sphere), ``tests`` (the
    validated tests with their Ra and RED), ``ensemble`` (per sphere, a (k, 4) array of
    bootstrap and near-optimal spheres dD, dP, dH, R0).
    """

    delta_d: float
    delta_p: float
    delta_h: float
    radius: float
    intervals: dict
    misfits: pd.DataFrame
    score: float
    warnings: list
    spheres: list
    tests: pd.DataFrame
    ensemble: list
    name: str = "fitted sphere"
    source: str = "fitted from lab tests"
    method: str = "classical desirability"
    bic: dict = field(default_factory=dict)
    library: pd.DataFrame | None = field(default=None, repr=False)
    all_intervals: list = field(default_factory=list)

    @property
    def hsp(self) -> np.ndarray:
        return np.array([self.delta_d, self.delta_p, self.delta_h])

    def describe(self) -> str:
        lines = []
        for i, s in enumerate(self.spheres):
            tag = "" if len(self.spheres) == 1 else f"sphere {i + 1}: "
            lines.append(f"{tag}dD {s.delta_d:.2f}, dP {s.delta_p:.2f}, dH {s.delta_h:.2f}, "
                         f"R0 {s.radius:.2f} MPa^0.5")
        return "\n".join(lines)

    def summary(self) -> pd.DataFrame:
        """One row per parameter of the main sphere: value, low, high (MPa^0.5)."""
        rows = []
        for k, v in zip(["delta_d", "delta_p", "delta_h", "radius"], self.values()):
            lo, hi = self.intervals[k]
            rows.append(dict(parameter=k, value=v, low=lo, high=hi))
        return pd.DataFrame(rows)

    def values(self):
        return [self.delta_d, self.delta_p, self.delta_h, self.radius]

    def contains(self, hsp) -> np.ndarray:
        """True where points (n, 3) lie inside any fitted sphere (RED <= 1)."""
        h = np.atleast_2d(np.asarray(hsp, float)) * SCALE
        inside = np.zeros(len(h), bool)
        for s in self.spheres:  # on the surface counts as inside, as in the fit
            inside |= np.sqrt(((h - s.hsp * SCALE) ** 2).sum(-1)) <= s.radius * (1 + 1e-9)
        return inside

    def on_surface(self, tol: float = 0.005) -> list[str]:
        """Good tests on the fitted surface (RED within ``tol`` of 1), one-sphere fits only: the fit
        is the tightest sphere holding the good tests, so the true one may be larger."""
        t = self.tests
        if len(self.spheres) != 1 or "red" not in t:
            return []
        return t.loc[t["good"].astype(bool) & (t["red"] > 1 - tol), "label"].astype(str).tolist()

    def surface_note(self) -> str:
        """One sentence naming :meth:`on_surface` ("" when none)."""
        edge = self.on_surface()
        if not edge:
            return ""
        return (f"{', '.join(edge)} {'sits' if len(edge) == 1 else 'sit'} on the surface (RED 1.00): the fit "
                "reports the tightest sphere that holds the good tests; the true one may be larger")

    def suggest_tests(self, n: int = 5, *, shelf=None, temperature: float = 25.0, **filters) -> pd.DataFrame:
        """Untested liquids whose result would shrink the fit's uncertainty most.

        Each ensemble sphere (bootstrap refits and near-optimal spheres) votes inside/outside for
        each candidate; with p the share voting inside, ``information = p (1 - p)`` is largest
        where the fits disagree. Ties (information equal to 0.01) go to the better CHEM21
        hazard class (:mod:`selector.hazards`; a liquid without hazard data counts as between
        hazardous and highly hazardous), then RED nearer 1, then smaller molar volume. ``shelf``: a
        list of names/CAS to choose from; other keyword filters as :mod:`selector.filters`.
        Returns name, cas, HSP, ``red`` (to the nearest fitted sphere), ``p_inside``, ``information``,
        boiling and flash point (C) and ``hazard_class``; ``attrs["notes"]`` says which shelf
        liquids were left out and why (tested already, a reagent, outside the filters) and when
        no candidate would tell the plausible spheres apart. Check the safety data sheet of every
        suggested liquid before testing it.
        """
        from .filters import check_filter_keys, check_temperature, filter_mask

        check_filter_keys(filters)
        t = check_temperature(temperature)
        try:
            n = int(n)
        except (TypeError, ValueError):
            raise SelectorError(f"n must be a whole number of liquids, got {n!r}") from None
        if n < 1:
            raise SelectorError("n must be at least 1")
        lib = self.library if self.library is not None else load_library()
        mask = filter_mask(lib, temperature=t, **filters)
        if shelf is not None:   # a stock list, not liquids named on purpose: the reagent screen applies
            from .library import locate_many

            shelf = list(shelf) if not isinstance(shelf, str) else [shelf]
            on_shelf = np.zeros(len(lib), dtype=bool)
            on_shelf[locate_many(shelf, lib, "shelf")] = True
            mask &= on_shelf
        tested = self.tests["liquid_index"].to_numpy(int)
        tested = tested[tested >= 0]
        mask[tested] = False
        if not mask.any():
            why = _shelf_notes(lib, shelf, tested, t, filters) if shelf is not None else []
            raise SelectorError("no untested liquid passes the filters / shelf list"
                                + (": " + "; ".join(why) if why else ""))
        cand = lib.loc[mask]
        from .ranking import corrected_hsp

        h = corrected_hsp(cand, t) * SCALE  # (N, 3)
        p_out = np.ones(len(h))
        for E in self.ensemble:  # inside any sphere: 1 - prod(1 - p_j)
            d = np.sqrt(((h[:, None, :] - (E[None, :, :3] * SCALE)) ** 2).sum(-1))  # (N, k)
            p_out *= 1.0 - (d < E[None, :, 3]).mean(1)
        p = 1.0 - p_out
        info = p * (1 - p)
        red_main = np.min([np.sqrt(((h - sp.hsp * SCALE) ** 2).sum(-1)) / sp.radius
                           for sp in self.spheres], axis=0)
        out = cand[["name", "cas"] + HSP + ["molar_volume", "boiling_point_c", "flash_point_c"]].copy()
        out["red"] = red_main
        out["p_inside"] = p
        out["information"] = info
        try:  # CHEM21 class where the hazards module knows the liquid
            from .hazards import hazard_columns

            hz = hazard_columns(lib).loc[cand.index]
            out["hazard_class"] = hz["hazard_class"].to_numpy()
            hrank = np.where(np.isfinite(hz["hazard_rank"].to_numpy(float)),
                             hz["hazard_rank"].to_numpy(float), 2.5)
        except (ImportError, KeyError, ValueError):
            hrank = np.zeros(len(out))
        order = np.lexsort((out["molar_volume"].to_numpy(float), np.abs(red_main - 1.0), hrank,
                            -np.round(info, 2)))
        out = out.iloc[order].head(n).reset_index(drop=True)
        notes = []
        if shelf is not None:
            notes += _shelf_notes(lib, shelf, tested, t, filters)
        if len(out) and float(out["information"].max()) < 0.01:
            notes.append("every plausible sphere agrees on these liquids (information near 0): a test "
                         "of any of them adds little; widen the shelf or the filters")
        out.attrs["notes"] = notes
        return out


def _shelf_notes(lib, shelf, tested, t, filters) -> list[str]:
    """Why shelf liquids are missing from the suggestions: tested already, a reagent, or
    filtered out."""
    from .cautions import reactive_reasons
    from .filters import filter_mask
    from .library import locate_many

    idx = locate_many(shelf, lib, "shelf")
    done = set(int(i) for i in tested)
    reasons = reactive_reasons(lib)
    loose = filter_mask(lib, temperature=t, **dict(filters, include_reactive=True))
    out = []
    names = lib["name"].astype(str).to_numpy()
    already = [names[i] for i in idx if int(i) in done]
    if already:
        out.append("already tested, so not suggested: " + ", ".join(already))
    reag = [f"{names[i]} ({reasons[i]})" for i in idx if int(i) not in done and reasons[i] and loose[i]]
    if reag and not filters.get("include_reactive"):
        out.append("reagents left out (--include-reactive to allow): " + ", ".join(reag))
    other = [names[i] for i in idx if int(i) not in done and not loose[i]]
    if other:
        out.append("outside the filters: " + ", ".join(other))
    return out


#: :func:`_deciding_tests` names a test whose removal cuts the misfit to this share or less ...
DECIDER_LOSS_SHARE = 0.2
#: ... and changes R0 by at least this share, or moves the centre by at least this share of R0.
DECIDER_CHANGE = 0.4


def _deciding_tests(one, P, w, good, m, rng, max_tests: int = 80) -> list:
    """``[(i, fit without test i), ...]``, best first, for the tests that alone bend the fit
    (leave-one-out: without one the misfit drops to :data:`DECIDER_LOSS_SHARE` or less and R0 or
    the centre moves by :data:`DECIDER_CHANGE` of R0 or more). Only for fits that miss some tests;
    about 10 ms a test."""
    n = len(P)
    if one.mean_loss <= 1e-12 or n < 6 or n > max_tests:
        return []
    found = []
    for i in range(n):
        keep = np.arange(n) != i
        if not good[keep].any() or good[keep].all():
            continue
        alt = _fit_one(P[keep], w[keep], good[keep], m[keep], rng)
        moved = float(np.linalg.norm(alt.centre - one.centre))
        changed = (abs(alt.radius - one.radius) >= DECIDER_CHANGE * one.radius
                   or moved >= DECIDER_CHANGE * one.radius)
        if alt.loss <= DECIDER_LOSS_SHARE * one.loss and changed:
            found.append((i, alt))
    return sorted(found, key=lambda x: x[1].loss)


def _warnings(fit_c, R, P, good, tests, notes, level_msgs):
    warn = list(level_msgs)
    n = len(P)
    if n < FEW_TESTS:
        warn.append(f"only {n} tests: the sphere is loosely defined; 15-40 well spread tests are usual")
    if good.all():
        warn.append("no bad result: every tested liquid dissolved the solute, so R0 is only a lower "
                    "bound and the centre is the middle of the good liquids")
    elif 0 < good.sum() < FEW_GOOD:
        k = int(good.sum())
        warn.append(f"only {k} good liquid{'s' if k > 1 else ''}: the sphere is drawn around "
                    f"{'them' if k > 1 else 'it'}, so R0 ({R:.1f}) may be far too small and the centre "
                    "rests on them alone; test more liquids near the centre (see the suggested next tests)")
    # goods on one side of the centre
    v = P[good] - fit_c
    nv = np.linalg.norm(v, axis=1)
    if len(v) >= 2 and np.all(nv > 1e-9):
        u = (v / nv[:, None]).mean(0)
        if np.linalg.norm(u) > 0.7:
            warn.append("the good liquids all lie on one side of the fitted centre: the centre is "
                        "extrapolated; test liquids beyond it (see the suggested next tests)")
    # sphere reaching outside the tested region
    lo, hi = P.min(0), P.max(0)
    names = ["dD", "dP", "dH"]
    reach = []
    for a in range(3):
        top = fit_c[a] + R
        bot = fit_c[a] - R
        if top > hi[a] + 2.0:
            reach.append(f"{names[a]} up to {top / SCALE[a]:.1f} (tests reach {hi[a] / SCALE[a]:.1f})")
        floor = 0.0 if a else 2 * 12.0
        if bot < lo[a] - 2.0 and bot > floor:
            reach.append(f"{names[a]} down to {bot / SCALE[a]:.1f} (tests reach {lo[a] / SCALE[a]:.1f})")
    if reach:
        warn.append("the sphere reaches outside the tested region (" + "; ".join(reach) +
                    "): nothing there confirms its edge")
    warn.extend(notes)
    return warn


#: Bootstrap resamples by default (library, command line and app alike): with fewer, the share of
#: plausible spheres containing a liquid (p_inside) moves by several hundredths from seed to seed,
#: enough to reorder the suggested next tests.
DEFAULT_BOOTSTRAP = 200


def fit_sphere(tests, *, seed: int = 0, bootstrap: int = DEFAULT_BOOTSTRAP, outcome: str | None = None,
               threshold: float | None = None, scale=None, temperature: float = 25.0,
               two_spheres: bool = False, grade_spread: float = 0.4, confidence: float = 0.95,
               library: pd.DataFrame | None = None, name: str = "fitted sphere") -> SphereFit:
    """Fit a solute's Hansen sphere to lab tests (see the module doc for every method).

    ``tests``: DataFrame or CSV path (columns as :func:`read_tests`), or the output of
    :func:`read_tests`. ``seed`` fixes every random choice (bootstrap, search directions);
    ``bootstrap``: number of resamples for the intervals (0 = profile region only); ``threshold``
    and ``scale``: numeric grades (graded desirability, spread ``grade_spread``);
    ``two_spheres``: also try two spheres, adopted only if the BIC says so; ``confidence``:
    interval level. Returns a :class:`SphereFit` (parameters in MPa^0.5).

    >>> import pandas as pd
    >>> t = pd.DataFrame({"solvent": ["toluene", "chloroform", "tetrahydrofuran", "2-butanone",
    ...     "ethyl acetate", "methanol", "water", "hexane", "ethanol", "ethylene glycol"],
    ...     "outcome": ["good"] * 5 + ["bad"] * 5})
    >>> fit = fit_sphere(t, bootstrap=20)
    >>> bool(fit.contains([[18.0, 1.4, 2.0]])[0]), fit.score == 1.0
    (True, True)
    """
    lib = load_library() if library is None else library
    if isinstance(tests, pd.DataFrame) and "good" in tests.columns and "graded" in tests.attrs:
        tab = tests
    else:
        tab = read_tests(tests, library=lib, outcome=outcome, threshold=threshold, scale=scale,
                         temperature=temperature)
    try:
        B = int(bootstrap)
        seed = int(seed)
    except (TypeError, ValueError):
        raise SelectorError("bootstrap and seed must be whole numbers") from None
    if B < 0:
        raise SelectorError("bootstrap must be >= 0")
    if isinstance(bootstrap, (float, np.floating)) and B != bootstrap:
        raise SelectorError(f"bootstrap must be a whole number of resamples, got {bootstrap!r}")
    if B > MAX_BOOTSTRAP:
        raise SelectorError(f"bootstrap = {B} resamples is more than {MAX_BOOTSTRAP:,} (each takes a whole "
                            "refit; 200-2,000 give stable 95 % intervals)")
    if seed < 0:
        raise SelectorError(f"the random seed must be a whole number of 0 or more, got {seed}")
    try:
        conf = float(confidence)
    except (TypeError, ValueError):
        conf = float("nan")
    if not (0.5 <= conf < 1.0):
        raise SelectorError(f"confidence must be between 0.5 and 1, got {confidence!r}")
    s = _to_float(grade_spread)
    if s is None or not (0 <= s < 1):
        raise SelectorError(f"grade_spread must be in [0, 1), got {grade_spread!r}")
    # canonical order: the fit does not depend on the order of the rows
    key = np.lexsort((tab["weight"].to_numpy(float), tab["good"].to_numpy(bool),
                      tab["delta_h"].to_numpy(float), tab["delta_p"].to_numpy(float),
                      tab["delta_d"].to_numpy(float)))
    tab = tab.iloc[key].reset_index(drop=True)
    P = tab[HSP].to_numpy(float) * SCALE
    good = tab["good"].to_numpy(bool)
    w = tab["weight"].to_numpy(float)
    w = w / w.mean()
    if tab.attrs.get("graded"):
        lo, hi = tab.attrs["scale"]
        m = 1.0 - s * (tab["grade"].to_numpy(float) - tab.attrs["threshold"]) / (hi - lo)
        method = f"graded desirability (spread {s:g})"
    else:
        m = np.ones(len(tab))
        method = "classical desirability"
    rng = np.random.default_rng(seed)
    from scipy.stats import chi2

    level = PROFILE_FACTOR * float(chi2.ppf(conf, 1) / 2.0)
    one = _fit_one(P, w, good, m, rng)
    if not one.radius > 1e-9:
        raise SelectorError("the fit collapses to a sphere of zero radius: the good results coincide "
                            "in Hansen space with each other or with bad ones; test more, different "
                            "liquids")
    n = len(P)
    bic1 = 2 * one.loss + 4 * math.log(n)
    msgs = []
    pinned = [f"{lab} {v:g}" for lab, v, at_edge in zip(
        ("dD", "dP", "dH"), (CENTRE_HI / SCALE).tolist(), np.isclose(one.centre, CENTRE_HI)) if at_edge]
    if np.isclose(one.centre[0], CENTRE_LO[0]):
        pinned.append(f"dD {CENTRE_LO[0] / SCALE[0]:g}")
    if pinned:
        msgs.append("the centre stops at the edge of the range it is searched in (" + ", ".join(pinned)
                    + " MPa^0.5, the most a target may have): the tests do not bound the sphere; "
                    "look for a wrong result (see below) or test liquids beyond the good ones")
    deciders = _deciding_tests(one, P, w, good, m, np.random.default_rng((seed, 3)))
    if len(deciders) > 1:
        msgs.append("the fit hangs on single results: without any one of "
                    + ", ".join(f"{tab['label'].iloc[i]} ({'good' if good[i] else 'bad'})" for i, _ in deciders)
                    + f" the sphere moves or changes size by more than {DECIDER_CHANGE:.0%} of R0 and fits the "
                    "rest better; more tests near them, and a repeat of each, would settle it")
    elif deciders:
        i, alt = deciders[0]
        c = alt.centre / SCALE
        label = str(tab["label"].iloc[i])
        msgs.append(f"one result decides this fit: without {label} (marked {'good' if good[i] else 'bad'}) "
                    f"the sphere would be dD {c[0]:.1f}, dP {c[1]:.1f}, dH {c[2]:.1f}, R0 {alt.radius:.1f} "
                    f"and fit every other test{'' if alt.mean_loss < 1e-12 else ' but a few'}, against R0 "
                    f"{one.radius:.1f} with it; check that result (mislabelled, contaminated, or a solute "
                    "that swells rather than dissolves?) before trusting the fit")
    bic = {"one_sphere": bic1}
    parts = [(one, np.arange(n))]
    if two_spheres:
        # a stream of its own: trying two spheres must not change the bootstrap of the one kept
        rng2 = np.random.default_rng((seed, 2))
        two = _fit_two(P, w, good, m, rng2)
        if two is None:
            msgs.append("two spheres not tried: fewer than four good results")
        else:
            _, S2, C2, R2, lab = two
            bic2 = 2 * S2 + 8 * math.log(n)
            bic["two_spheres"] = bic2
            if bic2 < bic1:
                gi = np.flatnonzero(good)
                parts = []
                for j in np.argsort([-np.sum(lab == 0), -np.sum(lab == 1)], kind="stable"):
                    sel = np.concatenate([gi[lab == j], np.flatnonzero(~good)])
                    fj = _fit_one(P[sel], w[sel], good[sel], m[sel], rng2)
                    parts.append((fj, sel))
                msgs.append(f"two spheres adopted: BIC {bic2:.1f} against {bic1:.1f} for one sphere; "
                            "used as a ranking target the fit stands for sphere 1 (more good results)")
            else:
                msgs.append(f"one sphere kept: two spheres do not pay for their four extra "
                            f"parameters (BIC {bic2:.1f} against {bic1:.1f})")
    spheres, ensembles, intervals_all = [], [], []
    for k, (fj, sel) in enumerate(parts):
        Ps, ws, gs, ms = P[sel], w[sel], good[sel], m[sel]
        c = fj.centre / SCALE
        from .targets import Target

        spheres.append(Target(float(c[0]), float(c[1]), float(c[2]), float(fj.radius),
                              name=name if len(parts) == 1 else f"{name} {k + 1}",
                              source=f"fitted from {n} lab tests"))
        Gr, a, b, st = _profile(fj, Ps, ws, gs, ms, level)
        cs = Gr / SCALE
        half = st / SCALE / 2
        iv = {}
        for j, kname in enumerate(["delta_d", "delta_p", "delta_h"]):
            iv[kname] = [float(cs[:, j].min() - half[j]), float(cs[:, j].max() + half[j])]
        bfin = np.where(np.isfinite(b), b, np.nan)
        iv["radius"] = [float(np.nanmin(a)), float(np.nanmax(bfin)) if np.isfinite(bfin).any() else math.inf]
        ens = []
        if B > 0 and (~gs).any():
            boot = _bootstrap(fj, Ps, ws, gs, ms, B, rng)
            ens.append(boot)
            q = [(1 - conf) / 2 * 100, (1 + conf) / 2 * 100]
            for j, kname in enumerate(["delta_d", "delta_p", "delta_h", "radius"]):
                bl, bh = np.percentile(boot[:, j], q)
                iv[kname] = [min(iv[kname][0], float(bl)), max(iv[kname][1], float(bh))]
        # sample of the near-optimal region for the next-test ensemble
        k_s = min(len(cs), 200)
        pick = rng.choice(len(cs), k_s, replace=False)
        bb = np.where(np.isfinite(b[pick]), b[pick], a[pick] * 1.5)
        rr = a[pick] + rng.random(k_s) * (bb - a[pick])
        ens.append(np.column_stack([cs[pick], rr]))
        for kname in ("delta_p", "delta_h"):
            iv[kname][0] = max(iv[kname][0], 0.0)
        iv["delta_d"][0] = max(iv["delta_d"][0], 0.0)
        iv["radius"][0] = max(iv["radius"][0], 0.0)
        intervals_all.append({k2: (float(v[0]), float(v[1])) for k2, v in iv.items()})
        ensembles.append(np.vstack(ens))
    main = spheres[0]
    # classification of every test against the adopted sphere(s)
    H = tab[HSP].to_numpy(float)
    ras = np.stack([np.sqrt((((H - sp.hsp) * SCALE) ** 2).sum(-1)) for sp in spheres])
    reds = ras / np.array([sp.radius for sp in spheres])[:, None]
    red_min = reds.min(0)
    inside = red_min <= 1.0 + 1e-9
    if len(spheres) == 1:
        S_tot, _ = _two_loss(P, w * m, good, m, np.array([one.centre]), np.array([one.radius]))
    else:
        S_tot, _ = _two_loss(P, w * m, good, m, np.array([p[0].centre for p in parts]),
                             np.array([p[0].radius for p in parts]))
    score = math.exp(-S_tot / float((w * m).sum()))
    tout = tab.copy()
    tout["ra"] = ras[np.argmin(reds, 0), np.arange(len(H))]
    tout["red"] = red_min
    tout["predicted_good"] = inside
    tout["correct"] = inside == good
    mis = tout.loc[~tout["correct"]].copy()
    mis["problem"] = np.where(mis["good"], "good but outside", "bad but inside")
    mis = mis[["label", "problem", "red", "ra"] + HSP + (["grade"] if tab.attrs.get("graded") else [])
              ].reset_index(drop=True)
    sel0 = parts[0][1]
    warn = _warnings(parts[0][0].centre, parts[0][0].radius, P[sel0], good[sel0], tab,
                     tab.attrs.get("notes", []), msgs)
    if len(P) < FEW_TESTS and len(sel0) >= FEW_TESTS:
        warn.insert(0, f"only {len(P)} tests: the sphere is loosely defined; 15-40 well spread tests are usual")
    res = SphereFit(main.delta_d, main.delta_p, main.delta_h, main.radius, intervals_all[0], mis,
                    float(score), warn, spheres, tout, ensembles, name=name,
                    source=f"fitted from {n} lab tests", method=method, bic=bic, library=lib,
                    all_intervals=intervals_all)
    return res
