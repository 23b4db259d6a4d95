"""Drying check: how a solvent blend's composition and RED change while it evaporates.

Model
-----
Each component evaporates with a molar flux proportional to its driving force
``gamma_i x_i P_i - p_i,air`` (kPa), with one mass-transfer coefficient for all components
(gas-side controlled evaporation into moving air; the baseline is Raoult's law, gamma = 1).
``P_i`` is the vapour pressure at the drying temperature (:func:`selector.library.vapour_pressure_kpa`)
and ``p_i,air`` the partial pressure already in the air: ``relative_humidity`` (%) times the
vapour pressure of water for water, zero for every other liquid. A component whose driving force
falls to zero stops evaporating (water in humid air); it does not condense in this model.

The liquid's volume is the sum of the components' molar volumes at 25 C times their amounts
(ideal volume of mixing). The equations are integrated with the evaporated volume fraction
phi (0..1) as the independent variable, in the logarithm of the amounts (classical 4th-order
Runge-Kutta), so steep depletion of a volatile component stays stable:

    d ln n_i / d phi = - V0 F_i / (n_i sum_j v_j F_j),   F_i = max(gamma_i x_i P_i - p_i,air, 0).

For an ideal binary this reproduces the Rayleigh-type relation n1/n1_0 = (n2/n2_0)^(P1/P2)
(Lord Rayleigh, Phil. Mag. 4 (1902) 521, for differential distillation; the same equation holds
for open evaporation with Raoult's law).

Activity coefficients (``activity="hsp"``): multicomponent Flory-Huggins with the Hansen
interaction, ln gamma_i = ln(phi_i/x_i) + 1 - phi_i/x_i + (v_i/RT) sum_j sum_k phi_j phi_k
(A_ij - A_jk/2), A_ij = (dD_i - dD_j)^2 + (dP_i - dP_j)^2/4 + (dH_i - dH_j)^2/4 (MPa); the
Flory combinatorial term (P. J. Flory, Principles of Polymer Chemistry, 1953) and the
regular-solution residual term of Hildebrand and Scott (The Solubility of Nonelectrolytes,
1950) with Hansen's interaction (Hansen's handbook, ch. 1). It is known to be poor for water and
strongly hydrogen-bonded pairs. ``activity="unifac"``: original UNIFAC (Fredenslund, Jones and
Prausnitz, AIChE J. 21 (1975) 1086) as implemented by the ``thermo`` library
(``thermo.unifac.UNIFAC``, version 0), with the DDBST group assignments that ``thermo`` carries,
looked up by InChIKey; a liquid without an assignment is an error.

The remaining liquid's HSP is the volume-weighted mean of what is left; with a sphere target
its RED is followed and the path is flagged when RED reaches 1 before ``must_stay_until`` of the
liquid has evaporated (the solute may come out of solution before the film has set).
"""
from __future__ import annotations

import math

import numpy as np
import pandas as pd

from .errors import SelectorError
from .filters import check_temperature
from .hansen import R_GAS, ra as _ra
from .library import load_library, locate_many, vapour_pressure_kpa

WATER_CAS = "7732-18-5"
MODELS = ("raoult", "hsp", "unifac")


def _gamma_hsp(x, v, h, T):
    """ln gamma (k,) by multicomponent Flory-Huggins with the Hansen interaction (module doc)."""
    phi = x * v / np.dot(x, v)
    d = h[:, None, :] - h[None, :, :]
    A = d[..., 0] ** 2 + 0.25 * d[..., 1] ** 2 + 0.25 * d[..., 2] ** 2  # MPa = J/cm3
    pa = A @ phi                          # sum_j A_ij phi_j
    res = v / (R_GAS * T) * (pa - 0.5 * phi @ A @ phi)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(x > 0, phi / x, v / np.dot(x, v))
    comb = np.log(ratio) + 1.0 - ratio
    return comb + res


def unifac_gammas(rows: pd.DataFrame, temperature: float = 25.0):
    """A function x -> activity coefficients (k,) by original UNIFAC from ``thermo`` for ``rows``.

    Groups: the DDBST assignments in ``thermo.unifac`` (looked up by InChIKey). Raises
    :class:`SelectorError` naming the liquids that have none.
    """
    import thermo.unifac as U

    U.load_group_assignments_DDBST()
    groups = [U.DDBST_UNIFAC_assignments.get(str(k)) for k in rows["inchikey"]]
    bad = [str(n) for n, g in zip(rows["name"], groups) if not g]
    if bad:
        raise SelectorError("no UNIFAC groups for: " + ", ".join(bad) + " (use activity='raoult' or 'hsp')")
    T = float(temperature) + 273.15
    k = len(groups)
    ge = U.UNIFAC.from_subgroups(T=T, xs=[1.0 / k] * k, chemgroups=groups, version=0)

    def gammas(x):
        xs = np.maximum(np.asarray(x, float), 1e-300)
        xs = (xs / xs.sum()).tolist()
        return np.asarray(ge.to_T_xs(T, xs).gammas(), dtype=float)

    return gammas


def drying_path(components, fractions, *, temperature: float = 25.0, target=None,
                library: pd.DataFrame | None = None, relative_humidity: float = 0.0,
                activity: str = "raoult", must_stay_until: float = 0.9, points: int = 100,
                max_evaporated: float = 0.99) -> pd.DataFrame:
    """Composition and RED of an evaporating blend versus the evaporated volume fraction.

    ``components``: liquid names/CAS; ``fractions``: their initial volume fractions (normalised;
    must sum to 1 within 1 %). ``temperature`` in C; ``relative_humidity`` in % (acts on water
    only); ``activity``: ``"raoult"`` (ideal) or ``"hsp"`` (Flory-Huggins with Hansen
    parameters). ``target``: optional point or sphere (:func:`selector.targets.as_target`).

    Returns a DataFrame, one row per step of the evaporated volume fraction (0 ..
    ``max_evaporated``): ``evaporated_fraction``, ``phi_<name>`` (volume fraction of each
    component in the remaining liquid), ``delta_d, delta_p, delta_h`` of the remaining liquid,
    ``ra`` to the target and ``red`` and ``inside`` when the target has R0. ``attrs``:
    ``tail_solvent`` (largest share at the end), ``leaves_sphere_at`` (first evaporated fraction
    with RED >= 1, NaN if never), ``flag`` (True when that happens before ``must_stay_until``),
    ``warnings`` and ``message``.

    >>> p = drying_path(["acetone", "water"], [0.5, 0.5])
    >>> p.attrs["tail_solvent"]
    'water'
    """
    t_c = check_temperature(temperature)
    lib = load_library() if library is None else library
    if isinstance(components, str):
        components = [components]
    if components is None or not hasattr(components, "__iter__"):
        raise SelectorError(f"components must be a list of liquid names, got {components!r}")
    if fractions is None or isinstance(fractions, str) or not hasattr(fractions, "__iter__"):
        raise SelectorError(f"fractions must be a list of volume fractions, one per component, got {fractions!r}")
    comps = list(components)
    if not comps:
        raise SelectorError("no components given")
    try:
        f0 = np.asarray(list(fractions), dtype=float)
    except (TypeError, ValueError):
        raise SelectorError("fractions must be numbers (volume fractions)") from None
    if len(f0) != len(comps):
        raise SelectorError(f"{len(comps)} components but {len(f0)} fractions")
    if not np.all(np.isfinite(f0)) or np.any(f0 <= 0):
        raise SelectorError("every volume fraction must be a positive finite number")
    if abs(f0.sum() - 1.0) > 0.01:
        raise SelectorError(f"volume fractions must sum to 1 (got {f0.sum():.4g})")
    f0 = f0 / f0.sum()
    pos = locate_many(comps, lib, "components")
    if len(set(pos.tolist())) != len(pos):
        raise SelectorError("a liquid is listed twice in the blend")
    rows = lib.iloc[pos].reset_index(drop=True)
    names = rows["name"].astype(str).tolist()
    if activity not in MODELS:
        raise SelectorError(f"activity must be one of {', '.join(MODELS)}, got {activity!r}")
    try:
        rh = float(relative_humidity)
    except (TypeError, ValueError):
        raise SelectorError(f"relative_humidity must be a number in %, got {relative_humidity!r}") from None
    if not (0.0 <= rh <= 100.0):
        raise SelectorError("relative_humidity must be between 0 and 100 %")
    for nm, v in (("must_stay_until", must_stay_until), ("max_evaporated", max_evaporated)):
        if not isinstance(v, (int, float)) or isinstance(v, bool) or not (0.0 < float(v) < 1.0):
            raise SelectorError(f"{nm} must be a fraction between 0 and 1, got {v!r}")
    if not isinstance(points, (int, np.integer)) or points < 2 or points > 100000:
        raise SelectorError("points must be a whole number between 2 and 100000")
    bp = rows["boiling_point_c"].to_numpy(float) if "boiling_point_c" in rows else np.full(len(rows), np.nan)
    mp = rows["melting_point_c"].to_numpy(float) if "melting_point_c" in rows else np.full(len(rows), np.nan)
    with np.errstate(invalid="ignore"):
        boils, frozen = bp <= t_c, mp > t_c
    if boils.any() or frozen.any():
        why = [f"{n} boils at {b:.0f} C" for n, b, k in zip(names, bp, boils) if k] + [
            f"{n} melts at {m:.0f} C" for n, m, k in zip(names, mp, frozen) if k]
        raise SelectorError(f"cannot follow the drying at {t_c:g} C: " + "; ".join(why)
                            + " (evaporation of a liquid film is modelled between the melting and boiling points)")
    P = vapour_pressure_kpa(rows, t_c)
    v = rows["molar_volume"].to_numpy(float)
    no_p = ~(np.isfinite(P) & (P > 0))
    no_v = ~(np.isfinite(v) & (v > 0))
    bad = [f"{n} has no {' and no '.join(w for w, m in (('vapour pressure', a), ('molar volume', b)) if m)}"
           for n, a, b in zip(names, no_p, no_v) if a or b]
    if bad:
        raise SelectorError(f"cannot follow the drying at {t_c:g} C: " + "; ".join(bad)
                            + " (a liquid of your own needs vapour_pressure_kpa, the vapour pressure at 25 C)")
    from .ranking import corrected_hsp

    h = corrected_hsp(rows, t_c)
    T = t_c + 273.15
    p_air = np.where(rows["cas"].astype(str).to_numpy() == WATER_CAS, rh / 100.0 * P, 0.0)
    uni = unifac_gammas(rows, t_c) if activity == "unifac" else None

    n0 = f0 / v  # mol per cm3 of initial liquid
    V0 = float(np.dot(n0, v))  # = 1

    def rhs(ln_n):
        n = np.exp(ln_n)
        N = n.sum()
        x = n / N
        if activity == "hsp":
            g = np.exp(_gamma_hsp(x, v, h, T))
        elif uni is not None:
            g = uni(x)
        else:
            g = 1.0
        F = np.maximum(g * x * P - p_air, 0.0)
        tot = float(np.dot(v, F))
        if tot <= 0:
            return None
        # F_i / n_i written without dividing by a vanishing amount
        with np.errstate(divide="ignore", invalid="ignore"):
            per_mol = np.maximum(g * P / N - np.where(p_air > 0, p_air / n, 0.0), 0.0)
        return -V0 * per_mol / tot

    phi_max = float(max_evaporated)
    grid = np.linspace(0.0, phi_max, int(points))
    sub = max(1, int(math.ceil(400.0 / (points - 1) * phi_max)))  # >= ~400 RK4 steps in total
    out = np.full((len(grid), len(names)), np.nan)
    y = np.log(n0)
    out[0] = n0
    warnings = []
    stopped = None
    for gi in range(1, len(grid)):
        hstep = (grid[gi] - grid[gi - 1]) / sub
        for _ in range(sub):
            k1 = rhs(y)
            if k1 is None:
                stopped = grid[gi - 1]
                break
            k2 = rhs(y + 0.5 * hstep * k1)
            k3 = rhs(y + 0.5 * hstep * k2) if k2 is not None else None
            k4 = rhs(y + hstep * k3) if k3 is not None else None
            if k4 is None:
                stopped = grid[gi - 1]
                break
            y = y + hstep / 6.0 * (k1 + 2 * k2 + 2 * k3 + k4)
        if stopped is not None:
            break
        out[gi] = np.exp(y)
    if stopped is not None:
        warnings.append(f"evaporation stops after {stopped:.0%} of the liquid: what is left is in "
                        "equilibrium with the air (e.g. water at this humidity)")
    if len(rows) > 1:
        from .mixing import check_blend_miscible

        try:
            split = check_blend_miscible(rows, temperature=t_c, library=lib).failing
        except SelectorError as err:
            split = []
            warnings.append(f"miscibility not checked ({err}): the path assumes one liquid phase")
        if split:
            warnings.append("not miscible in all proportions at " + f"{t_c:g} C: "
                            + ", ".join(f"{a} + {b} ({st})" for a, b, st in split)
                            + "; the path assumes one liquid phase, which holds only while the composition "
                              "stays within their mutual solubility")
    if t_c > 25.0:
        from .cautions import heated_notes

        heat = heated_notes(rows.assign(hazard_notes=""), t_c)
        warnings += [f"{nm}: {note}" for nm, note in zip(names, heat) if note]
    if activity == "raoult" and (rows["cas"].astype(str).to_numpy() == WATER_CAS).any() and len(rows) > 1:
        warnings.append("water with organic liquids is far from ideal (Raoult's law can get even the order "
                        "of leaving wrong: 1-butanol leaves a water-rich blend before the water, through "
                        "their azeotrope); compare activity='unifac' (--model unifac)")
    ok = np.all(np.isfinite(out), axis=1)
    grid, out = grid[ok], out[ok]
    vol = out * v
    phi = vol / vol.sum(1, keepdims=True)
    hb = phi @ h
    df = pd.DataFrame({"evaporated_fraction": grid, "remaining_fraction": 1.0 - grid})
    for j, nm in enumerate(names):
        df[f"phi_{nm}"] = phi[:, j]
    df["delta_d"], df["delta_p"], df["delta_h"] = hb[:, 0], hb[:, 1], hb[:, 2]
    tail = names[int(np.argmax(phi[-1]))]
    leaves = float("nan")
    flag = False
    msg = f"tail solvent (the last to leave): {tail}"
    if target is not None:
        from .ranking import resolve_target

        tg = resolve_target(target, lib, t_c)
        d = _ra(hb, tg.hsp)
        df["ra"] = d
        if tg.radius is not None:
            red = d / tg.radius
            df["red"] = red
            df["inside"] = red < 1.0
            out_idx = np.flatnonzero(red >= 1.0)
            if len(out_idx):
                leaves = float(grid[out_idx[0]])
                flag = leaves < float(must_stay_until)
                if out_idx[0] == 0:
                    msg += "; the blend starts OUTSIDE the sphere"
                    warnings.append("the blend is outside the target sphere before any evaporation")
                elif flag:
                    warnings.append(f"the remaining liquid leaves the sphere after {leaves:.0%} has "
                                    f"evaporated, before {float(must_stay_until):.0%}: the solute may "
                                    "come out of solution before the film has set")
                msg += f"; leaves the sphere at {leaves:.0%} evaporated"
            else:
                msg += "; stays inside the sphere to the end"
    df.attrs.update(tail_solvent=tail, leaves_sphere_at=leaves, flag=bool(flag), warnings=warnings,
                    message=msg, activity=activity, temperature=t_c, relative_humidity=rh,
                    components=tuple(names),
                    caution="Evaporating solvents form flammable and harmful vapours: ventilate, "
                            "keep ignition sources away and check each safety data sheet.")
    return df
