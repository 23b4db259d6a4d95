"""The command line: rank, show, list, demo; output formats; errors as one line."""
from __future__ import annotations

import io
import json
import subprocess
import sys

import pandas as pd
import pytest

import selector
from selector.cli import main


def run(args, capsys):
    rc = main(args)
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_rank_csv_matches_library(capsys):
    rc, out, err = run(["rank", "21.3,5.8,4.3,12.7", "--format", "csv", "--top", "10"], capsys)
    assert rc == 0
    df = pd.read_csv(io.StringIO(out))
    ref = selector.rank((21.3, 5.8, 4.3, 12.7)).head(10)
    assert df["name"].tolist() == ref["name"].tolist()
    assert df["red"].round(6).tolist() == ref["red"].round(6).tolist()


def test_rank_named_with_radius_and_filters_json(capsys):
    rc, out, _ = run(["rank", "toluene", "--radius", "6", "--bp", "100:", "--min-flash", "30",
                      "--format", "json", "--top", "5"], capsys)
    assert rc == 0
    recs = json.loads(out)
    assert len(recs) == 5
    assert all(r["boiling_point_c"] >= 100 and r["flash_point_c"] >= 30 for r in recs)
    assert all(r["red"] == pytest.approx(r["ra"] / 6) for r in recs)


def test_rank_table_has_caution(capsys):
    rc, out, _ = run(["rank", "18,3,4,7", "--top", "3"], capsys)
    assert rc == 0 and "safety data sheet" in out


def test_output_file_written_atomically(tmp_path, capsys):
    p = tmp_path / "out.csv"
    rc, _, err = run(["rank", "18,3,4", "--format", "csv", "-o", str(p)], capsys)
    assert rc == 0 and "wrote" in err
    assert len(pd.read_csv(p)) == len(selector.rank((18.0, 3.0, 4.0)))  # a file gets every row
    assert [f.name for f in tmp_path.iterdir()] == ["out.csv"]


@pytest.mark.parametrize("args,msg", [
    (["rank", "tolune"], "did you mean 'toluene'"),
    (["rank", "18,nan,3"], "finite"),
    (["rank", "18,-1,3"], "negative"),
    (["rank", "18,1,3,0"], "R0"),
    (["rank", "18,1,3", "--bp", "abc"], "--bp"),
    (["rank", "18,1,3", "--only", "water,unobtainium"], "unknown liquid"),
    (["show", "unobtainium"], "unknown liquid"),
    (["rank", "18;5;5"], "dD,dP,dH[,R0] in MPa^0.5 separated by commas, e.g. 18,5,5"),
    (["rank", "18.5;.5;3"], "separated by commas, e.g. 18.5,.5,3"),
    (["rank", "18,1,3", "--mine", "/nonexistent/file.csv"], "file not found"),
    # a point where a liquid is asked for: point to the commands that take a point
    (["replace", "18,5,3"], "reads as HSP numbers, but a liquid (name, CAS number or SMILES) is asked for here"),
    (["show", "1330-20-7"], "'1330-20-7' is not one liquid"),      # mixed xylenes (common practice)
    (["show", "50-00-1"], "no library liquid has this CAS number"),  # formaldehyde, a gas (chemicals)
])
def test_errors_are_one_line(args, msg, capsys):
    rc, out, err = run(args, capsys)
    assert rc == 2
    assert msg in err
    assert "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


def test_show_and_list(capsys):
    rc, out, _ = run(["show", "NMP"], capsys)
    assert rc == 0 and "872-50-4" in out and "ALSHERI_HANSEN" in out
    rc, out, _ = run(["list", "--search", "xylene", "--format", "csv"], capsys)
    df = pd.read_csv(io.StringIO(out))
    assert {"o-xylene", "p-xylene"} <= set(df["name"])
    # a row found by a synonym or CAS number says which: MEK is the trade name of 2-butanone
    # (common practice); 78-93-3 its CAS number (chemicals)
    rc, out, _ = run(["list", "--search", "MEK", "--format", "csv"], capsys)
    df = pd.read_csv(io.StringIO(out), keep_default_na=False).set_index("name")
    assert df.loc["2-butanone", "matched"].lower() == "mek"
    rc, out, _ = run(["list", "--search", "78-93-3", "--format", "csv"], capsys)
    df = pd.read_csv(io.StringIO(out), keep_default_na=False)
    assert list(df["name"]) == ["2-butanone"] and list(df["matched"]) == ["78-93-3"]
    rc, out, _ = run(["list", "--search", "butanone", "--format", "csv"], capsys)
    df = pd.read_csv(io.StringIO(out), keep_default_na=False).set_index("name")
    assert df.loc["2-butanone", "matched"] == ""     # found by its own name


def test_demo_runs(capsys):
    rc, out, _ = run(["demo", "--top", "5"], capsys)
    assert rc == 0 and "INVENTED" in out and "safety data sheet" in out


def test_console_script_cold_start():
    # the installed entry point runs as a fresh process and exits cleanly
    r = subprocess.run([sys.executable, "-m", "selector", "rank", "18,3,4", "--top", "2", "--format", "csv"],
                       capture_output=True, text=True, timeout=60)
    assert r.returncode == 0, r.stderr
    assert len(pd.read_csv(io.StringIO(r.stdout))) == 2
    r = subprocess.run([sys.executable, "-m", "selector", "rank", "nope-liquid"],
                       capture_output=True, text=True, timeout=60)
    assert r.returncode == 2 and "Traceback" not in r.stderr


def test_rank_hazard_and_flash_filters(capsys):
    rc, out, _ = run(["rank", "17.9,6.1,6.4,8.6", "--max-class", "recommended", "--flash", "23:",
                      "--format", "json", "--top", "8"], capsys)
    assert rc == 0
    recs = json.loads(out)
    # a liquid that does not burn passes a minimum flash point (selector.filters): dibromomethane and
    # 1,1,2-trichloroethane are marked not flammable in parameters/hazards.csv (from memory) and
    # come out with no flash point (JSON null)
    from selector.cautions import not_flammable

    lib = selector.load_library()
    nonflam = set(lib.loc[not_flammable(lib), "name"])
    assert recs and all((r["flash_point_c"] is None and r["name"] in nonflam)
                        or (r["flash_point_c"] is not None and r["flash_point_c"] >= 23) for r in recs)
    # every proposed liquid is "recommended" by the CHEM21 scoring in selector.hazards
    assert all(selector.hazard(r["name"]).hazard_class == "recommended" for r in recs)


def test_app_refuses_a_busy_port(capsys):
    # A port something already listens on gets a one-line message, not Streamlit's own error
    # after a misleading "serving on" line.
    import socket

    from selector.cli_app import port_is_free

    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        s.listen(1)
        port = s.getsockname()[1]
        assert not port_is_free(port)
        assert main(["app", "--port", str(port)]) == 2
        err = capsys.readouterr().err
        assert f"port {port}" in err and "in use" in err and "serving" not in err
    assert port_is_free(port)


def test_table_numbers_carry_their_precision_and_units(capsys):
    # Temperatures to 0.1 C and HSP to 0.01 MPa^0.5 (the tables' own precision; common practice:
    # no more digits than the data carry), missing data as "-", and a units line.
    from selector.cli import main

    assert main(["rank", "18,1.4,2", "--only", "toluene,dibromomethane,menthyl acetate", "--top", "3"]) == 0
    out = capsys.readouterr().out
    # only the units of the columns shown: a point target has Ra but no R0
    assert "Units: dD/dP/dH, Ra in MPa^0.5; temperatures in C" in out and "R0" not in out.split("Units:")[1].split("\n")[0]
    lines = out.splitlines()
    head = next(line for line in lines if line.lstrip().startswith("rank "))
    cols = head.split()
    rows = {line.split()[1]: dict(zip(cols, line.split())) for line in lines
            if line.split() and line.split()[0].isdigit()}
    # toluene: bp 110.6 C, flash point 4 C (chemicals), dD 18.0 (published tables)
    tol = rows["toluene"]
    assert (tol["boiling_point_c"], tol["flash_point_c"], tol["delta_d"]) == ("110.6", "4.0", "18.00")
    # menthyl acetate has no flash point in the library and no row in parameters/hazards.csv:
    # shown as "no data" (not NaN, not a blank that could mean "does not burn")
    men = next(line for line in lines if line.split() and line.split()[0].isdigit() and "menthyl acetate" in line)
    assert "no data" in men and "nan" not in men.lower()
    # dibromomethane has no flash point in the library either, but hazards.csv marks it not
    # flammable (from memory): shown so
    dib = next(line for line in lines if line.split() and line.split()[0].isdigit() and "dibromomethane" in line)
    assert "not flammable" in dib and "no data" not in dib and "nan" not in dib.lower()


@pytest.fixture(scope="module")
def estimated_mine(tmp_path_factory):
    """A user file written by `likewise guess --save-mine`: GVL and methyl levulinate (not in the
    library: estimated from structure) and benzamide (in the published training table)."""
    d = tmp_path_factory.mktemp("mine")
    batch = d / "batch.csv"
    batch.write_text("name,smiles\ngvl,CC1CCC(=O)O1\nmethyl levulinate,CC(=O)CCC(=O)OC\n,c1ccccc1C(=O)N\n",
                     encoding="utf-8")
    mine = d / "mine.csv"
    assert main(["guess", str(batch), "--save-mine", str(mine), "--format", "csv", "-o", str(d / "g.csv")]) == 0
    return mine


def test_estimated_liquids_stay_marked_estimated(estimated_mine, capsys):
    mine = str(estimated_mine)
    saved = pd.read_csv(mine)
    assert {"delta_p_low", "delta_p_high", "molar_volume_low"} <= set(saved.columns)   # intervals written
    rc, out, _ = run(["show", "gvl", "benzamide", "toluene", "--mine", mine], capsys)
    assert rc == 0
    gvl, benz, tol = out.split("\n\n")[:3]
    assert "origin                   estimated" in gvl and "molar_volume_estimated   True" in gvl
    assert "90 % interval" in gvl and "sources_disagree" in gvl
    assert [ln for ln in gvl.splitlines() if ln.startswith("sources_disagree")][0].split() == ["sources_disagree"]
    # benzamide: the published value (chemicals.solubility, ALSHERI_HANSEN: 21.2, 14.7, 11.2)
    assert "origin                   published" in benz and "ALSHERI_HANSEN" in benz and "21.2" in benz
    assert "origin                   library" in tol and "sources_disagree         False" in tol
    assert "gvl: HSP and molar volume estimated from structure" in out
    assert "benzamide: HSP from the published table" in out
    rc, out, _ = run(["rank", "gvl", "--mine", mine, "--radius", "6", "--top", "3"], capsys)
    # the target line shows the values `guess` saved: those of selector.estimate for GVL's SMILES
    est = selector.estimate("CC1CCC(=O)O1").iloc[0]
    assert (f"Target gvl: dD {est['delta_d']:.1f}, dP {est['delta_p']:.1f}, dH {est['delta_h']:.1f} MPa^0.5"
            in out) and "(estimated from structure; 90 % intervals dD" in out
    rc, out, _ = run(["blend", "gvl", "--mine", mine, "--radius", "6", "--top", "3", "--format", "json"], capsys)
    assert rc == 0 and "estimated" in json.loads(out)[0]
    rc, out, _ = run(["blend", "18,10,8", "--mine", mine, "--only", "gvl,methyl levulinate,toluene,ethanol",
                      "--format", "json"], capsys)
    blends = json.loads(out)
    assert any(b["estimated"] == "gvl" for b in blends) and any(b["estimated"] == "" for b in blends)
    rc, out, _ = run(["mix", "methyl levulinate", "hexane", "--mine", mine], capsys)
    assert "methyl levulinate: HSP and molar volume estimated from structure" in out
    rc, out, _ = run(["mix-grid", "gvl,hexane,water", "--mine", mine], capsys)
    assert "HSP estimated from structure" in out and ": gvl" in out


def test_sphere_tests_on_estimated_liquids_say_so(estimated_mine, tmp_path, capsys):
    tests = tmp_path / "tests.csv"
    tests.write_text("solvent,outcome\ngvl,good\ntoluene,bad\nhexane,bad\nacetone,good\nethanol,bad\n"
                     "water,bad\nDMSO,good\nNMP,good\n", encoding="utf-8")
    rc, out, _ = run(["sphere", str(tests), "--mine", str(estimated_mine), "--bootstrap", "0", "--format", "csv",
                      "--part", "tests"], capsys)
    t = pd.read_csv(io.StringIO(out)).set_index("label")
    assert t.loc["gvl", "kind"] == "estimated" and t.loc["toluene", "kind"] == "library"


def test_save_mine_refuses_a_file_changed_meanwhile(tmp_path, monkeypatch, capsys):
    # another program (the app) saves the user file between guess reading it and writing it:
    # nothing is written, the other program's save is kept
    import selector.estimation as E

    mine = tmp_path / "mine.csv"
    mine.write_text("name,delta_d,delta_p,delta_h\nkeep me,16,5,5\n", encoding="utf-8")
    theirs = "name,delta_d,delta_p,delta_h\nkeep me,16,5,5\ntheir row,17,6,6\n"
    real = E.with_user_rows

    def concurrent_save(old, rows):
        out = real(old, rows)
        mine.write_text(theirs, encoding="utf-8")
        return out

    monkeypatch.setattr(E, "with_user_rows", concurrent_save)
    # benzamide: in the published table (chemicals, ALSHERI_HANSEN), so a saveable row
    rc, _, err = run(["guess", "c1ccccc1C(=O)N", "--save-mine", str(mine)], capsys)
    assert rc == 2 and "the file changed since you opened it" in err and "nothing was written" in err
    assert mine.read_text(encoding="utf-8") == theirs
    # without the concurrent save the row is added as before
    monkeypatch.setattr(E, "with_user_rows", real)
    rc, _, err = run(["guess", "c1ccccc1C(=O)N", "--save-mine", str(mine)], capsys)
    assert rc == 0 and f"saved 1 row to {mine} (1 published)" in err
    assert list(pd.read_csv(mine)["name"]) == ["keep me", "their row", "benzamide"]


@pytest.mark.parametrize("args", [["mix", "CC1CCC(=O)O1", "hexane"], ["mix-grid", "CC1CCC(=O)O1,hexane"],
                                  ["show", "CC1CCC(=O)O1"]])
def test_unknown_smiles_gets_the_guess_hint(args, capsys):
    rc, _, err = run(args, capsys)
    assert rc == 2 and "likewise guess 'CC1CCC(=O)O1' --save-mine" in err


def test_show_names_the_kept_source_and_why(capsys):
    # tetrachloroethylene: the first-priority table repeats 1,1,2,2-tetrachloroethane's row; the
    # library keeps the handbook value 18.3 / 5.7 / 0.0 (from memory) and says so
    rc, out, _ = run(["show", "tetrachloroethylene"], capsys)
    assert rc == 0
    assert "kept MANUEL_RUBEN_2022 over ALSHERI_HANSEN" in out and "1,1,2,2-tetrachloroethane (79-34-5)" in out
    assert "ALSHERI_HANSEN values (not kept)" in out
    rc, out, _ = run(["rank", "18.3,5.7,0.0", "--top", "3"], capsys)
    assert rc == 0 and "HSP note (which published source is kept" in out
    assert out.split("HSP note")[1].splitlines()[0].endswith(": tetrachloroethylene")


def test_number_hint_only_where_a_target_is_asked_for(capsys):
    # show takes names, CAS numbers or SMILES, never numbers: no dD,dP,dH hint there, but the
    # commands that take a point are named, with the numbers written the way they read them
    rc, _, err = run(["show", "18;5;5"], capsys)
    assert rc == 2 and "unknown liquid" in err and "separated by commas" not in err
    assert "likewise rank 18,5,5" in err


def test_show_gives_the_hazard_summary(capsys):
    # NMP is toxic to reproduction (H360D, EU CLP harmonised classification; from memory in
    # parameters/hazards.csv) and diisopropyl ether forms peroxides (common practice): show says so
    rc, out, _ = run(["show", "NMP", "diisopropyl ether"], capsys)
    assert rc == 0
    blocks = [dict((ln.split(maxsplit=1) + [""])[:2] for ln in b.splitlines() if ln.strip())
              for b in out.split("\n\n") if b.startswith("name")]
    nmp, dipe = blocks[0], blocks[1]
    assert "H360D" in nmp["h_statements"] and "reprotoxic" in nmp["hazard_notes"]
    assert nmp["hazard_class"] == "hazardous" and "peroxide former" in dipe["hazard_notes"]
    # methanol: the guide's class after discussion, with its default beside it (from memory)
    rc, out, _ = run(["show", "methanol"], capsys)
    m = dict((ln.split(maxsplit=1) + [""])[:2] for ln in out.splitlines() if ln.startswith("hazard_class"))
    assert m == {"hazard_class": "recommended", "hazard_class_default": "problematic"}
    # a liquid without hazard data says so instead of looking safe
    rc, out, _ = run(["show", "3-octanone"], capsys)
    assert "no hazard data" in out


def test_rank_lists_each_liquids_hazard_notes(capsys):
    # carbon tetrachloride is a suspected carcinogen (H351) and toxic (H301/H311/H331; EU CLP
    # harmonised classification, from memory in parameters/hazards.csv): a ranking that proposes
    # it must say so in every output format, not only in `show`
    rc, out, _ = run(["rank", "toluene", "--format", "csv", "--top", "40"], capsys)
    assert rc == 0
    df = pd.read_csv(io.StringIO(out)).set_index("name")
    assert "carcinogen" in df.loc["carbon tetrachloride", "hazard_notes"]
    no_data = df["hazard_class"] == "unclassified"
    assert no_data.any() and df.loc[no_data, "hazard_notes"].str.startswith("no hazard data: treat as hazardous").all()
    # the table keeps the meaning in a shorter form (its header explains unclassified)
    rc, out, _ = run(["rank", "toluene", "--top", "40"], capsys)
    assert "no hazard data (treat as hazardous)" in out and "until the safety data sheet" not in out


@pytest.mark.parametrize("argv,flag", [
    (["rank", "toluene", "--min-flash", "nan"], "--min-flash (min_flash_point_c)"),
    (["rank", "toluene", "--max-volume", "-5"], "--max-volume (max_molar_volume)"),
    (["dry", "toluene,butyl acetate", "--shares", "0.4,0.6", "--keep-until", "2"], "--keep-until (must_stay_until)"),
    (["blend", "18,5,6", "--min-share", "0.7"], "(--min-share, min_fraction)"),
    # boundary review: each of these ran and quietly did without the option
    (["sphere", "parameters/demo/lab_tests.csv", "--part", "misfits"], "give --format csv too"),
    (["sphere", "parameters/demo/lab_tests.csv", "--next", "-1"], "--next must be 0"),
    (["replace", "toluene", "--solute-radius", "5"], "give --solute too"),
    (["dry", "toluene,butyl acetate", "--shares", "0.5,0.5", "--radius", "4"], "give --target too"),
    (["rank", "toluene", "-o", ""], "empty file name"),
])
def test_errors_name_the_option_typed(argv, flag, capsys):
    # README walk-through: messages named the library keyword the user never typed
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert flag in err and "Traceback" not in err


def test_unknown_text_that_is_a_broken_smiles_says_so(capsys):
    # "C1CC" has an unclosed ring (RDKit cannot parse it); "c1ccccc1O" (phenol) parses but is no
    # library liquid: each command says which, not only "unknown liquid"
    for cmd in (["rank", "C1CC"], ["hazard", "C1CC"], ["replace", "C1CC"]):
        assert main(cmd) == 2
        assert "read as a SMILES it is not valid either" in capsys.readouterr().err, cmd
    assert main(["hazard", "c1ccccc1O"]) == 2
    assert "likewise guess 'c1ccccc1O'" in capsys.readouterr().err


def test_empty_only_list_and_bad_pass_mark_are_refused(capsys):
    # README walk-through: `--only ""` was ignored; a pass mark above the scale said "only 0 good
    # results"; `replace toluene --only toluene` blamed a never-propose list the user did not give
    assert main(["rank", "toluene", "--only", ""]) == 2
    assert "names no liquid" in capsys.readouterr().err
    from pathlib import Path

    demo = str(Path(__file__).resolve().parent.parent / "parameters" / "demo" / "lab_tests.csv")
    assert main(["sphere", demo, "--outcome", "score", "--pass-mark", "9",
                 "--scale", "1:6"]) == 2
    assert "does not fit the scale 1..6: no grade could reach it" in capsys.readouterr().err
    assert main(["replace", "toluene", "--only", "toluene"]) == 2
    err = capsys.readouterr().err
    assert "only toluene (name more)" in err and "never to propose" not in err


# ---------------------------------------------------------------- boundary review, round 4

@pytest.mark.parametrize("kw", [{"include_reactive": "False"}, {"halogen_free": "no"},
                                {"consistent_sources_only": float("nan")}])
def test_on_off_options_refuse_text(kw):
    # bool("False") is True: the text used to turn the option on (benzene ranked first)
    from selector.errors import SelectorError

    with pytest.raises(SelectorError, match="must be True or False"):
        selector.rank((18.4, 0.0, 2.0), **kw)
    assert len(selector.rank((18.4, 0.0, 2.0), include_reactive=False)) < len(
        selector.rank((18.4, 0.0, 2.0), include_reactive=True))


@pytest.mark.parametrize("bad", [0, -1, float("nan"), "x"])
def test_blend_resolution_must_be_positive(bad):
    # resolution=-1 had sorted the worst blends first (water on top), 0 divided by zero
    from selector.errors import SelectorError

    with pytest.raises(SelectorError, match="resolution must be"):
        selector.find_blends((17.9, 6.1, 6.4, 8.6), max_components=2, resolution=bad)


def test_bootstrap_has_a_ceiling(capsys):
    # 10^8 resamples asked for about 24 GB and were killed by the kernel without a message
    assert main(["sphere", "parameters/demo/lab_tests.csv", "--bootstrap", "100000000"]) == 2
    assert "more than 20,000" in capsys.readouterr().err


def test_machine_formats_keep_stdout_parseable_and_say_the_rest_on_stderr(capsys):
    # demo in JSON: the invented story goes to stderr, stdout parses as JSON
    assert main(["demo", "--format", "json"]) == 0
    out, err = capsys.readouterr()
    assert isinstance(json.loads(out), list) and "INVENTED" in err
    # dry in JSON: the tail solvent, the sphere warning and the caution (stderr) are not lost;
    # water evaporates more slowly than acetone (common practice)
    assert main(["dry", "acetone,water", "--shares", "0.5,0.5", "--target", "18.6,10.5,5.1,8.6",
                 "--format", "json"]) == 0
    out, err = capsys.readouterr()
    assert json.loads(out)[0]["phi_acetone"] == pytest.approx(0.5)
    assert "tail solvent (the last to leave): water" in err and "safety data sheet" in err
    # mix-grid in CSV: the reacting pair (acid + amine, common practice) is named on stderr
    assert main(["mix-grid", "acetic acid,triethylamine,toluene", "--format", "csv"]) == 0
    out, err = capsys.readouterr()
    assert pd.read_csv(io.StringIO(out)).shape == (3, 4)
    assert "REACTIVE PAIRS" in err and "acetic acid + triethylamine" in err


def test_mix_grid_applies_its_filters_to_named_liquids(capsys):
    # boundary review: --without, --halogen-free and --min-flash were ignored when liquids were named
    assert main(["mix-grid", "water,ethanol,hexane,dichloromethane", "--halogen-free", "--without", "hexane",
                 "--format", "csv"]) == 0
    out, err = capsys.readouterr()
    grid = pd.read_csv(io.StringIO(out))
    assert grid["liquid"].tolist() == ["water", "ethanol"]
    assert "Left out by the filters: hexane, dichloromethane" in err
    # water + ethanol mix in all proportions (common practice)
    assert grid.set_index("liquid").loc["water", "ethanol"] == "miscible"
    assert main(["mix-grid", "water,hexane", "--without", "hexane"]) == 2
    assert "a grid needs two" in capsys.readouterr().err
    assert main(["mix-grid", "water,hexane", "--not-miscible"]) == 2
    assert "give --long too" in capsys.readouterr().err
    # the long list keeps a pair UNIFAC (thermo) splits where the model does not: glycerol +
    # acetone, two layers (from memory), model "miscible"
    assert main(["mix-grid", "glycerol,acetone,ethanol", "--long", "--not-miscible", "--format", "csv"]) == 0
    pairs = pd.read_csv(io.StringIO(capsys.readouterr().out)).fillna("")
    row = pairs.loc[(pairs["a"] == "glycerol") & (pairs["b"] == "acetone")].iloc[0]
    assert row["state"] == "miscible" and bool(row["uncertain"])
    assert row["unifac_disagrees"] == "UNIFAC (original): partially miscible"


def test_save_mine_keeps_the_users_own_columns_as_typed(tmp_path, capsys):
    # boundary review: merging a row rewrote a user's code "007" as 7.0 and "1e3" as 1000.0
    mine = tmp_path / "mine.csv"
    mine.write_text("name,delta_d,delta_p,delta_h,code,remark\nkeep me (invented),17.1,3.2,5.5,007,1e3\n",
                    encoding="utf-8")
    # benzamide: in the published table (chemicals, ALSHERI_HANSEN), so a saveable row
    rc, _, err = run(["guess", "c1ccccc1C(=O)N", "--save-mine", str(mine)], capsys)
    assert rc == 0 and "saved 1 row" in err
    first = mine.read_text(encoding="utf-8").splitlines()[1]
    assert first.startswith("keep me (invented),17.1,3.2,5.5,007,1e3")
    back = pd.read_csv(mine, dtype=str)
    assert list(back["name"]) == ["keep me (invented)", "benzamide"]


def test_window_with_a_negative_start_and_typographic_minus(capsys):
    """``--flash -20:10`` is read as the window (argparse alone takes "-20:10" for an option);
    a minus sign pasted as U+2212 is a minus. Checked against the library's own flash points."""
    rc, out, err = run(["rank", "toluene", "--flash", "-20:10", "--format", "csv", "--top", "200"], capsys)
    assert rc == 0, err
    fp = pd.read_csv(io.StringIO(out))["flash_point_c"]
    assert len(fp) > 5 and fp.between(-20, 10).all() and (fp < 0).any()
    rc, out, err = run(["rank", "toluene", "--min-flash", "\u221215", "--format", "csv"], capsys)
    assert rc == 0, err
    assert pd.read_csv(io.StringIO(out))["flash_point_c"].min() >= -15


@pytest.mark.parametrize("args,fix", [
    (["rank", "toluene", "--min-flash", "17,5"], "(17.5)"),
    (["rank", "toluene", "--bp", "80,5:"], "(80.5)"),
    (["blend", "toluene", "--at", "30,0"], "(30.0)"),
])
def test_decimal_comma_is_refused_with_the_fix(capsys, args, fix):
    # "1,500" could be fifteen hundred or one and a half: refused, never guessed (common practice)
    try:
        rc = main(args)
    except SystemExit as e:   # argparse's own exit for an option's value
        rc = e.code
    out, err = capsys.readouterr()
    assert rc == 2 and out == ""
    assert "write decimals with a point " + fix in err


def test_mix_grid_header_names_thirty_reacting_pairs_and_counts_the_rest(capsys):
    # primary and secondary amines react with esters and carbonates (aminolysis, common practice):
    # 6 x 7 = 42 reacting pairs, more than one header line should name
    amines = ["diethylamine", "butylamine", "morpholine", "piperidine", "pyrrolidine", "dibutylamine"]
    esters = ["ethyl acetate", "methyl acetate", "propyl acetate", "butyl acetate", "propylene carbonate",
              "triacetin", "tert-butyl acetate"]
    names = ",".join(amines + esters)
    assert main(["mix-grid", names, "--long", "--format", "csv"]) == 0
    pairs = pd.read_csv(io.StringIO(capsys.readouterr().out))
    reacting = pairs.loc[pairs["reacts"]]
    assert len(reacting) == 42
    assert set(reacting["a"]) | set(reacting["b"]) == set(amines) | set(esters)
    assert main(["mix-grid", names, "--format", "csv"]) == 0
    err = capsys.readouterr().err
    line = next(x for x in err.splitlines() if x.startswith("REACTIVE PAIRS"))
    assert line.count(" + ") == 30
    assert line.endswith("... and 12 more (--long lists every pair: see its reacts column)")


def test_named_target_with_radius_is_corrected_at_the_use_temperature(capsys):
    # numbers review, round 5: `rank toluene --radius 5 --at 90` printed the 25 C point (dD 18.0)
    rc, out, err = run(["rank", "toluene", "--radius", "5", "--at", "90", "--only", "toluene,cumene",
                        "--format", "csv"], capsys)
    assert rc == 0, err
    df = pd.read_csv(io.StringIO(out)).set_index("name")
    assert df.loc["toluene", "ra"] == pytest.approx(0.0, abs=1e-6)
    assert df.loc["toluene", "rank"] == 1


def test_show_prints_units_and_where_the_hazard_class_comes_from(capsys):
    # README walk and numbers review, round 5: `show` printed density, molar volume and the
    # hazard class with no unit and no source. Toluene: 0.8622 g/cm3 and 106.86 cm3/mol at 25 C
    # (thermo, via the library); CHEM21 class problematic (Prat et al. 2016, from memory)
    rc, out, _ = run(["show", "toluene"], capsys)
    assert rc == 0
    lines = {ln.split()[0]: ln for ln in out.splitlines() if ln.strip()}
    assert lines["density"].endswith("0.8622 g/cm3 at 25 C")
    assert lines["molar_volume"].endswith("106.86 cm3/mol")
    assert lines["delta_d"].endswith("18.0 MPa^0.5")
    assert lines["hazard_class_default"].endswith("same (not revised)")
    assert "Hazard class: CHEM21 method" in out and "quoted from memory" in out


def test_a_solid_with_published_hsp_is_a_target_on_the_command_line(capsys):
    # sulfolane melts at 27.3 C (chemicals): not a library liquid, but a solute to dissolve by its
    # published point (dD 20.3, dP 18.2, dH 10.9, parameters/estimator/training_hsp.csv)
    rc, out, _ = run(["rank", "sulfolane", "--radius", "5", "--top", "3"], capsys)
    assert rc == 0 and "Target sulfolane: dD 20.3, dP 18.2, dH 10.9 MPa^0.5, R0 5.0" in out
    assert "NOTE: sulfolane is not in the liquid library (it melts at 27.3 C" in out
    rc, _, err = run(["mix", "sulfolane", "water"], capsys)
    assert rc == 2 and "has published HSP" in err and "likewise guess 'C1CCS(=O)(=O)C1' --save-mine" in err
