"""Files on the command line: -o never destroys an input, an existing or a read-only file, nor
creates folders; user CSV files from spreadsheets (Windows-1252, semicolons, decimal commas,
dD/dP/dH headers) are read; --top is checked; missing files are one-line errors.

The small tables written here are invented inputs for the readers (labelled so); the values
checked against them are the ones written, or the bundled library's own values.
"""
from __future__ import annotations

import argparse
import io
import json
import os
import stat

import numpy as np
import pandas as pd
import pytest

import selector
from selector.cli import main
from selector.cli_common import check_file_args
from selector.errors import InputTableError, SelectorError
from selector.io import check_output_path, decode_text, read_user_csv, rename_aliases, sniff_delimiter, write_atomic
from selector.library import USER_COLUMN_ALIASES, _as_frame, load_library, validate_user_table
from selector.spheres import read_tests

LIB = load_library()


def run(args, capsys):
    rc = main(args)
    out = capsys.readouterr()
    return rc, out.out, out.err


@pytest.fixture
def lab_file(tmp_path):
    """An invented lab-test file (the bundled invented demo results)."""
    p = tmp_path / "keep_tests.csv"
    p.write_bytes((selector.library.PARAMETERS_DIR / "demo" / "lab_tests.csv").read_bytes())
    return p


# ------------------------------------------------------------------ -o: inputs, existing files

def test_sphere_refuses_to_write_over_its_lab_tests(lab_file, capsys):
    before = lab_file.read_bytes()
    rc, out, err = run(["sphere", str(lab_file), "--format", "csv", "-o", str(lab_file), "--bootstrap", "0"],
                       capsys)
    assert rc == 2 and out == ""
    assert err.count("\n") == 1 and "is also an input of this command" in err
    assert lab_file.read_bytes() == before


def test_rank_refuses_to_write_over_mine_even_with_overwrite(tmp_path, capsys):
    mine = tmp_path / "mine.csv"
    mine.write_text("name,delta_d,delta_p,delta_h\ninvented liquid,17,4,6\n")  # invented entry
    before = mine.read_bytes()
    rc, _, err = run(["rank", "toluene", "--mine", str(mine), "-o", str(mine), "--overwrite"], capsys)
    assert rc == 2 and "--mine" in err and "is also an input" in err
    assert mine.read_bytes() == before


def test_input_found_through_another_path_spelling(tmp_path, monkeypatch, lab_file):
    monkeypatch.chdir(tmp_path)
    a = argparse.Namespace(tests="keep_tests.csv", output=str(tmp_path / "." / "keep_tests.csv"), overwrite=True)
    with pytest.raises(SelectorError, match="also an input"):
        check_file_args(a)
    link = tmp_path / "link.csv"
    os.symlink(lab_file, link)
    a = argparse.Namespace(tests=str(lab_file), output=str(link), overwrite=True)
    with pytest.raises(SelectorError, match="also an input"):
        check_file_args(a)


def test_existing_file_needs_overwrite(tmp_path, capsys):
    p = tmp_path / "out.csv"
    p.write_text("keep me\n")
    rc, _, err = run(["rank", "toluene", "-o", str(p)], capsys)
    assert rc == 2 and p.read_text() == "keep me\n"
    assert f"{p} already exists; use --overwrite to replace it" in err
    rc, _, err = run(["rank", "toluene", "--format", "csv", "-o", str(p), "--overwrite", "--top", "3"], capsys)
    assert rc == 0
    assert pd.read_csv(p)["name"].tolist() == selector.rank("toluene")["name"].head(3).tolist()
    assert sorted(f.name for f in tmp_path.iterdir()) == ["out.csv"]  # no temp file left


def test_command_without_overwrite_flag_suggests_another_name(tmp_path):
    p = tmp_path / "sphere.csv"
    p.write_text("old\n")
    with pytest.raises(SelectorError, match="choose another name or delete it first"):
        check_file_args(argparse.Namespace(output=str(p)))


def test_read_only_file_refused_even_with_overwrite(tmp_path, capsys):
    p = tmp_path / "locked.csv"
    p.write_text("precious\n")
    p.chmod(0o444)
    try:
        rc, _, err = run(["rank", "toluene", "-o", str(p), "--overwrite"], capsys)
        assert rc == 2 and "read-only" in err
        assert p.read_text() == "precious\n"
        with pytest.raises(SelectorError, match="read-only"):
            write_atomic(p, "new")
        assert p.read_text() == "precious\n"
    finally:
        p.chmod(stat.S_IWUSR | stat.S_IRUSR)


def test_missing_folder_is_refused_not_created(tmp_path, capsys):
    target = tmp_path / "no" / "such" / "out.csv"
    rc, _, err = run(["rank", "toluene", "-o", str(target)], capsys)
    assert rc == 2 and f"folder {target.parent} does not exist" in err
    assert not (tmp_path / "no").exists()


def test_folder_as_output_gives_a_clear_message(tmp_path, capsys):
    rc, _, err = run(["rank", "toluene", "-o", str(tmp_path)], capsys)
    assert rc == 2 and "is a folder; give a file name" in err and "Errno" not in err


def test_save_mine_gets_the_folder_and_read_only_checks(tmp_path):
    with pytest.raises(SelectorError, match="does not exist"):
        check_file_args(argparse.Namespace(save_mine=str(tmp_path / "nope" / "mine.csv")))
    p = tmp_path / "mine.csv"
    p.write_text("name,delta_d,delta_p,delta_h\n")
    check_file_args(argparse.Namespace(save_mine=str(p)))  # an existing file is merged into: allowed
    p.chmod(0o444)
    try:
        with pytest.raises(SelectorError, match="read-only"):
            check_file_args(argparse.Namespace(save_mine=str(p)))
    finally:
        p.chmod(0o644)


def test_save_mine_refuses_a_file_that_is_no_liquid_table(tmp_path, capsys):
    # README walk-through: a one-line text file was rewritten as a liquids table with an extra
    # empty column; it must be left as it was, before any model is trained
    p = tmp_path / "exists.txt"
    p.write_text("existing\n")
    rc, out, err = run(["guess", "CCOC(=O)CCC(C)=O", "--save-mine", str(p)], capsys)
    assert rc == 2 and "is not a table of your liquids" in err and "no name, delta_d" in err
    assert p.read_text() == "existing\n" and out == ""


def test_check_output_path_new_file_ok(tmp_path):
    assert check_output_path(tmp_path / "new.csv", overwrite=False) == tmp_path / "new.csv"


# ------------------------------------------------------------------ missing inputs

@pytest.mark.parametrize("args", [
    ["blend", "toluene", "--radius", "5", "--prices", "{d}/prices.csv"],
    ["rank", "toluene", "--mine", "{d}/mine.csv"],
    ["sphere", "{d}/tests.csv"],
])
def test_missing_input_file_is_one_line(args, tmp_path, capsys):
    args = [x.format(d=tmp_path) for x in args]
    rc, _, err = run(args, capsys)
    assert rc == 2 and err.count("\n") == 1
    assert "file not found: " + str(tmp_path) in err and "Errno" not in err


def test_folder_as_input(tmp_path):
    with pytest.raises(SelectorError, match="is a folder"):
        read_user_csv(tmp_path)


# ------------------------------------------------------------------ reading spreadsheet CSV

def test_excel_semicolon_cp1252_decimal_commas(tmp_path):
    # invented liquid; Windows-1252 bytes (é = 0xE9), semicolons, decimal commas
    p = tmp_path / "excel.csv"
    p.write_bytes("Name;dD;dP;dH;V;bp\nsolvant é (invented);17,9;3,1;5,2;120,5;150\n".encode("cp1252"))
    df = validate_user_table(p)
    assert df.attrs.get("encoding", "cp1252") == "cp1252"
    r = df.iloc[0]
    assert r["name"] == "solvant é (invented)"
    assert (r.delta_d, r.delta_p, r.delta_h, r.molar_volume, r.boiling_point_c) == (17.9, 3.1, 5.2, 120.5, 150.0)


def test_decode_and_sniff():
    assert decode_text("café".encode("utf-8-sig")) == ("café", "utf-8")
    assert decode_text("café".encode("cp1252")) == ("café", "cp1252")
    assert decode_text("a\tb".encode("utf-16")) == ("a\tb", "utf-16")
    assert sniff_delimiter("name;dD;dP\n") == ";"
    assert sniff_delimiter("name\tdD\tdP\n") == "\t"
    assert sniff_delimiter('"a;b",c\n') == ","  # a semicolon inside quotes does not count
    assert sniff_delimiter("solvent\n") == ","


def test_tab_and_utf16_files(tmp_path):
    p = tmp_path / "tab.txt"
    p.write_bytes("name\tdelta_d\tdelta_p\tdelta_h\ninvented a\t16,5\t2\t3\n".encode("utf-16"))
    df = validate_user_table(p)
    assert df["delta_d"].tolist() == [16.5]


def test_comma_file_keeps_text_with_commas(tmp_path):
    # in a comma file "1,4-dioxane" is a name, and a quoted "17,9" is not a decimal comma
    p = tmp_path / "c.csv"
    p.write_text('solvent,outcome,note\n1,4-dioxane,good,x\n', encoding="utf-8")
    with pytest.raises(InputTableError, match="row 2 has 4 fields"):
        read_tests(p)
    p.write_text('solvent;outcome;note\n1,4-dioxane;good;"a, b"\n', encoding="utf-8")
    df = read_user_csv(p, dtype=str)
    assert df["solvent"].tolist() == ["1,4-dioxane"] and df["note"].tolist() == ["a, b"]


def test_semicolon_lab_tests_give_the_same_sphere_as_commas(lab_file, tmp_path):
    semi = tmp_path / "semi.csv"
    t = pd.read_csv(lab_file)
    semi.write_bytes(t.to_csv(sep=";", index=False).encode("cp1252"))
    a = selector.fit_sphere(lab_file, bootstrap=0)
    b = selector.fit_sphere(semi, bootstrap=0)
    assert (b.spheres[0].delta_d, b.spheres[0].radius) == (a.spheres[0].delta_d, a.spheres[0].radius)
    assert len(b.tests) == len(a.tests)


def test_lab_tests_with_own_numbers_in_dD_columns(tmp_path):
    # own liquids given as numbers under dD/dP/dH headers with decimal commas: read as the
    # library values of the named liquids, written out with commas
    names = ["toluene", "acetone", "ethanol", "hexane", "water"]
    rows = LIB.set_index("name").loc[names, ["delta_d", "delta_p", "delta_h"]]
    lines = ["Liquid;dD;dP;dH;Outcome"]
    for n, (d, pp, h) in rows.iterrows():
        lines.append(f"{n};{str(d).replace('.', ',')};{str(pp).replace('.', ',')};{str(h).replace('.', ',')};"
                     f"{'good' if n in ('toluene', 'acetone') else 'bad'}")
    p = tmp_path / "own.csv"
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    tab = read_tests(p)
    assert tab["label"].tolist() == names
    assert np.allclose(tab[["delta_d", "delta_p", "delta_h"]].to_numpy(float), rows.to_numpy(float))
    assert tab["good"].tolist() == [True, True, False, False, False]


def test_binary_and_empty_files(tmp_path):
    p = tmp_path / "bin.csv"
    p.write_bytes(b"\x00\xff\xfe\x01")
    with pytest.raises(SelectorError, match="not a readable CSV"):
        read_user_csv(p)
    p.write_text("\n\n")
    with pytest.raises(SelectorError, match="is empty"):
        read_user_csv(p)


def test_uploaded_bytes_and_file_objects():
    data = "Name;dD;dP;dH\ninvented b;18,0;1,5;2,5\n".encode("cp1252")
    for src in (data, io.BytesIO(data)):
        df = validate_user_table(src)
        assert df[["delta_d", "delta_p", "delta_h"]].iloc[0].tolist() == [18.0, 1.5, 2.5]


# ------------------------------------------------------------------ header aliases

@pytest.mark.parametrize("headers", [
    ["name", "dD", "dP", "dH"], ["Name", "δD", "δP", "δH"], ["NAME", "delta_d", "Delta P", "delta-h"],
    ["name", "dD (MPa½)", "dP (MPa^0.5)", "dH [MPa0.5]"],
])
def test_user_table_header_aliases(headers):
    df = pd.DataFrame([["invented c", 17.0, 4.0, 6.0]], columns=headers)
    out = validate_user_table(df)
    assert out[["name", "delta_d", "delta_p", "delta_h"]].iloc[0].tolist() == ["invented c", 17.0, 4.0, 6.0]


def test_optional_aliases_and_clashes():
    df = pd.DataFrame([["invented d", 17.0, 4.0, 6.0, 100.0, 150.0, 40.0, 8.0]],
                      columns=["name", "dD", "dP", "dH", "V", "bp", "fp", "R0"])
    out = validate_user_table(df)
    assert out[["molar_volume", "boiling_point_c", "flash_point_c", "radius"]].iloc[0].tolist() == [
        100.0, 150.0, 40.0, 8.0]
    with pytest.raises(InputTableError, match="both mean delta_d"):
        rename_aliases(pd.DataFrame(columns=["dD", "δD"]), USER_COLUMN_ALIASES)
    # a canonical column wins over an alias beside it
    assert list(rename_aliases(pd.DataFrame(columns=["name", "solvent"]), USER_COLUMN_ALIASES).columns) == [
        "name", "solvent"]


def test_missing_columns_message_names_the_short_forms():
    with pytest.raises(InputTableError, match="need name, dD, dP, dH"):
        validate_user_table(pd.DataFrame({"name": ["x"], "dD": [17.0]}))


def test_mine_with_excel_file_on_the_command_line(tmp_path, capsys):
    p = tmp_path / "mine.csv"
    p.write_bytes("Name;dD;dP;dH\nréplique (invented);17,3;9,1;3,3\n".encode("cp1252"))
    rc, out, _ = run(["rank", "17.3,9.1,3.3", "--mine", str(p), "--only", "réplique (invented),toluene",
                      "--format", "json"], capsys)
    assert rc == 0
    recs = {r["name"]: r for r in json.loads(out)}
    mine = recs["réplique (invented)"]
    assert (mine["delta_d"], mine["delta_p"], mine["delta_h"]) == (17.3, 9.1, 3.3)
    assert mine["ra"] == pytest.approx(0.0, abs=1e-9)


def test_merge_reader_renames_headers(tmp_path):
    # what `guess --save-mine` merges into: a file with dD headers keeps its rows as delta_d...
    p = tmp_path / "mine.csv"
    p.write_text("Name,dD,dP,dH\ninvented e,17,4,6\ninvented f,16,2,3\n")
    old = _as_frame(p)
    assert list(old.columns) == ["name", "delta_d", "delta_p", "delta_h"] and len(old) == 2


# ------------------------------------------------------------------ --top

@pytest.mark.parametrize("value", ["0", "-5", "x", "2.5"])
def test_top_must_be_a_positive_whole_number(value, capsys):
    with pytest.raises(SystemExit) as e:
        main(["rank", "toluene", "--top", value])
    assert e.value.code == 2
    assert "--top" in capsys.readouterr().err


def test_file_output_gets_every_row_unless_top_given(tmp_path, capsys):
    full = selector.rank((18.0, 3.0, 4.0))
    p = tmp_path / "all.csv"
    rc, _, err = run(["rank", "18,3,4", "--format", "csv", "-o", str(p)], capsys)
    assert rc == 0 and f"wrote {len(full)} rows" in err
    assert len(pd.read_csv(p)) == len(full) > 20
    for order in (["--top", "7", "-o", str(tmp_path / "a.csv")], ["-o", str(tmp_path / "b.csv"), "--top", "7"]):
        rc, _, _ = run(["rank", "18,3,4", "--format", "csv", *order], capsys)
        assert rc == 0
    assert len(pd.read_csv(tmp_path / "a.csv")) == len(pd.read_csv(tmp_path / "b.csv")) == 7
    rc, out, _ = run(["rank", "18,3,4", "--format", "csv"], capsys)
    assert len(pd.read_csv(io.StringIO(out))) == 20  # the screen keeps the default


def test_list_shows_all_by_default_and_empty_result_is_one_line(capsys):
    rc, out, _ = run(["list"], capsys)
    n = int(out.splitlines()[0].split()[0])  # "<n> liquids match"
    assert rc == 0 and n > 100 and len(out.strip().splitlines()) == n + 3  # count, units, column names, rows
    assert out.splitlines()[1].startswith("Units: dD/dP/dH")
    rc, out, _ = run(["list", "--format", "csv"], capsys)
    assert rc == 0 and len(pd.read_csv(io.StringIO(out))) == n
    rc, out, err = run(["list", "--search", "no-such-liquid-anywhere"], capsys)
    assert rc == 2 and "Empty DataFrame" not in out + err
    assert "no liquid's name, synonym or CAS number contains 'no-such-liquid-anywhere'" in err


def test_blend_file_keeps_its_top_default(tmp_path, capsys):
    p = tmp_path / "blends.csv"
    rc, _, err = run(["blend", "18,6,7,5", "--format", "csv", "-o", str(p)], capsys)
    assert rc == 0 and len(pd.read_csv(p)) <= 20 and "--top" in err


# ------------------------------------------------------------------ app uploads

@pytest.fixture
def app(tmp_path, monkeypatch):
    AppTest = pytest.importorskip("streamlit.testing.v1").AppTest
    monkeypatch.setenv("LIKEWISE_HOME", str(tmp_path))
    from pathlib import Path

    a = AppTest.from_file(str(Path(__file__).resolve().parent.parent / "app" / "likewise_app.py"),
                          default_timeout=60)
    a.run()
    assert not a.exception
    return a


def test_app_my_liquids_imports_excel_csv_with_dD_headers(app):
    app.switch_page("views/mine.py").run()
    data = "Name;dD;dP;dH\nimporté (invented);17,5;6,5;7,5\n".encode("cp1252")
    app.file_uploader(key="mine_up").upload("mine.csv", data, "text/csv").run()
    assert not app.exception and not [e.value for e in app.error]
    shown = app.dataframe[-1].value
    assert shown[["name", "delta_d", "delta_p", "delta_h"]].iloc[0].tolist() == ["importé (invented)", 17.5, 6.5, 7.5]


def test_app_sphere_upload_reads_semicolon_cp1252(app, lab_file):
    app.switch_page("views/sphere.py").run()
    app.radio(key="sp_src").set_value("Upload a CSV").run()
    t = pd.read_csv(lab_file)
    app.file_uploader(key="sp_up").upload("tests.csv", t.to_csv(sep=";", index=False).encode("cp1252"),
                                          "text/csv").run()
    assert not app.exception and not [e.value for e in app.error]
    assert app.dataframe[0].value["solvent"].tolist() == t["solvent"].tolist()
    # the page's sphere is the one fitted to the same tests read from the comma file
    fit = selector.fit_sphere(lab_file, bootstrap=0)
    s = fit.spheres[0]
    assert [m.value for m in app.metric][:4] == [f"{v:.1f}" for v in (s.delta_d, s.delta_p, s.delta_h, s.radius)]


# ------------------------------------------------------------------ sphere / guess --overwrite, prices

def test_sphere_overwrite_flag(lab_file, tmp_path, capsys):
    p = tmp_path / "fit.csv"
    p.write_text("old\n")
    rc, _, err = run(["sphere", str(lab_file), "--format", "csv", "-o", str(p), "--bootstrap", "0", "--next", "0"],
                     capsys)
    assert rc == 2 and "use --overwrite" in err and p.read_text() == "old\n"
    rc, _, _ = run(["sphere", str(lab_file), "--format", "csv", "-o", str(p), "--bootstrap", "0", "--next", "0",
                    "--overwrite"], capsys)
    fit = selector.fit_sphere(lab_file, bootstrap=0)
    assert rc == 0 and pd.read_csv(p)["radius"].iloc[0] == pytest.approx(fit.spheres[0].radius)


def test_excel_price_list(tmp_path, capsys):
    # invented prices, semicolons and decimal commas in Windows-1252
    p = tmp_path / "prices.csv"
    p.write_bytes("name;cost_per_litre\ntoluene;3,5\nethanol;2,25\n".encode("cp1252"))
    from selector.cli_blend import _prices

    got = _prices(str(p))["cost_per_litre"]
    assert dict(zip(got["name"], got["cost_per_litre"])) == {"toluene": 3.5, "ethanol": 2.25}


def test_guess_refuses_same_file_for_output_and_save_mine_before_training(tmp_path, capsys, monkeypatch):
    # -o and --save-mine naming one (not yet existing) file used to write the estimates and then
    # read them back as "my liquids"; both are refused up front now, before any estimate is made.
    import selector.estimation
    from selector.cli import main

    def no_estimate(*args, **kwargs):
        raise AssertionError("the estimator ran before the files were vetted")

    monkeypatch.setattr(selector.estimation, "estimate", no_estimate)
    f = tmp_path / "both.csv"
    assert main(["guess", "CCO", "-o", str(f), "--save-mine", str(f)]) == 2
    assert "same file" in capsys.readouterr().err
    assert not f.exists()


def test_overwrite_through_a_link_writes_the_file_it_names(tmp_path):
    # boundary review: -o link.csv --overwrite replaced the link with a new file and left the file
    # it pointed to as it was
    target = tmp_path / "real.csv"
    target.write_text("old\n")
    link = tmp_path / "link.csv"
    os.symlink(target, link)
    assert main(["rank", "toluene", "--top", "3", "--format", "csv", "-o", str(link), "--overwrite"]) == 0
    assert link.is_symlink() and os.path.realpath(link) == str(target)
    shown = pd.read_csv(target)
    assert len(shown) == 3 and "name" in shown.columns
