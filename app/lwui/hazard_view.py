"""Show the result of :func:`selector.hazard` whatever its container (object, dict, Series)."""
from __future__ import annotations

import dataclasses

import pandas as pd
import streamlit as st


def as_dict(h) -> dict:
    if isinstance(h, dict):
        return dict(h)
    if isinstance(h, pd.Series):
        return h.to_dict()
    if isinstance(h, pd.DataFrame) and len(h):
        return h.iloc[0].to_dict()
    if dataclasses.is_dataclass(h):
        return dataclasses.asdict(h)
    return {k: v for k, v in vars(h).items() if not k.startswith("_")} if hasattr(h, "__dict__") else {"value": h}


def show_hazard(h) -> None:
    d = as_dict(h)
    cls = d.get("hazard_class") or "unclassified"
    st.markdown(f"**Hazard class:** {cls}")
    rest = {k: (", ".join(map(str, v)) if isinstance(v, (list, tuple)) else v) for k, v in d.items()
            if k != "hazard_class"}
    if rest:
        st.table(pd.DataFrame({"item": list(rest), "value": [str(v) for v in rest.values()]}).set_index("item"))
