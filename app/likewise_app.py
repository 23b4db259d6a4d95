"""likewise web app: entry point (``likewise app`` runs ``streamlit run`` on this file).

Every page calls the same :mod:`selector` functions as the command line and the tests; the pages
only collect inputs and show results.
"""
from __future__ import annotations

import sys
from pathlib import Path

APP_DIR = Path(__file__).resolve().parent
if str(APP_DIR) not in sys.path:
    sys.path.insert(0, str(APP_DIR))

import streamlit as st  # noqa: E402

from lwui import common  # noqa: E402

st.set_page_config(page_title="likewise · solvent choice", page_icon=":material/science:", layout="wide")
common.init_state()
common.start_estimator_warmup()

V = APP_DIR / "views"
pages = {
    "Solvent choice": [
        st.Page(str(V / "candidates.py"), title="Ranked liquids", icon=":material/format_list_numbered:", default=True,
                url_path="ranked"),
        st.Page(str(V / "target.py"), title="Target", icon=":material/my_location:", url_path="target"),
        st.Page(str(V / "blends.py"), title="Blend design", icon=":material/science:", url_path="blends"),
        st.Page(str(V / "replace.py"), title="Replace a liquid", icon=":material/swap_horiz:", url_path="replace"),
    ],
    "Checks and data": [
        st.Page(str(V / "mixing.py"), title="Will they mix?", icon=":material/water_drop:", url_path="mixing"),
        st.Page(str(V / "sphere.py"), title="Sphere from lab tests", icon=":material/bubble_chart:", url_path="sphere"),
        st.Page(str(V / "mine.py"), title="My liquids", icon=":material/folder_open:", url_path="mine"),
    ],
}
nav = st.navigation(pages)

with st.sidebar:
    t = common.target()
    st.markdown("**Current target**")
    st.markdown(f"{common.md_escape(t.name)}  \n"
                f"dD {t.delta_d:.1f} · dP {t.delta_p:.1f} · dH {t.delta_h:.1f} MPa<sup>½</sup>"
                + (f"  \nR0 {t.radius:.1f} MPa<sup>½</sup>" if t.radius else "  \n(point, no R0)"),
                unsafe_allow_html=True)
    if common.is_demo():
        st.caption("Invented demo resin — not measured data.")
    if common.estimate_note():
        st.caption(common.estimate_note())
    st.divider()
    st.caption("A ranking is a starting point for laboratory tests, not a safety assessment. "
               "The supplier's safety data sheet and local regulation come first.")

nav.run()
