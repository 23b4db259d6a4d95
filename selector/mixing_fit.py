"""Fitting the donor/acceptor Flory-Huggins model of :mod:`selector.mixing` to reference pairs.

The reference data are ``parameters/miscibility_pairs.csv`` (see ``miscibility_pairs.md``):
liquid pairs with their behaviour at 25 C (miscible in all proportions or not) and, for a few,
a published upper critical solution temperature. Three numbers are fitted by an exhaustive grid
search (the score surface is a step function, so a gradient method is of no use):

* ``w_p``, ``w_h``: weights of (dP1 - dP2)^2 and of the donor/acceptor hydrogen-bond term
  (dD keeps weight 1);
* ``polyol_c``: the entropy volume of a liquid with n > 1 alcohol O-H groups is V (1 + c (n - 1))
  (glycols and glycerol form a three-dimensional hydrogen-bond network and mix as clusters
  rather than as single molecules; c is searched between 0 and 1, at most one more molecule
  per extra O-H group).

The Kamlet-Taft floor of the donor/acceptor split (:data:`selector.mixing.ACID_FLOOR`), the
entropy volume floor (:data:`selector.mixing.V_MIN`), the induction factor of aromatic
liquids (:data:`selector.mixing.AROMATIC_Q`) and the numbers of the cross hydrogen-bond term
(:data:`selector.mixing.ASSOC_ENERGY`, :data:`selector.mixing.ASSOC_K0`,
:data:`selector.mixing.LATTICE_Z`) are set from published values, not fitted: no number is
fitted to water mixtures alone, so leaving water out of a fit still determines every fitted
number. ``acid_floor``, ``v_min``, ``aromatic_q`` and ``assoc_z`` (0 switches the cross
hydrogen-bond term off) may be passed to the functions below to measure how much the results
depend on them (the report's ablation and sensitivity tables).

Score of a grid point on the training pairs: the log-likelihood of a logistic model on the
model's own margin, P(miscible) = 1 / (1 + exp(ln(chi / chi_c) / tau)) (ln(chi/chi_c) < 0: one
phase), maximised over the scale tau as well (:data:`TAU_GRID`; tau is fitted with the other
numbers, by the same likelihood). Every training pair counts by how far it lies on its side of
the boundary, so the fit does not hug a step function and the numbers chosen in different
leave-one-liquid-out folds agree closely. From it subtracted: 0.02 x (number of training pairs)
x the mean UCST error / 50 K (capped at 1) over the training pairs that have a published UCST.
The methanol-hexane UCST is never used in a fit: it is kept as an independent check for the
test suite. (Until 2026-12 the score was the fraction classified right with a 0.001 tie-breaker;
the report keeps its leave-one-liquid-out figure beside the likelihood fit.)
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .hansen import R_GAS
from .library import PARAMETERS_DIR, load_library, locate

PAIRS_CSV = PARAMETERS_DIR / "miscibility_pairs.csv"
#: Check pairs: known from the trade, never used in a fit (scored apart by the accuracy report).
FACTS_CSV = PARAMETERS_DIR / "miscibility_facts.csv"

#: Pairs whose published UCST is kept out of every fit (independent test check).
UCST_HELD_OUT = {frozenset(("67-56-1", "110-54-3"))}   # methanol-hexane

GRID = {
    "w_p": np.round(np.arange(0.10, 0.3001, 0.0125), 4),
    "w_h": np.round(np.arange(0.04, 0.2001, 0.0025), 4),
    # c <= 1: each O-H group beyond the first ties at most one more molecule into the cluster
    "polyol_c": np.array([0.0, 0.25, 0.5, 0.75, 1.0]),
}

#: Scales tau of the logistic likelihood searched with the grid (geometric, 0.02..1).
TAU_GRID = np.geomspace(0.02, 1.0, 30)
#: Weight of the mean UCST error (per training pair) in the score.
UCST_WEIGHT = 0.02


def load_pairs(path=None) -> pd.DataFrame:
    """The reference pairs table (all columns as text except ``ucst_c``/``lcst_c``, float)."""
    df = pd.read_csv(path or PAIRS_CSV, keep_default_na=False, dtype=str)
    for c in ("ucst_c", "lcst_c"):
        df[c] = pd.to_numeric(df[c].replace("", np.nan), errors="coerce")
    return df


@dataclass
class PairFeatures:
    """Arrays over reference pairs: squared HSP differences, cross-site products, volumes."""

    pairs: pd.DataFrame
    ia: np.ndarray
    ib: np.ndarray
    h1: np.ndarray
    h2: np.ndarray
    s1: np.ndarray
    s2: np.ndarray
    v1: np.ndarray
    v2: np.ndarray
    al1: np.ndarray
    al2: np.ndarray
    miscible: np.ndarray
    ucst: np.ndarray

    @property
    def d2(self):
        return (self.h1 - self.h2) ** 2


def features(pairs: pd.DataFrame | None = None, library: pd.DataFrame | None = None) -> PairFeatures:
    from .mixing import _arrays

    pairs = load_pairs() if pairs is None else pairs
    lib = load_library() if library is None else library
    ia = np.array([locate(c, lib) for c in pairs["cas_a"]])
    ib = np.array([locate(c, lib) for c in pairs["cas_b"]])
    h, v, s, _, al = _arrays(lib)
    ucst = pairs["ucst_c"].to_numpy(float).copy()
    for k, (a, b) in enumerate(zip(pairs["cas_a"], pairs["cas_b"])):
        if frozenset((a, b)) in UCST_HELD_OUT:
            ucst[k] = np.nan
    return PairFeatures(pairs, ia, ib, h[ia], h[ib], s[ia], s[ib], v[ia], v[ib], al[ia], al[ib],
                        (pairs["miscible_25c"] == "yes").to_numpy(), ucst)


def _grid_array(grid=None) -> np.ndarray:
    g = GRID if grid is None else grid
    return np.array(list(itertools.product(g["w_p"], g["w_h"], g["polyol_c"])), float)


def _ratios(f: PairFeatures, acid_floor: float):
    from .mixing import MixingModel

    m = MixingModel("split", acid_floor=acid_floor)
    return m.split_ratio(f.s1), m.split_ratio(f.s2)


def _polar_factor(f: PairFeatures, aromatic_q: float):
    """(q1 q2)^2 per pair, the induction factor of the polar term."""
    from .mixing import MixingModel

    m = MixingModel("induction", aromatic_q=aromatic_q)
    return (m.induction(f.s1) * m.induction(f.s2)) ** 2


def _keesom(t_c):
    """The Keesom factor of the bundled model's polar term at t_c (:meth:`MixingModel.keesom_factor`)."""
    from .mixing import HBOND

    return HBOND.keesom_factor(t_c)


def _a12(G, d2, hb, pf):
    """A12 per grid point (rows) and pair (columns) from squared dD, dP differences and the H term
    (``pf``: the induction factor, times the Keesom factor away from 25 C)."""
    return d2[None, ..., 0] + G[:, 0, None] * pf * d2[None, ..., 1] + G[:, 1, None] * hb[None]


def _hb(h1, h2, r1, r2):
    return (h1[..., 2] * r1 - h2[..., 2] * r2) * (h1[..., 2] / r1 - h2[..., 2] / r2)


def _assoc(f: PairFeatures, vr, t, cols=None, assoc_z: float | None = None):
    """Cross hydrogen-bond lowering of chi (:meth:`selector.mixing.MixingModel.association`)."""
    from .mixing import LATTICE_Z, MixingModel

    z = LATTICE_Z if assoc_z is None else float(assoc_z)
    if not z:
        return 0.0
    s1, s2 = (f.s1, f.s2) if cols is None else (f.s1[cols], f.s2[cols])
    return MixingModel("assoc", assoc_z=z).association(s1, s2, vr, t)


def _log_ratio(G, f: PairFeatures, acid_floor: float, v_min: float, aromatic_q: float = 1.0,
               t_c: float = 25.0, assoc_z: float | None = None):
    """ln(chi / chi_c) for every grid point (rows) and pair (columns) at t_c."""
    from .mixing import hsp_at

    h1, h2 = (f.h1, f.h2) if t_c == 25.0 else (hsp_at(f.h1, f.al1, t_c), hsp_at(f.h2, f.al2, t_c))
    r1, r2 = _ratios(f, acid_floor)
    a = _a12(G, (h1 - h2) ** 2, _hb(h1, h2, r1, r2), _polar_factor(f, aromatic_q) * _keesom(t_c))
    e1 = np.maximum(f.v1[None, :] * (1.0 + G[:, 2, None] * f.s1[None, :, 3]), v_min)
    e2 = np.maximum(f.v2[None, :] * (1.0 + G[:, 2, None] * f.s2[None, :, 3]), v_min)
    vr = np.minimum(e1, e2)
    cc = 0.5 * ((e1 / vr) ** -0.5 + (e2 / vr) ** -0.5) ** 2
    chi = vr * a / (R_GAS * (t_c + 273.15)) - _assoc(f, vr, t_c, assoc_z=assoc_z)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(np.maximum(chi, 1e-12) / cc)


def _ucst_grid(G, f: PairFeatures, cols, acid_floor: float, v_min: float,
               aromatic_q: float = 1.0, assoc_z: float | None = None) -> np.ndarray:
    """Model UCST (C) per grid point for the pairs ``cols`` (vectorised bisection, -150..400 C)."""
    from .mixing import hsp_at, volume_at

    if len(cols) == 0:
        return np.zeros((len(G), 0))
    lo = np.full((len(G), len(cols)), -150.0)
    hi = np.full((len(G), len(cols)), 400.0)
    r1, r2 = (r[cols] for r in _ratios(f, acid_floor))
    pf = _polar_factor(f, aromatic_q)[cols]

    def fval(t):
        h1 = hsp_at(f.h1[cols][None, :, :], f.al1[cols][None, :], t)
        h2 = hsp_at(f.h2[cols][None, :, :], f.al2[cols][None, :], t)
        d2 = (h1 - h2) ** 2
        a = (d2[..., 0] + G[:, 0, None] * pf * _keesom(t) * d2[..., 1]
             + G[:, 1, None] * _hb(h1, h2, r1, r2))
        g1 = 1.0 + G[:, 2, None] * f.s1[cols][None, :, 3]
        g2 = 1.0 + G[:, 2, None] * f.s2[cols][None, :, 3]
        e1 = np.maximum(volume_at(f.v1[cols][None, :], f.al1[cols][None, :], t) * g1, v_min)
        e2 = np.maximum(volume_at(f.v2[cols][None, :], f.al2[cols][None, :], t) * g2, v_min)
        vr = np.minimum(e1, e2)
        cc = 0.5 * ((e1 / vr) ** -0.5 + (e2 / vr) ** -0.5) ** 2
        return vr * a / (R_GAS * (t + 273.15)) - _assoc(f, vr, t, cols, assoc_z) - cc

    f_lo = fval(lo)
    for _ in range(30):
        m = 0.5 * (lo + hi)
        neg = fval(m) < 0
        hi = np.where(neg, m, hi)
        lo = np.where(neg, lo, m)
    return np.where(f_lo < 0, -150.0, 0.5 * (lo + hi))


class GridScores:
    """Per-grid-point, per-pair pieces of the score, computed once and reused by every fold."""

    def __init__(self, f: PairFeatures, grid=None, acid_floor: float | None = None,
                 v_min: float | None = None, aromatic_q: float | None = None,
                 assoc_z: float | None = None):
        from .mixing import ACID_FLOOR, AROMATIC_Q, LATTICE_Z, V_MIN

        self.f = f
        self.acid_floor = ACID_FLOOR if acid_floor is None else float(acid_floor)
        self.v_min = V_MIN if v_min is None else float(v_min)
        self.aromatic_q = AROMATIC_Q if aromatic_q is None else float(aromatic_q)
        self.assoc_z = LATTICE_Z if assoc_z is None else float(assoc_z)
        self.G = _grid_array(grid)
        lr = _log_ratio(self.G, f, self.acid_floor, self.v_min, self.aromatic_q, assoc_z=self.assoc_z)
        self.right = (lr <= 0) == f.miscible[None, :]
        self.penalty = np.where(self.right, 0.0, np.abs(lr))
        #: signed margin per grid point and pair: > 0 on the reference's side of the boundary
        self.margin = np.where(f.miscible[None, :], -lr, lr)
        self.ucst_cols = np.flatnonzero(np.isfinite(f.ucst))
        u = _ucst_grid(self.G, f, self.ucst_cols, self.acid_floor, self.v_min, self.aromatic_q,
                       self.assoc_z)
        self.ucst_err = np.minimum(np.abs(u - f.ucst[self.ucst_cols][None, :]) / 50.0, 1.0)
        self._loss_cache = None

    def scores(self, train: np.ndarray, objective: str = "likelihood") -> tuple[np.ndarray, np.ndarray]:
        """(score, tau) per grid point on the ``train`` pairs.

        ``objective``: "likelihood" (the fit, see the module docstring) or "accuracy" (fraction
        right minus 0.001 x the mean |ln(chi/chi_c)| of the wrong ones, the earlier fit; tau is
        then NaN).
        """
        train = np.asarray(train, bool)
        n = int(train.sum())
        ut = train[self.ucst_cols]
        u = self.ucst_err[:, ut].mean(1) if ut.any() else np.zeros(len(self.G))
        if objective == "accuracy":
            sc = self.right[:, train].mean(1) - 1e-3 * self.penalty[:, train].mean(1)
            return sc - UCST_WEIGHT * u, np.full(len(self.G), np.nan)
        if objective != "likelihood":
            raise ValueError(f"objective must be 'likelihood' or 'accuracy', not {objective!r}")
        loss, total = self._losses()
        test = ~train
        # log-likelihood of the training pairs = all pairs minus the held-out ones
        ll = -(total - loss[:, :, test].sum(-1, dtype=float)) if test.any() else -total
        k = ll.argmax(0)
        return ll.max(0) - UCST_WEIGHT * n * u, TAU_GRID[k]

    def _losses(self):
        """Per-pair logistic losses (tau, grid, pair) and their sums over all pairs (cached once,
        so each leave-one-out fold only subtracts its held-out pairs)."""
        if self._loss_cache is None:
            loss = np.stack([np.logaddexp(0.0, -self.margin / t) for t in TAU_GRID]).astype(np.float32)
            self._loss_cache = (loss, loss.sum(-1, dtype=float))
        return self._loss_cache

    def best_index(self, train: np.ndarray, allowed: np.ndarray | None = None,
                   objective: str = "likelihood") -> tuple[int, float]:
        """(grid row, tau) of the best score on the ``train`` pairs (``allowed``: grid mask)."""
        sc, tau = self.scores(train, objective)
        if allowed is not None:
            sc = np.where(allowed, sc, -np.inf)
        k = int(np.argmax(sc))
        return k, float(tau[k])

    def best(self, train: np.ndarray, allowed: np.ndarray | None = None,
             objective: str = "likelihood") -> np.ndarray:
        """Grid point (w_p, w_h, polyol_c) with the best score on the ``train`` pairs.

        ``allowed``: optional boolean mask over grid points.
        """
        return self.G[self.best_index(train, allowed, objective)[0]]


def fit(pairs: pd.DataFrame | None = None, library: pd.DataFrame | None = None, train=None,
        acid_floor: float | None = None, v_min: float | None = None,
        aromatic_q: float | None = None, assoc_z: float | None = None):
    """Fit (w_p, w_h, polyol_c) on the reference pairs (all, or the ``train`` mask).

    ``acid_floor``, ``v_min``, ``aromatic_q``: the set numbers (default
    :data:`selector.mixing.ACID_FLOOR`, :data:`selector.mixing.V_MIN`,
    :data:`selector.mixing.AROMATIC_Q`). Returns a :class:`selector.mixing.MixingModel`.
    """
    from .mixing import HBOND, MixingModel

    f = features(pairs, library)
    gs = GridScores(f, acid_floor=acid_floor, v_min=v_min, aromatic_q=aromatic_q, assoc_z=assoc_z)
    train = np.ones(len(f.pairs), bool) if train is None else np.asarray(train, bool)
    k, tau = gs.best_index(train)
    wp, wh, pc = gs.G[k]
    return MixingModel("donor/acceptor Flory-Huggins", 1.0, float(wp), float(wh), gs.acid_floor,
                       gs.v_min, "fitted on parameters/miscibility_pairs.csv", gs.aromatic_q,
                       float(pc), gs.assoc_z, tau, HBOND.keesom)
