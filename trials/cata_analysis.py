"""Check-all-that-apply trials in a trial's analysis: decode the ticks through the plan,
then Cochran's Q per word, pairwise McNemar tests, the correspondence analysis of the
sample x word table and, with a liking scale, penalty-lift (:mod:`trials.stats.cata`).

Pure: used by :func:`trials.analysis.analyse`. The words are the trial's attributes of
kind ``check`` (answers 1 ticked, 0 not); the liking score is its first hedonic
attribute, if any.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import pandas as pd

from trials.errors import TrialsError
from trials.model import Answer, AttributeKind, PlanEntry, Record, Trial
from trials.stats.cata import (
    CorrespondenceResult,
    PenaltyLift,
    WordTest,
    correspondence_analysis,
    penalty_lift,
    word_tests,
)


@dataclass(frozen=True, slots=True)
class CataAnalysis(Record):
    """The CATA results of a trial. ``counts`` is the sample x word table of ticks
    (sample -> word -> count); ``liking`` names the hedonic attribute used for
    penalty-lift ("" when the trial has none)."""

    words: tuple[str, ...]
    samples: tuple[str, ...]
    panelists: tuple[str, ...]
    answers: int
    counts: dict[str, dict[str, int]]
    tests: tuple[WordTest, ...]
    correspondence: CorrespondenceResult | None
    liking: str
    lifts: tuple[PenaltyLift, ...]
    problems: tuple[str, ...]
    note: str


def cata_frame(study: Trial, plan: Sequence[PlanEntry],
               responses: Sequence[Answer]) -> tuple[pd.DataFrame, list[str], int]:
    """Tidy ticks ``panelist sample session word tick liking`` (one row per ticked-or-not
    word of a cup, with the liking that cup got), the answers left out and the number of
    liking scores."""
    words = {a.name for a in study.attributes if a.kind == AttributeKind.CHECK}
    hedonic = next((a.name for a in study.attributes if a.kind == AttributeKind.HEDONIC), "")
    where = {(e.session, e.panelist_code, e.code): e.sample_name for e in plan}
    rows, liking, problems = [], {}, []
    for r in responses:
        sample = where.get((r.session, r.panelist_code, r.code))
        if sample is None:
            problems.append(f"panelist {r.panelist_code!r}, session {r.session!r}: code "
                            f"{r.code!r} is not in the serving plan")
            continue
        try:
            value = float(r.value)
        except ValueError:
            problems.append(f"panelist {r.panelist_code!r}: {r.attribute!r} = {r.value!r} is "
                            "not a number")
            continue
        if r.attribute in words:
            rows.append({"panelist": r.panelist_code, "sample": sample, "session": r.session,
                         "word": r.attribute, "tick": int(value)})
        elif hedonic and r.attribute == hedonic:
            liking[(r.session, r.panelist_code, sample)] = value
    frame = pd.DataFrame(rows, columns=["panelist", "sample", "session", "word", "tick"])
    frame["liking"] = [liking.get((s, p, x)) for s, p, x in
                       zip(frame["session"], frame["panelist"], frame["sample"])]
    return frame, problems, len(liking)


def analyse_cata(study: Trial, plan: Sequence[PlanEntry],
                 responses: Sequence[Answer]) -> CataAnalysis:
    """The CATA analysis of a trial (see the module docstring).

    Cochran's Q runs at the trial's alpha; the correspondence analysis needs two samples
    and two words with ticks (else None, said in ``note``); penalty-lift needs a hedonic
    attribute with scores.
    """
    words = tuple(a.name for a in study.attributes if a.kind == AttributeKind.CHECK)
    hedonic = next((a.name for a in study.attributes if a.kind == AttributeKind.HEDONIC), "")
    frame, problems, n_liking = cata_frame(study, plan, responses)
    samples = tuple(s.name for s in study.samples)
    notes: list[str] = []
    counts = {s: {w: int(frame[(frame["sample"] == s) & (frame["word"] == w)]["tick"].sum())
                  for w in words} for s in samples}
    tests: tuple[WordTest, ...] = ()
    ca: CorrespondenceResult | None = None
    lifts: tuple[PenaltyLift, ...] = ()
    if frame.empty:
        notes.append("no ticks on file yet")
    elif frame["sample"].nunique() < 2:
        notes.append("answers for one sample only: no comparison yet")
    else:
        tests = word_tests(frame, alpha=study.alpha)
        table = pd.DataFrame(counts).T.reindex(columns=list(words))
        try:
            ca = correspondence_analysis(table)
        except TrialsError as exc:
            notes.append(f"no correspondence map: {exc}")
        if hedonic and frame["liking"].notna().any():
            lifts = penalty_lift(frame, words=words)
    if frame["session"].nunique() > 1:
        notes.append("several sessions: a word counts as ticked for a panelist and sample "
                     "when ticked in any session (Cochran's Q, McNemar)")
    return CataAnalysis(words, samples, tuple(dict.fromkeys(frame["panelist"])),
                        len(frame) + n_liking,
                        counts, tests, ca, hedonic, lifts, tuple(problems), "; ".join(notes))
