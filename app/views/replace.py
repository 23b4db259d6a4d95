"""Replace a liquid: safer single liquids and blends close to one that must go."""
import math

import streamlit as st

import selector
from lwui import common
from selector.blends import blend_labels
from selector.cautions import not_flammable
from selector.report import LIBRARY_SOURCES, build_report

st.title("Replace a liquid")
st.caption("Pick a liquid that regulation or site policy is removing (e.g. NMP, DMF, dichloromethane, "
           "toluene). Candidates carry a strictly better CHEM21 hazard class and sit close to it in "
           "Hansen space, with similar boiling point, evaporation rate and viscosity.")
if common.capability("blends") is None or common.capability("hazards") is None:
    st.stop()

names = common.liquid_names()
default = common.demo().get("current_solvent", "toluene") if common.is_demo() else "toluene"
c1, c2 = st.columns([2, 1])
labels = common.liquid_labels()
old = c1.selectbox("Liquid to replace", names, index=names.index(default) if default in names else 0,
                   key="rp_old", format_func=lambda n: labels.get(n, n),
                   help="type to search by name or CAS number; abbreviations such as NMP in the box below")
typed = c1.text_input("…or an abbreviation, synonym, CAS number or SMILES", key="rp_q",
                      placeholder="e.g. NMP, DMF, 75-09-2")
if typed.strip():
    row = common.call(selector.find_liquid, typed.strip(), common.library())
    if row is None:
        st.stop()
    old = str(row["name"])
    same = typed.strip().lower() == old.lower()
    st.caption(("" if same else f"{typed.strip()} = {old}. ")
               + f"Replacing **{common.md_escape(old)}**: this box decides while it holds text; clear it to use "
                 "the list above.")
keep = c2.checkbox("Must also dissolve the current target", value=common.is_demo(), key="rp_keep",
                   help="rank by RED to the target's sphere instead of the distance to the old liquid")
if common.is_demo() and old == default:
    st.info(f"Invented demo: the co-op thins its (invented) FV-3 varnish with {default} today.",
            icon=":material/science:")
elif common.is_demo() and keep:
    st.info("Invented demo: candidates must also dissolve the (invented) FV-3 varnish resin.",
            icon=":material/science:")
filters, _ = common.filter_panel("rp", temperature=False, expanded=False)
c3, c4, c5 = st.columns([2, 3, 2])
ncomp = c3.radio("Liquids per candidate (at most)", [1, 2], index=1, horizontal=True, key="rp_n")
pw = c4.slider("Weight of boiling point / evaporation / viscosity match", 0.0, 2.0, 0.5, 0.1, key="rp_pw",
               help="0 = Hansen distance only")
energetic = c5.checkbox("Include energetic liquids", value=False, key="rp_energetic",
                        help="nitro compounds (high energy of decomposition) are left out by default: "
                        "include them only after a process-safety review")


@st.cache_data(show_spinner="Looking for substitutes…", max_entries=64)
def subs(old, solute, ncomp, pw, energetic, filters_key, lib_key):
    # lib_key (the user's liquids file and its time stamp) makes a saved change start a new search
    from selector.targets import Target

    sol = None if solute is None else Target(*solute[:3], solute[3], name=solute[4], liquid=solute[5])
    return selector.substitutes(old, solute=sol, max_components=ncomp, property_weight=pw,
                                include_energetic=energetic, library=common.library(), **dict(filters_key))


freeze = tuple(sorted((k, tuple(v) if isinstance(v, list) else v) for k, v in filters.items()))
h = common.call(selector.hazard, old, common.library())
if h is not None:
    with st.expander(f"Hazard profile of {old}", expanded=False):
        from lwui.hazard_view import show_hazard

        show_hazard(h)
t = common.target()
res = common.call(subs, old, (t.delta_d, t.delta_p, t.delta_h, t.radius, t.name, t.liquid) if keep else None,
                  int(ncomp), float(pw), bool(energetic), freeze, common.lib_key())
if res is None:
    st.stop()
res = res.copy()
warnings = list(res.attrs.get("warnings", []))
for w in warnings:
    st.warning(common.ui_units(w))
res.attrs = {}  # a Target in attrs cannot go to the browser
if "component_ra" in res:   # a tuple per row: shown like the Ra column, two decimals
    res["component_ra"] = [" / ".join(f"{float(x):.2f}" for x in v) if isinstance(v, (tuple, list)) else v
                           for v in res["component_ra"]]
res.insert(0, "candidate", blend_labels(res, "volume", digits=0))
res.insert(1, "by_mass", blend_labels(res, "mass", digits=0))
ref = res.loc[res["role"] == "replaced"] if "role" in res else res.iloc[:0]
cand = res.loc[res["role"] != "replaced"] if "role" in res else res
if len(cand) == 0:
    cls0 = ref.iloc[0].get("hazard_class", "unclassified") if len(ref) else "unclassified"
    st.warning(f"No liquid or blend with a better hazard class than {old} ({cls0}) passes these filters. "
               + common.filters_summary(filters))
    st.stop()
metric = "red" if keep and cand["red"].notna().any() else "ra"
if len(ref):
    r0 = ref.iloc[0]
    fp0 = float(r0.get("lowest_flash_point_c", float("nan")))
    lib0 = common.library()
    nonflam = bool(not_flammable(lib0.loc[lib0["name"] == old]).any())
    fp_text = (f"flash point {fp0:.0f} °C" if math.isfinite(fp0) else
               "not flammable (check the SDS)" if (math.isinf(fp0) or nonflam) else
               "no flash point in the library")
    st.markdown(f"**{old}** today: hazard class {r0.get('hazard_class', 'unclassified')}, boiling point "
                f"{r0.get('boiling_point_c', float('nan')):.0f} °C, {fp_text}.")
from selector.blends import estimated_density_note
from selector.library import estimated_components

res["estimated"] = estimated_components(res, common.library())
cand = res.loc[res["role"] != "replaced"] if "role" in res else res
has_est = cand["estimated"].ne("").any()
st.subheader("Best five")
common.readable_top(cand, ["candidate", metric, "score", "hazard_class", "boiling_point_c",
                           "lowest_flash_point_c", "estimated" if has_est else None, "hazard_notes"], 5)
if has_est:
    st.caption("estimated = liquids whose HSP are estimated from structure (not measured): test such a "
               "candidate before you rely on it.")
# without a target there is no RED to show (the column would be empty)
show = [c for c in res.columns if c not in ("components", "fractions", "mass_fractions") and not (c == "red" and metric != "red")]
common.table(res[show], hide_index=True, width="stretch", column_config=dict(
    common.COLUMN_CONFIG, candidate=st.column_config.TextColumn("Candidate"),
    lowest_flash_point_c=st.column_config.NumberColumn("Lowest flash point (°C)", format="%.0f"),
    boiling_point_c=st.column_config.NumberColumn(
        "Boiling point (°C)", format="%.0f",
        help="for a blend, the middle of its components' boiling points (a rough guide: a blend boils "
             "over a range, from its lowest to its highest boiling component)"),
    evaporation_rate=st.column_config.NumberColumn("Evaporation rate", format="%.2f"),
    mismatch=st.column_config.NumberColumn("Property mismatch", format="%.2f"),
    component_ra=st.column_config.TextColumn("Ra of each component", help="MPa½, in the order of the candidate")))
st.caption("The first row is the liquid being replaced, for comparison.")
dnote = estimated_density_note(res, common.library())
if dnote:
    st.caption(dnote.replace("by_mass", "By mass"))

lib = common.library()
nm = sorted({c for cs in res["components"] for c in cs})
rows = lib.loc[lib["name"].isin(nm)]
common.cautions(rows, title="Safety notes for the candidates")
tg = t if keep else common.call(selector.as_target, old, lib)
inputs = dict(common.filters_as_inputs(filters, 25.0), **{"liquid replaced": old, "liquids per candidate": int(ncomp),
                                                          "property weight": float(pw)})
kw = dict(target=tg, inputs=inputs, table=res.head(11),
          columns=[c for c in ["candidate", "ra", "red", "score", "hazard_class", "boiling_point_c",
                               "lowest_flash_point_c", "role"] if c in show], liquids=common.with_hazards(rows),
          sources=LIBRARY_SOURCES + ["Hazard classes: CHEM21 guide (Prat et al., Green Chem. 18 (2016) 288-296), "
                                     "statements from memory - confirm with the safety data sheet."],
          notes=(["The target is the INVENTED demo resin, not measured data."] if keep and common.is_demo() else [])
          + warnings)
common.downloads(res[show], stem=f"replace_{old.replace(' ', '_')}",
                 report_md=build_report(f"Replacing {old}", **kw),
                 report_html=build_report(f"Replacing {old}", fmt="html", **kw), key="rp")
