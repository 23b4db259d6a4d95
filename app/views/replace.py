"""Replace a liquid: safer liquids and blends close to one that must go."""
import streamlit as st

import selector
from lwui import common
from selector.report import LIBRARY_SOURCES, build_report

st.title("Replace a liquid")
st.caption("Pick a liquid that regulation or site policy is removing (e.g. NMP, DMF, dichloromethane, "
           "toluene). The candidates sit close to it in Hansen space and carry a better hazard class.")
mod = common.capability("blends")
if mod is None:
    st.stop()

names = common.liquid_names()
default = common.demo().get("current_solvent", "toluene") if common.is_demo() else "toluene"
old = st.selectbox("Liquid to replace", names, index=names.index(default) if default in names else 0,
                   key="rp_old")
if common.is_demo():
    st.info("Invented demo: the co-op thins its (invented) varnish with toluene today.", icon=":material/science:")
filters, temp = common.filter_panel("rp", temperature=False)


@st.cache_data(show_spinner="Looking for substitutes…", max_entries=64)
def subs(old, filters_key):
    return selector.substitutes(old, **dict(filters_key))


freeze = tuple(sorted((k, tuple(v) if isinstance(v, list) else v) for k, v in filters.items()))
hz_mod = common.capability("hazards")
if hz_mod is not None:
    h = common.call(selector.hazard, old)
    if h is not None:
        with st.expander(f"Hazard profile of {old}", expanded=True):
            from lwui.hazard_view import show_hazard

            show_hazard(h)
res = common.call(subs, old, freeze)
if res is None:
    st.stop()
if len(res) == 0:
    st.warning("No substitute passes these filters; widen them.")
    st.stop()
res = res.copy()
if "components" in res.columns:
    res.insert(0, "candidate", [" + ".join(f"{f:.0%} {c}" for c, f in zip(cs, fs)) if len(cs) > 1 else cs[0]
                                for cs, fs in zip(res["components"], res["fractions"])])
    label = "candidate"
else:
    label = "name"
metric = next((c for c in ("red", "ra") if c in res.columns and res[c].notna().any()), None)
st.subheader("Best five")
common.readable_top(res, [label, metric, "hazard_class", "flash_point_c", "boiling_point_c"], 5)
show = [c for c in res.columns if c not in ("components", "fractions")]
st.dataframe(res[show], hide_index=True, width="stretch", column_config=common.COLUMN_CONFIG)

lib = common.library()
if "components" in res.columns:
    nm = sorted({c for cs in res["components"] for c in cs})
else:
    nm = list(res["name"])
rows = lib.loc[lib["name"].isin(nm)]
common.cautions(rows, title="Safety notes for the candidates")
tg = common.call(selector.as_target, old, lib)
kw = dict(target=tg, inputs=dict(common.filters_as_inputs(filters, 25.0), **{"liquid replaced": old}),
          table=res.head(10), columns=[c for c in [label, "ra", "red", "hazard_class", "flash_point_c",
                                                   "boiling_point_c"] if c in res], liquids=common.with_hazards(rows),
          sources=LIBRARY_SOURCES + ["Hazard classes: selector.hazards (CHEM21 guide, Prat et al., "
                                     "Green Chem. 18 (2016) 288)."])
common.downloads(res[show], stem=f"replace_{old.replace(' ', '_')}",
                 report_md=build_report(f"Replacing {old}", **kw),
                 report_html=build_report(f"Replacing {old}", fmt="html", **kw), key="rp")
