"""The descriptive profile's part of the trial report: the MANOVA, the variance per
component, the loadings, the map with its ellipses, the spider chart and the panelists
who depart from the panel (HTML), and its tables for the PDF summary. It draws a
finished :class:`trials.stats.profile.DescriptiveProfile`; it never analyses."""

from __future__ import annotations

import html
from typing import Any

PALETTE = ("#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#8c564b", "#e377c2",
           "#7f7f7f", "#bcbd22", "#17becf")


def _pt(value: Any) -> str:
    return html.escape(str(value), quote=False)


def _label_places(tips: list[tuple[float, float]], spread: float) -> list[tuple[float, float]]:
    """Label places just past the arrow tips, nudged apart vertically where two would
    print over each other (greedy, in the order of height)."""
    places = [(x * 1.06, y * 1.06) for x, y in tips]
    step = 0.075 * spread
    order = sorted(range(len(places)), key=lambda i: -places[i][1])
    placed: list[int] = []
    for i in order:
        x, y = places[i]
        for j in placed:
            xj, yj = places[j]
            if (x >= 0) == (xj >= 0) and abs(x - xj) < 0.35 * spread and abs(y - yj) < step:
                y = yj - step
        places[i] = (x, y)
        placed.append(i)
    return places


def biplot_figure(pca, *, title: str = "Profile map: samples and attributes on components "
                  "1 and 2") -> Any:
    """Samples (with their bootstrap ellipses) and attribute arrows on components 1-2;
    the arrows (loadings) are scaled to the samples' spread."""
    import plotly.graph_objects as go

    fig = go.Figure()
    spread = max(max(abs(v) for v in pca.scores[s][:2]) for s in pca.samples)
    for el in pca.ellipses:
        spread = max(spread, max(map(abs, el.x)), max(map(abs, el.y)))
    reach = max(max(abs(v) for v in pca.loadings[a][:2]) for a in pca.attributes)
    k = 0.9 * spread / reach if reach > 0 else 1.0
    tips = [(pca.loadings[a][0] * k, pca.loadings[a][1] * k) for a in pca.attributes]
    for (x, y), (lx, ly), a in zip(tips, _label_places(tips, spread), pca.attributes):
        fig.add_annotation(x=x, y=y, ax=0, ay=0, xref="x", yref="y", axref="x", ayref="y",
                           showarrow=True, arrowhead=2, arrowcolor="#888", text="")
        fig.add_trace(go.Scatter(x=[lx], y=[ly], mode="text", text=[_pt(a)],
                                 textposition="middle right" if lx >= 0 else "middle left",
                                 textfont=dict(color="#555", size=11), hoverinfo="skip",
                                 showlegend=False))
    ellipses = {el.sample: el for el in pca.ellipses}
    for i, s in enumerate(pca.samples):
        colour = PALETTE[i % len(PALETTE)]
        if s in ellipses:
            el = ellipses[s]
            fig.add_trace(go.Scatter(x=list(el.x), y=list(el.y), mode="lines", fill="toself",
                                     opacity=0.25, line=dict(color=colour, width=1),
                                     hoverinfo="skip", showlegend=False))
        fig.add_trace(go.Scatter(x=[pca.scores[s][0]], y=[pca.scores[s][1]],
                                 mode="markers+text", text=[_pt(s)], name=_pt(s),
                                 textposition="top center", textfont=dict(color=colour),
                                 marker=dict(size=12, color=colour)))
    fig.update_layout(
        title=_pt(title), height=560,
        xaxis=dict(title=f"component 1 ({pca.explained[0]:.0%} of the variance)",
                   zeroline=True),
        yaxis=dict(title=f"component 2 ({pca.explained[1]:.0%})", zeroline=True,
                   scaleanchor="x", scaleratio=1),
        legend=dict(orientation="h"))
    return fig


def radar_figure(means, *, low: float, high: float,
                 title: str = "Spider chart: mean intensity of each sample") -> Any:
    """The spider chart of the sample means."""
    import plotly.graph_objects as go

    theta = [_pt(a) for a in means.attributes]
    fig = go.Figure()
    for i, s in enumerate(means.samples):
        r = [means.means[s][a] for a in means.attributes]
        fig.add_trace(go.Scatterpolar(r=r + r[:1], theta=theta + theta[:1],
                                      mode="lines+markers", name=_pt(s),
                                      line=dict(color=PALETTE[i % len(PALETTE)])))
    fig.update_layout(title=_pt(title), height=520,
                      polar=dict(radialaxis=dict(range=[low, high])),
                      legend=dict(orientation="h"))
    return fig


def profile_html(profile, charts, *, low: float, high: float) -> str:
    """The report's descriptive-profile section (``charts``: the report's chart maker)."""
    from trials.printing.report import _g, _table, e

    out = ["<h3>Descriptive profile</h3>"]
    out += [f'<p class="note">{e(n)}</p>' for n in profile.notes]
    mv = profile.manova
    if mv is not None:
        out.append(f"<p>MANOVA of the samples over {len(mv.attributes)} attributes, "
                   f"panelists as blocks: the samples "
                   f"{'differ' if mv.significant else 'are not shown to differ'} "
                   f"(Pillai's trace {_g(mv.pillai)}, p {_g(mv.p_value)}; "
                   f"alpha {_g(mv.alpha)}).</p>")
        out.append(_table(["statistic", "value", "num df", "den df", "F", "p"],
                          [(r.statistic, _g(r.value), _g(r.num_df, 1), _g(r.den_df, 1),
                            _g(r.F), _g(r.p_value)) for r in mv.tests],
                          numeric=(1, 2, 3, 4, 5)))
        out.append(f'<p class="note">{e(mv.method)}; error: {e(mv.error_term)}.</p>')
    pca = profile.pca
    if pca is not None:
        out.append(_table(["component", "eigenvalue", "share", "cumulative"],
                          [(f"PC{i + 1}", _g(v), f"{s:.1%}", f"{c:.1%}") for i, (v, s, c)
                           in enumerate(zip(pca.eigenvalues, pca.explained, pca.cumulative))],
                          numeric=(1, 2, 3)))
        out.append(_table(["attribute"] + [f"PC{i + 1}" for i in range(pca.components)],
                          [(a, *(_g(v) for v in pca.loadings[a])) for a in pca.attributes],
                          numeric=tuple(range(1, pca.components + 1))))
        if pca.components >= 2:
            out.append(charts.html(biplot_figure(pca)))
        out.append(f'<p class="note">{e(pca.method)}. Loadings: the correlation of each '
                   f"attribute with the component. Ellipses: {pca.level:.0%}, "
                   f"{pca.n_boot} virtual panels, {e(pca.bootstrap)}.</p>")
        if pca.left_out:
            out.append(f'<p class="note">Left out (no spread across samples): '
                       f"{e(', '.join(pca.left_out))}.</p>")
    out.append(charts.html(radar_figure(profile.means, low=low, high=high)))
    inter = profile.interaction
    if inter is not None:
        flagged = [p for at in inter.attributes for p in at.panelists if p.flags]
        out.append("<p>Panelists who depart from the panel (sample x panelist "
                   "interaction):</p>")
        if flagged:
            out.append(_table(["attribute", "panelist", "r", "slope", "share", "why"],
                              [(p.attribute, p.panelist, _g(p.r), _g(p.slope), _g(p.share),
                                "; ".join(p.flags)) for p in flagged], numeric=(2, 3, 4)))
        else:
            out.append("<p>None.</p>")
        out.append(f'<p class="note">{e(inter.method)}; {e(inter.rule)}.</p>')
    return "".join(out)


def profile_pdf(profile, p, body, h2, grid) -> list:
    """The descriptive profile's tables for the PDF summary."""
    from reportlab.platypus import Paragraph, Spacer

    from trials.decision import fmt, fmt_p

    out: list = [Paragraph(p("Descriptive profile"), h2)]
    mv = profile.manova
    if mv is not None:
        rows = [["statistic", "value", "num df", "den df", "F", "p"]]
        rows += [[r.statistic, fmt(r.value, 4), fmt(r.num_df, 0), fmt(r.den_df, 1), fmt(r.F),
                  fmt_p(r.p_value)] for r in mv.tests]
        out += [grid(rows, [40, 24, 20, 24, 24, 30]),
                Paragraph(p(f"{mv.method}; error: {mv.error_term}."), body), Spacer(1, 4)]
    pca = profile.pca
    if pca is not None:
        rows = [["component", "eigenvalue", "share", "cumulative"]]
        rows += [[f"PC{i + 1}", fmt(v), f"{s:.1%}", f"{c:.1%}"] for i, (v, s, c)
                 in enumerate(zip(pca.eigenvalues, pca.explained, pca.cumulative))]
        out += [grid(rows, [30, 30, 30, 30]), Paragraph(p(pca.method + "."), body)]
    inter = profile.interaction
    if inter is not None:
        flagged = [x for at in inter.attributes for x in at.panelists if x.flags]
        if flagged:
            rows = [["attribute", "panelist", "why"]]
            rows += [[x.attribute, x.panelist, "; ".join(x.flags)] for x in flagged]
            out += [Spacer(1, 4), grid(rows, [44, 22, 104])]
    return out
