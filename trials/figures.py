"""Plotly figures of the screens, built from finished results (no streamlit, no I/O).

:mod:`trials.ui` shows them (``st.plotly_chart``); keeping the figures here keeps the
screens' helpers short and lets a test build a figure without a running app. User text
on a figure goes through :func:`chart_text`.
"""

from __future__ import annotations

import html
from typing import Any


def chart_text(text: object) -> str:
    """``text`` for a plotly label (tick, hover, legend, title, annotation): plotly reads
    its text as a small HTML dialect, in which ``<a href>`` is a live link; escaped, it
    shows the characters as typed. Quotes stay: plotly decodes ``&lt; &gt; &amp;`` but
    not ``&quot;``, and with no tag a quote does nothing."""
    return html.escape("" if text is None else str(text), quote=False)


def power_figure(curve: Any, *, n_needed: int, beta: float, step_line: bool = True) -> Any:
    """Power against the number of panelists (``curve`` has columns ``n`` and ``power``),
    with the target power and the panel size needed marked."""
    import plotly.graph_objects as go

    line = {"shape": "hv"} if step_line else {}
    fig = go.Figure(go.Scatter(x=curve["n"], y=curve["power"], mode="lines",
                               name="power", line=line))
    fig.add_hline(y=1 - beta, line_dash="dot", annotation_text=f"1 - beta = {1 - beta:.2f}")
    fig.add_vline(x=n_needed, line_dash="dot", annotation_text=f"n = {n_needed}")
    fig.update_layout(xaxis_title="panelists", yaxis_title="power", yaxis_range=[0, 1],
                      height=320, margin={"l": 10, "r": 10, "t": 30, "b": 10})
    return fig


def means_figure(means: dict, ci: dict, *, title: str, low: float, high: float,
                groups: dict | None = None) -> Any:
    """Sample means with their confidence intervals (and letters) on the scale."""
    import plotly.graph_objects as go

    names = list(means)
    y = [means[n] for n in names]
    lo = [y[i] - ci[n][0] for i, n in enumerate(names)]
    hi = [ci[n][1] - y[i] for i, n in enumerate(names)]
    text = [(groups or {}).get(n, "") for n in names]
    fig = go.Figure(go.Scatter(
        x=[chart_text(n) for n in names], y=y, mode="markers+text",
        text=[chart_text(t) for t in text], textposition="middle right",
        error_y={"type": "data", "symmetric": False, "array": hi, "arrayminus": lo},
        marker={"size": 12},
    ))
    fig.update_layout(title=chart_text(title), yaxis_title="mean score",
                      yaxis_range=[low - 0.5, high + 0.5], height=340,
                      margin={"l": 10, "r": 10, "t": 40, "b": 10})
    return fig


def panel_figure(frame, *, title: str) -> Any:
    """Panel performance: agreement against repeatability, flagged panelists marked."""
    import plotly.graph_objects as go

    data = frame.reset_index()
    flagged = data["flags"].astype(str).str.len() > 0
    y = data["mse"] if data["mse"].notna().any() else data["n"]
    fig = go.Figure()
    for mask, name in ((~flagged, "in line"), (flagged, "stands apart")):
        fig.add_trace(go.Scatter(x=data.loc[mask, "agreement"], y=y[mask], mode="markers+text",
                                 text=[chart_text(c) for c in data.loc[mask, "panelist"]],
                                 textposition="top center",
                                 name=name, marker={"size": 10}))
    fig.update_layout(title=chart_text(title), xaxis_title="agreement with the panel (r)",
                      yaxis_title="repeatability (MSE)" if data["mse"].notna().any()
                      else "scores", height=360, margin={"l": 10, "r": 10, "t": 40, "b": 10})
    return fig


def count_figure(correct: int, n: int, critical: int | None, *, guess: float, label: str) -> Any:
    """The observed count against the count expected by chance and the critical value."""
    import plotly.graph_objects as go

    fig = go.Figure(go.Bar(x=[correct, n - correct], y=[chart_text(label), "other"],
                           orientation="h",
                           marker_color=["#2e7d32", "#9e9e9e"], text=[correct, n - correct],
                           textposition="auto"))
    fig.add_vline(x=n * guess, line_dash="dot", annotation_text="expected by chance")
    if critical is not None:
        fig.add_vline(x=critical, line_dash="dash", annotation_text=f"critical = {critical}")
    fig.update_layout(height=200, xaxis_range=[0, n], xaxis_title="answers",
                      margin={"l": 10, "r": 10, "t": 30, "b": 10}, showlegend=False)
    return fig


def departure_figure(at, *, title: str) -> Any:
    """Each panelist's direction (r) against scale (slope) on one attribute; the size
    of a point is the panelist's share of the interaction, flagged panelists in red."""
    import plotly.graph_objects as go

    rows = [p for p in at.panelists if p.r is not None and p.slope is not None]
    fig = go.Figure()
    for flagged, name, colour in ((False, "in line", "#1f77b4"), (True, "stands apart",
                                                                   "#d62728")):
        part = [p for p in rows if bool(p.flags) == flagged]
        fig.add_trace(go.Scatter(
            x=[p.r for p in part], y=[p.slope for p in part], mode="markers+text",
            text=[chart_text(p.panelist) for p in part], textposition="top center",
            name=name, marker={"color": colour,
                               "size": [8 + 40 * (p.share or 0) for p in part]}))
    fig.add_hline(y=1, line_dash="dot", annotation_text="same scale as the panel")
    fig.add_vline(x=1, line_dash="dot")
    fig.update_layout(title=chart_text(title), height=380,
                      xaxis_title="direction: r with the other panelists' means",
                      yaxis_title="scale: slope on the other panelists' means",
                      xaxis_range=[-1.1, 1.1], margin={"l": 10, "r": 10, "t": 40, "b": 10})
    return fig


def ca_figure(ca, *, title: str) -> Any:
    """A symmetric biplot of a correspondence analysis (trials.stats.cata): samples and
    words in principal coordinates on the first two dimensions (one dimension: a line)."""
    import plotly.graph_objects as go

    def xy(coords):
        return [c[0] for c in coords], [c[1] if len(c) > 1 else 0.0 for c in coords]

    sx, sy = xy(ca.sample_coords)
    wx, wy = xy(ca.word_coords)
    fig = go.Figure([
        go.Scatter(x=sx, y=sy, mode="markers+text", name="samples",
                   text=[chart_text(n) for n in ca.samples], textposition="top center",
                   marker={"size": 12, "symbol": "square"}),
        go.Scatter(x=wx, y=wy, mode="markers+text", name="words",
                   text=[chart_text(n) for n in ca.words], textposition="bottom center",
                   marker={"size": 8}),
    ])
    share = [f"{100 * x:.1f} %" for x in ca.shares] + ["0 %"]
    fig.update_layout(title=chart_text(title), height=460,
                      xaxis_title=f"dimension 1 ({share[0]})",
                      yaxis_title=f"dimension 2 ({share[1]})",
                      margin={"l": 10, "r": 10, "t": 40, "b": 10})
    return fig
