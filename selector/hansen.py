"""The Hansen core: pure, vectorised functions on Hansen solubility parameters.

Units: every solubility parameter is in MPa^0.5, molar volumes in cm^3/mol, temperatures in
degrees Celsius, expansion coefficients in 1/K. All functions accept scalars or numpy arrays
and broadcast over them.

Reference: C. M. Hansen, *Hansen Solubility Parameters: A User's Handbook*, 2nd ed., CRC Press,
2007 (ch. 1 for Ra, RED and blends).
"""
from __future__ import annotations

import numpy as np

#: 1 (cal/cm^3)^0.5 expressed in MPa^0.5 (Hansen's handbook, ch. 1).
CAL_TO_MPA = 2.0455

#: Gas constant in J/(mol K).
R_GAS = 8.314462618


def _arr(x):
    return np.asarray(x, dtype=float)


def scaled(hsp):
    """Map (dD, dP, dH) points to the scaled space (2 dD, dP, dH), in which Ra is Euclidean.

    ``hsp`` has shape (..., 3), MPa^0.5. Returns an array of the same shape.

    >>> scaled([18.0, 1.4, 2.0]).tolist()
    [36.0, 1.4, 2.0]
    """
    h = _arr(hsp)
    return h * np.array([2.0, 1.0, 1.0])


def ra(hsp1, hsp2):
    """Hansen distance Ra (MPa^0.5) between points given as (..., 3) arrays of (dD, dP, dH).

    Ra^2 = 4 (dD1 - dD2)^2 + (dP1 - dP2)^2 + (dH1 - dH2)^2 (Hansen's handbook, eq. 1.9).

    >>> round(float(ra([18.0, 1.4, 2.0], [15.8, 8.8, 19.4])), 3)
    19.413
    """
    d = _arr(hsp1) - _arr(hsp2)
    return np.sqrt(4.0 * d[..., 0] ** 2 + d[..., 1] ** 2 + d[..., 2] ** 2)


def red(hsp, centre, radius):
    """Relative energy difference RED = Ra / R0 (dimensionless).

    RED < 1: inside the solute's sphere (expected to dissolve); > 1 outside.

    >>> round(float(red([18.0, 1.4, 2.0], [21.3, 5.8, 4.3], 12.7)), 3)
    0.65
    """
    r0 = _arr(radius)
    if np.any(~(r0 > 0)):
        raise ValueError("R0 must be a positive number of MPa^0.5")
    return ra(hsp, centre) / r0


def blend_hsp(hsp, fractions):
    """HSP of a liquid blend: the volume-fraction-weighted mean of its components.

    ``hsp`` has shape (..., k, 3) and ``fractions`` shape (..., k); fractions are normalised to
    sum to one (Hansen's handbook, ch. 1: blends average by volume fraction).

    >>> blend_hsp([[15.8, 8.8, 19.4], [18.0, 1.4, 2.0]], [0.5, 0.5]).round(2).tolist()
    [16.9, 5.1, 10.7]
    """
    h = _arr(hsp)
    f = _arr(fractions)
    if h.ndim < 2 or f.ndim < 1 or h.shape[-2] != f.shape[-1]:
        raise ValueError(f"one volume fraction per component: {h.shape[-2] if h.ndim >= 2 else 1} components "
                         f"(rows of dD, dP, dH) but {f.shape[-1] if f.ndim else 1} fractions")
    if np.any(f < 0) or np.any(~np.isfinite(f)):
        raise ValueError("volume fractions must be finite and non-negative")
    s = f.sum(axis=-1, keepdims=True)
    if np.any(s <= 0):
        raise ValueError("volume fractions must not all be zero")
    f = f / s
    return np.einsum("...k,...kj->...j", f, h)


def teas_fractions(hsp):
    """Teas fractional parameters (fd, fp, fh), each component over dD + dP + dH.

    Teas, J. Paint Technol. 40 (1968) 19. Returns an array of shape (..., 3) summing to 1
    (multiplied by 100 these are the coordinates of the Teas triangle).

    >>> teas_fractions([18.0, 1.4, 2.0]).round(3).tolist()
    [0.841, 0.065, 0.093]
    """
    h = _arr(hsp)
    s = h.sum(axis=-1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        return h / s


def total_parameter(hsp):
    """Total solubility parameter dT = sqrt(dD^2 + dP^2 + dH^2), MPa^0.5.

    Approximates the Hildebrand parameter (Hansen's handbook, eq. 1.4).

    >>> round(float(total_parameter([15.5, 16.0, 42.3])), 2)
    47.81
    """
    h = _arr(hsp)
    return np.sqrt((h ** 2).sum(axis=-1))


def hildebrand_parameter(hvap_kj_mol, molar_volume, temperature=25.0):
    """Hildebrand parameter sqrt((dHvap - R T) / V) in MPa^0.5.

    ``hvap_kj_mol``: molar enthalpy of vaporisation at ``temperature`` (kJ/mol);
    ``molar_volume``: liquid molar volume (cm^3/mol). Hildebrand and Scott, *The Solubility of
    Nonelectrolytes*, 3rd ed. (1950). J/cm^3 equals MPa.

    >>> round(float(hildebrand_parameter(38.0, 106.8)), 2)
    18.24
    """
    T = _arr(temperature) + 273.15
    e = _arr(hvap_kj_mol) * 1000.0 - R_GAS * T  # J/mol
    with np.errstate(invalid="ignore"):
        return np.sqrt(e / _arr(molar_volume))


def cal_to_mpa(x):
    """Convert (cal/cm^3)^0.5 to MPa^0.5 (factor 2.0455).

    >>> round(float(cal_to_mpa(9.0)), 3)
    18.41
    """
    return _arr(x) * CAL_TO_MPA


def mpa_to_cal(x):
    """Convert MPa^0.5 to (cal/cm^3)^0.5 (divide by 2.0455).

    >>> round(float(mpa_to_cal(18.0)), 3)
    8.8
    """
    return _arr(x) / CAL_TO_MPA


def hsp_at_temperature(hsp, expansion_coeff, temperature, reference_temperature=25.0):
    """HSP at another temperature by the Hansen-Beerbower relations.

    With alpha the cubic thermal expansion coefficient (1/K) and dT the temperature change (K):
    d(dD)/dT = -1.25 alpha dD, d(dP)/dT = -0.5 alpha dP, d(dH)/dT = -dH (1.22e-3 + 0.5 alpha)
    (Hansen and Beerbower, 1971, in Kirk-Othmer Encyclopedia, Suppl. Vol., 889-910; quoted from
    memory of Hansen's handbook, ch. 1). The relations are integrated exactly for constant alpha:
    each component scales by exp(-k dT). ``hsp`` (..., 3); ``expansion_coeff`` broadcastable to
    (...,). Returns (..., 3); rows with an unknown (NaN) coefficient come back NaN.

    >>> hsp_at_temperature([18.0, 1.4, 2.0], 1.08e-3, 25.0).tolist()
    [18.0, 1.4, 2.0]
    """
    h = _arr(hsp)
    a = _arr(expansion_coeff)[..., None]
    if np.any(a[np.isfinite(a)] < 0):
        raise ValueError("thermal expansion coefficient must be non-negative (1/K)")
    dt = _arr(temperature)[..., None] - reference_temperature
    k = np.concatenate([1.25 * a, 0.5 * a, 1.22e-3 + 0.5 * a], axis=-1)
    return h * np.exp(-k * dt)


def energy_fractions(hsp):
    """Share of the cohesive energy density carried by each part: (dD^2, dP^2, dH^2) / dT^2.

    Used by the polarity-match measure of :mod:`selector.ranking`. Returns (..., 3).

    >>> energy_fractions([3.0, 0.0, 4.0]).tolist()
    [0.36, 0.0, 0.64]
    """
    h2 = _arr(hsp) ** 2
    with np.errstate(invalid="ignore", divide="ignore"):
        return h2 / h2.sum(axis=-1, keepdims=True)
