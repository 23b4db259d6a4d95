"""Will they mix? A pair of liquids with its phase diagram, or a heat map of a chosen set."""
import numpy as np
import pandas as pd
import streamlit as st

import selector
from lwui import common, plots
from selector.mixing import REFERENCE_WINDOW_C

st.title("Will they mix?")
st.caption("Flory-Huggins with Hansen parameters: chi = V_r A12 / (RT), where the default donor/acceptor "
           "model weights the dD, dP and hydrogen-bond differences (fitted on published pairs) and credits "
           "cross hydrogen bonds; the plain model uses A12 = Ra² / 4. A pair splits into two liquid phases "
           "when chi exceeds chi_c. Rough for water and strongly hydrogen-bonded pairs: read the confidence "
           "and test before you rely on it. Within 5 °C of 25 °C a pair of the reference tables answers with its "
           "recorded state; UNIFAC (Dortmund, else original; as carried by thermo) gives a second opinion, and where "
           "the two models disagree the answer is *uncertain*.")
mod = common.capability("mixing")
if mod is None:
    st.stop()
names = common.liquid_names()
tab1, tab2 = st.tabs(["A pair", "A set (heat map)"])


def _idx(n):
    return names.index(n) if n in names else 0


@st.cache_data(show_spinner=False, max_entries=256)
def pair(a, b, t, lib_key):
    # lib_key (the user's liquids file and its time stamp): a saved change is a new pair
    return selector.miscibility(a, b, temperature=t, library=common.library())


@st.cache_data(show_spinner="Checking every pair…", max_entries=64)
def matrix(liqs, t, lib_key):
    return selector.miscibility_matrix(list(liqs), temperature=t, library=common.library())


def _solubilities(bi: dict, a: str, b: str):
    out = []
    for k, v in bi.items():
        if not isinstance(v, dict) or "wt_pct" not in v:
            continue
        if k == "a_in_b":
            k = f"solubility of {a} in {b}"
        elif k == "b_in_a":
            k = f"solubility of {b} in {a}"
        elif not k.startswith("solubility of"):
            continue
        out.append((k, v))
    return out


@st.cache_data(show_spinner=False, max_entries=128)
def phase_sweep(a, b, lib_key, n=41):
    """selector.phase_sweep over the common liquid range of the pair (for the phase diagram)."""
    return selector.phase_sweep(a, b, n=n, library=common.library())


def _num(v, fmt="{:.3g}"):
    try:
        f = float(v)
    except (TypeError, ValueError):
        return "—"
    return fmt.format(f) if np.isfinite(f) else "—"


labels = common.liquid_labels()


def _label(n):
    return labels.get(n, n)


with tab1:
    c1, c2, c3 = st.columns([2, 2, 1])
    a = c1.selectbox("First liquid", names, index=_idx("hexane"), key="mx_a", format_func=_label,
                     help="type a name or a CAS number")
    b = c2.selectbox("Second liquid", names, index=_idx("methanol"), key="mx_b", format_func=_label,
                     help="type a name or a CAS number")
    t = c3.number_input("Temperature (°C)", value=25.0, step=5.0, key="mx_t")
    r = common.call(pair, a, b, float(t), common.lib_key())
    if r is not None:
        state = str(getattr(r, "headline", getattr(r, "state", "?")))
        m = st.columns([2, 1, 1, 1, 1])
        short = ("they react" if getattr(r, "reacts", "") else
                 "uncertain" if state.startswith("uncertain") else state.split(" (")[0])
        m[0].metric("At this temperature", short, help=state)
        lcst_pair = bool(getattr(r, "lcst_prone", False))
        model_note = ("the model value; for water with an amine, pyridine or glycol ether it does not "
                      "decide the answer (see the notes)") if lcst_pair else None
        m[1].metric("chi", _num(getattr(r, "chi", None)), help=model_note)
        m[2].metric("chi_c (critical)", _num(getattr(r, "chi_critical", None)), help=model_note)
        if lcst_pair:
            m[3].metric("UCST (°C)", "n/a",
                        help="water with an amine, pyridine or glycol ether: such a gap opens on heating, "
                        "so the model's UCST (a gap closing on heating) does not describe this pair")
        elif getattr(r, "trend_doubtful", False):
            m[3].metric("UCST (°C)", _num(getattr(r, "ucst_c", None), "{:.0f}") + " ?",
                        help="the model's value; with water its temperature trend is unreliable (see the notes)")
        else:
            m[3].metric("UCST (°C)", _num(getattr(r, "ucst_c", None), "{:.0f}"))
        pm = getattr(r, "p_miscible", None)
        ref0 = getattr(r, "reference", {}) or {}
        m[4].metric("Mixing confidence", str(getattr(r, "confidence", "—")),
                    help=None if pm is None or pm != pm else
                    ("the recorded answer of the reference data; " if ref0 else "")
                    + f"the model's probability of one phase in all proportions: {100 * pm:.0f} % "
                    "(logistic fit on the reference pairs at 25 °C)")
        # the model's phase diagram where the reference data say otherwise: its error, said so
        contra = bool(getattr(r, "reference_contradicts", False))
        contra_note = (f" The reference data say {ref0.get('state')} at 25 °C: for this pair the model is wrong."
                       if contra else "")
        st.markdown(f"<div id='lw-mix-state'>{a} + {b} at {t:g} °C: <b>{state}</b></div>",
                    unsafe_allow_html=True)
        for w in getattr(r, "warnings", []) or []:
            st.warning(common.ui_units(w))
        for note in getattr(r, "notes", []) or []:
            if note.startswith("REACTIVE PAIR"):
                st.error(common.ui_units(note), icon=":material/warning:")
            else:
                st.caption("• " + common.ui_units(note))
        bi = getattr(r, "binodal", None)
        ref = getattr(r, "reference", {}) or {}
        if isinstance(bi, dict) and getattr(r, "reference_contradicts", False) and ref.get("state") == "miscible":
            # the recorded answer is one phase: the model's gap is its own error, not a result
            st.caption("No model solubilities: the reference data say the two mix in all proportions at 25 °C, "
                       "so the gap the model draws for this pair is its error.")
            bi = None
        if isinstance(bi, dict) and not lcst_pair:   # model solubilities mean nothing for such pairs
            sol = _solubilities(bi, r.a, r.b)
            if sol:
                # one significant figure: the model's mutual solubilities are often off tenfold
                from selector.cli_mix import one_figure

                st.table(pd.DataFrame([{"": k, "wt %": one_figure(v["wt_pct"]), "vol %": one_figure(v["vol_pct"]),
                                        "mol %": one_figure(v["mol_pct"])} for k, v in sol]).set_index(""))
                st.caption("Model estimates to one figure: measured mutual solubilities are often ten times "
                           "smaller or larger (see the notes).")
        sweep = None if lcst_pair else common.call(phase_sweep, a, b, common.lib_key())
        if lcst_pair:
            st.caption("No phase diagram or solubilities for this pair: the model only knows gaps that "
                       "close on heating, while water with an amine, pyridine or glycol ether may split on "
                       "heating instead, if at all (see the notes). Test the mix at the temperatures of use.")
        elif sweep is not None and sweep["binodal_low"].notna().any():
            st.plotly_chart(plots.phase_diagram(sweep, getattr(r, "ucst_c", None), float(t),
                                                x_label=f"volume fraction of {r.a}"),
                            width="stretch", key="mx_phase")
            st.caption("The same model as the answer above, worked out at each temperature where both "
                       "are liquid at 1 atm. Inside the binodal the mixture splits into two phases; "
                       "inside the spinodal it does so spontaneously. A model picture: the temperature "
                       "of a real gap can be far off (see the notes)." + contra_note)
        elif sweep is not None:
            st.caption("No miscibility gap anywhere in the liquid range of the pair (model estimate)." + contra_note)
        st.warning("Whether or not two liquids mix, mixing them can start a reaction, release heat or "
                   "form an azeotrope: the safety data sheets and a small-scale test come first.",
                   icon=":material/warning:")

with tab2:
    default = [n for n in ["water", "methanol", "ethanol", "acetone", "toluene", "hexane", "ethyl acetate",
                           "1-butanol"] if n in names]
    def _fill_top():
        # the Ranked page's starting filters (the demo scenario's while its target is in use)
        f = common.demo_filters() if common.is_demo() else {}
        r = common.call(selector.rank, common.rank_target(), library=common.library(), **f)
        if r is not None:
            st.session_state["mx_set"] = list(r["name"].head(10))

    st.button("Fill with the 10 best-ranked liquids for the current target", key="mx_fill", on_click=_fill_top,
              help="do the candidates mix with each other? (useful before designing a blend); ranked "
                   "with the Ranked page's starting filters")
    if "mx_set" not in st.session_state:
        st.session_state["mx_set"] = default
    liqs = st.multiselect("Liquids (2 to 25)", names, key="mx_set", format_func=_label)
    t2 = st.number_input("Temperature (°C)", value=25.0, step=5.0, key="mx_t2")
    if len(liqs) < 2:
        st.info("Choose at least two liquids.")
    elif len(liqs) > 25:
        st.error("Choose at most 25 liquids for a readable heat map.")
    else:
        mat = common.call(matrix, tuple(liqs), float(t2), common.lib_key())
        if mat is not None:
            st.plotly_chart(plots.heat_map(mat, f"Miscibility at {t2:g} °C"), width="stretch", key="mx_heat")
            st.caption("○ miscible · ◐ partially miscible · ● immiscible (colour and symbol both carry the state); "
                       "! = the two react; ? = uncertain (water with a glycol ether, amine or pyridine, a "
                       "water pair whose model state changes between 25 °C and this temperature, or a pair on "
                       "which the UNIFAC second opinion disagrees with the model: test such pairs).")
            known = mat.attrs.get("reference_pairs", [])
            if known:
                shown = ", ".join(f"{x} + {y}" for x, y in known[:6]) + (
                    f" and {len(known) - 6} more" if len(known) > 6 else "")
                st.caption(f"{len(known)} of these pairs are in the reference tables (published or common-practice "
                           f"facts at 25 °C, used within {REFERENCE_WINDOW_C:g} °C of it) and show their recorded "
                           f"state, not the model's: {shown}.")
            split = mat.attrs.get("disagreeing_pairs", [])
            if split:
                st.caption("UNIFAC (as thermo carries it) disagrees with the HSP model on one phase or two for: "
                           + ", ".join(f"{x} + {y} ({m}: {s})" for x, y, m, s in split)
                           + ". The heat map shows the model's state with ?; the pair view gives both.")
            pairs = mat.attrs.get("reactive_pairs", [])
            if pairs:
                st.warning("These pairs react with each other whatever their phase behaviour (amine + acid, "
                           "amine + ketone, aldehyde or ester, amine + nitroalkane or halocarbon): do not mix them except as a "
                           "planned reaction - " + ", ".join(f"{x} + {y}" for x, y in pairs) + ".",
                           icon=":material/warning:")
            from selector.io import to_csv_text

            st.download_button("Download the matrix (CSV)", to_csv_text(mat.reset_index()),
                               file_name="miscibility.csv", mime="text/csv", key="mx_dl", on_click="ignore")
