"""The balance a drawn serving plan reaches, said in one sentence per session.

A balanced design serves every order (forced choice) or every sample at every position
(ratings, rankings) equally often only when the panel is a whole number of the design's
blocks: a multiple of the method's set orders (six for the triangle: ISO 4120:2021,
6.2), a whole number of Williams designs (t rows for an even number t of samples, 2t
for an odd one: Williams 1949, Australian Journal of Scientific Research A 2, 149-168),
or a balanced incomplete block design. :func:`plan_balance` reads the plan itself and
says how near it came, in words a panel leader reads ("each order is served 4 or 5
times"). Pure: plain records in, a frozen record out.
"""

from __future__ import annotations

from collections import Counter, defaultdict
from collections.abc import Sequence
from dataclasses import dataclass

from trials.methods import get_method
from trials.model import PlanEntry, Record


@dataclass(frozen=True, slots=True)
class SessionBalance(Record):
    """How balanced one session's plan is.

    ``design``: ``"orders"`` (forced-choice set orders), ``"williams"`` (complete
    blocks) or ``"blocks"`` (incomplete blocks); ``low``/``high`` the fewest and most
    times an order is served, or a sample at a position; ``balanced`` when they are
    equal and the panel is a whole number of the design's blocks; ``statement`` the
    sentence for the plan screen and the command line.
    """

    session: str
    panelists: int
    design: str
    units: int
    low: int
    high: int
    balanced: bool
    statement: str


def _times(low: int, high: int) -> str:
    if low == high:
        return f"{low} time{'s' if low != 1 else ''}"
    if high == low + 1:
        return f"{low} or {high} times"
    return f"{low} to {high} times"


def _method_words(spec) -> str:
    """The method's label in running text: "triangle test", "2-AFC", "duo-trio test"."""
    label = spec.label.split(" (")[0]
    return label[0].lower() + label[1:] if label[1:2].islower() else label


def _letters(cups: Sequence[PlanEntry], letter_of: dict[str, str]) -> str:
    ordered = sorted(cups, key=lambda c: c.position)
    return "".join(letter_of.get(c.sample_name, "?") for c in ordered)


def _orders(spec, session: str, entries: Sequence[PlanEntry]) -> SessionBalance:
    letter_of = {e.sample_name: e.role for e in entries if e.role in ("A", "B")}
    sets: dict[tuple[str, int], list[PlanEntry]] = defaultdict(list)
    for e in entries:
        sets[(e.panelist_code, e.set_index)].append(e)
    seen = Counter(_letters(cups, letter_of) for cups in sets.values())
    patterns = list(spec.patterns)
    if spec.reference_first and all(p.startswith("A") for p in seen):
        patterns = [p for p in patterns if p.startswith("A")]  # a constant reference
    counts = [seen.get(p, 0) for p in patterns]
    n, m = len(sets), len(patterns)
    low, high = min(counts), max(counts)
    balanced = n % m == 0 and low == high
    if balanced:
        text = (f"{n} panelists: each of the {m} orders of the {_method_words(spec)} is "
                f"served {_times(low, high)}, as the balanced design asks.")
    else:
        text = (f"{n} panelists are not a multiple of the {m} orders of the "
                f"{_method_words(spec)}: each order is served {_times(low, high)}.")
    return SessionBalance(session, len({e.panelist_code for e in entries}), "orders", m,
                          low, high, balanced, text)


def _positions(session: str, entries: Sequence[PlanEntry]) -> SessionBalance:
    samples = list(dict.fromkeys(e.sample_name for e in entries))
    t = len(samples)
    by_panelist: dict[str, list[PlanEntry]] = defaultdict(list)
    for e in entries:
        by_panelist[e.panelist_code].append(e)
    n = len(by_panelist)
    k = max(len(v) for v in by_panelist.values())
    at = Counter((e.sample_name, e.position) for e in entries)
    if k == t:
        counts = [at.get((s, p), 0) for s in samples for p in range(1, t + 1)]
        low, high = min(counts), max(counts)
        m = t if t % 2 == 0 else 2 * t
        balanced = n % m == 0 and low == high
        if balanced:
            whole = f"{n // m} whole Williams design{'s' if n // m > 1 else ''}"
            text = (f"{n} panelists are {whole} of {m} rows for "
                    f"{t} samples: each sample is served {_times(low, high)} at each "
                    "position and follows each other sample equally often.")
        else:
            text = (f"{n} panelists and {t} samples are not a whole number of Williams "
                    f"designs of {m} rows: each sample is served {_times(low, high)} at "
                    "each position.")
        return SessionBalance(session, n, "williams", m, low, high, balanced, text)
    served = Counter(e.sample_name for e in entries)
    reps = [served.get(s, 0) for s in samples]
    pairs: Counter[tuple[str, str]] = Counter()
    for cups in by_panelist.values():
        names = sorted({c.sample_name for c in cups})
        for i, a in enumerate(names):
            for b in names[i + 1:]:
                pairs[(a, b)] += 1
    meets = [pairs.get((a, b), 0) for i, a in enumerate(sorted(samples))
             for b in sorted(samples)[i + 1:]]
    low, high = min(reps), max(reps)
    balanced = low == high and min(meets) == max(meets)
    text = (f"{n} panelists taste {k} of the {t} samples: each sample is served "
            f"{_times(low, high)} and each pair of samples meets "
            f"{_times(min(meets), max(meets))}"
            + (", a balanced incomplete block design." if balanced
               else "; a balanced incomplete block design would make both even."))
    return SessionBalance(session, n, "blocks", t, low, high, balanced, text)


def plan_balance(method: str, entries: Sequence[PlanEntry]) -> tuple[SessionBalance, ...]:
    """The balance each session of a drawn plan reaches (one :class:`SessionBalance`
    per session, in the plan's order).

    Parameters
    ----------
    method : str
        The trial's method (a name of :mod:`trials.methods`).
    entries : sequence of PlanEntry
        The drawn plan, with the key (sample names and roles).

    Notes
    -----
    Forced choice: the set orders are the method's balanced patterns (a constant
    duo-trio reference keeps those with A first); a cup's letter is read from its
    sample. Ratings and rankings with every sample per panelist: how often each sample
    is served at each position, against Williams' design of t or 2t rows. Fewer
    samples per panelist: how often each sample is served and each pair meets, against
    a balanced incomplete block design (Cochran and Cox 1957, Experimental Designs,
    ch. 11).
    """
    spec = get_method(method)
    sessions: dict[str, list[PlanEntry]] = defaultdict(list)
    for e in entries:
        sessions[e.session].append(e)
    out = []
    for session, part in sessions.items():
        out.append(_orders(spec, session, part) if spec.is_forced_choice
                   else _positions(session, part))
    return tuple(out)
