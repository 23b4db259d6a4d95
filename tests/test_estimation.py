"""Tests of HSP / molar-volume estimation from SMILES (selector.estimation).

Check values come from outside the project: the published HSP tables carried by the
``chemicals`` library (source keys ALSHERI_HANSEN, MANUEL_RUBEN_2022), molar volumes from
``thermo`` (``thermo.Chemical(...).Vm`` at 25 C), RDKit's own parsing, and facts of the trade.
"""
from __future__ import annotations

import functools

import numpy as np
import pandas as pd
import pytest

from selector import estimation as E
from selector.errors import SelectorError
from selector.estimation_features import check_molecule

# ---------------------------------------------------------------------------------- helpers

ALLOWED = ("ALSHERI_HANSEN", "MANUEL_RUBEN_2022", "WDR_SCHRIER")


def published_hsp(cas):
    """HSP in MPa^0.5 from chemicals.solubility, first allowed source that has the compound
    (chemicals stores Pa^0.5)."""
    from chemicals import solubility as s

    for m in ALLOWED:
        if m in s.hansen_delta_d_methods(cas):
            return np.array([s.hansen_delta_d(cas, method=m), s.hansen_delta_p(cas, method=m),
                             s.hansen_delta_h(cas, method=m)]) / 1000.0
    raise LookupError(cas)


@functools.lru_cache(maxsize=1)
def training():
    df, mols = E._training_cached()
    X = np.nan_to_num(E.training_features(df, mols))
    return df, mols, X


# ---------------------------------------------------------------------------------- bad input

@pytest.mark.parametrize("smiles, words", [
    ("C1CC", "not a valid SMILES"),                 # unclosed ring: RDKit refuses to parse it
    ("", "empty"),
    ("[Na+].[Cl-]", "salt or a mixture"),           # sodium chloride, dot-separated ions
    ("CC(=O)[O-].[Na+]", "salt or a mixture"),      # sodium acetate
    ("CCO.O", "salt or a mixture"),                 # ethanol-water mixture
    ("CC[Sn](CC)(CC)CC", "Sn"),                     # tetraethyltin: a metal
    ("[Fe]", "Fe"),
    # ferrocene written as ions: a metal compound, so the metal is named (practitioner review)
    ("[CH-]1C=CC=C1.[CH-]1C=CC=C1.[Fe+2]", "contains Fe"),
    ("O=S=O", "no carbon"),                         # sulfur dioxide: inorganic
    ("C[N+](C)(C)C", "net charge +1"),              # tetramethylammonium cation
    ("CC(=O)[O-]", "net charge -1"),                # acetate anion
    ("*CC*", "polymer"),                            # polyethylene repeat unit
    ("*CC(*)c1ccccc1", "polymer"),                  # polystyrene repeat unit
    ("[CH3]", "radical"),                           # methyl radical
])
def test_refused_inputs_say_why(smiles, words):
    mol, why = check_molecule(smiles)
    assert mol is None
    assert words in why


def test_charge_separated_neutral_groups_are_accepted():
    # nitromethane is neutral although RDKit writes the nitro group with +/- charges
    mol, why = check_molecule("C[N+](=O)[O-]")
    assert mol is not None and why == ""


def test_single_bad_smiles_raises_selector_error():
    with pytest.raises(SelectorError, match="salt or a mixture"):
        E.estimate("[Na+].[Cl-]")
    with pytest.raises(SelectorError, match="not a valid SMILES"):
        E.estimate("C1CC")
    with pytest.raises(SelectorError, match="empty selection"):
        E.estimate([])
    with pytest.raises(SelectorError, match="file not found"):
        E.estimate("/no/such/file.csv")


def test_bad_training_input_is_refused():
    est = E.HSPEstimator(n_estimators=5)
    with pytest.raises(SelectorError, match="xx"):
        est.fit(["CCO"] * 9 + ["xx"], np.ones((10, 3)))
    with pytest.raises(SelectorError, match="NaN"):
        est.fit(["CCO"] * 10, np.full((10, 3), np.nan))
    with pytest.raises(SelectorError, match="shape"):
        est.fit(["CCO"] * 10, np.ones((10, 2)))
    with pytest.raises(SelectorError, match="not fitted"):
        E.HSPEstimator().predict(["CCO"])
    with pytest.raises(SelectorError, match=r"11 rows of y for 10 SMILES"):
        est.fit(["CCO"] * 10, np.ones((11, 3)))
    y = np.ones((10, 3))
    y[3, 1] = np.nan
    with pytest.raises(SelectorError, match=r"NaN or infinite values in row 3 "):
        est.fit(["CCO"] * 10, y)
    with pytest.raises(SelectorError, match=r"an \(n, 1\) array, got an array of shape \(2, 2\)"):
        est.fit(np.array([["CCO", "CCC"], ["CCO", "CCC"]]), np.ones((2, 3)))


def test_smiles_as_an_n_by_1_array():
    # the (n, 1) shape scikit-learn pipelines pass: read as one SMILES per row
    df, mols, X = training()
    sub = np.arange(0, len(df), 40)
    smi = df["smiles"].iloc[sub].to_numpy(object)
    est = E.HSPEstimator(n_estimators=4, calibration_folds=0, random_state=0)
    est.fit(smi[:, None], df[E.HSP_COLS].to_numpy(float)[sub])
    np.testing.assert_array_equal(est.predict(smi[:5, None]), est.predict(list(smi[:5])))
    res = E.estimate(np.array([["CCO"], ["O"]], dtype=object))     # ethanol, water: in the library
    assert list(res["matched_name"]) == ["ethanol", "water"]


def test_batch_survives_bad_rows_and_uses_library(tmp_path):
    # Water and ethanol are in the library: answered with the published values, no model needed
    res = E.estimate(["O", "CCO", "xx", "[Na+].[Cl-]", "*CC*"])
    assert list(res["source"]) == ["library", "library", "", "", ""]
    # published values of ethanol, chemicals.solubility (ALSHERI_HANSEN kept first)
    np.testing.assert_allclose(res.loc[1, E.HSP_COLS].to_numpy(float), published_hsp("64-17-5"), atol=1e-9)
    assert "not a valid SMILES" in res.loc[2, "message"]
    assert res.loc[2:, "delta_d"].isna().all()
    # the same with a CSV file, where the other spelling of ethanol is matched by canonical SMILES
    p = tmp_path / "batch.csv"
    p.write_text("name,smiles\nethanol,OCC\nbroken,C1CC\n", encoding="utf-8")
    res = E.estimate(str(p))
    assert list(res["name"]) == ["ethanol", "broken"]
    assert list(res["source"]) == ["library", ""]
    bad = tmp_path / "nosmiles.csv"
    bad.write_text("name\nx\n", encoding="utf-8")
    with pytest.raises(SelectorError, match="no 'smiles' column"):
        E.estimate(str(bad))


# ---------------------------------------------------------------------------------- sklearn protocol

def test_clone_params_and_determinism():
    from sklearn.base import clone

    df, mols, X = training()
    sub = np.arange(0, len(df), 5)[:200]
    smi = df["smiles"].iloc[sub].tolist()
    Y = df[E.HSP_COLS].to_numpy(float)[sub]
    new = np.arange(2, len(df), 50)[:20]           # rows not used for fitting
    est = E.HSPEstimator(n_estimators=8, calibration_folds=3, random_state=3)
    c = clone(est)
    assert c.get_params() == est.get_params() and not hasattr(c, "models_")
    newm = [mols[i] for i in new]
    a = est.fit(smi, Y, features=X[sub]).predict_interval(features=X[new], mols=newm)
    b = clone(est).fit(smi, Y, features=X[sub]).predict_interval(features=X[new], mols=newm)
    for u, v in zip(a, b):
        np.testing.assert_array_equal(u, v)       # same seed: identical results
    other = clone(est).set_params(random_state=4).fit(smi, Y, features=X[sub]).predict_interval(
        features=X[new], mols=newm)
    assert not np.array_equal(a[0], other[0])     # another seed: other trees
    assert np.all(a[1] <= a[0]) and np.all(a[0] <= a[2])
    with pytest.raises(ValueError, match="invalid parameter"):
        est.set_params(depth=3)


# ---------------------------------------------------------------------------------- accuracy

@pytest.fixture(scope="module")
def reduced_cv():
    """Reduced model (25 trees), 5-fold CV grouped by Murcko scaffold, seed 0."""
    from selector.train_estimator import cross_conformal_coverage, cross_validate

    df, mols, X = training()
    Y = df[E.HSP_COLS].to_numpy(float)
    groups = E.scaffold_groups(mols, df["smiles"].tolist())
    est = E.HSPEstimator(n_estimators=25, random_state=0, n_jobs=-1)
    P, S, fold_of = cross_validate(X, Y, groups, est, 5, 0, mols=mols)
    cov, _ = cross_conformal_coverage(Y, P, S, fold_of, 0.9)
    return Y, P, cov


def test_scaffold_cv_accuracy_has_not_regressed(reduced_cv):
    Y, P, cov = reduced_cv
    mae = np.abs(P - Y).mean(axis=0)
    # Regression guard of the reduced model (25 trees; the full 150-tree model measures
    # 0.54 / 1.53 / 1.28 MPa^0.5, parameters/estimator_accuracy.md). The reduced model measured
    # 0.56 / 1.58 / 1.32 when these limits were set (tree seed 1 instead of 0 gave
    # 0.56 / 1.56 / 1.31); margin 0.04 / 0.06 / 0.06 MPa^0.5 above the seed-0 run, so a
    # regression of more than about 4 % fails. The limits also stay below the untuned
    # extra-trees reference (0.72 / 1.66 / 1.53) plus that margin.
    assert mae[0] <= 0.56 + 0.04
    assert mae[1] <= 1.58 + 0.06
    assert mae[2] <= 1.32 + 0.06
    # and far better than knowing only the mean of the published table (common practice check)
    naive = np.abs(Y - Y.mean(axis=0)).mean(axis=0)
    assert np.all(mae < 0.6 * naive)


def test_intervals_cover_about_90_percent_out_of_fold(reduced_cv):
    _, _, cov = reduced_cv
    # the requirement: 90 % intervals cover 85-95 % of held-out values
    assert np.all((cov >= 0.85) & (cov <= 0.95)), cov


#: held out by the two stage tests: two n-alkanes and two 1-alkanols (SMILES, CAS)
_STAGE_TEST = {"hexane": ("CCCCCC", "110-54-3"), "octane": ("CCCCCCCC", "111-65-9"),
               "1-propanol": ("CCCO", "71-23-8"), "1-hexanol": ("CCCCCCO", "111-27-3")}


def _without_alkanes_and_alcohols():
    """Training table with the :data:`_STAGE_TEST` compounds marked out (``keep`` False)."""
    from rdkit import Chem

    df, mols, X = training()
    Y = df[E.HSP_COLS].to_numpy(float)
    can = {Chem.CanonSmiles(s) for s, _ in _STAGE_TEST.values()}
    keep = ~df["smiles"].isin(can).to_numpy()
    assert keep.sum() == len(df) - len(_STAGE_TEST)
    return df, mols, X, Y, _STAGE_TEST, keep


def _check_alkanes_and_alcohols(pred):
    """Held-out predictions against the published values (chemicals.solubility) and the facts
    of the trade in the stage tests' docstrings."""
    truth = np.array([published_hsp(cas) for _, cas in _STAGE_TEST.values()])
    assert np.all(pred[:2, 1:] < 1.5), pred[:2]                 # alkanes: dP, dH near zero
    assert np.all(np.abs(pred[:, 0] - truth[:, 0]) < 1.0), (pred, truth)   # dD within 1 MPa^0.5
    assert pred[2, 2] > pred[3, 2] + 2.0                         # propanol dH well above hexanol's
    assert np.all(np.abs(pred[2:, 2] - truth[2:, 2]) < 2.5), (pred, truth)


def test_group_energy_stage_on_alkanes_and_alcohols():
    """The ridge stage alone (extensive energies on group counts, McGowan volume), fitted
    without the test compounds: n-alkanes have no polar or hydrogen-bonding cohesion (dP = dH =
    0 in the published tables, common practice), and alcohol dH falls with chain length as the
    one OH group is diluted by CH2 volume (published values from chemicals.solubility)."""
    from rdkit import Chem

    from selector.estimation_linear import GroupEnergyRidge, fragment_counts

    df, mols, X, Y, test, keep = _without_alkanes_and_alcohols()
    counts = fragment_counts(mols)
    model = GroupEnergyRidge().fit([c for c, k in zip(counts, keep) if k], X[keep], Y[keep])
    from selector.estimation_features import featurize

    tm = [Chem.MolFromSmiles(s) for s, _ in test.values()]
    pred = model.predict(fragment_counts(tm), featurize(tm))
    _check_alkanes_and_alcohols(pred)


def test_kernel_ridge_stage_on_alkanes_and_alcohols():
    """The kernel ridge stage alone, fitted without the test compounds: n-alkanes have no polar
    or hydrogen-bonding cohesion (dP = dH = 0 in the published tables, common practice), and
    alcohol dH falls with chain length (published values from chemicals.solubility)."""
    from rdkit import Chem

    from selector.estimation_features import featurize
    from selector.estimation_linear import DescriptorKernelRidge

    df, mols, X, Y, test, keep = _without_alkanes_and_alcohols()
    model = DescriptorKernelRidge().fit(X[keep], Y[keep])
    pred = model.predict(np.nan_to_num(featurize([Chem.MolFromSmiles(s) for s, _ in test.values()])))
    _check_alkanes_and_alcohols(pred)


def test_kernel_stacking_features_are_out_of_fold():
    """A training row's kernel stacking feature must not see that row's own target: changing
    the published values of one row leaves its out-of-fold prediction unchanged (and moves
    the prediction of rows in other folds, so the check can fail)."""
    from selector.estimation_linear import kernel_out_of_fold

    df, mols, X = training()
    Y = df[E.HSP_COLS].to_numpy(float)
    groups = E.scaffold_groups(mols, df["smiles"].tolist())
    base = kernel_out_of_fold(X, Y, groups, 5, 2)
    i = int(np.flatnonzero(df["smiles"].to_numpy() == Chem_canon("CC(C)=O"))[0])   # acetone
    Y2 = Y.copy()
    Y2[i] += 10.0
    moved = kernel_out_of_fold(X, Y2, groups, 5, 2)
    np.testing.assert_allclose(moved[i], base[i], atol=1e-9)
    assert np.abs(moved - base).max() > 1e-3
    with pytest.raises(SelectorError, match="kernel_weight"):
        E.HSPEstimator(kernel_weight=1.5).fit(df["smiles"][:20].tolist(), Y[:20])


def test_energy_targets_scale_by_the_mcgowan_volume():
    """The dP and dH trees learn delta * sqrt(V_x / 100): for n-hexane the McGowan volume is
    V_x = 0.954 (100 cm^3/mol) (Abraham and McGowan, Chromatographia 23 (1987) 243; from
    memory), so the factor is sqrt(0.954) for dP and dH and 1 for dD (energy_targets default)."""
    from rdkit import Chem

    from selector.estimation_features import featurize

    f = E.HSPEstimator()._energy_scale(featurize([Chem.MolFromSmiles("CCCCCC")]))[0]
    np.testing.assert_allclose(f, [1.0, np.sqrt(0.954), np.sqrt(0.954)], atol=0.005)
    f_off = E.HSPEstimator(energy_targets=False)._energy_scale(featurize([Chem.MolFromSmiles("CCCCCC")]))
    np.testing.assert_array_equal(f_off, np.ones((1, 3)))


def Chem_canon(smiles):
    from rdkit import Chem

    return Chem.CanonSmiles(smiles)


HELD_OUT = {  # CAS of common liquids, values checked against chemicals.solubility
    "toluene": "108-88-3",
    "acetone": "67-64-1",
    "ethyl acetate": "141-78-6",
    "1-butanol": "71-36-3",
    "cyclohexanone": "108-94-1",
    "dichloromethane": "75-09-2",
}
HELD_SMILES = {"toluene": "Cc1ccccc1", "acetone": "CC(C)=O", "ethyl acetate": "CCOC(C)=O",
               "1-butanol": "CCCCO", "cyclohexanone": "O=C1CCCCC1", "dichloromethane": "ClCCl"}


def test_held_out_liquids_within_their_intervals():
    from rdkit import Chem

    df, mols, X = training()
    held = {Chem.CanonSmiles(s) for s in HELD_SMILES.values()}
    keep = ~df["smiles"].isin(held).to_numpy()
    assert keep.sum() == len(df) - len(held)       # all six are in the published tables
    est = E.HSPEstimator(n_estimators=40, calibration_folds=3, random_state=0, n_jobs=-1)
    est.fit(df["smiles"][keep].tolist(), df[E.HSP_COLS].to_numpy(float)[keep], features=X[keep])
    pred, low, high = est.predict_interval(list(HELD_SMILES.values()))
    truth = np.array([published_hsp(HELD_OUT[n]) for n in HELD_SMILES])
    inside = (truth >= low) & (truth <= high)
    # 18 values with 90 % intervals: expect about 16 inside; at least 15 must be
    assert inside.sum() >= 15, (inside, pred, truth)
    # the estimates are close in Hansen distance (Ra^2 = 4 dD^2 + dP^2 + dH^2) to the published point
    ra = np.sqrt(4 * (pred[:, 0] - truth[:, 0]) ** 2 + ((pred[:, 1:] - truth[:, 1:]) ** 2).sum(axis=1))
    assert np.median(ra) < 3.5, ra


def test_held_out_molar_volumes_against_thermo():
    import thermo
    from rdkit import Chem

    vm, vv, names = E.library_volume_table()
    held = {Chem.CanonSmiles(s) for s in HELD_SMILES.values()}
    can = [Chem.MolToSmiles(m) for m in vm]
    keep = [i for i, c in enumerate(can) if c not in held]
    assert len(keep) == len(vm) - len(held)
    model = E.MolarVolumeModel().fit([vm[i] for i in keep], vv[keep])
    # the shipped 90 % interval factor (out-of-fold calibrated by selector.train_estimator)
    lf = E.load_calibration()["volume_log_factor"]
    rel = []
    for name, smi in HELD_SMILES.items():
        pred = model.predict([Chem.MolFromSmiles(smi)])[0]
        # liquid molar volume at 25 C from thermo (cm3/mol)
        ref = thermo.Chemical(HELD_OUT[name], T=298.15).Vm * 1e6
        assert pred * np.exp(-lf) <= ref <= pred * np.exp(lf), (name, pred, ref)
        rel.append(abs(pred - ref) / ref)
    assert np.median(rel) < 0.05, rel


# ---------------------------------------------------------------------------------- public API

def test_estimate_new_molecule_and_use_it_everywhere():
    from selector.ranking import rank
    from selector.targets import as_target

    # di-tert-butyl succinate: not in the library
    smi = "CC(C)(C)OC(=O)CCC(=O)OC(C)(C)C"
    res = E.estimate([smi, "CCO"], names=["dtb succinate", "ethanol"])
    row = res.iloc[0]
    assert row["source"] == "estimated" and res.iloc[1]["source"] == "library"
    for c in E.OUT_COLS:
        assert row[c + "_low"] <= row[c] <= row[c + "_high"]
    # an aliphatic diester: dD in the usual range of esters (15-17.5, common practice), small dH
    assert 14.5 < row["delta_d"] < 18.0
    assert row["delta_h"] < 10
    assert "(" in row["nearest"] and row["similarity"] > 0
    assert bool(row["in_domain"]) == ("outside the applicability domain" not in row["message"])
    if row["similarity"] < E.DOMAIN_THRESHOLD:
        assert not row["in_domain"]
    # a C40 fatty acid looks like stearic acid to the fingerprint but is twice its size: flagged
    big = E.estimate("C" * 39 + "C(=O)O")
    assert not big.loc[0, "in_domain"] and "heavy atoms" in big.loc[0, "message"]
    rows = E.as_library_rows(res)
    assert list(rows["origin"]) == ["estimated"] and rows.loc[0, "name"] == "dtb succinate"
    from selector.library import load_library

    lib = E.merge_estimates(load_library(), rows)
    ranked = rank((row["delta_d"], row["delta_p"], row["delta_h"], 4.0), library=lib)
    assert ranked.iloc[0]["name"] == "dtb succinate"  # distance zero to itself
    t = as_target(rows.iloc[0])
    assert t.delta_d == pytest.approx(row["delta_d"])


def test_cli_guess(capsys, tmp_path):
    from selector.cli import main

    assert main(["guess", "CCO"]) == 0
    out = capsys.readouterr().out
    assert "library" in out and "safety data sheet" in out
    assert main(["guess", "[Na+].[Cl-]"]) == 2
    assert "salt or a mixture" in capsys.readouterr().err
    p = tmp_path / "in.csv"
    p.write_text("smiles\nCCO\nnot-a-smiles\n", encoding="utf-8")
    assert main(["guess", str(p), "--format", "csv", "-o", str(tmp_path / "out.csv")]) == 1   # a row could not be estimated
    out = pd.read_csv(tmp_path / "out.csv")
    assert list(out["source"].fillna("")) == ["library", ""]
    # saving an estimate to the user's own liquids, then ranking with it
    mine = tmp_path / "mine.csv"
    mine.write_text("name,delta_d,delta_p,delta_h\nkeep me,16,5,5\n", encoding="utf-8")
    assert main(["guess", "CC(C)(C)OC(=O)CCC(=O)OC(C)(C)C", "--name", "dtb succinate",
                 "--save-mine", str(mine)]) == 0
    saved = pd.read_csv(mine)
    assert list(saved["name"]) == ["keep me", "dtb succinate"]   # the old row is kept
    assert saved.loc[1, "hsp_source"].startswith("estimated")
    capsys.readouterr()
    assert main(["rank", "16,5,5,4", "--mine", str(mine), "--format", "csv", "--top", "900"]) == 0
    assert "dtb succinate" in capsys.readouterr().out


def test_works_inside_scikit_learn_cross_validation():
    from sklearn.base import is_regressor
    from sklearn.model_selection import GroupKFold, cross_val_score

    df, mols, _ = training()
    sub = np.arange(0, len(df), 4)
    Y = df[E.HSP_COLS].to_numpy(float)[sub]
    est = E.HSPEstimator(n_estimators=10, calibration_folds=0)
    assert is_regressor(est)
    scores = cross_val_score(est, df["smiles"].iloc[sub].tolist(), Y, cv=GroupKFold(3),
                             groups=E.scaffold_groups([mols[i] for i in sub]))
    # score = -MAE; must beat predicting the mean of the published values (common practice check)
    assert np.all(np.isfinite(scores))
    assert -scores.mean() < 0.7 * np.abs(Y - Y.mean(axis=0)).mean()


# ---------------------------------------------------------------------------------- matching rules

def test_published_table_compound_is_answered_with_the_published_value():
    # benzamide is in the published training table but not in the solvent library
    res = E.estimate(["c1ccccc1C(=O)N", "CCO"])
    row = res.iloc[0]
    assert row["source"] == "published" and row["hsp_source"] == "ALSHERI_HANSEN"
    assert row["matched_name"] == "benzamide"
    # published values, chemicals.solubility (ALSHERI_HANSEN kept first)
    np.testing.assert_allclose(row[E.HSP_COLS].to_numpy(float), published_hsp("55-21-0"), atol=1e-9)
    assert all(np.isnan(row[c + s]) for c in E.HSP_COLS for s in ("_low", "_high"))   # not an estimate
    assert row["molar_volume_low"] < row["molar_volume"] < row["molar_volume_high"]   # the volume is
    assert "molar volume estimated" in row["message"] and "ALSHERI_HANSEN" in row["message"]
    rows = E.as_library_rows(res)
    assert rows[["name", "origin", "hsp_source"]].iloc[0].tolist() == ["benzamide", "published", "ALSHERI_HANSEN"]
    assert bool(rows.loc[0, "molar_volume_estimated"]) and len(rows) == 1     # ethanol: library, dropped


def test_isotopologues_are_answered_as_their_parent():
    from selector.library import load_library

    lib = load_library()
    res = E.estimate(["[2H]C(Cl)(Cl)Cl", "[2H]C([2H])([2H])O"])
    assert list(res["matched_name"]) == ["chloroform", "methanol"] and set(res["source"]) == {"library"}
    # the parents' values in the library (parameters/liquids.csv): V of methanol about 40.7 cm3/mol
    for i, name in enumerate(["chloroform", "methanol"]):
        ref = lib.loc[lib.name == name].iloc[0]
        np.testing.assert_allclose(res.loc[i, E.OUT_COLS].to_numpy(float), ref[E.OUT_COLS].to_numpy(float))
        assert "isotope labels removed" in res.loc[i, "message"]
    # an estimated molecule and its deuterated form get the same estimate (common practice: an
    # isotopologue's HSP and molar volume are close to the parent's)
    smi = "CC(C)(C)OC(=O)CCC(=O)OC(C)(C)C"
    pair = E.estimate([smi, smi.replace("CCC(=O)", "C([2H])([2H])CC(=O)", 1)])
    np.testing.assert_allclose(pair.loc[0, E.OUT_COLS].to_numpy(float), pair.loc[1, E.OUT_COLS].to_numpy(float))
    assert pair.loc[1, "duplicate_of"] == 1


def test_stereo_free_match_names_the_compound():
    # (S)-1,2-propanediol: the library has 1,2-propanediol without stereo (parameters/liquids.csv)
    res = E.estimate("C[C@H](O)CO")
    assert res.loc[0, "source"] == "library" and res.loc[0, "matched_name"] == "1,2-propanediol"
    assert "without stereo as 1,2-propanediol" in res.loc[0, "message"]


def test_save_mine_skips_rows_that_cannot_be_user_liquids(tmp_path, capsys):
    from selector.cli import main

    batch = tmp_path / "batch.csv"
    batch.write_text("name,smiles\ndtb succinate,CC(C)(C)OC(=O)CCC(=O)OC(C)(C)C\nC300 alkane," + "C" * 300 +
                     "\ndtb again,O=C(OC(C)(C)C)CCC(=O)OC(C)(C)C\n,c1ccccc1C(=O)N\n", encoding="utf-8")
    mine = tmp_path / "mine.csv"
    mine.write_text("name,delta_d,delta_p,delta_h\nkeep me,16,5,5\n", encoding="utf-8")
    capsys.readouterr()
    assert main(["guess", str(batch), "--save-mine", str(mine), "--format", "csv"]) == 1
    cap = capsys.readouterr()
    out = pd.read_csv(__import__("io").StringIO(cap.out))
    # the third row is the first molecule written another way (same canonical SMILES, RDKit)
    assert out.loc[2, "duplicate_of"] == 1 and "same molecule as row 1 (dtb succinate)" in out.loc[2, "message"]
    saved = pd.read_csv(mine)
    assert list(saved["name"]) == ["keep me", "dtb succinate", "benzamide"]     # saved once, old row kept
    assert list(saved["origin"].fillna("")) == ["", "estimated", "published"]
    # a C300 alkane is far above the 5000 cm3/mol the user-liquid check allows (selector.library.RANGES)
    assert "row 2 (C300 alkane): molar_volume = " in cap.err and "outside 5..5000" in cap.err
    assert "saved 2 rows" in cap.err and "skipped 1 row " in cap.err and "1 repeated molecule" in cap.err
    assert "replaced" not in cap.err              # the first save replaced nothing
    # saving again replaces the rows of the same name and says so
    assert main(["guess", str(batch), "--save-mine", str(mine)]) == 1
    assert "replaced 2 earlier rows of the same name: dtb succinate, benzamide" in capsys.readouterr().err
    assert list(pd.read_csv(mine)["name"]) == ["keep me", "dtb succinate", "benzamide"]


def test_guess_prints_intervals_to_the_precision_of_the_values(tmp_path, capsys):
    import re

    from selector.cli import main

    smi = "CC(C)(C)OC(=O)CCC(=O)OC(C)(C)C"
    mine = tmp_path / "mine.csv"
    assert main(["guess", smi, "--long", "--name", "dtb succinate", "--save-mine", str(mine)]) == 0
    cap = capsys.readouterr()
    lines = {ln.split()[0]: ln for ln in cap.out.splitlines() if ln.strip()}
    # one value per line; HSP to 0.01 MPa^0.5 and the volume to 0.1 cm3/mol, intervals likewise
    assert re.fullmatch(r"delta_p\s+\d+\.\d\d MPa\^0\.5\s+90 % interval \d+\.\d\d \.\. \d+\.\d\d", lines["delta_p"])
    assert re.fullmatch(r"molar_volume\s+\d+\.\d cm3/mol\s+90 % interval \d+\.\d \.\. \d+\.\d",
                        lines["molar_volume"])
    assert lines["name"].split(None, 1)[1] == "dtb succinate"
    assert f"saved 1 row to {mine} (1 estimated)" in cap.err
    # the batch table (--long): intervals as text with the digits of their value
    from selector.cli_estimate import GUESS_COLUMNS, _shown

    shown = _shown(E.estimate([smi, "CCO"]), GUESS_COLUMNS)
    assert re.fullmatch(r"\d+\.\d", shown.loc[0, "molar_volume_low"])
    assert re.fullmatch(r"\d+\.\d\d", shown.loc[0, "delta_d_high"])
    assert shown.loc[1, "delta_d_low"] == "-"          # ethanol: library value, no interval


def test_ions_and_salts_are_never_matched_to_their_neutral_parent():
    from rdkit import Chem

    # RDKit's InChIKey: the first block of acetate equals acetic acid's (protonation is in the
    # last character, -M against -N), which is why a first-block match alone let ions through
    keys = [E._key_of(Chem.MolFromSmiles(s)) for s in ("CC(=O)[O-]", "CC(=O)O")]
    assert keys[0].split("-")[0] == keys[1].split("-")[0] and keys[0][-1] == "M" and keys[1][-1] == "N"
    # ions and salts are refused with check_molecule's reasons, not answered as the neutral acid/amine
    with pytest.raises(SelectorError, match=r"net charge -1: ions are not supported"):
        E.estimate("CC(=O)[O-]")
    with pytest.raises(SelectorError, match=r"net charge \+1: ions are not supported"):
        E.estimate("C[NH3+]")              # methylamine is in the published table
    with pytest.raises(SelectorError, match="several disconnected parts"):
        E.estimate("CC(=O)[O-].[Na+]")
    res = E.estimate(["CC(=O)[O-]", "C[NH3+]", "CC(=O)[O-].[Na+]", "C[C@H](O)CO", "O"])
    assert list(res["source"]) == ["", "", "", "library", "library"]
    assert res["delta_d"].iloc[:3].isna().all() and res["matched_name"].iloc[:3].eq("").all()
    assert res.loc[0, "message"].startswith("net charge -1") and res.loc[1, "message"].startswith("net charge +1")
    # stereo-free matching still works for neutral molecules, and a molecule the model refuses
    # is still answered by an exact library match (water: parameters/liquids.csv)
    assert list(res["matched_name"].iloc[3:]) == ["1,2-propanediol", "water"]


def test_a_refused_ion_does_not_sink_a_batch(tmp_path, capsys):
    import io

    from selector.cli import main

    batch = tmp_path / "batch.csv"
    batch.write_text("smiles\nC[NH3+]\nCCO\n", encoding="utf-8")
    capsys.readouterr()
    assert main(["guess", str(batch), "--format", "csv"]) == 1   # one row refused, the other answered
    cap = capsys.readouterr()
    out = pd.read_csv(io.StringIO(cap.out))
    assert out.loc[0, "smiles"] == "C[NH3+]" and out.loc[0, "message"].startswith("net charge +1")
    # ethanol's library values (parameters/liquids.csv, from chemicals: ALSHERI_HANSEN 15.8, 8.8, 19.4)
    assert out.loc[1, "source"] == "library" and out.loc[1, ["delta_d", "delta_p", "delta_h"]].tolist() == [15.8, 8.8, 19.4]
    assert "1 of 2 rows could not be estimated" in cap.err


def test_an_estimate_is_not_saved_under_a_library_liquid_of_another_structure(tmp_path, capsys):
    # crash hunt: nonyl acetate saved as "toluene" took toluene's CAS, boiling point and hazard
    # data (the merge fills what the row leaves empty) under nonyl acetate's HSP
    from selector.cli import main

    mine = tmp_path / "mine.csv"
    assert main(["guess", "CCCCCCCCCOC(=O)C", "--name", "toluene", "--save-mine", str(mine)]) == 1
    err = capsys.readouterr().err
    assert "the name 'toluene' is a library liquid of another structure" in err and not mine.exists()
