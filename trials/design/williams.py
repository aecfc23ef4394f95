"""Williams designs: serving orders balanced for position and first-order carry-over.

Every panelist tastes all ``t`` samples. A Williams design is a set of Latin squares
(each sample once in each position of each square) in which every sample follows
every other sample equally often, so that the effect of the cup tasted just before
is balanced out.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from trials.design._common import (
    RngLike,
    as_generator,
    carryover_counts,
    position_counts,
    whole,
)
from trials.errors import UnbalancedPlanWarning
from trials.model import Record

REFERENCE = (
    "Williams, E. J. (1949). Experimental designs balanced for the estimation of "
    "residual effects of treatments. Aust. J. Sci. Res. A 2:149-168; "
    "MacFie, H. J. H., Bratchell, N., Greenhoff, K. and Vallis, L. V. (1989). Designs "
    "to balance the effect of order of presentation and first-order carry-over effects "
    "in hall tests. J. Sensory Stud. 4:129-148"
)


def williams_first_row(t: int) -> list[int]:
    """The first row of Williams' cyclic construction: ``0, 1, t-1, 2, t-2, ...``."""
    t = whole(t, "samples", minimum=2)
    row = [0]
    low, high = 1, t - 1
    take_low = True
    while len(row) < t:
        if take_low:
            row.append(low)
            low += 1
        else:
            row.append(high)
            high -= 1
        take_low = not take_low
    return row


def williams_square(t: int) -> list[list[int]]:
    """The standard (unrandomised) Williams design for ``t`` samples.

    Row ``i`` is the first row plus ``i`` modulo ``t``. For even ``t`` the ``t`` rows
    are one square; for odd ``t`` the mirror image of each row is added (``2t`` rows),
    because no single balanced square of that kind exists for ``t`` = 3, 5 or 7.
    """
    first = williams_first_row(t)
    rows = [[(s + i) % t for s in first] for i in range(t)]
    if t % 2:
        rows += [list(reversed(r)) for r in rows]
    return rows


@dataclass(frozen=True, slots=True)
class WilliamsResult(Record):
    """Serving orders from a Williams design.

    Attributes
    ----------
    samples : int
        Number of samples ``t``.
    panelists : int
        Number of panelists (rows of ``orders``).
    session : int
        0-based session index the orders were drawn for.
    orders : list of list of int
        One serving order per panelist, 0-based sample indices, first served first.
    rows_per_square : int
        Rows of one balanced design: ``t`` for even ``t``, ``2t`` for odd ``t``.
    squares : int
        Balanced designs used, counting a partly used one.
    balanced : bool
        True when the panel is a whole number of balanced designs, so that every
        sample appears equally often in each position and every ordered pair of
        different samples occurs equally often as neighbours.
    position_min, position_max : int
        Smallest and largest count of a sample at a position.
    carryover_min, carryover_max : int
        Smallest and largest count of an ordered pair of different samples served
        one right after the other.
    reference : str
        The published method.
    """

    samples: int
    panelists: int
    session: int
    orders: list[list[int]]
    rows_per_square: int
    squares: int
    balanced: bool
    position_min: int
    position_max: int
    carryover_min: int
    carryover_max: int
    reference: str = REFERENCE

    def position_counts(self) -> np.ndarray:
        """``counts[s, p]``: panelists served sample ``s`` at position ``p`` (0-based)."""
        return position_counts(self.orders, self.samples)

    def carryover_counts(self) -> np.ndarray:
        """``counts[a, b]``: how often ``b`` was served right after ``a``."""
        return carryover_counts(self.orders, self.samples)

    def to_frame(self):
        """A long table: ``panelist`` (0-based row), ``position`` (1-based), ``sample``."""
        import pandas as pd

        rows = [
            {"panelist": i, "position": p + 1, "sample": s}
            for i, order in enumerate(self.orders)
            for p, s in enumerate(order)
        ]
        return pd.DataFrame(rows, columns=["panelist", "position", "sample"])


def _randomised_square(base: np.ndarray, gen: np.random.Generator, t: int) -> np.ndarray:
    """Relabel the samples and shuffle the rows; both keep the balance of the design.

    For odd ``t`` the two halves (the cyclic square and its mirror) are each shuffled
    and kept in turn, so that the first ``t`` rows of any square form a Latin square:
    a panel that stops partway through a square is still balanced for position as
    long as possible.
    """
    labels = gen.permutation(t)
    square = labels[base]
    if t % 2:
        first = square[:t][gen.permutation(t)]
        second = square[t:][gen.permutation(t)]
        return np.vstack([first, second])
    return square[gen.permutation(t)]


def williams_design(
    t: int, *, panelists: int | None = None, rng: RngLike = None, session: int = 0
) -> WilliamsResult:
    """Serving orders for ``panelists`` panelists tasting all ``t`` samples (Williams 1949).

    Parameters
    ----------
    t : int
        Number of samples (2 or more).
    panelists : int, optional
        Number of panelists; None gives one balanced design (``t`` rows for even ``t``,
        ``2t`` for odd ``t``).
    rng : int, numpy.random.Generator or None
        Seed or generator; the same seed gives the same orders.
    session : int
        0-based session index, for replicated sessions. Draw every session of a trial
        with the same seed: session ``s`` gives each panelist the row ``s`` places
        further on in the same randomised square, so the panel as a whole keeps the
        same balance in every session while each panelist's order changes (for up to
        ``rows_per_square`` sessions; after that the orders repeat).

    Returns
    -------
    WilliamsResult
        The orders and the balance reached.

    Warns
    -----
    UnbalancedPlanWarning
        When ``panelists`` is not a multiple of ``rows_per_square``; the result's
        ``position_*`` and ``carryover_*`` fields say how far from equal it is.

    Raises
    ------
    TrialsError
        If ``t`` < 2, ``panelists`` < 1 or ``session`` < 0.

    Notes
    -----
    Construction (Williams 1949): first row ``0, 1, t-1, 2, t-2, ...``; row ``i`` adds
    ``i`` modulo ``t`` to every entry. For even ``t`` the ``t`` rows form a Latin square
    in which every ordered pair ``(a, b)``, ``a != b``, occurs exactly once as
    neighbours. For odd ``t`` the mirror image of each row is added; the ``2t`` rows
    hold each sample twice in each position and every ordered pair twice.

    Larger panels stack squares. Each square gets its own random relabelling of the
    samples and its own random row order (Latin and carry-over balance are invariant
    under both), so the plan is randomised while the balance holds for each whole
    square. A panel that is not a whole number of squares takes the first rows of
    one more randomised square; the balance fields report the result.

    Assumptions: carry-over lasts one position only (first order); the panelists are
    assigned to rows at random (the row shuffle does this).

    References
    ----------
    Williams, E. J. (1949). Aust. J. Sci. Res. A 2:149-168.
    MacFie, H. J. H., Bratchell, N., Greenhoff, K. and Vallis, L. V. (1989). J. Sensory
    Stud. 4:129-148.
    """
    t = whole(t, "samples", minimum=2)
    session = whole(session, "session", minimum=0)
    base = np.asarray(williams_square(t), dtype=int)
    m = base.shape[0]
    n = m if panelists is None else whole(panelists, "panelists", minimum=1)
    gen = as_generator(rng)
    squares = -(-n // m)
    shift = session % m
    parts = []
    for q in range(squares):
        square = _randomised_square(base, gen, t)
        take = min(m, n - q * m)
        idx = (np.arange(take) + shift) % m
        parts.append(square[idx])
    orders = np.vstack(parts)

    order_list = orders.tolist()
    pos = position_counts(order_list, t)
    carry = carryover_counts(order_list, t)
    off = carry[~np.eye(t, dtype=bool)]
    balanced = n % m == 0
    if not balanced:
        warnings.warn(
            f"{n} panelists are not a whole number of Williams designs of {m} rows for "
            f"{t} samples: position counts range {pos.min()}..{pos.max()}, carry-over "
            f"counts {off.min()}..{off.max()}",
            UnbalancedPlanWarning,
            stacklevel=2,
        )
    return WilliamsResult(
        samples=t,
        panelists=n,
        session=session,
        orders=order_list,
        rows_per_square=m,
        squares=squares,
        balanced=balanced,
        position_min=int(pos.min()),
        position_max=int(pos.max()),
        carryover_min=int(off.min()),
        carryover_max=int(off.max()),
    )
