"""The recipe experiment's part of a trial's HTML report: the design, the runs with
their settings and responses, and for every response its fitted model, lack of fit,
effects with Lenth's margin (two-level designs), stationary point, a contour plot,
and the joint optimum when goals were given. It lays out a finished
:class:`trials.service.experiment_results.ExperimentAnalysis`; it never analyses."""

from __future__ import annotations

import html
from typing import Any

CAUTION_NOTE = ("Every run is food served to people: each run met the local food code and "
                "had its food-safety sign-off before it was tasted.")


def _e(value: Any) -> str:
    return html.escape("" if value is None else str(value))


def _n(x: Any) -> str:
    if x is None:
        return "\u2013"
    if isinstance(x, float):
        if x != x:
            return "\u2013"
        return f"{x:.4g}"
    return str(x)


def _table(header, rows) -> str:
    head = "".join(f"<th>{_e(h)}</th>" for h in header)
    body = "".join("<tr>" + "".join(f"<td>{_e(_n(v))}</td>" for v in row) + "</tr>"
                   for row in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def experiment_html(analysis: Any, *, label: str, aliases: dict[str, tuple[str, ...]],
                    contours: dict[str, tuple[Any, Any, Any, str, str]], chart_html) -> str:
    """The section's HTML. ``contours``: response -> ``(xs, ys, z, x name, y name)``
    grids made by the service; ``chart_html(fig)`` embeds a plotly figure."""
    import plotly.graph_objects as go

    exp = analysis.experiment
    out = [f"<p>{_e(label)}, {len(exp.runs)} runs in random order (seed {_e(exp.seed)})"
           + (f", {exp.center_points} centre points" if exp.center_points else "")
           + (f", {exp.blocks} blocks" if exp.blocks > 1 else "") + ".</p>"]
    out.append(_table(["factor", "unit", "low", "high", "declared safe range"],
                      [(f.name, f.unit, f.low, f.high, f"{f.safe_low:g} .. {f.safe_high:g}")
                       for f in exp.factors]))
    aliased = {k: v for k, v in aliases.items() if v}
    if aliased:
        out.append("<p>Aliases (A, B, ... in the factors' order): "
                   + _e("; ".join(f"{k} = {' = '.join(v)}" for k, v in aliased.items()))
                   + "</p>")
    frame = analysis.frame()
    shown = [c for c in frame.columns if not str(c).startswith("coded_")
             and c not in ("std_order", "sample")]
    out.append("<h3>Runs</h3>" + _table(shown, frame[shown].itertuples(index=False)))
    for r in analysis.responses:
        out.append(f"<h3>{_e(r.response)} ({_e(r.source)})</h3>")
        if r.fit is None:
            out.append(f"<p>Not analysed: {_e(r.note or 'no values')}.</p>")
            continue
        fit = r.fit
        out.append(f"<p>{_e(r.model)} model by least squares, {r.runs} runs, "
                   f"R\u00b2 = {fit.r2:.3f}, adjusted {_n(fit.r2_adj)}.</p>")
        out.append(_table(["term", "estimate", "se", "t", "p"],
                          [(c.term, c.estimate, c.se, c.t, c.p) for c in fit.coefficients]))
        out.append(_table(["source", "df", "SS", "MS", "F", "p"],
                          [(a.source, a.df, a.ss, a.ms, a.F, a.p) for a in fit.anova]))
        if r.effects is not None:
            ef = r.effects
            out.append(f"<p>Effects (error from {_e(ef.se_source)}); Lenth's pseudo standard "
                       f"error {_n(ef.lenth.pse)}, margin of error {_n(ef.lenth.me)}, "
                       f"simultaneous {_n(ef.lenth.sme)} (Lenth 1989).</p>")
            out.append(_table(["effect", "estimate", "se", "p"],
                              [(x.term, x.estimate, x.se, x.p) for x in ef.effects]))
        if fit.canonical is not None and r.stationary:
            can = fit.canonical
            out.append(f"<p>Stationary point: a {_e(can.nature)}, "
                       f"{'inside' if can.inside else 'outside'} the design region, at "
                       + _e(", ".join(f"{k} {v:.4g}" for k, v in r.stationary.items()))
                       + f"; fitted value {can.value:.4g}; eigenvalues "
                       + _e(", ".join(f"{v:.3g}" for v in can.eigenvalues)) + ".</p>")
        if r.response in contours:
            xs, ys, z, xn, yn = contours[r.response]
            fig = go.Figure(go.Contour(x=xs, y=ys, z=z, contours={"showlabels": True},
                                       colorscale="Viridis"))
            fig.update_layout(title=html.escape(f"{r.response}: fitted surface"),
                              xaxis_title=html.escape(xn), yaxis_title=html.escape(yn),
                              height=420)
            out.append(chart_html(fig))
    if analysis.optimum is not None:
        opt = analysis.optimum
        out.append("<h3>Joint optimum (Derringer and Suich desirability)</h3>")
        out.append(_table(["response", "goal", "low", "high", "predicted", "95% low",
                           "95% high"],
                          [(g.response, g.kind, g.low, g.high, opt.predicted[g.response],
                            *opt.interval[g.response]) for g in analysis.goals]))
        out.append(f"<p>Overall desirability {opt.D:.3f}. Suggested confirmation run: "
                   + _e(", ".join(f"{k} {v:g}" for k, v in (analysis.confirmation or {})
                                  .items())) + ".</p>")
    else:
        out.append("<p>No goals stated for a joint optimum (set them on the Recipe "
                   "experiments screen or with <code>trials experiment analyze --goal</code>)."
                   "</p>")
    out.append(f'<p class="caution">{_e(CAUTION_NOTE)}</p>')
    return "\n".join(out)
