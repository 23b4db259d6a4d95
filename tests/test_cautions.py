"""Reagents that are not solvents, and liquids that do not burn (selector.cautions)."""
import numpy as np
import pytest

import selector
from selector.cautions import not_flammable, reactive_reason, reactive_reasons
from selector.filters import filter_mask

LIB = selector.load_library()


def _reason(name):
    i = selector.library.locate(name, LIB)
    return reactive_reasons(LIB)[i]


# Common practice: these are reagents (react with water, explode, alkylate), never solvents.
@pytest.mark.parametrize("name, kind", [
    ("acetyl chloride", "acyl halide"), ("methyl isocyanate", "isocyanate"),
    ("nitroglycerin", "nitrate"), ("hydrazine", "inorganic"), ("bis(chloromethyl) ether", "halo ether"),
    ("2-methylaziridine", "aziridine"), ("epichlorohydrin", "epoxide"), ("thionyl chloride", "inorganic"),
    ("dimethyl sulfate", "sulfate"), ("3-bromopropyne", "propargyl"), ("1,2-ethanedithiol", "thiol"),
])
def test_reagents_are_flagged(name, kind):
    assert kind in _reason(name)


def test_very_low_exposure_limit_is_flagged():
    # chloropicrin: TWA 0.1 ppm and benzene 0.5 ppm (chemicals' exposure-limit data, via the library)
    assert _reason("chloropicrin").startswith("exposure limit 0.1 ppm")
    assert _reason("benzene").startswith("exposure limit 0.5 ppm")


@pytest.mark.parametrize("name", ["toluene", "acetone", "ethanol", "ethyl acetate", "NMP", "DMSO", "water",
                                  "hexane", "dibutyl phthalate", "nitromethane", "butyl acrylate",
                                  "propylene carbonate", "dichloromethane"])
def test_ordinary_solvents_are_not_flagged(name):
    # Common practice: all of these are used as solvents (dibutyl phthalate has a low ppm limit
    # but hardly any vapour, so the exposure rule does not apply).
    assert _reason(name) == ""


def test_reagents_never_candidates_unless_asked():
    flagged = reactive_reasons(LIB) != ""
    assert 50 < flagged.sum() < 150
    assert not (filter_mask(LIB) & flagged).any()
    assert filter_mask(LIB, include_reactive=True).all()
    # rank: the same order, the reagents dropped
    target = (17.0, 11.0, 6.0, 8.0)
    every = selector.rank(target, include_reactive=True)
    some = selector.rank(target)
    assert len(some) == len(every) - flagged.sum()
    keep = every[~every["name"].isin(LIB.loc[flagged, "name"])]["name"].tolist()
    assert some["name"].tolist() == keep
    # a reagent can still be a target and be looked up
    assert selector.rank("acetyl chloride").iloc[0]["name"] != "acetyl chloride"


def test_single_smiles_helper_matches_the_table():
    assert reactive_reason("CC(=O)Cl").startswith("acyl halide")
    assert reactive_reason("CCOC(C)=O") == ""
    assert reactive_reason("O") == ""                      # water
    assert reactive_reason("BrBr") == "inorganic reagent"
    # the exposure rule needs some vapour: a phthalate-like 0.3 ppm limit at 1e-5 kPa is no flag
    assert reactive_reason("CCCCOC(=O)c1ccccc1C(=O)OCCCC", 0.3, 1e-5) == ""
    assert reactive_reason("CCCCOC(=O)c1ccccc1C(=O)OCCCC", 0.3, 1.0).startswith("exposure limit")


def test_non_flammable_liquids_pass_flash_point_minimum():
    # Common practice: water, dichloromethane, chloroform and carbon tetrachloride have no flash
    # point (parameters/hazards.csv marks them "none", from memory; SDS to confirm).
    nf = not_flammable(LIB)
    names = set(LIB.loc[nf, "name"])
    assert {"water", "dichloromethane", "chloroform", "carbon tetrachloride"} <= names
    assert np.isnan(LIB.loc[nf, "flash_point_c"].to_numpy(float)).all()
    m = filter_mask(LIB, min_flash_point_c=60)
    water = selector.library.locate("water", LIB)
    assert m[water]
    # a liquid with no flash-point data that is not known to be non-flammable still fails
    unknown = np.isnan(LIB["flash_point_c"].to_numpy(float)) & ~nf
    assert unknown.any() and not (m & unknown).any()
    # a window with an upper end is a statement about burning liquids: non-flammable ones fail
    assert not filter_mask(LIB, flash_point_c=(23, 60))[water]
    assert filter_mask(LIB, flash_point_c=(23, None))[water]


def test_cli_include_reactive(capsys):
    from selector.cli import main

    assert main(["rank", "21.3,5.8,4.3,12.7", "--format", "json"]) == 0
    n_default = len(__import__("json").loads(capsys.readouterr().out))
    assert main(["rank", "21.3,5.8,4.3,12.7", "--format", "json", "--include-reactive", "--top", "1000"]) == 0
    rows = __import__("json").loads(capsys.readouterr().out)
    assert len(rows) == len(LIB)
    assert n_default == 20
    assert main(["rank", "21.3,5.8,4.3,12.7"]) == 0
    assert f"{int((reactive_reasons(LIB) != '').sum())} reagents" in capsys.readouterr().out
