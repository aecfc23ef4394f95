"""Use cases of results: the trial's analysis and decision from one snapshot of the
store, the panel size a discrimination trial needs, exact power against n, panel
performance, and the critical-value tables."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import pandas as pd

from trials.errors import TrialsError
from trials.methods import get_method
from trials.model import Answer, Batch, Panelist, PlanEntry, Trial
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import batches as batch_rows
from trials.store import panel as panel_rows
from trials.store import plans as plan_rows
from trials.store import trials as trial_rows


@dataclass(frozen=True, slots=True)
class TrialFile:
    """Everything on file for one trial, read in one transaction (one snapshot while
    tablets write): the trial, its plan with the key, answers, batches, the roster and
    the tasting links."""

    study: Trial
    plan: tuple[PlanEntry, ...]
    responses: tuple[Answer, ...]
    batches: tuple[Batch, ...]
    roster: tuple[Panelist, ...]
    links: dict[str, str]


def file_in(tx, trial_id: int) -> TrialFile:
    """The trial's :class:`TrialFile` within an open read transaction."""
    return TrialFile(
        study=trial_rows.get_trial(tx, trial_id),
        plan=tuple(plan_rows.plan_entries(tx, trial_id)),
        responses=tuple(answer_rows.list_answers(tx, trial_id)),
        batches=tuple(batch_rows.list_batches(tx, trial_id)),
        roster=tuple(panel_rows.list_panelists(tx)),
        links=plan_rows.links(tx, trial_id),
    )


def trial_file(store: Store, trial_id: int) -> TrialFile:
    """The trial's :class:`TrialFile`."""
    with store.read() as tx:
        return file_in(tx, trial_id)


def analyse_file(f: TrialFile):
    """:func:`trials.analysis.analyse` of a trial file."""
    from trials.analysis import analyse

    return analyse(f.study, list(f.plan), list(f.responses), batches=list(f.batches))


def analyse_trial(store: Store, trial_id: int):
    """The trial's analysis (:func:`trials.analysis.analyse`) from one snapshot."""
    return analyse_file(trial_file(store, trial_id))


def trial_decision(store: Store, trial_id: int, analysis=None):
    """The decision text for the trial's results (:func:`trials.decision.decide`), from
    a given analysis or a fresh one."""
    from trials.decision import decide

    f = trial_file(store, trial_id)
    return decide(analysis if analysis is not None else analyse_file(f), study=f.study)


def panel_size_needed(store: Store, trial_id: int):
    """How many panelists a discrimination trial needs for its alpha, beta and pd
    (:func:`trials.stats.power.panel_size`); None when the trial is not a
    forced-choice trial or has no pd yet."""
    with store.read() as tx:
        study = trial_rows.get_trial(tx, trial_id)
    if not get_method(study.method).is_forced_choice or not study.pd:
        return None
    from trials.stats.power import panel_size

    return panel_size(study.pd, method=study.method, alpha=study.alpha, beta=study.beta)


def power_curve(method: str, *, pd: float, alpha: float, ns: Sequence[int]) -> pd.DataFrame:
    """Exact power of the difference test against the number of panelists
    (:func:`trials.stats.power.power`); columns ``n power critical``."""
    from pandas import DataFrame  # the name ``pd`` is the proportion here

    from trials.stats.power import power

    found = [power(int(n), method=method, pd=pd, alpha=alpha) for n in ns]
    return DataFrame({"n": [r.n for r in found], "power": [r.power for r in found],
                      "critical": [r.critical for r in found]})


def panel_performance_of(store: Store, trial_id: int, attribute: str):
    """Per-panelist performance on one rated attribute
    (:func:`trials.stats.panel.panel_performance`); sessions are the replicates."""
    from trials.service.tasting import answers_table
    from trials.stats.panel import panel_performance

    with store.read() as tx:
        book = answer_rows.plan_book(tx, trial_id)
        answers = answer_rows.list_answers(tx, trial_id)
    frame = answers_table(book, answers)
    frame = frame[frame["attribute"] == attribute]
    if frame.empty:
        raise TrialsError(f"no scores on file for attribute {attribute!r}")
    replicate = "session" if frame["session"].nunique() > 1 else None
    return panel_performance(frame, score="score", sample="sample", panelist="panelist",
                             replicate=replicate, alpha=book.trial.alpha)


def r_index_of(store: Store, trial_id: int, attribute: str):
    """The R-index of every sample against the control on one rated attribute, or on the
    ranks of a ranking trial (``attribute="rank"``): :func:`trials.stats.rindex.r_index_table`.
    The control is the sample flagged as control, else the trial's first sample."""
    from trials.answers import RANK
    from trials.service.tasting import answers_table
    from trials.stats.rindex import RANKS, SCORES, r_index_table

    with store.read() as tx:
        book = answer_rows.plan_book(tx, trial_id)
        answers = answer_rows.list_answers(tx, trial_id)
    study = book.trial
    if not study.samples:
        raise TrialsError(f"trial {trial_id} has no samples")
    control = next((s.name for s in study.samples if s.is_control), study.samples[0].name)
    frame = answers_table(book, answers)
    frame = frame[frame["attribute"] == attribute]
    if frame.empty:
        raise TrialsError(f"no scores on file for attribute {attribute!r}")
    return r_index_table(frame, control=control, kind=RANKS if attribute == RANK else SCORES,
                         attribute=attribute, alpha=study.alpha)


def critical_values(method: str):
    """The critical-value table of a forced-choice method for n = 5..200 at alpha 0.20,
    0.10, 0.05, 0.01 and 0.001 (:func:`trials.stats.discrimination.critical_table`)."""
    from trials.stats.discrimination import critical_table

    return critical_table(method=method)


def critical_values_pdf(method: str) -> bytes:
    """:func:`critical_values` as a printable PDF."""
    from trials.printing import critical_table_pdf

    return critical_table_pdf(critical_values(method)).data


@dataclass(frozen=True, slots=True)
class ControlComparison:
    """Dunnett's comparisons of one rated attribute against the control
    (``result``: :class:`trials.stats.posthoc.DunnettResult`), or why none ran."""

    attribute: str
    control: str
    result: object | None
    note: str = ""


def control_comparisons(study: Trial, analysis) -> list[ControlComparison]:
    """Each rated attribute's samples against the trial's control by Dunnett's test
    (Dunnett 1955), with the error term the attribute's blocked ANOVA tests the sample
    effect against (:meth:`trials.stats.ratings.RatingAnova.dunnett`). Empty when the
    trial names no control."""
    control = next((s.name for s in study.samples if s.is_control), "")
    if not control:
        return []
    out = []
    for at in analysis.attributes:
        av = at.anova
        if av is None:
            continue
        if control not in av.means:
            out.append(ControlComparison(at.attribute, control, None,
                                         f"no scores of the control {control!r}"))
            continue
        if not av.ms_test > 0:
            out.append(ControlComparison(at.attribute, control, None,
                                         "no error variation: every difference is exact"))
            continue
        try:
            out.append(ControlComparison(at.attribute, control, av.dunnett(control)))
        except TrialsError as exc:
            out.append(ControlComparison(at.attribute, control, None, str(exc)))
    return out


def panel_size_words(store: Store, trial_id: int) -> str | None:
    """The panel size of a discrimination trial said in the words of its aim: for a
    difference test, the count that concludes a difference and the power at pd; for a
    similarity test (:func:`trials.analysis.planned_similarity`), the largest count
    that still concludes similarity and the two risks in similarity terms (ISO
    4120:2021 treats both aims with one table of n, the similarity aim putting the
    weight on a small beta). None where no panel size applies."""
    from trials.analysis import planned_similarity
    from trials.stats.discrimination import similarity_test

    with store.read() as tx:
        study = trial_rows.get_trial(tx, trial_id)
    answer = panel_size_needed(store, trial_id)
    if answer is None:
        return None
    spec = get_method(study.method)
    if not planned_similarity(study):
        return (f"With **{answer.n}** panelists a {spec.label.lower()} concludes a difference "
                f"from **{answer.critical}** correct answers, with alpha = {study.alpha:g}, and "
                f"detects pd = {study.pd:g} with power {answer.power:.2f} "
                f"(beta = {study.beta:g}).")
    sim = similarity_test(0, answer.n, method=study.method, pd=study.pd, beta=study.beta)
    most = ("no count" if sim.max_correct is None
            else f"at most **{sim.max_correct}** correct answers")
    return (f"With **{answer.n}** panelists a {spec.label.lower()} concludes that the samples "
            f"are similar (fewer than pd = {study.pd:g} discriminators) from {most}. The risk "
            f"that matters here is beta = {study.beta:g}: calling the samples similar when a "
            f"proportion pd = {study.pd:g} of panelists can tell them apart; alpha = "
            f"{study.alpha:g} is the risk of declaring a difference when nobody can.")
