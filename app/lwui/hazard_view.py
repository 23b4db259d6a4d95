"""Show a :class:`selector.hazards.HazardRecord` (CHEM21 scores, class, statements, sources)."""
from __future__ import annotations

import math

import streamlit as st


def _score(v):
    try:
        return "—" if math.isnan(float(v)) else f"{float(v):.0f}"
    except (TypeError, ValueError):
        return "—"


def show_hazard(h) -> None:
    d = h.as_dict() if hasattr(h, "as_dict") else dict(h)
    m = st.columns(4)
    m[0].metric("CHEM21 class", str(d.get("hazard_class") or "unclassified"))
    m[1].metric("Safety score (1-10)", _score(d.get("safety_score")))
    m[2].metric("Health score (1-10)", _score(d.get("health_score")))
    m[3].metric("Environment score (1-10)", _score(d.get("environment_score")))
    stm = d.get("statements") or ()
    st.markdown("**GHS hazard statements:** " + (", ".join(stm) if stm else "none stored"))
    if d.get("peroxide_former"):
        st.markdown("**Forms peroxides** on storage (EUH019).")
    if d.get("regulatory_note"):
        st.markdown(f"**Regulation:** {d['regulatory_note']}")
    src = dict(d.get("sources") or {})
    if src:
        method = src.pop("method", "")
        words = {"statements": "Statements", "flash_point": "Flash point", "boiling_point": "Boiling point"}
        parts = []
        for k, v in src.items():
            v = str(v)
            if method and v.endswith("; scores: " + method):   # the method is said once, below
                v = v[: -len("; scores: " + method)]
            parts.append(f"{words.get(k, k.replace('_', ' ').capitalize())}: {v}")
        if method:
            parts.append(f"Scores: {method}")
        st.caption("Sources. " + ". ".join(parts) + ".")
    if d.get("caution"):
        st.warning(d["caution"], icon=":material/warning:")
