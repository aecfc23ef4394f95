"""Balanced sets for forced-choice tests (triangle, duo-trio, 2-AFC, 3-AFC, tetrad,
paired preference).

Each panelist gets one set: a string of letters, ``A`` for one sample and ``B`` for
the other, in serving order. The orders allowed for a method come from the method
registry (``trials.methods``); using each of them equally often balances the plan.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterable
from dataclasses import dataclass

from trials.design._common import RngLike, as_generator, whole
from trials.design.codes import blinding_codes
from trials.errors import TrialsError, UnbalancedPlanWarning
from trials.methods import get_method
from trials.model import Record


@dataclass(frozen=True, slots=True)
class SetsResult(Record):
    """Forced-choice sets for a panel.

    Attributes
    ----------
    method : str
        The registry name of the method.
    panelists : int
        Number of sets (one per panelist).
    reference_mode : str
        ``"balanced"`` or, for duo-trio only, ``"constant"`` (the reference is always
        sample A).
    sets : list of list of str
        One set per panelist: letters in serving order. For duo-trio the first cup is
        the reference.
    patterns : tuple of str
        The orders used, each equally often per block of ``len(patterns)`` panelists.
    pattern_counts : dict
        Pattern -> how many panelists got it.
    balanced : bool
        True when every pattern is used equally often.
    reference : str
        The standard or paper the balancing follows.
    """

    method: str
    panelists: int
    reference_mode: str
    sets: list[list[str]]
    patterns: tuple[str, ...]
    pattern_counts: dict[str, int]
    balanced: bool
    reference: str


def discrimination_sets(
    method: str, panelists: int, *, rng: RngLike = None, reference: str = "balanced"
) -> SetsResult:
    """Sets for a forced-choice test, each allowed order used equally often.

    Parameters
    ----------
    method : str
        A forced-choice method of the registry (``triangle``, ``duo-trio``, ``2afc``,
        ``3afc``, ``tetrad``, ``paired-preference``).
    panelists : int
        Number of panelists (1 or more); each gets one set.
    rng : int, numpy.random.Generator or None
        Seed or generator; the same seed gives the same sets.
    reference : {"balanced", "constant"}
        Methods whose first cup is the reference (``reference_first``: duo-trio) only:
        ``"balanced"`` serves A and B as the reference equally often (all four patterns);
        ``"constant"`` always serves A (the control, listed first) as the reference
        (patterns starting with ``A``). ISO 10399 describes both.

    Returns
    -------
    SetsResult
        Sets with pattern counts.

    Warns
    -----
    UnbalancedPlanWarning
        When ``panelists`` is not a multiple of the number of patterns.

    Raises
    ------
    TrialsError
        For a method without sets (ratings, rankings), an unknown method, a bad
        ``reference`` or ``panelists`` < 1.

    Notes
    -----
    Permuted blocks: the panel is cut into consecutive blocks of ``m`` panelists
    (``m`` = number of patterns) and each block gets every pattern once, in a random
    order. Every prefix of the panel (the first ``j`` panelists, e.g. when some do
    not come) therefore has pattern counts that differ by at most one, and the
    whole panel is exactly balanced when it is a multiple of ``m`` (ISO 4120 asks
    for the six triangle orders equally often; common practice for the others).
    """
    spec = get_method(method)
    if not spec.patterns:
        raise TrialsError(
            f"method {method!r} has no discrimination sets; use a Williams design or "
            "incomplete blocks for ratings and rankings"
        )
    n = whole(panelists, "panelists", minimum=1)
    if reference not in ("balanced", "constant"):
        raise TrialsError(f"reference must be 'balanced' or 'constant', got {reference!r}")
    patterns = tuple(spec.patterns)
    if reference == "constant":
        if not spec.reference_first:
            raise TrialsError(
                f"a constant reference applies to the duo-trio test only, not {method!r}"
            )
        patterns = tuple(p for p in patterns if p.startswith("A"))
    gen = as_generator(rng)
    m = len(patterns)
    sets: list[list[str]] = []
    while len(sets) < n:
        for i in gen.permutation(m):
            if len(sets) < n:
                sets.append(list(patterns[int(i)]))
    counts = {p: 0 for p in patterns}
    for s in sets:
        counts["".join(s)] += 1
    balanced = n % m == 0
    if not balanced:
        warnings.warn(
            f"{n} panelists are not a multiple of the {m} {spec.name} orders; pattern "
            f"counts range {min(counts.values())}..{max(counts.values())}",
            UnbalancedPlanWarning,
            stacklevel=2,
        )
    return SetsResult(
        method=spec.name,
        panelists=n,
        reference_mode=reference,
        sets=sets,
        patterns=patterns,
        pattern_counts=counts,
        balanced=balanced,
        reference=spec.set_design or spec.reference,
    )


@dataclass(frozen=True, slots=True)
class Cup(Record):
    """One cup of a set: its letter (sample A or B), its place and its blinding code."""

    letter: str
    position: int  # 1-based within the set
    code: str


@dataclass(frozen=True, slots=True)
class CodedSetsResult(Record):
    """Sets with a blinding code on every cup.

    ``scope`` is ``"plan"`` (no code repeats anywhere in the plan) or ``"set"`` (codes
    are unique within each panelist's set and may repeat between panelists).
    """

    method: str
    scope: str
    sets: list[list[Cup]]

    def codes(self) -> list[list[str]]:
        """The codes only, one list per panelist."""
        return [[cup.code for cup in s] for s in self.sets]


def coded_sets(
    sets: SetsResult | list[list[str]],
    *,
    rng: RngLike = None,
    exclude: Iterable[object] = (),
    scope: str = "plan",
) -> CodedSetsResult:
    """Put a blinding code on every cup of every set.

    Parameters
    ----------
    sets : SetsResult or list of list of str
        The sets, e.g. from :func:`discrimination_sets`.
    rng : int, numpy.random.Generator or None
        Seed or generator.
    exclude : iterable of str
        Codes already used in the trial (other sessions); never drawn.
    scope : {"plan", "set"}
        ``"plan"``: every cup of the plan has its own code (at most 786 cups, less
        ``exclude``). ``"set"``: codes unique within a panelist's set only, for larger
        panels.

    Returns
    -------
    CodedSetsResult

    Notes
    -----
    Each cup gets its own code, so two cups of the same sample in one set carry two
    different codes: the panelist cannot match cups by their labels (common
    practice; ISO 4120 asks for coded, otherwise identical cups).
    """
    if scope not in ("plan", "set"):
        raise TrialsError(f"scope must be 'plan' or 'set', got {scope!r}")
    method = sets.method if isinstance(sets, SetsResult) else ""
    letters = sets.sets if isinstance(sets, SetsResult) else [list(s) for s in sets]
    gen = as_generator(rng)
    if scope == "plan":
        total = sum(len(s) for s in letters)
        pool = iter(blinding_codes(total, rng=gen, exclude=exclude).codes)
        out = [[Cup(ch, p + 1, next(pool)) for p, ch in enumerate(s)] for s in letters]
    else:
        out = []
        for s in letters:
            codes = blinding_codes(len(s), rng=gen, exclude=exclude).codes
            out.append([Cup(ch, p + 1, c) for p, (ch, c) in enumerate(zip(s, codes))])
    return CodedSetsResult(method=method, scope=scope, sets=out)
