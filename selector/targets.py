"""Targets: the solute (or liquid) whose Hansen point or sphere the candidates are ranked against.

A target may be given as

* a tuple ``(delta_d, delta_p, delta_h)`` or ``(delta_d, delta_p, delta_h, R0)`` in MPa^0.5;
* a :class:`Target`;
* a library entry by name, synonym, CAS or SMILES (a point, no R0);
* a mapping or pandas Series with ``delta_d, delta_p, delta_h`` and optionally ``radius``/``R0``;
* any object with ``delta_d, delta_p, delta_h`` attributes and optionally ``radius`` (for
  example the result of :func:`selector.fit_sphere`).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd

from .errors import NotLiquidError, SelectorError
from .library import locate, load_library


#: Upper bounds (MPa^0.5) for a target's HSP: above every liquid and polymer in the published
#: tables (water: dH 42.3; the tables' largest dD is about 28), so larger numbers are unit or
#: typing errors.
TARGET_MAX = {"delta_d": 30.0, "delta_p": 40.0, "delta_h": 50.0}
#: The names a user knows the three parameters by, with the library's keyword beside them.
LABELS = {"delta_d": "dD (delta_d)", "delta_p": "dP (delta_p)", "delta_h": "dH (delta_h)"}
#: Upper bound (MPa^0.5) for a sphere radius R0 (published polymer spheres stay below ~25).
R0_MAX = 40.0
#: A typed dD below this (MPa^0.5) is below every liquid of the library (the lowest is
#: perfluoropentane, 11.3) and most likely given in (cal/cm^3)^0.5, where dD is 7-11.
CAL_HINT_DD = 11.0


@dataclass(frozen=True)
class Target:
    """A Hansen point (MPa^0.5) with an optional interaction radius R0 (MPa^0.5)."""

    delta_d: float
    delta_p: float
    delta_h: float
    radius: float | None = None
    name: str = "target"
    source: str = "given"
    notes: tuple[str, ...] = field(default_factory=tuple)
    #: The library liquid (CAS, or name without one) whose point this is, "" for a typed point or
    #: a fitted sphere: ranking, blends and drying correct such a point for temperature as they
    #: correct the candidates, so the liquid stays at Ra 0 from itself at any temperature.
    liquid: str = ""

    def __post_init__(self):
        for k in ("delta_d", "delta_p", "delta_h"):
            v, lab = getattr(self, k), LABELS[k]
            if not isinstance(v, (int, float, np.floating, np.integer)) or isinstance(v, bool):
                raise SelectorError(f"{lab} must be a number of MPa^0.5, got {v!r}")
            if not math.isfinite(float(v)):
                raise SelectorError(f"{lab} must be a finite number, got {v!r}")
            if float(v) < 0:
                raise SelectorError(f"{lab} cannot be negative: got {float(v):g} MPa^0.5")
        if float(self.delta_d) <= 0:
            raise SelectorError("dD (delta_d) must be above 0: every liquid has dispersion forces")
        if self.radius is not None:
            r = self.radius
            if isinstance(r, bool) or not isinstance(r, (int, float, np.floating, np.integer)):
                raise SelectorError(f"R0 must be a number of MPa^0.5, got {r!r}")
            if not math.isfinite(float(r)) or float(r) <= 0:
                raise SelectorError(f"R0 must be a positive finite number (got {r!r} MPa^0.5)")

    @property
    def hsp(self) -> np.ndarray:
        """(3,) array (delta_d, delta_p, delta_h)."""
        return np.array([self.delta_d, self.delta_p, self.delta_h], dtype=float)

    @property
    def has_sphere(self) -> bool:
        return self.radius is not None

    def describe(self) -> str:
        s = "" if self.name == "target" else f"{self.name}: "
        s += f"dD {self.delta_d:.1f}, dP {self.delta_p:.1f}, dH {self.delta_h:.1f} MPa^0.5"
        if self.radius is not None:
            s += f", R0 {self.radius:.1f}"
        return s


def _check_given(t: Target) -> Target:
    """Plausibility bounds for HSP typed in by a user (:data:`TARGET_MAX`, :data:`R0_MAX`);
    a fitted sphere's centre is kept within :data:`TARGET_MAX` by the fit itself
    (:data:`selector.spheres.CENTRE_HI`), its R0 is not held to :data:`R0_MAX`."""
    for k, hi in TARGET_MAX.items():
        if float(getattr(t, k)) > hi:
            v = float(getattr(t, k))
            raise SelectorError(f"{LABELS[k]} {v:g} MPa^0.5 is beyond any known liquid or polymer (at most "
                                f"{hi:g}); check the value and the units"
                                + (": it looks like Pa^0.5 (divide by 1000)" if v > 1000 else " (MPa^0.5)"))
    if t.radius is not None and float(t.radius) > R0_MAX:
        raise SelectorError(f"R0 {float(t.radius):g} MPa^0.5 is larger than any published sphere "
                            f"(at most {R0_MAX:g}); check the value")
    hint = unit_hint(t)
    return replace(t, notes=t.notes + (hint,)) if hint and hint not in t.notes else t


def cal_units_hint(values) -> str:
    """The message for HSP ``(dD, dP, dH[, R0])`` whose dD is below every liquid's: most likely in
    (cal/cm^3)^0.5, with the values converted to MPa^0.5.

    >>> cal_units_hint((7.6, 2.0, 3.0))[:45]
    'dD 7.6 is lower than any liquid (the lowest i'
    """
    from .hansen import CAL_TO_MPA

    vals = list(zip(("dD", "dP", "dH", "R0"), values))
    conv = ", ".join(f"{k} {float(v) * CAL_TO_MPA:.1f}" for k, v in vals if v is not None)
    return (f"dD {float(values[0]):g} is lower than any liquid (the lowest is 11.3 MPa^0.5, perfluoropentane): "
            f"if the values are in (cal/cm3)^0.5, multiply them by {CAL_TO_MPA} ({conv} MPa^0.5)")


def unit_hint(t: Target) -> str:
    """A warning when a typed target looks like (cal/cm^3)^0.5 rather than MPa^0.5 ("" otherwise):
    its dD is below :data:`CAL_HINT_DD`, lower than any liquid's.

    >>> unit_hint(Target(8.7, 3.0, 2.0))[:40]
    'dD 8.7 is lower than any liquid (the low'
    """
    if float(t.delta_d) >= CAL_HINT_DD:
        return ""
    return cal_units_hint(tuple(t.hsp) + ((t.radius,) if t.radius else ()))


def _num(v, what):
    if isinstance(v, bool) or v is None:
        raise SelectorError(f"{what} must be a number, got {v!r}")
    try:
        return float(v)
    except (TypeError, ValueError):
        raise SelectorError(f"{what} must be a number, got {v!r}") from None


def _is_num(v) -> bool:
    try:
        float(v)
    except (TypeError, ValueError):
        return False
    return True


def _liquid_key(row) -> str:
    """How :attr:`Target.liquid` names a library row: its CAS number, else its name."""
    cas = row.get("cas", "")
    cas = "" if cas is None or (isinstance(cas, float) and math.isnan(cas)) else str(cas).strip()
    return cas or str(row["name"])


def liquid_point(query, radius: float | None = None, library: pd.DataFrame | None = None) -> Target:
    """The point of a library liquid as a target with R0 ``radius`` (MPa^0.5; None keeps the
    liquid's own R0, if it is a solute of the user's file), marked as that liquid's
    (:attr:`Target.liquid`), so that it is corrected for temperature like the candidates."""
    t = as_target(str(query), library)
    if radius is None:
        return t
    return _check_given(replace(t, radius=radius, source=f"library point with given R0 ({t.source})"))


def _numbers_text(text: str):
    """``(dD, dP, dH[, R0])`` when ``text`` is three or four comma-separated numbers, else None."""
    parts = [p.strip() for p in text.split(",")]
    if len(parts) not in (3, 4):
        return None
    try:
        return tuple(float(p) for p in parts)
    except ValueError:
        return None


def as_target(target, library: pd.DataFrame | None = None, name: str | None = None) -> Target:
    """Turn any accepted target form (see module doc) into a validated :class:`Target`."""
    if isinstance(target, Target):
        return target
    if target is None:
        raise SelectorError("no target given: pass (delta_d, delta_p, delta_h[, R0]) or a liquid name")
    if isinstance(target, str) and _numbers_text(target) is not None:
        # "18,3,5,8": the numbers a command line would read (no liquid's name is only numbers)
        return as_target(_numbers_text(target), library, name)
    if isinstance(target, str):
        lib = load_library() if library is None else library
        try:
            row = lib.iloc[locate(target, lib)]
        except NotLiquidError as err:
            # a solid of the published tables (sulfolane, an active ingredient) is a fine thing
            # to dissolve: its published point is the target, taken as given
            e = err.entry
            return Target(e["delta_d"], e["delta_p"], e["delta_h"], None, name=str(e["name"]),
                          source=f"published HSP ({e['hsp_source']}); not in the liquid library",
                          notes=(f"{e['name']} is not in the liquid library ({err.why}): its published HSP are "
                                 "the target, taken as given",))
        r0 = row.get("radius", None)  # a user solute may carry its own R0
        r0 = float(r0) if r0 is not None and isinstance(r0, (int, float)) and math.isfinite(r0) else None
        return Target(float(row.delta_d), float(row.delta_p), float(row.delta_h), r0,
                      name=str(row["name"]), source=f"library ({row.get('hsp_source', '')})",
                      liquid=_liquid_key(row))
    if isinstance(target, (tuple, list, np.ndarray)):
        vals = list(target)
        if len(vals) not in (3, 4):
            raise SelectorError("a target tuple is (delta_d, delta_p, delta_h) or "
                                f"(delta_d, delta_p, delta_h, R0); got {len(vals)} values")
        nums = [_num(v, k) for v, k in zip(vals, ["delta_d", "delta_p", "delta_h", "R0"])]
        return _check_given(Target(*nums[:3], nums[3] if len(nums) == 4 else None, name=name or "target"))
    if isinstance(target, pd.DataFrame):
        if len(target) != 1:
            raise SelectorError(f"a target table must have exactly one row, this one has {len(target)}: "
                                "pass one row, e.g. table.iloc[0]")
        target = target.iloc[0]

        def _text(v):
            return str(v).strip() if v is not None and not (isinstance(v, float) and math.isnan(v)) else ""

        msg = _text(target.get("message"))
        if msg and not all(math.isfinite(float(target.get(k, math.nan))) if _is_num(target.get(k)) else False
                           for k in ("delta_d", "delta_p", "delta_h")):
            raise SelectorError(f"this row has no HSP to use as a target: {msg}")
        if not _text(target.get("name")):
            target = target.copy()
            target["name"] = (_text(target.get("matched_name")) or _text(target.get("smiles"))
                              or name or "target")
    if isinstance(target, (dict, pd.Series)):
        get = target.get
        r = get("radius", get("R0", get("r0")))
        r = None if r is None or (isinstance(r, float) and math.isnan(r)) else _num(r, "R0")
        return _check_given(Target(_num(get("delta_d"), "delta_d"), _num(get("delta_p"), "delta_p"),
                                   _num(get("delta_h"), "delta_h"), r,
                                   name=str(get("name", name or "target")), source=str(get("source", "given"))))
    if all(hasattr(target, k) for k in ("delta_d", "delta_p", "delta_h")):
        r = getattr(target, "radius", None)
        return Target(_num(target.delta_d, "delta_d"), _num(target.delta_p, "delta_p"),
                      _num(target.delta_h, "delta_h"), None if r is None else _num(r, "R0"),
                      name=str(getattr(target, "name", name or "fitted sphere")),
                      source=str(getattr(target, "source", "fitted")))
    raise SelectorError(f"cannot use {type(target).__name__} as a target: pass "
                        "(delta_d, delta_p, delta_h[, R0]) or a liquid name")
