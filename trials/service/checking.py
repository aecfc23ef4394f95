"""Checking one answer against the serving plan, as every way in uses it (tablet,
paper entry, file import, archive). Pure: it reads a :class:`~trials.model.PlanBook`
loaded once by the store and returns the answer ready to store, or raises
:class:`BadAnswer` naming the column and what was expected."""

from __future__ import annotations

import math

from trials.methods import Family, get_method
from trials.model import PlanBook, ServedCup, StoredAnswer

NO_PREFERENCE = "no preference"


class BadAnswer(Exception):
    """An answer that does not fit the plan; ``column`` names the file column."""

    def __init__(self, column: str, text: str):
        super().__init__(text)
        self.column = column
        self.text = text


def whole(value: str, low: int, high: int) -> int:
    """A whole number from ``low`` to ``high`` written as text."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        x = float("nan")
    if not math.isfinite(x) or x != int(x) or not low <= x <= high:
        raise BadAnswer("value", f"expected a whole number from {low} to {high}, got {value!r}")
    return int(x)


def check_answer(book: PlanBook, session: str, panelist: str, code: str, attribute: str,
                 value: str) -> StoredAnswer:
    """Validate one answer; raises :class:`BadAnswer` naming what was expected."""
    session, panelist = session.strip(), panelist.strip()
    code, attribute, value = code.strip(), attribute.strip(), value.strip()
    if panelist not in book.panelists:
        raise BadAnswer("panelist", f"panelist {panelist!r} has no serving plan in this trial")
    if session not in book.sessions:
        known = ", ".join(repr(x) for x in book.sessions)
        raise BadAnswer("session", f"expected one of the sessions {known}, got {session!r}")
    cups = book.plan.get((session, panelist))
    if not cups:
        raise BadAnswer("session", f"panelist {panelist!r} is not served in session {session!r}")
    spec = get_method(book.trial.method)
    sid, pid = book.sessions[session], book.panelists[panelist]

    def cup(c: str) -> ServedCup:
        if c not in cups:
            raise BadAnswer("code", f"{c!r} is not a code served to panelist {panelist!r} "
                                    f"in session {session!r}")
        return cups[c]

    if spec.is_forced_choice:
        if attribute != "choice":
            raise BadAnswer("attribute", f"a {spec.name} trial takes attribute 'choice', "
                                         f"got {attribute!r}")
        if value:
            if spec.name == "paired-preference" and value.lower() == NO_PREFERENCE:
                if code:
                    raise BadAnswer("code", f"give no code with 'no preference', got {code!r}")
                sets = sorted({c.set_index for c in cups.values()})
                if len(sets) != 1:
                    raise BadAnswer("code", "this panelist has several sets; 'no preference' "
                                            "needs one set per session")
                return StoredAnswer(sid, pid, f"choice:{sets[0]}", "", attribute, NO_PREFERENCE)
            allowed = "empty or 'no preference'" if spec.name == "paired-preference" else "empty"
            raise BadAnswer("value", f"expected {allowed} for a choice, got {value!r}")
        picked = code.split()
        want = 2 if spec.name == "tetrad" else 1
        if len(picked) != want:
            what = "the two codes of the chosen group" if want == 2 else "one code"
            raise BadAnswer("code", f"expected {what}, got {code!r}")
        chosen = [cup(c) for c in picked]
        if len({c.set_index for c in chosen}) != 1 or len(set(picked)) != want:
            raise BadAnswer("code", f"expected two different codes of the same set, got {code!r}")
        if spec.name == "duo-trio" and chosen[0].role == "R":
            raise BadAnswer("code", f"{code!r} is the reference; choose one of the coded samples")
        chosen.sort(key=lambda c: c.position)
        return StoredAnswer(sid, pid, f"choice:{chosen[0].set_index}",
                            " ".join(c.code for c in chosen), attribute, "")
    if not code:
        raise BadAnswer("code", "a code is required")
    c = cup(code)
    if spec.family == Family.RANKING:
        if attribute != "rank":
            raise BadAnswer("attribute",
                            f"a ranking trial takes attribute 'rank', got {attribute!r}")
        k = sum(1 for x in cups.values() if x.set_index == c.set_index)
        return StoredAnswer(sid, pid, f"{code}:rank", code, attribute, str(whole(value, 1, k)))
    attr = next((a for a in book.trial.attributes if a.name == attribute), None)
    if attr is None:
        known = ", ".join(repr(a.name) for a in book.trial.attributes) or "none"
        raise BadAnswer("attribute", f"expected one of the trial's attributes {known}, "
                                     f"got {attribute!r}")
    return StoredAnswer(sid, pid, f"{code}:{attribute}", code, attribute,
                        str(whole(value, attr.low, attr.high)))


def question_text(ans: StoredAnswer) -> str:
    """The question an answer answers, in words, for a message."""
    if ans.question.startswith("choice:"):
        return f"the choice of set {ans.question.split(':', 1)[1]}"
    return f"code {ans.code!r}, attribute {ans.attribute!r}"
