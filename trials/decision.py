"""The decision of a trial in plain words, with the numbers behind it.

:func:`decide` turns a :class:`trials.analysis.TrialAnalysis` into a
:class:`Decision`: a verdict code (for the store and the history search), a headline
sentence, the lines of evidence (counts, p-value, critical count, estimates with
their intervals, the method and its published source) and the limits of the
conclusion (what "not significant" does and does not mean, the risks planned).

Every number in the text comes from the analysis' statistics results; ``numbers``
holds them unrounded so that a reader (or a test) can check the text against them.
Pure: no store, no files.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from trials.analysis import NO_ANSWERS, AttributeAnalysis, ForcedChoiceAnalysis, TrialAnalysis
from trials.methods import MODEL_YES_NO, Scoring, get_method
from trials.model import Record, Trial


class Verdict:
    """Verdict codes (plain strings, stable for the store and searches)."""

    NO_ANSWERS = "no answers yet"
    DIFFERENCE = "difference"
    NO_DIFFERENCE = "no difference shown"
    SIMILAR = "similar"
    NOT_SIMILAR = "similarity not shown"
    PREFERENCE = "preference"
    NO_PREFERENCE = "no preference shown"
    INCOMPLETE = "not enough data"


@dataclass(frozen=True, slots=True)
class Decision(Record):
    """A trial's decision.

    ``verdict`` is one of :class:`Verdict`; ``headline`` one sentence; ``details`` the
    evidence, one sentence each; ``limits`` what the result does not show and the
    risks planned; ``numbers`` the unrounded values quoted in the text.
    """

    verdict: str
    headline: str
    details: tuple[str, ...]
    limits: tuple[str, ...]
    method: str
    reference: str
    numbers: dict[str, Any] = field(default_factory=dict)

    @property
    def text(self) -> str:
        """Headline, details and limits as one paragraph each, blank-line separated."""
        parts = [self.headline]
        if self.details:
            parts.append(" ".join(self.details))
        if self.limits:
            parts.append(" ".join(self.limits))
        return "\n\n".join(parts)


# --------------------------------------------------------------------------- formatting


def p_text(p: float | None) -> str:
    """A p-value alone, for a table cell or a metric: ``0.003``; ``< 0.001`` below a
    thousandth; an en dash for None."""
    if p is None or (isinstance(p, float) and math.isnan(p)):
        return "\u2013"
    return "< 0.001" if p < 0.001 else f"{p:.3f}"


def fmt_p(p: float | None) -> str:
    """``p = 0.003``; ``p < 0.001`` below a thousandth; ``p not available`` for None."""
    if p is None or (isinstance(p, float) and math.isnan(p)):
        return "p not available"
    text = p_text(p)
    return f"p {text}" if text.startswith("<") else f"p = {text}"


def fmt(x: float | None, digits: int = 2) -> str:
    """A number to ``digits`` decimals; an en dash for None."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "\u2013"
    if isinstance(x, float) and math.isinf(x):
        return "infinite"
    return f"{x:.{digits}f}"


def fmt_risk(x: float) -> str:
    """A risk level as written in the standards: 0.05, 0.2, 0.001."""
    return f"{x:g}"


def _level(level: float) -> str:
    return f"{level * 100:g} %"


# --------------------------------------------------------------------------- forced choice

def _forced_choice(a: TrialAnalysis, fc: ForcedChoiceAnalysis, study: Trial | None) -> Decision:
    spec = get_method(a.method)
    ref = spec.reference
    d = fc.difference
    c = fc.counts
    if d is None:
        why = fc.note or NO_ANSWERS
        if why.startswith(NO_ANSWERS):
            return _no_answers(a)
        return Decision(Verdict.INCOMPLETE, f"No decision: {why}.", (), (), a.method, ref)
    numbers: dict[str, Any] = {
        "correct": d.correct, "n": d.n, "p_value": d.p_value, "critical": d.critical,
        "alpha": d.alpha, "pc": d.pc, "pd": d.pd, "pd_ci": tuple(d.pd_ci),
        "dprime": d.dprime, "dprime_ci": None if d.dprime_ci is None else tuple(d.dprime_ci),
        "level": d.level,
    }
    need = (f"{d.critical} needed at alpha {fmt_risk(d.alpha)}" if d.critical is not None
            else f"no count of {d.n} reaches alpha {fmt_risk(d.alpha)}")
    test_name = ("exact two-sided binomial test" if spec.sides == 2 else
                 "exact one-sided binomial test")
    evidence = f"({fmt_p(d.p_value)}; {need}, {test_name}, {ref})"
    ci = d.ci_method or "exact interval"
    details: list[str] = []
    limits: list[str] = []
    significant = d.significant
    rep, over = fc.replicated, fc.overdispersion
    if rep is not None:  # overdispersed replicated answers: the beta-binomial test decides
        significant = rep.significant
        sided = "two-sided" if spec.sides == 2 else "one-sided"
        evidence = (f"({fmt_p(rep.p_value)}, {sided} beta-binomial test, Ennis and Bi 1998, "
                    f"because the replicated answers are overdispersed; {ref})")
        numbers.update({"p_value": rep.p_value, "pooled_p_value": d.p_value,
                        "gamma": rep.gamma, "effective_n": rep.effective_n,
                        "tarone_z": over.statistic, "tarone_p_value": over.p_value})
        details.append(
            f"Panelists answered more than once and their answers vary more between "
            f"panelists than chance allows (Tarone 1979: Z = {fmt(over.statistic)}, "
            f"{fmt_p(over.p_value)}), so they are not pooled as independent: the "
            f"beta-binomial test gives Z = {fmt(rep.statistic)}, {fmt_p(rep.p_value)} "
            f"(dispersion gamma {fmt(rep.gamma)}, {fmt(rep.effective_n, 1)} effective answers "
            f"of {rep.answers}); the pooled exact binomial test would give "
            f"{fmt_p(d.p_value)} ({need}).")
    elif over is not None:
        numbers.update({"tarone_z": over.statistic, "tarone_p_value": over.p_value})
        details.append(
            f"Panelists answered more than once; Tarone's test (1979) finds no overdispersion "
            f"(Z = {fmt(over.statistic)}, {fmt_p(over.p_value)} at alpha "
            f"{fmt_risk(over.alpha)}), so the answers are pooled as independent.")

    if spec.scoring is Scoring.PREFERENCE_COUNT:
        pref = c.preferred or "neither sample"
        counts = ", ".join(f"{k} {v}" for k, v in c.counts.items())
        folded = ""
        if fc.preference is not None and c.no_preference:
            folded = f" after {fc.preference.note}"
            numbers["no_preference"] = c.no_preference
        if significant and c.preferred:
            verdict = Verdict.PREFERENCE
            head = (f"Panelists preferred {pref}: {d.correct} of {d.n} chose it{folded} "
                    f"{evidence}.")
        else:
            verdict = Verdict.NO_PREFERENCE
            head = (f"No preference was shown: the more-chosen sample got {d.correct} of "
                    f"{d.n}{folded} {evidence}.")
        details.append(f"Choices: {counts}; 'no preference' answers: {c.no_preference}.")
        details.append(
            f"Estimated proportion of panelists with a preference {fmt(d.pd)} "
            f"({_level(d.level)} interval {fmt(d.pd_ci[0])} to {fmt(d.pd_ci[1])}, {ci}).")
        s = fc.similarity
        if fc.similarity_planned and s is not None:
            numbers.update(_similarity_numbers(s))
            allowed = (f"at most {s.max_correct} allowed" if s.max_correct is not None
                       else f"no count of {s.n} can show equivalence at this beta")
            bound = (f"{allowed} for equivalence at beta {fmt_risk(s.beta)} and pd "
                     f"{fmt(s.pd)} (the proportion of panelists with a preference; two "
                     f"one-sided exact binomial tests on the more-chosen share, Schuirmann "
                     f"1987, bound 1/2 + pd/2 = {fmt(s.p_max, 3)}; {ref})")
            if s.similar:
                verdict = Verdict.SIMILAR
                head = (f"The samples are equally preferred within the planned limit: the "
                        f"more-chosen sample got {d.correct} of {d.n}{folded}, {bound}.")
            else:
                verdict = Verdict.NOT_SIMILAR
                head = (f"Equal preference was not shown: the more-chosen sample "
                        f"({pref}) got {d.correct} of {d.n}{folded}, {bound}.")
            details.insert(0, (
                f"Upper one-sided {_level(1 - s.beta)} limit of the proportion of panelists "
                f"with a preference: {fmt(s.pd_upper)} (planned limit {fmt(s.pd)}). "
                f"Preference test: {fmt_p(d.p_value)}, {need}"
                + (f": panelists preferred {pref}." if significant and c.preferred
                   else ".")))
        elif not significant:
            limits.append("Not significant is not the same as equally liked: "
                          + _similarity_limit(fc))
    else:
        phrase = (spec.correct_phrase or "answered correctly").format(
            target=c.target or "the target")
        if d.dprime is not None and d.dprime_ci is not None:
            model_words = (f"d' {fmt(d.dprime, 1)} (interval {fmt(d.dprime_ci[0], 1)} to "
                           f"{fmt(d.dprime_ci[1], 1)}, Thurstonian model of the "
                           f"{spec.label.lower()})")
        else:
            model_words = (f"no d': the {spec.label.lower()} has no Thurstonian model here, "
                           "so the proportion of discriminators is the estimate")
        estimate = (
            f"Estimated proportion of discriminators {fmt(d.pd)} ({_level(d.level)} "
            f"interval {fmt(d.pd_ci[0])} to {fmt(d.pd_ci[1])}, {ci}); {model_words}.")
        if significant:
            verdict = Verdict.DIFFERENCE
            head = f"Panelists told the samples apart: {d.correct} of {d.n} {phrase} {evidence}."
        else:
            verdict = Verdict.NO_DIFFERENCE
            head = (f"No difference was shown: {d.correct} of {d.n} {phrase} {evidence}.")
        details.append(estimate)
        s = fc.similarity
        if fc.similarity_planned and s is not None:
            numbers.update(_similarity_numbers(s))
            conf = _level(1 - s.beta)
            allowed = (f"at most {s.max_correct} correct allowed" if s.max_correct is not None
                       else f"no count of {s.n} can show similarity at this beta")
            if rep is not None:  # the similarity test ran on the corrected counts
                allowed += (f" of {s.n} effective answers ({s.correct} correct after the "
                            f"design-effect correction for overdispersion, Rao and Scott 1992)")
            if s.similar:
                verdict = Verdict.SIMILAR
                head = (f"The samples are similar within the planned limit: {d.correct} of "
                        f"{d.n} {phrase}, {allowed} for similarity at beta "
                        f"{fmt_risk(s.beta)} and pd {fmt(s.pd)} (exact binomial, {ref}).")
            else:
                verdict = Verdict.NOT_SIMILAR
                head = (f"Similarity was not shown: {d.correct} of {d.n} {phrase}, "
                        f"{allowed} for similarity at beta {fmt_risk(s.beta)} and pd "
                        f"{fmt(s.pd)} (exact binomial, {ref}).")
            details.insert(0, (
                f"Upper one-sided {conf} limit of the proportion of discriminators: "
                f"{fmt(s.pd_upper)} (planned limit {fmt(s.pd)}). Difference test: "
                f"{fmt_p(d.p_value)}, {need}."))
        elif not significant:
            limits.append("Not significant is not the same as similar: " + _similarity_limit(fc))
    if rep is not None:
        limits.append("The interval of the proportion of discriminators is from the pooled "
                      "answers: with overdispersed answers it is too narrow.")
    limits.extend(_risks(fc, a))
    if c.problems:
        limits.append(f"{len(c.problems)} answer(s) were left out "
                      "(see the report's problems list).")
    if d.note:
        limits.append(f"Note: {d.note}.")
    return Decision(verdict, head, tuple(details), tuple(limits), a.method, ref, numbers)


def _similarity_numbers(s) -> dict[str, Any]:
    return {"similar": s.similar, "max_correct": s.max_correct, "pd_upper": s.pd_upper,
            "pd_max": s.pd, "beta": s.beta, "p_max": s.p_max}


def _similarity_limit(fc: ForcedChoiceAnalysis) -> str:
    if fc.similarity_planned and fc.similarity is None:
        return "a similarity test was planned but could not be run (" + (fc.note or "no pd") + ")."
    out = "no similarity test with a stated beta and pd was planned for this trial."
    d = fc.difference
    if fc.pd is not None and d is not None:
        try:
            from trials.stats.power import power

            pw = power(d.n, method=fc.method, pd=fc.pd, alpha=fc.alpha)
            out += (f" With {d.n} panelists this test had a {fmt(pw.power)} chance (power) of "
                    f"detecting a proportion of discriminators of {fmt(fc.pd)}.")
        except Exception as exc:  # noqa: BLE001 - power is an aside; say why it is missing
            out += f" (Power not computed: {exc}.)"
    return out


def _risks(fc: ForcedChoiceAnalysis, a: TrialAnalysis) -> list[str]:
    text = f"Risks planned: alpha {fmt_risk(fc.alpha)} (calling a difference that is not there)"
    if fc.similarity_planned:
        who = ("have a preference" if get_method(fc.method).scoring is Scoring.PREFERENCE_COUNT
               else "can tell them apart")
        text += (f", beta {fmt_risk(fc.beta)} (calling the samples similar when a proportion "
                 f"{fmt(fc.pd)} of panelists {who})")
    elif fc.pd is not None:
        text += (f", beta {fmt_risk(fc.beta)} (missing a proportion of discriminators of "
                 f"{fmt(fc.pd)})")
    else:
        text += "; no pd was stated, so the risk of missing a difference is not controlled"
    return [text + "."]


# --------------------------------------------------------------------------- ratings


_ERROR_TERMS = {
    "error": "the residual error",
    "sample:panelist": "the sample-by-panelist interaction",
}


def _attribute_line(at: AttributeAnalysis, alpha: float) -> tuple[str, bool | None, dict]:
    r = at.anova
    if r is None:
        return f"{at.attribute}: not analysed ({at.note or 'no data'}).", None, {}
    row = r.term("sample")
    differs = row.p is not None and row.p <= alpha
    means = sorted(r.means.items(), key=lambda kv: -kv[1])
    listed = ", ".join(f"{s} {fmt(m, 1)} {r.groups.get(s, '')}".rstrip() for s, m in means)
    df_test = f"{r.df_test:g}"
    term = _ERROR_TERMS.get(r.error_term, r.error_term)
    test = (f"F = {fmt(row.F)} on {row.df:g} and {df_test} df, {fmt_p(row.p)}; tested against "
            f"{term}, mean square {r.ms_test:.3g}")
    if differs:
        head = f"{at.attribute}: the samples differ ({test})."
    else:
        head = f"{at.attribute}: no difference shown between the samples ({test})."
    body = (f" Means (samples sharing a letter do not differ, Tukey HSD {fmt(r.hsd)} at alpha "
            f"{fmt_risk(r.alpha)}): {listed}.")
    numbers = {"F": row.F, "p_value": row.p, "df": row.df, "df_test": r.df_test,
               "hsd": r.hsd, "means": dict(r.means), "groups": dict(r.groups),
               "error_term": r.error_term}
    return head + body, differs, numbers


def _penalty_line(at: AttributeAnalysis) -> str:
    p = at.penalty
    if p is None:
        return ""
    flagged = [r for r in p.flagged() if r.drop is not None]
    # a flagged group with answers but no drop: nobody answered "just right" for that
    # sample, so there is no liking to compare with; say so rather than drop it
    unrated = [r for r in p.flagged() if r.drop is None and r.n > 0]
    missing = "".join(
        f" {r.sample + ': ' if r.sample else ''}no panelist answered 'just right', so the "
        f"penalty of '{r.group}' ({fmt(r.share * 100, 0)} % of answers) cannot be computed."
        for r in unrated)
    if not flagged:
        if missing:
            return f"{at.attribute} (just-about-right):{missing}"
        return (f"{at.attribute} (just-about-right): no off-JAR group reached "
                f"{fmt(p.threshold * 100, 0)} % of answers.")
    parts = []
    for r in flagged[:4]:
        who = f"{r.sample}: " if r.sample else ""
        parts.append(f"{who}'{r.group}' for {fmt(r.share * 100, 0)} % of answers, liking "
                     f"{fmt(r.drop, 1)} lower (weighted penalty {fmt(r.penalty)}, "
                     f"{fmt_p(r.p_value)})")
    return (f"{at.attribute} (just-about-right, penalty analysis): " + "; ".join(parts) + "."
            + missing)


def _ratings(a: TrialAnalysis, study: Trial | None) -> Decision:
    spec = get_method(a.method)
    ref = spec.reference + "; two-way ANOVA with panelists as blocks; Tukey (1953) HSD"
    details, numbers = [], {}
    differ, flat = [], []
    for at in a.attributes:
        line, differs, nums = _attribute_line(at, a.alpha)
        details.append(line)
        if nums:
            numbers[at.attribute] = nums
        if differs:
            differ.append(at.attribute)
        elif differs is False:
            flat.append(at.attribute)
        pl = _penalty_line(at)
        if pl:
            details.append(pl)
        # Only the measured variables that follow the means at alpha belong in the
        # decision; the report's table of measured variables holds them all.
        for rel in at.relations:
            c, g = rel.correlation, rel.regression
            if c.r is None or g.slope is None or c.p_value is None or c.p_value >= a.alpha:
                continue
            unit = f" {rel.unit}" if rel.unit else ""
            details.append(
                f"{at.attribute} against {rel.predictor} across {len(rel.samples)} samples: "
                f"r = {fmt(c.r)}, {fmt_p(c.p_value)}; slope {fmt(g.slope, 3)} per{unit or ' unit'} "
                f"(Pearson correlation and least-squares line; {rel.note}).")
    if not differ and not flat:
        return Decision(Verdict.INCOMPLETE, "No decision: no attribute could be analysed yet.",
                        tuple(details), (), a.method, ref, numbers)
    if differ:
        verdict = Verdict.DIFFERENCE
        head = ("The samples differ on " + ", ".join(differ) + f" (alpha {fmt_risk(a.alpha)})"
                + (f"; no difference shown on {', '.join(flat)}." if flat else "."))
    else:
        verdict = Verdict.NO_DIFFERENCE
        head = ("No difference was shown between the samples on any attribute "
                f"(alpha {fmt_risk(a.alpha)}).")
    limits = ["Not significant is not the same as equal: a difference smaller than the test "
              "could detect with this panel may remain."]
    delta = study.delta if study is not None else None
    if delta is not None:
        hsds = "; ".join(f"{at.attribute} {fmt(at.anova.hsd)}" for at in a.attributes
                         if at.anova is not None and at.anova.hsd is not None)
        limits.append(f"The smallest difference of means that matters was set at {fmt(delta)}; "
                      "compare it with each attribute's Tukey HSD, the least difference of "
                      "means the test declares" + (f" ({hsds})." if hsds else "."))
    limits.append("Panelists are treated as a random sample of consumers or trained "
                  "panelists; the scores are treated as interval data.")
    if a.problems:
        limits.append(f"{len(a.problems)} answer(s) were left out "
                      "(see the report's problems list).")
    return Decision(verdict, head, tuple(details), tuple(limits), a.method, ref, numbers)


# --------------------------------------------------------------------------- ranking


def _ranking(a: TrialAnalysis) -> Decision:
    spec = get_method(a.method)
    rk = a.ranking
    if rk is None or rk.result is None:
        note = rk.note if rk is not None else NO_ANSWERS
        if note == NO_ANSWERS:
            return _no_answers(a)
        ref = spec.reference + "; Friedman (1937) or Durbin (1951) rank test"
        return Decision(Verdict.INCOMPLETE, f"No decision: {note}.", (), (), a.method, ref)
    r = rk.result
    ref = f"{spec.reference}; {r.reference()} rank test"
    sums = sorted(r.rank_sums.items(), key=lambda kv: kv[1])
    listed = ", ".join(f"{s} {fmt(v, 1)} {r.groups.get(s, '')}".rstrip() for s, v in sums)
    chi = f"chi-square = {fmt(r.statistic)} on {r.df} df, {fmt_p(r.p_value)}"
    f_df = f"{r.f_df[0]:g} and {r.f_df[1]:g} df"
    f_form = f"F = {fmt(r.f_statistic)} on {f_df}, {fmt_p(r.f_p_value)}"
    used, other = (f_form, chi) if r.form == "F" else (chi, f_form)
    test = f"{r.name()} {used}, {r.panelists} panelists"
    differs = r.overall_significant
    if differs:
        verdict = Verdict.DIFFERENCE
        head = f"The rankings differ between samples ({test}; {r.reference()}; {spec.reference})."
    else:
        verdict = Verdict.NO_DIFFERENCE
        head = f"No difference in rank was shown ({test}; {r.reference()}; {spec.reference})."
    compared = ("samples sharing a letter do not differ by the least significant difference "
                f"{fmt(r.lsd, 1)} at alpha {fmt_risk(r.alpha)}, {r.lsd_method}; the pairs are "
                f"compared only because the overall test is significant (protected LSD, "
                f"Conover 1999)") if differs else (
                "no pair is compared, so every sample shares one letter: the overall test is "
                "not significant and the least significant difference is used only after a "
                "significant one (protected LSD, Conover 1999)")
    details = (f"The decision uses the {r.form} form of the test; the other form gives "
               f"{other}.",
               f"Rank sums, rank 1 = most ({compared}): {listed}.")
    limits = ("Not significant is not the same as equal.",
              "Ranks say which sample comes first, not by how much.")
    numbers = {"statistic": r.statistic, "df": r.df, "p_value": r.p_value,
               "f_statistic": r.f_statistic, "f_p_value": r.f_p_value, "form": r.form,
               "overall_p_value": r.overall_p_value, "rank_sums": dict(r.rank_sums),
               "lsd": r.lsd, "groups": dict(r.groups)}
    return Decision(verdict, head, details, limits, a.method, ref, numbers)


def _signal(a: TrialAnalysis) -> Decision:
    """A-not-A and same-different: Fisher's exact one-sided test of the response table
    decides; d' by the method's model (trials.stats.signal)."""
    spec = get_method(a.method)
    sg = a.signal
    ref = f"{spec.reference}; Fisher's exact test (Fisher 1935)"
    if sg is None or sg.result is None:
        why = (sg.note if sg is not None and sg.note else NO_ANSWERS)
        return _no_answers(a) if why == NO_ANSWERS else Decision(
            Verdict.INCOMPLETE, f"No decision: {why}.", (), (), a.method, ref)
    r, dp = sg.result, sg.result.dprime
    signal_word = spec.responses[1]
    rates = (f"{sg.hits} of {sg.n_signal} answered \"{signal_word}\" to {sg.signal_sets} "
             f"and {sg.false_alarms} of {sg.n_noise} to {sg.noise_sets}")
    evidence = (f"({fmt_p(r.p_value)}, Fisher's exact one-sided test of the response table at "
                f"alpha {fmt_risk(r.alpha)}; {spec.reference})")
    if r.significant:
        verdict = Verdict.DIFFERENCE
        head = f"Panelists told the samples apart: {rates} {evidence}."
    else:
        verdict = Verdict.NO_DIFFERENCE
        head = f"No difference was shown: {rates} {evidence}."
    model_words = ("d' = z(H) - z(F), the yes/no model" if spec.model == MODEL_YES_NO else
                   "the differencing (tau-criterion) model of same-different")
    se = (f", standard error {fmt(dp.dprime_se)}, {_level(dp.level)} interval "
          f"{fmt(dp.dprime_ci[0], 1)} to {fmt(dp.dprime_ci[1], 1)}"
          if dp.dprime_se is not None and dp.dprime_ci is not None else "")
    details = [f"Hit rate {fmt(dp.hit_rate)}, false-alarm rate {fmt(dp.false_alarm_rate)}; "
               f"d' {fmt(dp.dprime)}{se} ({model_words}; Macmillan and Creelman 2005)."]
    if r.test.chi2 is not None:
        details.append(f"Pearson's chi-square of the table: {fmt(r.test.chi2)} on 1 df "
                       f"(two-sided {fmt_p(r.test.chi2_p)}).")
    if r.note:
        details.append(f"Note: {r.note}.")
    if sg.note:
        details.append(f"Note: {sg.note}.")
    limits = ("Not significant is not the same as the same: no similarity test was planned.",
              "The test assumes independent answers and a normal model with equal variances.")
    numbers = {"hits": sg.hits, "n_signal": sg.n_signal, "false_alarms": sg.false_alarms,
               "n_noise": sg.n_noise, "p_value": r.p_value, "alpha": r.alpha,
               "dprime": dp.dprime, "dprime_se": dp.dprime_se, "chi2": r.test.chi2}
    return Decision(verdict, head, tuple(details), limits, a.method, ref, numbers)


def _cata(a: TrialAnalysis) -> Decision:
    """CATA: per word, Cochran's Q at the trial's alpha decides whether the samples differ
    in how often it is ticked; the pairwise McNemar tests say which (trials.stats.cata)."""
    spec = get_method(a.method)
    ca = a.cata
    ref = f"{spec.reference}; Cochran (1950) Q, McNemar (1947) pairs"
    if ca is None or not ca.tests:
        why = (ca.note if ca is not None and ca.note else NO_ANSWERS)
        return (_no_answers(a) if why.startswith("no ticks") or why == NO_ANSWERS else
                Decision(Verdict.INCOMPLETE, f"No decision: {why}.", (), (), a.method, ref))
    differ = [t for t in ca.tests if t.significant]
    words = ", ".join(t.word for t in differ)
    test = f"Cochran's Q per word at alpha {fmt_risk(a.alpha)}"
    if differ:
        verdict = Verdict.DIFFERENCE
        head = (f"The samples differ on {len(differ)} of {len(ca.tests)} words ({test}): "
                f"{words}.")
    else:
        verdict = Verdict.NO_DIFFERENCE
        head = f"No word was ticked more often for one sample than another ({test})."
    details = []
    for t in differ:
        ticks = ", ".join(f"{s} {n} of {t.panelists}" for s, n in t.ticks.items())
        pairs = [f"{x.first} vs {x.second}" for x in t.pairs if x.p_adjusted <= a.alpha]
        details.append(f"{t.word}: Q = {fmt(t.q)} on {t.df} df, {fmt_p(t.p_value)}; ticked "
                       f"{ticks}" + (f"; pairs that differ (exact McNemar, Bonferroni): "
                                     f"{', '.join(pairs)}" if pairs else "") + ".")
    if ca.correspondence is not None:
        shares = ", ".join(f"{100 * x:.0f} %" for x in ca.correspondence.shares[:2])
        details.append(f"Correspondence analysis of the sample x word table: the first "
                       f"dimensions hold {shares} of the inertia (Greenacre 2017).")
    drops = sorted((x for x in ca.lifts if x.lift is not None), key=lambda x: x.lift or 0.0)
    if drops:
        worst, best = drops[0], drops[-1]
        details.append(f"Penalty-lift on {ca.liking}: liking is {fmt(worst.lift)} points "
                       f"when {worst.word!r} is ticked against not ticked, and "
                       f"{fmt(best.lift)} for {best.word!r} (mean differences, descriptive).")
    if ca.note:
        details.append(f"Note: {ca.note}.")
    limits = ("Not significant is not the same as alike: a word may differ by less than "
              "this panel can show.",
              "Each word is tested on its own at alpha, with no adjustment over the words.")
    numbers = {"words_differ": [t.word for t in differ],
               "q": {t.word: t.q for t in ca.tests}, "p": {t.word: t.p_value for t in ca.tests}}
    return Decision(verdict, head, tuple(details), limits, a.method, ref, numbers)


# --------------------------------------------------------------------------- entry point


def _no_answers(a: TrialAnalysis) -> Decision:
    spec = get_method(a.method)
    return Decision(Verdict.NO_ANSWERS,
                    f"No decision yet: no answers yet ({a.panelists_planned} panelists planned).",
                    (), (), a.method, spec.reference, {})


def decide(analysis: TrialAnalysis, *, study: Trial | None = None) -> Decision:
    """The decision for one analysed trial, in plain words with its numbers.

    Parameters
    ----------
    analysis : trials.analysis.TrialAnalysis
        From :func:`trials.analysis.analyse`.
    study : trials.model.Trial, optional
        For the smallest meaningful difference of ratings (``delta``).

    Returns
    -------
    Decision
        ``verdict`` (see :class:`Verdict`), ``headline``, ``details``, ``limits``,
        the method and its published source, and the unrounded ``numbers``.

    Notes
    -----
    Forced choice: the verdict follows the exact test at the trial's alpha; when the
    trial was planned as a similarity test (see
    :func:`trials.analysis.planned_similarity`), it follows the similarity test at the
    trial's beta and pd instead, and the difference test is quoted as a detail. A
    difference test that is not significant is never reported as "similar": the text
    says that no similarity test was planned and, when the trial states a pd, the
    power the panel had to detect it. Ratings: per attribute, the ANOVA's F test of
    samples against the error term named by the analysis, the Tukey HSD and the
    letters. Ranking: Friedman's test (complete blocks) or Durbin's (each panelist
    ranked only some samples), named with its source, and the rank-sum least significant
    difference.
    """
    if not analysis.has_answers:
        return _no_answers(analysis)
    if analysis.choice is not None:
        return _forced_choice(analysis, analysis.choice, study)
    if analysis.signal is not None:
        return _signal(analysis)
    if analysis.cata is not None:
        return _cata(analysis)
    if analysis.attributes:
        return _ratings(analysis, study)
    return _ranking(analysis)


def decision_text(analysis: TrialAnalysis, *, study: Trial | None = None) -> str:
    """:func:`decide`'s decision as one text (headline, details, limits)."""
    return decide(analysis, study=study).text
