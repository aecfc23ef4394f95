"""Results: the decision and the numbers behind it, per method."""

import pandas as pd
import streamlit as st

from trials import service, ui
from trials.decision import fmt, fmt_p, p_text
from trials.errors import TrialsError
from trials.methods import Family, get_method

ui.require_leader()
trial_id = ui.pick_trial()
store = ui.store()
study = service.get_trial(store, trial_id)
spec = get_method(study.method)

st.title(f"Results: {ui.literal(study.name)}")
result, decision = ui.analysis(trial_id)
ui.served_safety(trial_id)
st.caption(f"{spec.label} · {result.panelists_answered} of {result.panelists_planned} panelists "
           f"answered · {result.answers} answers · alpha = {study.alpha:g}")

if not result.has_answers:
    st.info(f"No results: {ui.literal(result.message)}.")
    st.stop()

with st.container(border=True):
    st.markdown(f"#### {ui.literal(decision.headline)}")
    if decision.details:
        with st.expander("The evidence, point by point", expanded=len(decision.details) <= 3):
            for line in decision.details:
                st.markdown(f"- {ui.literal(line)}")
    if decision.limits:
        st.caption(ui.literal(" ".join(decision.limits)))
    st.caption(f"Method: {ui.literal(decision.method)}. Source: {ui.literal(decision.reference)}.")


def _interval(ci) -> str:
    return f"[{ci[0]:.2f}, {ci[1]:.2f}]"


def _p_column(frame: pd.DataFrame, *columns: str) -> pd.DataFrame:
    """p-values as read ("< 0.001", "0.042"), never "0.0000"; empty cells as a dash."""
    def text(v) -> str:
        return "\u2014" if v is None or v != v else p_text(v)

    return ui.no_none(frame.assign(**{c: frame[c].map(text) for c in columns if c in frame}))


# ------------------------------------------------------------------ ratings: against the
# control, just-about-right chart, measured variables against the means (issue 13)


def _control_section(comparison) -> None:
    """Dunnett's comparisons of each sample with the control, blocked error term."""
    if comparison is None:
        return
    st.markdown(f"**Against the control ({ui.literal(comparison.control)})**")
    if comparison.result is None:
        st.caption(f"Not run: {ui.literal(comparison.note)}.")
        return
    res = comparison.result
    table = pd.DataFrame([{
        "sample": c.sample, "difference from the control": c.difference, "se": c.se,
        "t": c.t, "p (adjusted)": c.p_value, "differs": "yes" if c.different else "no",
    } for c in res.comparisons])
    st.dataframe(_p_column(table, "p (adjusted)"), hide_index=True, width="stretch",
                 column_config={c: st.column_config.NumberColumn(format="%.2f")
                                for c in ("difference from the control", "se", "t")})
    st.caption(f"{ui.literal(res.method)}; critical |t| = {res.critical:.2f} on "
               f"{res.df:g} df at alpha = {res.alpha:g}, from the error term the ANOVA tests "
               "samples against (panelists as blocks).")


JAR_COLOURS = {"too little": "#1f77b4", "just right": "#2e7d32", "too much": "#d62728"}


def _jar_chart(penalty) -> None:
    """Shares of the just-about-right groups per sample, and each off group's mean drop
    in liking against its share (the penalty chart)."""
    import plotly.graph_objects as go

    frame = penalty.to_frame()
    if frame.empty:
        return
    frame["who"] = frame["sample"].fillna("all samples").map(ui.chart_text)
    left, right = st.columns(2)
    bars = go.Figure()
    for group, colour in JAR_COLOURS.items():
        part = frame[frame["group"] == group]
        bars.add_trace(go.Bar(y=part["who"], x=part["share"] * 100, name=group,
                              orientation="h", marker_color=colour))
    legend = {"orientation": "h", "y": -0.3, "x": 0}
    bars.update_layout(barmode="stack", title="Answers in each group", height=340,
                       xaxis_title="% of answers", xaxis_range=[0, 100], legend=legend,
                       margin={"l": 10, "r": 10, "t": 40, "b": 10})
    left.plotly_chart(bars, width="stretch")
    off = frame[(frame["group"] != "just right") & frame["drop"].notna()]
    drops = go.Figure()
    for group in ("too little", "too much"):
        part = off[off["group"] == group]
        drops.add_trace(go.Scatter(x=part["share"] * 100, y=part["drop"], mode="markers+text",
                                   text=part["who"], textposition="top center", name=group,
                                   marker={"size": 11, "color": JAR_COLOURS[group]}))
    drops.add_vline(x=penalty.threshold * 100, line_dash="dot",
                    annotation_text=f"{penalty.threshold:.0%} of answers")
    drops.add_hline(y=0, line_color="#9e9e9e")
    spread = [float(v) for v in off["drop"]] + [0.0]
    pad = max(0.5, (max(spread) - min(spread)) * 0.25)
    drops.update_layout(title="Mean drop in liking against share", height=340,
                        xaxis_title="% of answers", yaxis_title="drop in mean liking",
                        yaxis_range=[min(spread) - pad, max(spread) + pad], legend=legend,
                        margin={"l": 10, "r": 10, "t": 40, "b": 10})
    right.plotly_chart(drops, width="stretch")


def _penalty_table(penalty) -> pd.DataFrame:
    """The penalty rows as read: shares in %, two decimals, p-values as text."""
    frame = penalty.to_frame()
    frame["share"] = (frame["share"] * 100).round(0)
    frame = frame.rename(columns={"share": "share (%)", "mean_liking": "mean liking",
                                  "p_value": "p", "drop": "drop in liking"})
    numbers = ["mean liking", "drop in liking", "penalty"]
    return _p_column(frame.assign(**{c: frame[c].astype(float).round(2) for c in numbers}),
                     "p")


def _measure_scatter(relations, attribute: str, key: str) -> None:
    """One measured variable or setting against the samples' mean scores, with its
    least-squares line."""
    import plotly.graph_objects as go

    usable = [r for r in relations if len(r.x) >= 2]
    if not usable:
        return
    names = [f"{r.predictor} ({r.unit})" if r.unit else r.predictor for r in usable]
    pick = st.selectbox("Measured variable or setting", range(len(usable)),
                        format_func=lambda i: names[i], key=key)
    rel = usable[pick]
    fig = go.Figure(go.Scatter(x=list(rel.x), y=list(rel.y), mode="markers+text",
                               text=[ui.chart_text(s) for s in rel.samples],
                               textposition="top center", marker={"size": 12}, name="samples"))
    g = rel.regression
    if g.slope is not None and g.intercept is not None:
        xs = [min(rel.x), max(rel.x)]
        fig.add_trace(go.Scatter(x=xs, y=[g.intercept + g.slope * x for x in xs],
                                 mode="lines", line={"dash": "dot"}, name="least squares"))
    fig.update_layout(title=ui.chart_text(f"{attribute} against {names[pick]}"), height=340,
                      xaxis_title=ui.chart_text(names[pick]), yaxis_title="mean score",
                      margin={"l": 10, "r": 10, "t": 40, "b": 10}, showlegend=False)
    st.plotly_chart(fig, width="stretch")
    r = rel.correlation
    st.caption(f"Pearson r = {fmt(r.r)}, {fmt_p(r.p_value)} over {len(rel.samples)} "
               f"samples; {ui.literal(rel.note)}.")


# ------------------------------------------------------------------ forced choice
if result.choice is not None:
    fc = result.choice
    counts = fc.counts
    diff = fc.difference
    if spec.family == Family.PREFERENCE:
        st.subheader("Choices")
        cols = st.columns(len(counts.counts) + 1)
        for col, (name, k) in zip(cols, counts.counts.items()):
            col.metric(ui.literal(name), k)
        cols[-1].metric("No preference", counts.no_preference)
    else:
        st.subheader("Correct answers")
    if diff is not None:
        c1, c2, c3, c4 = st.columns(4)
        label = "more-chosen count" if spec.family == Family.PREFERENCE else "correct"
        c1.metric(label.capitalize(), f"{diff.correct} of {diff.n}")
        c2.metric("Critical value", "-" if diff.critical is None else diff.critical,
                  help=f"Fewest {label} answers that conclude a difference at alpha = "
                       f"{diff.alpha:g} ({'two' if diff.sides == 2 else 'one'}-sided exact "
                       "binomial; the published critical-value tables give the same counts).")
        c3.metric("p-value", p_text(diff.p_value))
        c4.metric("Significant", "yes" if diff.significant else "no")
        if spec.family == Family.DISCRIMINATION:
            e1, e2, e3 = st.columns(3)
            e1.metric("Proportion correct", f"{diff.pc:.2f}")
            e2.metric("pd (discriminators)", f"{diff.pd:.2f}",
                      help=f"{diff.level:.0%} interval {_interval(diff.pd_ci)}")
            e3.metric("d'", f"{diff.dprime:.2f}",
                      help=f"{diff.level:.0%} interval {_interval(diff.dprime_ci)}")
            st.dataframe(pd.DataFrame([
                {"estimate": "pd", "value": diff.pd, "low": diff.pd_ci[0], "high": diff.pd_ci[1]},
                {"estimate": "d'", "value": diff.dprime, "low": diff.dprime_ci[0],
                 "high": diff.dprime_ci[1]},
            ]), hide_index=True, width="stretch", column_config={
                c: st.column_config.NumberColumn(c, format="%.2f") for c in ("value", "low", "high")
            })
            st.caption(f"Intervals: {diff.ci_method}, {diff.level:.0%}.")
        ui.count_chart(diff.correct, diff.n, diff.critical, guess=diff.guess,
                       label=label)
    if fc.similarity is not None:
        sim = fc.similarity
        st.subheader("Similarity")
        s1, s2, s3 = st.columns(3)
        s1.metric("Similar", "yes" if sim.similar else "no")
        s2.metric("Largest count for similarity", "-" if sim.max_correct is None
                  else sim.max_correct)
        s3.metric(f"Upper limit of pd (1 - beta = {1 - sim.beta:.2f})", f"{sim.pd_upper:.2f}")
    if fc.note:
        st.caption(ui.literal(fc.note))

# ------------------------------------------------------------------ ratings
if result.attributes:
    against = {c.attribute: c for c in service.control_comparisons(study, result)}
    st.subheader("Ratings")
    tabs = st.tabs([ui.literal(a.attribute) for a in result.attributes])
    for tab, at in zip(tabs, result.attributes):
        with tab:
            if at.note:
                st.caption(ui.literal(at.note))
            av = at.anova
            if av is None:
                st.info("Not enough scores for an analysis of variance yet.")
                continue
            ui.means_chart(av.means, av.ci, title=f"{at.attribute}: means with "
                           f"{av.level:.0%} intervals and letters", low=at.low, high=at.high,
                           groups=av.groups)
            c1, c2 = st.columns(2)
            with c1:
                st.markdown("**Analysis of variance**")
                st.dataframe(_p_column(pd.DataFrame([r.to_dict() for r in av.anova]), "p"),
                             hide_index=True,
                             width="stretch", column_config={
                                 "df": st.column_config.NumberColumn(format="%g"),
                                 "ss": st.column_config.NumberColumn(format="%.3f"),
                                 "ms": st.column_config.NumberColumn(format="%.3f"),
                             })
            with c2:
                st.markdown("**Means**")
                st.dataframe(pd.DataFrame([{
                    "sample": s, "mean": av.means[s], "low": av.ci[s][0], "high": av.ci[s][1],
                    "n": av.n[s], "group": av.groups.get(s, ""),
                } for s in av.samples]).sort_values("mean", ascending=False),
                    hide_index=True, width="stretch", column_config={
                        c: st.column_config.NumberColumn(format="%.2f")
                        for c in ("mean", "low", "high")})
            st.caption(f"{av.method}. Tukey HSD = {av.hsd:.3f}; samples sharing a letter do "
                       "not differ at alpha.")
            _control_section(against.get(at.attribute))
            if at.penalty is not None:
                st.markdown("**Just about right: penalty analysis**")
                _jar_chart(at.penalty)
                st.dataframe(_penalty_table(at.penalty), hide_index=True, width="stretch")
                st.caption(at.penalty.method)
            if at.relations:
                with st.expander("Means against the batches' measures", icon=":material/scale:"):
                    _measure_scatter(at.relations, at.attribute, key=f"scatter_{at.attribute}")
                    st.dataframe(_p_column(pd.DataFrame([{
                        "measure": r.predictor, "unit": r.unit, "r": r.correlation.r,
                        "p": r.correlation.p_value, "slope": r.regression.slope,
                    } for r in at.relations]), "p"), hide_index=True, width="stretch")
                    st.caption(ui.literal(at.relations[0].note))

    st.subheader("Panel performance")
    c1, c2 = st.columns([2, 1], vertical_alignment="bottom")
    scored = [a.attribute for a in result.attributes if a.anova is not None]
    which = c1.selectbox("Attribute", scored, key="perf_attribute") if scored else None
    show = c2.toggle("Show panel performance", key="perf_show",
                     help="Per panelist: discrimination, repeatability and agreement.")
    if show and which:
        try:
            perf = ui.panel_performance(trial_id, which)
        except TrialsError as exc:
            st.caption(ui.literal(str(exc)))
        else:
            frame = perf.to_frame()
            ui.panel_chart(frame, title=f"{which}: agreement and repeatability")
            st.dataframe(frame, width="stretch")
            st.caption(perf.rule)

# ------------------------------------------------------------------ ranking
if result.ranking is not None:
    rk = result.ranking
    st.subheader("Ranks")
    if rk.note:
        st.caption(ui.literal(rk.note))
    fr = rk.result
    if fr is not None:
        c1, c2, c3 = st.columns(3)
        c1.metric(f"{fr.test} statistic", f"{fr.statistic:.2f}", help=f"df = {fr.df}")
        c2.metric("p-value", p_text(fr.p_value))
        c3.metric("LSD of rank sums", f"{fr.lsd:.2f}", help=fr.lsd_method)
        st.dataframe(pd.DataFrame([{
            "sample": s, "rank sum": fr.rank_sums[s], "mean rank": fr.mean_ranks[s],
            "group": fr.groups.get(s, ""),
        } for s in fr.rank_sums]).sort_values("rank sum"), hide_index=True, width="stretch")
        st.caption(fr.method)
        st.caption(fr.comparisons)

# ------------------------------------------------------------------ batches and problems
if result.measures.summaries:
    with st.expander("Batch measures by sample", icon=":material/science:"):
        st.dataframe(ui.no_none(result.measures.to_frame()), hide_index=True, width="stretch")
for note in result.measures.notes:
    st.warning(f"Batch values: {ui.literal(note)}. Correct the unit on Samples and batches.",
               icon=":material/straighten:")
if result.problems:
    with st.expander(f"{len(result.problems)} answer(s) left out", icon=":material/info:"):
        for p in result.problems:
            st.markdown(f"- {ui.literal(p)}")
