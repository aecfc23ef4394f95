"""From a trial's answers to its analysis: join, count, test.

:func:`analyse` takes a trial (:class:`trials.model.Trial`), its serving plan, its
responses and its batches, all as plain records, and returns a frozen
:class:`TrialAnalysis`. It decodes each answer through the plan itself (blinding code
-> sample and role) and dispatches on the method's family (:mod:`trials.methods`):

- discrimination: each set scored by the method's rule (:func:`score_choices`), then
  :func:`trials.stats.discrimination.difference_test`, and its ``similarity_test`` when
  the trial was planned as a similarity test (see :func:`planned_similarity`);
- paired preference: choices counted per sample, then the two-sided test on the count
  of the more-chosen sample;
- rating: :func:`trials.stats.ratings.rating_anova` per attribute, the penalty analysis
  of each just-about-right attribute against the hedonic one, and the relation of each
  sample's mean to its batches' measures and settings (:mod:`trials.stats.measures`);
- ranking: :func:`trials.stats.ranks.rank_test` (Friedman's test for complete blocks,
  Durbin's for incomplete ones);
- signal detection (A-not-A, same-different): the response table
  (:mod:`trials.response_tables`); CATA: :mod:`trials.cata_analysis`.

A trial without answers gives an analysis that says "no answers yet" instead of
failing; an analysis the data cannot support yet (one panelist, one sample) carries a
note saying why. Pure: no store, no files. The history helpers
(:func:`search_trials`, :func:`control_trend`) live in :mod:`trials.history`, re-exported
here, so that the history screen need not import the statistics.
"""

from __future__ import annotations

import re
from collections import Counter, defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import pandas as pd

from trials.answers import CHOICE, NO_PREFERENCE, RANK
from trials.cata_analysis import CataAnalysis, analyse_cata
from trials.errors import TrialsError
from trials.history import TrendPoint, control_trend, search_trials  # noqa: F401
from trials.methods import Family, MethodSpec, Scoring, get_method
from trials.model import Answer, Attribute, AttributeKind, Batch, PlanEntry, Record, Trial
from trials.replication import replicated_tests
from trials.response_tables import SignalAnalysis, analyse_signal
from trials.stats.measures import MeasuresSummary, Relation, relate_to_batches, summarise_measures

NO_ANSWERS = "no answers yet"
SIMILARITY_WORDS = re.compile(r"\bsimilar(ity)?\b|\bsame as\b", re.IGNORECASE)

# --------------------------------------------------------------------------- records


@dataclass(frozen=True, slots=True)
class ScoredSet(Record):
    """One panelist's forced-choice answer, decoded.

    ``chosen`` is the chosen code(s) as answered, ``chosen_samples`` the decoded
    sample name(s); ``correct`` is None for paired preference (no right answer).
    """

    session: str
    panelist_code: str
    set_index: int
    chosen: str
    chosen_samples: tuple[str, ...]
    correct: bool | None


@dataclass(frozen=True, slots=True)
class ChoiceCounts(Record):
    """The forced-choice answers of a trial, counted.

    Discrimination: ``correct`` of ``n`` sets answered correctly. Paired preference:
    ``counts`` (sample -> times chosen), ``correct`` is the count of the more-chosen
    sample (``preferred``), ``n`` the answers that chose a sample, and
    ``no_preference`` the answers that declined (left out of ``n``; see
    :func:`score_choices`). ``target`` is the sample a 2-AFC or 3-AFC answer must
    pick; ``problems`` lists the answers left out and why.
    """

    method: str
    n: int
    correct: int
    counts: dict[str, int]
    no_preference: int
    preferred: str
    target: str
    sets: tuple[ScoredSet, ...]
    problems: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class ForcedChoiceAnalysis(Record):
    """Counts, the difference test and (when planned) the similarity test."""

    method: str
    counts: ChoiceCounts
    preference: Any | None  # paired preference: trials.stats.discrimination.PreferenceCounts
    difference: Any | None  # trials.stats.discrimination difference result
    similarity: Any | None  # trials.stats.discrimination similarity result
    similarity_planned: bool
    alpha: float
    beta: float
    pd: float | None
    note: str = ""
    # replicated panels (a panelist answered more than once): Tarone's test, and the
    # beta-binomial test that replaces the pooled one where it finds overdispersion
    overdispersion: Any | None = None  # trials.stats.replicated.OverdispersionResult
    replicated: Any | None = None  # trials.stats.replicated.ReplicatedDifferenceResult


@dataclass(frozen=True, slots=True)
class AttributeAnalysis(Record):
    """The ANOVA of one rated attribute (and its penalty analysis for a JAR scale)."""

    attribute: str
    kind: str
    low: int
    high: int
    panelists: int
    scores: int
    means: dict[str, float]
    anova: Any | None  # trials.stats.ratings.RatingAnova
    penalty: Any | None  # trials.stats.jar result, JAR attributes only
    relations: tuple[Relation, ...]
    note: str = ""


@dataclass(frozen=True, slots=True)
class RankingAnalysis(Record):
    """The rank test of the ranks, Friedman's or Durbin's (``ranks``: how many were decoded)."""

    panelists: int
    ranks: int
    rank_means: dict[str, float]
    result: Any | None  # trials.stats.ranks result
    note: str = ""


@dataclass(frozen=True, slots=True)
class TrialAnalysis(Record):
    """Everything :func:`analyse` found for one trial.

    ``has_answers`` is False (and ``message`` is ``"no answers yet"``) when no answer
    could be decoded. One of ``choice``, ``attributes``, ``ranking``, ``signal`` is filled,
    by the method's family. ``problems`` names every answer left out and why.
    """

    study_name: str
    method: str
    family: str
    objective: str
    alpha: float
    beta: float
    pd: float | None
    has_answers: bool
    message: str
    panelists_planned: int
    panelists_answered: int
    answers: int
    choice: ForcedChoiceAnalysis | None
    attributes: tuple[AttributeAnalysis, ...]
    ranking: RankingAnalysis | None
    measures: MeasuresSummary
    problems: tuple[str, ...]
    signal: SignalAnalysis | None = None  # A-not-A, same-different
    cata: CataAnalysis | None = None  # check-all-that-apply

    def attribute(self, name: str) -> AttributeAnalysis:
        for a in self.attributes:
            if a.attribute == name:
                return a
        raise KeyError(name)


# --------------------------------------------------------------------------- joining


class _Key:
    """Index of the plan: (session, panelist, code) -> entry, and the sets."""

    def __init__(self, plan: Sequence[PlanEntry]):
        self.by_code: dict[tuple[str, str, str], PlanEntry] = {}
        self.by_panelist_code: dict[tuple[str, str], list[PlanEntry]] = defaultdict(list)
        self.sets: dict[tuple[str, str, int], list[PlanEntry]] = defaultdict(list)
        for e in plan:
            self.by_code[(e.session, e.panelist_code, e.code)] = e
            self.by_panelist_code[(e.panelist_code, e.code)].append(e)
            self.sets[(e.session, e.panelist_code, e.set_index)].append(e)
        for entries in self.sets.values():
            entries.sort(key=lambda e: e.position)

    def find(self, session: str, panelist: str, code: str) -> PlanEntry | None:
        hit = self.by_code.get((session, panelist, code))
        if hit is not None:
            return hit
        same = self.by_panelist_code.get((panelist, code), [])
        return same[0] if len(same) == 1 else None

    def set_of(self, e: PlanEntry) -> list[PlanEntry]:
        return self.sets[(e.session, e.panelist_code, e.set_index)]


def decode_responses(plan: Sequence[PlanEntry], responses: Sequence[Answer]) -> pd.DataFrame:
    """The responses joined to the plan: one row per answer, with the decoded sample.

    Parameters
    ----------
    plan : sequence of trials.model.PlanEntry
    responses : sequence of trials.model.Answer

    Returns
    -------
    pandas.DataFrame
        Columns ``session panelist position code sample role set_index attribute value
        comment mode``. A tetrad choice gives one row per chosen code; an answer whose
        code is not in the plan keeps an empty ``sample``. For the report's appendix
        and for exports: it holds the decoding key, so leader views only.
    """
    key = _Key(plan)
    rows = []
    for r in responses:
        codes = r.code.split() if r.attribute == CHOICE else [r.code.strip()]
        for code in codes or [""]:
            e = key.find(r.session, r.panelist_code, code) if code else None
            rows.append(
                {
                    "session": r.session,
                    "panelist": r.panelist_code,
                    "position": e.position if e else None,
                    "code": code,
                    "sample": e.sample_name if e else "",
                    "role": e.role if e else "",
                    "set_index": e.set_index if e else None,
                    "attribute": r.attribute,
                    "value": r.value,
                    "comment": r.comment,
                    "mode": str(r.mode),
                }
            )
    cols = ["session", "panelist", "position", "code", "sample", "role", "set_index",
            "attribute", "value", "comment", "mode"]
    return pd.DataFrame(rows, columns=cols)


# --------------------------------------------------------------------------- forced choice


def target_sample(study: Trial, plan: Sequence[PlanEntry] = ()) -> str:
    """The sample a target-by-role answer (2-AFC, 3-AFC) must pick; "" for other rules.

    The target is chosen when the trial is set up (``Trial.target_sample``: the sample
    expected to be stronger in the attribute) and is used whatever the order the samples
    are listed in. A trial set up before the target was stored (schema version 3 and
    older) names none; then the registry's role is read from the plan
    (``MethodSpec.target_role``, ``"B"`` for 2-AFC and 3-AFC): the target is the sample
    of the plan's cups with that role, and where the plan holds no such cup the role's
    letter is read as the plan maker (:func:`trials.design.plan.serving_plan`) reads it
    without a target: A is the trial's first sample and B its second.
    """
    spec = get_method(study.method)
    role = spec.target_role
    if spec.scoring is not Scoring.TARGET_BY_ROLE or not role:
        return ""
    chosen = (getattr(study, "target_sample", "") or "").strip()
    if chosen:
        if study.samples and chosen not in {s.name for s in study.samples}:
            raise TrialsError(f"trial {study.name!r}: the target sample {chosen!r} is not "
                              "one of its samples")
        return chosen
    named = {e.sample_name for e in plan if e.role == role}
    if len(named) == 1:
        return named.pop()
    place = "AB".find(role)
    if not named and 0 <= place < len(study.samples):
        return study.samples[place].name
    raise TrialsError(
        f"trial {study.name!r}: cannot tell the target sample of {study.method!r}; "
        f"list two samples or draw a plan whose cups of role {role!r} hold one sample"
    )


def _reference(cups: list[PlanEntry]) -> PlanEntry:
    refs = [e for e in cups if e.role == "R"]
    if len(refs) == 1:
        return refs[0]
    return cups[0]  # the pattern's first letter is the reference (trials.methods)


def _score_one(spec: MethodSpec, cups: list[PlanEntry], chosen: list[PlanEntry],
               target: str) -> tuple[bool | None, str]:
    """(correct, problem): problem is '' when the answer could be scored."""
    rule = spec.scoring
    samples = Counter(e.sample_name for e in cups)
    if spec.set_size and len(cups) != spec.set_size:
        return None, f"the set holds {len(cups)} cups, the method {spec.set_size}"
    if spec.choose == 2:
        if len(chosen) != 2 or chosen[0].code == chosen[1].code:
            return None, f"a {spec.name} answer names two different cups, got {len(chosen)}"
    elif len(chosen) != spec.choose:
        return None, f"expected one chosen cup, got {len(chosen)}"
    pick = chosen[0]
    if rule is Scoring.PAIRS_GROUPED:
        return len({e.sample_name for e in chosen}) == 1, ""
    if rule is Scoring.ODD_ONE_OUT:
        few = spec.choose
        if sorted(samples.values()) != [few, spec.set_size - few]:
            words = {1: "one", 2: "two", 3: "three", 4: "four"}
            many = words.get(spec.set_size - few, str(spec.set_size - few))
            return None, (f"a {spec.name} set must hold {many} cups of one sample "
                          f"and {words.get(few, str(few))} of the other")
        return all(samples[e.sample_name] == few for e in chosen), ""
    if rule is Scoring.MATCH_REFERENCE:
        ref = _reference(cups)
        if pick.code == ref.code:
            return None, f"the chosen cup {pick.code!r} is the reference"
        return pick.sample_name == ref.sample_name, ""
    if rule is Scoring.TARGET_BY_ROLE:
        if samples.get(target, 0) != spec.choose:
            return None, (f"the set does not hold exactly {spec.choose} cup(s) of the "
                          f"target {target!r}")
        return all(e.sample_name == target for e in chosen), ""
    if rule is Scoring.PREFERENCE_COUNT:
        return None, ""
    raise TrialsError(f"no scoring rule for method {spec.name!r}")  # pragma: no cover


def score_choices(study: Trial, plan: Sequence[PlanEntry],
                  responses: Sequence[Answer]) -> ChoiceCounts:
    """Score each forced-choice answer by the method's rule and count.

    Parameters
    ----------
    study : trials.model.Trial
        Its ``method`` picks the rule; its ``target_sample`` is the 2-AFC/3-AFC target.
    plan : sequence of trials.model.PlanEntry
        The decoding key: each cup's code, sample, role and set.
    responses : sequence of trials.model.Answer
        Rows with ``attribute == "choice"`` are counted; others are ignored.

    Returns
    -------
    ChoiceCounts

    Notes
    -----
    Rules, one per method, decided on the decoded samples of the panelist's set (the
    cups of one session and ``set_index``), so they hold whatever letters the design
    gave:

    - triangle (ISO 4120): correct when the chosen cup's sample appears once in the
      set (the odd cup);
    - duo-trio (ISO 10399): correct when the chosen cup holds the reference's sample;
      the reference is the cup with role ``"R"``, else the set's first cup;
    - 2-AFC (ISO 5495) and 3-AFC: correct when the chosen cup holds the target, the
      sample chosen at set-up (:func:`target_sample`), whatever the listing order;
    - tetrad (unspecified): correct when the two chosen cups hold the same sample;
    - specified tetrad: both chosen cups hold the target; two-out-of-five: the two chosen
      cups are the sample served twice (the triangle's rule for a group of two);
    - paired preference: no right answer; choices counted per sample. An answer of
      ``"no preference"`` (allowed by the response format) is counted apart
      (``no_preference``) and left out of ``n`` here; :func:`analyse` then folds them
      in with :func:`trials.stats.discrimination.no_preference_counts` and its
      default rule (split equally between the samples; common practice).

    Answers left out (a code not in the plan, a set of the wrong size, two answers to
    one set) are named in ``problems``; when one set was answered twice, the later
    response in the given order is kept.
    """
    spec = get_method(study.method)
    if not spec.is_forced_choice:
        raise TrialsError(f"method {study.method!r} is not a forced-choice method")
    key = _Key(plan)
    target = target_sample(study, plan)
    problems: list[str] = []
    latest: dict[tuple[str, str, int], tuple[Answer, list[PlanEntry]]] = {}
    no_pref: dict[tuple[str, str], Answer] = {}
    for r in responses:
        if r.attribute != CHOICE:
            continue
        who = f"panelist {r.panelist_code!r}, session {r.session!r}"
        codes = r.code.split()
        if not codes:
            if spec.allows_no_preference and r.value.strip().lower() == NO_PREFERENCE:
                no_pref[(r.session, r.panelist_code)] = r
            else:
                problems.append(f"{who}: an empty choice (value {r.value!r}) left out")
            continue
        entries = [key.find(r.session, r.panelist_code, c) for c in codes]
        missing = [c for c, e in zip(codes, entries) if e is None]
        if missing:
            problems.append(f"{who}: code(s) {missing!r} not in this panelist's plan; left out")
            continue
        set_ids = {(e.session, e.panelist_code, e.set_index) for e in entries}
        if len(set_ids) != 1:
            problems.append(f"{who}: codes {codes!r} come from different sets; left out")
            continue
        sid = set_ids.pop()
        if sid in latest:
            problems.append(f"{who}: set {sid[2]} answered more than once; the later answer kept")
        latest[sid] = (r, entries)
    sets: list[ScoredSet] = []
    for sid, (r, entries) in latest.items():
        no_pref.pop((sid[0], sid[1]), None)
        cups = key.sets[sid]
        correct, problem = _score_one(spec, cups, entries, target)
        if problem:
            problems.append(f"panelist {sid[1]!r}, session {sid[0]!r}: {problem}; left out")
            continue
        sets.append(ScoredSet(sid[0], sid[1], sid[2], r.code,
                              tuple(e.sample_name for e in entries), correct))
    if spec.scoring is Scoring.PREFERENCE_COUNT:
        names = [s.name for s in study.samples] or sorted({e.sample_name for e in plan})
        counts = {n: 0 for n in names}
        for s in sets:
            counts[s.chosen_samples[0]] = counts.get(s.chosen_samples[0], 0) + 1
        preferred = max(counts, key=lambda n: counts[n]) if counts else ""
        top = counts.get(preferred, 0)
        if list(counts.values()).count(top) > 1:
            preferred = ""  # a tie: neither is more chosen
        return ChoiceCounts(spec.name, len(sets), top, counts, len(no_pref), preferred,
                            "", tuple(sets), tuple(problems))
    n_correct = sum(1 for s in sets if s.correct)
    counts = {"correct": n_correct, "incorrect": len(sets) - n_correct}
    return ChoiceCounts(spec.name, len(sets), n_correct, counts, 0, "", target,
                        tuple(sets), tuple(problems))


def planned_similarity(study: Trial) -> bool:
    """Whether the trial was planned as a similarity test.

    A trial says so with ``study.aim == "similarity"``; where ``aim`` is empty, an
    objective that uses the words "similar", "similarity" or "same as" counts as a
    similarity aim. The similarity test then uses the trial's ``pd`` (the largest
    proportion of discriminators that does not matter) and ``beta``.
    """
    aim = (getattr(study, "aim", "") or "").strip().lower()
    if aim:
        return aim == "similarity"
    return bool(SIMILARITY_WORDS.search(study.objective or ""))


def _forced_choice(study: Trial, plan, responses) -> ForcedChoiceAnalysis:
    from trials.stats import discrimination as disc

    counts = score_choices(study, plan, responses)
    similar = planned_similarity(study)
    difference = similarity = preference = None
    notes = []
    correct, n = counts.correct, counts.n
    spec = get_method(study.method)
    if spec.scoring is Scoring.TARGET_BY_ROLE and not (study.target_sample or "").strip():
        notes.append(f"the trial names no target sample; {counts.target!r}, the sample of "
                     f"the plan's role {spec.target_role!r} cups, is taken as the target")
    if spec.scoring is Scoring.PREFERENCE_COUNT and counts.n + counts.no_preference > 0:
        values = list(counts.counts.values()) + [0, 0]
        try:
            preference = disc.no_preference_counts(values[0], values[1], counts.no_preference)
            correct, n = preference.more_chosen, preference.n
        except TrialsError as exc:
            notes.append(str(exc))
            n = 0
    if counts.n + counts.no_preference == 0:
        notes.append(NO_ANSWERS)
    elif n > 0:
        try:
            difference = disc.difference_test(correct, n, method=study.method,
                                              alpha=study.alpha, level=0.95)
        except TrialsError as exc:
            notes.append(f"difference test not run: {exc}")
        if similar:
            if study.pd is None:
                notes.append("a similarity test was planned but the trial states no pd")
            else:
                try:
                    similarity = disc.similarity_test(correct, n,
                                                      method=study.method, pd=study.pd,
                                                      beta=study.beta)
                except TrialsError as exc:
                    notes.append(f"similarity test not run: {exc}")
    over = replicated = None
    if difference is not None:
        over, replicated, similarity, more = replicated_tests(study, counts, similarity)
        notes += more
    return ForcedChoiceAnalysis(study.method, counts, preference, difference, similarity, similar,
                                study.alpha, study.beta, study.pd, "; ".join(notes),
                                over, replicated)


# --------------------------------------------------------------------------- ratings


def _score_frame(study: Trial, plan, responses, attribute: str) -> tuple[pd.DataFrame, list[str]]:
    key = _Key(plan)
    rows, problems = [], []
    for r in responses:
        if r.attribute != attribute:
            continue
        who = f"panelist {r.panelist_code!r}, session {r.session!r}, {attribute!r}"
        e = key.find(r.session, r.panelist_code, r.code.strip())
        if e is None:
            problems.append(f"{who}: code {r.code!r} not in this panelist's plan; left out")
            continue
        try:
            value = float(r.value.strip().replace(",", "."))
        except ValueError:
            problems.append(f"{who}: value {r.value!r} is not a number; left out")
            continue
        rows.append({"panelist": r.panelist_code, "sample": e.sample_name,
                     "session": r.session, "score": value})
    frame = pd.DataFrame(rows, columns=["panelist", "sample", "session", "score"])
    if not frame.empty:
        frame["replicate"] = frame.groupby(["panelist", "sample"]).cumcount() + 1
    return frame, problems


def _rating_means(frame: pd.DataFrame, order: Sequence[str]) -> dict[str, float]:
    means = frame.groupby("sample")["score"].mean()
    return {s: float(means[s]) for s in order if s in means.index}


def _ratings(study: Trial, plan, responses, measures: MeasuresSummary
             ) -> tuple[tuple[AttributeAnalysis, ...], list[str]]:
    order = [s.name for s in study.samples] or list(dict.fromkeys(e.sample_name for e in plan))
    problems: list[str] = []
    frames: dict[str, pd.DataFrame] = {}
    for a in study.attributes:
        frame, probs = _score_frame(study, plan, responses, a.name)
        problems += probs
        frames[a.name] = frame
    declared = {a.name for a in study.attributes}
    undeclared = sorted({r.attribute for r in responses
                         if r.attribute not in declared and r.attribute not in (CHOICE, RANK)})
    if undeclared:
        problems.append(f"answers for attribute(s) {undeclared!r} that the trial does not "
                        "declare; left out")
    hedonic = next((a for a in study.attributes if a.kind == AttributeKind.HEDONIC), None)
    out: list[AttributeAnalysis] = []
    for a in study.attributes:
        frame = frames[a.name]
        means = _rating_means(frame, order) if not frame.empty else {}
        anova = penalty = None
        notes = []
        if frame.empty:
            notes.append(NO_ANSWERS)
        elif frame["sample"].nunique() < 2:
            notes.append("scores for one sample only: nothing to compare")
        elif frame["panelist"].nunique() < 2:
            notes.append("one panelist only: no panelist effect to test against")
        else:
            from trials.stats.ratings import rating_anova

            replicate = "replicate" if frame["replicate"].max() > 1 else None
            try:
                anova = rating_anova(frame, score="score", sample="sample",
                                     panelist="panelist", replicate=replicate,
                                     alpha=study.alpha, low=a.low, high=a.high)
            except TrialsError as exc:
                notes.append(f"ANOVA not run: {exc}")
        if a.kind == AttributeKind.JAR and hedonic is not None and not frame.empty:
            penalty, note = _penalty(a, hedonic, frame, frames[hedonic.name])
            if note:
                notes.append(note)
        relations = ()
        if means and not measures.empty and a.kind != AttributeKind.JAR:
            relations = relate_to_batches(means, measures, outcome=a.name)
        out.append(AttributeAnalysis(a.name, str(a.kind), a.low, a.high,
                                     int(frame["panelist"].nunique()) if not frame.empty else 0,
                                     len(frame), means, anova, penalty, relations,
                                     "; ".join(notes)))
    return tuple(out), problems


def _penalty(jar: Attribute, hedonic: Attribute, jar_frame: pd.DataFrame,
             liking_frame: pd.DataFrame) -> tuple[Any | None, str]:
    """Penalty analysis of one JAR attribute against liking (trials.stats.jar).

    The JAR score and the liking score of the same cup (panelist, sample, session)
    make one row; a panelist who tasted a sample in several sessions counts once per
    session (the panelist column is then panelist / session).
    """
    from trials.stats.jar import jar_penalty

    if liking_frame.empty:
        return None, "penalty analysis not run: no liking scores"
    keys = ["panelist", "sample", "session"]
    both = jar_frame.merge(liking_frame, on=keys, suffixes=("_jar", "_liking"))
    if both.empty:
        return None, "penalty analysis not run: no cup has both scores"
    who = both["panelist"]
    if both.duplicated(["panelist", "sample"]).any():
        who = both["panelist"] + " / " + both["session"]
    data = pd.DataFrame({"panelist": who, "sample": both["sample"],
                         jar.name: both["score_jar"], "liking": both["score_liking"]})
    try:
        return jar_penalty(data, [jar.name], liking="liking", sample="sample",
                           panelist="panelist", low=jar.low, high=jar.high,
                           liking_low=hedonic.low, liking_high=hedonic.high), ""
    except TrialsError as exc:
        return None, f"penalty analysis not run: {exc}"


# --------------------------------------------------------------------------- ranking


def _ranking(study: Trial, plan, responses) -> tuple[RankingAnalysis, list[str]]:
    frame, problems = _score_frame(study, plan, responses, RANK)
    if frame.empty:
        return RankingAnalysis(0, 0, {}, None, NO_ANSWERS), problems
    frame = frame.rename(columns={"score": "rank"})
    if frame["replicate"].max() > 1:  # a panelist ranked in more than one session
        frame["panelist"] = frame["panelist"] + " / " + frame["session"]
    order = [s.name for s in study.samples] or list(dict.fromkeys(frame["sample"]))
    m = frame.groupby("sample")["rank"].mean()
    rank_means = {s: float(m[s]) for s in order if s in m.index}
    n_pan = int(frame["panelist"].nunique())
    if frame["sample"].nunique() < 2 or n_pan < 2:
        return RankingAnalysis(n_pan, len(frame), rank_means, None,
                               "too few panelists or samples for a rank test"), problems
    from trials.stats.ranks import rank_test

    try:
        res = rank_test(frame, rank="rank", sample="sample", panelist="panelist",
                        alpha=study.alpha)
    except TrialsError as exc:
        return RankingAnalysis(n_pan, len(frame), rank_means, None,
                               f"rank test not run: {exc}"), problems
    return RankingAnalysis(n_pan, len(frame), rank_means, res), problems


# --------------------------------------------------------------------------- entry point


def analyse(study: Trial, plan: Sequence[PlanEntry], responses: Sequence[Answer], *,
            batches: Iterable[Batch] = ()) -> TrialAnalysis:
    """Analyse one trial from its plan, answers and batches.

    Parameters
    ----------
    study : trials.model.Trial
        Method, risks (``alpha``, ``beta``, ``pd``), samples, the 2-AFC/3-AFC target
        (``target_sample``) and attributes (ratings).
    plan : sequence of trials.model.PlanEntry
        The serving plan: the decoding key.
    responses : sequence of trials.model.Answer
        One row per answer, as documented on :class:`trials.model.Answer`.
    batches : iterable of trials.model.Batch
        Their numeric measures and settings are summarised and, for ratings, related
        to the sample means.

    Returns
    -------
    TrialAnalysis
        With ``has_answers=False`` and ``message="no answers yet"`` when no answer
        could be decoded.

    Notes
    -----
    The statistics are those of :mod:`trials.stats`; see :func:`score_choices` for the
    scoring rules and :func:`planned_similarity` for when the similarity test runs.
    Answers that cannot be decoded are left out and listed in ``problems``.
    """
    spec = get_method(study.method)
    measures = summarise_measures(list(batches))
    planned = len({e.panelist_code for e in plan})
    choice = ranking = signal = cata = None
    attributes: tuple[AttributeAnalysis, ...] = ()
    problems: list[str] = []
    if spec.is_forced_choice:
        choice = _forced_choice(study, plan, responses)
        problems += choice.counts.problems
        answered = {s.panelist_code for s in choice.counts.sets}
        answers = choice.counts.n + choice.counts.no_preference
    elif spec.family in (Family.SIGNAL, Family.CATA):  # modules of their own
        extra = (analyse_signal if spec.family == Family.SIGNAL else analyse_cata)(
            study, plan, responses)
        signal, cata = (extra, None) if spec.family == Family.SIGNAL else (None, extra)
        problems, answers, answered = list(extra.problems), extra.answers, set(extra.panelists)
    elif spec.family == Family.RATING:
        attributes, problems = _ratings(study, plan, responses, measures)
        names = {a.name for a in study.attributes}
        used = [r for r in responses if r.attribute in names]
        answers = sum(a.scores for a in attributes)
        answered = {r.panelist_code for r in used} if answers else set()
    else:
        ranking, problems = _ranking(study, plan, responses)
        answers = ranking.ranks
        answered = {r.panelist_code for r in responses if r.attribute == RANK} if answers else set()
    has = answers > 0
    message = "" if has else NO_ANSWERS
    return TrialAnalysis(study.name, spec.name, str(spec.family), study.objective,
                         study.alpha, study.beta, study.pd, has, message, planned,
                         len(answered), max(answers, 0), choice, attributes, ranking,
                         measures, tuple(problems), signal, cata)
