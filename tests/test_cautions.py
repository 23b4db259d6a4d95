"""Reagents that are not solvents, and liquids that do not burn (selector.cautions)."""
import numpy as np
import pandas as pd
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
    ("hydrogen cyanide", "hydrogen cyanide"), ("acrolein", "unsaturated aldehyde"),
    ("allyl chloride", "allylic"), ("benzyl chloride", "benzylic"),
    # hazards.csv lists H310 H330 (fatal) for 1,1,2,2-tetrachloroethane (from memory there)
    ("1,1,2,2-tetrachloroethane", "fatal on exposure"),
    # hazards.csv lists H300 H310 H330 (fatal) for bis(2-chloroethyl) ether (EU CLP harmonised
    # classification, from memory there)
    ("bis(2-chloroethyl) ether", "fatal on exposure"),
    # Common practice: mustard-type alkylating agents (2-chloroethyl ethyl sulfide is the
    # "half-mustard"; bis(2-chloroethyl)amine is nor-nitrogen mustard), vinyl sulfide monomers,
    # thiirane, thiocyanates, disulfides and halohydrins are reagents, not solvents.
    ("2-chloroethyl ethyl sulfide", "2-haloethyl sulfide"), ("bis(2-chloroethyl)amine", "2-haloethyl amine"),
    ("divinyl sulfide", "vinyl sulfide"), ("(methylthio)ethene", "vinyl sulfide"),
    ("ethyl vinyl sulfide", "vinyl sulfide"), ("thiirane", "thiirane"),
    ("methyl thiocyanate", "thiocyanate"), ("diethyl disulfide", "disulfide"),
    ("2-chloroethanol", "halohydrin"), ("1,3-dichloro-2-propanol", "halohydrin"),
    # Common practice: monomers sold inhibited (acrylonitrile, a carcinogen; acrylic and
    # methacrylic acid; vinyl esters), ketenes and diketene, and primary enamines (unstable) are
    # reagents, not thinners; a reviewer found acrylonitrile and diketene ranked first and second.
    ("acrylonitrile", "acrylic nitrile"), ("methacrylonitrile", "acrylic nitrile"),
    ("acrylic acid", "acrylic acid"), ("methacrylic acid", "acrylic acid"),
    ("vinyl acetate", "vinyl ester"), ("vinyl trifluoroacetate", "vinyl ester"),
    ("diketene", "ketene or beta-lactone"), ("dichloroketene", "ketene or beta-lactone"),
    ("ethenamine", "primary enamine"),
    # reviewer's second round: chloroprene (a carcinogen, EU CLP from memory) ranked second for
    # 16.2, 5.5, 2.0; methyl vinyl ketone is the ketone analogue of acrolein; a cyanoacrylate is
    # an instant adhesive (common practice)
    ("chloroprene", "halodiene"), ("methyl vinyl ketone", "vinyl ketone"),
    ("ethyl 2-cyanoacrylate", "cyanoacrylate"),
    # numbers review: methyl methacrylate came up among the replacements for toluene; the C1-C4
    # (meth)acrylates are volatile monomers and skin sensitisers, not thinners (common practice)
    ("methyl methacrylate", "volatile acrylic ester"), ("ethyl acrylate", "volatile acrylic ester"),
    ("butyl acrylate", "volatile acrylic ester"), ("butyl methacrylate", "volatile acrylic ester"),
    # app review: alkyl hypochlorites decompose explosively; benzal chloride and benzotrichloride
    # are benzylic halides that hydrolyse to HCl (benzotrichloride a carcinogen, EU CLP from
    # memory); chloroacetone is a lachrymator that alkylates; aldehydes on a saturated carbon
    # oxidise in air and condense with amines (all common practice)
    ("ethyl hypochlorite", "hypohalite"), ("benzal chloride", "benzylic"),
    ("benzotrichloride", "benzylic"), ("4-chlorobenzotrichloride", "benzylic"),
    ("3,3,3-trichloro-1-propene", "allylic"), ("chloroacetone", "alpha-halo carbonyl"),
    ("chloroacetaldehyde", "alpha-halo carbonyl"), ("chloral", "alpha-halo carbonyl"),
    ("4-pentenal", "aliphatic aldehyde"), ("butyraldehyde", "aliphatic aldehyde"),
    ("hexanal", "aliphatic aldehyde"),
    # numbers review, round 4: these led blends for a nitrocellulose sphere. Acetylenic compounds
    # are energetic and terminal alkynes form explosive metal acetylides (common practice);
    # nitroethylene polymerises violently, crotononitrile is toxic like acrylonitrile,
    # methylglyoxal is a reactive mutagen, tri-o-cresyl phosphate causes delayed nerve damage
    # (all from memory)
    ("propargyl alcohol", "alkyne"), ("phenylacetylene", "alkyne"), ("cyanoacetylene", "alkyne"),
    ("2-butynedinitrile", "alkyne"), ("nitroethylene", "nitroalkene"),
    ("trans-crotononitrile", "unsaturated nitrile"), ("methylglyoxal", "alpha-oxo aldehyde"),
    ("tri-o-cresyl phosphate", "ortho-cresyl phosphate"),
])
def test_reagents_are_flagged(name, kind):
    assert kind in _reason(name)


def test_stored_reasons_match_the_screen():
    # The bundled library stores each liquid's reason (selector.build); a stale column would hide
    # a class added to REACTIVE_GROUPS. Recomputed from SMILES, exposure limit and hazards.csv.
    fresh = reactive_reasons(LIB.drop(columns=["reactive_reason", "origin"]))
    stored = LIB["reactive_reason"].fillna("").astype(str).to_numpy()
    assert (fresh == stored).all(), LIB.loc[fresh != stored, "name"].tolist()


def test_monomers_and_ketenes_leave_the_ranking():
    # Reviewer's case: the target 16.1, 13.5, 7.3 had acrylonitrile first and diketene second
    top = selector.rank((16.1, 13.5, 7.3), top=10)["name"].tolist()
    assert not {"acrylonitrile", "diketene", "methacrylonitrile"} & set(top)
    assert len(top) == 10


def test_mustards_and_vinyl_sulfides_leave_the_ranking():
    # Reviewer's case: a target near tert-butyl cyclohexanecarboxylate (16.5, 4.5, 5.5, R0 5)
    # once had divinyl sulfide first, (methylthio)ethene third and the half-mustard eighth.
    top = selector.rank((16.5, 4.5, 5.5, 5.0), top=20)["name"].tolist()
    assert not {"divinyl sulfide", "(methylthio)ethene", "2-chloroethyl ethyl sulfide",
                "butyl vinyl sulfide", "ethyl vinyl sulfide"} & set(top)


def test_very_low_exposure_limit_is_flagged():
    # chloropicrin: TWA 0.1 ppm and benzene 0.5 ppm (chemicals' exposure-limit data, via the library)
    assert _reason("chloropicrin").startswith("exposure limit 0.1 ppm")
    assert _reason("benzene").startswith("exposure limit 0.5 ppm")


@pytest.mark.parametrize("name,reason", [
    # README walk: vinyl iodide ranked second for the demo resin with no reason given. Vinyl
    # halides and 1-halo-1,3-dienes are monomers sold inhibited, not solvents (common practice).
    ("vinyl iodide", "vinyl halide"), ("vinylidene chloride", "vinyl halide"),
    ("2-bromopropene", "vinyl halide"), ("1-chlorobutadiene", "halodiene"), ("chloroprene", "halodiene"),
])
def test_vinyl_halides_and_halodienes_are_reagents(name, reason):
    assert _reason(name).startswith(reason)


def test_structural_reason_keeps_the_exposure_limit():
    # glyoxal: an alpha-oxo aldehyde (common practice) with an 8-h limit of 0.0422 ppm (chemicals'
    # exposure-limit data, via the library); both reasons reach the user, the structure first
    why = _reason("glyoxal")
    assert why.startswith("alpha-oxo aldehyde")
    assert why.endswith("exposure limit 0.0422 ppm (very toxic at low exposure)")
    assert selector.cautions.reactive_reason("O=CC=O", 0.0422, 30.0) == why


@pytest.mark.parametrize("name", ["toluene", "acetone", "ethanol", "ethyl acetate", "NMP", "DMSO", "water",
                                  "hexane", "dibutyl phthalate", "nitromethane", "2-ethylhexyl acrylate",
                                  "propylene carbonate", "dichloromethane", "cinnamaldehyde", "benzaldehyde",
                                  "chlorobenzene", "pyridine", "thiophene", "3-methylsulfolane", "dimethyl sulfide",
                                  "tetrahydrothiophene", "2-chloroethyl acetate",
                                  # furfural: an extraction solvent (common practice); CF3 is no
                                  # benzylic halide (benzotrifluoride is a solvent, common practice)
                                  "2-furaldehyde", "benzotrifluoride",
                                  # plasticiser and extraction solvents: a phosphate without an
                                  # ortho-cresyl group, a nitrile without a C=C (common practice)
                                  "tributyl phosphate", "triethyl phosphate", "acetonitrile", "benzonitrile",
                                  # chlorinated alkenes used as solvents (common practice): no CH2=CX-
                                  "trichloroethylene", "tetrachloroethylene", "trans-1,2-dichloroethylene"])
def test_ordinary_solvents_are_not_flagged(name):
    # Common practice: all of these are used as solvents (dibutyl phthalate has a low ppm limit
    # but hardly any vapour, so the exposure rule does not apply).
    assert _reason(name) == ""


def test_reagents_never_candidates_unless_asked():
    flagged = reactive_reasons(LIB) != ""
    # a screen, not a ban: under 30 % of the library (172 of 823 when written, 208 with the vinyl
    # halides; the published tables hold many monomers and reagents that are liquid at 25 C)
    assert 50 < flagged.sum() < 0.30 * len(LIB)
    assert not (filter_mask(LIB) & flagged).any()
    assert filter_mask(LIB, include_reactive=True).all()
    # rank: the same order, the reagents dropped
    target = (17.0, 11.0, 6.0, 8.0)
    every = selector.rank(target, include_reactive=True)
    some = selector.rank(target)
    assert len(some) == len(every) - flagged.sum()
    keep = every[~every["name"].isin(LIB.loc[flagged, "name"])]["name"].tolist()
    assert some["name"].tolist() == keep
    # a reagent can still be a target, and a liquid named in include is not screened
    r = selector.rank("acetyl chloride", top=3)
    assert r.attrs["target"].name == "acetyl chloride" and len(r) == 3
    named = selector.rank(target, include=["acetyl chloride", "ethanol"])
    assert set(named["name"]) == {"acetyl chloride", "ethanol"}


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


def test_user_rows_cache_follows_row_order_and_missing_columns():
    # The structural screen of user rows is cached by their SMILES in order: reordering the
    # rows must reorder the reasons (a stale key once hid the reagent).
    import pandas as pd

    a = pd.DataFrame({"smiles": ["CC(=O)Cl", "CCO"], "origin": ["user", "user"]})
    b = pd.DataFrame({"smiles": ["CCO", "CC(=O)Cl"], "origin": ["user", "user"]})
    ra, rb = reactive_reasons(a), reactive_reasons(b)
    assert ra[0].startswith("acyl halide") and ra[1] == ""
    assert rb[0] == "" and rb[1].startswith("acyl halide")
    # a table without cas / flash columns: no crash, nothing non-flammable
    bare = LIB[["name", "smiles", "delta_d", "delta_p", "delta_h", "molar_volume", "boiling_point_c",
                "flash_point_c"]].copy()
    assert not not_flammable(bare).any()
    assert len(selector.rank((18.0, 5.0, 5.0), library=bare, min_flash_point_c=20, top=5)) == 5


def test_browsing_and_mixing_keep_reagents(capsys):
    from selector.cli import main
    from selector.mixing import miscibility

    assert main(["list", "--search", "acetyl chloride"]) == 0
    out = capsys.readouterr().out
    assert "acetyl chloride" in out and "acyl halide" in out
    m = miscibility("water", "acetyl chloride")
    # the reacting-pair note first (acid chloride + water: HCl, common practice), then the reagent's
    assert m.notes[0].startswith("REACTIVE PAIR - acid halide + water") and "reagent, not a solvent" in m.notes[1]
    assert not any("reagent" in n for n in miscibility("water", "ethanol").notes)
    assert main(["mix-grid", "--only", "acetyl chloride,water,ethanol", "--format", "json"]) == 0
    assert "acetyl chloride" in capsys.readouterr().out


def test_cli_targets_with_locants_are_names(capsys):
    # Names such as 1,4-dioxane contain commas and digits; they are liquids, not numbers.
    from selector.cli import main

    assert main(["rank", "1,4-dioxane", "--top", "2"]) == 0
    assert "Target 1,4-dioxane" in capsys.readouterr().out
    assert main(["rank", "18,3"]) == 2
    assert "got 2 numbers" in capsys.readouterr().err


def test_reacting_pairs_are_never_blended_unless_asked():
    # Common practice: acids and amines react (salt, heat); primary amines condense with ketones
    # (imines), secondary ones more slowly (enamines: morpholine + cyclohexanone is the textbook
    # enamine preparation); tertiary amines cannot. From memory: amines sensitise nitroalkanes
    # (nitromethane) to detonation.
    from selector.blends import find_blends, substitutes
    from selector.cautions import pair_reasons, reactive_pair_matrix
    from selector.library import load_library

    lib = load_library()
    rows = lib.loc[lib["name"].isin(["formic acid", "morpholine", "nitroethane", "acetone", "butylamine",
                                     "toluene", "ethyl acetate", "triethylamine", "cyclohexanone"])
                   ].reset_index(drop=True)
    m = reactive_pair_matrix(rows)
    pos = {n: i for i, n in enumerate(rows["name"])}
    assert m[pos["formic acid"], pos["morpholine"]] and m[pos["morpholine"], pos["formic acid"]]
    assert m[pos["morpholine"], pos["nitroethane"]] and m[pos["butylamine"], pos["acetone"]]
    assert not m[pos["toluene"], pos["ethyl acetate"]] and not m[pos["triethylamine"], pos["acetone"]]
    assert m[pos["morpholine"], pos["cyclohexanone"]] and m[pos["morpholine"], pos["acetone"]]
    assert "cyclohexanone + morpholine: secondary amine + aldehyde or ketone" in " ".join(pair_reasons(rows))
    assert "formic acid + morpholine: acid + base" in " ".join(pair_reasons(rows))
    # the blend search: a target between an acid and an amine, candidates only those and neutrals
    names = ["formic acid", "morpholine", "triethylamine", "acetic acid", "toluene", "ethyl acetate"]
    both = lib.loc[lib["name"].isin(names)]
    target = tuple(both[["delta_d", "delta_p", "delta_h"]].mean().round(1))
    res = find_blends(target, include=names, max_components=2, top=50, min_gain=0.0)
    acids, bases = {"formic acid", "acetic acid"}, {"morpholine", "triethylamine"}
    for cs in res["components"]:
        assert not (set(cs) & acids and set(cs) & bases), cs
    free = find_blends(target, include=names, max_components=2, top=50, min_gain=0.0, include_reactive=True)
    mixed = [n for cs, n in zip(free["components"], free["hazard_notes"]) if set(cs) & acids and set(cs) & bases]
    assert mixed and all("REACTIVE PAIR" in n for n in mixed)
    for cs in substitutes("toluene", top=40)["components"]:
        assert not (set(cs) & acids and set(cs) & bases), cs


def _pair_screen(names):
    """Library rows of ``names`` (in that order), their reacting-pair matrix, and a symmetric
    ``reacts(a, b)`` test on it."""
    from selector.cautions import reactive_pair_matrix

    rows = pd.concat([LIB.loc[[selector.find_liquid(n, LIB).name]] for n in names]).reset_index(drop=True)
    pos = {n: i for i, n in enumerate(names)}
    m = reactive_pair_matrix(rows)

    def reacts(a, b):
        return bool(m[pos[a], pos[b]]) and bool(m[pos[b], pos[a]])

    return rows, m, reacts


def test_amine_pairs_with_esters_aldehydes_and_halocarbons():
    # Common practice: primary and secondary amines open cyclic carbonates and lactones and slowly
    # aminolyse esters (so amine hardeners are kept free of esters); aniline condenses with
    # furfural (the aniline acetate colour test). From memory: amines react with polyhalogenated
    # alkanes (ethylenediamine with carbon tetrachloride; triethylamine quaternises in
    # dichloromethane). A numbers review found ethylenediamine + propylene carbonate and
    # ethylenediamine + gamma-butyrolactone among the DMF replacements, unflagged.
    from selector.cautions import pair_reasons, reactive_pair_matrix

    names = ["ethylenediamine", "propylene carbonate", "gamma-butyrolactone", "butylamine", "ethyl acetate",
             "aniline", "2-furaldehyde", "triethylamine", "dichloromethane", "pentachloroethane",
             "morpholine", "toluene", "acetone"]
    rows, m, reacts = _pair_screen(names)

    assert reacts("ethylenediamine", "propylene carbonate") and reacts("ethylenediamine", "gamma-butyrolactone")
    assert reacts("butylamine", "ethyl acetate") and reacts("morpholine", "ethyl acetate")
    assert reacts("aniline", "2-furaldehyde")
    assert reacts("triethylamine", "dichloromethane") and reacts("ethylenediamine", "pentachloroethane")
    # a tertiary amine cannot aminolyse an ester; aniline + a ketone and toluene + anything pass
    assert not reacts("triethylamine", "ethyl acetate") and not reacts("aniline", "acetone")
    # numbers review, round 3 (common practice: amines add to carbon disulfide, dithiocarbamates;
    # 1-methylimidazole is a base like pyridine; from memory: alkyl bromides quaternise amines)
    more = ["carbon disulfide", "butylamine", "1-methylimidazole", "acetic acid", "bromoethane",
            "triethylamine", "toluene"]
    r2 = pd.concat([LIB.loc[[selector.find_liquid(n, LIB).name]] for n in more]).reset_index(drop=True)
    m2, p2 = reactive_pair_matrix(r2), {n: i for i, n in enumerate(more)}
    assert m2[p2["carbon disulfide"], p2["butylamine"]] and m2[p2["1-methylimidazole"], p2["acetic acid"]]
    assert m2[p2["bromoethane"], p2["triethylamine"]] and not m2[p2["carbon disulfide"], p2["triethylamine"]]
    assert not m2[p2["toluene"]].any()
    # numbers review, round 5: aniline + acetic acid sat in a blend at 60 C; they give a salt and,
    # heated, acetanilide and water (common practice)
    an = pd.concat([LIB.loc[[selector.find_liquid(n, LIB).name]] for n in ["aniline", "acetic acid", "toluene"]])
    assert pair_reasons(an.reset_index(drop=True)) == [
        "aniline + acetic acid: acid + aromatic amine: they react (salt; on heating the amide and water)"]
    # one reason per pair, though diethylenetriamine is a primary and a secondary amine
    deta = pd.concat([LIB.loc[[selector.find_liquid(n, LIB).name]] for n in ["diethylenetriamine", "acetone"]])
    assert len(pair_reasons(deta.reset_index(drop=True))) == 1
    assert not m[names.index("toluene")].any()
    text = " ".join(pair_reasons(rows))
    assert "primary amine + ester, lactone or carbonate" in text and "aromatic amine + aldehyde" in text
    assert "amine + polyhalogenated alkane" in text


def test_epoxides_isocyanates_enol_ethers_and_furfuryl_alcohol_with_their_partners():
    # Common practice: amines cure epoxies (exothermic, runaway in bulk) and acids open them;
    # isocyanates react with amines, water and alcohols (polyurethane chemistry; water gives CO2);
    # acids cure furfuryl alcohol (furan foundry binders). From memory: acids add to enol ethers
    # (dihydropyran and 2-methoxypropene are used with an acid catalyst to protect alcohols).
    from selector.cautions import pair_reasons

    names = ["propylene oxide", "ethylenediamine", "acetic acid", "methyl isocyanate", "water", "ethanol",
             "butylamine", "furfuryl alcohol", "formic acid", "ethyl vinyl ether", "3,4-dihydro-2h-pyran",
             "toluene", "acetone", "ethyl acetate", "vinyl acetate"]
    rows, _, reacts = _pair_screen(names)
    assert reacts("propylene oxide", "ethylenediamine") and reacts("propylene oxide", "acetic acid")
    assert reacts("methyl isocyanate", "water") and reacts("methyl isocyanate", "ethanol")
    assert reacts("methyl isocyanate", "butylamine")
    assert reacts("furfuryl alcohol", "formic acid") and reacts("ethyl vinyl ether", "acetic acid")
    assert reacts("3,4-dihydro-2h-pyran", "formic acid")
    # what they are blended with every day stays unflagged: alcohols with epoxides' usual diluents,
    # furfuryl alcohol with water and ethanol, vinyl ethers with esters and ketones, and an
    # enol ester (vinyl acetate) is not an enol ether
    for a, b in [("furfuryl alcohol", "water"), ("furfuryl alcohol", "ethanol"), ("ethyl vinyl ether", "acetone"),
                 ("ethyl vinyl ether", "ethyl acetate"), ("vinyl acetate", "acetic acid"), ("water", "ethanol"),
                 ("propylene oxide", "toluene"), ("methyl isocyanate", "toluene")]:
        assert not reacts(a, b), (a, b)
    text = " ".join(pair_reasons(rows))
    assert "propylene oxide + ethylenediamine: amine + epoxide" in text
    assert "methyl isocyanate + water: isocyanate + water, alcohol or phenol" in text
    assert "furfuryl alcohol + formic acid: acid + furfuryl alcohol" in text
    # the blend search never pairs them (furfuryl alcohol and the vinyl ethers are not reagents)
    from selector.blends import find_blends

    pool = ["furfuryl alcohol", "formic acid", "acetic acid", "ethyl vinyl ether", "toluene", "ethanol"]
    both = LIB.loc[LIB["name"].isin(pool)]
    target = tuple(both[["delta_d", "delta_p", "delta_h"]].mean().round(1))
    res = find_blends(target, include=pool, max_components=2, top=50, min_gain=0.0)
    acids = {"formic acid", "acetic acid"}
    assert len(res) > 3
    for cs in res["components"]:
        assert not (set(cs) & acids and set(cs) & {"furfuryl alcohol", "ethyl vinyl ether"}), cs


def test_replacements_for_dmf_pair_no_amine_with_an_ester():
    # the review's case: DMF's replacements had ethylenediamine with propylene carbonate or
    # gamma-butyrolactone (common practice: they react)
    from selector.blends import substitutes
    from selector.cautions import pair_classes, PAIR_CLASSES

    res = substitutes("DMF", top=40)
    k = [n for n, _ in PAIR_CLASSES]
    cls = pair_classes(LIB)
    amine = set(LIB["name"][cls[:, k.index("primary amine")] | cls[:, k.index("secondary amine")]])
    ester = set(LIB["name"][cls[:, k.index("ester")]])
    comps = [set(c) for c in res["components"]]
    assert len(comps) > 10
    assert not [c for c in comps if c & amine and c & ester]


def test_flash_point_text_tells_not_flammable_from_no_data(capsys):
    # Common practice: tetrachloroethylene and dichloromethane do not burn (parameters/hazards.csv
    # marks them "none", from memory); divinyl sulfide has no flash point in the library (no data,
    # not "safe"); ethanol's 12.0 C is the library's value (chemicals).
    from selector.cautions import flash_point_text
    from selector.cli import main

    sub = LIB.set_index("name", drop=False).loc[["tetrachloroethylene", "dichloromethane",
                                                  "divinyl sulfide", "ethanol"]]
    assert flash_point_text(sub).tolist() == ["not flammable", "not flammable", "no data", "12.0"]
    # the command-line table shows the words; csv keeps the number (blank)
    assert main(["rank", "18.8,5.1,5.3", "--only", "tetrachloroethylene,divinyl sulfide,ethanol",
                 "--top", "3"]) == 0
    lines = {ln.split()[1]: ln for ln in capsys.readouterr().out.splitlines()
             if ln.strip()[:1].isdigit()}
    assert "not flammable" in lines["tetrachloroethylene"]
    assert "no data" in lines["divinyl"] and "not flammable" not in lines["divinyl"]
    assert "12.0" in lines["ethanol"]
    assert main(["rank", "18.8,5.1,5.3", "--only", "tetrachloroethylene", "--format", "csv"]) == 0
    assert "not flammable" not in capsys.readouterr().out


def test_flash_point_text_reads_text_booleans():
    # a table read back from CSV holds not_flammable as text; "True"/"False" (pandas' own CSV
    # spelling), yes/no and 1/0 are read as booleans (common practice), a blank as "not known".
    # 12.0 C is ethanol's library flash point (chemicals).
    import io

    import pandas as pd

    from selector.cautions import flash_point_text

    text = "name,flash_point_c,not_flammable\nperc,,True\nx,,False\ny,,yes\nz,,\nethanol,12.0,False\n"
    frame = pd.read_csv(io.StringIO(text), dtype={"not_flammable": str})
    assert flash_point_text(frame).tolist() == ["not flammable", "no data", "not flammable", "no data", "12.0"]
    frame = pd.DataFrame({"flash_point_c": [None, None, None], "not_flammable": ["TRUE", " false ", "1"]})
    assert flash_point_text(frame).tolist() == ["not flammable", "no data", "not flammable"]


def test_water_reactive_reagents_react_with_water_alcohols_and_amines():
    # practitioner review: water + thionyl chloride read "MISCIBLE (confidence high)". Common
    # practice: acid chlorides, thionyl and sulfuryl chloride, phosphoryl chloride and acetic
    # anhydride hydrolyse exothermically with water (HCl, SO2 or acid) and acylate alcohols and
    # amines; dimethyl sulfate hydrolyses and alkylates (from memory).
    import selector

    names = ["water", "ethanol", "triethylamine", "butylamine", "thionyl chloride", "acetyl chloride",
             "benzoyl chloride", "sulfuryl chloride", "phosphoryl chloride", "acetic anhydride",
             "dimethyl sulfate", "toluene", "hexane", "ethyl acetate"]
    rows, m, reacts = _pair_screen(names)
    for r in ("thionyl chloride", "acetyl chloride", "benzoyl chloride", "sulfuryl chloride",
              "phosphoryl chloride", "acetic anhydride", "dimethyl sulfate"):
        assert reacts("water", r) and reacts("ethanol", r), r
        assert not reacts("toluene", r) and not reacts("hexane", r), r
    assert reacts("acetyl chloride", "triethylamine") and reacts("acetic anhydride", "butylamine")
    assert not reacts("ethyl acetate", "water")           # an ordinary ester is no reagent here
    r = selector.miscibility("water", "thionyl chloride")
    assert r.reacts and r.headline.endswith("but they react") and r.notes[0].startswith("REACTIVE PAIR")


def test_mix_grid_marks_doubtful_and_reacting_cells(capsys):
    # the README promises "?" on the pairs the models disagree on; "!" marks the reacting pairs
    from selector.cli import main

    assert main(["mix-grid", "water,acetyl chloride,1-methoxy-2-propanol,hexane"]) == 0
    out = capsys.readouterr().out
    grid = {ln.split()[0]: ln.split()[1:] for ln in out.splitlines() if ln.split() and ln.split()[0] in
            ("water", "hexane")}
    # columns: water, acetyl chloride, 1-methoxy-2-propanol, hexane
    assert grid["water"][1].endswith("!") and not grid["water"][3].endswith(("!", "?"))
    # PGME + hexane: Dortmund UNIFAC (thermo) splits what the HSP model mixes
    assert grid["hexane"][2].endswith("?")
    assert "? = uncertain or the models disagree, ! = they react" in out


def test_reagents_shown_on_request_are_named_in_the_header(capsys):
    # crash hunt: with --include-reactive a reagent could head the table with its warning only in
    # the far-right column; benzene is a carcinogen held back as a reagent (common practice)
    from selector.cli import main

    assert main(["rank", "18,1.4,2", "--include-reactive", "--top", "20"]) == 0
    out = capsys.readouterr().out
    line = next(ln for ln in out.splitlines() if ln.startswith("WARNING: reagents among these rows"))
    assert "benzene" in line
    assert main(["rank", "18,1.4,2", "--top", "20"]) == 0
    assert "WARNING: reagents among these rows" not in capsys.readouterr().out
