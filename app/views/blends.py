"""Blend design: two- and three-liquid mixtures whose volume-weighted HSP land on the target."""
import pandas as pd
import streamlit as st

import selector
from lwui import common, plots
from selector.blends import blend_labels, mixing_warning
from selector.report import LIBRARY_SOURCES, build_report

st.title("Blend design")
common.demo_banner()
common.target_line()
st.caption("A blend's HSP are the volume-fraction-weighted mean of its components, so two liquids that "
           "each miss the target can together land inside it. Blends are ordered by Ra in steps of "
           "0.5 MPa½ (closer than that counts as a tie); within a step, blends with a library liquid that has "
           "no hazard data come last (a liquid of your own without data counts as the worst class), then fewer liquids, then a better hazard class, then Ra; no liquid "
           "appears in more than three blends.")

mod = common.capability("blends")
if mod is None:
    st.stop()


@st.cache_data(show_spinner="Designing blends…", max_entries=64)
def design(target_key, max_components, min_fraction, temperature, top, filters_key, lib_key):
    # lib_key (the user's liquids file and its time stamp) makes a saved change start a new design
    from selector.targets import Target

    tg = Target(*target_key[:3], target_key[3], name=target_key[4], liquid=target_key[5])
    return selector.find_blends(tg, max_components=max_components, min_fraction=min_fraction,
                                temperature=temperature, top=top, library=common.library(), **dict(filters_key))


@st.cache_data(show_spinner=False, max_entries=64)
def dry(comps, fracs, temperature, tgt, activity, rh, lib_key):
    from selector.targets import Target

    return selector.drying_path(list(comps), list(fracs), temperature=temperature, library=common.library(),
                                target=Target(*tgt[:3], tgt[3], liquid=tgt[4]), activity=activity,
                                relative_humidity=rh)


def freeze(f: dict):
    return tuple(sorted((k, tuple(v) if isinstance(v, list) else v) for k, v in f.items()))


filters, temp = common.filter_panel("bl")
with st.form("bl_form"):
    c1, c2, c3 = st.columns(3)
    ncomp = c1.radio("Liquids per blend (at most)", [2, 3], index=1, horizontal=True, key="bl_n",
                     help="a third liquid is proposed only where it brings the blend closer to the "
                          "target than each of its pairs")
    # no min/max on the inputs: a value out of range reaches the library and is answered there
    minf = c2.number_input("Smallest share (volume fraction)", value=0.05, step=0.01, key="bl_min",
                           help="no component below this share; at most 0.5 for two liquids, 0.33 for three")
    top = c3.number_input("Blends to show", value=20, step=5, key="bl_top", help="1 or more")
    st.form_submit_button("Design blends", type="primary")

t = common.target()
res = common.call(design, (t.delta_d, t.delta_p, t.delta_h, t.radius, t.name, t.liquid), int(ncomp), float(minf),
                  temp, int(top), freeze(filters), common.lib_key())
if res is None:
    st.stop()
if len(res) == 0:
    st.warning("No blend meets these conditions; widen the filters or lower the smallest share.")
    st.stop()

res = res.copy()
common.target_notes(res.attrs.get("target"))
res.attrs = {}  # a Target in attrs cannot go to the browser
res.insert(0, "blend", blend_labels(res, "volume", digits=0))
res.insert(1, "by_mass", blend_labels(res, "mass", digits=0))
has_r = "red" in res and res["red"].notna().any()
from selector.blends import estimated_density_note
from selector.library import estimated_components

res["estimated"] = estimated_components(res, common.library())
has_est = res["estimated"].ne("").any()
st.subheader("Best five")
common.readable_top(res, ["blend", "red" if has_r else None, "ra", "hazard_class", "lowest_flash_point_c",
                          "estimated" if has_est else None, "hazard_notes"], 5)
mix_warn = mixing_warning(res)
if mix_warn:
    st.warning(common.ui_units(mix_warn).replace("(mixing_note)", "(the Mixing note column)"),
               icon=":material/science:")
if has_est:
    st.caption("estimated = components whose HSP are estimated from structure (not measured): such a "
               "blend point is as uncertain as they are; test it before you rely on it.")
st.caption("Shares in Blend are by volume; By mass is the same blend by weight, for the balance (ideal "
           "mixing, 25 C densities; blank where a density is unknown).")
dnote = estimated_density_note(res, common.library())
if dnote:
    st.caption(dnote.replace("by_mass", "By mass"))
show_cols = [c for c in res.columns if c not in ("components", "fractions", "mass_fractions")]
common.table(res[show_cols], hide_index=True, width="stretch", column_config=common.COLUMN_CONFIG)

names = sorted({c for cs in res["components"] for c in cs})
lib = common.library()
comp_rows = lib.loc[lib["name"].isin(names)]
common.cautions(comp_rows, title="Safety notes for every liquid in these blends")

inputs = common.filters_as_inputs(filters, temp)
inputs.update({"liquids per blend": int(ncomp), "smallest share": float(minf)})
rep_cols = [c for c in ["blend", "by_mass", "delta_d", "delta_p", "delta_h", "ra", "red", "hazard_class"] if c in res]
kw = dict(target=t, inputs=inputs, table=res.head(10), columns=rep_cols, liquids=common.with_hazards(comp_rows),
          sources=LIBRARY_SOURCES + ["Blend HSP: volume-fraction-weighted mean (Hansen's handbook, ch. 1)."],
          notes=(["The target is the INVENTED demo resin, not measured data."] if common.is_demo() else [])
          + ([mix_warn.replace("(mixing_note)", "(see the full table's mixing_note)")] if mix_warn else []))
common.downloads(res.drop(columns=["blend"]), stem="blends", report_md=build_report("Blend design", **kw),
                 report_html=build_report("Blend design", fmt="html", **kw), key="bl")

st.subheader("One blend in detail")
pick = st.selectbox("Blend", list(res["blend"]), key="bl_pick")
row = res.loc[res["blend"] == pick].iloc[0]
comps, fracs = list(row["components"]), list(row["fractions"])
tab1, tab2, tab3 = st.tabs(["Drying path", "Teas triangle", "3-D Hansen space"])
with tab1:
    dmod = common.capability("drying")
    if dmod is not None:
        d1, d2 = st.columns(2)
        act = d1.radio("Evaporation model", ["raoult", "hsp"], horizontal=True, key="bl_act",
                       format_func={"raoult": "ideal (Raoult)", "hsp": "Flory-Huggins with HSP"}.get,
                       help="the HSP form is rough for water and strongly hydrogen-bonded pairs")
        rh = d2.slider("Relative humidity (%)", 0, 100, 50, 5, key="bl_rh", help="acts on water only")
        path = common.call(dry, tuple(comps), tuple(fracs), temp,
                           (t.delta_d, t.delta_p, t.delta_h, t.radius, t.liquid), act, float(rh), common.lib_key())
        if path is not None:
            from lwui.drying_view import show_drying

            show_drying(path, comps)
with tab2:
    crow = lib.loc[lib["name"].isin(comps)]
    pts = [(t.name, t.hsp), ("blend", (row["delta_d"], row["delta_p"], row["delta_h"]))]
    st.plotly_chart(plots.teas_triangle([("components", crow, plots.GOOD, 6)], pts), width="stretch",
                    key="bl_teas")
with tab3:
    crow = lib.loc[lib["name"].isin(comps)]
    blend_pt = pd.DataFrame({"name": [pick], "delta_d": [row["delta_d"]], "delta_p": [row["delta_p"]],
                             "delta_h": [row["delta_h"]]})
    st.plotly_chart(plots.hsp_space_3d([("components", crow, dict(plots.BAD, color=plots.ORANGE), 6),
                                        ("blend", blend_pt, plots.GOOD, 10)],
                                       [(t.name, tuple(t.hsp), t.radius)], title="The blend and its components"),
                    width="stretch", key="bl_3d")
    st.caption("A blend's point is the volume-weighted mean of its components: two liquids outside the "
               "sphere can give a blend inside it.")
