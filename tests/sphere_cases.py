"""Seeded sphere-fit cases shared by tests/test_spheres.py and tests/benchmarks/bench_spheres.py.

A true sphere is drawn with a fixed seed; the outcomes are the true inside/outside verdicts of
real library liquids (HSP from the published tables that the `chemicals` library carries, as
bundled in the project library), optionally with a share of outcomes flipped. The naive
baseline is the classical desirability score (Hansen, Hansen Solubility Parameters: A User's
Handbook, 2nd ed., CRC Press, 2007, ch. 1) by brute force over a grid of centres, with every
tested Ra as a candidate R0.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from selector.library import HSP, load_library
from selector.spheres import SCALE, TIE

LIB = load_library()
H = LIB[HSP].to_numpy(float)


def ra(h, c):
    """Hansen distance (MPa^0.5) of HSP rows ``h`` from centre ``c``."""
    return np.sqrt((((np.asarray(h) - np.asarray(c)) * SCALE) ** 2).sum(-1))


def make_case(seed: int, n: int = 40, noise: float = 0.0):
    """(tests table, true centre, true R0): n random library liquids against a random sphere.

    ``noise``: share of outcomes flipped. At least two outcomes stay "good" so that the case can
    be fitted.
    """
    r = np.random.default_rng(seed)
    c = np.array([r.uniform(16, 20), r.uniform(3, 12), r.uniform(3, 12)])
    R = r.uniform(6, 10)
    d = ra(H, c)
    for _ in range(100):
        idx = r.choice(len(LIB), n, replace=False)
        g = d[idx] < R
        if 3 <= g.sum() <= n - 3:
            break
    nf = int(round(noise * n))
    if nf:
        f = r.choice(n, nf, replace=False)
        g[f] = ~g[f]
    if g.sum() < 2:  # keep the case fittable
        g[np.argsort(d[idx])[:2]] = True
    df = pd.DataFrame({"solvent": LIB["name"].iloc[idx].to_numpy(), "outcome": g})
    return df, c, R


def exhaustive(tab: pd.DataFrame, step: float = 0.6, margin: float = 2.5):
    """(objective, centre, R0) of the best grid point (scaled step ``step``, MPa^0.5).

    Objective: weighted mean desirability loss plus the TIE x R0 tie-break of
    :mod:`selector.spheres`.
    """
    P = tab[HSP].to_numpy(float) * SCALE
    good = tab["good"].to_numpy(bool)
    w = tab["weight"].to_numpy(float) if "weight" in tab else np.ones(len(tab))
    w = w / w.mean()
    lo = np.maximum(P[good].min(0) - margin, [10.0, 0.0, 0.0])
    hi = P[good].max(0) + margin
    axes = [np.arange(lo[a], hi[a] + step / 2, step) for a in range(3)]
    C = np.stack(np.meshgrid(*axes, indexing="ij"), -1).reshape(-1, 3)
    best = (np.inf, None, None)
    for s in range(0, len(C), 2000):
        Cc = C[s:s + 2000]
        d = np.sqrt(((Cc[:, None, :] - P[None]) ** 2).sum(-1))  # (M, n)
        R = d[:, :, None]  # candidate radii (M, n, 1)
        loss = np.where(good[None, None, :], np.maximum(d[:, None, :] - R, 0),
                        np.maximum(R - d[:, None, :], 0))
        f = (loss * w).sum(-1) / w.sum() + TIE * R[..., 0]  # (M, n)
        k = np.unravel_index(np.argmin(f), f.shape)
        if f[k] < best[0]:
            best = (float(f[k]), Cc[k[0]] / SCALE, float(R[k[0], k[1], 0]))
    return best
