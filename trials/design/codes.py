"""Three-digit blinding codes for cups.

A cup carries a random three-digit code so that the label says nothing about the
sample. The pool is "100" to "999" (no leading zero, so a code reads the same written
by hand, typed, or read back as a number) less the codes that invite bias or are easy
to remember or to mistake for a ranking. The rules, all common practice (no source):

- ``repeated``: all three digits the same ("111", "777");
- ``run``: three consecutive digits up or down ("123", "789", "321", "210");
- ``round``: whole hundreds ("100", "200", ..., "900"), read as a grade or a rank;
- ``palindrome``: the same read backwards ("121", "505"), an easy pattern to notice.

Two equal neighbouring digits alone ("112", "455") are kept: banning them would cost
about a fifth of the pool for little gain. 786 codes remain.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from trials.design._common import RngLike, as_generator, whole
from trials.errors import TrialsError
from trials.model import Record

RULES: tuple[str, ...] = (
    "repeated: all three digits the same (111)",
    "run: three consecutive digits up or down (123, 321)",
    "round: whole hundreds (100, 200, ... 900)",
    "palindrome: reads the same backwards (121, 505)",
)


def avoided_reason(code: str) -> str | None:
    """The name of the rule that keeps ``code`` out of the pool, or None if it is usable.

    Codes outside "100".."999" give ``"range"``.
    """
    if len(code) != 3 or not code.isdigit() or code[0] == "0":
        return "range"
    a, b, c = (int(ch) for ch in code)
    if a == b == c:
        return "repeated"
    if (b - a == 1 and c - b == 1) or (a - b == 1 and b - c == 1):
        return "run"
    if b == 0 and c == 0:
        return "round"
    if a == c:
        return "palindrome"
    return None


#: Every usable code, in increasing order.
POOL: tuple[str, ...] = tuple(
    str(n) for n in range(100, 1000) if avoided_reason(str(n)) is None
)


@dataclass(frozen=True, slots=True)
class CodesResult(Record):
    """Blinding codes drawn for one call.

    Attributes
    ----------
    codes : list of str
        The codes, in random order, unique and none of them in ``exclude``.
    count : int
        How many were asked for (``len(codes)``).
    pool_size : int
        How many usable codes the pool holds before ``exclude`` (786).
    available : int
        How many usable codes were left after ``exclude``.
    rules : tuple of str
        The rules that kept codes out of the pool.
    """

    codes: list[str]
    count: int
    pool_size: int
    available: int
    rules: tuple[str, ...] = RULES


def _normalise_exclude(exclude: Iterable[object]) -> set[str]:
    if isinstance(exclude, (str, bytes)):
        raise TrialsError(f"exclude must be a collection of codes, got the string {exclude!r}")
    out: set[str] = set()
    for item in exclude:
        out.add(str(item).strip())
    return out


def blinding_codes(
    count: int, *, rng: RngLike = None, exclude: Iterable[object] = ()
) -> CodesResult:
    """Draw ``count`` unique three-digit blinding codes at random.

    Parameters
    ----------
    count : int
        How many codes (0 or more).
    rng : int, numpy.random.Generator or None
        Seed or generator; the same seed gives the same codes.
    exclude : iterable of str or int
        Codes already in use (for example in the trial's other sessions); none of them
        is drawn.

    Returns
    -------
    CodesResult
        ``codes`` in random order, with the pool size and the rules applied.

    Raises
    ------
    TrialsError
        If ``count`` is not a whole number, is negative, or exceeds the codes left
        in the pool after ``exclude`` (three digits hold at most 786 usable codes).

    Notes
    -----
    Simple random sampling without replacement from the usable pool (every subset of
    size ``count`` equally likely, in random order). The rules that shape the pool are
    common practice and listed in :data:`RULES`.

    References
    ----------
    Common practice for coding samples in sensory work; no published source is
    claimed for the exact rules.
    """
    count = whole(count, "count", minimum=0)
    used = _normalise_exclude(exclude)
    free = [c for c in POOL if c not in used]
    if count > len(free):
        raise TrialsError(
            f"cannot draw {count} blinding codes: only {len(free)} usable three-digit "
            f"codes are left (pool of {len(POOL)}, {len(POOL) - len(free)} excluded); "
            "use fewer codes per session or codes unique within each set"
        )
    gen = as_generator(rng)
    picks: list[int] = gen.choice(len(free), size=count, replace=False).tolist() if count else []
    return CodesResult(
        codes=[free[int(i)] for i in picks],
        count=count,
        pool_size=len(POOL),
        available=len(free),
    )
