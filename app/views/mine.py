"""My liquids: the user's own liquids and solutes, saved atomically in the user data folder."""
import pandas as pd
import streamlit as st

from lwui import common
from selector.io import to_csv_text
from selector.library import save_user_liquids, user_liquids_file, validate_user_table

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


def _saved() -> pd.DataFrame:
    if path.exists():
        try:
            return validate_user_table(path)
        except (ValueError, KeyError) as e:
            common.show_error(f"The saved file could not be read (it is left untouched): {e}")
            from selector.io import read_user_csv

            try:
                return read_user_csv(path, dtype=str, keep_default_na=False)
            except ValueError:
                return pd.DataFrame({c: pd.Series(dtype=object) for c in COLUMNS})
    return pd.DataFrame({c: pd.Series(dtype=object if c in TEXT else float)
                         for c in COLUMNS})


if KEY not in st.session_state:
    st.session_state[KEY] = _saved()
if st.session_state.get("mine_msg"):
    st.success(st.session_state.pop("mine_msg"))
st.caption("Add a row with the + at the bottom of the table; select rows and press the bin to delete. "
           "Nothing is written until you press *Save my liquids*.")
table = st.session_state[KEY]
for c in COLUMNS:
    if c not in table.columns:
        table[c] = pd.Series(dtype=object if c in TEXT else float)

edited = st.data_editor(table, num_rows="dynamic", width="stretch", key="mine_editor",
                        column_config={"kind": st.column_config.SelectboxColumn(
                                           "kind", options=["liquid", "solute"], default="liquid",
                                           help="solutes (with R0) can be targets but are never proposed as liquids"),
                                       "delta_d": st.column_config.NumberColumn("dD (MPa½)"),
                                       "delta_p": st.column_config.NumberColumn("dP (MPa½)"),
                                       "delta_h": st.column_config.NumberColumn("dH (MPa½)"),
                                       "molar_volume": st.column_config.NumberColumn("V (cm³/mol)"),
                                       "boiling_point_c": st.column_config.NumberColumn("Boiling point (°C)"),
                                       "flash_point_c": st.column_config.NumberColumn("Flash point (°C)"),
                                       "radius": st.column_config.NumberColumn("R0 (MPa½)")})
rows = edited.dropna(how="all")
rows = rows.astype({c: object for c in TEXT if c in rows.columns})
c1, c2, c3 = st.columns(3)
if c1.button("Save my liquids", type="primary", key="mine_save"):
    if len(rows) == 0:
        st.error("Nothing to save: the table is empty (the saved file is left as it was).")
    else:
        try:
            save_user_liquids(rows, path)
        except (ValueError, KeyError) as e:
            common.show_error(f"Not saved - the file on disk is unchanged. {e}")
        else:
            st.session_state[KEY] = validate_user_table(path)
            st.session_state.pop("mine_editor", None)
            st.session_state["mine_msg"] = f"Saved {len(rows)} liquid(s) to {path}."
            st.rerun()
c2.download_button("Export (CSV)", to_csv_text(rows), file_name="my_liquids.csv", mime="text/csv",
                   key="mine_export", on_click="ignore")
if c3.button("Discard edits", key="mine_reload"):
    st.session_state[KEY] = _saved()
    st.session_state.pop("mine_editor", None)
    st.rerun()

st.subheader("Import")
up = st.file_uploader("Add liquids from a CSV (same columns)", type=["csv", "txt"], key="mine_up")
if up is not None:
    try:
        new = validate_user_table(up.getvalue())
    except (ValueError, KeyError) as e:
        common.show_error(f"{up.name} was not imported (nothing was changed). {e}")
    else:
        st.dataframe(new, hide_index=True, width="stretch")
        if st.button(f"Add these {len(new)} liquid(s) to the table", key="mine_add"):
            keep = rows.loc[~rows["name"].astype(str).str.lower().isin(new["name"].str.lower())]
            st.session_state[KEY] = pd.concat([keep, new], ignore_index=True)
            st.session_state.pop("mine_editor", None)
            st.info("Added to the table - press *Save my liquids* to keep them.")
            st.rerun()

solutes = rows.loc[common.user_solute_mask(rows) & (pd.to_numeric(rows["radius"], errors="coerce") > 0).to_numpy()] \
    if "radius" in rows else rows.iloc[:0]
if len(solutes):
    st.subheader("Use a solute of yours as the target")
    pick = st.selectbox("Solute (kind = solute, with R0)", list(solutes["name"].astype(str)), key="mine_sol")
    if st.button("Use as target", key="mine_use"):
        r = solutes.loc[solutes["name"].astype(str) == pick].iloc[0]
        try:
            from selector.targets import Target

            Target(float(r["delta_d"]), float(r["delta_p"]), float(r["delta_h"]), float(r["radius"]), name=pick)
        except (ValueError, TypeError) as e:
            common.show_error(e)
        else:
            common.set_target({"kind": "mine", "name": pick, "delta_d": float(r["delta_d"]),
                               "delta_p": float(r["delta_p"]), "delta_h": float(r["delta_h"]),
                               "radius": float(r["radius"]), "source": "my liquids"})
            st.success(f"{pick} is now the target.")
