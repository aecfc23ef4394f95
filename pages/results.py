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


# ------------------------------------------------------------------ descriptive profile
def _profile_section() -> None:
    """The multivariate view of a rating trial with three or more intensity attributes."""
    prof = ui.profile(trial_id)
    if prof is None:
        return
    st.subheader("Descriptive profile")
    intensity = [a for a in study.attributes if a.name in prof.means.attributes]
    low = min(a.low for a in intensity) if intensity else 0
    high = max(a.high for a in intensity) if intensity else 10
    for note in prof.notes:
        st.caption(ui.literal(note))
    mv = prof.manova
    if mv is not None:
        c1, c2, c3 = st.columns(3)
        c1.metric("Samples differ (MANOVA)", "yes" if mv.significant else "no",
                  help=f"Pillai's trace, alpha = {mv.alpha:g}; error: {mv.error_term}.")
        c2.metric("Pillai's trace", f"{mv.pillai:.3f}", help=f"p = {p_text(mv.p_value)}")
        c3.metric("Wilks' lambda", f"{mv.wilks:.4f}")
    map_tab, radar_tab, table_tab = st.tabs(["Map (PCA biplot)", "Spider chart", "Tables"])
    pca = prof.pca
    with map_tab:
        if pca is None or pca.components < 2:
            st.info("Too few samples or attributes for a map.")
        else:
            ui.biplot_chart(pca, title="Samples and attributes on the first two components")
            st.caption(
                f"Components 1 and 2 hold {pca.cumulative[1]:.0%} of the variance of the "
                f"sample means ({pca.method}). Arrows: each attribute's correlation with the "
                f"components, scaled to the map. Shaded: {pca.level:.0%} ellipses from "
                f"{pca.n_boot} virtual panels ({pca.bootstrap}). Samples whose ellipses do "
                "not overlap are told apart on this map. On the correlation matrix every "
                "attribute weighs the same, also one on which the samples barely differ: "
                "read its arrow with its analysis of variance above.")
            if pca.left_out:
                st.caption("Left out (the same mean for every sample): "
                           + ui.literal(", ".join(pca.left_out)))
    with radar_tab:
        ui.radar_chart(prof.means, low=low, high=high, title="Mean intensity of each sample")
        st.caption(f"Means over {prof.means.panelists} panelists (each panelist's "
                   "replicates averaged first).")
    with table_tab:
        st.markdown("**Means**")
        st.dataframe(prof.means.to_frame(), width="stretch",
                     column_config={a: st.column_config.NumberColumn(format="%.2f")
                                    for a in prof.means.attributes})
        if pca is not None:
            c1, c2 = st.columns(2)
            c1.markdown("**Variance per component**")
            c1.dataframe(pca.variance_frame(), hide_index=True, width="stretch", column_config={
                "eigenvalue": st.column_config.NumberColumn(format="%.3f"),
                "share": st.column_config.NumberColumn(format="percent"),
                "cumulative": st.column_config.NumberColumn(format="percent")})
            c2.markdown("**Loadings** (correlation with the component)")
            c2.dataframe(pca.loadings_frame().round(3), width="stretch")
        if mv is not None:
            st.markdown("**MANOVA of the samples, panelists as blocks**")
            st.dataframe(mv.to_frame(), width="stretch", column_config={
                "value": st.column_config.NumberColumn(format="%.4f"),
                "num_df": st.column_config.NumberColumn(format="%g"),
                "den_df": st.column_config.NumberColumn(format="%.1f"),
                "F": st.column_config.NumberColumn(format="%.2f"),
                "p_value": st.column_config.NumberColumn(format="%.2e")})
            st.caption(mv.method)


def _departures_section(attribute: str) -> None:
    """Sample x panelist interaction of one attribute: who departs, in direction or scale."""
    try:
        at, rule = ui.departures(trial_id, attribute)
    except TrialsError as exc:
        st.caption(ui.literal(str(exc)))
        return
    st.markdown("**Sample x panelist interaction**")
    if at.p_value is not None:
        st.caption(f"Interaction F = {at.F:.2f}, p = {p_text(at.p_value)} "
                   f"({'significant' if at.significant else 'not significant'} at "
                   f"alpha = {study.alpha:g}).")
    else:
        st.caption("No replicates: the interaction cannot be tested; the departures are "
                   "shown as they are.")
    ui.departure_chart(at, title=f"{attribute}: direction and scale of each panelist")
    st.dataframe(pd.DataFrame([{**p.to_dict(), "flags": "; ".join(p.flags)}
                               for p in at.panelists]).drop(columns=["attribute"]),
                 hide_index=True, width="stretch",
                 column_config={c: st.column_config.NumberColumn(format="%.2f")
                                for c in ("r", "slope", "share")})
    st.caption(rule)
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
            rows = [{"estimate": "pd", "value": diff.pd, "low": diff.pd_ci[0],
                     "high": diff.pd_ci[1]}]
            if diff.dprime is not None and diff.dprime_ci is not None:
                e3.metric("d'", f"{diff.dprime:.2f}",
                          help=f"{diff.level:.0%} interval {_interval(diff.dprime_ci)}")
                rows.append({"estimate": "d'", "value": diff.dprime, "low": diff.dprime_ci[0],
                             "high": diff.dprime_ci[1]})
            else:
                e3.metric("d'", "none", help="No Thurstonian model for this method: the "
                          "proportion of discriminators pd is the estimate.")
            st.dataframe(pd.DataFrame(rows), hide_index=True, width="stretch", column_config={
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

    _profile_section()

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
            _departures_section(which)

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

# ------------------------------------------------------------------ signal detection


def _signal_section(sg) -> None:
    """A-not-A and same-different: the response table, Fisher's test and d'."""
    st.subheader("Response table")
    st.dataframe(pd.DataFrame([
        {"sets served": sg.signal_sets, f"answered {sg.responses[1]}": sg.hits,
         f"answered {sg.responses[0]}": sg.n_signal - sg.hits, "sets": sg.n_signal},
        {"sets served": sg.noise_sets, f"answered {sg.responses[1]}": sg.false_alarms,
         f"answered {sg.responses[0]}": sg.n_noise - sg.false_alarms, "sets": sg.n_noise},
    ]), hide_index=True, width="stretch")
    if sg.note:
        st.caption(ui.literal(sg.note))
    r = sg.result
    if r is None:
        return
    dp = r.dprime
    c1, c2, c3, c4 = st.columns(4)
    c1.metric("p-value", p_text(r.p_value), help="Fisher's exact test, one-sided")
    c2.metric("Significant", "yes" if r.significant else "no")
    c3.metric("d'", f"{dp.dprime:.2f}", help=f"{dp.model} model; standard error "
              + ("-" if dp.dprime_se is None else f"{dp.dprime_se:.2f}"))
    c4.metric("Hit / false-alarm rate", f"{dp.hit_rate:.2f} / {dp.false_alarm_rate:.2f}")
    if r.test.chi2 is not None:
        st.caption(f"Pearson chi-square {r.test.chi2:.2f} on 1 df, two-sided p "
                   f"{p_text(r.test.chi2_p)}." + (f" {r.note}." if r.note else ""))


if result.signal is not None:
    _signal_section(result.signal)

# ------------------------------------------------------------------ CATA


def _cata_section(ca) -> None:
    """Check-all-that-apply: ticks and Cochran's Q per word, the pairwise McNemar tests,
    the correspondence map and penalty-lift."""
    st.subheader("Words ticked")
    if ca.note:
        st.caption(ui.literal(ca.note))
    tests = {t.word: t for t in ca.tests}
    st.dataframe(pd.DataFrame([
        {"word": w, **{s: ca.counts[s][w] for s in ca.samples},
         "Cochran Q": tests[w].q if w in tests else None,
         "p": tests[w].p_value if w in tests else None}
        for w in ca.words]), hide_index=True, width="stretch",
        column_config={"Cochran Q": st.column_config.NumberColumn(format="%.2f"),
                       "p": st.column_config.NumberColumn(format="%.4f")})
    if ca.tests:
        with st.expander("Pairs of samples per word (exact McNemar)", icon=":material/rule:"):
            st.dataframe(pd.DataFrame([{"word": t.word, **x.to_dict()} for t in ca.tests
                                       for x in t.pairs]), hide_index=True, width="stretch")
            st.caption("b, c: panelists who ticked the word for the first sample only, or the "
                       "second only; p exact two-sided, p_adjusted Bonferroni over the pairs.")
    if ca.correspondence is not None:
        ui.ca_biplot(ca.correspondence, title="Correspondence map of samples and words")
    if ca.lifts:
        st.markdown(f"**Penalty-lift on {ui.literal(ca.liking)}**")
        st.dataframe(pd.DataFrame([x.to_dict() for x in ca.lifts]), hide_index=True,
                     width="stretch")
        st.caption("Mean liking with the word ticked minus without it (descriptive); p from "
                   "Welch's t-test.")


if result.cata is not None:
    _cata_section(result.cata)

# ------------------------------------------------------------------ R-index


def _r_index_section(attributes: list[str]) -> None:
    """The R-index of each sample against the control (ratings: per attribute; ranking:
    on the ranks), from service.r_index_of."""
    if not attributes:
        return
    with st.expander("R-index against the control", icon=":material/compare_arrows:"):
        which = (st.selectbox("Attribute", attributes, key="rindex_attribute")
                 if len(attributes) > 1 else attributes[0])
        try:
            table = service.r_index_of(store, trial_id, which)
        except TrialsError as exc:
            st.caption(ui.literal(str(exc)))
            return
        st.dataframe(table.to_frame(), hide_index=True, width="stretch", column_config={
            c: st.column_config.NumberColumn(c, format="%.3f")
            for c in ("r_index", "p_value", "p_greater", "dprime")})
        st.caption(f"R = P(sample {'ranked before' if table.kind == 'ranks' else 'scored above'}"
                   f" the control {ui.literal(table.control)}) + half the ties (O'Mahony "
                   "1992); two-sided Mann-Whitney test; d' = sqrt 2 z(R)."
                   + (f" {ui.literal(table.note)}." if table.note else ""))


if result.attributes:
    _r_index_section([a.attribute for a in result.attributes if a.scores])
elif result.ranking is not None and result.ranking.ranks:
    _r_index_section(["rank"])

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
