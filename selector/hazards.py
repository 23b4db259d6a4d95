"""Hazard classes of solvents by the CHEM21 method: safety, health, environment scores and class.

Method: D. Prat, A. Wells, J. Hayler, H. Sneddon, C. R. McElroy, S. Abou-Shehada and
P. J. Dunn, "CHEM21 selection guide of classical- and less classical-solvents", Green Chem. 18
(2016) 288-296. Each solvent gets three scores from 1 (best) to 10 (worst), computed from data a
user can look up (the tables below are reproduced **from memory** of the paper; check them
against the paper before relying on an individual score):

Safety (flash point FP in C, from the library's ``chemicals`` value, else ``hazards.csv``):
FP > 60: 1; 23..60: 3; 0..22: 4; -20..-1: 5; < -20: 7; no flash point (not flammable): 1.
Add 1 for each of: auto-ignition temperature < 200 C; electrical resistivity > 1e8 ohm m
(static build-up, mostly hydrocarbons and ethers); peroxide former (EUH019); energy of
decomposition > 500 J/g (nitro compounds). At most 10.

Health (most severe GHS H3xx statement):

=====  =====================================================================
score  statements
=====  =====================================================================
9      H300 H310 H330 (acute toxicity 1-2); H340 H350 H360 (CMR category 1)
7      H314 (severe skin burns and eye damage)
6      H301 H311 H331 (acute toxicity 3); H341 H351 H361 (CMR category 2);
       H370 H372 (organ toxicity category 1)
4      H318 (serious eye damage); H334 (respiratory sensitiser)
2      H302 H312 H332 H304 H371 H373 H315 H317 H319 H320 H335 H336 EUH066 EUH070
1      no H3xx statement
=====  =====================================================================

plus 1 when the boiling point is below 85 C (more of it in the air). At most 10.

How the health rows were checked (all from memory of the guide's printed scores, not re-read):
the +1 rule is needed for ethanol 3 (H319, bp 78) against MIBK 2 (bp 116); methanol's 7
(H301 H311 H331 H370, bp 65) then puts acute toxicity 3 and H370 at 6, not 7; 2-MeTHF's 5
(H318, bp 80) puts H318 at 4; formic acid's 7 (H314 H331, bp 101) can then only come from
H314 at 7, which also makes acetic acid (H314 alone) problematic, as the guide ranks it.
H314 was scored 4 here before (corrosive amines and acids came out "recommended").

Environment: boiling point 70..139 C: 3; 50..69 or 140..200 C: 5; < 50 or > 200 C: 7 (hard to
contain, or energy-hungry to recycle); aquatic H412/H413: at least 5; H400/H410/H411: 7;
ozone layer (H420; EUH420 is accepted as a spelling): 10. Water scores 1 (the guide's own value).

Combination (the guide's "ranking by default"; colours green 1-3, yellow 4-6, red 7-10): one
score >= 8 or two red scores -> *hazardous*; one score of 7 or two yellow scores ->
*problematic*; otherwise *recommended*. The guide then revised some rankings after discussion
and lists a few solvents as *highly hazardous*. ``hazard_class`` is that final ranking where this
module knows it (``HIGHLY_HAZARDOUS_CAS`` and ``REVISED_CLASSES``, both quoted from memory of the
guide's table: methanol and acetone up to recommended; acetonitrile and dimethyl sulfoxide down to
problematic; pyridine, 1,4-dioxane and triethylamine down to hazardous), and
``hazard_class_default`` is always the default ranking computed from the scores.

A liquid without hazard statements in ``parameters/hazards.csv`` is **unclassified**, never
silently safe. Statements in that file are quoted from memory of the EU CLP harmonised
classification: confirm them with the supplier's safety data sheet.
"""
from __future__ import annotations

import functools
import math
import threading
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .errors import SelectorError
from .library import PARAMETERS_DIR, _key, load_library, locate

HAZARDS_CSV = PARAMETERS_DIR / "hazards.csv"

#: Classes from best to worst; ``class_rank`` is the position (unclassified: -1 / NaN).
HAZARD_CLASSES = ("recommended", "problematic", "hazardous", "highly hazardous")
UNCLASSIFIED = "unclassified"

METHOD = ("CHEM21 (Prat et al., Green Chem. 18 (2016) 288-296), scoring tables from memory; "
          "default ranking, revised after discussion where the guide did (from memory); suspected CMR "
          "or H372 at best problematic (this project's rule)")

#: Health score of each GHS statement (first four characters: H360FD counts as H360).
HEALTH_SCORES = {
    **dict.fromkeys(["H300", "H310", "H330", "H340", "H350", "H360"], 9),
    # H314 at 7: reconstructed from the guide's formic acid score (module doc; from memory)
    "H314": 7,
    # acute toxicity 3 at 6, not 7: methanol scores 7 with the +1 for its boiling point
    **dict.fromkeys(["H301", "H311", "H331", "H341", "H351", "H361", "H370", "H372"], 6),
    **dict.fromkeys(["H318", "H334"], 4),
    **dict.fromkeys(["H302", "H312", "H332", "H304", "H371", "H373", "H315", "H317", "H319",
                     "H320", "H335", "H336", "EUH066", "EUH070"], 2),
}
#: Environment score of aquatic / ozone statements.
ENVIRONMENT_SCORES = {"H412": 5, "H413": 5, "H400": 7, "H410": 7, "H411": 7, "H420": 10, "EUH420": 10}

#: Listed as "highly hazardous" in the guide after discussion (from memory): benzene, carbon
#: tetrachloride, chloroform, 1,2-dichloroethane, diethyl ether, carbon disulfide, nitromethane,
#: hexamethylphosphoramide.
HIGHLY_HAZARDOUS_CAS = frozenset({"71-43-2", "56-23-5", "67-66-3", "107-06-2", "60-29-7",
                                  "75-15-0", "75-52-5", "680-31-9"})

#: Rankings the guide revised after discussion (from memory of its table; CAS -> (default
#: class, final class)). The scores stay the default ones; only the class changes, and only when
#: the class computed from the row's own data is the guide's default (a user row with other data
#: keeps its computed class).
REVISED_CLASSES = {
    "67-56-1": ("problematic", "recommended"),    # methanol
    "67-64-1": ("problematic", "recommended"),    # acetone
    "75-05-8": ("recommended", "problematic"),    # acetonitrile
    "67-68-5": ("recommended", "problematic"),    # dimethyl sulfoxide
    "110-86-1": ("recommended", "hazardous"),     # pyridine
    "123-91-1": ("problematic", "hazardous"),     # 1,4-dioxane
    "121-44-8": ("problematic", "hazardous"),     # triethylamine
    # xylenes: the guide scores them as one entry, problematic (from memory); p- and m-xylene boil
    # just below the 140 C step of the environment score and would come out recommended alone,
    # o-xylene (144 C) problematic
    "106-42-3": ("recommended", "problematic"),   # p-xylene
    "108-38-3": ("recommended", "problematic"),   # m-xylene
}

WATER_CAS = "7732-18-5"

#: This project's rule on top of the guide: a liquid with a suspected carcinogen, mutagen or
#: reprotoxic statement (H341, H351, H361) or organ damage on repeated exposure (H372) is at best
#: *problematic*. The guide scores these 6 (yellow), so alone they leave a non-flammable liquid
#: "recommended" by default (1,1,2-trichloroethane, H351; 2-hexanone, H361f H372, the
#: neurotoxic ketone industry moved away from); the guide's own revisions after discussion went
#: the same way for such solvents (dichloromethane). ``hazard_class_default`` keeps the computed class.
CAP_PROBLEMATIC = ("H341", "H351", "H361", "H372")


#: Short plain-language flags for the GHS hazard statements a formulator must not miss
#: (statement texts of the GHS, UN 2019 rev. 8, condensed).
STATEMENT_FLAGS = (
    ("fatal on exposure", ("H300", "H310", "H330")),
    ("toxic", ("H301", "H311", "H331")),
    ("corrosive", ("H314",)),
    ("serious eye damage", ("H318",)),
    ("carcinogen, mutagen or reprotoxic", ("H340", "H350", "H360")),
    ("suspected carcinogen, mutagen or reprotoxic", ("H341", "H351", "H361")),
    ("organ damage", ("H370", "H372")),
    ("may damage organs", ("H371", "H373")),
    ("sensitiser", ("H317", "H334")),
    ("aspiration hazard", ("H304",)),
    ("harmful", ("H302", "H312", "H332")),
    ("extremely or highly flammable", ("H224", "H225")),
    ("flammable", ("H226",)),
    ("peroxide former", ("EUH019",)),
    ("toxic to aquatic life", ("H400", "H410", "H411")),
)


def statement_flags(statements) -> str:
    """Comma-separated flags (:data:`STATEMENT_FLAGS`) for a set of GHS statements ("" if none).

    >>> statement_flags(("H226", "H302", "H311", "H314", "H331"))   # morpholine-like
    'toxic, corrosive, flammable'
    >>> statement_flags(("H225", "H319", "H336"))
    'extremely or highly flammable'
    """
    codes = {_code(c) for c in statements}
    got = [flag for flag, hs in STATEMENT_FLAGS if codes & set(hs)]
    return ", ".join(f for f in got if not set(_SUBSUMED_BY.get(f, ())) & set(got))


#: a flag left out when a stronger one of the same kind is there
_SUBSUMED_BY = {"toxic": ("fatal on exposure",), "harmful": ("fatal on exposure", "toxic"),
                "suspected carcinogen, mutagen or reprotoxic": ("carcinogen, mutagen or reprotoxic",),
                "may damage organs": ("organ damage",), "flammable": ("extremely or highly flammable",)}


#: The note of a liquid whose decomposition energy is high (``hazards.csv``; nitro compounds).
DECOMPOSITION_NOTE = "high decomposition energy (do not heat or distil to dryness; keep from amines and bases)"

#: The hazard note of a liquid without hazard statements here (``"unclassified"``).
NO_DATA_NOTE = "no hazard data: treat as hazardous until the safety data sheet says otherwise"


def component_notes(components, library) -> list[str]:
    """For each tuple of liquid names, "name: flags; ..." for the components that carry any
    :func:`statement_flags` (hazard statements of ``parameters/hazards.csv``), a reagent reason
    (:mod:`selector.cautions`), or :data:`NO_DATA_NOTE` for unclassified ones, followed by a
    "REACTIVE PAIR ..." note for each pair of components that react
    (:func:`selector.cautions.pair_reasons`). Worked out once per distinct component name."""
    from .cautions import pair_reasons

    wanted = sorted({c for comp in components for c in comp})
    if not wanted:
        return ["" for _ in components]
    sub = library.loc[library["name"].astype(str).isin(wanted)].drop_duplicates("name")
    flags = dict(zip(sub["name"].astype(str), liquid_notes(sub)))
    by_name = sub.set_index(sub["name"].astype(str), drop=False)
    out = []
    for comp in components:
        notes = [f"{c}: {flags[c]}" for c in comp if flags.get(c)]
        if len(comp) > 1:
            notes += [f"REACTIVE PAIR {r}" for r in pair_reasons(by_name.loc[list(comp)])]
        out.append("; ".join(notes))
    return out


def liquid_notes(library: pd.DataFrame, table: pd.DataFrame | None = None) -> np.ndarray:
    """Hazard note of each row of ``library`` (object array of str, "" = nothing to flag): the
    reagent reason ("REAGENT: ...", :mod:`selector.cautions`), then the :func:`statement_flags`
    of its statements in ``parameters/hazards.csv`` and :data:`DECOMPOSITION_NOTE` where that table
    marks a high decomposition energy, or :data:`NO_DATA_NOTE` where it has none
    (unclassified). ``table``: :func:`hazard_columns` of ``library`` when the caller has it.
    Flags are worked out once per distinct statement list."""
    from .cautions import reactive_reasons

    hz = hazard_columns(library) if table is None else table
    st_ = hz["h_statements"].astype(str)
    uniq = pd.unique(st_)
    flags = st_.map(dict(zip(uniq, (statement_flags(parse_statements(u)) for u in uniq)))).to_numpy(object)
    if "high_decomposition_energy" in hz:
        # nitroalkanes and nitrobenzene (hazards.csv): energetic, sensitised by amines and bases
        hot = hz["high_decomposition_energy"].to_numpy(bool)
        flags = np.where(hot, np.where(flags == "", "", flags + ", ") + DECOMPOSITION_NOTE, flags)
    flags = np.where(hz["hazard_class"].to_numpy(object) == UNCLASSIFIED, NO_DATA_NOTE, flags)
    why = reactive_reasons(library)
    reagent = np.where(why != "", "REAGENT: " + why.astype(str).astype(object), "")
    both = (reagent != "") & (flags != "")
    return np.where(both, reagent + ", " + flags, np.where(reagent != "", reagent, flags)).astype(object)


def _code(s: str) -> str:
    s = s.strip().upper()
    return s if s.startswith("EUH") else s[:4]


def parse_statements(text) -> tuple[str, ...]:
    """Split a space/comma/semicolon separated list of GHS statements into normalised codes.

    >>> parse_statements("H225 H360FD, euh019 h361d")
    ('H225', 'H360FD', 'EUH019', 'H361d')
    """
    if text is None or (isinstance(text, float) and math.isnan(text)):
        return ()
    parts = str(text).replace(",", " ").replace(";", " ").split()
    out = []
    for p in parts:
        p = p.strip()
        p = p[:4].upper() + p[4:] if not p.upper().startswith("EUH") else p.upper()
        if not (p.startswith("H") or p.startswith("EUH")):
            raise SelectorError(f"not a GHS hazard statement: {p!r} (expected e.g. H225 or EUH019)")
        out.append(p)
    return tuple(out)


def safety_score(flash_point_c, autoignition_c=np.nan, peroxide_former=False, high_resistivity=False,
                 high_decomposition_energy=False):
    """CHEM21 safety score (1-10) from the flash point (C) and the aggravating properties.

    ``flash_point_c``: NaN means *not flammable* (no flash point); unknown flash points must be
    resolved by the caller. Vectorised. Prat et al., Green Chem. 18 (2016) 288 (table from
    memory).

    >>> safety_score([4.0, -45.0, 90.0], [530.0, 175.0, np.nan], [False, True, False],
    ...              [True, True, False]).tolist()
    [5, 10, 1]
    """
    fp = np.asarray(flash_point_c, dtype=float)
    ait = np.asarray(autoignition_c, dtype=float)
    with np.errstate(invalid="ignore"):
        base = np.select([np.isnan(fp), fp > 60, fp >= 23, fp >= 0, fp >= -20], [1, 1, 3, 4, 5], 7)
        extra = ((ait < 200).astype(int) + np.asarray(peroxide_former, dtype=bool).astype(int)
                 + np.asarray(high_resistivity, dtype=bool).astype(int)
                 + np.asarray(high_decomposition_energy, dtype=bool).astype(int))
    return np.minimum(base + extra, 10).astype(int)


def health_score(statements, boiling_point_c) -> int:
    """CHEM21 health score (1-10): most severe H3xx statement, +1 if the boiling point < 85 C.

    >>> health_score(("H225", "H319"), 78.0)   # ethanol
    3
    >>> health_score(("H360D", "H319"), 202.0)  # NMP
    9
    """
    s = max([HEALTH_SCORES.get(_code(c), 1) for c in statements] + [1])
    bp = float(boiling_point_c)
    if math.isfinite(bp) and bp < 85.0:
        s += 1
    return int(min(s, 10))


def environment_score(statements, boiling_point_c) -> int:
    """CHEM21 environment score (1-10) from the boiling point (C) and aquatic/ozone statements.

    >>> environment_score(("H225", "H410"), 98.0)   # heptane
    7
    >>> environment_score((), 77.1)                  # ethyl acetate
    3
    """
    bp = float(boiling_point_c)
    if not math.isfinite(bp):
        s = 5
    elif 70.0 <= bp <= 139.0:
        s = 3
    elif 50.0 <= bp <= 200.0:
        s = 5
    else:
        s = 7
    for c in statements:
        s = max(s, ENVIRONMENT_SCORES.get(_code(c), 0))
    return int(min(s, 10))


def combine(safety, health, environment) -> np.ndarray:
    """CHEM21 ranking by default from the three scores (vectorised); returns class names.

    >>> combine([5, 1, 6], [6, 7, 3], [3, 7, 3]).tolist()
    ['problematic', 'hazardous', 'recommended']
    """
    sc = np.stack([np.asarray(safety, float), np.asarray(health, float),
                   np.asarray(environment, float)], axis=-1)
    mx = sc.max(axis=-1)
    red = (sc >= 7).sum(axis=-1)
    yellow = ((sc >= 4) & (sc <= 6)).sum(axis=-1)
    out = np.select([(mx >= 8) | (red >= 2), (mx >= 7) | (yellow >= 2)],
                    ["hazardous", "problematic"], "recommended")
    return out.astype(object)


@functools.lru_cache(maxsize=1)
def _statement_table() -> pd.DataFrame:
    df = pd.read_csv(HAZARDS_CSV, dtype=str, keep_default_na=False)
    need = {"cas", "name", "h_statements", "peroxide_former", "high_resistivity",
            "high_decomposition_energy", "flash_point_c", "regulatory_note", "source"}
    missing = need - set(df.columns)
    if missing:
        raise SelectorError(f"{HAZARDS_CSV.name}: missing column(s) {', '.join(sorted(missing))}")
    df["statements"] = [parse_statements(x) for x in df["h_statements"]]
    for c in ("peroxide_former", "high_resistivity", "high_decomposition_energy"):
        df[c] = df[c].str.strip().str.lower() == "true"
    fp = df["flash_point_c"].str.strip().str.lower()
    df["not_flammable"] = fp == "none"
    df["csv_flash_point_c"] = pd.to_numeric(fp.where(~df["not_flammable"] & (fp != "")), errors="coerce")
    # EUH019 ("may form explosive peroxides") always counts as a peroxide former
    df["peroxide_former"] |= df["statements"].map(lambda t: "EUH019" in t)
    return df


def hazard_statements() -> pd.DataFrame:
    """Copy of the bundled statement table ``parameters/hazards.csv`` (parsed)."""
    return _statement_table().copy()


def _flash_from_statements(stmts) -> float:
    # worst flash point consistent with the flammability statement (conservative)
    if "H224" in stmts or "H225" in stmts:
        return -21.0
    if "H226" in stmts:
        return 23.0
    return np.nan


def hazard_table(library: pd.DataFrame | None = None) -> pd.DataFrame:
    """CHEM21 scores and class of every liquid in ``library`` (same row order).

    Columns: ``safety_score, health_score, environment_score`` (1-10, NaN if unclassified),
    ``hazard_class`` (a :data:`HAZARD_CLASSES` name or ``"unclassified"``), ``hazard_rank``
    (0 = recommended .. 3 = highly hazardous, NaN if unclassified), ``hazard_class_default``,
    ``h_statements``, ``peroxide_former``, ``high_decomposition_energy``, ``regulatory_note``,
    ``hazard_source``, ``flash_point_basis`` (where the flash point for the safety score came from).
    Liquids are matched to ``hazards.csv`` by CAS number.
    """
    lib = load_library() if library is None else library
    st = _statement_table().drop_duplicates("cas").set_index("cas")
    n = len(lib)
    cas = _cas_keys(lib).astype(str).to_numpy()   # a table without CAS numbers: all unclassified
    idx = st.index.get_indexer(cas)
    known = (idx >= 0) & (cas != "")
    bp = lib["boiling_point_c"].to_numpy(float)
    lib_fp = lib["flash_point_c"].to_numpy(float) if "flash_point_c" in lib else np.full(n, np.nan)
    ait = lib["autoignition_c"].to_numpy(float) if "autoignition_c" in lib else np.full(n, np.nan)

    out = pd.DataFrame(index=lib.index)
    out["safety_score"] = np.nan
    out["health_score"] = np.nan
    out["environment_score"] = np.nan
    out["hazard_class"] = UNCLASSIFIED
    out["hazard_class_default"] = UNCLASSIFIED
    out["hazard_rank"] = np.nan
    out["h_statements"] = ""
    out["peroxide_former"] = False
    out["high_decomposition_energy"] = False
    out["regulatory_note"] = ""
    out["hazard_source"] = "no hazard data: unclassified (check the supplier's safety data sheet)"
    out["flash_point_basis"] = NO_DATA_FLASH_BASIS
    if not known.any():
        return out
    rows = st.iloc[idx[known]]
    stm = rows["statements"].tolist()
    fp = lib_fp[known].copy()
    lib_src = (lib["flash_point_source"].astype("string").fillna("").astype(str).to_numpy(object)[known]
               if "flash_point_source" in lib else np.full(int(known.sum()), "", dtype=object))
    user = (lib["origin"].astype(str).to_numpy()[known] == "user") if "origin" in lib else np.zeros(int(known.sum()), bool)
    blank_src = np.where(user, "your value", "library: chemicals")
    basis = np.where(np.isfinite(fp), np.where(lib_src == "", blank_src, "library: " + lib_src.astype(object)),
                     NO_FLASH_BASIS).astype(object)
    csv_fp = rows["csv_flash_point_c"].to_numpy(float)
    nf = rows["not_flammable"].to_numpy(bool)
    use_csv = ~np.isfinite(fp) & np.isfinite(csv_fp)
    fp[use_csv] = csv_fp[use_csv]
    basis[use_csv] = "hazards.csv (from memory)"
    nonflam = ~np.isfinite(fp) & nf
    basis[nonflam] = "not flammable (hazards.csv, from memory)"
    guess = np.array([_flash_from_statements(s) for s in stm], dtype=float)
    use_h = ~np.isfinite(fp) & ~nf & np.isfinite(guess)
    fp[use_h] = guess[use_h]
    basis[use_h] = "worst case of the H22x statement"
    # no flash point, not marked non-flammable and no H22x statement: no flammability hazard known
    s = safety_score(fp, ait[known], rows["peroxide_former"].to_numpy(bool),
                     rows["high_resistivity"].to_numpy(bool),
                     rows["high_decomposition_energy"].to_numpy(bool))
    h = np.array([health_score(t, b) for t, b in zip(stm, bp[known])])
    e = np.array([environment_score(t, b) for t, b in zip(stm, bp[known])])
    kcas = cas[known]
    water = kcas == WATER_CAS
    e[water] = 1
    cls = combine(s, h, e)
    final = cls.copy()
    rev = pd.Series(kcas).map(REVISED_CLASSES)
    for i in np.flatnonzero(rev.notna().to_numpy()):
        default, revised = rev.iloc[i]
        if cls[i] == default:
            final[i] = revised
    capped = np.array([any(x[:4] in CAP_PROBLEMATIC for x in t) for t in stm], dtype=bool)
    final[capped & (final == "recommended")] = "problematic"
    final[np.isin(kcas, list(HIGHLY_HAZARDOUS_CAS))] = "highly hazardous"
    pos = np.flatnonzero(known)
    col = out.columns.get_loc
    out.iloc[pos, col("safety_score")] = s
    out.iloc[pos, col("health_score")] = h
    out.iloc[pos, col("environment_score")] = e
    out.iloc[pos, col("hazard_class")] = final
    out.iloc[pos, col("hazard_class_default")] = cls
    out.iloc[pos, col("hazard_rank")] = [HAZARD_CLASSES.index(c) for c in final]
    out.iloc[pos, col("h_statements")] = [" ".join(t) for t in stm]
    out.iloc[pos, col("peroxide_former")] = rows["peroxide_former"].to_numpy(bool)
    out.iloc[pos, col("high_decomposition_energy")] = rows["high_decomposition_energy"].to_numpy(bool)
    out.iloc[pos, col("regulatory_note")] = rows["regulatory_note"].to_numpy(str)
    out.iloc[pos, col("hazard_source")] = (rows["source"].to_numpy(str).astype(object)
                                           + "; scores: " + METHOD)
    out.iloc[pos, col("flash_point_basis")] = basis
    out["peroxide_former"] = out["peroxide_former"].astype(bool)
    out["high_decomposition_energy"] = out["high_decomposition_energy"].astype(bool)
    return out


@functools.lru_cache(maxsize=4)
def _bundled_table() -> pd.DataFrame:
    return hazard_table(load_library())


def hazard_columns(library: pd.DataFrame | None = None) -> pd.DataFrame:
    """:func:`hazard_table` for ``library`` (a copy), cached by the content it is computed from."""
    if library is None:
        return _bundled_table().copy()
    snap = _table_inputs(library)
    with _CACHE_LOCK:
        hit = next((t for s, t in _TABLE_CACHE if _same_inputs(s, snap)), None)
    if hit is None:
        hit = hazard_table(library)
        with _CACHE_LOCK:
            _TABLE_CACHE.append((snap, hit))
            del _TABLE_CACHE[:-8]
    return hit.copy()


# hazard tables with the library columns they were computed from (the bundled library, or one
# with the user's own liquids), so a repeated ranking does not recompute them; comparing the
# columns is cheaper than hashing them. The web front end calls this from several threads.
_TABLE_CACHE: list = []
_CACHE_LOCK = threading.Lock()

#: Columns :func:`hazard_table` reads from the library.
_TABLE_INPUTS = ("cas", "flash_point_source", "origin", "boiling_point_c", "flash_point_c", "autoignition_c")


def _table_inputs(lib: pd.DataFrame) -> tuple:
    cols = tuple((c, lib[c].to_numpy()) for c in _TABLE_INPUTS if c in lib)
    return (lib.index.to_numpy(),) + cols


def _same_inputs(a: tuple, b: tuple) -> bool:
    if len(a) != len(b) or a[0].shape != b[0].shape or not (a[0] == b[0]).all():
        return False
    for (ca, va), (cb, vb) in zip(a[1:], b[1:]):
        if ca != cb or va.dtype != vb.dtype:
            return False
        if va.dtype.kind == "f":
            if not np.array_equal(va, vb, equal_nan=True):
                return False
        elif not (va == vb).all():
            return False
    return True


def _cas_keys(frame: pd.DataFrame) -> pd.Series:
    if "cas" not in frame:
        return pd.Series("", index=frame.index, dtype=object)
    cas = frame["cas"].astype("string").fillna("").str.strip()
    return cas.mask(cas.str.lower().isin(["nan", "none", "<na>"]), "").astype(object)


def attach_hazards(df: pd.DataFrame, library: pd.DataFrame | None = None,
                   columns=("hazard_class",), table: pd.DataFrame | None = None) -> pd.DataFrame:
    """``df`` (rows naming liquids of ``library``) with hazard columns joined in.

    Rows are matched to ``library`` by CAS number, and by name where a row has no CAS or one the
    library does not know (user liquids may have none). A row that matches nothing gets
    ``"unclassified"`` (not "safe": no hazard data here). Columns already in ``df`` are kept.
    ``table`` is :func:`hazard_columns` of ``library`` when the caller has it cached. Used by the
    command line and the web front end alike.

    >>> lib = load_library()
    >>> r = attach_hazards(lib.loc[lib["name"].isin(["toluene", "ethyl acetate"]), ["name", "cas"]])
    >>> sorted(zip(r["name"], r["hazard_class"]))
    [('ethyl acetate', 'recommended'), ('toluene', 'problematic')]
    """
    lib = load_library() if library is None else library
    t = hazard_columns(lib) if table is None else table
    lib_cas = _cas_keys(lib).to_numpy()
    lib_names = lib["name"].astype(str).map(_key).to_numpy()
    out = df.copy()
    want_cas = _cas_keys(out)
    want_names = out["name"].astype(str).map(_key) if "name" in out else None
    for c in columns:
        if c in out or c not in t:
            continue
        vals = t[c].to_numpy()
        by_cas = pd.Series(vals, index=lib_cas)
        by_cas = by_cas[(by_cas.index != "") & ~by_cas.index.duplicated()]
        got = want_cas.map(by_cas)
        if want_names is not None:
            by_name = pd.Series(vals, index=lib_names)
            got = got.where(got.notna(), want_names.map(by_name[~by_name.index.duplicated()]))
        out[c] = got.to_numpy()
    if "hazard_class" in out:
        out["hazard_class"] = out["hazard_class"].fillna(UNCLASSIFIED)
    return out


def class_rank(name: str) -> int:
    """Position of a class name in :data:`HAZARD_CLASSES` (0 = recommended).

    >>> class_rank("problematic")
    1
    """
    k = str(name).strip().lower().replace("_", " ").replace("-", " ")
    if k not in HAZARD_CLASSES:
        raise SelectorError(f"unknown hazard class {name!r}; use one of {', '.join(HAZARD_CLASSES)}")
    return HAZARD_CLASSES.index(k)


#: ``flash_point_basis`` of a liquid without hazard data (its safety score is not worked out).
NO_DATA_FLASH_BASIS = "not scored (no hazard data)"
#: ``flash_point_basis`` of a classified liquid with no flash point, no H22x statement and no
#: "not flammable" mark: scored as having no flammability hazard known.
NO_FLASH_BASIS = "none known (no flash point, no H22x statement)"


@dataclass(frozen=True)
class HazardRecord:
    """CHEM21 scores (1-10), class, GHS statements and sources for one liquid."""

    name: str
    cas: str
    safety_score: float
    health_score: float
    environment_score: float
    hazard_class: str
    hazard_class_default: str
    statements: tuple[str, ...]
    peroxide_former: bool | None   # None: no hazard data for the liquid, not "no"
    regulatory_note: str
    sources: dict = field(default_factory=dict)
    caution: str = ("Confirm every hazard statement with the supplier's safety data sheet; local "
                    "regulation and your site's rules come first.")

    @property
    def classified(self) -> bool:
        return self.hazard_class != UNCLASSIFIED

    def as_dict(self) -> dict:
        return {k: getattr(self, k) for k in self.__dataclass_fields__}


def hazard(liquid, library: pd.DataFrame | None = None) -> HazardRecord:
    """CHEM21 hazard record of one liquid (name, synonym, CAS or SMILES).

    Scores and class by the CHEM21 method (Prat et al., Green Chem. 18 (2016) 288-296; tables from
    memory, see the module doc). A liquid without statements in ``parameters/hazards.csv`` comes
    back ``"unclassified"`` with NaN scores.

    >>> r = hazard("ethyl acetate")
    >>> (r.safety_score, r.health_score, r.environment_score, r.hazard_class)
    (5, 3, 3, 'recommended')
    """
    lib = load_library() if library is None else library
    if isinstance(liquid, str) and liquid.strip() and _key(liquid) in set(_statement_table()["name"].map(_key)) \
            and not _in_library(liquid, lib):
        # a hazard-table entry that is not in the liquid library (e.g. solid at 25 C)
        st = _statement_table()
        row = st.loc[st["name"].map(_key) == _key(liquid)].iloc[0]
        raise SelectorError(f"{row['name']} ({row['cas']}) has hazard statements but is not in the "
                            "liquid library (no boiling point to score it); statements: "
                            f"{row['h_statements'] or 'none'}")
    i = locate(liquid, lib)
    t = hazard_columns(lib).iloc[i]
    r = lib.iloc[i]

    def num(v):
        return int(v) if pd.notna(v) else float("nan")

    return HazardRecord(
        name=str(r["name"]), cas=str(r["cas"]),
        safety_score=num(t.safety_score), health_score=num(t.health_score),
        environment_score=num(t.environment_score), hazard_class=str(t.hazard_class),
        hazard_class_default=str(t.hazard_class_default),
        statements=tuple(str(t.h_statements).split()), peroxide_former=(bool(t.peroxide_former) if t.hazard_class != UNCLASSIFIED
                                                                         else None),
        regulatory_note=str(t.regulatory_note),
        sources={"statements": str(t.hazard_source), "flash_point": str(t.flash_point_basis),
                 "boiling_point": str(r.get("boiling_point_source", "library")),
                 "method": METHOD})


def _in_library(q, lib) -> bool:
    try:
        locate(q, lib)
        return True
    except SelectorError:
        return False
