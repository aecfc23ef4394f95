"""Signal-detection trials (A-not-A, same-different) in a trial's analysis: decode each
answer through the plan, count the 2 x 2 response table, test it and give d'.

Pure: used by :func:`trials.analysis.analyse`. Which sets are the signal comes from the
registry (``MethodSpec.scoring``): for A-not-A the set whose cup carries role B (the
"not A" sample; role A is the learned sample, the trial's first, its control), for
same-different a pair that holds both samples. The signal answer is the method's second
response (``"not A"``, ``"different"``). The statistics are those of
:mod:`trials.stats.signal`.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass

from trials.answers import RESPONSE
from trials.methods import MethodSpec, Scoring, get_method
from trials.model import Answer, PlanEntry, Record, Trial
from trials.stats.signal import SignalResult, signal_test

SIGNAL_SETS = {
    Scoring.SIGNAL_ROLE_B: "the sample that is not A",
    Scoring.SIGNAL_MIXED_PAIR: "pairs of two different samples",
}
NOISE_SETS = {
    Scoring.SIGNAL_ROLE_B: "sample A",
    Scoring.SIGNAL_MIXED_PAIR: "pairs of one sample twice",
}


@dataclass(frozen=True, slots=True)
class SignalAnalysis(Record):
    """The response table of a signal-detection trial and its test.

    ``hits`` of ``n_signal`` signal sets got the signal answer, ``false_alarms`` of
    ``n_noise`` noise sets did; ``signal_sets`` and ``noise_sets`` say in words which
    sets those are; ``result`` is None until both kinds of set are answered.
    """

    method: str
    responses: tuple[str, ...]
    signal_sets: str
    noise_sets: str
    hits: int
    n_signal: int
    false_alarms: int
    n_noise: int
    panelists: tuple[str, ...]
    result: SignalResult | None
    problems: tuple[str, ...]
    note: str

    @property
    def answers(self) -> int:
        return self.n_signal + self.n_noise


def is_signal_set(spec: MethodSpec, cups: Sequence[PlanEntry]) -> bool:
    """Whether a set is a signal set by the method's rule (see the module docstring)."""
    if spec.scoring is Scoring.SIGNAL_ROLE_B:
        return any(e.role == "B" for e in cups)
    return len({e.sample_name for e in cups}) > 1


def analyse_signal(study: Trial, plan: Sequence[PlanEntry],
                   responses: Sequence[Answer]) -> SignalAnalysis:
    """Count the response table of a signal-detection trial and test it.

    Parameters
    ----------
    study : trials.model.Trial
        Its method (A-not-A or same-different) and ``alpha``.
    plan : sequence of trials.model.PlanEntry
        The decoding key.
    responses : sequence of trials.model.Answer
        Answers with attribute ``"response"``; others are ignored.

    Returns
    -------
    SignalAnalysis

    Notes
    -----
    One answer per set (a later answer to the same set replaces an earlier one, as the
    store keeps them). Fisher's exact one-sided test decides
    (:func:`trials.stats.signal.signal_test`). Where a panelist answered several sets,
    the answers are counted as independent, as the test assumes; the note says so.
    """
    spec = get_method(study.method)
    sets: dict[tuple[str, str, int], list[PlanEntry]] = defaultdict(list)
    where: dict[tuple[str, str, str], tuple[str, str, int]] = {}
    for e in plan:
        key = (e.session, e.panelist_code, e.set_index)
        sets[key].append(e)
        where[(e.session, e.panelist_code, e.code)] = key
    signal_answer = spec.responses[1].lower()
    noise_answer = spec.responses[0].lower()
    said: dict[tuple[str, str, int], bool] = {}
    problems = []
    for r in responses:
        if r.attribute != RESPONSE:
            continue
        key = where.get((r.session, r.panelist_code, (r.code.split() or [""])[0]))
        value = " ".join(str(r.value).lower().split())
        if key is None:
            problems.append(f"panelist {r.panelist_code!r}, session {r.session!r}: code "
                            f"{r.code!r} is not in the serving plan")
        elif value not in (signal_answer, noise_answer):
            problems.append(f"panelist {r.panelist_code!r}, session {r.session!r}: answer "
                            f"{r.value!r} is neither {spec.responses[0]!r} nor "
                            f"{spec.responses[1]!r}")
        else:
            said[key] = value == signal_answer
    hits = n_signal = false_alarms = n_noise = 0
    per_panelist: dict[str, int] = defaultdict(int)
    for key, answer in said.items():
        per_panelist[key[1]] += 1
        if is_signal_set(spec, sets[key]):
            n_signal += 1
            hits += answer
        else:
            n_noise += 1
            false_alarms += answer
    notes = []
    if any(v > 1 for v in per_panelist.values()):
        notes.append("some panelists answered several sets: their answers are counted as "
                     "independent, which overstates the evidence where panelists differ")
    result = None
    if n_signal and n_noise:
        result = signal_test(hits, n_signal, false_alarms, n_noise, method=spec.name,
                             model=spec.model, alpha=study.alpha)
    elif said:
        notes.append(f"no decision yet: answers are needed to both {SIGNAL_SETS[spec.scoring]} "
                     f"and {NOISE_SETS[spec.scoring]}")
    return SignalAnalysis(
        spec.name, tuple(spec.responses), SIGNAL_SETS[spec.scoring], NOISE_SETS[spec.scoring],
        hits, n_signal, false_alarms, n_noise, tuple(per_panelist), result, tuple(problems),
        "; ".join(notes))
