"""Rank every candidate liquid against a target by Hansen distance and polarity match.

Score (lower is better)
-----------------------
``score = distance + polarity_weight * (1 - polarity_match)``

* ``distance`` is RED = Ra / R0 when the target has a sphere, otherwise Ra / 8 MPa^0.5
  (8 MPa^0.5 is a typical polymer interaction radius, so the two scales read alike: 1 means
  "at the edge of a typical sphere").
* ``polarity_match`` (0..1) measures "like dissolves like" beyond Ra: how alike the target and
  the liquid share their cohesive energy between dispersion, polar and hydrogen-bonding parts.
  With e = (dD^2, dP^2, dH^2) / dT^2 the energy fractions of each,
  ``polarity_match = 1 - 0.5 * sum(|e_liquid - e_target|)`` (one minus the total-variation
  distance of the two shares). Two liquids at equal Ra, one of which is polar where the target is
  polar, are told apart by it.
* ``polarity_weight`` defaults to 0.3 and can be set by the caller (0 ranks by RED/Ra alone).

Ties: scores are compared at a resolution of 0.005; within a tie the smaller molar volume ranks
first (smaller molecules dissolve faster and more often, Hansen's handbook ch. 1).

Temperature: candidate HSP are corrected to ``temperature`` by Hansen-Beerbower
(:func:`selector.hansen.hsp_at_temperature`) with each liquid's expansion coefficient; a target
given as a library entry is corrected the same way; numbers typed by the user are taken as valid
at the evaluation temperature.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .errors import SelectorError
from .filters import check_filter_keys, check_temperature, filter_mask, masks_and_reagents
from .hansen import energy_fractions, hsp_at_temperature, ra as _ra
from .library import HSP, load_library
from .targets import Target, as_target

DEFAULT_POLARITY_WEIGHT = 0.3
REFERENCE_RADIUS = 8.0  # MPa^0.5
TIE_RESOLUTION = 0.005


def polarity_match(hsp, target_hsp) -> np.ndarray:
    """Polarity match (0..1) between liquids ``hsp`` (n, 3) and a target (3,); see module doc.

    >>> float(polarity_match([[18.0, 1.4, 2.0]], [18.0, 1.4, 2.0])[0])
    1.0
    """
    e1 = energy_fractions(np.atleast_2d(np.asarray(hsp, float)))
    e0 = energy_fractions(np.asarray(target_hsp, float))
    return 1.0 - 0.5 * np.abs(e1 - e0).sum(axis=-1)


def corrected_hsp(library: pd.DataFrame, temperature: float) -> np.ndarray:
    """(n, 3) HSP of the library liquids at ``temperature`` (C) by Hansen-Beerbower."""
    h = library[HSP].to_numpy(float)
    if abs(temperature - 25.0) < 1e-12:
        return h
    alpha = (library["expansion_coeff"].to_numpy(float) if "expansion_coeff" in library
             else np.full(len(h), np.nan))
    hc = hsp_at_temperature(h, alpha, temperature)
    # no expansion coefficient: keep the 25 C values (reported by ``temperature_corrected``)
    return np.where(np.isfinite(hc), hc, h)


def resolve_target(target, library: pd.DataFrame, temperature: float = 25.0) -> Target:
    """A :class:`Target` at ``temperature``: the point of a library liquid (a name, or a Target
    whose ``liquid`` is set, as :func:`selector.targets.liquid_point` makes) is corrected like
    the candidates; typed points and fitted spheres are taken as given."""
    from dataclasses import replace

    from .library import locate

    t = as_target(target, library)
    if abs(temperature - 25.0) <= 1e-12:
        return t
    if not t.liquid:
        return _with_note(t, TYPED_AT_TEMPERATURE.format(t=temperature))
    try:
        row = library.iloc[locate(t.liquid, library)]
    except SelectorError:   # a liquid of another library (the user's file was changed)
        return t
    h = hsp_at_temperature(t.hsp, float(row.get("expansion_coeff", np.nan)), temperature)
    if np.all(np.isfinite(h)):
        return replace(t, delta_d=float(h[0]), delta_p=float(h[1]), delta_h=float(h[2]))
    return _with_note(t, f"{t.name} has no expansion coefficient: its 25 C HSP are used at {temperature:g} C")


def check_top(top, what: str = "liquids") -> None:
    """Refuse a ``top`` that is not None or a whole number of at least 1 (-1 would drop the last
    row, 0 show nothing)."""
    if top is None:
        return
    if isinstance(top, bool) or not isinstance(top, (int, np.integer)) or top < 1:
        raise SelectorError(f"the number of {what} to show (top) must be a whole number of at least 1, "
                            f"got {top!r}")


#: Note on a typed point or a fitted sphere used away from 25 C (``{t}``: the temperature in C).
TYPED_AT_TEMPERATURE = ("the target's HSP are used as given, as its values at {t:g} C (not corrected "
                        "from 25 C); the candidates' HSP are corrected to {t:g} C")


def _with_note(t: Target, note: str) -> Target:
    from dataclasses import replace

    return t if note in t.notes else replace(t, notes=t.notes + (note,))


def rank(target, *, temperature: float = 25.0, library: pd.DataFrame | None = None,
         polarity_weight: float = DEFAULT_POLARITY_WEIGHT, top: int | None = None,
         **filters) -> pd.DataFrame:
    """Rank every candidate liquid against ``target``, best first.

    ``target``: ``(dD, dP, dH)``, ``(dD, dP, dH, R0)`` (MPa^0.5), a library name/CAS/SMILES, a
    :class:`~selector.targets.Target` or a fitted sphere. ``temperature`` in C. Filters: see
    :mod:`selector.filters`. Returns the library columns plus ``ra`` (MPa^0.5), ``red`` (NaN
    without R0), ``polarity_match`` (0..1), ``score`` (lower is better; see module doc) and
    ``rank`` (1 = best), ``hazard_class`` (CHEM21 class, "unclassified" without hazard data;
    :func:`selector.hazards.hazard_columns`), ``hazard_notes`` (:func:`selector.hazards.liquid_notes`: toxic,
    corrosive, CMR, ..., or "no hazard data: treat as hazardous ..." for an unclassified liquid;
    the order is by score alone); ``attrs["reagents_left_out"]`` counts the reagents (reactive,
    explosive or very toxic liquids, :mod:`selector.cautions`) that the filters would have let
    through had ``include_reactive=True`` been given. Invalid targets or filters raise ``ValueError`` naming the problem.

    >>> top = rank((21.3, 5.8, 4.3, 12.7)).head(3)
    >>> bool((top["red"] < 1).all())
    True
    """
    check_top(top)
    check_filter_keys(filters)
    t_c = check_temperature(temperature)
    try:
        w = float(polarity_weight)
    except (TypeError, ValueError):
        raise SelectorError(f"polarity_weight must be a number, got {polarity_weight!r}") from None
    if not np.isfinite(w) or w < 0:
        raise SelectorError("polarity_weight must be a finite number >= 0")
    lib = load_library() if library is None else library
    tgt = resolve_target(target, lib, t_c)
    mask, left_out = masks_and_reagents(lib, temperature=t_c, **filters)
    if isinstance(target, str):
        mask &= lib["name"].to_numpy() != tgt.name  # a liquid is not its own candidate
    cand = lib.loc[mask]
    if len(cand) == 0:
        from .filters import nothing_passes

        raise SelectorError(nothing_passes(filters, left_out, "" if abs(t_c - 25.0) < 1e-9 else
                                           f"liquid at {t_c:g} C (temperature)"))
    h = corrected_hsp(cand, t_c)
    dist = _ra(h, tgt.hsp)
    pm = polarity_match(h, tgt.hsp)
    if tgt.radius is not None:
        red = dist / tgt.radius
        d_term = red
    else:
        red = np.full(len(cand), np.nan)
        d_term = dist / REFERENCE_RADIUS
    score = d_term + w * (1.0 - pm)
    out = cand.copy()
    if abs(t_c - 25.0) > 1e-12:
        out[HSP] = h
        out["temperature_corrected"] = np.isfinite(cand["expansion_coeff"].to_numpy(float))
    out["ra"] = dist
    out["red"] = red
    out["polarity_match"] = pm
    out["score"] = score
    from .hazards import hazard_columns, liquid_notes

    # order unchanged (by score); the notes say where a liquid has no hazard data
    hz = hazard_columns(lib)
    out["hazard_class"] = hz["hazard_class"].to_numpy(object)[mask]
    out["hazard_notes"] = liquid_notes(lib, hz)[mask]
    from .cautions import heated_notes

    out["hazard_notes"] = heated_notes(out, t_c)
    key = np.round(score / TIE_RESOLUTION)
    order = np.lexsort((out["molar_volume"].to_numpy(float), key))
    out = out.iloc[order].reset_index(drop=True)
    out.insert(0, "rank", np.arange(1, len(out) + 1))
    out.attrs["target"] = tgt
    out.attrs["temperature"] = t_c
    out.attrs["reagents_left_out"] = left_out
    if top is not None:
        out = out.head(top)
    return out
