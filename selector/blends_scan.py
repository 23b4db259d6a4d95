"""Exact, screened search for the best blends of three liquids (used by :mod:`selector.blends`).

The task is that of :func:`selector.blends.search_arrays`: among all triples of candidates, keep
the ``pool`` best by the ranking key (Ra in steps of ``resolution``, then the worst hazard level,
then Ra), where a triple is admissible only if its exact optimum (volume fractions >= m, Hansen's
volume-weighted blend rule) beats each of its three pairs by ``min_gain`` (MPa^0.5). The method
of :mod:`selector.blends` (``method="plane"``) evaluates a plane-distance lower bound for every
one of the ~92 million triples of the full library. This module reaches the same pool while
touching far fewer triples, using only necessary conditions (a triple is skipped only when it
provably cannot enter the pool), then the same closed-form optimum on the survivors:

1. **Seed.** Every triple of a small set of promising liquids (the nearest to the target overall
   and per hazard level, and the liquids of the best pairs) is solved first, so the pool
   threshold ``tau`` (an Ra limit per hazard level) is tight from the start.
2. **Order and cut by a direction.** With the target at the origin and ``u`` a unit vector,
   every blend point p = sum f_x z_x has Ra = |p| >= u . p = sum f_x a_x, a_x = u . z_x, so a triple
   needs (1 - 2m) a_min + m (a_mid + a_max) < tau. Liquids are visited in order of a (``u`` is
   chosen so that few liquids lie behind the target); row i (its liquid has the smallest a of
   the triple) ends the scan once a_i >= tau, and its partners need
   a_x < (tau - (1 - m) a_i) / m.
3. **Screen each row.** For row i and partners j, k (y_x = z_x - z_i, w_x = z_i x z_x, T_x the
   smallest of the pair limit (i, x) and tau at x's hazard level): the distance of the target
   to the triple's plane is |w_j . z_k| / |y_j x y_k| >= |w_j . z_k| / (|y_j| |y_k|), so one matrix
   product per row discards every pair with |w_j . z_k| >= min(T_j, T_k) |y_j| |y_k| (partners
   sorted by T make the bound a column scale).
4. **Lower bound on the survivors.** Ra^2 = (plane distance)^2 + (in-plane distance of the
   target's projection to the triangle shrunk to fractions >= m); the latter is at least
   (m - lambda_x) h_x for each barycentric coordinate lambda_x < m of the projection, h_x the
   triangle's height over the edge opposite x. Only triples whose bound beats their threshold are
   solved exactly (plane projection, else the best edge; :mod:`selector.blends`).

Ties in the key at the edge of the pool (e.g. several triples whose plane holds the target
exactly, Ra = 0) may be resolved differently from ``method="plane"``; the pool's keys are the same.
The geometric facts used (barycentric coordinates, point-to-plane distance, Cauchy-Schwarz) are
textbook vector algebra; the blend rule and Ra are from C. M. Hansen, *Hansen Solubility
Parameters: A User's Handbook*, 2nd ed., CRC Press, 2007, ch. 1.
"""
from __future__ import annotations

import numpy as np


def _tau_table(tau_key, res):
    from .blends import _tau_table as tt

    return tt(tau_key, res)


def _exact(arr, i, j, k, tau_t, m, key):
    """Exact tests and optimum for triples (i, j, k) (index arrays). ``arr``: dict of the
    (permuted) arrays. Returns (idx, f, ra, key) of the admissible triples or None."""
    from .blends import _ternary_gram

    if len(j) == 0:
        return None
    Z, G, gd, Bthr, Hp, hzp = arr["Z"], arr["G"], arr["gd"], arr["Bthr"], arr["Hp"], arr["hzp"]
    lim = np.minimum(np.minimum(Bthr[i, j], Bthr[i, k]), Bthr[j, k])
    lim = np.minimum(lim, tau_t[np.maximum(Hp[j, k], hzp[i])])
    c = lim > 0
    if not c.any():
        return None
    i, j, k, lim = i[c], j[c], k[c], lim[c]
    num = np.einsum("pd,pd->p", np.cross(Z[i], Z[j]), Z[k])
    num *= num
    gii = gd[i]
    gij = G[i, j]
    gik = G[i, k]
    gjk = G[j, k]
    ybb = gd[j] - 2 * gij + gii
    ycc = gd[k] - 2 * gik + gii
    ybc = gjk - gij - gik + gii
    det = ybb * ycc - ybc * ybc
    low2 = _low2(num, det, ybb, ycc, ybc, gii - gij, gii - gik, gd[j] + gd[k] - 2 * gjk, m)
    c = ~(low2 * (1 - 1e-9) >= lim * lim)  # NaN (degenerate triple) is kept
    if not c.any():
        return None
    i, j, k, lim = i[c], j[c], k[c], lim[c]
    ff, d2 = _ternary_gram(gd[i], G[i, j], G[i, k], gd[j], gd[k], G[j, k], m)
    rt = np.sqrt(d2)
    good = rt < lim
    if not good.any():
        return None
    i, j, k, ff, rt = i[good], j[good], k[good], ff[good], rt[good]
    return (np.column_stack([i, j, k]), ff, rt,
            key(rt, np.maximum(np.maximum(hzp[i], hzp[j]), hzp[k])))


def _low2(num2, det, ybb, ycc, ybc, rb, rc, ejk, m):
    """Lower bound on a triple's squared Ra: squared plane distance num2 / det plus the largest
    squared in-plane gap (m - lambda_x)^2 det / |edge opposite x|^2 (target at the origin,
    vertex i at the origin of the y's; see the module doc)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        sd = np.where(det > 0, det, np.inf)
        lj = (ycc * rb - ybc * rc) / sd
        lk = (ybb * rc - ybc * rb) / sd
        li = 1.0 - lj - lk
        gap = np.maximum(np.maximum(np.maximum(m - li, 0.0) ** 2 / np.where(ejk > 0, ejk, np.inf),
                                    np.maximum(m - lj, 0.0) ** 2 / np.where(ycc > 0, ycc, np.inf)),
                         np.maximum(m - lk, 0.0) ** 2 / np.where(ybb > 0, ybb, np.inf))
        return (num2 + gap * det * det) / sd


def _merge(best, new, pool):
    from .blends import _best

    if new is None:
        return best
    best = new if best is None else tuple(np.concatenate(x) for x in zip(best, new))
    if len(best[2]) >= pool:
        best = _best(*best, pool)
    return best


def ternary_screened(Z, G, gd, B, hz, m, min_gain, pool, res, key, ra_cap=np.inf):
    """The ``pool`` best admissible triples (module doc); returns (idx (p, 3), f, ra, key).

    ``Z``: (n, 3) scaled candidate points minus the scaled target; ``G = Z Z^T``; ``gd`` its
    diagonal; ``B``: (n, n) best Ra of each pair (inf where not allowed, diagonal inf); ``hz``:
    hazard level 0-4 per candidate; ``m``: smallest volume fraction; ``min_gain`` (MPa^0.5);
    ``ra_cap`` (MPa^0.5): triples with Ra >= ra_cap are not wanted (they rank after every triple
    below it, so the pool is the unrestricted pool cut at ra_cap).
    """
    from .blends import _best, _ternary_core

    n = len(Z)
    hzi = np.asarray(hz).astype(int)
    Bthr0 = np.where(np.isfinite(B), B, -np.inf) - min_gain
    arr0 = {"Z": Z, "G": G, "gd": gd, "Bthr": Bthr0, "Hp": np.maximum.outer(hzi, hzi), "hzp": hzi}
    cap5 = np.full(5, float(ra_cap))

    # 1. seed
    near = np.argsort(gd, kind="stable")
    pick = [near[:32]] + [near[hzi[near] == lv][:12] for lv in range(4)]
    bpos = np.where(np.triu(np.isfinite(B), 1), B, np.inf)   # best pairs (each once)
    top_pairs = np.argpartition(bpos, min(24, bpos.size - 1), axis=None)[:24]
    pick.append(np.concatenate(np.unravel_index(top_pairs, (n, n))))
    S = np.unique(np.concatenate(pick))
    seed = None
    if len(S) >= 3:
        a, b = np.triu_indices(len(S), 1)
        ii, jj, kk = np.repeat(S[a], len(S)), np.repeat(S[b], len(S)), np.tile(S, len(a))
        up = kk > jj
        seed = _merge(None, _exact(arr0, ii[up], jj[up], kk[up], cap5, m, key), pool)
    tau = cap5
    if seed is not None and len(seed[2]) >= pool:
        tau = np.minimum(tau, _tau_table(seed[3][-1], res))

    # 2. direction and order
    lim_a = float(tau.max()) if np.isfinite(tau.max()) else res
    nrm = np.sqrt(gd)
    cands = [Z.mean(0), np.median(Z, 0)] + [s * e for e in np.eye(3) for s in (1.0, -1.0)]
    cands += list(Z[near[:16]] / np.where(nrm[near[:16]] > 0, nrm[near[:16]], 1.0)[:, None])
    best_u, best_c = None, None
    for c in cands:
        nc = float(np.linalg.norm(c))
        if nc <= 0:
            continue
        av = Z @ (c / nc)
        below = np.sort(av[av < lim_a])
        # work of the rows that can run: row r pairs its liquid with those after it
        cost = float(np.sum((n - np.arange(len(below))) ** 2))
        if best_c is None or cost < best_c:
            best_u, best_c = c / nc, cost
    a_dir = Z @ best_u
    perm = np.argsort(a_dir, kind="stable")
    inv = np.empty(n, dtype=int)
    inv[perm] = np.arange(n)
    a_dir = a_dir[perm]
    Zp = Z[perm]
    Gp = G[np.ix_(perm, perm)]
    gdp = gd[perm]
    hzp = hzi[perm]
    Bthr = Bthr0[np.ix_(perm, perm)]
    Bthr[np.tril_indices(n)] = -np.inf
    arr = {"Z": Zp, "G": Gp, "gd": gdp, "Bthr": Bthr, "Hp": np.maximum.outer(hzp, hzp), "hzp": hzp}
    in_seed = np.zeros(n, dtype=bool)
    in_seed[inv[S]] = True
    best = None
    if seed is not None:
        best = (np.sort(inv[seed[0]], 1),) + tuple(seed[1:])

    # 3. rows
    tiny = 1e-9 * (1.0 + float(np.abs(a_dir).max()))  # rounding margin of the a-cuts
    for i in range(n - 2):
        if a_dir[i] >= tau.max() + tiny:
            break                                  # every later row has a larger a
        ti = tau[hzp[i]]                           # the triple's worst level is >= that of i
        if ti <= 0 or a_dir[i] >= ti + tiny:
            continue
        s0 = i + 1
        s1 = n
        if m > 0 and np.isfinite(ti):
            s1 = int(np.searchsorted(a_dir, (ti - (1 - m) * a_dir[i]) / m + tiny, side="right"))
        if s1 - s0 < 2:
            continue
        gii = gdp[i]
        gi = Gp[i]
        yy = gdp[s0:s1] - 2 * gi[s0:s1] + gii     # |y_x|^2
        T = np.minimum(Bthr[i, s0:s1], tau[hzp[s0:s1]])
        ok = (T > 0) & (yy > 0)
        if np.count_nonzero(ok) < 2:
            continue
        U = np.flatnonzero(ok) + s0
        o = np.argsort(-T[ok], kind="stable")     # largest T first: min(T_j, T_k) = T_k
        U = U[o]
        Tu = T[ok][o]
        yu = yy[ok][o]
        nu = len(U)
        ny = np.sqrt(yu)
        ZU = Zp[U]
        W = np.cross(Zp[i], ZU)                    # w_x = z_i x z_x; w_j . z_k = triple product
        A = W / ny[:, None]
        Bm = ZU / (ny * Tu)[:, None]
        # rounding allowance per row (it only ever lets more triples through)
        err = 1e-12 * np.sqrt((A * A).sum(1)) * np.sqrt((Bm * Bm).sum(1).max()) + (1.0 + 1e-6)
        nstrip = 1 if nu < 96 else 4
        edges = (nu * (1 - np.sqrt(1 - np.arange(nstrip + 1) / nstrip))).astype(int)
        edges[-1] = nu
        # the direction cut per pair: m (a_j + a_k) < T_k - (1 - 2m) a_i (step 2 of the module doc)
        aU = a_dir[U]
        acut = None
        if m > 0:
            acut = (Tu - (1 - 2 * m) * a_dir[i]) / m + tiny / m - aU
        js, ks = [], []
        for r0, r1 in zip(edges[:-1], edges[1:]):
            if r1 <= r0:
                continue
            M = A[r0:r1] @ Bm[r0:].T
            np.abs(M, out=M)
            M -= err[r0:r1, None]
            C = M < 0
            if acut is not None:
                C &= aU[r0:r1, None] < acut[None, r0:]
            jj, kk = np.nonzero(C)
            jj += r0
            kk += r0
            up = kk > jj
            js.append(jj[up])
            ks.append(kk[up])
        jj = np.concatenate(js)
        if len(jj) == 0:
            continue
        kk = np.concatenate(ks)
        # 4. lower bound from row vectors only (no (j, k) look-ups), threshold T_k >= thr
        yj = ZU[jj] - Zp[i]
        yk = ZU[kk] - Zp[i]
        ybc = np.einsum("pd,pd->p", yj, yk)
        det = yu[jj] * yu[kk] - ybc * ybc
        num = np.einsum("pd,pd->p", W[jj], ZU[kk])
        num *= num
        rb = gii - gi[U[jj]]
        rc = gii - gi[U[kk]]
        ejk = yu[jj] + yu[kk] - 2 * ybc
        low2 = _low2(num, det, yu[jj], yu[kk], ybc, rb, rc, ejk, m)
        tk = Tu[kk]
        c = ~(low2 * (1 - 1e-9) >= tk * tk)
        if not c.any():
            continue
        j, k = U[jj[c]], U[kk[c]]
        j, k = np.minimum(j, k), np.maximum(j, k)
        if in_seed[i]:
            fresh = ~(in_seed[j] & in_seed[k])     # triples inside the seed set are already in
            j, k = j[fresh], k[fresh]
        new = _exact(arr, np.full(len(j), i), j, k, tau, m, key)
        if new is not None:
            best = _merge(best, new, pool)
            if len(best[2]) >= pool:
                tau = np.minimum(tau, _tau_table(best[3][-1], res))
    if best is None:
        e = np.zeros((0, 3))
        return e.astype(int), e, np.zeros(0), np.zeros(0)
    idx, f, rr, kk = _best(*best, pool)
    # components listed most promising first (better hazard level, then closer to the target),
    # as by method "plane"; then the pool is polished in direct coordinates (same optimum,
    # computed from the points themselves)
    rank = np.empty(n, dtype=int)
    rank[np.lexsort((gd, hzi))] = np.arange(n)
    idx = perm[idx]
    idx = np.take_along_axis(idx, np.argsort(rank[idx], axis=1), axis=1)
    f, d2 = _ternary_core(Z[idx[:, 0]], Z[idx[:, 1]], Z[idx[:, 2]], m)
    return idx, f, np.sqrt(d2), kk
