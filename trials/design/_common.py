"""Helpers shared by the design modules: the random generator and input checks.

Pure: no I/O. Every randomised design function takes ``rng``: an int seed, a
``numpy.random.Generator``, or None for fresh entropy.
"""

from __future__ import annotations

import numbers

import numpy as np

from trials.errors import TrialsError

RngLike = int | np.random.Generator | None


def as_generator(rng: RngLike) -> np.random.Generator:
    """A ``numpy.random.Generator`` from a seed, a generator or None."""
    if rng is None:
        return np.random.default_rng()
    if isinstance(rng, np.random.Generator):
        return rng
    if isinstance(rng, bool) or not isinstance(rng, numbers.Integral):
        raise TrialsError(f"rng must be an int seed, a numpy Generator or None, got {rng!r}")
    if rng < 0:
        raise TrialsError(f"a seed must be zero or positive, got {rng!r}")
    return np.random.default_rng(int(rng))


def whole(value: object, name: str, *, minimum: int) -> int:
    """``value`` as an int no smaller than ``minimum``; a TrialsError quotes it otherwise."""
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise TrialsError(f"{name} must be a whole number, got {value!r}")
    if value < minimum:
        raise TrialsError(f"{name} must be at least {minimum}, got {value!r}")
    return int(value)


def position_counts(orders: list[list[int]], t: int) -> np.ndarray:
    """``counts[s, p]``: how often sample ``s`` is served at position ``p`` (0-based)."""
    width = max((len(o) for o in orders), default=0)
    counts = np.zeros((t, width), dtype=int)
    for order in orders:
        for p, s in enumerate(order):
            counts[s, p] += 1
    return counts


def carryover_counts(orders: list[list[int]], t: int) -> np.ndarray:
    """``counts[a, b]``: how often sample ``b`` is served right after sample ``a``."""
    counts = np.zeros((t, t), dtype=int)
    for order in orders:
        for a, b in zip(order, order[1:]):
            counts[a, b] += 1
    return counts


def concurrence_matrix(blocks: list[list[int]], t: int) -> np.ndarray:
    """``lam[i, j]``: in how many blocks samples ``i`` and ``j`` both appear
    (``lam[i, i] = r_i``)."""
    incidence = np.zeros((t, len(blocks)), dtype=int)
    for j, block in enumerate(blocks):
        for s in block:
            incidence[s, j] += 1
    return incidence @ incidence.T
