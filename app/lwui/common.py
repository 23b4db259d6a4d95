"""State, caching, error display and the shared widgets of the web pages.

Pages call the library functions of :mod:`selector` only; no number shown here is computed in
the front end.
"""
from __future__ import annotations

import importlib
import importlib.util
import os
import re
import threading
import time
from pathlib import Path

import numpy as np
import pandas as pd
import streamlit as st

import selector
from selector.errors import SelectorError
from selector.library import user_liquids_file
from selector.report import EXPOSURE_NOTE, GENERAL_CAUTION, caution_table
from selector.targets import Target

TARGET_KEY = "lw_target"
ERRORS = (SelectorError, ValueError, KeyError, TypeError, FileNotFoundError)

RANK_COLUMNS = ["rank", "name", "cas", "delta_d", "delta_p", "delta_h", "ra", "red",
                "polarity_match", "score", "molar_volume", "boiling_point_c", "flash_point_c",
                "hazard_class", "hazard_notes", "exposure_limit", "exposure_limit_unit", "hsp_source",
                "sources_disagree", "hsp_note", "origin", "data_note"]

COLUMN_CONFIG = {
    "rank": st.column_config.NumberColumn("Rank", format="%d", width="small"),
    "name": st.column_config.TextColumn("Liquid"),
    "cas": st.column_config.TextColumn("CAS"),
    "delta_d": st.column_config.NumberColumn("dD", help="dispersion, MPa½", format="%.1f"),
    "delta_p": st.column_config.NumberColumn("dP", help="polar, MPa½", format="%.1f"),
    "delta_h": st.column_config.NumberColumn("dH", help="hydrogen bonding, MPa½", format="%.1f"),
    "ra": st.column_config.NumberColumn("Ra", help="Hansen distance to the target, MPa½", format="%.2f"),
    "red": st.column_config.NumberColumn("RED", help="Ra / R0; below 1: expected to dissolve", format="%.2f"),
    "polarity_match": st.column_config.NumberColumn("Polarity match", help="0..1, 1 = same share of "
                                                    "dispersion/polar/H-bond energy", format="%.2f"),
    "score": st.column_config.NumberColumn("Score", help="lower is better", format="%.3f"),
    "molar_volume": st.column_config.NumberColumn("V (cm³/mol)", format="%.1f"),
    "boiling_point_c": st.column_config.NumberColumn("Boiling point (°C)", format="%.0f"),
    "flash_point_c": st.column_config.NumberColumn("Flash point (°C)", format="%.0f"),
    "exposure_limit": st.column_config.NumberColumn("Exposure limit", format="%.4g",
                                                    help="8-h average, Ontario (Canada), via chemicals; "
                                                         "where you work it may be lower: see the safety "
                                                         "data sheet, section 8"),
    "exposure_limit_unit": st.column_config.TextColumn("unit"),
    "hsp_source": st.column_config.TextColumn("HSP source"),
    "hazard_notes": st.column_config.TextColumn("Hazard notes", help="for a blend, per component: fatal, toxic, "
                                                "harmful, corrosive, CMR, flammable, peroxide former, aquatic "
                                                "toxicity, ...; REACTIVE PAIR if two react"),
    "mixing_note": st.column_config.TextColumn("Mixing note", help="pairs of the blend that the HSP model "
                                               "calls miscible and UNIFAC (as thermo carries it) does not: "
                                               "test a small mix"),
    "data_note": st.column_config.TextColumn("Data note", help="Boiling point or vapour pressure in "
                                             "doubt: the published values disagree"),
    "sources_disagree": st.column_config.CheckboxColumn("Sources disagree",
                                                        help="published HSP differ by > 1 MPa½"),
    "hsp_note": st.column_config.TextColumn("HSP note", help="why this published source was kept, or a "
                                            "source row that repeats another compound's values"),
    "ra_to_target": st.column_config.NumberColumn("Ra", format="%.2f"),
    "hazard_class": st.column_config.TextColumn("Hazard class", help="CHEM21; unclassified = no data, not safe"),
    "blend": st.column_config.TextColumn("Blend (volume %)"),
    "candidate": st.column_config.TextColumn("Candidate (volume %)"),
    "by_mass": st.column_config.TextColumn("By mass (weight %)", help="the same blend by weight, for the "
                                           "balance: ideal mixing with 25 °C densities; blank without a density"),
    "density": st.column_config.NumberColumn("Density (g/cm³)", format="%.3f",
                                             help="ideal mixing of the 25 °C densities"),
    "cost_per_kg": st.column_config.NumberColumn("Cost per kg", format="%.2f"),
    "n_components": st.column_config.NumberColumn("Liquids", format="%d"),
    "component_red": st.column_config.ListColumn("RED of each liquid"),
    "component_ra": st.column_config.ListColumn("Ra of each liquid"),
    "non_solvent_pair": st.column_config.CheckboxColumn("Two non-solvents", help="every component alone is "
                                                        "outside the sphere; only the blend is inside"),
    "bp_low_c": st.column_config.NumberColumn("Lowest bp (°C)", format="%.0f"),
    "bp_high_c": st.column_config.NumberColumn("Highest bp (°C)", format="%.0f"),
    "lowest_flash_point_c": st.column_config.NumberColumn("Lowest flash point (°C)", format="%.0f"),
    "lowest_flash_component": st.column_config.TextColumn("…of"),
    "evaporation_rate": st.column_config.NumberColumn("Evaporation rate", format="%.2f",
                                                      help="relative evaporation rate (n-butyl acetate = 1)"),
    "viscosity_mpa_s": st.column_config.NumberColumn("Viscosity (mPa·s)", format="%.2f"),
    "hazard_rank": None,
    "mismatch": st.column_config.NumberColumn("Property mismatch", format="%.2f"),
    "role": st.column_config.TextColumn("Role"),
    "p_inside": st.column_config.NumberColumn("Share of fits inside", format="%.2f"),
    "information": st.column_config.NumberColumn(
        "What the test would teach", format="%.3f",
        help="p(1-p), p = share of fits inside: 0.25 when the result is a toss-up between the plausible "
             "spheres (the most a test can tell), near 0 when they all agree"),
}


# ---------------------------------------------------------------- data

def _user_file() -> Path:
    return user_liquids_file()


def user_solute_mask(table: pd.DataFrame) -> np.ndarray:
    """Rows of a user table that are solutes (``kind`` = solute, or an R0 without a ``kind``):
    they can be targets but are never candidate liquids."""
    if "kind" in table.columns:
        return table["kind"].astype(str).str.strip().str.lower().eq("solute").to_numpy()
    if "radius" in table.columns:
        return (pd.to_numeric(table["radius"], errors="coerce") > 0).to_numpy()
    return np.zeros(len(table), dtype=bool)


@st.cache_resource(show_spinner=False)
def _library_cached(path: str | None, mtime: float):
    if not path:
        return selector.load_library()
    from selector.library import validate_user_table

    user = validate_user_table(path)
    liquids = user.loc[~user_solute_mask(user)]
    return selector.load_library(liquids) if len(liquids) else selector.load_library()


def library() -> pd.DataFrame:
    """The library merged with the user's saved liquids (cached; do not modify the result)."""
    p = _user_file()
    if p.exists():
        try:
            return _library_cached(str(p), p.stat().st_mtime)
        except ERRORS as e:
            st.warning(f"Your saved liquids ({p}) could not be read and are left out: {e}")
    return _library_cached(None, 0.0)


@st.cache_data(show_spinner=False)
def demo() -> dict:
    from selector.cli_core import demo_scenario

    return demo_scenario()


def demo_target_spec() -> dict:
    r = demo()["resin"]
    return {"kind": "demo", "name": r["name"], "delta_d": r["delta_d"], "delta_p": r["delta_p"],
            "delta_h": r["delta_h"], "radius": r["radius"],
            "source": "invented demo scenario (not measured data)"}


def demo_filters() -> dict:
    f = dict(demo()["filters"])
    f["boiling_point_c"] = tuple(f["boiling_point_c"])
    return f


def init_state() -> None:
    if TARGET_KEY not in st.session_state:
        st.session_state[TARGET_KEY] = demo_target_spec()


def set_target(spec: dict) -> None:
    st.session_state[TARGET_KEY] = dict(spec)


def set_target_and_rerun(spec: dict, message: str) -> None:
    """Set the target, then run the page again so that the sidebar shows it at once; ``message``
    is shown on that next run (:func:`show_flash`)."""
    set_target(spec)
    st.session_state["lw_flash"] = md_escape(message)
    st.rerun()


def show_flash() -> None:
    """Show (once) the message left by :func:`set_target_and_rerun`."""
    msg = st.session_state.pop("lw_flash", None)
    if msg:
        st.success(msg)


def target_spec() -> dict:
    init_state()
    return st.session_state[TARGET_KEY]


def target() -> Target:
    s = target_spec()
    return Target(float(s["delta_d"]), float(s["delta_p"]), float(s["delta_h"]),
                  None if s.get("radius") in (None, 0) else float(s["radius"]),
                  name=str(s["name"]), source=str(s.get("source", "given")),
                  # a library liquid's point is corrected for temperature like the candidates
                  liquid=str(s["name"]) if s.get("kind") == "library" else "")


def rank_target():
    """What to pass to :func:`selector.rank`: a library name for a plain library point (so that
    it is temperature-corrected and not ranked against itself), otherwise the Target."""
    s = target_spec()
    if s.get("kind") == "library" and not s.get("radius"):
        return s["name"]
    return target()


def is_demo() -> bool:
    return target_spec().get("kind") == "demo"


def capability(module: str):
    """The selector module for a capability, or None (with a note) when it is not installed yet."""
    try:
        return importlib.import_module(f"selector.{module}")
    except ModuleNotFoundError as e:
        if e.name and e.name.endswith(module):
            st.info(f"This page needs `selector.{module}`, which is not installed in this copy yet.")
            return None
        raise


#: Characters that Streamlit's Markdown would read as formatting (a SMILES such as
#: ``*CC(*)c1ccccc1`` or ``[C@H](O)`` must be shown as typed).
# enough inside a line: ( ) only make a link after ], - + # only act at a line start, and an
# underscore inside a word (delta_p, file_name) is not emphasis in CommonMark
_MD_SPECIAL = "\\`*[]<>~$"


def md_escape(text) -> str:
    """``text`` with Markdown formatting characters backslash-escaped (shown literally)."""
    return "".join("\\" + ch if ch in _MD_SPECIAL else ch for ch in str(text))


#: Library messages name the Python keyword, the command-line option and the page's control
#: together; a page shows its own control only.
_FOR_THE_PAGE = (
    (re.compile(r"\(include_energetic, --include-energetic or the app's Include energetic liquids\)"),
     "(the *Include energetic liquids* box)"),
    (re.compile(r"halogen_free=True \(--halogen-free, the app's No halogenated liquids\)"),
     "The *No halogenated liquids* box"),
    (re.compile(r"include_reactive, --include-reactive or the app's Include reagents"),
     "the *Include reagents* box"),
    (re.compile(r" \((min_fraction|threshold)\)"), ""),
)


def ui_units(text: str) -> str:
    """A library message with its plain-text units as the pages write them (MPa½, cm³, °C), and
    the page's own control named where the message lists keyword, option and control."""
    text = str(text)
    for pat, repl in _FOR_THE_PAGE:
        text = pat.sub(repl, text)
    text = (text.replace("MPa^0.5", "MPa½").replace("(cal/cm3)^0.5", "(cal/cm³)½")
            .replace("cm3/mol", "cm³/mol"))
    return re.sub(r"(\d) C\b", "\\1 °C", text)       # "99.97 C" -> "99.97 °C"


def show_error(e: Exception) -> None:
    msg = str(e).strip() or type(e).__name__
    st.error(md_escape(ui_units(msg)))


def call(fn, *args, **kwargs):
    """Run a library call; on bad input show the message in the page and return None."""
    try:
        return fn(*args, **kwargs)
    except ERRORS as e:
        show_error(e)
        return None


# ---------------------------------------------------------------- structure estimator

#: A molecule outside the library (tert-butyl cyclohexanecarboxylate): estimating it trains the model.
_WARM_SMILES = "CC(C)(C)OC(=O)C1CCCCC1"


#: When the background training started and ended (time.time(), s); read by the progress bar.
WARMUP = {"started": None, "ready": None}
#: Expected training time on 2 cores (s, measured; only used to scale the progress bar).
WARMUP_EXPECTED_S = 15.0


def _warm() -> None:
    # starts with the first page (its run needs one core; the training takes the other)
    WARMUP["started"] = time.time()
    try:
        selector.estimate(_WARM_SMILES)
    except Exception:  # noqa: BLE001 - a failed warm-up only means the first estimate is slow
        pass
    WARMUP["ready"] = time.time()


@st.cache_resource(show_spinner=False)
def _estimator_warmup() -> threading.Thread:
    th = threading.Thread(target=_warm, daemon=True, name="likewise-estimator-warmup")
    th.start()
    return th


def start_estimator_warmup() -> None:
    """Train the structure estimator in the background once per server (``likewise app`` sets
    LIKEWISE_WARM_ESTIMATOR=1), so that the first SMILES estimate does not wait for it."""
    if os.environ.get("LIKEWISE_WARM_ESTIMATOR") == "1" and importlib.util.find_spec("selector.estimation"):
        _estimator_warmup()


def wait_for_estimator() -> None:
    """If the background training is still running, show a progress bar until it ends."""
    if os.environ.get("LIKEWISE_WARM_ESTIMATOR") == "1":
        th = _estimator_warmup()
        if th.is_alive():
            bar = st.progress(0.0, text="Preparing the structure estimator (trained once per start)…")
            while th.is_alive():
                th.join(timeout=0.5)
                t0 = WARMUP["started"]
                done = 0.0 if t0 is None else time.time() - t0
                frac = min(0.95, done / WARMUP_EXPECTED_S)
                bar.progress(frac, text=f"Preparing the structure estimator (trained once per start): "
                                        f"{done:.0f} s of about {WARMUP_EXPECTED_S:.0f} s…")
            bar.empty()


# ---------------------------------------------------------------- widgets

def demo_banner(on_target_page: bool = False) -> None:
    if is_demo():
        # the scenario's own label starts "INVENTED DEMO SCENARIO - ..."; no second heading
        st.info(demo()["label"] + ("" if on_target_page else " Define your own target on the *Target* page."),
                icon=":material/science:")


#: the fields of an estimated row that a target spec keeps (so the mark and intervals survive)
_ESTIMATE_FIELDS = ("origin", "in_domain", "similarity") + tuple(f"{c}_{s}" for c in ("delta_d", "delta_p", "delta_h")
                                                  for s in ("low", "high"))


def estimate_fields(row) -> dict:
    """The origin, domain flag and 90 % interval bounds of an estimated row, as plain values."""
    out = {}
    for k in _ESTIMATE_FIELDS:
        v = row.get(k) if hasattr(row, "get") else None
        if v is None or (isinstance(v, float) and v != v):
            continue
        out[k] = bool(v) if k == "in_domain" else (str(v) if k == "origin" else float(v))
    return out


def estimate_note(spec: dict | None = None) -> str:
    """One line on an estimated target ("" for other targets): :func:`selector.library.estimate_note`
    (its 90 % intervals) and whether it lies inside the estimator's domain."""
    from selector.library import estimate_note as note

    s = target_spec() if spec is None else spec
    text = note(s)
    if not text or s.get("origin") != "estimated":
        return text[:1].upper() + text[1:] if text else ""
    from selector.estimation import DOMAIN_THRESHOLD

    sim = s.get("similarity")
    sim = f", nearest training molecule at similarity {float(sim):.2f}" if isinstance(sim, (int, float)) else ""
    dom = (f"inside the estimator's domain (similarity >= {DOMAIN_THRESHOLD:.2f}{sim})" if s.get("in_domain") else
           f"OUTSIDE the estimator's domain{sim}: a rough guess")
    return ui_units(text[:1].upper() + text[1:]) + f" ({dom})."


def target_line() -> None:
    t = target()
    st.markdown(f"**Target:** {md_escape(ui_units(t.describe()))}  \n"
                f"<small>source: {md_escape(ui_units(t.source))}</small>",
                unsafe_allow_html=True)
    note = estimate_note()
    if note:
        st.caption(note + " Rankings use the central values; test the best few.")


def liquid_names() -> list[str]:
    return sorted(library()["name"].astype(str).tolist(), key=str.lower)


@st.cache_data(show_spinner=False, max_entries=4)
def _labels(path: str | None, mtime: float) -> dict:
    lib = library()
    out = {}
    for n, c in zip(lib["name"].astype(str), lib["cas"].astype("string").fillna("").astype(str)):
        out[n] = f"{n} ({c})" if c and c != "nan" and not n.endswith(f"({c})") else n
    return out


def liquid_labels() -> dict:
    """Picker labels "name (CAS)" by name, so that typing a CAS number finds the liquid too. Take
    them once per page run: a picker formats each of its ~800 options on every run."""
    return _labels(*lib_key())


def filter_panel(prefix: str, *, defaults: dict | None = None, temperature: bool = True,
                 expanded: bool = True) -> tuple[dict, float]:
    """Candidate filters (see :mod:`selector.filters`) and the temperature in C."""
    d = defaults if defaults is not None else (demo_filters() if is_demo() else {})
    bp = d.get("boiling_point_c", (None, None))
    with st.expander("Candidate filters", expanded=expanded):
        if defaults is None and is_demo():
            st.caption("Preset from the invented demo scenario; they go back to no limits once you set "
                       "a target of your own.")
        if temperature:
            c1, c2, c3, c4 = st.columns(4)
        else:
            c2, c3, c4 = st.columns(3)
        t = 25.0
        if temperature:
            t = c1.number_input("Temperature (°C)", value=25.0, step=5.0, key=f"{prefix}_t",
                                help="HSP of the library liquids are corrected by Hansen-Beerbower")
        lo = c2.number_input("Boiling point from (°C)", value=float(bp[0]) if bp[0] is not None else -150.0,
                             step=10.0, key=f"{prefix}_bplo", help="-150 = no lower limit")
        hi = c3.number_input("Boiling point to (°C)", value=float(bp[1]) if bp[1] is not None else 600.0,
                             step=10.0, key=f"{prefix}_bphi", help="600 = no upper limit")
        if d.get("min_flash_point_c") is not None and f"{prefix}_fp" not in st.session_state:
            # preset through the session state, not ``value``: a box built with a number can
            # never be emptied again, and an empty box is how "no limit" is asked for
            st.session_state[f"{prefix}_fp"] = float(d["min_flash_point_c"])
        fp = c4.number_input("Minimum flash point (°C)", value=None, step=5.0,
                             key=f"{prefix}_fp", placeholder="no limit",
                             help="liquids without flash-point data are dropped when set, except "
                                  "those known not to burn (water, dichloromethane, chloroform, ...)")
        c5, c9, c6 = st.columns([1, 1, 2])
        mv = c5.number_input("Max molar volume (cm³/mol)", value=None, step=10.0,
                             key=f"{prefix}_mv", placeholder="no limit")
        from selector.hazards import HAZARD_CLASSES

        classes = ["any"] + list(HAZARD_CLASSES[:-1])
        hz = c9.selectbox("Worst hazard class", classes,
                          index=classes.index(d.get("max_hazard_class") or "any"), key=f"{prefix}_hz",
                          help="CHEM21 class; once set, liquids without hazard data (unclassified) "
                               "are dropped too, as nothing shows they are safer")
        exc = c6.multiselect("Never propose", liquid_names(), default=d.get("exclude", []),
                             key=f"{prefix}_exc")
        c7, c10, c8 = st.columns(3)
        agreed = c7.checkbox("Agreed sources only", value=False, key=f"{prefix}_agreed",
                             help="drop liquids whose published HSP differ by more than 1 MPa½")
        nohal = c10.checkbox("No halogenated liquids", value=bool(d.get("halogen_free", False)),
                             key=f"{prefix}_nohal",
                             help="drop liquids containing fluorine, chlorine, bromine or iodine "
                                  "(they go to a separate waste stream; many sites restrict them)")
        nocmr = c10.checkbox("No CMR liquids", value=bool(d.get("cmr_free", False)), key=f"{prefix}_nocmr",
                             help="drop carcinogens, mutagens and reprotoxics, proven or suspected "
                                  "(H340, H341, H350, H351, H360, H361), and liquids without hazard data")
        reactive = c8.checkbox("Include reagents", value=False, key=f"{prefix}_reactive",
                               help="also propose reactive, explosive or very toxic liquids that are "
                                    "reagents rather than solvents (acid chlorides, isocyanates, "
                                    "epoxides, benzene, ...); off by default")
    f: dict = {}
    if lo > -150.0 or hi < 600.0:
        f["boiling_point_c"] = (lo if lo > -150.0 else None, hi if hi < 600.0 else None)
    if fp is not None:
        f["min_flash_point_c"] = fp
    if mv is not None:
        f["max_molar_volume"] = mv
    if exc:
        f["exclude"] = exc
    if hz != "any":
        f["max_hazard_class"] = hz
    if agreed:
        f["consistent_sources_only"] = True
    if nohal:
        f["halogen_free"] = True
    if nocmr:
        f["cmr_free"] = True
    if reactive:
        f["include_reactive"] = True
    if not expanded:
        # a collapsed panel must not filter silently: say what is in force
        st.caption(filters_summary(f, t if temperature else None))
    return f, float(t)


def filters_summary(filters: dict, temperature: float | None = None) -> str:
    """One line naming the filters in force (:func:`selector.filters.filter_phrases`)."""
    from selector.filters import filter_phrases

    parts = ([f"{temperature:g} °C"] if temperature is not None and temperature != 25.0 else [])
    parts += filter_phrases(filters, deg="°C", vol="cm³/mol")
    parts.append("reagents included" if filters.get("include_reactive") else "reagents held back")
    return "Filters in force: " + "; ".join(parts) + " (open *Candidate filters* to change them)."


def lib_key() -> tuple:
    """(path, mtime) of the user's saved liquids: part of every cached computation's key, so that
    a saved change reaches every page."""
    p = _user_file()
    return (str(p), p.stat().st_mtime) if p.exists() else (None, 0.0)


@st.cache_resource(show_spinner=False)
def _hazards_cached(path: str | None, mtime: float):
    hz = importlib.import_module("selector.hazards")
    try:
        lib = _library_cached(path, mtime)
    except ERRORS:
        lib = _library_cached(None, 0.0)
    return lib, hz.hazard_columns(lib)


def with_hazards(df: pd.DataFrame) -> pd.DataFrame:
    """``df`` with ``hazard_class`` and ``h_statements`` (:func:`selector.hazards.attach_hazards`,
    matched by CAS, or by name where a row has none; "unclassified" if unknown)."""
    try:
        hz = importlib.import_module("selector.hazards")
    except ModuleNotFoundError:
        out = df.copy()
        if "hazard_class" not in out:
            out["hazard_class"] = "unclassified"
        return out
    lib, t = _hazards_cached(*lib_key())
    return hz.attach_hazards(df, lib, columns=("hazard_class", "h_statements"), table=t)


def whole_degrees(d: pd.DataFrame) -> pd.DataFrame:
    """``d`` (changed in place) with its temperature columns (``*_c``) rounded half away from zero,
    as the reports round them (188.5 C is 189 on both)."""
    from selector.report import round_half_away

    for c in [c for c in d.columns if c.endswith("_c") and pd.api.types.is_float_dtype(d[c])]:
        d[c] = round_half_away(d[c].to_numpy(float))
    return d


def table(df: pd.DataFrame, **kw):
    """``st.dataframe`` without the frame's ``attrs``: pandas hands them to the browser as JSON
    metadata, and a NaN there (e.g. a drying path that never leaves the sphere) breaks the table."""
    d = df.copy()
    d.attrs = {}
    from selector.cautions import with_flash_texts

    d = whole_degrees(d)
    d = with_flash_texts(d, fmt="{:.0f}")   # an empty cell would mean both "does not burn" and "no data"
    empty = [c for c in ("estimated", "hazard_notes", "hsp_note", "mixing_note") if c in d.columns
             and d[c].fillna("").astype(str).str.strip().eq("").all()]
    empty += [c for c in ("lowest_known_flash_point_c",) if c in d.columns]   # shown in the flash text
    return st.dataframe(d.drop(columns=empty), **kw)


def target_notes(target) -> None:
    """The library's notes on the target as used (a typed point away from 25 C is taken as given,
    a target in (cal/cm3)^0.5 by its look), one caption each."""
    for n in getattr(target, "notes", ()):
        st.caption(f"Note on the target: {ui_units(n)}")


def cautions(liquids: pd.DataFrame, *, title: str = "Safety notes for the liquids shown") -> pd.DataFrame:
    """General caution plus a per-liquid table (flammability class, exposure limit, hazard class)."""
    st.warning("**Before you use any of these:** " + GENERAL_CAUTION, icon=":material/warning:")
    ct = caution_table(with_hazards(liquids))
    with st.expander(title, expanded=False):
        table(ct, hide_index=True, width="stretch", column_config={
            "name": "Liquid", "flash_point_c": st.column_config.NumberColumn("Flash point (°C)", format="%.0f"),
            "boiling_point_c": st.column_config.NumberColumn("Boiling point (°C)", format="%.0f"),
            "flammability": "Flammability (GHS 2.6 criteria)", "exposure": "Exposure limit (source)",
            "hazard_class": "Hazard class (CHEM21)", "h_statements": "GHS statements (from memory)"})
        st.caption("Flammability is classed from the library flash point and boiling point by the "
                   "GHS criteria; hazard classes by the CHEM21 guide (Prat et al., Green Chem. 2016) "
                   "from statements quoted from memory. *Unclassified* means no data, not safe. "
                   "Confirm every value against the supplier's safety data sheet. " + EXPOSURE_NOTE)
    return ct


def readable_top(df: pd.DataFrame, columns: list[str], n: int = 5, key: str = "top") -> None:
    """The first rows as a plain HTML table (readable by people, printers and browser tests)."""
    from selector.cautions import with_flash_texts

    cols = list(dict.fromkeys(c for c in columns if c and c in df.columns))
    head = whole_degrees(df.head(n).copy())
    # flash points as text: a blank would mean both "does not burn" and "no data"
    top = with_flash_texts(head, fmt="{:.0f}")[cols].copy()
    if "name" in cols:
        from selector.library import hsp_estimated

        # an estimate stays marked as one wherever it is listed
        est = hsp_estimated(head)
        out = (head["in_domain"].map(lambda v: str(v).strip().lower() in ("false", "0")).to_numpy(bool)
               if "in_domain" in head.columns else np.zeros(len(head), bool))   # CSV text or bools
        top.loc[est, "name"] = top.loc[est, "name"].astype(str) + np.where(
            out[est], " (estimated HSP, outside the domain)", " (estimated HSP)")
    labels = {c: (COLUMN_CONFIG[c]["label"] if c in COLUMN_CONFIG and isinstance(COLUMN_CONFIG[c], dict)
                  and COLUMN_CONFIG[c].get("label") else c) for c in cols}
    for c in cols:
        if pd.api.types.is_float_dtype(top[c]):
            fmt = "{:.0f}" if c.endswith("_c") else "{:.2f}"
            top[c] = top[c].map(lambda v, f=fmt: "no data" if not np.isfinite(v) else f.format(v))
    top = top.rename(columns=labels)
    st.table(top.set_index(top.columns[0]))


def downloads(df: pd.DataFrame, *, stem: str, report_md: str | None = None,
              report_html: str | None = None, key: str = "dl") -> None:
    from selector.io import to_csv_text

    c1, c2, c3 = st.columns(3)
    c1.download_button("Download table (CSV)", to_csv_text(df), file_name=f"{stem}.csv",
                       mime="text/csv", key=f"{key}_csv", on_click="ignore")
    if report_md is not None:
        c2.download_button("Report (Markdown)", report_md, file_name=f"{stem}_report.md",
                           mime="text/markdown", key=f"{key}_md", on_click="ignore")
    if report_html is not None:
        c3.download_button("Printable report (HTML)", report_html, file_name=f"{stem}_report.html",
                           mime="text/html", key=f"{key}_html", on_click="ignore")


def filters_as_inputs(filters: dict, temperature: float) -> dict:
    out = {"temperature (C)": temperature}
    names = {"boiling_point_c": "boiling-point window (C)", "min_flash_point_c": "minimum flash point (C)",
             "max_molar_volume": "maximum molar volume (cm3/mol)", "exclude": "never propose",
             "include": "only these", "consistent_sources_only": "agreed HSP sources only",
             "include_reactive": "reagents (reactive, very toxic) included",
             "max_hazard_class": "worst CHEM21 hazard class", "halogen_free": "no halogenated liquids",
             "cmr_free": "no carcinogens, mutagens or reprotoxics"}
    for k, v in filters.items():
        if k == "boiling_point_c":
            v = f"{'-' if v[0] is None else f'{v[0]:g}'} to {'-' if v[1] is None else f'{v[1]:g}'}"
        elif isinstance(v, (list, tuple)):
            v = ", ".join(map(str, v))
        out[names.get(k, k)] = v
    return out
