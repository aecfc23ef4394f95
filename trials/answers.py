"""Answers against the serving plan: decode, check, count what is still expected.

Pure: plain records in (:class:`trials.model.PlanEntry`, :class:`trials.model.Answer`,
:class:`trials.model.Attribute`, the method's :class:`trials.methods.MethodSpec`),
plain records or a DataFrame out. No database, no screen. The service loads the
plan and the answers on file and calls these; the screens call them for what they
show (the tasting steps, the paper-entry grid).

- :class:`PlanKey` decodes a code for one panelist in one session (cup -> sample,
  role, set, position).
- :class:`AnswerChecker` checks one answer and returns it in the form the store keeps
  (:class:`CheckedAnswer`), or raises :class:`trials.errors.AnswerError` naming the
  field at fault and what was expected. The answer's shape comes from the registry:
  how many codes one answer names (``choose``), whether "no preference" is an answer
  (``allows_no_preference``), whether the first cup is a reference that may not be
  chosen (``reference_first``).
- :func:`expected_answers`, :func:`answer_progress` and :func:`tasting_steps` count
  what a panelist still has to answer.
- :func:`paper_columns`, :func:`paper_sheet`, :func:`sheet_answers` and
  :func:`sheet_problems` are the paper-entry grid.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import pandas as pd

from trials.errors import AnswerError
from trials.methods import Family, MethodSpec, get_method
from trials.model import Answer, Attribute, AttributeKind, PlanEntry, Record, Trial

CHOICE = "choice"
RANK = "rank"
RESPONSE = "response"  # a signal-detection answer: one of the method's two responses
NO_PREFERENCE = "no preference"

# --------------------------------------------------------------------------- the key


@dataclass(frozen=True, slots=True)
class PlanKey:
    """The decoding key: ``(session, panelist code) -> {code: PlanEntry}``.

    Build it with :meth:`of` from the plan's entries (all of a trial, or one
    panelist's). ``panelists`` are the panelists with at least one cup, in plan order.
    """

    cups: Mapping[tuple[str, str], Mapping[str, PlanEntry]]
    panelists: tuple[str, ...]

    @classmethod
    def of(cls, entries: Iterable[PlanEntry]) -> PlanKey:
        cups: dict[tuple[str, str], dict[str, PlanEntry]] = defaultdict(dict)
        for e in entries:
            cups[(str(e.session), str(e.panelist_code))][str(e.code)] = e
        panelists = tuple(dict.fromkeys(k[1] for k in cups))
        return cls(dict(cups), panelists)

    def served(self, session: str, panelist: str) -> Mapping[str, PlanEntry]:
        """The cups served to ``panelist`` in ``session`` by code ({} when none)."""
        return self.cups.get((session, panelist), {})

    def find(self, session: str, panelist: str, code: str) -> PlanEntry | None:
        """The cup marked ``code`` for this panelist and session, or None."""
        return self.served(session, panelist).get(code)

    def sets(self, session: str, panelist: str) -> dict[int, tuple[PlanEntry, ...]]:
        """This panelist's sets in the session: set index -> cups in serving order."""
        out: dict[int, list[PlanEntry]] = defaultdict(list)
        for e in self.served(session, panelist).values():
            out[e.set_index].append(e)
        return {k: tuple(sorted(v, key=lambda e: e.position)) for k, v in sorted(out.items())}


# --------------------------------------------------------------------------- one answer


@dataclass(frozen=True, slots=True)
class CheckedAnswer(Record):
    """One answer as the store keeps it.

    ``question`` identifies what was asked, so that the same question answered again
    replaces the earlier answer: ``"choice:<set index>"`` for a forced choice,
    ``"<code>:rank"`` for a rank, ``"<code>:<attribute>"`` for a score. ``code`` is the
    chosen code (a tetrad's two codes in serving order, separated by a space; empty
    with "no preference"), ``value`` the score or rank as a whole number in text, or
    ``"no preference"``, or empty for a chosen code.
    """

    session: str
    panelist: str
    question: str
    code: str
    attribute: str
    value: str


def whole_number(value: str, low: int, high: int) -> int:
    """``value`` as a whole number from ``low`` to ``high``; else :class:`AnswerError`
    on column ``value`` quoting the range and the value."""
    try:
        x = float(value)
    except ValueError:
        x = math.nan
    if not math.isfinite(x) or x != int(x) or not low <= x <= high:
        raise AnswerError("value", f"expected a whole number from {low} to {high}, got {value!r}")
    return int(x)


@dataclass(frozen=True, slots=True)
class AnswerChecker:
    """Checks answers to one trial against its plan, its method and its scales.

    Parameters
    ----------
    spec : MethodSpec
        The trial's method.
    key : PlanKey
        The serving plan (all of it, or the one panelist whose answers are checked).
    sessions : tuple of str
        Every session of the trial, in order (a session without cups is still named in
        the error for an unknown session).
    attributes : mapping of str to Attribute
        The trial's rated attributes by name (ratings).
    """

    spec: MethodSpec
    key: PlanKey
    sessions: tuple[str, ...]
    attributes: Mapping[str, Attribute]

    @classmethod
    def for_trial(cls, study: Trial, plan: Iterable[PlanEntry],
                  sessions: Sequence[str] | None = None) -> AnswerChecker:
        """The checker of ``study``; ``sessions`` default to the plan's, in plan order."""
        entries = list(plan)
        names = (tuple(str(x) for x in sessions) if sessions is not None
                 else tuple(dict.fromkeys(str(e.session) for e in entries)))
        return cls(get_method(study.method), PlanKey.of(entries), names,
                   {a.name: a for a in study.attributes})

    def check(self, session: str, panelist: str, code: str, attribute: str,
              value: Any) -> CheckedAnswer:
        """Check one answer (all fields as text; surrounding spaces are ignored).

        Raises
        ------
        trials.errors.AnswerError
            Naming the column at fault (``panelist``, ``session``, ``code``,
            ``attribute``, ``value``) and what was expected.
        """
        session, panelist = str(session).strip(), str(panelist).strip()
        code = str(code or "").strip()
        attribute = str(attribute or "").strip()
        value = "" if value is None else str(value).strip()
        if panelist not in self.key.panelists:
            raise AnswerError("panelist",
                              f"panelist {panelist!r} has no serving plan in this trial")
        if session not in self.sessions:
            known = ", ".join(repr(x) for x in self.sessions)
            raise AnswerError("session", f"expected one of the sessions {known}, got {session!r}")
        cups = self.key.served(session, panelist)
        if not cups:
            raise AnswerError("session",
                              f"panelist {panelist!r} is not served in session {session!r}")
        spec = self.spec

        def cup(c: str) -> PlanEntry:
            if c not in cups:
                raise AnswerError("code", f"{c!r} is not a code served to panelist "
                                          f"{panelist!r} in session {session!r}")
            return cups[c]

        def answer(question: str, code: str, value: str) -> CheckedAnswer:
            return CheckedAnswer(session, panelist, question, code, attribute, value)

        if spec.family is Family.SIGNAL:
            return _check_response(spec, cups, session, panelist, code, attribute, value)
        if spec.is_forced_choice:
            if attribute != CHOICE:
                raise AnswerError("attribute", f"a {spec.name} trial takes attribute "
                                               f"'choice', got {attribute!r}")
            if value:
                if spec.allows_no_preference and value.lower() == NO_PREFERENCE:
                    if code:
                        raise AnswerError("code",
                                          f"give no code with 'no preference', got {code!r}")
                    sets = sorted({c.set_index for c in cups.values()})
                    if len(sets) != 1:
                        raise AnswerError("code", "this panelist has several sets; 'no "
                                                  "preference' needs one set per session")
                    return answer(f"choice:{sets[0]}", "", NO_PREFERENCE)
                allowed = "empty or 'no preference'" if spec.allows_no_preference else "empty"
                raise AnswerError("value", f"expected {allowed} for a choice, got {value!r}")
            picked = code.split()
            want = spec.choose
            if len(picked) != want:
                what = (f"the {_count(want)} codes of the chosen group" if want > 1
                        else "one code")
                raise AnswerError("code", f"expected {what}, got {code!r}")
            chosen = [cup(c) for c in picked]
            if len({c.set_index for c in chosen}) != 1 or len(set(picked)) != want:
                raise AnswerError("code", f"expected {_count(want)} different codes of the "
                                          f"same set, got {code!r}")
            if spec.reference_first and any(c.role == "R" for c in chosen):
                raise AnswerError("code", f"{code!r} is the reference; choose one of the "
                                          "coded samples")
            chosen.sort(key=lambda c: c.position)
            return answer(f"choice:{chosen[0].set_index}", " ".join(c.code for c in chosen), "")
        if not code:
            raise AnswerError("code", "a code is required")
        c = cup(code)
        if spec.family is Family.RANKING:
            if attribute != RANK:
                raise AnswerError("attribute",
                                  f"a ranking trial takes attribute 'rank', got {attribute!r}")
            k = sum(1 for x in cups.values() if x.set_index == c.set_index)
            return answer(f"{code}:rank", code, str(whole_number(value, 1, k)))
        attr = self.attributes.get(attribute)
        if attr is None:
            known = ", ".join(repr(a) for a in self.attributes) or "none"
            raise AnswerError("attribute", f"expected one of the trial's attributes {known}, "
                                           f"got {attribute!r}")
        return answer(f"{code}:{attribute}", code,
                      str(whole_number(value, attr.low, attr.high)))

    def set_of(self, answer: CheckedAnswer) -> int:
        """The set index of a checked answer's (first) code; for "no preference", the
        panelist's one set."""
        first = answer.code.split()[0] if answer.code else ""
        cup = self.key.find(answer.session, answer.panelist, first)
        if cup is not None:
            return cup.set_index
        return min((c.set_index for c in self.key.served(answer.session, answer.panelist).values()),
                   default=0)


def response_value(spec: MethodSpec, value: str) -> str:
    """``value`` as one of a signal-detection method's responses, in the registry's
    spelling (case and inner spaces ignored); else :class:`AnswerError` on ``value``."""
    wanted = {" ".join(r.lower().split()): r for r in spec.responses}
    got = wanted.get(" ".join(str(value).lower().split()))
    if got is None:
        known = " or ".join(repr(r) for r in spec.responses)
        raise AnswerError("value", f"expected {known}, got {value!r}")
    return got


def _check_response(spec: MethodSpec, cups: Mapping[str, PlanEntry], session: str,
                    panelist: str, code: str, attribute: str, value: str) -> CheckedAnswer:
    """A signal-detection answer: any code of the set (kept as the set's first code in
    serving order) and one of the method's two responses."""
    if attribute != RESPONSE:
        raise AnswerError("attribute", f"a {spec.name} trial takes attribute "
                                       f"{RESPONSE!r}, got {attribute!r}")
    picked = code.split()
    if not picked:
        raise AnswerError("code", "a code of the set is required")
    found = [cups.get(c) for c in picked]
    if any(c is None for c in found):
        raise AnswerError("code", f"{code!r} is not a code served to panelist {panelist!r} "
                                  f"in session {session!r}")
    sets = {c.set_index for c in found if c is not None}
    if len(sets) != 1:
        raise AnswerError("code", f"expected codes of one set, got {code!r}")
    k = sets.pop()
    first = min((c for c in cups.values() if c.set_index == k), key=lambda c: c.position)
    return CheckedAnswer(session, panelist, f"{RESPONSE}:{k}", first.code, RESPONSE,
                         response_value(spec, value))


def _count(n: int) -> str:
    return {1: "one", 2: "two", 3: "three"}.get(n, str(n))


# --------------------------------------------------------------------------- what is expected


def expected_answers(spec: MethodSpec, cups_per_set: Iterable[int], *, attributes: int) -> int:
    """How many answers a panelist owes for sets of the given sizes.

    Forced choice: one per set. Rating: one per cup and attribute. Ranking: one rank
    per cup.
    """
    sizes = list(cups_per_set)
    if spec.scores_each_cup:
        return sum(sizes) * attributes
    if spec.family is Family.RANKING:
        return sum(sizes)
    return len(sizes)


def answer_progress(spec: MethodSpec, plan: Iterable[PlanEntry], responses: Iterable[Answer],
                    *, attributes: int) -> pd.DataFrame:
    """Answers on file against answers expected, per session and panelist.

    Columns ``session panelist expected answered``, sorted by session and panelist;
    one row per panelist and session of the plan.
    """
    sizes: dict[tuple[str, str], dict[int, int]] = defaultdict(lambda: defaultdict(int))
    for e in plan:
        sizes[(e.session, e.panelist_code)][e.set_index] += 1
    answered: dict[tuple[str, str], int] = defaultdict(int)
    for r in responses:
        answered[(r.session, r.panelist_code)] += 1
    rows = [{"session": k[0], "panelist": k[1],
             "expected": expected_answers(spec, v.values(), attributes=attributes),
             "answered": answered.get(k, 0)}
            for k, v in sorted(sizes.items())]
    return pd.DataFrame(rows, columns=["session", "panelist", "expected", "answered"])


@dataclass(frozen=True, slots=True)
class Step(Record):
    """One step of the tasting screen.

    ``kind`` is ``"choose"`` (one forced-choice set), ``"rate"`` (one cup, every
    attribute), ``"rank"`` (one set, every cup) or ``"respond"`` (one signal-detection
    set: one of the method's two responses). ``codes`` are the set's codes in
    serving order; for ``"rate"``, ``position`` is the cup's 0-based place in the set
    and ``code`` its code. ``done`` says whether the step is answered.
    """

    kind: str
    session: str
    set_index: int
    codes: tuple[str, ...]
    position: int | None
    code: str
    done: bool


def tasting_steps(spec: MethodSpec, sets: Sequence[Any], answers: Sequence[Any],
                  attributes: Sequence[str]) -> tuple[Step, ...]:
    """Every step of a panelist's ballot in serving order, with whether it is answered.

    ``sets`` have ``session``, ``set_index`` and ``codes`` (serving order);
    ``answers`` have ``session``, ``code``, ``attribute`` and ``value`` (as the
    service's ballot gives them). A forced-choice set is answered when a choice names
    one of its codes, or (where the method allows it) says "no preference".
    """
    given = {(a.session, a.code, a.attribute) for a in answers}
    steps: list[Step] = []
    if spec.scores_each_cup:
        for s in sets:
            for pos, code in enumerate(s.codes):
                done = all((s.session, code, a) in given for a in attributes)
                steps.append(Step("rate", s.session, s.set_index, tuple(s.codes), pos, code, done))
    elif spec.family is Family.RANKING:
        for s in sets:
            done = all((s.session, code, RANK) in given for code in s.codes)
            steps.append(Step("rank", s.session, s.set_index, tuple(s.codes), None, "", done))
    elif spec.family is Family.SIGNAL:
        for s in sets:
            done = any((s.session, code, RESPONSE) in given for code in s.codes)
            steps.append(Step("respond", s.session, s.set_index, tuple(s.codes), None, "",
                              done))
    else:
        chosen = chosen_sets(spec, sets, answers)
        for s in sets:
            steps.append(Step("choose", s.session, s.set_index, tuple(s.codes), None, "",
                              (s.session, s.set_index) in chosen))
    return tuple(steps)


def chosen_sets(spec: MethodSpec, sets: Sequence[Any],
                answers: Sequence[Any]) -> dict[tuple[str, int], str]:
    """(session, set index) -> the chosen codes (or "no preference") of each answered
    forced-choice set."""
    chosen: dict[tuple[str, int], str] = {}
    for a in answers:
        if a.attribute != CHOICE:
            continue
        declined = spec.allows_no_preference and not a.code and a.value == NO_PREFERENCE
        for s in sets:
            if s.session == a.session and (set(a.code.split()) & set(s.codes) or declined):
                chosen[(s.session, s.set_index)] = a.code or NO_PREFERENCE
    return chosen


def choice_options(spec: MethodSpec, codes: Sequence[str]) -> tuple[str, tuple[str, ...]]:
    """(reference code or "", the codes a panelist may choose) of one set in serving
    order: where the method serves a reference first, it is not a choice."""
    if spec.reference_first and codes:
        return codes[0], tuple(codes[1:])
    return "", tuple(codes)


def scale_points(attr: Attribute) -> tuple[tuple[int, str], ...]:
    """The points of ``attr``'s scale, low to high (left to right, as the paper ballot
    prints them), each with its words: every point's when the attribute has one anchor
    per point, else the two ends' (the points between have none)."""
    points = list(range(attr.low, attr.high + 1))
    anchors = tuple(attr.anchors)
    if len(anchors) == len(points):
        return tuple(zip(points, anchors, strict=True))
    words = {}
    if len(anchors) == 2:
        words = {attr.low: anchors[0], attr.high: anchors[1]}
    return tuple((p, words.get(p, "")) for p in points)


def rank_wording(attr: Attribute | None, cups: int) -> str:
    """What rank 1 and the last rank mean, as the paper ballot words it: the sample liked
    most (a hedonic attribute, or none), else the one with the most of the attribute."""
    if attr is None or AttributeKind(attr.kind) is AttributeKind.HEDONIC:
        what = "Rank 1 = the sample you like most"
    else:
        what = f"Rank 1 = the sample with the most {attr.name.lower()}"
    return f"{what}, rank {cups} = the least. Use each rank once."


def comment_question(spec: MethodSpec, step: Step, code: str,
                     attributes: Sequence[str]) -> str:
    """The answer that holds the comment on cup ``code`` of ``step``: the set's choice
    (forced choice: one comment for the set), the set's response (signal detection), the
    cup's rank, or the cup's score on the first attribute (rating). Questions as
    :class:`CheckedAnswer` names them."""
    if step.kind == "choose":
        return f"{CHOICE}:{step.set_index}"
    if step.kind == "respond":
        return f"{RESPONSE}:{step.set_index}"
    if spec.family is Family.RANKING:
        return f"{code}:{RANK}"
    return f"{code}:{attributes[0]}"


def step_answers(step: Step, answers: Sequence[Any],
                 attributes: Sequence[str]) -> tuple[tuple[str, str], ...]:
    """What this panelist gave in ``step``, as (code or attribute, value) pairs for a
    review: a choice's code(s) or "no preference"; a cup's score per attribute; each
    cup's rank. Only the panelist's own answers and the blinding codes."""
    mine = [a for a in answers if a.session == step.session]
    if step.kind == "choose":
        for a in mine:
            if a.attribute == CHOICE and (set(a.code.split()) & set(step.codes)
                                          or (not a.code and a.value == NO_PREFERENCE)):
                return (("chosen", a.code or NO_PREFERENCE),)
        return ()
    if step.kind == "rate":
        got = {a.attribute: a.value for a in mine if a.code == step.code}
        return tuple((name, got[name]) for name in attributes if name in got)
    if step.kind == "respond":
        return tuple((RESPONSE, a.value) for a in mine
                     if a.attribute == RESPONSE and a.code in step.codes)[:1]
    ranks = {a.code: a.value for a in mine if a.attribute == RANK}
    return tuple((c, ranks[c]) for c in step.codes if c in ranks)


def step_comments(step: Step, answers: Sequence[Any]) -> tuple[str, ...]:
    """The panelist's comments on the cups of ``step`` (see :func:`comment_question`)."""
    def mine(a: Any) -> bool:
        if a.session != step.session or not a.comment:
            return False
        if step.kind == "choose":
            return a.attribute == CHOICE and bool(set(a.code.split()) & set(step.codes)
                                                  or not a.code)
        if step.kind == "rate":
            return a.code == step.code
        if step.kind == "respond":
            return a.attribute == RESPONSE and a.code in step.codes
        return a.attribute == RANK and a.code in step.codes

    return tuple(a.comment for a in answers if mine(a))


# --------------------------------------------------------------------------- paper entry


def paper_columns(spec: MethodSpec, attributes: Sequence[str] = ()) -> tuple[str, ...]:
    """The paper-entry grid's columns: the registry's, then (ratings) one per attribute."""
    extra = tuple(attributes) if spec.scores_each_cup else ()
    return tuple(spec.paper_columns) + extra


def _score_names(spec: MethodSpec, attributes: Sequence[str]) -> list[str]:
    return list(attributes) if spec.scores_each_cup else [RANK]


def paper_sheet(spec: MethodSpec, plan: Sequence[PlanEntry], responses: Iterable[Answer],
                attributes: Sequence[str] = (), *, as_text: bool = False) -> pd.DataFrame:
    """The paper-entry grid of one session's plan, filled with the answers on file.

    Forced choice: one row per panelist and set, columns ``panelist set cups chosen``
    (plus ``no_preference`` where the method allows it). Rating: one row per cup in
    plan order, columns ``panelist position code`` and one per attribute (Float64).
    Ranking: one row per cup, columns ``panelist position code rank``. Codes are the
    blinding codes only. ``responses`` should be the session's answers.

    A row is known by its key (:func:`sheet_key`: the panelist and the set, or the
    panelist and the cup's code), never by its place in the grid. With ``as_text`` the
    score columns hold text ("6", or "" for none), so that an entry grid takes any
    typing and :func:`sheet_problems` can refuse a bad cell by name instead of the
    grid dropping it.
    """
    got = list(responses)
    columns = list(paper_columns(spec, attributes))
    if spec.family is Family.SIGNAL:
        return _response_sheet(plan, got, columns)
    if spec.is_forced_choice:
        chosen: dict[tuple[str, int], Answer] = {}
        cups: dict[tuple[str, int], list[PlanEntry]] = defaultdict(list)
        for e in plan:
            cups[(e.panelist_code, e.set_index)].append(e)
        code_set = {(e.panelist_code, e.code): e.set_index for e in plan}
        for r in got:
            first = r.code.split()[0] if r.code.split() else ""
            chosen[(r.panelist_code, code_set.get((r.panelist_code, first), 0))] = r
        rows = []
        for (p, k), items in sorted(cups.items()):
            given = chosen.get((p, k))
            row = {"panelist": p, "set": k + 1,
                   "cups": " ".join(e.code for e in sorted(items, key=lambda e: e.position)),
                   "chosen": given.code if given else ""}
            if spec.allows_no_preference:
                row["no_preference"] = bool(given and given.value == NO_PREFERENCE)
            rows.append(row)
        return pd.DataFrame(rows, columns=columns)
    names = _score_names(spec, attributes)
    have = {(r.panelist_code, r.code, r.attribute): r.value for r in got}
    rows = []
    for e in plan:
        row = {"panelist": e.panelist_code, "position": e.position, "code": e.code}
        for a in names:
            v = have.get((e.panelist_code, e.code, a))
            if as_text:
                row[a] = "" if v in (None, "") else str(v)
            else:
                row[a] = float(v) if v not in (None, "") else None
        rows.append(row)
    frame = pd.DataFrame(rows, columns=columns)
    for a in names:
        frame[a] = frame[a].astype("string" if as_text else "Float64")
    return frame


def sheet_key(spec: MethodSpec, row: Mapping[str, Any]) -> tuple[str, str]:
    """The key of a paper-grid row: (panelist code, set number) for a forced choice,
    (panelist code, cup code) for a rating or a ranking. Rows are matched by key, so a
    grid sorted or filtered on the screen still lands every value on its own ballot."""
    panelist = str(row.get("panelist") or "").strip()
    if spec.is_forced_choice or spec.family is Family.SIGNAL:
        return panelist, str(row.get("set") or "").strip()
    return panelist, str(row.get("code") or "").strip()
def _response_sheet(plan: Sequence[PlanEntry], got: list[Answer],
                    columns: list[str]) -> pd.DataFrame:
    """Signal detection: one row per panelist and set, ``panelist set cups response``."""
    cups: dict[tuple[str, int], list[PlanEntry]] = defaultdict(list)
    for e in plan:
        cups[(e.panelist_code, e.set_index)].append(e)
    where = {(e.panelist_code, e.code): e.set_index for e in plan}
    said = {(r.panelist_code, where.get((r.panelist_code, r.code), -1)): r.value
            for r in got if r.attribute == RESPONSE}
    rows = [{"panelist": p, "set": k + 1,
             "cups": " ".join(e.code for e in sorted(items, key=lambda e: e.position)),
             "response": said.get((p, k), "")}
            for (p, k), items in sorted(cups.items())]
    return pd.DataFrame(rows, columns=columns)


def _blank(v: Any) -> bool:
    return v is None or v is pd.NA or (isinstance(v, float) and math.isnan(v)) or not str(v).strip()


def _cell(v: Any) -> str:
    """A score cell as text: a whole float loses its ``.0``, text is stripped."""
    if isinstance(v, float) and v == int(v):
        return str(int(v))
    return str(v).strip()


def sheet_answers(spec: MethodSpec, session: str, frame: pd.DataFrame,
                  attributes: Sequence[str] = ()) -> list[tuple[int, dict[str, Any]]]:
    """The answers a paper grid holds, as (0-based grid row, answer fields); blank cells
    are skipped. The fields are those of :meth:`AnswerChecker.check` plus ``column``
    (the grid column the answer came from) and ``key`` (:func:`sheet_key`)."""
    out: list[tuple[int, dict[str, Any]]] = []
    for i, rec in enumerate(frame.to_dict("records")):
        panelist = str(rec.get("panelist") or "").strip()
        key = sheet_key(spec, rec)
        if spec.family is Family.SIGNAL:
            said = rec.get("response")
            if not _blank(said):
                first = (str(rec.get("cups") or "").split() or [""])[0]
                out.append((i, {"session": session, "panelist": panelist, "code": first,
                                "attribute": RESPONSE, "value": str(said).strip(),
                                "column": "response", "key": key}))
            continue
        if spec.is_forced_choice:
            code = " ".join(str(rec.get("chosen") or "").split())
            declined = rec.get("no_preference")
            if spec.allows_no_preference and not _blank(declined) and bool(declined):
                out.append((i, {"session": session, "panelist": panelist, "code": code,
                                "attribute": CHOICE, "value": NO_PREFERENCE,
                                "column": "no_preference", "key": key}))
            elif code:
                out.append((i, {"session": session, "panelist": panelist, "code": code,
                                "attribute": CHOICE, "value": "", "column": "chosen",
                                "key": key}))
            continue
        for a in _score_names(spec, attributes):
            v = rec.get(a)
            if _blank(v):
                continue
            out.append((i, {"session": session, "panelist": panelist,
                            "code": key[1], "attribute": a, "value": _cell(v), "column": a,
                            "key": key}))
    return out


def _where(spec: MethodSpec, key: tuple[str, str]) -> str:
    """A grid row in words, for a message."""
    what = "set" if spec.is_forced_choice else "code"
    shown = key[1] if spec.is_forced_choice else repr(key[1])
    return f"panelist {key[0]!r}, {what} {shown}"


def sheet_problems(checker: AnswerChecker, session: str, frame: pd.DataFrame) -> list[str]:
    """Problems of a paper grid, one message per bad cell, naming the panelist, the
    row's set or code, the grid column and what was expected; empty when every answer
    would be accepted.

    Besides :meth:`AnswerChecker.check` it refuses a row whose key
    (:func:`sheet_key`) is not in the serving plan or comes twice, a chosen code that
    is not one of the row's own set (a code typed into the neighbouring row), and a
    rank given twice by one panelist in one set.
    """
    spec = checker.spec
    problems: list[str] = []
    seen: set[tuple[str, str]] = set()
    for rec in frame.to_dict("records"):
        key = sheet_key(spec, rec)
        if key in seen:
            problems.append(f"{_where(spec, key)}: this row is in the grid twice")
        seen.add(key)
    ranks: dict[tuple[str, int], dict[str, str]] = defaultdict(dict)
    for _, a in sheet_answers(spec, str(session), frame, tuple(checker.attributes)):
        where = f"{_where(spec, a['key'])}, column {a['column']!r}"
        try:
            ans = checker.check(a["session"], a["panelist"], a["code"], a["attribute"],
                                a["value"])
        except AnswerError as bad:
            problems.append(f"{where}: {bad.text}")
            continue
        if spec.is_forced_choice and ans.code:
            row_set = a["key"][1]
            if str(checker.set_of(ans) + 1) != row_set:
                problems.append(f"{where}: {a['code']!r} is not a cup of set {row_set} for "
                                "this panelist (typed into the wrong row?)")
                continue
        if spec.family is Family.RANKING:
            given = ranks[(ans.panelist, checker.set_of(ans))]
            if ans.value in given:
                problems.append(f"{where}: rank {ans.value} is also given to code "
                                f"{given[ans.value]!r}")
            given[ans.value] = ans.code
    return problems


def most_cups(frame: pd.DataFrame) -> int:
    """The most cups one panelist has in a per-cup paper grid (rating, ranking): the
    highest rank anyone can give. With incomplete blocks this is the block size, not
    the number of samples of the trial. 1 for an empty grid."""
    if frame.empty or "panelist" not in frame:
        return 1
    return int(frame.groupby("panelist").size().max())


def sheet_changes(spec: MethodSpec, before: pd.DataFrame, after: pd.DataFrame,
                  attributes: Sequence[str] = ()) -> list[tuple[str, str]]:
    """The keys (:func:`sheet_key`) of the rows whose answer cells differ between two
    grids of one session, in the order of ``after``; rows are matched by key, not by
    place."""
    def cells(frame: pd.DataFrame) -> dict[tuple[str, str], tuple[str, ...]]:
        entry = [c for c in paper_columns(spec, attributes)
                 if c in ("chosen", "no_preference") or c in _score_names(spec, attributes)]
        return {sheet_key(spec, r): tuple("" if _blank(r.get(c)) else _cell(r.get(c))
                                          for c in entry)
                for r in frame.to_dict("records")}

    old, new = cells(before), cells(after)
    return [k for k, v in new.items() if old.get(k) != v]


def sheet_pages(frame: pd.DataFrame, most_rows: int = 60) -> list[tuple[str, ...]]:
    """The panelists of a paper grid in pages of whole ballots: each page holds the
    rows of consecutive panelists (in grid order), at most ``most_rows`` rows unless
    one panelist alone has more. Empty for an empty grid."""
    pages: list[tuple[str, ...]] = []
    current: list[str] = []
    rows = 0
    if frame.empty:
        return pages
    counts = frame.groupby("panelist", sort=False).size()
    for panelist, n in counts.items():
        if current and rows + n > most_rows:
            pages.append(tuple(current))
            current, rows = [], 0
        current.append(str(panelist))
        rows += int(n)
    pages.append(tuple(current))
    return pages
