"""Ranked liquids: every library liquid against the current target, with filters."""
import streamlit as st

import selector
from lwui import common, plots
from selector.report import LIBRARY_SOURCES, build_report

st.title("Ranked liquids")
common.demo_banner()
common.target_line()
st.caption("Score = distance + polarity weight × (1 − polarity match); lower is better. Distance is "
           "RED = Ra/R0 for a sphere, Ra/8 MPa½ for a point. Change the target on the *Target* page.")

filters, temp = common.filter_panel("rank")
c1, c2 = st.columns(2)
w = c1.slider("Polarity weight", 0.0, 1.0, 0.3, 0.05, key="rank_w",
              help="0 ranks by Ra/RED alone; 0.3 is the library default")
n_show = c2.slider("Rows to show", 5, 100, 25, 5, key="rank_n")

lib = common.library()
res = common.call(selector.rank, common.rank_target(), temperature=temp, library=lib,
                  polarity_weight=w, **filters)
if res is None:
    st.stop()

tgt = res.attrs["target"]
common.target_notes(tgt)
left_out = res.attrs.get("reagents_left_out", 0)
res.attrs = {}
res = common.with_hazards(res)
has_r = tgt.radius is not None
inside = int((res["red"] < 1).sum()) if has_r else None
m1, m2, m3 = st.columns(3)
m1.metric("Candidates after filters", len(res))
if has_r:
    m2.metric("Inside the sphere (RED < 1)", inside)
m3.metric("Best match", res["name"].iloc[0], help=f"{res['name'].iloc[0]} (a long name is cut short in the box; the tables give it whole)")

if left_out:
    st.caption(f"{left_out} reagents (reactive, explosive or very toxic liquids such as acid chlorides, "
               "isocyanates, epoxides, benzene) are left out; tick *Include reagents* in the filters "
               "to see them.")
cols = [c for c in common.RANK_COLUMNS if c in res.columns and (has_r or c != "red")]
st.subheader("Top five")
common.readable_top(res, ["rank", "name", "red" if has_r else "ra", "score", "boiling_point_c",
                          "flash_point_c", "hazard_class", "hazard_notes"], 5)
st.subheader(f"First {min(n_show, len(res))} of {len(res)}")
common.table(res.head(n_show)[cols], hide_index=True, width="stretch", column_config=common.COLUMN_CONFIG)

shown = res.head(n_show)
ct = common.cautions(shown.head(10), title="Safety notes for the first ten")
inputs = common.filters_as_inputs(filters, temp)
inputs["polarity weight"] = w
rep_cols = ["rank", "name", "cas", "ra", "red" if has_r else None, "score", "boiling_point_c", "flash_point_c",
            "hazard_class", "hsp_source"]
rep_cols = [c for c in rep_cols if c]
kw = dict(target=tgt, inputs=inputs, table=res.head(10), columns=rep_cols, liquids=res.head(10),
          sources=LIBRARY_SOURCES, notes=(["The target is the INVENTED demo resin, not measured data."]
                                          if common.is_demo() else []))
common.downloads(res[cols], stem="ranked_liquids",
                 report_md=build_report("Ranked liquids", **kw),
                 report_html=build_report("Ranked liquids", fmt="html", **kw), key="rank")

st.subheader("Where they sit")
others = lib.loc[~lib["name"].isin(res["name"])]
if has_r:
    good, bad = res.loc[res["red"] < 1], res.loc[res["red"] >= 1]
    groups = [("inside the sphere (RED < 1)", good, plots.GOOD, 4),
              ("outside (RED ≥ 1)", bad, dict(plots.BAD, opacity=0.6), 3),
              ("filtered out", others, dict(color=plots.GREY, symbol="circle-open", opacity=0.3), 2)]
else:
    groups = [(f"top {n_show}", shown, plots.GOOD, 4),
              ("other candidates", res.iloc[n_show:], dict(plots.BAD, opacity=0.5), 3),
              ("filtered out", others, dict(color=plots.GREY, symbol="circle-open", opacity=0.3), 2)]
spheres = [(tgt.name, tuple(tgt.hsp), tgt.radius)]
t1, t2, t3 = st.tabs(["3-D Hansen space", "2-D projections", "Teas triangle"])
with t1:
    st.plotly_chart(plots.hsp_space_3d(groups, spheres), width="stretch", key="rank_3d")
with t2:
    st.plotly_chart(plots.projections_2d(groups, spheres), width="stretch", key="rank_2d")
with t3:
    st.plotly_chart(plots.teas_triangle(groups[:2], [(tgt.name, tgt.hsp)]), width="stretch", key="rank_teas")
