"""The user's own liquids file: blank cells from the command line, and the app's "My liquids" page
never losing rows written meanwhile by another program, an unreadable file, or a mistyped folder.

All liquids here are invented (labelled so); nothing is checked against an outside value.
"""
from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from selector.cli import main
from selector.library import save_user_liquids, validate_user_table

ROOT = Path(__file__).resolve().parent.parent
ENTRY = str(ROOT / "app" / "likewise_app.py")

AppTest = pytest.importorskip("streamlit.testing.v1").AppTest

IMPORT_CSV = (b"name,kind,delta_d,delta_p,delta_h,molar_volume,radius\n"
              b"resin thinner X (invented),liquid,17.1,3.2,5.5,120,\n"
              b"my resin (invented),solute,18.5,7.0,6.0,,7.0\n")


def test_cli_blank_name_is_a_message_not_a_traceback(tmp_path, capsys):
    p = tmp_path / "f.csv"
    p.write_text("name,delta_d,delta_p,delta_h\n,16,5,6\n")
    rc = main(["rank", "toluene", "--mine", str(p)])
    err = capsys.readouterr().err
    assert rc == 2
    assert "user liquids: 1 problem\n" in err and "row 2: name is empty" in err
    assert "Traceback" not in err


def _rows(**cols):
    base = {"delta_d": [17.0, 17.5], "delta_p": [2.0, 2.5], "delta_h": [3.0, 3.5]}
    return pd.DataFrame({**cols, **base})


def test_two_rows_replacing_one_library_liquid_are_refused():
    # 108-88-3 is toluene's CAS (chemicals); one row names it, the other gives its CAS
    from selector.errors import InputTableError
    from selector.library import load_library, merge_user_liquids

    with pytest.raises(InputTableError) as e:
        merge_user_liquids(load_library(), _rows(name=["toluene", "thinner B (invented)"],
                                                 cas=["", "108-88-3"]))
    msg = str(e.value)
    assert "row 2 (toluene), row 3 (thinner B (invented)) both replace library liquid 'toluene'" in msg


def test_duplicate_cas_in_user_rows_is_refused():
    from selector.errors import InputTableError
    from selector.library import validate_user_table

    with pytest.raises(InputTableError, match=r"CAS 50-00-0 appears in more than one row \(rows 2, 3\)"):
        validate_user_table(_rows(name=["a (invented)", "b (invented)"], cas=["50-00-0", "50-00-0"]))


def test_a_row_with_an_extra_field_is_refused_not_shifted(tmp_path, capsys):
    # boundary review: "myketone,15.5,10,4,7.0" under a four-column header (a decimal comma, or a
    # stray value) made pandas read the name as the index: a liquid "15.5" with dD 10, silently
    p = tmp_path / "mine.csv"
    p.write_text("name,delta_d,delta_p,delta_h\nmyketone (invented),15.5,10,4,7.0\n")
    assert main(["show", "myketone (invented)", "--mine", str(p)]) == 2
    err = capsys.readouterr().err
    assert "row 2 has 5 fields, the header has 4" in err and "Traceback" not in err
    # a short row is still read (its missing cells are blank), as before
    p.write_text("name,delta_d,delta_p,delta_h,molar_volume\nmyketone (invented),15.5,10,4\n")
    assert main(["show", "myketone (invented)", "--mine", str(p), "--format", "csv"]) == 0
    assert "myketone (invented)" in capsys.readouterr().out
    # the price list the same way
    prices = tmp_path / "prices.csv"
    prices.write_text("name,cost_per_litre\ntoluene,3,50\n")
    assert main(["blend", "toluene", "--prices", str(prices)]) == 2
    assert "row 2 has 3 fields, the header has 2" in capsys.readouterr().err


def test_invalid_smiles_and_cas_check_digit_are_refused():
    # boundary review: an invalid SMILES (an isocyanate typed "CN=C=O)") slipped past the reagent
    # screen, which reads structures; 108-88-4 is toluene's CAS (108-88-3, chemicals) mistyped:
    # CAS check digit rule (CAS registry: digits weighted 1, 2, 3... from the right, mod 10)
    from selector.errors import InputTableError
    from selector.library import cas_check_digit_ok, validate_user_table

    with pytest.raises(InputTableError) as e:
        validate_user_table(_rows(name=["a (invented)", "b (invented)"], smiles=["CN=C=O)", "CCO"],
                                  cas=["", "108-88-4"]))
    text = str(e.value)
    assert "smiles 'CN=C=O)' is not a valid SMILES" in text
    assert "CAS 108-88-4 has a wrong check digit" in text
    # published CAS numbers pass (water 7732-18-5, toluene 108-88-3, NMP 872-50-4; from memory,
    # as in the library)
    assert all(cas_check_digit_ok(c) for c in ("7732-18-5", "108-88-3", "872-50-4"))
    assert not cas_check_digit_ok("872-50-5")


def test_a_liquid_without_molar_volume_is_told_what_miscibility_needs(tmp_path, capsys):
    # boundary review: molar_volume is optional in the file, but mix answered "got np.float64(nan)"
    # and blend named no remedy
    p = tmp_path / "mine.csv"
    p.write_text("name,delta_d,delta_p,delta_h\nmyliq (invented),17,5,6\n")
    assert main(["mix", "myliq (invented)", "water", "--mine", str(p)]) == 2
    err = capsys.readouterr().err
    assert "molar_volume (cm3/mol) is missing: miscibility needs it" in err and "nan" not in err
    assert main(["blend", "17.9,6.1,6.4,8.6", "--mine", str(p)]) == 2
    assert "needs each liquid's molar_volume" in capsys.readouterr().err
    # ranking does not need it (Ra and RED use the HSP alone)
    assert main(["rank", "17,5,6", "--mine", str(p), "--format", "csv"]) == 0
    assert "myliq (invented)" in capsys.readouterr().out


# ---------------------------------------------------------------- the My liquids page

def open_page(home: Path, monkeypatch):
    monkeypatch.setenv("LIKEWISE_HOME", str(home))
    at = AppTest.from_file(ENTRY, default_timeout=60)
    at.run()
    at.switch_page("views/mine.py").run()
    assert not at.exception, [e.value for e in at.exception]
    return at


def errors(at):
    return [e.value for e in at.error]


def import_rows(at, data=IMPORT_CSV):
    at.file_uploader(key="mine_up").upload("mine.csv", data, "text/csv").run()
    assert not errors(at)
    at.button(key="mine_add").click().run()
    assert not at.exception


def test_save_refuses_a_file_changed_since_it_was_opened(tmp_path, monkeypatch):
    f = tmp_path / "my_liquids.csv"
    f.write_text("name,delta_d,delta_p,delta_h\nkeep me (invented),16.0,4.0,4.0\n", encoding="utf-8")
    at = open_page(tmp_path, monkeypatch)
    # another program (as `likewise guess --save-mine` does) adds a row while the page is open
    with f.open("a", encoding="utf-8") as fh:
        fh.write("added meanwhile (invented),17.0,5.0,5.0\n")
    written = f.read_bytes()
    import_rows(at)
    at.button(key="mine_save").click().run()
    assert any("the file changed since you opened it; reload first" in e for e in errors(at))
    assert f.read_bytes() == written
    # after a reload the page has both rows and saving works again
    at.button(key="mine_reload").click().run()
    assert list(at.session_state["mine_table"]["name"]) == ["keep me (invented)", "added meanwhile (invented)"]
    import_rows(at)
    at.button(key="mine_save").click().run()
    assert not errors(at)
    assert list(pd.read_csv(f)["name"]) == ["keep me (invented)", "added meanwhile (invented)",
                                            "resin thinner X (invented)", "my resin (invented)"]
    assert any("Saved 4 liquids" in s.value for s in at.success)
    # the page's fingerprint follows its own save: a second save is not refused
    at.button(key="mine_save").click().run()
    assert not errors(at)


def test_unreadable_file_is_kept_as_a_backup_before_it_is_replaced(tmp_path, monkeypatch):
    f = tmp_path / "my_liquids.csv"
    junk = b"\x00\xff\xfe binary junk \x00\n\x01,\x02\n\"unterminated"
    f.write_bytes(junk)
    at = open_page(tmp_path, monkeypatch)
    assert any("could not be read" in e for e in errors(at))
    assert any(".bak" in w.value for w in at.warning)
    assert len(at.session_state["mine_table"]) == 0
    import_rows(at)
    at.button(key="mine_save").click().run()
    assert not errors(at)
    bak = tmp_path / "my_liquids.csv.bak"
    assert bak.read_bytes() == junk
    assert list(pd.read_csv(f)["name"]) == ["resin thinner X (invented)", "my resin (invented)"]
    assert any(str(bak) in s.value for s in at.success)


def test_invalid_file_saved_unchanged_is_refused_without_a_backup(tmp_path, monkeypatch):
    # a readable file with a bad value (dP below 0) is shown as it is; saving it as it is fails
    # validation, so the file stays and no backup is made
    f = tmp_path / "my_liquids.csv"
    f.write_text("name,delta_d,delta_p,delta_h\nbad row (invented),16,-3,4\n", encoding="utf-8")
    before = f.read_bytes()
    at = open_page(tmp_path, monkeypatch)
    assert list(at.session_state["mine_table"]["name"]) == ["bad row (invented)"]
    at.button(key="mine_save").click().run()
    assert any("Not saved (the file on disk is unchanged" in e and "delta_p = -3" in e for e in errors(at))
    assert f.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["my_liquids.csv"]


def test_mistyped_likewise_home_is_not_created(tmp_path, monkeypatch):
    typo = tmp_path / "likewsie"
    at = open_page(typo, monkeypatch)
    import_rows(at)
    at.button(key="mine_save").click().run()
    assert any(f"{typo} does not exist (set by LIKEWISE_HOME" in e for e in errors(at))
    assert not typo.exists()


def test_saving_keeps_the_files_separator_decimal_mark_encoding_and_line_ends(tmp_path):
    # A spreadsheet in a decimal-comma locale saves CSV with semicolons, decimal commas,
    # Windows-1252 and CRLF line ends (common practice); saving a row must not turn the user's
    # file into another format. The row and its values are invented.
    p = tmp_path / "mine.csv"
    p.write_bytes("name;delta_d;delta_p;delta_h;molar_volume;remark\r\n"
                  "resin thinner X (invented);17,1;3,2;5,5;120;café 120\r\n".encode("cp1252"))
    table = validate_user_table(p)
    notes = []
    save_user_liquids(table, p, notes=notes)
    raw = p.read_bytes()
    assert notes == []
    assert raw.decode("cp1252").splitlines()[1] == "resin thinner X (invented);17,1;3,2;5,5;120;café 120"
    assert raw.count(b"\r\n") == 2
    back = validate_user_table(p)
    assert back.loc[0, "delta_d"] == 17.1 and back.loc[0, "molar_volume"] == 120
    # a character Windows-1252 cannot hold: the file becomes UTF-8 with a byte-order mark, and says so
    table.loc[0, "remark"] = "\u03b1-resin"
    save_user_liquids(table, p, notes=notes)
    assert p.read_bytes().startswith(b"\xef\xbb\xbf") and "\u03b1-resin" in p.read_text(encoding="utf-8-sig")
    assert notes == ["'\u03b1' cannot be written in cp1252: the file is now UTF-8 (with a byte-order mark)"]
    # a new file is a plain UTF-8 comma file
    q = tmp_path / "new.csv"
    save_user_liquids(table, q)
    assert q.read_text(encoding="utf-8").splitlines()[1].startswith("resin thinner X (invented),17.1,3.2,5.5,120,")


def test_a_user_row_in_cal_units_is_refused_with_the_converted_values():
    # practitioner review: dD 7.6 loaded silently. No liquid has dD below 11.3 MPa^0.5
    # (perfluoropentane, the library's lowest, from chemicals); 1 (cal/cm3)^0.5 = 2.0455 MPa^0.5
    # (Hansen's handbook)
    import selector
    from selector.errors import InputTableError

    with pytest.raises(InputTableError, match=r"dD 7\.6 is lower than any liquid.*dD 15\.5, dP 0\.0, dH 6\.1"):
        selector.load_library(pd.DataFrame({"name": ["old sheet"], "delta_d": [7.6], "delta_p": [0.0],
                                            "delta_h": [3.0]}))
    lib = selector.load_library()
    assert lib["delta_d"].min() >= 11.0   # the bound sits below every library liquid
