"""Show the result of :func:`selector.drying_path` (evaporated fraction, phi_<name>, RED...)."""
from __future__ import annotations

import math

import pandas as pd
import streamlit as st

from lwui import common, plots


def show_drying(path: pd.DataFrame, components) -> None:
    x = "evaporated_fraction" if "evaporated_fraction" in path.columns else path.columns[0]
    series = [c for c in path.columns if c.startswith("phi_")]
    y2 = next((c for c in ("red", "ra") if c in path.columns and path[c].notna().any()), None)
    fig = plots.drying_plot(path.rename(columns={c: c[4:] for c in series}), x, [c[4:] for c in series], y2)
    if y2 == "red":
        import plotly.graph_objects as go

        # a trace on the RED axis (a shape's label would sit on the left axis' scale)
        xs = path[x].to_numpy(float)
        fig.add_trace(go.Scatter(x=[xs.min(), xs.max()], y=[1.0, 1.0], mode="lines", name="RED = 1 (sphere edge)",
                                 line=dict(color=plots.VERMILLION, dash="dot"), hoverinfo="skip"),
                      secondary_y=True)
    st.plotly_chart(fig, width="stretch", key="drying_plot")
    a = path.attrs or {}
    tail = a.get("tail_solvent")
    leaves = a.get("leaves_sphere_at")
    bits = []
    if tail:
        bits.append(f"last to leave: <b>{tail}</b>")
    if leaves is not None and isinstance(leaves, float) and not math.isnan(leaves):
        bits.append(f"the liquid leaves the sphere after <b>{leaves:.0%}</b> has evaporated")
    elif y2 == "red":
        bits.append("the liquid stays inside the sphere along the whole path")
    if bits:
        st.markdown("<div id='lw-drying'>" + "; ".join(bits) + ".</div>", unsafe_allow_html=True)
    if a.get("flag"):
        st.warning("The solute may come out of solution before the film has set: the remaining liquid "
                   "leaves the sphere early. Add a slower good solvent or change the shares.")
    for w in a.get("warnings", []) or []:
        st.warning(common.ui_units(w))
    if a.get("message") and not bits:   # the sentence above already says what the message says
        st.caption(str(a["message"]))
    with st.expander("Drying path table"):
        common.table(path, hide_index=True, width="stretch")
