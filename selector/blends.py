"""Blend design and safer substitutes with Hansen solubility parameters.

Blend HSP
---------
The HSP of a liquid blend is the volume-fraction-weighted mean of its components' HSP (Hansen's
handbook, ch. 1: C. M. Hansen, *Hansen Solubility Parameters: A User's Handbook*, 2nd ed., CRC
Press, 2007). In the scaled space x = (2 dD, dP, dH), Ra is a Euclidean distance, so the best
volume fractions of a combination solve a small constrained least-squares problem

    minimise |sum_i f_i x_i - t|^2  subject to  sum_i f_i = 1,  f_i >= min_fraction,

which is solved **exactly** here, in closed form and vectorised over all combinations at once:

* binary: projection of the target onto the line through the two points, the fraction clipped
  to [m, 1 - m];
* ternary: projection onto the plane of the three points (2 x 2 normal equations written with
  the Gram matrix of all candidates, so every triple is a few array operations); if that point
  lies inside the shrunken triangle (all f_i >= m) it is the optimum, otherwise the optimum lies
  on one of the three edges (one component at m, a clipped 1-D projection), and the best edge is
  taken. Degenerate (collinear) triples fall through to the edges.

Exact pruning: a triple is solved only when lower bounds on its Ra (the distance of the target
to the triple's plane, plus the in-plane distance of the target's projection to the allowed
triangle, and a bound along a direction) beat the current pool threshold and the best of its
three pairs; :mod:`selector.blends_scan` applies them row by row so that the ~92.6 million
triples of the full library are searched in a fraction of a second.

Which blends are shown
----------------------
Ra values closer than ``resolution`` (default 0.5 MPa^0.5, about the uncertainty of published
HSP) are treated as equal: within such a step, rows with a component that has no hazard data
(CHEM21 "unclassified") come after every classified row - unclassified counts as no better than
the worst class, and this comes before the number of components, so a single liquid without
hazard data never heads a step that holds a classified blend - then fewer components come first,
then the better hazard class (unclassified ranked below "highly hazardous"), then the smaller Ra.
A liquid of your own (``origin`` other than "library") without hazard data counts as "highly
hazardous" here rather than unclassified: you added it on purpose, so it is not pushed behind
every classified blend; its hazard notes still say that it has no hazard data.
A blend of two is proposed only if it comes at least ``min_gain`` (default 0.1 MPa^0.5) closer to
the target than each of its liquids alone, and a blend of three only if it beats each of its three
pairs by the same margin: a third liquid must earn its place. Every pair inside a proposed blend
must be miscible at the use temperature (:func:`selector.mixing.miscible_pairs`). Results are
sorted by Ra and thinned for diversity: a liquid appears in at most ``max_uses`` (default 3) of
the rows shown. The hazard class of a blend is that of its worst component (a conservative rule
of this project; CHEM21 classes, :mod:`selector.hazards`).
"""
from __future__ import annotations

import math

import numpy as np
import pandas as pd

from .errors import SelectorError
from .filters import check_filter_keys, check_temperature, filter_mask, masks_and_reagents
from .hansen import ra as _ra
from .library import load_library, locate, locate_many, vapour_pressure_kpa
from .targets import Target

REFERENCE_RADIUS = 8.0  # MPa^0.5, as in selector.ranking
DEFAULT_MIN_GAIN = 0.1  # MPa^0.5
DEFAULT_RESOLUTION = 0.5  # MPa^0.5: Ra differences below this are within the data's uncertainty
SCALE = np.array([2.0, 1.0, 1.0])
#: hazard level of a liquid without hazard data in the search keys (CHEM21 classes are 0-3)
UNCLASSIFIED_LEVEL = 4

CAUTION = ("Caution: blends are proposals for laboratory tests. Solvents can be flammable, toxic or "
           "reactive; the blend's flash point can be as low as its lowest-flash component. Read each "
           "supplier's safety data sheet, ventilate, keep ignition sources away and follow local "
           "regulation.")

#: n-butyl acetate, the reference of relative evaporation rates (= 1).
BUTYL_ACETATE_CAS = "123-86-4"


# ---------------------------------------------------------------- exact fractions

def _check_min_fraction(m, k):
    try:
        m = float(m)
    except (TypeError, ValueError):
        raise SelectorError(f"the smallest share (min_fraction) must be a number between 0 and 1/{k}, "
                            f"got {m!r}") from None
    if not math.isfinite(m) or m < 0 or m * k > 1 + 1e-12:
        raise SelectorError(f"the smallest share (min_fraction) must be between 0 and 1/{k} = {1 / k:.3f} "
                            f"for blends of {k} liquids, got {m:g}")
    return m


def binary_fractions(xa, xb, t, min_fraction=0.05):
    """Exact best volume fraction of the first liquid in blends of two, in the scaled space.

    ``xa``, ``xb``: (..., 3) scaled points (2 dD, dP, dH); ``t``: (3,) scaled target. Returns
    (``f_a``, ``ra``): the fraction of ``a`` (clipped to [m, 1 - m]) and the blend's Ra (MPa^0.5).
    Identical points give f_a = 0.5.

    >>> f, d = binary_fractions([[36.0, 0.0, 0.0]], [[36.0, 10.0, 0.0]], [36.0, 3.0, 0.0], 0.05)
    >>> round(float(f[0]), 6), round(float(d[0]), 6)
    (0.7, 0.0)
    """
    m = _check_min_fraction(min_fraction, 2)
    xa = np.asarray(xa, float)
    xb = np.asarray(xb, float)
    t = np.asarray(t, float)
    d = xa - xb
    dd = (d * d).sum(-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        f = np.where(dd > 0, ((t - xb) * d).sum(-1) / np.where(dd > 0, dd, 1.0), 0.5)
    f = np.clip(f, m, 1.0 - m)
    p = xb + f[..., None] * d
    return f, np.sqrt(((p - t) ** 2).sum(-1))


def _segment(base, d, lo, hi):
    """min over u in [lo, hi] of |base + u d| (vectorised); returns (u, squared distance)."""
    dd = (d * d).sum(-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.where(dd > 0, -(base * d).sum(-1) / np.where(dd > 0, dd, 1.0), lo)
    u = np.clip(u, lo, hi)
    p = base + u[..., None] * d
    return u, (p * p).sum(-1)


def ternary_fractions(xa, xb, xc, t, min_fraction=0.05):
    """Exact best volume fractions of blends of three, in the scaled space (vectorised).

    ``xa, xb, xc``: (..., 3) scaled points; ``t``: (3,) scaled target. Returns (``f``, ``ra``):
    ``f`` of shape (..., 3) (each >= m, summing to 1) and the blend's Ra (MPa^0.5). Method: plane
    projection, else the best of the three edges (module doc).

    >>> f, d = ternary_fractions([[0.0, 0, 0]], [[10.0, 0, 0]], [[0.0, 10, 0]], [2.0, 3.0, 0.0])
    >>> f.round(6).tolist(), round(float(d[0]), 6)
    ([[0.5, 0.2, 0.3]], 0.0)
    """
    m = _check_min_fraction(min_fraction, 3)
    t = np.asarray(t, float)
    za = np.asarray(xa, float) - t
    zb = np.asarray(xb, float) - t
    zc = np.asarray(xc, float) - t
    za, zb, zc = np.broadcast_arrays(za, zb, zc)
    f, d2 = _ternary_core(za, zb, zc, m)
    return f, np.sqrt(d2)


def _ternary_core(za, zb, zc, m):
    """Exact ternary optimum with the target at the origin; returns (f (..., 3), squared Ra)."""
    yb = zb - za
    yc = zc - za
    gbb = (yb * yb).sum(-1)
    gcc = (yc * yc).sum(-1)
    gbc = (yb * yc).sum(-1)
    rb = -(yb * za).sum(-1)
    rc = -(yc * za).sum(-1)
    det = gbb * gcc - gbc * gbc
    scale = np.maximum(gbb * gcc, 1e-300)
    ok = det > 1e-10 * scale
    with np.errstate(invalid="ignore", divide="ignore"):
        sd = np.where(ok, det, 1.0)
        fb = (gcc * rb - gbc * rc) / sd
        fc = (gbb * rc - gbc * rb) / sd
    fa = 1.0 - fb - fc
    inside = ok & (fa >= m) & (fb >= m) & (fc >= m)
    p = za + fb[..., None] * yb + fc[..., None] * yc
    best = np.where(inside, (p * p).sum(-1), np.inf)
    f = np.stack([fa, fb, fc], -1)
    hi = 1.0 - 2.0 * m
    # edge with c at m: a = u, b = 1 - m - u
    for fixed, (p1, p2) in ((2, (0, 1)), (0, (1, 2)), (1, (0, 2))):
        z = (za, zb, zc)
        base = m * z[fixed] + (1.0 - m) * z[p2]
        u, d2 = _segment(base, z[p1] - z[p2], m, hi)
        better = ~inside & (d2 < best)
        if np.any(better):
            fe = np.empty(f.shape)
            fe[..., fixed] = m
            fe[..., p1] = u
            fe[..., p2] = 1.0 - m - u
            f = np.where(better[..., None], fe, f)
            best = np.where(better, d2, best)
    return f, np.maximum(best, 0.0)


def blend_fractions(hsp, target, min_fraction=0.05):
    """Exact best volume fractions for ONE combination of 1-3 liquids.

    ``hsp``: (k, 3) HSP of the liquids (MPa^0.5); ``target``: (dD, dP, dH). Returns (fractions
    (k,), Ra MPa^0.5).

    >>> f, d = blend_fractions([[15.8, 8.8, 19.4], [18.0, 1.4, 2.0]], [16.9, 5.1, 10.7])
    >>> f.round(4).tolist(), round(d, 6)
    ([0.5, 0.5], 0.0)
    """
    h = np.atleast_2d(np.asarray(hsp, float)) * SCALE
    t = np.asarray(target, float) * SCALE
    k = len(h)
    if k == 1:
        return np.array([1.0]), float(np.sqrt(((h[0] - t) ** 2).sum()))
    if k == 2:
        f, d = binary_fractions(h[0], h[1], t, min_fraction)
        return np.array([float(f), 1.0 - float(f)]), float(d)
    if k == 3:
        f, d = ternary_fractions(h[0], h[1], h[2], t, min_fraction)
        return np.asarray(f, float), float(d)
    raise SelectorError("blends of 1, 2 or 3 liquids only")


# ---------------------------------------------------------------- the search

def _miscibility(cand, temperature):
    from .mixing import miscible_pairs

    return np.asarray(miscible_pairs(cand, temperature=temperature), dtype=bool)


def _reacting_pairs(cand, reacts: np.ndarray) -> list[tuple[str, str]]:
    """The pairs of candidates that the pair screen keeps out of every blend (``reacts``:
    :func:`selector.cautions.reactive_pair_matrix` of ``cand``), as name pairs."""
    i, j = np.nonzero(np.triu(reacts, 1))
    names = cand["name"].astype(str).to_numpy()
    return [(names[a], names[b]) for a, b in zip(i, j)]


#: Most candidate liquids a blend search takes: the pair screens are n x n arrays (2,000
#: candidates took about 1 GB and 5 s; 50,000 user rows asked for 57 GB).
MAX_BLEND_CANDIDATES = 3000


def _allowed_pairs(cand, temperature, k, require_miscible, include_reactive):
    """``(allowed, reacts)``: (n, n) bool of the pairs that may be blended, or None for "all":
    miscible (when asked) and, unless ``include_reactive``, not a pair that reacts
    (:func:`selector.cautions.reactive_pair_matrix`: acid + amine, amine + nitroalkane, primary
    amine + aldehyde or ketone); ``reacts`` is that matrix (None when not screened)."""
    if k < 2 or len(cand) < 2:
        return None, None
    if len(cand) > MAX_BLEND_CANDIDATES:
        raise SelectorError(f"{len(cand)} candidate liquids are too many for a blend search (at most "
                            f"{MAX_BLEND_CANDIDATES}: every pair is checked for miscibility and reactions); "
                            "narrow them with filters (--only, --bp, --max-class, ...) or single liquids (--parts 1)")
    ok = _miscibility(cand, temperature) if require_miscible else None
    reacts = None
    if not include_reactive:
        from .cautions import reactive_pair_matrix

        reacts = reactive_pair_matrix(cand)
        ok = ~reacts if ok is None else (ok & ~reacts)
    return ok, reacts


def search_arrays(X, t, *, max_components=3, min_fraction=0.05, miscible=None, pool=2000,
                  min_gain=DEFAULT_MIN_GAIN, hazard_rank=None, resolution=0.5, ternary_pool=None,
                  workers=None, method="screened", ra_cap=None, display=None):
    """Core search on scaled candidate points ``X`` (n, 3) and scaled target ``t`` (3,).

    Returns a dict of arrays: ``idx`` (p, 3) candidate indices (-1 for unused slots), ``f`` (p, 3)
    fractions, ``ra`` (p,), ``key`` (p,) - every single liquid, the ``pool`` best admissible blends
    of two and the ``ternary_pool`` (default ``max(200, pool // 10)``) best of three (module doc),
    each set ordered by ``key``: Ra in steps of
    ``resolution`` (MPa^0.5), then the worst ``hazard_rank`` of the components (0-3, 4 for
    unclassified; optional (n,) array), then Ra. ``miscible``: optional (n, n) bool; pairs marked
    False are never blended. Exact: a triple is skipped only when a lower bound on its Ra already
    rules it out. ``method``: ``"screened"`` (default; :mod:`selector.blends_scan`: seeded pool,
    row cuts along a direction, one matrix screen per row, plane + in-plane lower bound, one
    thread) or ``"plane"`` (the plane-distance bound evaluated for every triple, ``workers``
    threads, default up to 2); both keep the same pool keys. ``ra_cap`` (MPa^0.5, optional):
    blends of three with Ra >= ra_cap are not kept (they rank after every one below it);
    ``"display"`` computes it with :func:`display_cap` for ``display = (top, max_uses)``
    (method ``"plane"`` ignores the cap).
    """
    X = np.asarray(X, float)
    n = len(X)
    res = float(resolution)
    hz = (np.zeros(n) if hazard_rank is None
          else np.where(np.isfinite(hazard_rank), hazard_rank, float(UNCLASSIFIED_LEVEL)))
    Z = X - np.asarray(t, float)
    G = Z @ Z.T
    gd = np.diag(G).copy()
    single = np.sqrt(np.maximum(gd, 0))

    def key(rr, worst):
        b = np.floor(rr / res)
        return b * 10.0 + worst + np.minimum(rr / res - b, 0.999)

    parts = [(np.column_stack([np.arange(n), np.full(n, -1), np.full(n, -1)]),
              np.column_stack([np.ones(n), np.zeros(n), np.zeros(n)]), single, key(single, hz))]
    if max_components >= 2 and n >= 2:
        m = _check_min_fraction(min_fraction, 2)
        D = gd[:, None] + gd[None, :] - 2 * G
        with np.errstate(invalid="ignore", divide="ignore"):
            a = np.where(D > 0, (gd[None, :] - G) / np.where(D > 0, D, 1.0), 0.5)
        a = np.clip(a, m, 1 - m)
        b2 = a * a * gd[:, None] + 2 * a * (1 - a) * G + (1 - a) ** 2 * gd[None, :]
        B = np.sqrt(np.maximum(b2, 0))
        if miscible is not None:
            B = np.where(miscible, B, np.inf)
        np.fill_diagonal(B, np.inf)
        iu, ju = np.triu_indices(n, 1)
        bij = B[iu, ju]
        keep = bij < np.minimum(single[iu], single[ju]) - min_gain
        i2, j2 = iu[keep], ju[keep]
        a2 = a[i2, j2]
        parts.append(_best(np.column_stack([i2, j2, np.full(len(i2), -1)]),
                           np.column_stack([a2, 1 - a2, np.zeros(len(i2))]), bij[keep],
                           key(bij[keep], np.maximum(hz[i2], hz[j2])), pool))
    if max_components >= 3 and n >= 3:
        tp = max(200, pool // 10) if ternary_pool is None else int(ternary_pool)
        if workers is None:
            import os

            workers = min(2, os.cpu_count() or 1)
        m3 = _check_min_fraction(min_fraction, 3)
        if method == "screened":
            from .blends_scan import ternary_screened

            if isinstance(ra_cap, str) and ra_cap == "display":
                cap = display_cap(parts, *display, res) if display is not None else None
                trial = _display_trial(Z, G, gd, B, hz, m3, min_gain, tp, res, key, parts, display,
                                       cap)
                if trial is not None:
                    parts.append(trial)
                    cap = None
            else:
                cap = ra_cap
            if cap is not None or len(parts) < 3:
                cap = np.inf if cap is None else float(cap)
                parts.append(ternary_screened(Z, G, gd, B, hz, m3, min_gain, tp, res, key, ra_cap=cap))
        elif method == "plane":
            parts.append(_ternary_search(Z, G, gd, B, hz, single, m3, min_gain, tp, res, key,
                                         workers=workers))
        else:
            raise SelectorError(f"unknown ternary search method {method!r}; use 'screened' or 'plane'")
    return _stacked(parts)


def _stacked(parts) -> dict:
    """The (idx, f, ra, key) arrays of several parts (singles, pairs, triples) stacked into one dict."""
    return {k: np.concatenate(x) for k, x in zip(("idx", "f", "ra", "key"), zip(*parts))}


def _display_trial(Z, G, gd, B, hz, m, min_gain, pool, res, key, parts, display, cap):
    """Blends of three for the rows shown, from a tighter cap tried first; None if it cannot be
    proved to give the same rows (then the caller searches with ``cap``, :func:`display_cap`).

    The trial cap is the Ra step after the last row that singles and pairs alone would show.
    Every blend of three left out by it has a larger Ra step than each row shown with it, so if
    ``top`` rows are shown and all lie below the trial cap, the left-out blends come after them
    in display order and cannot change them (the greedy pick of :func:`_diverse` only looks
    back). Pays off where the safe cap of :func:`display_cap` is loose (targets near the edge of
    the library's HSP range, where few liquids lie close).
    """
    from .blends_scan import ternary_screened

    top, max_uses = display
    if top is None:
        return None
    two = _stacked(parts)
    pick = _diverse(_display_order(two), two["idx"], max_uses, top)
    if len(pick) < top:
        return None
    trial = (math.floor(float(two["ra"][pick[-1]]) / res) + 1) * res
    if cap is not None and trial >= cap:
        return None
    third = ternary_screened(Z, G, gd, B, hz, m, min_gain, pool, res, key, ra_cap=trial)
    allp = _stacked(parts + [third])
    pick = _diverse(_display_order(allp), allp["idx"], max_uses, top)
    steps = np.floor(allp["key"][pick] / 10.0)
    if len(pick) < top or steps.max() >= round(trial / res):
        return None
    return third


def _edge_gram(gcc, gbb, gaa, gbc, gac, gab, m):
    """Edge of a triple with c at m, a = u, b = 1 - m - u, from Gram entries (target at 0)."""
    base2 = m * m * gcc + 2 * m * (1 - m) * gbc + (1 - m) ** 2 * gbb
    bd = m * (gac - gbc) + (1 - m) * (gab - gbb)
    dd = gaa + gbb - 2 * gab
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.where(dd > 0, -bd / np.where(dd > 0, dd, 1.0), m)
    u = np.clip(u, m, 1 - 2 * m)
    return u, base2 + 2 * u * bd + u * u * dd


def _ternary_gram(gii, gij, gik, gjj, gkk, gjk, m):
    """Exact ternary optimum from the six Gram entries of (z_i, z_j, z_k) (target at 0)."""
    ybb = gjj - 2 * gij + gii
    ycc = gkk - 2 * gik + gii
    ybc = gjk - gij - gik + gii
    rb = gii - gij
    rc = gii - gik
    det = ybb * ycc - ybc * ybc
    ok = det > 1e-10 * np.maximum(ybb * ycc, 1e-300)
    with np.errstate(invalid="ignore", divide="ignore"):
        sd = np.where(ok, det, 1.0)
        fb = (ycc * rb - ybc * rc) / sd
        fc = (ybb * rc - ybc * rb) / sd
    fa = 1 - fb - fc
    inside = ok & (fa >= m) & (fb >= m) & (fc >= m)
    best = np.where(inside, gii - (fb * rb + fc * rc), np.inf)
    f = np.stack([fa, fb, fc], -1)
    # (fixed component, the one that gets u, the one that gets 1 - m - u)
    for fx, a, b, gx, ga, gb, gxb, gxa, gab in (
            (2, 0, 1, gkk, gii, gjj, gjk, gik, gij),
            (0, 1, 2, gii, gjj, gkk, gik, gij, gjk),
            (1, 0, 2, gjj, gii, gkk, gjk, gij, gik)):
        u, val = _edge_gram(gx, gb, ga, gxb, gxa, gab, m)
        better = ~inside & (val < best)
        if better.any():
            f[better, fx] = m
            f[better, a] = u[better]
            f[better, b] = 1 - m - u[better]
            best = np.where(better, val, best)
    return f, np.maximum(best, 0.0)


def _tau_table(tau_key, res):
    """Ra threshold per hazard level 0..4 so that key(Ra, level) < tau_key (see ``key``)."""
    if not np.isfinite(tau_key):
        return np.full(5, np.inf)
    bucket = np.floor(tau_key / 10.0)
    rest = tau_key - bucket * 10.0
    level = np.floor(rest)
    frac = rest - level
    lv = np.arange(5)
    return np.where(lv < level, (bucket + 1.0) * res,
                    np.where(lv == level, (bucket + frac / 0.999) * res, bucket * res))


def _ternary_search(Z, G, gd, B, hz, single, m, min_gain, pool, res, key, workers=1):
    n = len(Z)
    # visit the most promising liquids first (better class, closer to the target) so that the
    # pool threshold tightens early; the result does not depend on the order
    perm = np.lexsort((single, hz))
    Z = Z[perm]
    G = G[np.ix_(perm, perm)]
    gd = gd[perm]
    hzp = hz[perm].astype(int)
    # pair thresholds: a triple must beat each of its pairs by min_gain; immiscible -> never;
    # lower triangle and diagonal -> never (each triple is visited once, i < j < k)
    Bthr = np.where(np.isfinite(B), B, -np.inf)[np.ix_(perm, perm)] - min_gain
    Bthr[np.tril_indices(n)] = -np.inf
    Hp = np.maximum.outer(hzp, hzp)

    def scan(rows):
        tau_t = np.full(5, np.inf)
        best = None
        for i in rows:
            s0 = i + 1
            gii = gd[i]
            gi = G[i]
            ybb = gd - 2 * gi + gii             # |z_j - z_i|^2
            w = np.cross(Z[i], Z)               # z_i x z_j: triple product z_i.(z_j x z_k) = w_j.z_k
            msz = n - s0
            nstrip = 1 if msz < 64 else 4
            edges = s0 + (msz * (1 - np.sqrt(1 - np.arange(nstrip + 1) / nstrip))).astype(int)
            edges[-1] = n
            for r0, r1 in zip(edges[:-1], edges[1:]):
                if r1 <= r0:
                    continue
                R = slice(r0, r1)
                C = slice(r0, n)
                # squared distance of the target to the plane of (i, j, k) = num^2 / det (a lower
                # bound on the triple's Ra^2); det = |(z_j - z_i) x (z_k - z_i)|^2
                num = w[R] @ Z[C].T
                num *= num
                ybc = G[R, C] - gi[R, None]
                ybc -= (gi[C] - gii)[None, :]
                det = np.multiply.outer(ybb[R], ybb[C])
                ybc *= ybc
                det -= ybc
                bi = Bthr[i]
                thr = np.minimum.outer(bi[R], bi[C])
                np.minimum(thr, Bthr[R, C], out=thr)
                hzo = np.maximum(Hp[R, C], hzp[i])
                np.minimum(thr, tau_t[hzo], out=thr)
                np.maximum(thr, 0.0, out=thr)
                thr *= thr
                thr *= det
                cand = num < thr * (1 + 1e-9)
                jj, kk = np.nonzero(cand)
                if len(jj) == 0:
                    continue
                j = jj + r0
                k = kk + r0
                ff, d2 = _ternary_gram(gii, gi[j], gi[k], gd[j], gd[k], G[j, k], m)
                rt = np.sqrt(d2)
                lim = np.minimum(np.minimum(Bthr[i, j], Bthr[i, k]), Bthr[j, k])
                lim = np.minimum(lim, tau_t[np.maximum(Hp[j, k], hzp[i])])
                good = rt < lim
                if not good.any():
                    continue
                j, k, ff, rt = j[good], k[good], ff[good], rt[good]
                new = (np.column_stack([np.full(len(j), i), j, k]), ff, rt,
                       key(rt, np.maximum(np.maximum(hzp[i], hzp[j]), hzp[k])))
                best = new if best is None else tuple(np.concatenate(x) for x in zip(best, new))
                if len(best[2]) >= pool:
                    best = _best(*best, pool)
                    tau_t = _tau_table(best[3][-1], res)

        return best

    workers = max(1, min(int(workers), n - 2))
    if workers == 1:
        best = scan(range(n - 2))
    else:
        # numpy releases the GIL inside its array loops: threads share the read-only arrays and
        # each keeps its own pool; the pools are merged exactly below
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(workers) as ex:
            parts = [p for p in ex.map(scan, [range(w, n - 2, workers) for w in range(workers)])
                     if p is not None]
        best = tuple(np.concatenate(x) for x in zip(*parts)) if parts else None
    if best is None:
        e = np.zeros((0, 3))
        return e.astype(int), e, np.zeros(0), np.zeros(0)
    idx, f, rr, kk = _best(*best, pool)
    # polish the pool in direct coordinates (same optimum, computed from the points themselves)
    f, d2 = _ternary_core(Z[idx[:, 0]], Z[idx[:, 1]], Z[idx[:, 2]], m)
    return perm[idx], f, np.sqrt(d2), kk


def _best(idx, f, rr, kk, pool):
    if len(kk) > pool:
        sel = np.argpartition(kk, pool - 1)[:pool]
        idx, f, rr, kk = idx[sel], f[sel], rr[sel], kk[sel]
    o = np.lexsort((idx[:, 2], idx[:, 1], idx[:, 0], kk))  # ties broken by index: deterministic
    return idx[o], f[o], rr[o], kk[o]


def _display_order(res):
    """Order of display: Ra step (``resolution``), classified before unclassified (any component
    without hazard data), fewer components, better hazard class, Ra (module doc)."""
    k = (res["idx"] >= 0).sum(1)
    step = np.floor(res["key"] / 10.0)
    unclassified = np.floor(res["key"] - 10.0 * step) >= UNCLASSIFIED_LEVEL
    return np.lexsort((res["key"], k, unclassified, step))


def _diverse(order_keys, idx, max_uses, top):
    """Greedy pick in the given order, each liquid used at most ``max_uses`` times in blends; a
    liquid on its own is never held back by its blends (the drop-in replacement a formulator
    looks for first: gamma-butyrolactone for NMP was hidden behind three of its blends)."""
    uses: dict[int, int] = {}
    picked = []
    for p in order_keys:
        comps = [c for c in idx[p] if c >= 0]
        if len(comps) > 1 and any(uses.get(c, 0) >= max_uses for c in comps):
            continue
        for c in comps:
            uses[c] = uses.get(c, 0) + 1
        picked.append(p)
        if top is not None and len(picked) >= top:
            break
    return np.array(picked, dtype=int)


#: Single liquids a substitute table always shows (the best by score), when blends would crowd
#: them out: the drop-in replacement is what a formulator tries first.
MIN_SINGLES = 3


def _with_best_singles(pick, order, idx, top, n=MIN_SINGLES):
    """``pick`` with the best ``n`` single liquids (in ``order``) in it: missing ones take the
    places of the last-picked blends, and the table keeps its score order."""
    single = (np.asarray(idx) >= 0).sum(1) == 1
    best = [int(p) for p in order if single[p]][:n]
    have = set(pick.tolist())
    missing = [p for p in best if p not in have]
    if not missing:
        return pick
    keep = list(pick)
    for p in missing:
        blends = [k for k, q in enumerate(keep) if not single[q]]
        if top is not None and len(keep) >= top and blends:
            keep.pop(blends[-1])
        keep.append(p)
    rank_of = {int(p): r for r, p in enumerate(order)}
    return np.array(sorted(keep, key=rank_of.get), dtype=int)


def _target_and_candidates(target, library, temperature, filters, costs=None, cost_basis="cost_per_litre"):
    from .ranking import corrected_hsp, resolve_target

    check_filter_keys(filters)
    t_c = check_temperature(temperature)
    lib = load_library() if library is None else library
    tgt = resolve_target(target, lib, t_c)
    mask, left_out = masks_and_reagents(lib, temperature=t_c, **filters)
    if isinstance(target, str):
        mask &= lib["name"].to_numpy() != tgt.name
    cost, notes = None, []
    if costs is not None:
        cost_full, notes = _costs(costs, lib, cost_basis)
        priced = np.isfinite(cost_full)
        notes = notes + _priced_left_out(lib, priced & ~mask, filters, t_c)
        mask &= priced
        cost = cost_full[mask]
    cand = lib.loc[mask].reset_index(drop=True)
    if len(cand) == 0:
        from .filters import nothing_passes

        extra = ["" if abs(t_c - 25.0) < 1e-9 else f"liquid at {t_c:g} C (temperature)",
                 "" if costs is None else "a price known (costs)"]
        raise SelectorError(nothing_passes(filters, left_out, "; ".join(e for e in extra if e)))
    h = corrected_hsp(cand, t_c)
    return tgt, cand, h, t_c, (cost, notes)


#: Price bases a cost list may use: per litre (a blend's cost is volume-weighted) or per kg
#: (turned into per litre with the liquid's 25 C density; a blend's cost per kg is its cost per
#: litre over its density).
COST_BASES = ("cost_per_litre", "cost_per_kg")


def read_price_list(source, what: str | None = None) -> dict[str, pd.DataFrame]:
    """A price list CSV (path, bytes or file-like; UTF-8 or Windows-1252, comma, semicolon or tab,
    decimal commas) with columns ``name`` and one of :data:`COST_BASES`, as the keyword
    :func:`find_blends` takes: ``{"cost_per_kg": DataFrame(name, cost_per_kg)}``. ``what`` names
    the file in messages. The prices themselves are checked by :func:`find_blends`, every problem
    at once."""
    from .io import read_user_csv

    label = what or "the price list"
    t = read_user_csv(source, what=label, strict_rows="longer")
    cols = {str(c).strip().lower(): c for c in t.columns}
    bases = [b for b in COST_BASES if b in cols]
    if len(bases) == 2:
        raise SelectorError(f"{label} gives both cost_per_litre and cost_per_kg: keep one column (prices per "
                            "kg are turned into prices per litre with each liquid's density)")
    if "name" not in cols or len(bases) != 1:
        raise SelectorError(f"{label} needs columns name and one of cost_per_litre, cost_per_kg "
                            f"(found {', '.join(map(str, t.columns)) or 'no columns'})")
    if len(t) == 0:
        raise SelectorError(f"{label} has a header but no rows: add one row per liquid (name,{bases[0]})")
    # a table, not a dict: the same name on two rows must reach the duplicate check
    return {bases[0]: pd.DataFrame({"name": t[cols["name"]], bases[0]: t[cols[bases[0]]]})}


def price_error_named(err: Exception, label: str) -> Exception | None:
    """``err`` raised by :func:`find_blends` told under the price list's own name (``label``,
    e.g. "the price list prices.csv"), or None when it is not about the price list."""
    from .errors import PriceListError

    return PriceListError(err.problems, label) if isinstance(err, PriceListError) else None


def _priced_left_out(lib: pd.DataFrame, out: np.ndarray, filters: dict,
                     temperature: float | None = None) -> list[str]:
    """Notes on priced liquids that are not candidates: reagents (with their reason) and those the
    conditions leave out (filters, not liquid at the use temperature, the target itself), so that
    a price list never loses a liquid without a word."""
    if not out.any():
        return []
    from .cautions import reactive_reasons

    why = reactive_reasons(lib)
    names = lib["name"].astype(str).to_numpy()
    reag = out & (why != "")
    if filters.get("include_reactive"):
        reag[:] = False
    notes = [f"{names[i]} left out as a reagent, {why[i]} (include_reactive, --include-reactive or the app's Include reagents brings it back)" for i in np.flatnonzero(reag)]
    rest = np.flatnonzero(out & ~reag)
    if len(rest) and temperature is not None:
        bp = pd.to_numeric(lib["boiling_point_c"], errors="coerce").to_numpy(float)
        mp = pd.to_numeric(lib.get("melting_point_c", pd.Series(np.nan, index=lib.index)), errors="coerce").to_numpy(float)
        with np.errstate(invalid="ignore"):
            boils, solid = rest[bp[rest] < temperature], rest[mp[rest] > temperature]
        notes += [f"{names[i]} left out: it boils at {bp[i]:.0f} C, below the use temperature {temperature:g} C"
                  for i in boils]
        notes += [f"{names[i]} left out: it melts at {mp[i]:.0f} C, above the use temperature {temperature:g} C"
                  for i in solid]
        rest = np.setdiff1d(rest, np.concatenate([boils, solid]))
    if len(rest):
        shown = ", ".join(names[rest[:8]]) + (f" and {len(rest) - 8} more" if len(rest) > 8 else "")
        notes.append(f"priced but left out by the conditions (filters, liquid range at the use temperature, "
                     f"or the target itself): {shown}")
    return notes


def _cost_pairs(costs, basis: str = "cost_per_litre") -> list[tuple]:
    """(name, price) pairs of a cost mapping, Series or table (columns name and ``basis``)."""
    if isinstance(costs, pd.Series):
        pairs = list(zip(costs.index, costs.to_numpy()))
    elif isinstance(costs, pd.DataFrame):
        if not {"name", basis} <= set(costs.columns):
            raise SelectorError(f"a cost table needs columns name, {basis}")
        pairs = list(zip(costs["name"], costs[basis]))
    elif isinstance(costs, dict):
        pairs = list(costs.items())
    else:
        pairs = []
    if not pairs:
        raise SelectorError(f"{basis} must be a non-empty mapping of liquid name -> {basis.replace('_', ' ')}")
    return pairs


def _costs(costs, lib, basis: str = "cost_per_litre"):
    """Price per litre for each liquid of ``lib`` (NaN: not priced) and the notes on names
    matched by synonym or left out. Prices per kg (``basis="cost_per_kg"``) are turned into prices
    per litre with the 25 C density; a liquid without one is left out with a note. A liquid priced
    twice (the same name on two rows, or a name and its synonym) is refused. Every problem of the
    list is reported in one error."""
    from .errors import PriceListError
    from .library import _key

    pairs = _cost_pairs(costs, basis)
    names = ["" if n is None or (isinstance(n, float) and math.isnan(n)) else str(n).strip() for n, _ in pairs]
    lib_names = lib["name"].astype(str).to_numpy()
    problems, pos = [], []
    for nm, (_, v) in zip(names, pairs):
        if not nm:
            problems.append(f"a price ({v!r}) has no liquid name")
            pos.append(-1)
            continue
        try:
            pos.append(int(locate_many([nm], lib, "cost list")[0]))
        except SelectorError as e:
            problems.append(str(e))
            pos.append(-1)
    seen: dict[int, str] = {}
    for p, nm in zip(pos, names):
        if p < 0:
            continue
        if p in seen:
            how = "on two rows" if seen[p] == nm else f"twice ({seen[p]!r} and {nm!r})"
            problems.append(f"the cost list prices {lib_names[p]} {how}; keep one price per liquid")
        seen[p] = nm
    out = np.full(len(lib), np.nan)
    for p, nm, (_, v) in zip(pos, names, pairs):
        if not nm:
            continue
        if v is None or (isinstance(v, str) and not v.strip()) or (isinstance(v, float) and math.isnan(v)):
            problems.append(f"no price for {nm!r} (empty cell): give one or leave the liquid out")
            continue
        try:
            v = float(v)
        except (TypeError, ValueError):
            problems.append(f"cost of {nm!r} must be a number, got {v!r}")
            continue
        if not math.isfinite(v) or v < 0:
            problems.append(f"cost of {nm!r} must be a finite number >= 0, got {v!r}")
        elif p >= 0:
            out[p] = v
    if problems:
        raise PriceListError(problems)   # the command line and the app put the list's name in front
    notes = [f"price of {nm!r} used for {lib_names[p]}" for nm, p in zip(names, pos)
             if _key(nm) != _key(lib_names[p])]
    if basis == "cost_per_kg":
        rho = pd.to_numeric(lib.get("density", pd.Series(np.nan, index=lib.index)), errors="coerce").to_numpy(float)
        no_rho = np.isfinite(out) & ~(rho > 0)
        notes += [f"{lib_names[p]} left out: priced per kg but its density is unknown (give your own "
                  "liquids a density column, g/cm3 at 25 C)" for p in np.flatnonzero(no_rho)]
        out = np.where(rho > 0, out * rho, np.nan)   # kg/L = g/cm3
    return out, notes


def _flash_for_blends(cand):
    """Per candidate: flash point (C), +inf when known non-flammable
    (:func:`selector.cautions.not_flammable`), the ``hazards.csv`` value where the library has
    none, NaN when unknown."""
    from .cautions import not_flammable
    from .hazards import hazard_statements

    fp = cand["flash_point_c"].to_numpy(float).copy()
    st = hazard_statements().drop_duplicates("cas").set_index("cas")["csv_flash_point_c"]
    csv = cand["cas"].astype(str).map(st).to_numpy(float)
    fp = np.where(np.isfinite(fp), fp, csv)
    fp[not_flammable(cand)] = np.inf
    return fp


def _table(tgt, cand, h, idx, f, rr, t_c, cost=None):
    from .hazards import HAZARD_CLASSES, UNCLASSIFIED, hazard_columns

    names = cand["name"].astype(str).to_numpy()
    used = idx >= 0
    k = used.sum(1)
    safe = np.where(used, idx, 0)
    fr = np.where(used, f, 0.0)
    bh = np.einsum("pk,pkj->pj", fr, h[safe])
    hz = hazard_columns(cand)
    hrank = hz["hazard_rank"].to_numpy(float)
    hr = np.where(used, hrank[safe], -np.inf)
    unc = (used & np.isnan(hrank[safe])).any(1)
    worst = np.nanmax(np.where(np.isnan(hr), -np.inf, hr), axis=1)
    named = np.array(HAZARD_CLASSES, dtype=object)[np.clip(worst, 0, 3).astype(int)]
    # an unclassified component leaves the blend unclassified, unless a known component is already
    # hazardous or worse: that class is not hidden behind the missing data
    cls = np.where(unc, np.where(worst >= 2, named + " (+ unclassified)", UNCLASSIFIED), named)
    bp = cand["boiling_point_c"].to_numpy(float)
    bpl = np.where(used, bp[safe], np.inf).min(1)
    bph = np.where(used, bp[safe], -np.inf).max(1)
    fp = _flash_for_blends(cand)
    fps = np.where(used, fp[safe], np.inf)
    low_fp = fps.min(1)
    low_fp = np.where(np.isnan(fps).any(1), np.nan, np.where(np.isinf(low_fp), np.nan, low_fp))
    with np.errstate(invalid="ignore"):
        known_min = np.where(np.isnan(fps), np.inf, fps)
        at = np.argmin(known_min, 1)
        first = names[safe[np.arange(len(safe)), at]]
        lf_comp = np.where(np.isnan(fps).any(1) | np.all(np.isinf(fps), 1), "", first).astype(object)
    kmin = known_min.min(1)
    # some flash points unknown: name the lowest known one (the blend's is at most that)
    for i in np.flatnonzero(np.isnan(fps).any(1) & np.isfinite(kmin)):
        miss = ", ".join(names[safe[i, j]] for j in np.flatnonzero(np.isnan(fps[i])))
        lf_comp[i] = f"{first[i]} at {known_min[i, at[i]]:.0f} C; no data for {miss}"
    comp_ra = _ra(h[safe], tgt.hsp)
    out = pd.DataFrame({
        "components": [tuple(names[r[u]]) for r, u in zip(idx, used)],
        "fractions": [tuple(float(v) for v in x[u]) for x, u in zip(fr, used)],
        "n_components": k,
        "delta_d": bh[:, 0], "delta_p": bh[:, 1], "delta_h": bh[:, 2],
        "ra": rr,
    })
    if tgt.radius is not None:
        out["red"] = rr / tgt.radius
        cred = comp_ra / tgt.radius
        out["component_red"] = [tuple(np.round(c[u], 3)) for c, u in zip(cred, used)]
        out["non_solvent_pair"] = (k >= 2) & (out["red"].to_numpy() < 1) & np.all(np.where(used, cred > 1, True), 1)
    else:
        out["red"] = np.nan
        out["component_ra"] = [tuple(np.round(c[u], 3)) for c, u in zip(comp_ra, used)]
        out["non_solvent_pair"] = False
    out["hazard_class"] = cls
    out["bp_low_c"] = bpl
    out["bp_high_c"] = bph
    out["lowest_flash_point_c"] = low_fp
    out["lowest_flash_component"] = lf_comp
    # where some flash points are unknown, the lowest known one: the blend's is at most that
    out["lowest_known_flash_point_c"] = np.where(np.isnan(low_fp) & np.isfinite(kmin), kmin, np.nan)
    # every component known not to burn (NaN lowest flash point, but not for want of data)
    out["not_flammable"] = np.all(np.isinf(fps), 1)
    # by weight, for the balance: mass fraction = phi_i rho_i / sum(phi_j rho_j), ideal mixing
    # (no volume change on mixing) with 25 C densities; NaN where a density is unknown
    rho = pd.to_numeric(cand.get("density", pd.Series(np.nan, index=cand.index)), errors="coerce").to_numpy(float)
    rho = np.where(rho > 0, rho, np.nan)
    wr = np.where(used, fr * rho[safe], 0.0)
    dens = np.where(np.isnan(np.where(used, rho[safe], 0.0)).any(1), np.nan, wr.sum(1))
    with np.errstate(invalid="ignore", divide="ignore"):
        wf = wr / dens[:, None]
    out["mass_fractions"] = [tuple(float(v) for v in x[u]) for x, u in zip(wf, used)]
    out["density"] = dens
    if cost is not None:
        out["cost_per_litre"] = (fr * np.where(used, cost[safe], 0.0)).sum(1)
        with np.errstate(invalid="ignore", divide="ignore"):
            out["cost_per_kg"] = out["cost_per_litre"].to_numpy(float) / dens
    return out


def rounded_shares(fractions, digits: int = 1) -> list[float]:
    """Shares (fractions summing to 1) rounded to ``digits`` decimals of a per cent so that they
    still sum to 100 % (largest remainder: 1/3 each -> 33, 33, 34 % at ``digits=0``).

    >>> rounded_shares([1/3, 1/3, 1/3], 0)
    [0.33, 0.33, 0.34]
    """
    unit = 10.0 ** (digits + 2)
    x = np.asarray(fractions, float) * unit
    base = np.floor(x + 1e-9)
    short = int(round(unit - base.sum()))
    if 0 < short <= len(x):
        # the largest remainders get the missing units; ties go to the later share
        order = np.lexsort((-np.arange(len(x)), -(x - base)))
        base[order[:short]] += 1
    return [float(v / unit) for v in base]


def blend_labels(table: pd.DataFrame, by: str = "volume", digits: int = 1) -> list[str]:
    """One readable label per blend row: "60.0% A + 40.0% B" by volume (``fractions``) or by
    mass (``mass_fractions``, "" where a density is unknown); a single liquid is its name. The
    shares are rounded so that they sum to 100 % (:func:`rounded_shares`)."""
    col = {"volume": "fractions", "mass": "mass_fractions"}.get(by)
    if col is None:
        raise SelectorError(f"by must be 'volume' or 'mass', got {by!r}")
    out = []
    for cs, fs in zip(table["components"], table[col]):
        if len(cs) == 1:
            out.append(cs[0])
        elif any(not math.isfinite(x) for x in fs):
            out.append("")
        else:
            out.append(" + ".join(f"{x:.{digits}%} {c}" for c, x in zip(cs, rounded_shares(fs, digits))))
    return out


def estimated_density_note(table: pd.DataFrame, library: pd.DataFrame) -> str:
    """One line for a blend or substitute table (a ``components`` column of name lists) naming
    its liquids whose density is estimated (``molar_volume_estimated``: no density data; the
    estimates are off by a median 2-4 %, up to about 10 %, parameters/README.md), so that by-mass
    shares and prices per kg are not read as exact; "" when every density is from data."""
    if "components" not in table.columns or "molar_volume_estimated" not in library.columns:
        return ""
    est = library.loc[library["molar_volume_estimated"].astype(bool) & library["density"].notna(), "name"]
    names = sorted({c for cs in table["components"] for c in cs} & set(est.astype(str)))
    if not names:
        return ""
    shown = ", ".join(names[:6]) + (f" and {len(names) - 6} more" if len(names) > 6 else "")
    one = len(names) == 1
    return (f"{'Density' if one else 'Densities'} of {shown} {'is' if one else 'are'} estimated, not measured "
            "(typically 2-4 % off, up to about 10 %): by_mass shares and prices per kg carry that error; "
            "weigh with the supplier's density.")


def _pareto(ra, cost):
    """Boolean mask of the non-dominated rows (no other row has lower-or-equal Ra and cost,
    one of them strictly lower)."""
    ra = np.asarray(ra, float)
    cost = np.asarray(cost, float)
    o = np.lexsort((cost, ra))
    c = cost[o]
    prev = np.minimum.accumulate(np.concatenate([[np.inf], c[:-1]]))
    keep = c < prev - 1e-12
    out = np.zeros(len(ra), dtype=bool)
    out[o] = keep
    return out


def display_cap(parts, top, max_uses, resolution):
    """Ra (MPa^0.5) from which no blend of three can be among the ``top`` rows shown.

    Rows are shown in Ra steps of ``resolution`` (the order within a step does not matter here), each liquid
    in at most ``max_uses`` rows (:func:`find_blends`). Take single liquids and pairs in order of
    Ra and keep those that share no liquid with one kept before (``parts``: the (idx, f, ra, key)
    arrays of the singles and pairs). Before step b + 1 is reached, a kept row of a step <= b is
    either shown or skipped because one of its liquids is used up; each row shown uses at most 3
    liquids and a used-up liquid skips at most one kept row, so if N kept rows lie in steps <= b,
    at least N u / (u + 3) rows are shown before step b + 1 (u = ``max_uses``). With
    N >= top (u + 3) / u, nothing of step b + 1 or later is shown. None without ``top`` or with
    too few rows.

    >>> idx = np.array([[0, -1, -1], [1, -1, -1], [2, -1, -1], [3, -1, -1], [0, 1, -1]])
    >>> parts = [(idx, None, np.array([0.3, 0.7, 1.2, 2.6, 0.2]), None)]
    >>> display_cap(parts, 2, 3, 0.5)   # 4 disjoint rows needed, only 3: 0.2 (0+1), 1.2, 2.6 -> None
    >>> display_cap(parts, 1, 3, 0.5)   # need 2: rows 0.2 (0+1) and 1.2 (2) -> step 2 -> 1.5
    1.5
    """
    if top is None:
        return None
    need = int(math.ceil(top * (max_uses + 3) / max_uses))
    idx = np.concatenate([p[0] for p in parts])
    rr = np.concatenate([p[2] for p in parts])
    order = np.argsort(rr, kind="stable")
    used: set[int] = set()
    got = 0
    for p in order:  # stops after ``need`` kept rows (a few dozen)
        comps = [int(c) for c in idx[p] if c >= 0]
        if any(c in used for c in comps):
            continue
        used.update(comps)
        got += 1
        if got >= need:
            res = float(resolution)
            return (math.floor(float(rr[p]) / res) + 1) * res
    return None


def find_blends(target, *, max_components: int = 3, min_fraction: float = 0.05,
                temperature: float = 25.0, top: int | None = 20, library: pd.DataFrame | None = None,
                max_uses: int = 3, min_gain: float = DEFAULT_MIN_GAIN, cost_per_litre=None,
                cost_per_kg=None, require_miscible: bool = True, resolution: float = DEFAULT_RESOLUTION,
                **filters) -> pd.DataFrame:
    """Best single liquids and blends of two or three for a target point or sphere.

    ``target``: anything :func:`selector.targets.as_target` accepts (MPa^0.5; a sphere gives RED).
    ``max_components``: 1, 2 or 3. ``min_fraction``: smallest volume fraction of any component
    (default 0.05). ``temperature`` (C): HSP corrected by Hansen-Beerbower and miscibility checked
    there. Filters (:mod:`selector.filters`) apply to every component, e.g.
    ``boiling_point_c=(80, 180)``, ``flash_point_c=(23, None)``, ``max_hazard_class="problematic"``.
    ``cost_per_litre`` or ``cost_per_kg``: optional mapping name -> price (or a table with columns
    name and that basis); then only priced liquids are candidates, ``cost_per_litre`` (volume-
    weighted) and ``cost_per_kg`` (over the blend's density) columns are added and ``pareto`` marks
    the cost-versus-Ra trade-off front on the basis the prices were given in (the whole front, of
    which ``max_uses`` may hide rows, is ``attrs["pareto"]``). Prices per kg need a density.

    Returns one row per proposal, best Ra first: ``components`` (tuple of names), ``fractions``
    (tuple, volume), ``mass_fractions`` (tuple, by weight: ideal mixing with 25 C densities, NaN
    without a density), ``density`` (g/cm3, same assumption), ``n_components``, blend ``delta_d, delta_p, delta_h``, ``ra`` (MPa^0.5),
    ``red`` (NaN without R0), ``component_red`` (or ``component_ra``), ``non_solvent_pair`` (every
    component outside the sphere, the blend inside), ``hazard_class`` (worst component),
    ``bp_low_c``/``bp_high_c`` (boiling range), ``lowest_flash_point_c`` and its component (NaN if
    a component's flash point is unknown, or every component is known not to burn: then
    ``not_flammable`` is True; :func:`selector.cautions.flash_point_text` tells the two apart).
    The method is exact (module doc).

    >>> r = find_blends((17.0, 8.0, 8.0, 5.0), max_components=2, top=3)
    >>> bool((r["red"] < 1).all()), bool(r["fractions"].map(lambda f: min(f) >= 0.05).all())
    (True, True)
    """
    try:
        kmax = int(max_components)
    except (TypeError, ValueError):
        raise SelectorError(f"max_components must be 1, 2 or 3, got {max_components!r}") from None
    if isinstance(max_components, bool) or kmax not in (1, 2, 3) or kmax != max_components:
        raise SelectorError(f"max_components must be 1, 2 or 3, got {max_components!r}")
    m = _check_min_fraction(min_fraction, kmax if kmax > 1 else 2)
    from .ranking import check_top

    check_top(top, "blends")
    if not isinstance(max_uses, (int, np.integer)) or max_uses < 1:
        raise SelectorError(f"max_uses must be a positive whole number, got {max_uses!r}")
    try:
        gain = float(min_gain)
    except (TypeError, ValueError):
        raise SelectorError(f"min_gain must be a number of MPa^0.5, got {min_gain!r}") from None
    if not math.isfinite(gain) or gain < 0:
        raise SelectorError("min_gain must be a finite number >= 0 (MPa^0.5)")
    try:
        step = float(resolution)
    except (TypeError, ValueError):
        raise SelectorError(f"resolution must be a number of MPa^0.5, got {resolution!r}") from None
    if not (math.isfinite(step) and step > 0):
        raise SelectorError(f"resolution must be a positive number of MPa^0.5 (the Ra step of the display "
                            f"order), got {resolution!r}")
    if cost_per_litre is not None and cost_per_kg is not None:
        raise SelectorError("give prices per litre (cost_per_litre) or per kg (cost_per_kg), not both")
    basis = "cost_per_kg" if cost_per_kg is not None else "cost_per_litre"
    prices = cost_per_kg if cost_per_kg is not None else cost_per_litre
    tgt, cand, h, t_c, (cost, price_notes) = _target_and_candidates(target, library, temperature, filters,
                                                                      prices, basis)
    from .filters import as_flag

    require_miscible = as_flag(require_miscible, "require_miscible")
    mis, reacts = _allowed_pairs(cand, t_c, kmax, require_miscible, bool(filters.get("include_reactive")))
    reacting = _reacting_pairs(cand, reacts) if reacts is not None else []
    pool = max(2000, 50 * (top or 20))
    from .hazards import hazard_columns

    hz = hazard_columns(cand)["hazard_rank"].to_numpy(float)
    # the user's own liquids (typed, imported or estimated) rarely have hazard data; they were added
    # on purpose, so without data they rank as the worst class instead of after every classified row
    # (their notes still say "no hazard data")
    own = (cand["origin"].astype(str).ne("library").to_numpy() if "origin" in cand.columns
           else np.zeros(len(cand), bool))
    hz = np.where(np.isnan(hz) & own, float(UNCLASSIFIED_LEVEL - 1), hz)
    res = search_arrays(h * SCALE, tgt.hsp * SCALE, max_components=kmax, min_fraction=m, miscible=mis,
                        pool=pool, min_gain=gain, hazard_rank=hz, resolution=resolution,
                        ra_cap="display" if cost is None else None, display=(top, max_uses))
    order = _display_order(res)
    pick = _diverse(order, res["idx"], max_uses, top)
    full = _table(tgt, cand, h, res["idx"], res["f"], res["ra"], t_c, cost)
    out = full.iloc[pick].reset_index(drop=True)
    if cost is not None:
        # with a sphere, the front is over the blends inside it (RED <= 1): a cheap liquid that does
        # not dissolve the solute (water at RED 9.6) is no end of a cost-versus-Ra trade-off
        inside = (full["red"].to_numpy(float) <= 1.0) if tgt.radius is not None else np.ones(len(full), bool)
        if not inside.any():
            inside[:] = True
            price_notes = price_notes + ["no priced blend lies inside the sphere (RED <= 1): the cost front is "
                                         "over all of them"]
        par = np.zeros(len(full), bool)
        par[np.flatnonzero(inside)] = _pareto(full["ra"].to_numpy()[inside], full[basis].to_numpy()[inside])
        out["pareto"] = par[pick]
        out.attrs["pareto"] = full.loc[par].sort_values("ra", kind="stable").reset_index(drop=True)
    from .cautions import heated_notes
    from .hazards import component_notes

    tables = [out] + ([out.attrs["pareto"]] if cost is not None else [])
    for tab in tables:   # the front is a table of its own (blend --front): it gets the same notes
        tab["hazard_notes"] = component_notes(tab["components"], cand)
        tab["hazard_notes"] = heated_notes(tab, t_c, "lowest_flash_point_c", "bp_low_c")
        tab["mixing_note"] = second_opinion_notes(tab["components"], cand, t_c) if mis is not None else ""
    out.attrs.update(target=tgt, temperature=t_c, caution=CAUTION, min_fraction=m,
                     miscibility=("single liquids: no pairs" if kmax < 2 else
                                  "selector.mixing.miscible_pairs" if require_miscible else "not checked"),
                     candidates=len(cand), mixing_warning=mixing_warning(out), reacting_pairs=reacting)
    if prices is not None:
        out.attrs["price_notes"] = price_notes
        out.attrs["cost_basis"] = basis
    return out


def mixing_warning(table: pd.DataFrame) -> str:
    """One line for a blend or substitute table whose rows carry a ``mixing_note``: how many hold a
    pair that UNIFAC splits; "" when none does."""
    if "mixing_note" not in table.columns:
        return ""
    n = int(table["mixing_note"].fillna("").astype(str).ne("").sum())
    if not n:
        return ""
    return (f"{n} of these rows {'holds' if n == 1 else 'hold'} a pair that the HSP model calls miscible and UNIFAC "
            "does not, or that the model is unsure of with no UNIFAC opinion "
            "(mixing_note): test a small mix of those first")


def second_opinion_notes(components, table: pd.DataFrame, temperature: float = 25.0) -> list[str]:
    """For each blend (a tuple of names in ``table``), the pairs that the HSP model lets through
    but UNIFAC's second opinion (:func:`selector.unifac.second_opinion`, as :func:`selector.miscibility`
    asks it) says do not mix in all proportions; "" where none. Only the rows shown are asked
    (about 1 ms a new pair, cached); pairs the reference tables answer are left to the tables."""
    from .mixing import _clean, _reference_at, second_opinion_of

    by_name = table.drop_duplicates("name").set_index("name", drop=False)
    notes = []
    for comps in components:
        found = []
        unsure = []
        for i in range(len(comps)):
            for j in range(i + 1, len(comps)):
                a, b = by_name.loc[comps[i]], by_name.loc[comps[j]]
                if _reference_at(_clean(a.get("cas", "")), _clean(b.get("cas", "")), float(temperature))[0]:
                    continue
                so = second_opinion_of(a, b, temperature)
                if so.get("state") and so["state"] != "miscible":
                    found.append(f"{comps[i]} + {comps[j]} {so['state']}")
                elif not so.get("state"):
                    # no second opinion: say so where the model itself is unsure
                    p = _model_p_miscible(comps[i], comps[j], table, temperature)
                    if p < UNSURE_P_MISCIBLE:
                        unsure.append(f"{comps[i]} + {comps[j]} ({p:.0%} chance of one phase, no UNIFAC opinion)")
        parts = []
        if found:
            parts.append(f"UNIFAC, pair by pair: {'; '.join(found)} (the HSP model: miscible)")
        if unsure:
            parts.append(f"the HSP model is unsure of {'; '.join(unsure)}")
        notes.append("; ".join(parts) + "; test a small mix" if parts else "")
    return notes


#: Below this model probability of one phase, a blend pair that UNIFAC cannot judge is noted.
UNSURE_P_MISCIBLE = 0.7


def _model_p_miscible(a: str, b: str, table: pd.DataFrame, temperature: float) -> float:
    """The HSP model's probability that liquids ``a`` and ``b`` of ``table`` mix in all
    proportions at ``temperature`` (:func:`selector.mixing.miscibility`, its own answer)."""
    from .mixing import miscibility

    try:
        return float(miscibility(a, b, temperature=temperature, library=table, unifac=False,
                                 reference=False).p_miscible)
    except SelectorError:
        return 1.0


# ---------------------------------------------------------------- substitutes

def relative_evaporation_rate(library: pd.DataFrame, temperature: float = 25.0) -> np.ndarray:
    """Relative evaporation rate (n-butyl acetate = 1) estimated from vapour pressure and molar mass.

    RER = (P M) / (P M)_nBuAc at the same temperature: the mass flux of a liquid evaporating into
    still air is proportional to its vapour pressure times its molar mass when the mass-transfer
    coefficients are alike (a common estimate, quoted from memory; it reproduces tabulated ASTM
    D3539 values such as toluene ~2 and water ~0.3 within a factor of about 1.5, but ignores
    the diffusivity differences and humidity). NaN where data are missing.

    >>> lib = load_library()
    >>> rer = relative_evaporation_rate(lib)
    >>> round(float(rer[lib.cas == "123-86-4"][0]), 3)
    1.0
    """
    full = load_library()
    ref = full.loc[full["cas"] == BUTYL_ACETATE_CAS]
    p_ref = float(vapour_pressure_kpa(ref, temperature)[0]) * float(ref["molar_mass"].iloc[0])
    p = vapour_pressure_kpa(library, temperature) * library["molar_mass"].to_numpy(float)
    return p / p_ref


def _matchable_viscosity(table) -> np.ndarray:
    """Viscosities (mPa s) fit to judge a match: corresponding-states estimates
    (:data:`~selector.library.UNRELIABLE_VISCOSITY_METHODS`) count as unknown."""
    from .library import UNRELIABLE_VISCOSITY_METHODS

    eta = table["viscosity_mpa_s"].to_numpy(float)
    if "viscosity_method" not in table.columns:
        return eta
    bad = table["viscosity_method"].astype(str).isin(UNRELIABLE_VISCOSITY_METHODS).to_numpy()
    return np.where(bad, np.nan, eta)


def _by_volume(idx, f, values, log=False):
    """Volume-fraction mix of per-candidate ``values`` over proposals (``idx``, ``f``): the
    weighted mean, or with ``log`` the weighted mean of ln(value) exponentiated (the Arrhenius
    rule without interaction term, for viscosity); NaN where a component's value is unknown."""
    used = idx >= 0
    safe = np.where(used, idx, 0)
    v = np.asarray(values, float)
    with np.errstate(invalid="ignore", divide="ignore"):
        term = np.log(v[safe]) if log else v[safe]
        mixed = (np.where(used, f, 0.0) * np.where(used, term, 0.0)).sum(1)
        mixed = np.exp(mixed) if log else mixed
    return np.where((used & ~np.isfinite(v[safe])).any(1), np.nan, mixed)


def substitutes(liquid, *, solute=None, max_components: int = 2, min_fraction: float = 0.05,
                temperature: float = 25.0, top: int | None = 20, library: pd.DataFrame | None = None,
                property_weight: float = 0.5, max_uses: int = 3, require_miscible: bool = True,
                include_energetic: bool = False, **filters) -> pd.DataFrame:
    """Safer single liquids and blends that could replace ``liquid``; ``liquid`` is the first row.

    Candidates are liquids with a STRICTLY better CHEM21 class than ``liquid`` (unclassified
    liquids never qualify). Liquids with a high energy of decomposition (the nitroalkanes, which
    amines and bases sensitise to detonation; from memory) are left out unless
    ``include_energetic``: the CHEM21 default ranking can call nitroethane "recommended", but a
    replacement meant to be safer should not bring an explosion hazard into the process (this
    project's rule). ``attrs["left_out"]`` names them. They are searched exactly like :func:`find_blends` against the HSP of
    ``liquid`` (or against ``solute``, a sphere or point, when given) and ranked by

        score = distance + property_weight * mismatch

    with distance = RED to ``solute``'s sphere, else Ra to the target / 8 MPa^0.5, and mismatch
    the mean, over the properties known for both, of |Delta bp| / 50 C, |ln(RER ratio)| / ln 3 and
    |ln(viscosity ratio)| / ln 3 (each 1 at a 50 C or three-fold difference; this project's own
    weighting; a viscosity from a corresponding-states estimate such as Letsou-Stiel, typically
    off by a factor of 1.8 at 25 C, counts as unknown there). RER: :func:`relative_evaporation_rate`; blend RER = volume-weighted mean, blend
    viscosity by the volume-weighted log rule, blend boiling point taken as the mean of the
    boiling range (rough estimates). Columns as in :func:`find_blends` plus ``boiling_point_c``,
    ``evaporation_rate``, ``viscosity_mpa_s``, ``mismatch``, ``score``, ``role``.

    >>> s = substitutes("dichloromethane", top=3)
    >>> s["role"].iloc[0], bool((s["hazard_rank"].iloc[1:] < s["hazard_rank"].iloc[0]).all())
    ('replaced', True)
    """
    from .hazards import hazard_columns
    from .ranking import check_top
    from .targets import as_target

    check_top(top, "substitutes")
    lib = load_library() if library is None else library
    pos = locate(liquid, lib)
    x = lib.iloc[[pos]].reset_index(drop=True)
    xname = str(x["name"].iloc[0])
    hz_all = hazard_columns(lib)
    xr = hz_all["hazard_rank"].iloc[pos]
    if not np.isfinite(xr):
        raise SelectorError(f"{xname} has no hazard data (unclassified): a 'safer' substitute cannot "
                            "be judged; check its safety data sheet")
    if int(xr) == 0:
        raise SelectorError(f"{xname} is already 'recommended' (CHEM21); no class is strictly better")
    try:
        pw = float(property_weight)
    except (TypeError, ValueError):
        raise SelectorError(f"property_weight must be a number, got {property_weight!r}") from None
    if not math.isfinite(pw) or pw < 0:
        raise SelectorError("property_weight must be a finite number >= 0")
    from .hazards import HAZARD_CLASSES

    filt = dict(filters)
    worst_allowed = HAZARD_CLASSES[int(xr) - 1]
    if "max_hazard_class" in filt and filt["max_hazard_class"] is not None:
        from .hazards import class_rank

        worst_allowed = HAZARD_CLASSES[min(class_rank(filt["max_hazard_class"]), int(xr) - 1)]
    filt["max_hazard_class"] = worst_allowed
    exc = filt.get("exclude") or []
    exc = [exc] if isinstance(exc, str) else list(exc)
    filt["exclude"] = exc + [xname]
    if solute is not None:
        tgt = as_target(solute, lib)
    else:
        # the replaced liquid itself, at the same temperature as the candidates (its HSP are
        # corrected like theirs, so it sits at Ra 0 from itself)
        from .ranking import corrected_hsp

        tgt0 = as_target(xname, lib)
        xh0 = corrected_hsp(x, check_temperature(temperature))[0]
        tgt = Target(*[float(v) for v in xh0], tgt0.radius, name=tgt0.name, source=tgt0.source)
    k = int(max_components) if max_components in (1, 2, 3) else None
    if k is None:
        raise SelectorError(f"max_components must be 1, 2 or 3, got {max_components!r}")
    pool_top = max(200, 10 * (top or 20))
    try:
        tg, cand, h, t_c, _ = _target_and_candidates(
            Target(*tgt.hsp.tolist(), tgt.radius, name=tgt.name, source=tgt.source, liquid=tgt.liquid), lib,
            temperature, filt)
    except SelectorError as err:
        if not str(err).startswith("no liquid passes the filters"):
            raise
        # the message names the user's own filters, not the exclusion added here (the replaced
        # liquid itself)
        from .filters import nothing_passes

        own = {k_: v for k_, v in filters.items() if k_ != "max_hazard_class"}
        raise SelectorError(nothing_passes(own, 0, f"a CHEM21 class of at most {worst_allowed} (better than "
                                                   f"{HAZARD_CLASSES[int(xr)]}, {xname}'s)")) from None
    # energetic candidates are searched with the others; their blends are dropped below unless
    # asked for (liquids named on purpose with include stay)
    energetic = []
    from .filters import as_flag

    if not as_flag(include_energetic, "include_energetic") and filt.get("include") is None:
        hd = set(lib["name"].to_numpy(str)[hz_all["high_decomposition_energy"].to_numpy(bool)])
        energetic = [n for n in cand["name"].astype(str) if n in hd]
    require_miscible = as_flag(require_miscible, "require_miscible")
    mis, _ = _allowed_pairs(cand, t_c, k, require_miscible, bool(filt.get("include_reactive")))
    res = search_arrays(h * SCALE, tg.hsp * SCALE, max_components=k,
                        min_fraction=_check_min_fraction(min_fraction, max(k, 2)), miscible=mis,
                        pool=max(2000, pool_top))
    tab = _table(tg, cand, h, res["idx"], res["f"], res["ra"], t_c)
    tab["boiling_point_c"] = 0.5 * (tab["bp_low_c"] + tab["bp_high_c"])
    tab["evaporation_rate"] = _by_volume(res["idx"], res["f"], relative_evaporation_rate(cand, t_c))
    tab["viscosity_mpa_s"] = _by_volume(res["idx"], res["f"], cand["viscosity_mpa_s"], log=True)
    match_visc = _by_volume(res["idx"], res["f"], _matchable_viscosity(cand), log=True)
    hr = hazard_columns(cand)["hazard_rank"].to_numpy(float)
    used = res["idx"] >= 0
    tab["hazard_rank"] = np.where(used, hr[np.where(used, res["idx"], 0)], -np.inf).max(1)
    # the liquid being replaced, evaluated the same way
    from .ranking import corrected_hsp

    xh = corrected_hsp(x, t_c)
    xtab = _table(tg, x, xh, np.array([[0, -1, -1]]), np.array([[1.0, 0, 0]]),
                  np.array([float(_ra(xh[0], tg.hsp))]), t_c)
    one_i, one_f = np.array([[0, -1, -1]]), np.array([[1.0, 0, 0]])
    xtab["boiling_point_c"] = float(x["boiling_point_c"].iloc[0])
    xtab["evaporation_rate"] = _by_volume(one_i, one_f, relative_evaporation_rate(x, t_c))
    xtab["viscosity_mpa_s"] = _by_volume(one_i, one_f, x["viscosity_mpa_s"], log=True)
    x_match_visc = _by_volume(one_i, one_f, _matchable_viscosity(x), log=True)
    xtab["hazard_rank"] = float(xr)
    parts = []
    for a, b, scale, logp in ((tab["boiling_point_c"], xtab["boiling_point_c"], 50.0, False),
                              (tab["evaporation_rate"], xtab["evaporation_rate"], math.log(3), True),
                              (match_visc, x_match_visc, math.log(3), True)):
        a = np.asarray(a, float)
        b = float(np.asarray(b, float)[0])
        with np.errstate(invalid="ignore", divide="ignore"):
            d = np.abs(np.log(a / b)) if logp else np.abs(a - b)
        parts.append(d / scale)
    P = np.vstack(parts)
    with np.errstate(invalid="ignore"):
        cnt = np.isfinite(P).sum(0)
        mism = np.where(cnt > 0, np.nansum(np.where(np.isfinite(P), P, 0), 0) / np.maximum(cnt, 1), np.nan)
    dist = tab["red"].to_numpy(float) if tg.radius is not None else tab["ra"].to_numpy(float) / REFERENCE_RADIUS
    tab["mismatch"] = mism
    tab["score"] = dist + pw * np.nan_to_num(mism, nan=1.0)
    order = np.argsort(tab["score"].to_numpy(), kind="stable")
    en = np.flatnonzero(cand["name"].isin(energetic).to_numpy()) if energetic else np.array([], int)
    has_en = np.isin(res["idx"], en).any(axis=1) if len(en) else np.zeros(len(tab), bool)
    pick = _diverse(order, res["idx"], max_uses, top)
    # energetic liquids are searched with the others and their blends dropped afterwards, so that
    # the warning appears only when one of them would have been shown
    en_shown = bool(has_en[pick].any()) if len(pick) else False
    if len(en):
        pick = _diverse(order[~has_en[order]], res["idx"], max_uses, top)
    pick = _with_best_singles(pick, order if not len(en) else order[~has_en[order]], res["idx"], top)
    out = tab.iloc[pick].copy()
    out["role"] = "substitute"
    xtab["mismatch"] = 0.0
    xd = float(xtab["red"].iloc[0]) if tg.radius is not None else float(xtab["ra"].iloc[0]) / REFERENCE_RADIUS
    xtab["score"] = xd
    xtab["role"] = "replaced"
    out = pd.concat([xtab, out], ignore_index=True)
    from .hazards import component_notes

    out["hazard_notes"] = component_notes(out["components"], pd.concat([x, cand]))
    from .cautions import heated_notes

    out["hazard_notes"] = heated_notes(out, t_c, "lowest_flash_point_c", "bp_low_c")
    out["mixing_note"] = (second_opinion_notes(out["components"], pd.concat([x, cand]), t_c)
                          if require_miscible else "")
    from .cautions import not_flammable

    out.attrs.update(target=tg, temperature=t_c, caution=CAUTION, replaced=xname, left_out=energetic,
                     regulatory_note=str(hz_all["regulatory_note"].iloc[pos]),
                     warnings=substitute_warnings(out, xname, bool(not_flammable(x).any()), tg.radius,
                                                  solute=solute is not None,
                                                  flash_floor=filt.get("min_flash_point_c") is not None)
                     + ([energetic_note(energetic)] if en_shown else [])
                     + _energetic_shown(out, hz_all, lib) + _outside_window(x, filt)
                     + _halogenated_shown(out, x, pd.concat([x, cand]), filt)
                     + ([w] if (w := mixing_warning(out)) else []))
    return out


def _halogenated_shown(out: pd.DataFrame, x: pd.DataFrame, table: pd.DataFrame, filt: dict) -> list[str]:
    """A note when substitutes contain a halogenated liquid: for a halogenated liquid replaced, a
    move within the same waste stream and, often, the same restrictions; for another, halogens
    brought into the process (common practice); with the filter that leaves them out."""
    from .filters import halogenated

    if filt.get("halogen_free"):
        return []
    hal = set(table["name"].to_numpy(str)[halogenated(table, unknown=False)])
    subs = out.loc[out["role"] == "substitute", "components"]
    n = sum(bool(set(cs) & hal) for cs in subs)
    if not n:
        return []
    name = str(x["name"].iloc[0])
    how = "halogen_free=True (--halogen-free, the app's No halogenated liquids) leaves them out."
    if halogenated(x, unknown=False)[0]:
        return [f"{n} of the {len(subs)} substitutes shown contain a halogenated liquid, as {name} is one: "
                f"they go to the same halogenated waste and may meet the same restrictions. {how}"]
    used = sorted({c for cs in subs for c in cs} & hal)
    return [f"{n} of the {len(subs)} substitutes shown bring in a halogenated liquid ({', '.join(used[:4])}"
            f"{', ...' if len(used) > 4 else ''}), which {name} is not: halogenated waste goes to its own "
            f"stream and many sites restrict it. {how}"]


def _outside_window(x: pd.DataFrame, filt: dict) -> list[str]:
    """A note when the replaced liquid itself lies outside the boiling-point window in force, so
    that no like-for-like candidate can pass it."""
    from .filters import _window, filter_phrases

    lo, hi = _window(filt.get("boiling_point_c"), "boiling-point window")
    bp = float(x["boiling_point_c"].iloc[0])
    if not math.isfinite(bp) or not ((lo is not None and bp < lo) or (hi is not None and bp > hi)):
        return []
    win = filter_phrases({"boiling_point_c": (lo, hi)})[0].removeprefix("boiling point ")
    return [f"{x['name'].iloc[0]} itself boils at {bp:.0f} C, outside the boiling-point window in force "
            f"({win}): candidates boiling like it are filtered out; widen the window for like-for-like ones."]


#: What makes the nitro compounds energetic (from memory; common practice in process safety).
NITRO_CAUTION = "nitro compounds can detonate when heated under confinement or mixed with amines or bases"


def _energetic_shown(out: pd.DataFrame, hz_all: pd.DataFrame, lib: pd.DataFrame) -> list[str]:
    """A warning naming energetic liquids that are in ``out`` (asked for with include_energetic)."""
    hd = set(lib["name"].to_numpy(str)[hz_all["high_decomposition_energy"].to_numpy(bool)])
    used = sorted({c for cs in out.loc[out.get("role", "") != "replaced", "components"] for c in cs} & hd)
    if not used:
        return []
    return [f"Energetic liquids in these candidates: {', '.join(used)} (high energy of decomposition). "
            f"{NITRO_CAUTION[0].upper() + NITRO_CAUTION[1:]}: use them only after a process-safety review, "
            "never distil them to dryness."]


def energetic_note(names) -> str:
    """The line that says which energetic liquids :func:`substitutes` left out."""
    names = list(names)
    return (f"Left out as energetic (high energy of decomposition): {', '.join(names)}. "
            f"{'It has' if len(names) == 1 else 'They have'} a better CHEM21 class, but {NITRO_CAUTION}. "
            "Bring them back "
            "(include_energetic, --include-energetic or the app's Include energetic liquids) only after a "
            "process-safety review.")


def substitute_warnings(table: pd.DataFrame, replaced: str, replaced_burns_not: bool,
                        radius: float | None, solute: bool = False, flash_floor: bool = False) -> list[str]:
    """Plain warnings on a :func:`substitutes` table: a liquid that does not burn replaced by ones
    that do (the fire protection of the process changes; common practice), and substitutes too far
    from the target to behave like the replaced liquid (RED > 1 for a solute sphere, else Ra beyond
    :data:`REFERENCE_RADIUS`; from the solute when ``solute``). ``flash_floor``: a minimum
    flash point is already set (the warning then does not suggest one)."""
    subs = table.loc[table["role"] == "substitute"] if "role" in table else table
    out: list[str] = []
    if len(subs) == 0:
        return out
    fp = subs["lowest_flash_point_c"].to_numpy(float)
    burns = np.isfinite(fp)
    unknown = np.isnan(fp)                      # "no data" (+inf: none of the components burns)
    if replaced_burns_not and (burns.any() or unknown.any()):
        parts = []
        if burns.any():
            nb = int(burns.sum())
            parts.append(f"{nb} of the {len(subs)} substitutes shown {'does' if nb == 1 else 'do'} (lowest flash point "
                         f"{np.nanmin(fp[burns]):.0f} C)")
        if unknown.any():
            nu = int(unknown.sum())
            parts.append(f"{nu} {'has' if nu == 1 else 'have'} no flash-point data (treat "
                         f"{'it' if nu == 1 else 'them'} as flammable)")
        out.append(f"{replaced} has no flash point (not classed as flammable), but " + " and ".join(parts)
                   + ": a flammable replacement "
                   "changes the fire protection the process needs (equipment, ventilation, storage). "
                   "Check the safety data sheets and local codes"
                   + ("." if flash_floor else ", or set a minimum flash point."))
    xrow = table.loc[table["role"] == "replaced"] if "role" in table else table.iloc[:0]
    x_fp = float(xrow["lowest_flash_point_c"].iloc[0]) if len(xrow) else math.nan
    if math.isfinite(x_fp) and burns.any():
        # a replacement that moves the process into a more flammable class (GHS flash-point
        # limits 23 C and 60 C; common practice) changes what the equipment and storage must meet
        from .report import GHS_FLASH_LIMITS_C

        c2, c3, _ = GHS_FLASH_LIMITS_C

        def band(v):
            return np.where(v < c2, 0, np.where(v <= c3, 1, 2))

        worse = burns & (band(np.where(burns, fp, 1e9)) < band(np.array([x_fp]))[0])
        if worse.any():
            nw, nu = int(worse.sum()), int(unknown.sum())
            where, floor = ((f"below {c2:g} C", f"{c2:g} C") if x_fp <= c3 else
                            (f"at or below {c3:g} C", f"{c3 + 1:g} C"))
            out.append(f"{nw} of the {len(subs)} substitutes shown {'has' if nw == 1 else 'have'} a flash point "
                       f"{where} where {replaced}'s is {x_fp:.0f} C (lowest {np.nanmin(fp[worse]):.0f} C)"
                       + (f", and {nu} {'has' if nu == 1 else 'have'} no flash-point data" if nu else "")
                       + ": a more flammable class changes the fire protection the process needs (equipment, "
                       "ventilation, storage). Check the safety data sheets and local codes"
                       + ("." if flash_floor else f", or set a minimum flash point of {floor}."))
    if radius is not None:
        far = subs["red"].to_numpy(float) > 1.0
        where = "outside the solute's sphere (RED > 1)"
    else:
        far = subs["ra"].to_numpy(float) > REFERENCE_RADIUS
        where = f"more than Ra {REFERENCE_RADIUS:g} MPa^0.5 from {'the solute' if solute else replaced}"
    if far.any():
        what = "the solute" if solute else f"what {replaced} dissolves"
        nf = int(far.sum())
        out.append(f"{nf} of the {len(subs)} substitutes shown {'lies' if nf == 1 else 'lie'} {where}: "
                   f"{'it is' if nf == 1 else 'they are'} unlikely to dissolve {what}; test "
                   f"{'it' if nf == 1 else 'them'} before use.")
    return out
