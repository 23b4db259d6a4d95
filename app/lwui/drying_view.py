"""Show the result of :func:`selector.drying_path` (a table or an object carrying one)."""
from __future__ import annotations

import pandas as pd
import streamlit as st

from lwui import plots


def _table(path):
    if isinstance(path, pd.DataFrame):
        return path, []
    for attr in ("path", "table", "steps", "frame"):
        v = getattr(path, attr, None)
        if isinstance(v, pd.DataFrame):
            return v, list(getattr(path, "warnings", []) or [])
    return None, []


def show_drying(path, components) -> None:
    df, warns = _table(path)
    if df is None:
        st.write(path)
        return
    xcands = [c for c in df.columns if any(k in c.lower() for k in ("evaporated", "time", "step", "lost"))]
    x = xcands[0] if xcands else df.columns[0]
    series = [c for c in df.columns if c in components or any(c.endswith(f"{k}") for k in components)]
    if not series:
        series = [c for c in df.columns if c.startswith(("phi", "fraction", "x_"))]
    y2 = next((c for c in ("red", "ra") if c in df.columns), None)
    if series:
        st.plotly_chart(plots.drying_plot(df, x, series, y2), width="stretch", key="drying_plot")
    for w in warns:
        st.warning(w)
    attrs = getattr(path, "attrs", {}) or {}
    for k in ("warning", "warnings", "message"):
        v = attrs.get(k)
        if v:
            for m in ([v] if isinstance(v, str) else v):
                st.warning(str(m))
    with st.expander("Drying path table"):
        st.dataframe(df, hide_index=True, width="stretch")
