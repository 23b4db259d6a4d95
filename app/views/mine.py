"""My liquids: the user's own liquids and solutes, saved atomically in the user data folder."""
import pandas as pd
import streamlit as st

from lwui import common
from selector.errors import plural
from selector.io import to_csv_text
from selector.library import (backup_file, file_fingerprint, save_user_liquids, user_liquids_file,
                              validate_user_table)

st.title("My liquids")
path = user_liquids_file()
st.caption(f"Saved in `{path}` (set LIKEWISE_HOME to use another folder). Entries with the name or CAS "
           "of a library liquid replace it in your rankings; the bundled library is never changed. "
           "Required: name, dD, dP, dH (MPa½). Optional: molar volume (cm³/mol), CAS, SMILES, boiling "
           "and flash point (°C), R0 for a solute. CSV imports may use comma, semicolon or tab, UTF-8 or "
           "Windows encoding, and headers such as dD or delta_d, V or molar_volume, bp or boiling_point_c.")

COLUMNS = ["name", "kind", "cas", "smiles", "delta_d", "delta_p", "delta_h", "molar_volume", "boiling_point_c",
           "flash_point_c", "radius", "note"]
TEXT = ("name", "kind", "cas", "smiles", "note")
KEY = "mine_table"
STAMP = "mine_stamp"        # fingerprint of the file when it was read (None: there was no file)
UNREADABLE = "mine_unreadable"  # the file could not be read or validated: back it up before saving


def _empty() -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=object if c in TEXT else float) for c in COLUMNS})


def _load() -> None:
    """Read the saved file into the session, with its fingerprint (to notice later writes by
    another program, e.g. ``likewise guess --save-mine``) and whether it could be read."""
    st.session_state[STAMP] = file_fingerprint(path)
    st.session_state[UNREADABLE] = False
    if not path.exists():
        st.session_state[KEY] = _empty()
        return
    try:
        st.session_state[KEY] = validate_user_table(path)
        return
    except (ValueError, KeyError) as e:
        st.session_state[UNREADABLE] = True
        common.show_error(f"The saved file could not be read (it is left untouched): {e}")
    from selector.io import read_user_csv

    try:
        st.session_state[KEY] = read_user_csv(path, dtype=str, keep_default_na=False)
    except (ValueError, KeyError, OSError):
        st.session_state[KEY] = _empty()


if KEY not in st.session_state or STAMP not in st.session_state:
    _load()
if st.session_state.get(UNREADABLE):
    st.warning(f"`{path}` could not be read when this page loaded it; the table shows what could be "
               "recovered (perhaps nothing). Saving first copies the old file to a `.bak` file beside it.")
if st.session_state.get("mine_msg"):
    st.success(st.session_state.pop("mine_msg"))
st.caption("Add a row with the + at the bottom of the table; select rows and press the bin to delete. "
           "Nothing is written until you press *Save my liquids*.")
table = st.session_state[KEY]
for c in COLUMNS:
    if c not in table.columns:
        table[c] = pd.Series(dtype=object if c in TEXT else float)

#: Headers of the editor and of the import preview (the file keeps the plain column names).
HEADERS = {"name": "Name",
           "kind": st.column_config.SelectboxColumn(
               "Kind", options=["liquid", "solute"], default="liquid",
               help="solutes (with R0) can be targets but are never proposed as liquids"),
           "cas": "CAS", "smiles": "SMILES",
           "delta_d": st.column_config.NumberColumn("dD (MPa½)"),
           "delta_p": st.column_config.NumberColumn("dP (MPa½)"),
           "delta_h": st.column_config.NumberColumn("dH (MPa½)"),
           "molar_volume": st.column_config.NumberColumn("V (cm³/mol)"),
           "boiling_point_c": st.column_config.NumberColumn("Boiling point (°C)"),
           "flash_point_c": st.column_config.NumberColumn("Flash point (°C)"),
           "radius": st.column_config.NumberColumn("R0 (MPa½)"), "note": "Note"}
edited = st.data_editor(table, num_rows="dynamic", width="stretch", key="mine_editor", column_config=HEADERS)
rows = edited.dropna(how="all")
rows = rows.astype({c: object for c in TEXT if c in rows.columns})
c1, c2, c3 = st.columns(3)
if c1.button("Save my liquids", type="primary", key="mine_save"):
    if len(rows) == 0:
        st.error("Nothing to save: the table is empty (the saved file is left as it was).")
    elif file_fingerprint(path) != st.session_state[STAMP]:
        st.error(f"Not saved: the file changed since you opened it; reload first (*Discard edits and "
                 f"reload*). Another program, such as `likewise guess --save-mine`, or another window wrote "
                 f"to {path} meanwhile; use *Export (CSV)* first to keep a copy of your edits.")
    else:
        bak = None
        try:
            if st.session_state[UNREADABLE] and path.exists():
                validate_user_table(rows)  # no backup for a table that would not be saved anyway
                bak = backup_file(path)
            notes = []
            save_user_liquids(rows, path, unchanged_since=st.session_state[STAMP], notes=notes)
        except (ValueError, KeyError) as e:
            kept = f" (the old file was copied to {bak})" if bak else ""
            common.show_error(f"Not saved (the file on disk is unchanged{kept}): {e}")
        else:
            _load()
            st.session_state.pop("mine_editor", None)
            st.session_state["mine_msg"] = (f"Saved {plural(len(rows), 'liquid')} to {path}."
                                            + (f" The old, unreadable file was kept as {bak}." if bak else "")
                                            + "".join(f" Note: {n}." for n in notes))
            st.rerun()
c2.download_button("Export (CSV)", to_csv_text(rows), file_name="my_liquids.csv", mime="text/csv",
                   key="mine_export", on_click="ignore")
if c3.button("Discard edits and reload", key="mine_reload"):
    _load()
    st.session_state.pop("mine_editor", None)
    st.rerun()

st.subheader("Import")
up = st.file_uploader("Add liquids from a CSV (same columns)", type=["csv", "txt"], key="mine_up")
if up is not None:
    try:
        new = validate_user_table(up.getvalue())
    except (ValueError, KeyError) as e:
        common.show_error(f"{up.name} was not imported (nothing was changed): {e}")
    else:
        from selector.library import unused_user_columns

        unused = unused_user_columns(up.getvalue())
        if unused:
            st.warning(f"{up.name}: {'column' if len(unused) == 1 else 'columns'} {', '.join(unused)} "
                       f"{'is' if len(unused) == 1 else 'are'} not used anywhere (check the spelling: "
                       "e.g. bp or boiling point, fp, V, R0); they are kept in the table but no page reads them.")
        shown = new.copy()
        for c in shown.columns:          # a text cell left empty shows empty, not "None"
            if shown[c].dtype == object:
                shown[c] = shown[c].where(shown[c].notna(), "")
        common.table(shown, hide_index=True, width="stretch",
                     column_config={k: v for k, v in HEADERS.items() if k != "kind"} | {"kind": "Kind"})
        if st.button(f"Add {'this liquid' if len(new) == 1 else f'these {len(new)} liquids'} to the table", key="mine_add"):
            keep = rows.loc[~rows["name"].fillna("").astype(str).str.lower().isin(new["name"].str.lower())]
            st.session_state[KEY] = pd.concat([keep, new], ignore_index=True)
            st.session_state.pop("mine_editor", None)
            st.info("Added to the table - press *Save my liquids* to keep them.")
            st.rerun()

solutes = rows.loc[common.user_solute_mask(rows) & (pd.to_numeric(rows["radius"], errors="coerce") > 0).to_numpy()] \
    if "radius" in rows else rows.iloc[:0]
if len(solutes):
    st.subheader("Use a solute of yours as the target")
    names = solutes["name"].fillna("").astype(str)  # pandas 3: astype(str) alone keeps NaN
    pick = st.selectbox("Solute (kind = solute, with R0)", list(names), key="mine_sol")
    common.show_flash()
    if st.button("Use as target", key="mine_use"):
        r = solutes.loc[names == pick].iloc[0]
        try:
            from selector.targets import Target

            Target(float(r["delta_d"]), float(r["delta_p"]), float(r["delta_h"]), float(r["radius"]), name=pick)
        except (ValueError, TypeError) as e:
            common.show_error(e)
        else:
            common.set_target_and_rerun({"kind": "mine", "name": pick, "delta_d": float(r["delta_d"]),
                                         "delta_p": float(r["delta_p"]), "delta_h": float(r["delta_h"]),
                                         "radius": float(r["radius"]), "source": "my liquids"},
                                        f"{pick} is now the target.")
