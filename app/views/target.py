"""Target: the solute (resin, polymer, active) the liquids are ranked against."""
import numpy as np
import pandas as pd
import streamlit as st

import selector
from lwui import common
from selector.targets import unit_hint

st.title("Target")
st.caption("The point (dD, dP, dH) and, if known, the interaction radius R0 of what you want to "
           "dissolve. All values in MPa½. The target stays set while you move between pages.")

t = common.target()
c = st.columns(4)
c[0].metric("dD (MPa½)", f"{t.delta_d:.1f}")
c[1].metric("dP (MPa½)", f"{t.delta_p:.1f}")
c[2].metric("dH (MPa½)", f"{t.delta_h:.1f}")
c[3].metric("R0 (MPa½)", f"{t.radius:.1f}" if t.radius else "—")
KIND_WORDS = {"demo": "the invented demo", "typed": "typed numbers", "library": "a library liquid",
              "estimate": "a structure estimate", "fitted": "a fitted sphere", "mine": "my liquids"}
kind = common.target_spec().get("kind", "")
st.markdown(f"**{common.md_escape(t.name)}** — {common.md_escape(t.source)}; set from "
            f"{KIND_WORDS.get(kind, kind or 'given values')}" + ("" if t.radius else "; a point (no R0)"))
common.demo_banner(on_target_page=True)
if not common.is_demo() and st.button("Back to the invented demo resin", key="tg_demo"):
    common.set_target(common.demo_target_spec())
    st.rerun()

hint = unit_hint(t)
if hint:
    st.warning(common.ui_units(hint))
common.show_flash()
# a keyed choice, not st.tabs: it stays on the chosen way across the rerun that sets the target
WAYS = ["Type the numbers", "A library liquid", "Estimate from a structure (SMILES)", "Fitted sphere"]
way = st.segmented_control("Set the target by", WAYS, default=WAYS[0], key="tg_way",
                           label_visibility="collapsed") or WAYS[0]

def _checked(spec: dict) -> bool:
    """True when the library accepts the target ``spec`` (R0 as typed); else its message is shown."""
    hsp = (spec["delta_d"], spec["delta_p"], spec["delta_h"])
    return common.call(selector.as_target, hsp + ((spec["radius"],) if spec.get("radius") else ()),
                       name=spec["name"]) is not None


if way == WAYS[0]:
    with st.form("tg_typed"):
        typed = common.target_spec().get("kind") == "typed"
        name = st.text_input("Name", value=t.name if typed else "", key="tg_name",
                             placeholder="e.g. binder resin B-2 (optional)")
        a, b, cc, d = st.columns(4)
        # no min/max on the inputs: a value out of range must reach the check below and be
        # answered, not be held back by the widget without a word
        dd = a.number_input("dD (MPa½)", value=float(t.delta_d), step=0.1, help="more than 0, at most 30 MPa½")
        dp = b.number_input("dP (MPa½)", value=float(t.delta_p), step=0.1, help="0 to 40 MPa½")
        dh = cc.number_input("dH (MPa½)", value=float(t.delta_h), step=0.1, help="0 to 50 MPa½")
        # value=None keeps the box clearable (a box started with a number snaps back to it when
        # emptied); the current R0 is put in through the session state, once per target
        if st.session_state.get("tg_r0_for") != common.target_spec():
            st.session_state["tg_r0"] = float(t.radius) if t.radius else None
            st.session_state["tg_r0_for"] = dict(common.target_spec())
        r0 = d.number_input("R0 (MPa½)", value=None, step=0.1, key="tg_r0", placeholder="none (a point)",
                            help="leave empty (or 0) for a point target; then liquids are ranked by Ra")
        if st.form_submit_button("Use these numbers", type="primary"):
            label = name.strip() or "my solute"
            try:
                selector.as_target((dd, dp, dh) if not r0 else (dd, dp, dh, r0), name=label)
            except (selector.SelectorError, ValueError) as e:
                common.show_error(e)
            else:
                msg = (f"{label} is now the target, as a point (no R0): liquids are ranked by Ra."
                       if not r0 else f"{label} is now the target.")
                common.set_target_and_rerun({"kind": "typed", "name": label, "delta_d": dd,
                                             "delta_p": dp, "delta_h": dh, "radius": r0 or None,
                                             "source": "typed by the user"}, msg)

if way == WAYS[1]:
    names = common.liquid_names()
    q = st.selectbox("Liquid", names, index=names.index("toluene") if "toluene" in names else 0, key="tg_liq",
                     help="type to search; synonyms and CAS numbers work in the text box below")
    q2 = st.text_input("…or a name, synonym, CAS number or SMILES", key="tg_q", placeholder="e.g. NMP, 67-64-1")
    r0l = st.number_input("R0 (MPa½), optional", value=None, step=0.5, key="tg_r0l",
                          placeholder="none (a point)", help="must be positive; empty or 0 for a point")
    if st.button("Use this liquid", key="tg_use_liq", type="primary"):
        from selector.errors import NotLiquidError

        try:
            row = selector.find_liquid(q2.strip() or q, common.library())
        except NotLiquidError:
            # a solid of the published tables (sulfolane, tert-butanol): its published point, as given
            row = None
            t = selector.as_target(q2.strip() or q, common.library())
            spec = {"kind": "typed", "name": t.name, "delta_d": t.delta_d, "delta_p": t.delta_p,
                    "delta_h": t.delta_h, "radius": r0l or None, "source": t.source}
            if _checked(spec):
                common.set_target_and_rerun(spec, f"{t.name} is now the target. {common.ui_units(t.notes[0])}")
        except common.ERRORS as e:
            row = None
            common.show_error(e)
        if row is not None:
            from selector.library import estimate_note

            spec = {"kind": "library", "name": str(row["name"]), "delta_d": float(row.delta_d),
                    "delta_p": float(row.delta_p), "delta_h": float(row.delta_h),
                    "radius": r0l or None, "source": f"library ({row['hsp_source']})"}
            if estimate_note(row):   # one of your saved estimates: keep its mark and intervals
                spec.update(common.estimate_fields(row), source=f"my liquids ({estimate_note(row)})")
            if _checked(spec):
                common.set_target_and_rerun(spec, f"{row['name']} is now the target.")

def _add_to_mine(est, e) -> None:
    """Save an estimate (or a published-table answer) as one of the user's liquids, so that every
    page can propose it; the row keeps its intervals and its "estimated" mark."""
    from selector.estimation import saveable_rows, with_user_rows
    from selector.library import file_fingerprint, save_user_liquids, user_liquids_file, validate_user_table

    c1, c2 = st.columns([2, 1])
    default = str(e.get("library_name") or e.get("matched_name") or "") or f"my {e['smiles']}"
    nm = c1.text_input("Name in your liquids", value=default, key="tg_add_name")
    c2.write("")
    if not c2.button("Add to my liquids (a candidate everywhere)", key="tg_add_est"):
        return
    if not nm.strip():
        st.error("Give the liquid a name first.")
        return
    one = est.head(1).copy()
    one["name"] = nm.strip()
    rows, skipped, _, _ = saveable_rows(one)
    if skipped or rows is None or rows.empty:
        common.show_error(f"Not added: {skipped[0] if skipped else 'nothing to add'}")
        return
    path = user_liquids_file()
    stamp = file_fingerprint(path)
    if nm.strip().lower() in set(selector.load_library()["name"].str.lower()) and \
            not st.session_state.get("tg_add_confirm") == nm.strip():
        st.session_state["tg_add_confirm"] = nm.strip()
        st.warning(f"{nm.strip()} is a library liquid: saving replaces its published values with this "
                   "estimate in all your rankings. Press the button again to do so, or choose another name.")
        return
    try:
        old = validate_user_table(path) if path.exists() else None
        table, replaced = with_user_rows(old, rows)
        notes = []
        save_user_liquids(table, path, unchanged_since=stamp, notes=notes)
    except (ValueError, KeyError, OSError) as err:
        common.show_error(f"Not added (your saved liquids are unchanged; see *My liquids*): {err}")
        return
    for k in ("mine_table", "mine_stamp", "mine_editor"):   # My liquids reads the file again
        st.session_state.pop(k, None)
    what = "replaced" if replaced else "added"
    common.set_target_and_rerun(common.target_spec(), f"{nm.strip()} {what} in your liquids ({path}): every page "
                                "can now propose it, marked as estimated. Use it only after a test."
                                + "".join(f" Note: {n}." for n in notes))


if way == WAYS[2]:
    st.caption("Hansen parameters and molar volume estimated from the structure by the bundled estimator "
               "(trained on the published HSP tables), with a 90 % interval and an applicability-domain "
               "check. A molecule already in the library is answered from the library.")
    est_mod = common.capability("estimation")
    with st.form("tg_est"):
        smi = st.text_input("SMILES", key="tg_smiles", placeholder="e.g. CC(C)(C)OC(=O)C1CCCCC1")
        r0s = st.number_input("R0 (MPa½), optional", value=None, step=0.5, key="tg_r0s",
                              placeholder="none (a point)", help="must be positive; empty or 0 for a point")
        go_est = st.form_submit_button("Estimate", disabled=est_mod is None)
    if go_est and smi.strip():
        common.wait_for_estimator()
        with st.spinner("Estimating… (the first estimate after a start may train the model: 10-60 s)"):
            est = common.call(selector.estimate, smi.strip())
        st.session_state["lw_est"] = None if est is None or not len(est) else est
    elif go_est:
        st.session_state.pop("lw_est", None)   # an empty box must not leave the last answer standing
        st.error("Type a SMILES string first, e.g. CCO for ethanol.")
    est = st.session_state.get("lw_est")
    if est is not None and len(est):
        e = est.iloc[0]
        def _f(v, fmt):
            try:
                return fmt.format(float(v)) if np.isfinite(float(v)) else "—"
            except (TypeError, ValueError):
                return "—"

        rows = []
        for col, lab, fmt in (("delta_d", "dD (MPa½)", "{:.1f}"), ("delta_p", "dP (MPa½)", "{:.1f}"),
                              ("delta_h", "dH (MPa½)", "{:.1f}"), ("molar_volume", "V (cm³/mol)", "{:.0f}")):
            if col in est.columns:
                rows.append({"": lab, "value": _f(e[col], fmt), "90 % low": _f(e.get(f"{col}_low"), fmt),
                             "90 % high": _f(e.get(f"{col}_high"), fmt)})
        st.markdown(f"**{common.md_escape(e.get('library_name') or e['smiles'])}** — source: {e.get('source', '')}")
        st.table(pd.DataFrame(rows).set_index(""))
        bits = []
        if "similarity" in est.columns:
            bits.append(f"similarity to the nearest training molecule {_f(e['similarity'], '{:.2f}')}")
        if e.get("nearest"):
            bits.append(f"nearest: {e['nearest']}")
        if bits:
            st.caption("; ".join(bits))
        from selector.estimation import DOMAIN_THRESHOLD

        if "in_domain" in est.columns and not bool(e["in_domain"]):
            st.warning("This structure is outside the estimator's domain: treat the numbers as rough.")
        elif "in_domain" in est.columns and e.get("source") == "estimated":
            st.caption(f"Inside the estimator's domain (similarity >= {DOMAIN_THRESHOLD:.2f}); in the scaffold "
                       "cross-validation such molecules had clearly smaller errors than those outside it "
                       "(figures in the README); still an estimate, not a measurement.")
        st.caption(common.md_escape(str(e.get("message", "")).rstrip(".")) + "."
                   + (" Estimates are not measurements: confirm with a test." if e.get("source") == "estimated"
                      else f" You typed {common.md_escape(e['smiles'])}."))
        estimated = e.get("source") == "estimated"
        label = "Use this estimate as the target" if estimated else "Use these published values as the target"
        if st.button(label, key="tg_use_est", type="primary"):
            r0v = st.session_state.get("tg_r0s")
            name = str(e.get("library_name") or e["smiles"])
            spec = {"kind": "estimate", "name": name, "delta_d": float(e["delta_d"]),
                    "delta_p": float(e["delta_p"]), "delta_h": float(e["delta_h"]), "radius": r0v or None,
                    "source": f"{e.get('source', 'estimated')} from SMILES {e['smiles']}"}
            if estimated:
                spec.update(common.estimate_fields(dict(e, origin="estimated")))
            if _checked(spec):
                st.session_state.pop("lw_est", None)
                common.set_target_and_rerun(spec, f"{name} is now the target"
                                            + (" (estimated from its structure: see the sidebar)." if estimated else "."))
        if e.get("source") in ("estimated", "published"):
            _add_to_mine(est, e)

if way == WAYS[3]:
    fit = st.session_state.get("lw_fit")
    if fit is None:
        st.info("No sphere fitted yet in this session. Fit one on the *Sphere from lab tests* page.")
    else:
        st.markdown(f"Fitted sphere: dD {fit['delta_d']:.1f}, dP {fit['delta_p']:.1f}, dH {fit['delta_h']:.1f}, "
                    f"R0 {fit['radius']:.1f} MPa½ ({fit['source']})")
        if st.button("Use the fitted sphere", key="tg_use_fit", type="primary"):
            common.set_target(dict(fit, kind="fitted"))
            st.rerun()
