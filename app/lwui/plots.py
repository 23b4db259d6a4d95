"""Plotly figures of the web pages.

Colours: the Okabe-Ito palette (Okabe and Ito, "Color Universal Design", 2008), safe for the
common forms of colour blindness. Good and bad liquids differ in marker shape as well as colour
(filled circle vs cross; a filled square in 3-D), so the plots also read in grey print.

Geometry only: every plotted number comes from :mod:`selector` (HSP, Teas fractions, fits,
phase boundaries). The Hansen sphere is drawn in (dD, dP, dH) axes, where the sphere of radius
R0 in the scaled space (2 dD, dP, dH) is an ellipsoid with semi-axis R0/2 along dD.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from selector.hansen import teas_fractions

BLUE = "#0072B2"
VERMILLION = "#D55E00"
GREEN = "#009E73"
ORANGE = "#E69F00"
SKY = "#56B4E9"
PURPLE = "#CC79A7"
YELLOW = "#F0E442"
GREY = "#999999"
BLACK = "#000000"

GOOD = dict(color=BLUE, symbol="circle")
BAD = dict(color=VERMILLION, symbol="x")
BORDER = dict(color=ORANGE, symbol="diamond-open")
AXIS = {"d": "dD (MPa½)", "p": "dP (MPa½)", "h": "dH (MPa½)"}
#: WebGL (3-D) draws the "x" marker as an empty box in Chromium: a filled square stands in
SYMBOL_3D = {"x": "square"}


def _hover(df: pd.DataFrame) -> list[str]:
    return [f"{n}<br>dD {d:.1f}  dP {p:.1f}  dH {h:.1f}" for n, d, p, h in
            zip(df["name"], df["delta_d"], df["delta_p"], df["delta_h"])]


def _layout(fig: go.Figure, height=560, legend_below=False):
    legend = (dict(orientation="h", yanchor="top", y=-0.18, x=0) if legend_below
              else dict(orientation="h", yanchor="bottom", y=1.02, x=0))
    fig.update_layout(height=height, margin=dict(l=10, r=10, t=90, b=10 if not legend_below else 90),
                      legend=legend, template="plotly_white")
    return fig


def ellipsoid(centre, radius, n=24):
    """Surface of the Hansen sphere in (dD, dP, dH) axes."""
    u = np.linspace(0, 2 * np.pi, n)
    v = np.linspace(0, np.pi, n // 2 + 1)
    x = centre[0] + radius / 2 * np.outer(np.cos(u), np.sin(v))
    y = centre[1] + radius * np.outer(np.sin(u), np.sin(v))
    z = centre[2] + radius * np.outer(np.ones_like(u), np.cos(v))
    return x, y, z


def hsp_space_3d(groups, spheres=(), title="Hansen space") -> go.Figure:
    """``groups``: list of (label, DataFrame with name/delta_d/delta_p/delta_h, style dict, size).
    ``spheres``: list of (label, (dD, dP, dH), R0 or None)."""
    fig = go.Figure()
    for label, df, style, size in groups:
        if df is None or len(df) == 0:
            continue
        fig.add_trace(go.Scatter3d(
            x=df["delta_d"], y=df["delta_p"], z=df["delta_h"], mode="markers", name=label,
            text=_hover(df), hoverinfo="text",
            marker=dict(size=size, color=style["color"], symbol=SYMBOL_3D.get(style["symbol"], style["symbol"]),
                        opacity=style.get("opacity", 0.9), line=dict(width=0))))
    colours = [GREEN, PURPLE, SKY]
    centres = []
    for i, (label, c, r) in enumerate(spheres):
        col = colours[i % len(colours)]
        if r:
            x, y, z = ellipsoid(c, r)
            fig.add_trace(go.Surface(x=x, y=y, z=z, opacity=0.18, showscale=False, name=label,
                                     colorscale=[[0, col], [1, col]], hoverinfo="skip", showlegend=True))
        # an open diamond: a blend or liquid at the centre stays visible through it
        centres.append(go.Scatter3d(x=[c[0]], y=[c[1]], z=[c[2]], mode="markers", name=f"centre of {label}",
                                    marker=dict(size=7, color=BLACK, symbol="diamond-open")))
    for tr in centres:
        fig.add_trace(tr)
    fig.update_layout(title=title, scene=dict(xaxis_title=AXIS["d"], yaxis_title=AXIS["p"],
                                              zaxis_title=AXIS["h"], **_scene_box(groups, spheres)))
    return _layout(fig, 640)


def _scene_box(groups, spheres) -> dict:
    """Axis ranges and aspect for the 3-D plot: the dD axis drawn twice as long per MPa½ as the
    others, as dD counts twice in Ra, so that a Hansen sphere looks round (and its dD ticks have
    room)."""
    lo, hi = np.full(3, np.inf), np.full(3, -np.inf)
    for _, df, _, _ in groups:
        if df is not None and len(df):
            v = df[["delta_d", "delta_p", "delta_h"]].to_numpy(float)
            lo, hi = np.fmin(lo, np.nanmin(v, 0)), np.fmax(hi, np.nanmax(v, 0))
    for _, c, r in spheres:
        ext = np.array([r / 2, r, r]) if r else np.zeros(3)
        lo, hi = np.fmin(lo, np.asarray(c, float) - ext), np.fmax(hi, np.asarray(c, float) + ext)
    if not np.all(np.isfinite(lo) & np.isfinite(hi)):
        return dict(aspectmode="data", camera=dict(eye=dict(x=1.9, y=1.9, z=1.25)))
    pad = np.maximum(0.04 * (hi - lo), [0.25, 0.5, 0.5])   # the same on the drawn (2 dD) scale
    lo, hi = lo - pad, hi + pad
    span = (hi - lo) * np.array([2.0, 1.0, 1.0])
    ratio = span / span.max()
    # the camera backs off with the size of the box, so that a cube-like box keeps its corners in
    # the frame and a tall narrow one does not shrink to the middle of it
    k = 0.95 * float(np.linalg.norm(ratio))
    return dict(aspectmode="manual", aspectratio=dict(x=ratio[0], y=ratio[1], z=ratio[2]),
                camera=dict(eye=dict(x=k, y=k, z=0.6 * k), center=dict(x=0, y=0, z=-0.08)),
                xaxis=dict(range=[lo[0], hi[0]], nticks=max(3, int(8 * ratio[0]))),
                yaxis=dict(range=[lo[1], hi[1]], nticks=max(3, int(8 * ratio[1]))),
                zaxis=dict(range=[lo[2], hi[2]], nticks=max(3, int(8 * ratio[2]))))


def projections_2d(groups, spheres=()) -> go.Figure:
    """The three 2-D projections (dP-dD, dH-dD, dH-dP) with the sphere outlines."""
    pairs = [("delta_d", "delta_p"), ("delta_d", "delta_h"), ("delta_p", "delta_h")]
    fig = make_subplots(rows=1, cols=3, subplot_titles=["dP against dD", "dH against dD", "dH against dP"])
    for j, (a, b) in enumerate(pairs, start=1):
        for label, df, style, size in groups:
            if df is None or len(df) == 0:
                continue
            fig.add_trace(go.Scatter(x=df[a], y=df[b], mode="markers", name=label, legendgroup=label,
                                     showlegend=j == 1, text=_hover(df), hoverinfo="text",
                                     marker=dict(size=max(size, 4) + 2, color=style["color"],
                                                 symbol=style["symbol"], opacity=style.get("opacity", 0.9))),
                          row=1, col=j)
        for k, (label, c, r) in enumerate(spheres):
            idx = {"delta_d": 0, "delta_p": 1, "delta_h": 2}
            ca, cb = c[idx[a]], c[idx[b]]
            if r:
                t = np.linspace(0, 2 * np.pi, 120)
                ra_ = r / 2 if a == "delta_d" else r
                rb_ = r / 2 if b == "delta_d" else r
                fig.add_trace(go.Scatter(x=ca + ra_ * np.cos(t), y=cb + rb_ * np.sin(t), mode="lines",
                                         line=dict(color=[GREEN, PURPLE, SKY][k % 3], width=2),
                                         name=label, legendgroup=f"s{k}", showlegend=j == 1,
                                         hoverinfo="skip"), row=1, col=j)
            fig.add_trace(go.Scatter(x=[ca], y=[cb], mode="markers", showlegend=False,
                                     marker=dict(color=BLACK, symbol="diamond", size=10),
                                     hovertext=label, hoverinfo="text"), row=1, col=j)
        fig.update_xaxes(title_text=AXIS[a[-1]], row=1, col=j)
        fig.update_yaxes(title_text=AXIS[b[-1]], row=1, col=j)
    return _layout(fig, 500, legend_below=True)


def teas_triangle(groups, points=()) -> go.Figure:
    """Teas plot (Teas 1968): fd, fp, fh x 100 from :func:`selector.hansen.teas_fractions`.
    ``points``: list of (label, (dD, dP, dH)): the first a black diamond, the next a purple star,
    then a sky-blue square (shape and colour both differ)."""
    fig = go.Figure()
    for label, df, style, size in groups:
        if df is None or len(df) == 0:
            continue
        f = 100 * teas_fractions(df[["delta_d", "delta_p", "delta_h"]].to_numpy(float))
        fig.add_trace(go.Scatterternary(a=f[:, 0], b=f[:, 1], c=f[:, 2], mode="markers", name=label,
                                        text=list(df["name"]), hoverinfo="text",
                                        marker=dict(size=max(size, 4) + 2, color=style["color"],
                                                    symbol=style["symbol"], opacity=style.get("opacity", 0.9))))
    marks = [(BLACK, "diamond"), (PURPLE, "star"), (SKY, "square")]
    for i, (label, h) in enumerate(points):
        f = 100 * teas_fractions(np.asarray(h, float))
        col, sym = marks[i % len(marks)]
        fig.add_trace(go.Scatterternary(a=[f[0]], b=[f[1]], c=[f[2]], mode="markers", name=label,
                                        text=[label], hoverinfo="text",
                                        marker=dict(size=12, color=col, symbol=sym)))
    # ticks 20-80 only: the 0 and 100 labels would clash at the corners
    fig.update_layout(ternary=dict(sum=100, aaxis=dict(title="fd, dispersion share (%)", min=0, tickvals=[20, 40, 60, 80]),
                                   baxis=dict(title="fp, polar share (%)", min=0, tickvals=[20, 40, 60, 80]),
                                   caxis=dict(title="fh, hydrogen-bond share (%)", min=0, tickvals=[20, 40, 60, 80])),
                      title="Teas triangle (fractional parameters)")
    return _layout(fig, 560, legend_below=True)


def heat_map(states: pd.DataFrame, title="Miscibility at the chosen temperature") -> go.Figure:
    """Square table of states ("miscible", "partially miscible", "immiscible") as a heat map."""
    order = {"miscible": 0, "partially miscible": 1, "immiscible": 2}
    z = states.apply(lambda col: col.map(lambda s: order.get(str(s), np.nan))).to_numpy(float)
    text = states.astype(str).to_numpy().astype(object)
    # pairs that react (selector.miscibility_matrix's attrs): "!" beside the symbol, said on hover
    reacts = {frozenset(p) for p in states.attrs.get("reactive_pairs", [])}
    unsure = {frozenset(p) for p in states.attrs.get("uncertain_pairs", [])}
    second = {frozenset((a, b)): f"; {m}: {s}" for a, b, m, s in states.attrs.get("disagreeing_pairs", [])}
    idx, cols = list(states.index), list(states.columns)
    for i, r in enumerate(idx):
        for j, c in enumerate(cols):
            if frozenset((r, c)) in reacts:
                text[i, j] += " - REACTIVE PAIR, do not mix"
            if frozenset((r, c)) in unsure:
                text[i, j] = f"uncertain (model: {text[i, j]}{second.get(frozenset((r, c)), '')})"
    scale = [[0, BLUE], [0.333, BLUE], [0.334, YELLOW], [0.666, YELLOW], [0.667, VERMILLION], [1, VERMILLION]]
    symbols = {"miscible": "○", "partially miscible": "◐", "immiscible": "●"}
    fig = go.Figure(go.Heatmap(z=z, x=list(states.columns), y=list(states.index), zmin=-0.5, zmax=2.5,
                               colorscale=scale, text=text, hovertemplate="%{y} + %{x}: %{text}<extra></extra>",
                               colorbar=dict(tickvals=[0, 1, 2], ticktext=list(order), title="")))
    fig.add_trace(go.Scatter(x=[c for c in states.columns for _ in states.index],
                             y=[r for _ in states.columns for r in states.index],
                             mode="text", hoverinfo="skip", showlegend=False,
                             text=[symbols.get(str(states.loc[r, c]), "")
                                   + (" !" if frozenset((r, c)) in reacts else "")
                                   + (" ?" if frozenset((r, c)) in unsure else "") for c in states.columns
                                   for r in states.index], textfont=dict(size=14, color=BLACK)))
    fig.update_layout(title=title, yaxis=dict(autorange="reversed"))
    return _layout(fig, 120 + 40 * max(len(states), 4))


def phase_diagram(sweep: pd.DataFrame, ucst_c=None, temperature_c=None,
                  x_label="volume fraction of the first liquid") -> go.Figure:
    """Binodal and spinodal against temperature. ``sweep``: columns ``temperature_c``,
    ``binodal_low/high`` and ``spinodal_low/high`` (volume fractions; NaN = one phase)."""
    fig = go.Figure()
    T = sweep["temperature_c"].to_numpy(float)
    for label, lo, hi, style, fill in (
            ("binodal (two phases inside)", "binodal_low", "binodal_high", dict(color=BLUE, dash="solid"), True),
            ("spinodal", "spinodal_low", "spinodal_high", dict(color=VERMILLION, dash="dash"), False)):
        m = np.isfinite(sweep[lo].to_numpy(float))
        if not m.any():
            continue
        x = np.concatenate([sweep[lo].to_numpy(float)[m], sweep[hi].to_numpy(float)[m][::-1]])
        y = np.concatenate([T[m], T[m][::-1]])
        fig.add_trace(go.Scatter(x=x, y=y, mode="lines", name=label, line=dict(width=3, **style),
                                 fill="toself" if fill else None,
                                 fillcolor="rgba(0,114,178,0.10)" if fill else None))
    if ucst_c is not None and np.isfinite(ucst_c) and ucst_c <= T.max() + 50:
        fig.add_hline(y=ucst_c, line=dict(color=GREY, dash="dot"), annotation_text=f"model UCST {ucst_c:.0f} °C")
    if temperature_c is not None:
        fig.add_hline(y=temperature_c, line=dict(color=GREEN, dash="dashdot"),
                      annotation_text=f"{temperature_c:g} °C", annotation_position="bottom right")
    fig.update_layout(title="Phase diagram against temperature (model)", xaxis_title=x_label,
                      yaxis_title="temperature (°C)", xaxis=dict(range=[0, 1]))
    return _layout(fig, 460)


#: readable axis titles for the drying-path columns
DRYING_TITLES = {"evaporated_fraction": "fraction of the blend evaporated (by volume)",
                 "red": "RED to the target (1 = sphere edge)", "ra": "Ra to the target (MPa½)"}


def drying_plot(path: pd.DataFrame, x: str, series: list[str], y2: str | None = None,
                title="Drying path") -> go.Figure:
    """Composition (and optionally RED) of an evaporating blend against ``x``."""
    fig = make_subplots(specs=[[{"secondary_y": y2 is not None}]])
    pal = [BLUE, ORANGE, GREEN, PURPLE, SKY]
    dashes = ["solid", "dash", "dot", "dashdot", "longdash"]
    for i, s in enumerate(series):
        fig.add_trace(go.Scatter(x=path[x], y=path[s], mode="lines", name=s,
                                 line=dict(color=pal[i % 5], dash=dashes[i % 5], width=3)), secondary_y=False)
    if y2 is not None:
        fig.add_trace(go.Scatter(x=path[x], y=path[y2], mode="lines", name=y2.upper() if y2 == "red" else "Ra",
                                 line=dict(color=BLACK, width=2)), secondary_y=True)
        top = float(np.nanmax(path[y2].to_numpy(float))) if len(path) else 1.0
        need = max(1.1, 1.05 * top) if y2 == "red" else max(1.05 * top, 1e-9)   # RED = 1 in view
        # five divisions on both axes (left: 0, 0.2, .. 1), so that the right ticks sit on the
        # left axis' grid lines and a reading on one axis is not taken for the other's
        step = next(d for d in (0.05, 0.1, 0.2, 0.25, 0.5, 1, 2, 2.5, 5, 10, 20, 25, 50, 100, 1e9)
                    if 5 * d >= need)
        fig.update_yaxes(title_text=DRYING_TITLES.get(y2, y2), secondary_y=True, range=[0, 5 * step],
                         tickmode="linear", tick0=0, dtick=step, showgrid=False)
    fig.update_xaxes(title_text=DRYING_TITLES.get(x, x))
    fig.update_yaxes(title_text="volume fraction in the liquid", secondary_y=False, range=[0, 1],
                     tickmode="linear", tick0=0, dtick=0.2)
    fig.update_layout(title=title)
    return _layout(fig, 430)
