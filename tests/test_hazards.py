"""CHEM21 hazard scores and classes, the bundled GHS statement table and the hazard filter."""
from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

import selector
from selector.errors import SelectorError
from selector.filters import filter_mask
from selector.hazards import (HAZARD_CLASSES, combine, environment_score, hazard_columns,
                              hazard_statements, health_score, parse_statements, safety_score)

# Ranking by default of the CHEM21 guide (Prat et al., Green Chem. 18 (2016) 288-296, tables of
# classical solvents; quoted from memory). "highly hazardous" is the guide's ranking after
# discussion for benzene, diethyl ether and chloroform (from memory).
PUBLISHED = {
    "water": "recommended",
    "ethanol": "recommended",
    "2-propanol": "recommended",
    "1-butanol": "recommended",
    "ethyl acetate": "recommended",
    "butyl acetate": "recommended",
    "anisole": "recommended",
    "toluene": "problematic",
    "cyclohexane": "problematic",
    "heptane": "problematic",
    "2-methyltetrahydrofuran": "problematic",
    "tetrahydrofuran": "problematic",
    "dichloromethane": "hazardous",
    "hexane": "hazardous",
    "1-methyl-2-pyrrolidinone": "hazardous",
    "n,n-dimethylformamide": "hazardous",
    "n,n-dimethylacetamide": "hazardous",
    "benzene": "highly hazardous",
    "diethyl ether": "highly hazardous",
    "chloroform": "highly hazardous",
}

# Individual scores (safety, health, environment) printed in the CHEM21 guide, from memory.
PUBLISHED_SCORES = {
    "ethanol": (4, 3, 3),
    "ethyl acetate": (5, 3, 3),
    "toluene": (5, 6, 3),
    "dichloromethane": (1, 7, 7),
    "acetone": (5, 3, 5),
    "methanol": (4, 7, 5),
    "tetrahydrofuran": (6, 7, 5),
    "water": (1, 1, 1),
    # the checks behind the health rows (selector.hazards module doc): 2-MeTHF 5 (H318 at 4),
    # formic acid 7 (H314 at 7)
    "2-methyltetrahydrofuran": (6, 5, 3),
    "formic acid": (3, 7, 3),
}


@pytest.mark.parametrize("name,cls", sorted(PUBLISHED.items()))
def test_class_matches_published_guide(name, cls):
    assert selector.hazard(name).hazard_class == cls


# Rankings the guide revised after discussion (its final table, from memory): (final, default).
# The default is what the scores above give; the final class is what a user sees.
REVISED = {
    "methanol": ("recommended", "problematic"),
    "acetone": ("recommended", "problematic"),
    "pyridine": ("hazardous", "recommended"),
    "1,4-dioxane": ("hazardous", "problematic"),
    "triethylamine": ("hazardous", "problematic"),
    "acetonitrile": ("problematic", "recommended"),
    "dimethyl sulfoxide": ("problematic", "recommended"),
}


@pytest.mark.parametrize("name,classes", sorted(REVISED.items()))
def test_class_after_discussion_keeps_the_default_beside_it(name, classes):
    r = selector.hazard(name)
    assert (r.hazard_class, r.hazard_class_default) == classes


def test_revision_applies_only_to_the_guide_default_it_revises(tmp_path):
    # a user row with acetonitrile's CAS but a boiling point of 20 C and a flash point of -50 C
    # scores worse than the guide's default for acetonitrile: its own computed class stands (a
    # revision must never make such a row look better)
    lib = selector.library.merge_user_liquids(selector.load_library(), pd.DataFrame({
        "name": ["my nitrile"], "cas": ["75-05-8"], "delta_d": [15.3], "delta_p": [18.0], "delta_h": [6.1],
        "boiling_point_c": [20.0], "flash_point_c": [-50.0]}))
    r = selector.hazard("my nitrile", lib)
    assert r.hazard_class == r.hazard_class_default != "recommended"


def test_revised_classes_reach_substitutes():
    # pyridine (hazardous after discussion; exposure limit 1 ppm, from memory) is no longer offered
    # as a safer replacement for toluene (problematic)
    from selector.blends import substitutes

    subs = substitutes("toluene", solute=(17.9, 6.1, 6.4, 8.6), max_components=1, top=15)
    names = {c for comps in subs["components"] for c in comps}
    assert len(subs) > 5 and "pyridine" not in names


def test_published_examples_cover_each_class():
    counts = pd.Series(list(PUBLISHED.values())).value_counts()
    assert counts["recommended"] >= 2 and counts["problematic"] >= 2 and counts["hazardous"] >= 2


@pytest.mark.parametrize("name,scores", sorted(PUBLISHED_SCORES.items()))
def test_scores_match_published_guide(name, scores):
    r = selector.hazard(name)
    assert (r.safety_score, r.health_score, r.environment_score) == scores


def test_safety_table_thresholds():
    # CHEM21 safety table (from memory): FP > 60 -> 1, 23..60 -> 3, 0..22 -> 4, -20..-1 -> 5, < -20 -> 7
    fp = [61, 60, 23, 22, 0, -1, -20, -21, np.nan]
    assert safety_score(fp).tolist() == [1, 3, 3, 4, 4, 5, 5, 7, 1]
    # +1 each for AIT < 200 C, peroxide former, high resistivity, decomposition energy; capped at 10
    assert safety_score([-45.0], [150.0], [True], [True], [True]).tolist() == [10]
    assert safety_score([30.0], [150.0]).tolist() == [4]


def test_health_and_environment_tables():
    # CMR category 1 scores 9, category 2 scores 6 (CHEM21, from memory); +1 below bp 85 C
    assert health_score(("H360D",), 150.0) == 9
    assert health_score(("H351",), 150.0) == 6
    assert health_score(("H351",), 40.0) == 7
    assert health_score((), 150.0) == 1
    assert health_score(("H318",), 120.0) == 4
    # boiling point bands and aquatic statements
    assert environment_score((), 100.0) == 3
    assert environment_score((), 60.0) == 5
    assert environment_score((), 180.0) == 5
    assert environment_score((), 40.0) == 7
    assert environment_score((), 250.0) == 7
    assert environment_score(("H412",), 100.0) == 5
    assert environment_score(("H410",), 100.0) == 7
    assert environment_score(("EUH420",), 100.0) == 10


def test_combination_rules():
    # one score >= 8 or two red (>= 7) -> hazardous; one 7 or two yellow (4-6) -> problematic
    assert combine([8, 1, 1], [1, 7, 3], [1, 7, 3]).tolist() == ["hazardous", "hazardous", "recommended"]
    assert combine([7, 4, 4], [1, 5, 1], [1, 1, 3]).tolist() == ["problematic", "problematic", "recommended"]


def test_liquid_without_data_is_unclassified_not_safe():
    lib = selector.load_library()
    hz = hazard_columns(lib)
    st = hazard_statements()
    missing = ~lib["cas"].isin(st["cas"])
    assert missing.any()
    assert (hz.loc[missing, "hazard_class"] == "unclassified").all()
    assert hz.loc[missing, "hazard_rank"].isna().all()
    name = lib.loc[missing, "name"].iloc[0]
    r = selector.hazard(name)
    assert r.hazard_class == "unclassified" and np.isnan(r.safety_score)
    # the hazard filter never lets an unclassified liquid through
    m = filter_mask(lib, max_hazard_class="highly hazardous")
    assert not (m & missing.to_numpy()).any()
    from selector.cautions import reactive_reasons

    assert m.sum() == (~missing & (reactive_reasons(lib) == "")).sum()   # reagents never pass by default
    assert filter_mask(lib, max_hazard_class="highly hazardous", include_reactive=True).sum() == (~missing).sum()


def test_hazard_filter_orders_classes():
    lib = selector.load_library()
    hz = hazard_columns(lib)
    counts = [int(filter_mask(lib, max_hazard_class=c).sum()) for c in HAZARD_CLASSES]
    assert counts == sorted(counts) and counts[0] > 0
    m = filter_mask(lib, max_hazard_class="recommended")
    assert set(hz.loc[m, "hazard_class"]) == {"recommended"}
    with pytest.raises(SelectorError, match="hazard class"):
        filter_mask(lib, max_hazard_class="safe-ish")


def _cas_ok(cas: str) -> bool:
    # CAS check digit: weighted sum of the other digits (right to left, weights 1, 2, ...) mod 10
    digits = cas.replace("-", "")
    body, check = digits[:-1], int(digits[-1])
    return sum((i + 1) * int(d) for i, d in enumerate(reversed(body))) % 10 == check


def test_statement_table_shape_and_sources():
    st = hazard_statements()
    assert len(st) >= 100
    assert st["cas"].is_unique
    for cas in st["cas"]:
        assert re.fullmatch(r"\d{2,7}-\d{2}-\d", cas) and _cas_ok(cas), cas
    assert st["source"].str.contains("from memory").all()
    assert st["source"].str.contains("safety data sheet").all()
    codes = {c for t in st["statements"] for c in t}
    assert all(re.fullmatch(r"(H[2-4]\d\d[A-Za-z]{0,2}|EUH\d{3})", c) for c in codes), codes
    # CLP (Regulation 1272/2008, as amended) writes the ozone-layer statement H420; EUH420 is no
    # code of its own (common practice)
    assert "EUH420" not in codes and "H420" in codes
    assert "H420" in selector.hazard("carbon tetrachloride").statements


def test_statement_table_names_agree_with_reference_library():
    # the CAS number of every entry must name the same compound in the chemicals-built library
    lib = selector.load_library()
    st = hazard_statements()
    inlib = st[st["cas"].isin(lib["cas"])]
    assert len(inlib) >= 100
    for r in inlib.itertuples():
        assert selector.find_liquid(r.name, lib)["cas"] == r.cas, r.name


def test_regulatory_flags():
    # EU REACH Annex XVII restrictions on NMP, DMF, DMAc; 2-methoxyethanol on the SVHC Candidate
    # List (ECHA lists, quoted from memory)
    for name in ["NMP", "n,n-dimethylformamide", "n,n-dimethylacetamide"]:
        assert "Annex XVII" in selector.hazard(name).regulatory_note, name
    assert "SVHC" in selector.hazard("2-methoxyethanol").regulatory_note
    assert "H360FD" in selector.hazard("2-methoxyethanol").statements


def test_peroxide_formers_flagged():
    # common practice: ethers such as THF, diethyl ether, 1,4-dioxane form peroxides (EUH019)
    for name in ["tetrahydrofuran", "diethyl ether", "1,4-dioxane"]:
        assert selector.hazard(name).peroxide_former, name
    assert not selector.hazard("ethanol").peroxide_former


def test_record_carries_sources_and_caution():
    r = selector.hazard("toluene")
    assert "Prat" in r.sources["method"]
    assert "safety data sheet" in r.caution
    assert r.sources["flash_point"].startswith("library")


def test_bad_input():
    with pytest.raises(SelectorError, match="unknown liquid"):
        selector.hazard("not a solvent at all")
    with pytest.raises(SelectorError, match="GHS"):
        parse_statements("H225 banana")
    # sulfolane has statements but is a solid at 25 C, so it is not in the liquid library
    with pytest.raises(SelectorError, match="not in the liquid library"):
        selector.hazard("sulfolane")


def test_blend_and_substitute_rows_carry_component_hazard_notes():
    # The flags follow the GHS statement meanings (UN GHS rev. 8: H314 skin corrosion, H301/H311/
    # H331 acute toxicity cat. 3, H350 carcinogenicity cat. 1), applied to each component's
    # statements in parameters/hazards.csv.
    from selector.hazards import component_notes, statement_flags

    assert statement_flags(("H314",)) == "corrosive"
    assert statement_flags(("H301", "H350")) == "toxic, carcinogen, mutagen or reprotoxic"
    assert statement_flags(("H360FD",)) == "carcinogen, mutagen or reprotoxic"
    assert statement_flags(("H315", "H319")) == ""
    # app review: 1,2-dichlorobenzene (H302 H315 H319 H335 H400 H410 in hazards.csv, from memory
    # there) had a blank note. GHS: H302 "harmful if swallowed", H400/H410 "very toxic to aquatic
    # life"; a stronger flag of the same kind hides the weaker one (H301 toxic over H302 harmful).
    assert statement_flags(("H302", "H315", "H319", "H335", "H400", "H410")) == "harmful, toxic to aquatic life"
    assert statement_flags(("H301", "H302", "H304")) == "toxic, aspiration hazard"
    assert statement_flags(("H350", "H361d", "H372", "H373")) == "carcinogen, mutagen or reprotoxic, organ damage"
    from selector.hazards import DECOMPOSITION_NOTE, liquid_notes

    lib0 = selector.load_library()
    rows = lib0.iloc[[selector.library.locate(n, lib0) for n in ("1,2-dichlorobenzene", "nitroethane")]]
    dcb, ne = liquid_notes(rows)
    assert dcb == "harmful, toxic to aquatic life"
    # nitroethane: high decomposition energy in hazards.csv (a CHEM21 safety-score term)
    assert ne.endswith(DECOMPOSITION_NOTE)
    lib = selector.load_library()
    st = hazard_statements().set_index("name")
    notes = component_notes([("morpholine", "anisole")], lib)[0]
    # anisole is a category 3 flammable liquid, H226 (GHS classification, common practice): its
    # note said nothing, as H226 had no flag, so butyl acetate (flash point 22 C) read as harmless
    assert notes == ("morpholine: " + statement_flags(st.loc["morpholine", "statements"])
                     + "; anisole: flammable")
    assert statement_flags(("H226", "H319")) == "flammable"
    assert statement_flags(("H225", "H226")) == "extremely or highly flammable"
    unc = lib.loc[~lib["cas"].isin(st["cas"]), "name"].iloc[0]
    assert component_notes([(unc,)], lib) == [
        f"{unc}: no hazard data: treat as hazardous until the safety data sheet says otherwise"]
    b = selector.find_blends((17.9, 6.1, 6.4, 8.6), max_components=2, top=6)
    assert list(b["hazard_notes"]) == component_notes(b["components"], lib)
    s = selector.substitutes("toluene", top=4, max_components=1)
    assert s["hazard_notes"].iloc[0].startswith("toluene: ")


def test_hazard_columns_follow_a_reordered_library():
    # The cached table of the bundled library must not be reused for the same liquids in
    # another order (water is recommended; a stale cache once gave it another row's class).
    lib = selector.load_library()
    rev = lib.sort_values("name", ascending=False).reset_index(drop=True)
    hz = hazard_columns(rev)
    assert hz.loc[(rev["name"] == "water").to_numpy(), "hazard_class"].iloc[0] == "recommended"
    assert (hz["hazard_class"].to_numpy() ==
            hazard_columns(lib).set_index(lib["name"]).loc[rev["name"], "hazard_class"].to_numpy()).all()


def test_attach_hazards_joins_by_cas_then_name():
    # The join used by both the command line and the web front end: CAS first, name where a row
    # has no CAS, "unclassified" (not "safe") for a liquid without hazard data. Classes of toluene
    # and ethyl acetate: CHEM21 guide, as in PUBLISHED above (from memory).
    from selector.hazards import attach_hazards

    rows = pd.DataFrame({"name": ["my thinner", "Ethyl Acetate", "unknown blend"],
                         "cas": ["108-88-3", "", None]})  # 108-88-3 is toluene's CAS
    out = attach_hazards(rows, columns=("hazard_class", "h_statements"))
    assert out["hazard_class"].tolist() == ["problematic", "recommended", "unclassified"]
    assert "H225" in out["h_statements"].iloc[0]  # toluene: highly flammable (common practice)
    assert pd.isna(out["h_statements"].iloc[2])
    # a column the caller already has is kept as it is
    kept = attach_hazards(rows.assign(hazard_class="mine"))
    assert kept["hazard_class"].tolist() == ["mine"] * 3


def test_hazard_table_follows_edits_and_names_a_users_flash_point():
    # An edited copy of the library gets its own scores (CHEM21 safety score from the flash point:
    # toluene's 4 C gives 5; at 80 C and a boiling point of 180 C it is 2 - guide's safety table,
    # from memory), and a user's own flash point is labelled as theirs.
    from selector.library import load_library, merge_user_liquids

    lib = load_library()
    i = lib.index[lib["name"] == "toluene"][0]
    assert hazard_columns(lib).loc[i, "safety_score"] == 5
    edited = lib.copy()
    edited.loc[i, ["flash_point_c", "boiling_point_c"]] = [80.0, 180.0]
    assert hazard_columns(edited).loc[i, "safety_score"] == 2
    assert hazard_columns(lib).loc[i, "safety_score"] == 5
    mine = merge_user_liquids(lib, pd.DataFrame({"name": ["toluene"], "delta_d": [18.0], "delta_p": [1.4],
                                                 "delta_h": [2.0], "flash_point_c": [10.0]}))
    j = mine.index[mine["name"] == "toluene"][0]
    assert hazard_columns(mine).loc[j, "flash_point_basis"] == "your value"


def test_corrosive_and_toxic_liquids_are_not_recommended():
    # H314 scores health 7 (CHEM21, reconstructed from memory: selector.hazards module doc), so
    # liquids that burn skin are at best problematic. Statements from parameters/hazards.csv
    # (EU CLP, from memory): morpholine H311 H314 H331, formic acid H314 H331, acetic acid H314.
    # Acetic and formic acid are "problematic" in the guide (from memory); morpholine is not in it.
    for name in ("morpholine", "formic acid", "acetic acid"):
        r = selector.hazard(name)
        assert r.health_score == 7 and r.hazard_class == "problematic", name
    # acute toxicity 3 stays at 6: methanol (H301 H311 H331 H370, bp 65 C) keeps the guide's 7
    assert selector.hazard("methanol").health_score == 7
    # the Replace flow once offered 65 % morpholine + 33 % formic acid as strictly safer than
    # toluene (problematic); a problematic component can no longer be part of one
    s = selector.substitutes("toluene", top=40)
    used = {c for comp in s["components"].iloc[1:] for c in comp}
    assert not used & {"morpholine", "formic acid", "acetic acid"}


def test_bis_chloroethyl_ether_is_classified():
    # EU CLP harmonised classification of bis(2-chloroethyl) ether (111-44-4), from memory in
    # parameters/hazards.csv: H226 H300 H310 H330 H351. Fatal statements score health 9 (CHEM21),
    # so it is hazardous; its 55 C flash point (from memory, as H226 requires <= 60 C) is below the
    # 75 C of the library's source (Serat DIPPR, via chemicals), so the build keeps the lower one.
    r = selector.hazard("bis(2-chloroethyl) ether")
    assert r.statements == ("H226", "H300", "H310", "H330", "H351")
    assert r.health_score == 9 and r.hazard_class == "hazardous"
    row = selector.find_liquid("bis(2-chloroethyl) ether")
    assert row["flash_point_c"] == 55.0 and "lower of parameters/hazards.csv 55 C" in row["flash_point_source"]


def test_carcinogens_once_unclassified_carry_h350_and_are_not_recommended():
    # EU CLP harmonised classification, Annex VI, from memory (parameters/hazards.csv): all three
    # are Carc. 1B (H350): o-toluidine (95-53-4), 2-nitropropane (79-46-9), 1,2-dibromoethane
    # (106-93-4). They had no row before and ranked as "unclassified" near the top of results.
    from selector.hazards import statement_flags

    for name, cas in (("o-toluidine", "95-53-4"), ("2-nitropropane", "79-46-9"),
                      ("1,2-dibromoethane", "106-93-4")):
        assert selector.find_liquid(name)["cas"] == cas, name
        r = selector.hazard(name)
        assert "H350" in r.statements, name
        assert "carcinogen, mutagen or reprotoxic" in statement_flags(r.statements), name
        # H350 scores health 9 (CHEM21 table, from memory): at least hazardous, never recommended
        assert r.health_score >= 9 and r.hazard_class not in ("recommended", "unclassified"), name


def test_suspected_cmr_and_repeated_organ_damage_cap_the_class_at_problematic():
    # This project's rule over the CHEM21 default ranking (selector.hazards.CAP_PROBLEMATIC):
    # 1,1,2-trichloroethane (H351, does not burn) and 2-hexanone (H361f, H372: the neurotoxic
    # ketone; EU CLP Annex VI, from memory) score one yellow at most, so the guide's default
    # ranking calls them recommended; they are shown as problematic, the default kept beside it.
    lib = selector.load_library()
    h = hazard_columns(lib).set_index(lib["name"])
    for name in ["1,1,2-trichloroethane", "2-hexanone"]:
        assert h.loc[name, "hazard_class_default"] == "recommended", name
        assert h.loc[name, "hazard_class"] == "problematic", name
    # a liquid without such a statement keeps its class (ethyl acetate, recommended in the guide)
    assert h.loc["ethyl acetate", "hazard_class"] == "recommended"


def test_xylene_isomers_share_the_guides_class():
    # CHEM21 lists xylenes as one entry, problematic (Prat et al. 2016, from memory); p-xylene
    # (bp 138 C) falls below the 140 C step of the environment score where o-xylene (144 C) does
    # not, so its default ranking alone would say recommended
    lib = selector.load_library()
    h = hazard_columns(lib).set_index(lib["name"])
    assert h.loc["p-xylene", "hazard_class_default"] == "recommended"
    assert h.loc["p-xylene", "hazard_class"] == h.loc["o-xylene", "hazard_class"] == "problematic"


def test_a_liquid_without_hazard_data_is_not_told_as_no_peroxide_former(capsys):
    # trioctyl phosphate has no row in parameters/hazards.csv: "peroxide former: False" read as a
    # statement that it is not one; no data is None, and its flash point is "not scored"
    r = selector.hazard("trioctyl phosphate")
    assert r.hazard_class == "unclassified" and r.peroxide_former is None
    assert r.sources["flash_point"] == "not scored (no hazard data)"
    # a classified liquid with data keeps its answer (ethanol forms no peroxides: common practice)
    assert selector.hazard("ethanol").peroxide_former is False
    # methyl iodide: H301 H331 H351 but no H22x and no flash point (not flammable, common practice)
    assert selector.hazard("methyl iodide").sources["flash_point"].startswith("none known")
    from selector.cli import main

    assert main(["hazard", "trioctyl phosphate"]) == 0
    out = capsys.readouterr().out
    assert "Flash points: not scored (no hazard data)" in out and "<NA>" not in out and "None" not in out
    assert main(["hazard", "trioctyl phosphate", "water", "--format", "csv"]) == 0
    import io

    df = pd.read_csv(io.StringIO(capsys.readouterr().out))
    assert df["safety_score"].isna().iloc[0] and df["safety_score"].iloc[1] == 1   # water: CHEM21 1


def test_cmr_free_drops_carcinogens_mutagens_and_reprotoxics():
    # practitioner review: replacing benzene proposed trichloroethylene (H350, H341) and toluene
    # (H361d). GHS classifications (harmonised EU, from memory; parameters/hazards.csv): benzene
    # H340 H350, NMP H360D, DMF H360D, toluene H361d; ethyl acetate, acetone and ethanol carry none
    import selector
    from selector.filters import cmr, filter_mask

    lib = selector.load_library()
    rows = lib.set_index("name")
    flagged = dict(zip(lib["name"], cmr(lib)))
    for n in ("benzene", "trichloroethylene", "toluene", "1-methyl-2-pyrrolidinone", "N,N-dimethylformamide"):
        assert flagged[selector.find_liquid(n, lib)["name"]], n
    for n in ("ethyl acetate", "acetone", "ethanol"):
        assert not flagged[n], n
    unc = lib.loc[~lib["cas"].isin(hazard_statements()["cas"]), "name"].iloc[0]
    assert flagged[unc]                               # no hazard data: nothing shows it is free of CMR
    assert not cmr(rows.loc[[unc]].reset_index(), unknown=False)[0]
    kept = selector.substitutes("benzene", cmr_free=True, max_components=1, top=30)
    names = set(kept.loc[kept["role"] == "substitute", "name"] if "name" in kept else
                [c[0] for c in kept.loc[kept["role"] == "substitute", "components"]])
    assert not names & {"toluene", "trichloroethylene"} and names
    assert filter_mask(lib, cmr_free=True).sum() < filter_mask(lib).sum()


def test_cli_no_cmr(capsys):
    from selector.cli import main

    assert main(["rank", "18,1.4,2", "--no-cmr", "--format", "json", "--top", "200"]) == 0
    names = {r["name"] for r in __import__("json").loads(capsys.readouterr().out)}
    assert "toluene" not in names and "benzene" not in names and "ethylbenzene" in names
