"""UNIFAC phase split of a liquid pair: the second opinion beside the HSP miscibility model.

Methods, with the parameters and group assignments that ``thermo`` carries:

* UNIFAC, original: Fredenslund, Jones and Prausnitz, AIChE J. 21 (1975) 1086
  (``thermo.unifac`` UFSG/UFIP, the vapour-liquid parameter table);
* UNIFAC (Dortmund): Weidlich and Gmehling, Ind. Eng. Chem. Res. 26 (1987) 1372
  (``thermo.unifac`` DOUFSG/DOUFIP2016).

Groups are the DDBST assignments ``thermo.unifac`` carries, looked up by InChIKey. A pair
splits when the Gibbs energy of mixing g(x) = GE/RT + x ln x + (1 - x) ln(1 - x), on 401 mole
fractions (logit-spaced, 1e-8 .. 1 - 1e-8), lies above its lower convex hull (the
common-tangent construction); the hull segment that spans the gap gives the two phase
compositions. A pair with a missing group assignment or group-interaction parameter is not
covered, and says why.

On the reference pairs of ``parameters/miscibility_pairs.csv`` (see ``miscibility_accuracy.md``)
Dortmund UNIFAC covers 123 of 142 and is right on 96.7 % of them, the original 93.1 % of 131:
:func:`second_opinion` uses Dortmund where it covers the pair, else the original.

>>> unifac_split([{16: 1}, {1: 1, 2: 1, 14: 1}], version=1) is None    # water, ethanol: one phase
True
"""
from __future__ import annotations

import functools

import numpy as np

#: Mole-fraction grid for the tangent construction: logit-spaced, 1e-8 .. 1 - 1e-8.
XGRID = 1.0 / (1.0 + np.exp(-np.linspace(-18.4, 18.4, 401)))

#: Names of the two versions as shown to users.
VERSION_NAMES = {0: "UNIFAC (original)", 1: "UNIFAC (Dortmund)"}


def tables(version: int):
    """(subgroups, interaction parameters) of ``thermo.unifac`` for version 0 or 1."""
    from thermo import unifac as U

    if version == 0:
        return U.UFSG, U.UFIP
    return U.DOUFSG, U.DOUFIP2016


def covered(groups, version: int) -> str | None:
    """None if every group and group pair has parameters, else the reason."""
    sg, ip = tables(version)
    if not groups or any(not g for g in groups):
        return "no group assignment"
    mains = set()
    for g in groups:
        for k in g:
            if k not in sg:
                return f"subgroup {k} without parameters"
            mains.add(sg[k].main_group_id)
    for a in mains:
        for b in mains:
            if a != b and (a not in ip or b not in ip[a]):
                return f"no interaction parameters for main groups {a}-{b}"
    return None


def _lower_hull(x, y):
    """Indices of the lower convex hull of points sorted by x (Andrew's monotone chain)."""
    hull: list[int] = []
    for i in range(len(x)):
        while len(hull) >= 2:
            i1, i2 = hull[-2], hull[-1]
            if (x[i2] - x[i1]) * (y[i] - y[i1]) - (y[i2] - y[i1]) * (x[i] - x[i1]) <= 0:
                hull.pop()
            else:
                break
        hull.append(i)
    return hull


def ge_over_rt(model, x) -> np.ndarray:
    """GE/RT of a binary at the liquid-1 mole fractions ``x``, all at once, from the parameters of
    a ``thermo.unifac.UNIFAC`` model (its r, q, group Q, group counts and psi at the model's T).

    The same UNIFAC equations thermo evaluates one composition at a time (combinatorial part
    with r^(3/4) for Dortmund; residual part from the group activity coefficients of the mixture
    and of each pure liquid); ``tests/test_mixing.py`` checks them against thermo's own GE.
    """
    if model.version not in (0, 1):
        raise ValueError(f"UNIFAC version {model.version} is not handled (0 original, 1 Dortmund)")
    x = np.asarray(x, float)
    X = np.column_stack([x, 1.0 - x])                       # (n, 2) component mole fractions
    rs, qs = np.asarray(model.rs, float), np.asarray(model.qs, float)
    Q = np.asarray(model.Qs, float)                          # (G,)
    v = np.asarray(model.vs, float)                          # (G, 2)
    psi = np.asarray(model.psis(), float)                    # (G, G): psi[m, k]
    # combinatorial part
    V = rs / (X @ rs)[:, None]
    F = qs / (X @ qs)[:, None]
    if model.version == 1:
        r34 = rs ** 0.75
        Vp = r34 / (X @ r34)[:, None]
    else:
        Vp = V
    ln_c = 1.0 - Vp + np.log(Vp) - 5.0 * qs * (1.0 - V / F + np.log(V / F))

    def ln_Gamma(Xg):        # residual part; Xg: (..., G) group mole fractions
        th = Q * Xg
        th = th / th.sum(-1, keepdims=True)
        s = th @ psi                                         # sum_m theta_m psi_mk -> (..., G)
        return Q * (1.0 - np.log(s) - (th / s) @ psi.T)
    Xg = X @ v.T                                             # (n, G)
    Xg = Xg / Xg.sum(1, keepdims=True)
    lg = ln_Gamma(Xg)                                        # (n, G)
    pure = v.T / v.T.sum(1, keepdims=True)                   # (2, G)
    lg_pure = ln_Gamma(pure)                                 # (2, G)
    ln_r = lg @ v - (v * lg_pure.T).sum(0)                   # (n, 2)
    return (X * (ln_c + ln_r)).sum(1)


def unifac_split(groups, T: float = 298.15, version: int = 0):
    """(x_a, x_b) coexisting mole fractions of liquid 1 at ``T`` (K), or None for one phase."""
    from thermo.unifac import UNIFAC

    model = UNIFAC.from_subgroups(T=T, xs=[0.5, 0.5], chemgroups=groups, version=version)
    x = XGRID
    with np.errstate(all="ignore"):
        g = ge_over_rt(model, x) + x * np.log(x) + (1 - x) * np.log1p(-x)
    if not np.isfinite(g).all():
        raise ValueError("UNIFAC gave a non-finite Gibbs energy of mixing")
    hull = _lower_hull(x, g)
    best = None
    for i1, i2 in zip(hull[:-1], hull[1:]):
        if i2 - i1 < 2:
            continue
        seg = slice(i1 + 1, i2)
        line = g[i1] + (g[i2] - g[i1]) * (x[seg] - x[i1]) / (x[i2] - x[i1])
        if np.max(g[seg] - line) > 1e-7:
            if best is None or x[i2] - x[i1] > best[1] - best[0]:
                best = (x[i1], x[i2])
    return best


@functools.lru_cache(maxsize=1)
def _assignments():
    import thermo.unifac as U

    U.load_group_assignments_DDBST()
    return U.DDBST_UNIFAC_assignments, U.DDBST_MODIFIED_UNIFAC_assignments


def groups_of(inchikey: str, version: int) -> dict | None:
    """DDBST group assignment of a compound (by InChIKey) for UNIFAC ``version``, or None."""
    if not inchikey or not isinstance(inchikey, str):
        return None
    return _assignments()[version].get(inchikey.strip())


def state_of_split(split, m1: float, m2: float) -> tuple[str, float, float]:
    """(state, wt % of liquid 2 in liquid 1's phase, wt % of liquid 1 in liquid 2's phase) from
    :func:`unifac_split`; immiscible when the smaller mutual solubility is below
    :data:`selector.mixing.IMMISCIBLE_BELOW_WT_PCT`."""
    from .mixing import IMMISCIBLE_BELOW_WT_PCT, mole_to_mass

    if split is None:
        return "miscible", float("nan"), float("nan")
    w_a = float(mole_to_mass(split[0], m1, m2))      # mass fraction of 1 in the phase poor in 1
    w_b = float(mole_to_mass(split[1], m1, m2))      # ... in the phase rich in 1
    sol_1_in_2, sol_2_in_1 = 100 * w_a, 100 * (1 - w_b)
    state = "immiscible" if min(sol_1_in_2, sol_2_in_1) < IMMISCIBLE_BELOW_WT_PCT else "partially miscible"
    return state, sol_2_in_1, sol_1_in_2


def second_opinion(inchikey_a: str, inchikey_b: str, m1: float, m2: float, t_c: float = 25.0) -> dict:
    """UNIFAC's state for a pair at ``t_c`` (C): see :func:`_second_opinion` (cached per pair and
    temperature; a copy is returned)."""
    return dict(_second_opinion(str(inchikey_a or ""), str(inchikey_b or ""), float(m1), float(m2),
                                round(float(t_c), 6)))


@functools.lru_cache(maxsize=4096)
def _second_opinion(inchikey_a: str, inchikey_b: str, m1: float, m2: float, t_c: float = 25.0) -> dict:
    """UNIFAC's state for a pair at ``t_c`` (C): Dortmund where it covers the pair, else the
    original. Returns ``{"method", "state", "why"}``; ``state`` is "" when neither covers it
    (``why`` says what is missing)."""
    whys = []
    for version in (1, 0):
        g = [groups_of(inchikey_a, version), groups_of(inchikey_b, version)]
        why = covered(g, version)
        if why is None:
            try:
                split = unifac_split(g, T=float(t_c) + 273.15, version=version)
            except Exception as err:  # noqa: BLE001 - thermo failed on this pair: not covered
                whys.append(f"{VERSION_NAMES[version]}: {type(err).__name__}")
                continue
            state = state_of_split(split, m1, m2)[0]
            return {"method": VERSION_NAMES[version], "state": state, "why": ""}
        whys.append(f"{VERSION_NAMES[version]}: {why}")
    return {"method": "", "state": "", "why": "; ".join(whys)}
