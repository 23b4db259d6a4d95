"""First-stage models of :mod:`selector.estimation`: the physics-shaped group-energy ridge
model (below) and a Gaussian-kernel ridge model on whole-molecule descriptors
(:class:`DescriptorKernelRidge`, end of the module).

Hansen solubility parameters are square roots of cohesive energy densities,
``dD = sqrt(E_d / V)``, ``dP = sqrt(E_p / V)``, ``dH = sqrt(E_h / V)`` (Hansen, *Hansen
Solubility Parameters: A User's Handbook*, 2nd ed., CRC Press 2007, ch. 1). Group-contribution
methods treat the *extensive* quantities as sums over groups; in the form of Hoftyzer and Van
Krevelen (D. W. van Krevelen, *Properties of Polymers*, Elsevier, ch. 7) the molar attraction
``dD * V = sum F_d``, the hydrogen-bonding energy ``dH**2 * V = sum E_h``, and the polar part
``dP * V = sqrt(sum F_p**2)``. This module fits these additive forms with our own groups -
no published group table is reproduced - and turns them back into intensive values:

* groups: counts of Morgan atom environments of radius 0 and 1 (RDKit, unhashed identifiers)
  and atom types (element, hybridisation, attached hydrogens) that occur in at least two
  training molecules, plus the SMARTS and ``fr_*`` group counts of
  :mod:`selector.estimation_features`;
* volume: the McGowan characteristic volume ``V_x`` (cm^3/mol) of the feature matrix;
* targets: ``dD * V_x``, ``dP * V_x`` (the linear form fitted better than the squared one in our
  cross-validation) and ``dH**2 * V_x``, each scaled by its mean, fitted by ridge regression
  without intercept (closed form, ``alpha`` = 10 on raw counts);
* back-transform: ``dD = t_d / V_x``, ``dP = max(t_p, 0) / V_x``, ``dH = sqrt(max(t_h, 0) / V_x)``
  (MPa^0.5).

On its own this model is much less accurate than the trees (cross-validated MAE about
0.7 / 2.5 / 1.6 MPa^0.5); its three predictions, made out-of-fold inside the training set,
are extra features for the trees (stacked generalisation, Wolpert, Neural Networks 5 (1992)
241-259).

>>> from rdkit import Chem
>>> d = fragment_counts([Chem.MolFromSmiles("CCO")])[0]
>>> sorted(k for k in d if k.startswith("at:"))
['at:C_sp3_2', 'at:C_sp3_3', 'at:O_sp3_1']
"""
from __future__ import annotations

import functools

import numpy as np

#: Ridge penalty on raw group counts (chosen by the scaffold cross-validation, see
#: parameters/estimator_accuracy.md).
ALPHA = 10.0
MIN_COUNT = 2


@functools.lru_cache(maxsize=1)
def _generator():
    from rdkit.Chem import rdFingerprintGenerator

    return rdFingerprintGenerator.GetMorganGenerator(radius=1)


def fragment_counts(mols) -> list[dict]:
    """Per molecule, a dict of group counts: ``"m:<id>"`` Morgan environments of radius 0-1
    and ``"at:<element>_<hybridisation or ar>_<H count>"`` atom types."""
    gen = _generator()
    out = []
    for m in mols:
        d = {f"m:{k}": float(v) for k, v in gen.GetSparseCountFingerprint(m).GetNonzeroElements().items()}
        for a in m.GetAtoms():
            kind = "ar" if a.GetIsAromatic() else str(a.GetHybridization()).lower()
            k = f"at:{a.GetSymbol()}_{kind}_{a.GetTotalNumHs()}"
            d[k] = d.get(k, 0.0) + 1.0
        out.append(d)
    return out


@functools.lru_cache(maxsize=1)
def _feature_columns():
    from .estimation_features import feature_names

    names = feature_names()
    groups = np.array([i for i, n in enumerate(names) if n.startswith(("grp_", "rd_fr_"))])
    return groups, names.index("mcgowan_volume")


class GroupEnergyRidge:
    """Ridge regression of the extensive energies on group counts (see module docstring).

    ``fit(counts, X, Y)``: ``counts`` from :func:`fragment_counts`, ``X`` the
    :func:`~selector.estimation_features.featurize` matrix of the same molecules, ``Y`` the
    (n, 3) published HSP in MPa^0.5. ``predict(counts, X)`` returns (n, 3) HSP in MPa^0.5.
    """

    def __init__(self, alpha=ALPHA, min_count=MIN_COUNT):
        self.alpha = alpha
        self.min_count = min_count

    def _design(self, counts, X):
        pos = self.vocab_
        M = np.zeros((len(counts), len(pos)))
        for i, d in enumerate(counts):
            for k, v in d.items():
                j = pos.get(k)
                if j is not None:
                    M[i, j] = v
        gcols, vcol = _feature_columns()
        X = np.asarray(X, float)
        return np.hstack([M, X[:, gcols]]), np.maximum(X[:, vcol], 1.0)

    def fit(self, counts, X, Y):
        from collections import Counter

        seen = Counter()
        for d in counts:
            seen.update(d.keys())
        keys = sorted(k for k, c in seen.items() if c >= self.min_count)
        self.vocab_ = {k: j for j, k in enumerate(keys)}
        A, V = self._design(counts, X)
        Y = np.asarray(Y, float)
        T = np.column_stack([Y[:, 0] * V, Y[:, 1] * V, Y[:, 2] ** 2 * V])
        self.scale_ = np.abs(T).mean(axis=0) + 1e-12
        G = A.T @ A + self.alpha * np.eye(A.shape[1])
        self.coef_ = np.linalg.solve(G, A.T @ (T / self.scale_))
        return self

    def predict(self, counts, X):
        A, V = self._design(counts, X)
        t = (A @ self.coef_) * self.scale_
        return np.column_stack([t[:, 0] / V, np.clip(t[:, 1], 0, None) / V,
                                np.sqrt(np.clip(t[:, 2], 0, None) / V)])


def _out_of_fold(fit_predict, n, groups, n_splits, random_state):
    """(n, 3) out-of-fold predictions: ``fit_predict(train_index, test_index)`` per fold of
    :func:`selector.estimation.grouped_folds`."""
    from .estimation import grouped_folds

    out = np.zeros((n, 3))
    for tr, te in grouped_folds(groups, n_splits, random_state):
        out[te] = fit_predict(tr, te)
    return out


def out_of_fold(counts, X, Y, groups, n_splits=5, random_state=1, alpha=ALPHA):
    """Out-of-fold :class:`GroupEnergyRidge` predictions (n, 3) with folds grouped by
    ``groups`` (the stacking features of the training rows)."""
    X, Y = np.asarray(X, float), np.asarray(Y, float)

    def fit_predict(tr, te):
        m = GroupEnergyRidge(alpha).fit([counts[i] for i in tr], X[tr], Y[tr])
        return m.predict([counts[i] for i in te], X[te])

    return _out_of_fold(fit_predict, len(counts), groups, n_splits, random_state)


# --------------------------------------------------------------------------- kernel ridge stage

#: Kernel ridge settings (chosen by the scaffold cross-validation, see
#: parameters/estimator_accuracy.md): the RBF length scale is ``KERNEL_WIDTH`` times the median
#: squared distance between training molecules; ``KERNEL_ALPHA`` is the ridge penalty.
KERNEL_WIDTH = 4.0
KERNEL_ALPHA = 0.03


@functools.lru_cache(maxsize=1)
def _kernel_columns():
    from .estimation_features import feature_names

    return np.array([i for i, n in enumerate(feature_names()) if not n.startswith("morgan_")])


class DescriptorKernelRidge:
    """Kernel ridge regression of (dD, dP, dH) on the whole-molecule features.

    Features: every :func:`~selector.estimation_features.featurize` column except the hashed
    Morgan counts (RDKit descriptors, group counts, counts per volume, charge-dipole terms),
    each mapped by ``sign(x) * log(1 + |x|)`` and standardised on the training rows (constant
    columns dropped). Kernel: Gaussian, ``k(a, b) = exp(-|z_a - z_b|^2 / (w * m))`` with ``m``
    the median squared distance between training rows and ``w`` = ``width``. Fit: closed-form
    ``(K + alpha I) c = y - mean(y)``; prediction ``k(x, X_train) c + mean(y)`` (MPa^0.5).
    A smooth model beside the trees: the estimator uses its out-of-fold predictions as
    stacking features for the trees and blends its prediction into the final estimate.

    >>> import numpy as np
    >>> rng = np.random.RandomState(0)
    >>> X = rng.rand(40, len(_kernel_columns()) + 600)
    >>> Y = np.column_stack([X[:, 0], X[:, 1], X[:, 2]]) * 10
    >>> m = DescriptorKernelRidge().fit(X, Y)
    >>> bool(np.abs(m.predict(X) - Y).mean() < np.abs(Y - Y.mean(0)).mean())
    True
    """

    def __init__(self, width=KERNEL_WIDTH, alpha=KERNEL_ALPHA):
        self.width = width
        self.alpha = alpha

    @staticmethod
    def _logged(X):
        """The kernel's columns of ``X``, mapped by sign(x) log(1 + |x|)."""
        Z = np.asarray(X, float)[:, _kernel_columns()]
        return np.sign(Z) * np.log1p(np.abs(Z))

    def _z(self, X):
        return (self._logged(X)[:, self.keep_] - self.mu_) / self.sd_

    @staticmethod
    def _sqdist(A, B):
        return np.maximum((A * A).sum(1)[:, None] + (B * B).sum(1)[None, :] - 2.0 * A @ B.T, 0.0)

    def fit(self, X, Y):
        Z = self._logged(X)
        sd = Z.std(axis=0)
        self.keep_ = sd > 1e-9
        self.mu_ = Z[:, self.keep_].mean(axis=0)
        self.sd_ = sd[self.keep_]
        self.Z_ = (Z[:, self.keep_] - self.mu_) / self.sd_
        D2 = self._sqdist(self.Z_, self.Z_)
        self.scale_ = float(self.width) * max(float(np.median(D2)), 1e-9)
        Y = np.asarray(Y, float)
        self.y_mean_ = Y.mean(axis=0)
        K = np.exp(-D2 / self.scale_)
        K[np.diag_indices_from(K)] += float(self.alpha)
        self.coef_ = np.linalg.solve(K, Y - self.y_mean_)
        return self

    def predict(self, X):
        K = np.exp(-self._sqdist(self._z(X), self.Z_) / self.scale_)
        return K @ self.coef_ + self.y_mean_


def kernel_out_of_fold(X, Y, groups, n_splits=5, random_state=2, width=KERNEL_WIDTH, alpha=KERNEL_ALPHA):
    """Out-of-fold :class:`DescriptorKernelRidge` predictions (n, 3), folds grouped by ``groups``."""
    X, Y = np.asarray(X, float), np.asarray(Y, float)
    return _out_of_fold(lambda tr, te: DescriptorKernelRidge(width, alpha).fit(X[tr], Y[tr]).predict(X[te]),
                        len(X), groups, n_splits, random_state)
