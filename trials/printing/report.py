"""A trial's report: one self-contained HTML file, and a short printable PDF.

:func:`report_html` writes everything a panel leader files with a decision: objective,
method and risks, the plan and the panel (counts only: no personal data), results
tables and charts, the batches' measured variables by sample, the decision with its
rationale, a tidy data appendix and the usual food-safety caution.

The HTML works offline: styles are inline, the plotly.js bundle is embedded once
(``plotly.io.to_html(..., include_plotlyjs=True)`` for the first chart, ``False`` for
the rest), and no tag loads anything from the network. Every text that comes from a
user (names, objectives, comments) is HTML-escaped.

:func:`report_pdf` prints the summary (objective, method, risks, decision, main
results, caution) with reportlab and the embedded fonts of :mod:`trials.printing.layout`.
"""

from __future__ import annotations

import datetime as dt
import html
import io
from collections import Counter
from collections.abc import Iterable, Sequence
from typing import Any

import pandas as pd

from trials.analysis import TrialAnalysis, decode_responses
from trials.decision import Decision, Verdict, decide, fmt, fmt_p, fmt_risk
from trials.methods import Scoring, get_method
from trials.model import Answer, AttributeKind, Batch, PlanEntry, Trial
from trials.printing.report_methods import (
    cata_results_html,
    cata_rows,
    signal_results_html,
    signal_rows,
)

CAUTION = (
    "Samples are food served to people. Before any tasting: declare every sample's "
    "allergens and check them against each panelist's declared allergens and "
    "restrictions; obtain informed consent; prepare, hold and serve the samples "
    "following your local food code and licensed practice. This report does not "
    "replace that code or a food-safety professional's advice."
)

_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",Arial,sans-serif;
 margin:0;color:#1d2327;background:#fafaf7;line-height:1.45}
main{max-width:1050px;margin:0 auto;padding:1.5rem 1.5rem 3rem}
h1{font-size:1.7rem;margin:.2rem 0 .3rem}h2{font-size:1.25rem;margin:2rem 0 .6rem;
 border-bottom:2px solid #d6d3c4;padding-bottom:.2rem}h3{font-size:1.05rem;margin:1.2rem 0 .4rem}
.sub{color:#5b6166;margin:0 0 1rem}
table{border-collapse:collapse;margin:.4rem 0 1rem;font-size:.92rem;background:#fff}
th,td{border:1px solid #d6d3c4;padding:.28rem .55rem;text-align:left;vertical-align:top}
th{background:#efede4;font-weight:600}td.num{text-align:right;font-variant-numeric:tabular-nums}
.decision{background:#fff;border-left:6px solid #2f6f4f;padding:.8rem 1rem;margin:.6rem 0}
.decision.neutral{border-left-color:#8a6d1d}.decision.none{border-left-color:#8a8f94}
.decision .head{font-size:1.08rem;font-weight:600;margin:0 0 .5rem}
.limits{color:#3f4549}.caution{background:#fff6e0;border:1px solid #e8cf8a;padding:.7rem 1rem}
.note{color:#5b6166;font-size:.9rem}.kv th{width:19rem}
.appendix{max-height:32rem;overflow:auto;border:1px solid #d6d3c4}
.appendix table{margin:0;font-size:.82rem}
.problems li{color:#7a2e1d}
@media print{.appendix{max-height:none;overflow:visible}body{background:#fff}}
"""


def e(value: Any) -> str:
    """HTML-escaped text of any value (quotes too); an en dash for None."""
    if value is None:
        return "\u2013"
    return html.escape(str(value), quote=True)


def pt(value: Any) -> str:
    """User text for a plotly label: plotly reads a subset of HTML in labels, and the
    figure's JSON sits inside a script element, so ``<``, ``>`` and ``&`` are escaped
    (plotly shows the entities as the characters)."""
    return html.escape(str(value), quote=False)


# --------------------------------------------------------------------------- charts


class _Charts:
    """Plotly figures as HTML fragments; the plotly.js bundle goes in the first only."""

    def __init__(self) -> None:
        self.count = 0

    def html(self, fig) -> str:
        import plotly.io as pio

        fig.update_layout(template="plotly_white", margin=dict(l=60, r=20, t=50, b=50),
                          font=dict(size=13), height=fig.layout.height or 360)
        first = self.count == 0
        self.count += 1
        return pio.to_html(fig, include_plotlyjs=True if first else False, full_html=False,
                           config={"displaylogo": False, "responsive": True,
                                   "modeBarButtonsToRemove": ["sendDataToCloud"]},
                           div_id=f"chart-{self.count}")


def _proportion_chart(a: TrialAnalysis) -> Any:
    import plotly.graph_objects as go
    from scipy import stats as sps

    d = a.choice.difference
    spec = get_method(a.method)
    ci = sps.binomtest(d.correct, d.n, spec.guess).proportion_ci(d.level, method="exact")
    label = "correct" if spec.sides == 1 else "chose the more-chosen sample"
    fig = go.Figure(go.Bar(
        x=[f"{d.correct} of {d.n} {label}"], y=[d.pc], width=[0.35], marker_color="#2f6f4f",
        name="observed",
        error_y=dict(type="data", symmetric=False, array=[ci.high - d.pc],
                     arrayminus=[d.pc - ci.low], thickness=2, width=10),
        hovertemplate="%{y:.3f}<extra></extra>"))
    fig.add_hline(y=spec.guess, line_dash="dot", line_color="#5b6166",
                  annotation_text=f"chance {spec.guess:.2f}", annotation_position="bottom left")
    if d.critical is not None:
        fig.add_hline(y=d.critical / d.n, line_dash="dash", line_color="#b04a2f",
                      annotation_text=f"critical {d.critical} of {d.n} "
                                      f"({d.critical / d.n:.2f})",
                      annotation_position="top left")
    fig.update_layout(title=f"Observed proportion with {d.level * 100:g} % Clopper-Pearson "
                            f"interval, chance and critical proportion (alpha {fmt_risk(d.alpha)})",
                      yaxis=dict(range=[0, 1], title="proportion"), showlegend=False,
                      height=380)
    return fig


def _preference_chart(a: TrialAnalysis) -> Any:
    import plotly.graph_objects as go

    c = a.choice.counts
    names = list(c.counts) + (["no preference"] if c.no_preference else [])
    values = list(c.counts.values()) + ([c.no_preference] if c.no_preference else [])
    fig = go.Figure(go.Bar(x=[pt(n) for n in names], y=values, marker_color="#2f6f4f", text=values,
                           textposition="outside"))
    fig.update_layout(title="Choices per sample", yaxis_title="panelists", height=340)
    return fig


def _means_chart(at) -> Any:
    import plotly.graph_objects as go

    r = at.anova
    order = sorted(r.samples, key=lambda s: -r.means[s])
    means = [r.means[s] for s in order]
    lo = [r.means[s] - r.ci[s][0] for s in order]
    hi = [r.ci[s][1] - r.means[s] for s in order]
    fig = go.Figure(go.Scatter(
        x=[pt(s) for s in order], y=means, mode="markers", marker=dict(size=13, color="#3d6f8f"),
        error_y=dict(type="data", symmetric=False, array=hi, arrayminus=lo, thickness=2,
                     width=8),
        hovertemplate="%{x}: %{y:.2f}<extra></extra>"))
    for s in order:
        fig.add_annotation(x=pt(s), y=r.ci[s][1], text=f"<b>{html.escape(r.groups.get(s, ''))}</b>",
                           showarrow=False, yshift=14, font=dict(size=14))
    fig.update_layout(
        title=f"{pt(at.attribute)}: means with {r.level * 100:g} % intervals; samples sharing a "
              f"letter do not differ (Tukey, alpha {fmt_risk(r.alpha)})",
        yaxis=dict(range=[at.low - 0.3, at.high + 0.3], title=f"score ({at.low} to {at.high})",
                   dtick=1), xaxis=dict(type="category"), showlegend=False, height=360)
    return fig


def _ranks_chart(a: TrialAnalysis) -> Any:
    import plotly.graph_objects as go

    r = a.ranking.result
    order = sorted(r.rank_sums, key=lambda s: r.rank_sums[s])
    fig = go.Figure(go.Bar(x=[pt(s) for s in order], y=[r.rank_sums[s] for s in order],
                           marker_color="#3d6f8f",
                           text=[r.groups.get(s, "") for s in order], textposition="outside"))
    fig.update_layout(title=f"Rank sums (rank 1 = most); least significant difference "
                            f"{r.lsd:.1f}", yaxis_title="rank sum", height=340)
    return fig


def _relation_chart(rel) -> Any:
    import plotly.graph_objects as go

    g = rel.regression
    fig = go.Figure(go.Scatter(x=list(rel.x), y=list(rel.y), mode="markers+text",
                               text=[pt(s) for s in rel.samples], textposition="top center",
                               marker=dict(size=11, color="#3d6f8f"), name="samples"))
    if g.slope is not None:
        xs = [min(rel.x), max(rel.x)]
        fig.add_trace(go.Scatter(x=xs, y=[g.intercept + g.slope * x for x in xs],
                                 mode="lines", line=dict(dash="dash", color="#8a8f94"),
                                 name="least-squares line"))
    unit = f" ({pt(rel.unit)})" if rel.unit else ""
    span = (max(rel.y) - min(rel.y)) or 1.0
    fig.update_yaxes(range=[min(rel.y) - 0.2 * span, max(rel.y) + 0.25 * span])
    xspan = (max(rel.x) - min(rel.x)) or 1.0
    fig.update_xaxes(range=[min(rel.x) - 0.1 * xspan, max(rel.x) + 0.1 * xspan])
    fig.update_layout(title=f"{pt(rel.outcome)} against {pt(rel.predictor)}: "
                            f"a descriptive trend over {len(rel.samples)} samples",
                      xaxis_title=f"{pt(rel.predictor)}{unit}",
                      yaxis_title=f"mean {pt(rel.outcome)}", showlegend=False, height=340)
    return fig


# --------------------------------------------------------------------------- tables


def _table(header: Sequence[str], rows: Iterable[Sequence[Any]], *, numeric: Sequence[int] = (),
           cls: str = "") -> str:
    head = "".join(f"<th>{e(h)}</th>" for h in header)
    body = []
    for row in rows:
        cells = []
        for i, v in enumerate(row):
            klass = ' class="num"' if i in numeric else ""
            cells.append(f"<td{klass}>{e(v)}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    c = f' class="{cls}"' if cls else ""
    return f"<table{c}><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def _kv(rows: Iterable[tuple[str, Any]]) -> str:
    body = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in rows)
    return f'<table class="kv"><tbody>{body}</tbody></table>'


def _g(x: Any, digits: int = 3) -> str:
    if x is None:
        return "\u2013"
    if isinstance(x, float):
        return f"{x:.{digits}g}" if abs(x) < 1e-3 and x != 0 else f"{x:.{digits}f}"
    return str(x)


# --------------------------------------------------------------------------- sections


def _risks(study: Trial) -> list[tuple[str, Any]]:
    rows = [("alpha (risk of a false difference)", fmt_risk(study.alpha)),
            ("beta (risk of a missed difference, or of a false similarity)", fmt_risk(study.beta))]
    if study.pd is not None:
        rows.append(("pd (proportion of discriminators that matters)", fmt(study.pd)))
    if study.delta is not None:
        rows.append(("smallest difference of means that matters", fmt(study.delta)))
    if study.aim:
        rows.append(("aim", study.aim))
    if study.target_sample:
        rows.append(("target sample (expected to have more of the attribute)",
                     study.target_sample))
    return rows


def _plan_section(study: Trial, plan: Sequence[PlanEntry], spec) -> str:
    if not plan:
        return "<p>No serving plan has been drawn yet.</p>"
    sessions = list(dict.fromkeys(e.session for e in plan))
    panelists = {e.panelist_code for e in plan}
    cups = Counter(e.sample_name for e in plan)
    out = [_kv([("sessions", ", ".join(sessions)), ("panelists planned", len(panelists)),
                ("cups served", len(plan))])]
    out.append(_table(["sample", "cups in the plan"], [(s, n) for s, n in cups.items()],
                      numeric=(1,)))
    if spec.served_in_sets:
        sets: dict[tuple[str, str, int], list[PlanEntry]] = {}
        for p in plan:
            sets.setdefault((p.session, p.panelist_code, p.set_index), []).append(p)
        patterns = Counter("".join(c.role or "?" for c in sorted(v, key=lambda c: c.position))
                           for v in sets.values())
        out.append("<h3>Set patterns (serving order; R = reference)</h3>")
        out.append(_table(["pattern", "sets"], sorted(patterns.items()), numeric=(1,)))
    else:
        first = Counter(e.sample_name for e in plan if e.position == 1)
        out.append("<h3>Samples served first</h3>")
        out.append(_table(["sample", "panelists served it first"], first.items(), numeric=(1,)))
    return "".join(out)


def _samples_section(study: Trial) -> str:
    if not study.samples:
        return "<p>No samples listed.</p>"
    rows = [(s.name, "yes" if s.is_control else "", ", ".join(s.allergens) or "none declared",
             s.description) for s in study.samples]
    return _table(["sample", "control", "allergens", "description"], rows)


def _panel_section(a: TrialAnalysis, responses: Sequence[Answer]) -> str:
    modes = Counter(str(r.mode) for r in responses)
    rows = [("panelists planned", a.panelists_planned),
            ("panelists who answered", a.panelists_answered),
            ("answers analysed", a.answers)]
    rows += [(f"responses entered by {m}", n) for m, n in sorted(modes.items())]
    return (_kv(rows) + '<p class="note">Panelists are known by their codes only; this '
            "report holds no personal data.</p>")


VERDICT_WORDS = {
    Verdict.NO_ANSWERS: "no answers are on file yet",
    Verdict.DIFFERENCE: "the samples differ",
    Verdict.NO_DIFFERENCE: "the test did not show a difference",
    Verdict.SIMILAR: "the samples are similar within the risks planned",
    Verdict.NOT_SIMILAR: "the test did not show the samples similar",
    Verdict.PREFERENCE: "the panel preferred one sample",
    Verdict.NO_PREFERENCE: "the test did not show a preference",
    Verdict.INCOMPLETE: "there are not enough answers for a conclusion",
}


def verdict_words(verdict: str) -> str:
    """A verdict code said in words for a reader of the report."""
    return VERDICT_WORDS.get(verdict, verdict)


def _decision_section(d: Decision, study: Trial) -> str:
    kind = {"difference": "", "similar": "", "preference": ""}.get(d.verdict, "neutral")
    if d.verdict in ("no answers yet", "not enough data"):
        kind = "none"
    parts = [f'<div class="decision {kind}"><p class="head">{e(d.headline)}</p>']
    for line in d.details:
        parts.append(f"<p>{e(line)}</p>")
    if d.limits:
        parts.append('<p class="limits">' + " ".join(e(x) for x in d.limits) + "</p>")
    parts.append(f'<p class="note">Method: {e(d.method)}; source: {e(d.reference)}. '
                 f"In short: {e(verdict_words(d.verdict))}.</p></div>")
    if study.decision or study.rationale:
        parts.append("<h3>Decision recorded by the panel leader</h3>")
        parts.append(_kv([("decision", study.decision), ("rationale", study.rationale)]))
    return "".join(parts)


def _dprime_rows(d: Any) -> list[tuple[str, Any]]:
    """The d' rows of the difference table; one line saying why where the method has no
    Thurstonian model (two-out-of-five)."""
    if d.dprime is None or d.dprime_ci is None:
        return [("d'", "none: no Thurstonian model for this method; pd is the estimate")]
    return [("d'", _g(d.dprime)),
            (f"d' {d.level * 100:g} % interval", f"{_g(d.dprime_ci[0])} to {_g(d.dprime_ci[1])}")]


def _forced_choice_results(a: TrialAnalysis, charts: _Charts) -> str:
    fc = a.choice
    d = fc.difference
    out = []
    if d is None:
        return f"<p>{e(fc.note or 'No result.')}</p>"
    rows = [("answers (n)", d.n), ("correct" if d.sides == 1 else "more-chosen sample", d.correct),
            ("critical count at alpha", d.critical), ("p-value (exact binomial)", _g(d.p_value)),
            ("significant at alpha " + fmt_risk(d.alpha), "yes" if d.significant else "no"),
            ("proportion correct pc", _g(d.pc)), ("proportion of discriminators pd", _g(d.pd)),
            (f"pd {d.level * 100:g} % interval", f"{_g(d.pd_ci[0])} to {_g(d.pd_ci[1])}"),
            *_dprime_rows(d),
            ("interval method", d.ci_method)]
    if d.note:
        rows.append(("note", d.note))
    out.append("<h3>Difference test</h3>" + _kv(rows))
    counted = get_method(a.method).scoring is Scoring.PREFERENCE_COUNT
    if fc.counts.preferred or counted:
        out.append(_table(["sample", "chosen"], fc.counts.counts.items(), numeric=(1,)))
        out.append(f"<p>'No preference' answers: {fc.counts.no_preference}"
                   + (f" ({e(fc.preference.note)})" if fc.preference is not None else "")
                   + ".</p>")
    if fc.similarity is not None:
        s = fc.similarity
        out.append("<h3>Similarity test</h3>" + _kv([
            ("largest pd that does not matter", _g(s.pd)), ("beta", fmt_risk(s.beta)),
            ("most correct answers allowed", s.max_correct),
            (f"upper {(1 - s.beta) * 100:g} % limit of pd", _g(s.pd_upper)),
            ("similar", "yes" if s.similar else "no")] + ([("note", s.note)] if s.note else [])))
    if counted:
        out.append(charts.html(_preference_chart(a)))
    out.append(charts.html(_proportion_chart(a)))
    return "".join(out)


def _rating_results(a: TrialAnalysis, charts: _Charts) -> str:
    out = []
    for at in a.attributes:
        out.append(f"<h3>{e(at.attribute)} ({e(AttributeKind(at.kind).label)}, {at.low} to "
                   f"{at.high})</h3>")
        r = at.anova
        if r is None:
            out.append(f"<p>{e(at.note or 'Not analysed.')}</p>")
        else:
            out.append(_table(["term", "df", "SS", "MS", "F", "p"],
                              [(x.term, f"{x.df:g}", _g(x.ss), _g(x.ms), _g(x.F), _g(x.p))
                               for x in r.anova], numeric=(1, 2, 3, 4, 5)))
            out.append(f'<p class="note">{e(r.method)}</p>')
            order = sorted(r.samples, key=lambda s: -r.means[s])
            out.append(_table(
                ["sample", "mean", "n", f"{r.level * 100:g} % interval", "letters"],
                [(s, _g(r.means[s]), r.n[s], f"{_g(r.ci[s][0])} to {_g(r.ci[s][1])}",
                  r.groups.get(s, "")) for s in order], numeric=(1, 2)))
            out.append(charts.html(_means_chart(at)))
            if at.note:
                out.append(f'<p class="note">{e(at.note)}</p>')
        if at.penalty is not None:
            rows = [(x.sample, x.group, x.n, _g(x.share), _g(x.mean_liking), _g(x.drop),
                     _g(x.penalty), _g(x.p_value), "yes" if x.flagged else "")
                    for x in at.penalty.rows]
            out.append("<p>Penalty analysis against liking:</p>")
            out.append(_table(["sample", "group", "n", "share", "mean liking", "drop",
                               "weighted penalty", "p (Welch)", "flagged"], rows,
                              numeric=(2, 3, 4, 5, 6, 7)))
            out.append(f'<p class="note">{e(at.penalty.method)}</p>')
    return "".join(out)


def _ranking_results(a: TrialAnalysis, charts: _Charts) -> str:
    rk = a.ranking
    if rk is None or rk.result is None:
        return f"<p>{e(rk.note if rk else 'No result.')}</p>"
    r = rk.result
    out = [_kv([("test", r.reference()), ("method", r.method),
                (f"{r.name()} chi-square", _g(r.statistic)),
                ("df", r.df), ("p-value", _g(r.p_value)),
                (f"{r.name()} F", f"{_g(r.f_statistic)} on {r.f_df[0]:g} and {r.f_df[1]:g} df"),
                ("F p-value", _g(r.f_p_value)), ("form used for the decision", r.form),
                ("panelists", r.panelists),
                ("least significant difference of rank sums", _g(r.lsd)),
                ("LSD method", r.lsd_method), ("pairwise comparisons", r.comparisons)])]
    order = sorted(r.rank_sums, key=lambda s: r.rank_sums[s])
    out.append(_table(["sample", "rank sum", "mean rank", "letters"],
                      [(s, _g(r.rank_sums[s]), _g(r.mean_ranks.get(s)), r.groups.get(s, ""))
                       for s in order], numeric=(1, 2)))
    out.append(charts.html(_ranks_chart(a)))
    return "".join(out)


def _measures_section(a: TrialAnalysis, batches: Sequence[Batch], charts: _Charts) -> str:
    m = a.measures
    out = []
    if batches:
        rows = []
        for b in batches:
            settings = "; ".join(f"{s.name} {s.value} {s.unit}".strip() for s in b.settings)
            measures = "; ".join(f"{s.name} {s.value} {s.unit}".strip() for s in b.measures)
            rows.append((b.sample_name, b.label, b.prepared_on, settings, measures,
                         b.safety_signed_by or "not signed off"))
        out.append(_table(["sample", "batch", "prepared on", "process settings",
                           "measured", "food safety sign-off"], rows))
    if m.empty:
        out.append("<p>No numeric measured variables or settings recorded.</p>")
        return "".join(out)
    out.append(_table(["variable", "kind", "unit", "sample", "n", "mean", "sd"],
                      [(s.variable, s.kind, s.unit, s.sample, s.n, _g(s.mean), _g(s.sd))
                       for s in m.summaries], numeric=(4, 5, 6)))
    out.append("<h3>Do the samples differ? (one-way ANOVA across batches)</h3>")
    out.append(_table(["variable", "F", "df", "p", "note"],
                      [(x.variable, _g(x.statistic), f"{x.df_between}, {x.df_within}",
                        _g(x.p_value), x.note) for x in m.anovas], numeric=(1, 3)))
    rels = [rel for at in a.attributes for rel in at.relations]
    if rels:
        out.append("<h3>Sensory means against measured variables and settings</h3>")
        out.append(_table(["outcome", "predictor", "samples", "r", "p", "slope", "intercept",
                           "r\u00b2"],
                          [(r.outcome, r.predictor, len(r.samples), _g(r.correlation.r),
                            _g(r.correlation.p_value), _g(r.regression.slope),
                            _g(r.regression.intercept), _g(r.regression.r2)) for r in rels],
                          numeric=(2, 3, 4, 5, 6, 7)))
        out.append('<p class="note">One point per sample: with so few points this is a '
                   "descriptive trend over the samples tried, not proof that a variable "
                   "causes the difference (Pearson correlation; least-squares line).</p>")
        for rel in rels[:4]:
            out.append(charts.html(_relation_chart(rel)))
    return "".join(out)


def _appendix(plan: Sequence[PlanEntry], responses: Sequence[Answer]) -> str:
    if not responses:
        return "<p>No answers yet.</p>"
    frame = decode_responses(plan, responses)
    cols = ["session", "panelist", "position", "code", "sample", "role", "attribute", "value",
            "comment", "mode"]
    rows = []
    for rec in frame[cols].itertuples(index=False):
        rows.append(["" if (v is None or (isinstance(v, float) and pd.isna(v))) else
                     (int(v) if isinstance(v, float) and float(v).is_integer() else v)
                     for v in rec])
    return ('<div class="appendix">' + _table(cols, rows, numeric=(2,)) + "</div>"
            '<p class="note">One row per answer (a tetrad choice: one row per chosen cup); '
            "the sample column is the decoding key.</p>")


# --------------------------------------------------------------------------- entry points



def _profile_scale(study: Trial, profile: Any) -> dict[str, float]:
    scales = [(a.low, a.high) for a in study.attributes if a.name in profile.means.attributes]
    return {"low": min((x[0] for x in scales), default=0),
            "high": max((x[1] for x in scales), default=10)}


def _prepared(study: Trial, analysis: TrialAnalysis,
              decision_text: Decision | str | None) -> tuple[TrialAnalysis, Decision]:
    """The analysis and the decision a report shows: the decision given, or made from
    the analysis (a plain text decision is wrapped with the method's published source).
    The report draws; it never analyses (the caller made ``analysis`` once)."""
    if decision_text is None:
        return analysis, decide(analysis, study=study)
    if isinstance(decision_text, str):
        return analysis, Decision("", decision_text, (), (), study.method,
                                  get_method(study.method).reference)
    return analysis, decision_text

def report_html(study: Trial, analysis: TrialAnalysis, *,
                plan: Sequence[PlanEntry] = (), responses: Sequence[Answer] = (),
                batches: Sequence[Batch] = (), decision_text: Decision | str | None = None,
                generated_on: dt.date | None = None, profile: Any = None,
                experiment: Any = None) -> str:
    """The trial's report as one self-contained HTML document.

    Parameters
    ----------
    study : trials.model.Trial
    analysis : trials.analysis.TrialAnalysis
        From :func:`trials.analysis.analyse` of the same plan, responses and batches.
    plan, responses, batches : sequences of records
        For the plan summary, the panel counts, the batch table and the appendix.
    decision_text : Decision or str, optional
        The decision to print; by default :func:`trials.decision.decide` of the analysis.
        A plain string is printed as the headline.
    generated_on : date, optional
        Printed in the header (default: today).
    profile : trials.stats.profile.DescriptiveProfile, optional
        A rating trial's descriptive profile (three or more intensity attributes),
        printed after the attributes (:mod:`trials.printing.profile`).
    experiment : dict, optional
        For the trial of a recipe experiment: the keyword arguments of
        :func:`trials.printing.experiment_report.experiment_html` (its analysis, label,
        aliases and contour grids), made by the service.

    Returns
    -------
    str
        A complete HTML document (UTF-8), viewable offline.
    """
    plan, responses, batches = list(plan), list(responses), list(batches)
    analysis, decision = _prepared(study, analysis, decision_text)
    spec = get_method(study.method)
    charts = _Charts()
    today = generated_on or dt.date.today()
    sub = " \u00b7 ".join(x for x in (
        f"product: {study.product}" if study.product else "",
        f"status: {study.status}", f"report of {today.isoformat()}") if x)
    body = [f"<h1>{e(study.name)}</h1>", f'<p class="sub">{e(sub)}</p>']
    if not analysis.has_answers:
        body.append('<div class="decision none"><p class="head">No answers yet: this '
                    "report shows the plan only.</p></div>")
    body.append("<h2>Objective</h2>")
    body.append(f"<p>{e(study.objective) if study.objective else 'No objective stated.'}</p>")
    body.append("<h2>Method and risks</h2>")
    body.append(_kv([("method", spec.label), ("published source", spec.reference),
                     ("question asked", spec.question)] + _risks(study)))
    body.append("<h2>Decision</h2>")
    body.append(_decision_section(decision, study))
    body.append("<h2>Samples</h2>" + _samples_section(study))
    body.append("<h2>Plan</h2>" + _plan_section(study, plan, spec))
    body.append("<h2>Panel</h2>" + _panel_section(analysis, responses))
    body.append("<h2>Results</h2>")
    if not analysis.has_answers:
        body.append("<p>No answers yet.</p>")
    elif analysis.choice is not None:
        body.append(_forced_choice_results(analysis, charts))
    elif analysis.signal is not None:
        body.append(signal_results_html(analysis))
    elif analysis.cata is not None:
        body.append(cata_results_html(analysis))
    elif analysis.attributes:
        body.append(_rating_results(analysis, charts))
        if profile is not None:
            from trials.printing.profile import profile_html

            body.append(profile_html(profile, charts, **_profile_scale(study, profile)))
    else:
        body.append(_ranking_results(analysis, charts))
    if analysis.problems:
        body.append("<h3>Answers left out</h3><ul class=\"problems\">"
                    + "".join(f"<li>{e(p)}</li>" for p in analysis.problems) + "</ul>")
    if experiment is not None:
        from trials.printing.experiment_report import experiment_html

        body.append("<h2>Recipe experiment</h2>"
                    + experiment_html(**experiment, chart_html=charts.html))
    body.append("<h2>Batches and measured variables</h2>")
    body.append(_measures_section(analysis, batches, charts))
    body.append("<h2>Food safety</h2>" + f'<p class="caution">{e(CAUTION)}</p>')
    body.append("<h2>Appendix: the answers</h2>" + _appendix(plan, responses))
    body.append('<p class="note">Made with Kitchen Trials. Every figure above is computed '
                "from the answers in the appendix.</p>")
    title = e(f"{study.name} \u2013 trial report")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            f"<title>{title}</title><style>{_CSS}</style></head><body><main>"
            + "\n".join(body) + "</main></body></html>\n")


def report_pdf(study: Trial, analysis: TrialAnalysis, *,
               plan: Sequence[PlanEntry] = (), responses: Sequence[Answer] = (),
               batches: Sequence[Batch] = (), decision_text: Decision | str | None = None,
               page: str = "A4", profile: Any = None) -> bytes:
    """A printable summary of the report as PDF bytes (reportlab, embedded fonts).

    Objective, method and risks, the decision with its evidence and limits, the result
    tables (counts and estimates; or per attribute the ANOVA, and the means with
    intervals and letters drawn as a chart; or the rank sums), the panel counts and the
    food-safety caution. The data appendix stays in the HTML report.
    """
    from reportlab.lib import colors
    from reportlab.lib.styles import ParagraphStyle
    from reportlab.lib.units import mm
    from reportlab.platypus import Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

    from trials.printing.layout import BOLD, SANS, page_size, printable, register_fonts

    plan, responses, batches = list(plan), list(responses), list(batches)
    analysis, decision = _prepared(study, analysis, decision_text)
    register_fonts()
    spec = get_method(study.method)

    def p(text: Any) -> str:  # reportlab paragraphs take mini-markup: escape
        return html.escape(printable(text), quote=False)

    body = ParagraphStyle("body", fontName=SANS, fontSize=9.5, leading=12.5, spaceAfter=4)
    head = ParagraphStyle("head", parent=body, fontName=BOLD, fontSize=15, leading=19)
    h2 = ParagraphStyle("h2", parent=body, fontName=BOLD, fontSize=11.5, leading=15,
                        spaceBefore=8)
    strong = ParagraphStyle("strong", parent=body, fontName=BOLD)

    def grid(rows, widths):
        t = Table([[Paragraph(p(c), strong if i == 0 else body) for c in row]
                   for i, row in enumerate(rows)], colWidths=[w * mm for w in widths],
                  repeatRows=1)
        t.setStyle(TableStyle([("GRID", (0, 0), (-1, -1), 0.4, colors.grey),
                               ("BACKGROUND", (0, 0), (-1, 0), colors.Color(0.93, 0.93, 0.9)),
                               ("VALIGN", (0, 0), (-1, -1), "TOP")]))
        return t

    def kv(rows):
        t = Table([[Paragraph(p(k), body), Paragraph(p(v), body)] for k, v in rows],
                  colWidths=[60 * mm, 110 * mm])
        t.setStyle(TableStyle([("GRID", (0, 0), (-1, -1), 0.4, colors.grey),
                               ("VALIGN", (0, 0), (-1, -1), "TOP")]))
        return t

    flow = [Paragraph(p(study.name), head),
            Paragraph(p(f"Trial report \u2013 {spec.label}"), body), Spacer(1, 4)]
    flow += [Paragraph("Objective", h2),
             Paragraph(p(study.objective or "No objective stated."), body)]
    flow += [Paragraph("Method and risks", h2),
             kv([("method", spec.label), ("published source", spec.reference)] + _risks(study))]
    flow += [Paragraph("Decision", h2), Paragraph(p(decision.headline), strong)]
    flow += [Paragraph(p(x), body) for x in decision.details]
    flow += [Paragraph(p(" ".join(decision.limits)), body)] if decision.limits else []
    if study.decision or study.rationale:
        flow += [Paragraph("Decision recorded by the panel leader", h2),
                 kv([("decision", study.decision or "\u2014"),
                     ("rationale", study.rationale or "\u2014")])]
    else:
        flow += [Paragraph("Decision recorded by the panel leader", h2),
                 Paragraph(p("None recorded yet (Decision and report screen)."), body)]
    flow += _pdf_results(analysis, p, body, h2, grid)
    if profile is not None and analysis.has_answers:
        from trials.printing.profile import profile_pdf

        flow += profile_pdf(profile, p, body, h2, grid)
    flow += [Paragraph("Panel", h2),
             kv([("panelists planned", analysis.panelists_planned),
                 ("panelists who answered", analysis.panelists_answered),
                 ("answers analysed", analysis.answers)])]
    flow += [Paragraph("Food safety", h2), Paragraph(p(CAUTION), body)]
    buf = io.BytesIO()
    w, h = page_size(page)
    doc = SimpleDocTemplate(buf, pagesize=(w, h), leftMargin=18 * mm, rightMargin=18 * mm,
                            topMargin=16 * mm, bottomMargin=16 * mm,
                            title=printable(f"{study.name} trial report"), author="",
                            creator="Kitchen Trials", invariant=1)
    doc.build(flow)
    return buf.getvalue()


def _pdf_results(analysis: TrialAnalysis, p, body, h2, grid) -> list:
    """The result tables and charts of the PDF summary, by the method's family."""
    from reportlab.platypus import Paragraph, Spacer

    out: list = [Paragraph("Results", h2)]
    if not analysis.has_answers:
        return out + [Paragraph(p(f"No results: {analysis.message}."), body)]
    c = analysis.choice
    if c is not None and c.difference is not None:
        d = c.difference
        rows = [["answers", "correct", "critical", "p-value", "pd (interval)", "d' (interval)"],
                [d.n, d.correct, d.critical if d.critical is not None else "-", fmt_p(d.p_value),
                 f"{fmt(d.pd)} ({fmt(d.pd_ci[0])} to {fmt(d.pd_ci[1])})",
                 "none (no model)" if d.dprime is None or d.dprime_ci is None else
                 f"{fmt(d.dprime)} ({fmt(d.dprime_ci[0])} to {fmt(d.dprime_ci[1])})"]]
        out += [grid(rows, [22, 22, 22, 28, 38, 38]),
                Paragraph(p(f"Intervals: {d.ci_method}."), body)]
        if c.similarity is not None:
            sm = c.similarity
            out.append(Paragraph(p(
                f"Similarity at pd {fmt(sm.pd)} and beta {fmt_risk(sm.beta)}: "
                f"{'similar' if sm.similar else 'not shown similar'} (at most {sm.max_correct} "
                f"correct allowed; upper limit of pd {fmt(sm.pd_upper)})."), body))
    for at in analysis.attributes:
        a = at.anova
        if a is None:
            continue
        out.append(Paragraph(p(f"{at.attribute} ({at.kind}, {at.low} to {at.high})"), body))
        rows = [["term", "df", "SS", "MS", "F", "p"]]
        for r in a.anova:
            rows.append([r.term, fmt(r.df, 0), fmt(r.ss), fmt(r.ms),
                         "" if r.F is None else fmt(r.F), "" if r.p is None else fmt_p(r.p)])
        out.append(grid(rows, [36, 18, 26, 26, 22, 30]))
        out.append(Spacer(1, 4))
        order = sorted(a.samples, key=lambda x: -a.means[x])
        rows = [["sample", "mean", "interval", "n", "letters"]]
        rows += [[x, fmt(a.means[x]), f"{fmt(a.ci[x][0])} to {fmt(a.ci[x][1])}", a.n[x],
                  a.groups[x]] for x in order]
        out.append(grid(rows, [64, 20, 36, 14, 24]))
        out += [Spacer(1, 8), _pdf_means_chart(at.attribute, order, a)]
        out.append(Paragraph(p(f"{a.method}. Tukey HSD {fmt(a.hsd)}; samples sharing a "
                               "letter do not differ."), body))
    if analysis.signal is not None and analysis.signal.result is not None:
        head, rows = signal_rows(analysis)
        res_s = analysis.signal.result
        out += [grid([head, *rows], [60, 30, 30, 20]), Paragraph(p(
            f"Fisher's exact one-sided {fmt_p(res_s.p_value)}; d' {fmt(res_s.dprime.dprime)} "
            f"(standard error {fmt(res_s.dprime.dprime_se)}, {res_s.dprime.model} model)."),
            body)]
    if analysis.cata is not None and analysis.cata.tests:
        head, rows = cata_rows(analysis)
        out += [grid([head, *rows], [40] + [24] * (len(head) - 1)), Paragraph(p(
            "Ticks per word and sample; Cochran's Q per word (Cochran 1950)."), body)]
    r = analysis.ranking
    if r is not None and r.result is not None:
        res = r.result
        rows = [["sample", "rank sum"]] + [[k, fmt(v, 1)] for k, v in res.rank_sums.items()]
        out += [grid(rows, [80, 30]), Paragraph(p(
            f"{res.reference()} chi-square {fmt(res.statistic)} on {res.df} df, "
            f"{fmt_p(res.p_value)}; least significant difference of rank sums "
            f"{fmt(res.lsd)}."), body)]
    return out


def _pdf_means_chart(attribute: str, order: Sequence[str], a: Any):
    """Means with their intervals and letters, one point a sample, as a drawing."""
    from reportlab.graphics.shapes import Drawing, Line, String
    from reportlab.lib import colors

    from trials.printing.layout import SANS, printable

    width, height, left, bottom = 480.0, 150.0, 40.0, 38.0
    lows = [a.ci[x][0] for x in order]
    highs = [a.ci[x][1] for x in order]
    lo, hi = min(lows), max(highs)
    pad = (hi - lo) * 0.15 or 1.0
    lo, hi = lo - pad, hi + pad

    def y(v: float) -> float:
        return bottom + (v - lo) / (hi - lo) * (height - bottom - 12)

    d = Drawing(width, height)
    d.add(Line(left, bottom, left, height - 8, strokeColor=colors.grey))
    for k in range(5):
        v = lo + (hi - lo) * k / 4
        d.add(Line(left - 3, y(v), left, y(v), strokeColor=colors.grey))
        d.add(String(left - 5, y(v) - 3, f"{v:.1f}", fontName=SANS, fontSize=7,
                     textAnchor="end"))
    step = (width - left - 10) / max(len(order), 1)
    for i, x in enumerate(order):
        cx = left + step * (i + 0.5)
        d.add(Line(cx, y(a.ci[x][0]), cx, y(a.ci[x][1]), strokeColor=colors.black))
        for v in a.ci[x]:
            d.add(Line(cx - 4, y(v), cx + 4, y(v), strokeColor=colors.black))
        d.add(Line(cx - 6, y(a.means[x]), cx + 6, y(a.means[x]), strokeColor=colors.darkgreen,
                   strokeWidth=2.5))
        d.add(String(cx + 8, y(a.means[x]) - 3, a.groups[x], fontName=SANS, fontSize=8))
        label = printable(x)
        d.add(String(cx, bottom - 12, label if len(label) <= 22 else label[:21] + "\u2026",
                     fontName=SANS, fontSize=7, textAnchor="middle"))
    d.add(String(left, height - 6, printable(f"{attribute}: means with intervals and letters"),
                 fontName=SANS, fontSize=8))
    return d
