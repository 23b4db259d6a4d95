"""The liquid-selection filters shared by every function that picks liquids.

Keyword arguments (all optional):

* ``include``: list of names/CAS - only these liquids are candidates;
* ``exclude``: list of names/CAS - these are never candidates;
* ``boiling_point_c=(low, high)``: boiling-point window in C (either end may be None);
* ``min_flash_point_c``: minimum flash point in C. A liquid without flash-point data does not
  pass (missing data is not evidence that a liquid will not burn) unless it is known not to
  be flammable (:func:`selector.cautions.not_flammable`: water, dichloromethane, chloroform,
  ...), which passes any minimum;
* ``max_molar_volume``: cm^3/mol;
* ``consistent_sources_only``: drop liquids whose published HSP sources disagree by more than
  1 MPa^0.5;
* ``flash_point_c=(low, high)``: flash-point window in C (liquids without flash-point data do
  not pass; a non-flammable liquid passes a window without an upper end);
* ``max_hazard_class``: worst CHEM21 class allowed (``"recommended"``, ``"problematic"``,
  ``"hazardous"``, ``"highly hazardous"``; see :mod:`selector.hazards`). Unclassified liquids
  (no hazard data) do not pass;
* ``halogen_free``: drop liquids containing fluorine, chlorine, bromine or iodine
  (:func:`halogenated`);
* ``cmr_free``: drop carcinogens, mutagens and reprotoxics, proven or suspected (GHS H340,
  H341, H350, H351, H360, H361 in ``parameters/hazards.csv``; :func:`cmr`), and liquids without
  hazard data, which nothing shows to be free of them;
* ``include_reactive``: also offer reagents that are not solvents - reactive, explosive or very
  toxic at low exposure (:mod:`selector.cautions`). Default False: they are never candidates,
  except the liquids named in ``include`` (named on purpose).

At a temperature other than 25 C, liquids that are not liquid there (melting point above it or
boiling point below it) are dropped too.
"""
from __future__ import annotations

import math

import numpy as np
import pandas as pd

from .cautions import not_flammable, reactive_reasons
from .errors import SelectorError
from .library import locate_many

FILTER_KEYS = ("include", "exclude", "boiling_point_c", "min_flash_point_c", "max_molar_volume",
               "consistent_sources_only", "flash_point_c", "max_hazard_class", "include_reactive",
               "halogen_free", "cmr_free")


def as_flag(v, what: str) -> bool:
    """An on/off option as a bool: True/False (numpy's too), 1/0 or None (off). Text such as
    "False" or "no" is refused: ``bool("False")`` would turn the option on."""
    if v is None:
        return False
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, (int, np.integer)) and int(v) in (0, 1):
        return bool(v)
    raise SelectorError(f"{what} must be True or False, got {v!r}")


def _as_list(v, what):
    if v is None:
        return None
    if isinstance(v, str):
        return [v]
    try:
        out = list(v)
    except TypeError:
        raise SelectorError(f"{what} must be a list of liquid names or CAS numbers") from None
    return out


def _window(v, what):
    if v is None:
        return (None, None)
    if not isinstance(v, (tuple, list)) or len(v) != 2:
        raise SelectorError(f"{what} must be a (low, high) pair in C, e.g. (80, 180)")
    lo, hi = v
    out = []
    for x in (lo, hi):
        if x is None:
            out.append(None)
            continue
        try:
            f = float(x)
        except (TypeError, ValueError):
            raise SelectorError(f"{what} bounds must be numbers in C, got {x!r}") from None
        if math.isnan(f):
            raise SelectorError(f"{what} bounds must not be NaN")
        out.append(f)
    if out[0] is not None and out[1] is not None and out[0] > out[1]:
        raise SelectorError(f"{what}: low ({out[0]:g}) is above high ({out[1]:g})")
    return tuple(out)


def check_filter_keys(filters: dict, extra: tuple[str, ...] = ()) -> None:
    """Raise a clear error for an unknown filter keyword."""
    bad = [k for k in filters if k not in FILTER_KEYS and k not in extra]
    if bad:
        raise SelectorError(f"unknown {'filter' if len(bad) == 1 else 'filters'}: {', '.join(bad)}; known: "
                            f"{', '.join(FILTER_KEYS + tuple(extra))}")


#: A halogen symbol in a Hill formula (F, Cl, Br, I; not Fe, Ir, In, Si, ...).
_HALOGEN_FORMULA = r"(?:F|Cl|Br|I)(?![a-z])"
#: ... and in a SMILES, where an aromatic atom may follow (Clc1ccccc1): F, Cl, Br, I, not Fe, Fr,
#: Fm, Fl, In, Ir.
_HALOGEN_SMILES = r"Cl|Br|F(?![erml])|I(?![nr])"


#: GHS statements of carcinogens, mutagens and reprotoxics: category 1 and suspected (category 2).
CMR_STATEMENTS = ("H340", "H341", "H350", "H351", "H360", "H361")


def cmr(library: pd.DataFrame, unknown: bool = True) -> np.ndarray:
    """True for liquids classified carcinogenic, mutagenic or toxic to reproduction, proven or
    suspected (:data:`CMR_STATEMENTS`, suffixes such as H360FD or H361d included), and, with
    ``unknown``, for liquids without hazard data (nothing shows they are not). Many sites and
    customers rule these out first when replacing a solvent (common practice)."""
    from .hazards import UNCLASSIFIED, hazard_columns

    hz = hazard_columns(library)
    st = hz["h_statements"].astype(str).str.upper()
    out = st.str.contains("|".join(CMR_STATEMENTS), regex=True).to_numpy(bool)
    if unknown:
        out = out | (hz["hazard_class"].astype(str).to_numpy() == UNCLASSIFIED)
    return out


def halogenated(library: pd.DataFrame, unknown: bool = True) -> np.ndarray:
    """True for liquids with fluorine, chlorine, bromine or iodine in their formula (or, without
    one, their SMILES). A liquid with neither gets ``unknown``: True for the filter, since nothing
    shows it is free of halogens. Halogenated solvents go to their own waste stream and many sites
    restrict them (common practice); this is what ``halogen_free=True`` leaves out.

    >>> import pandas as pd
    >>> halogenated(pd.DataFrame({"formula": ["CH2Cl2", "C7H8", "C8H4F6", "FeC10H10", "", "", ""],
    ...                           "smiles": ["ClCCl", "Cc1ccccc1", "", "", "Clc1ccccc1", "[Fe]", ""]})).tolist()
    [True, False, True, False, True, False, True]
    """
    n = len(library)

    def col(name):
        if name not in library.columns:
            return pd.Series([""] * n, index=library.index, dtype=str)
        return library[name].astype("string").fillna("").astype(str).str.strip()

    formula, smiles = col("formula"), col("smiles")
    has_f = formula != ""
    out = np.where(has_f, formula.str.contains(_HALOGEN_FORMULA, regex=True),
                   smiles.str.contains(_HALOGEN_SMILES, regex=True))
    none = (~has_f & (smiles == "")).to_numpy()
    return np.where(none, bool(unknown), out).astype(bool)


def filter_mask(library: pd.DataFrame, **filters) -> np.ndarray:
    """Boolean mask over ``library`` rows that pass every filter (see module doc)."""
    return masks_and_reagents(library, **filters)[0]


def filter_phrases(filters: dict, *, fixes: bool = False, deg: str = "C", vol: str = "cm3/mol") -> list[str]:
    """The filters in force, one phrase each ("boiling point 100 to 200 C", ...), for messages and
    page captions; ``fixes`` adds what to change when nothing passes ("(widen it)").

    >>> filter_phrases({"boiling_point_c": (100, None), "min_flash_point_c": 23})
    ['boiling point 100 to - C', 'flash point at least 23 C']
    """
    def rng(v):
        lo, hi = v
        return f"{'-' if lo is None else f'{lo:g}'} to {'-' if hi is None else f'{hi:g}'} {deg}"

    def fix(text):
        return f" ({text})" if fixes else ""

    parts = []
    if filters.get("boiling_point_c") is not None and any(x is not None for x in filters["boiling_point_c"]):
        parts.append(f"boiling point {rng(filters['boiling_point_c'])}{fix('widen it')}")
    if filters.get("flash_point_c") is not None:
        parts.append(f"flash point {rng(filters['flash_point_c'])}{fix('widen it')}")
    if filters.get("min_flash_point_c") is not None:
        parts.append(f"flash point at least {float(filters['min_flash_point_c']):g} {deg}{fix('lower it')}")
    if filters.get("max_molar_volume") is not None:
        parts.append(f"molar volume at most {float(filters['max_molar_volume']):g} {vol}{fix('raise it')}")
    if filters.get("max_hazard_class") is not None:
        parts.append(f"hazard class at most {filters['max_hazard_class']}{fix('allow a worse one')}")
    if filters.get("consistent_sources_only"):
        parts.append(f"agreed HSP sources only{fix('drop it')}")
    if filters.get("halogen_free"):
        parts.append(f"no halogenated liquids{fix('drop it')}")
    if filters.get("cmr_free"):
        parts.append(f"no carcinogens, mutagens or reprotoxics (and no liquids without hazard data){fix('drop it')}")
    inc = filters.get("include")
    if inc:
        inc = [inc] if isinstance(inc, str) else list(inc)
        parts.append(f"only {', '.join(map(str, inc[:5]))}{' and more' if len(inc) > 5 else ''}{fix('name more')}")
    exc = filters.get("exclude")
    if exc:
        exc = [exc] if isinstance(exc, str) else list(exc)
        parts.append(f"{len(exc)} liquid{'s' if len(exc) > 1 else ''} never to propose{fix('shorten the list')}"
                     if fixes else "never " + ", ".join(map(str, exc)))
    return parts


def nothing_passes(filters: dict, left_out: int = 0, extra: str = "") -> str:
    """The message for a search that no liquid passes: the filters in force, each with what to
    change (:func:`filter_phrases`), and the reagents held back (the same words for the library,
    command line and app).

    >>> nothing_passes({"boiling_point_c": (300, 310), "min_flash_point_c": 60})[:67]
    'no liquid passes the filters: boiling point 300 to 310 C (widen it)'
    """
    parts = filter_phrases(filters, fixes=True)
    if extra:
        parts.append(extra)
    if left_out:
        parts.append(f"{left_out} reagents held back (reactive, explosive or very toxic; include_reactive, "
                     "--include-reactive or the app's Include reagents brings them back)")
    if not parts:
        return "no liquid passes the filters"
    return "no liquid passes the filters: " + "; ".join(parts)


def masks_and_reagents(library: pd.DataFrame, **filters) -> tuple[np.ndarray, int]:
    """``(mask, left_out)``: the :func:`filter_mask` and how many liquids pass every other filter
    but are left out as reagents (0 with ``include_reactive=True``)."""
    include_reactive = as_flag(filters.pop("include_reactive", False), "include_reactive")
    loose = _mask(library, **filters)
    if include_reactive or filters.get("include") is not None:   # liquids named on purpose pass
        return loose, 0
    reagent = reactive_reasons(library) != ""
    return loose & ~reagent, int((loose & reagent).sum())


def _mask(library: pd.DataFrame, *, temperature: float = 25.0, include=None, exclude=None,
                boiling_point_c=None, min_flash_point_c=None, max_molar_volume=None,
                consistent_sources_only=False, flash_point_c=None, max_hazard_class=None,
                halogen_free=False, cmr_free=False) -> np.ndarray:
    """Mask of every filter except the reagent screen."""
    n = len(library)
    mask = np.ones(n, dtype=bool)
    inc = _as_list(include, "include")
    if inc is not None:
        if len(inc) == 0:
            raise SelectorError("include is an empty list: no liquid could be a candidate")
        m = np.zeros(n, dtype=bool)
        m[locate_many(inc, library, "include list")] = True
        mask &= m
    exc = _as_list(exclude, "exclude")
    if exc:
        mask[locate_many(exc, library, "exclude list")] = False
    lo, hi = _window(boiling_point_c, "boiling-point window")
    bp = library["boiling_point_c"].to_numpy(float)
    if lo is not None:
        mask &= bp >= lo
    if hi is not None:
        mask &= bp <= hi
    if min_flash_point_c is not None:
        try:
            f = float(min_flash_point_c)
        except (TypeError, ValueError):
            raise SelectorError(f"min_flash_point_c must be a number in C, got {min_flash_point_c!r}") from None
        if math.isnan(f):
            raise SelectorError("min_flash_point_c must not be NaN")
        fp = library["flash_point_c"].to_numpy(float)
        with np.errstate(invalid="ignore"):
            mask &= (fp >= f) | not_flammable(library)
    if max_molar_volume is not None:
        try:
            v = float(max_molar_volume)
        except (TypeError, ValueError):
            raise SelectorError(f"max_molar_volume must be a number in cm3/mol, got {max_molar_volume!r}") from None
        if not v > 0:
            raise SelectorError("max_molar_volume must be a positive number of cm3/mol")
        with np.errstate(invalid="ignore"):
            mask &= library["molar_volume"].to_numpy(float) <= v
    if as_flag(consistent_sources_only, "consistent_sources_only"):
        mask &= ~library["sources_disagree"].to_numpy(bool)
    if as_flag(halogen_free, "halogen_free"):
        mask &= ~halogenated(library)
    if as_flag(cmr_free, "cmr_free"):
        mask &= ~cmr(library)
    if flash_point_c is not None:
        flo, fhi = _window(flash_point_c, "flash-point window")
        fp = library["flash_point_c"].to_numpy(float)
        with np.errstate(invalid="ignore"):
            inside = np.isfinite(fp) & (fp >= (-np.inf if flo is None else flo)) & (fp <= (np.inf if fhi is None else fhi))
        mask &= inside | (not_flammable(library) if fhi is None else False)
    if max_hazard_class is not None:
        from .hazards import class_rank, hazard_columns

        with np.errstate(invalid="ignore"):
            mask &= hazard_columns(library)["hazard_rank"].to_numpy(float) <= class_rank(max_hazard_class)
    if "kind" in library.columns:  # the user's solutes are targets, never candidate liquids
        mask &= library["kind"].astype(str).str.lower().to_numpy() != "solute"
    t = float(temperature)
    if abs(t - 25.0) > 1e-9:
        mp = library["melting_point_c"].to_numpy(float) if "melting_point_c" in library else np.full(n, np.nan)
        with np.errstate(invalid="ignore"):
            mask &= ~(mp > t) & ~(bp < t)
    return mask


#: Use temperatures accepted (C). The data are 25 C values (boiling and flash points aside), moved
#: to other temperatures by thermal expansion (Hansen-Beerbower); far outside this range that
#: correction, the Antoine fits and the liquid ranges of estimated boiling points are guesses,
#: and most organic liquids decompose above it.
TEMPERATURE_RANGE_C = (-100.0, 250.0)


def check_temperature(temperature) -> float:
    """Validate a use temperature in C: a finite number within :data:`TEMPERATURE_RANGE_C`."""
    if isinstance(temperature, bool):
        raise SelectorError(f"temperature must be a number in C, got {temperature!r}")
    try:
        t = float(temperature)
    except (TypeError, ValueError):
        raise SelectorError(f"temperature must be a number in C, got {temperature!r}") from None
    if math.isnan(t):
        raise SelectorError("temperature must be a number in C, got NaN")
    lo, hi = TEMPERATURE_RANGE_C
    if not lo <= t <= hi:
        raise SelectorError(f"temperature {t:g} C is outside {lo:g}..{hi:g} C, the range where these 25 C data "
                            "and their temperature corrections can be stretched")
    return t
