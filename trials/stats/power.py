"""Exact power and panel size of the forced-choice tests (planning a trial).

Under the guessing model of :mod:`trials.stats.discrimination` (``pc = p0 + pd (1 -
p0)``), the power of the exact test at alpha with ``n`` panelists is the binomial upper
tail under ``pc`` from the critical count found under ``p0``. The panel size is the
fewest panelists for which that power is at least ``1 - beta`` for the proportion of
discriminators ``pd`` that matters. Exact power is a saw-tooth in n, so the smallest
such n and the smallest from which every larger n keeps the power differ (both are
reported).

References
----------
ISO 4120:2021 Sensory analysis - Methodology - Triangle test (choosing the number of
panelists).
ASTM E1885-04 Standard Test Method for Sensory Analysis - Triangle Test.
Meilgaard, M., Civille, G. V. and Carr, B. T. Sensory Evaluation Techniques, CRC Press
(chapter 6 and the statistical tables).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from trials.errors import TrialsError
from trials.model import Record
from trials.stats.discrimination import (
    _N_LIMIT,
    DEFINITIONS,
    _count,
    _critical_array,
    _forced_choice,
    _prob,
    critical_value,
)


def _power_array(ns: np.ndarray, alpha: float, p0: float, p1: float, sides: int):
    crit = _critical_array(ns, np.array(alpha), p0, sides)
    upper = stats.binom.sf(crit - 1, ns, p1)
    if sides == 2:
        upper = upper + stats.binom.cdf(ns - crit, ns, p1)
    return crit, np.where(crit > ns, 0.0, upper)


@dataclass(frozen=True, slots=True)
class PowerResult(Record):
    """Exact power of the difference test for ``n`` panelists when ``pd`` discriminate."""

    method: str
    n: int
    pd: float
    alpha: float
    critical: int | None
    power: float
    pc_alternative: float


def power(n: int, *, method: str, pd: float, alpha: float = 0.05) -> PowerResult:
    """Exact power of the binomial difference test.

    Parameters
    ----------
    n : int
        Panelists.
    method : str
        A forced-choice method of the registry.
    pd : float
        True proportion of discriminators, in (0, 1).
    alpha : float
        Risk of the test.

    Returns
    -------
    PowerResult
        ``power = P(X >= critical | p1)`` with ``p1 = p0 + pd (1 - p0)`` (paired
        preference: both tails, ``p1 = 1/2 + pd / 2``); 0 where no count reaches alpha.

    Notes
    -----
    Exact binomial power (ISO 4120 annex; ASTM E1885 appendix); it is not monotone in n
    (a saw-tooth), because the critical count moves in whole steps.

    References
    ----------
    ISO 4120:2021; ASTM E1885-04.
    """
    spec = _forced_choice(method)
    n = _count(n, "n", low=1)
    pd = _prob(pd, "pd")
    alpha = _prob(alpha, "alpha")
    p1 = spec.guess + pd * (1.0 - spec.guess)
    crit, pw = _power_array(np.array([n]), alpha, spec.guess, p1, spec.sides)
    c = int(crit[0])
    return PowerResult(method=method, n=n, pd=pd, alpha=alpha,
                       critical=None if c > n else c, power=float(pw[0]), pc_alternative=p1)


@dataclass(frozen=True, slots=True)
class PanelSizeResult(Record):
    """How many panelists a difference test needs.

    ``n`` follows ``definition``: ``"first"`` is the smallest n whose exact power
    reaches ``1 - beta``; ``"stable"`` the smallest n from which every larger n (checked
    up to ``checked_up_to``) keeps it. Both are given (``n_first``, ``n_stable``).
    """

    method: str
    pd: float
    alpha: float
    beta: float
    n: int
    critical: int
    power: float
    definition: str
    n_first: int
    n_stable: int
    checked_up_to: int
    note: str


def _normal_size(p0: float, p1: float, alpha: float, beta: float, sides: int) -> float:
    za = stats.norm.isf(alpha / sides)
    zb = stats.norm.isf(beta)
    num = za * math.sqrt(p0 * (1 - p0)) + zb * math.sqrt(p1 * (1 - p1))
    return (num / (p1 - p0)) ** 2


def panel_size(pd: float, *, method: str, alpha: float = 0.05, beta: float = 0.20,
               definition: str = "stable") -> PanelSizeResult:
    """Fewest panelists meeting both risks, by the exact binomial.

    Parameters
    ----------
    pd : float
        Proportion of discriminators the test must detect, in (0, 1).
    method : str
        A forced-choice method of the registry.
    alpha : float
        Risk of a false difference.
    beta : float
        Risk of missing a difference of ``pd`` (power ``1 - beta``).
    definition : {"stable", "first"}
        Which n to report (see Notes). Default "stable".

    Returns
    -------
    PanelSizeResult
        ``n``, its critical count and exact power, and both ``n_first`` and
        ``n_stable``.

    Notes
    -----
    Power at n is ``P(X >= c(n) | p1)``, ``p1 = p0 + pd (1 - p0)``, ``c(n)`` the exact
    critical value (ISO 4120, ASTM E1885). Exact power is a saw-tooth in n: it can reach
    ``1 - beta`` at some n and fall below it at n + 1. ``"first"`` reports the first n
    that reaches it; ``"stable"`` (the default here) the first n from which all larger
    n keep it, so that a few extra panelists never lose power. The search runs to
    ``checked_up_to``, at least four times the normal-approximation size and twice the
    answer, where the saw-tooth's amplitude is small. Which definition a printed annex
    table follows is not asserted here; the tests compare both with brute force.

    References
    ----------
    ISO 4120:2021 annex A; ASTM E1885-04; Ennis, D. M. (1993). J. Sensory Stud. 8:353-370.
    """
    spec = _forced_choice(method)
    pd = _prob(pd, "pd")
    alpha = _prob(alpha, "alpha")
    beta = _prob(beta, "beta")
    if definition not in DEFINITIONS:
        raise TrialsError(f"definition must be 'stable' or 'first', got {definition!r}")
    p0 = float(spec.guess)
    p1 = p0 + pd * (1.0 - p0)
    target = 1.0 - beta
    limit = int(max(60, 4 * _normal_size(p0, p1, alpha, beta, spec.sides)))
    while True:
        if limit > _N_LIMIT:
            raise TrialsError(f"pd {pd!r} needs more than {_N_LIMIT} panelists at these risks")
        ns = np.arange(1, limit + 1)
        crit, pw = _power_array(ns, alpha, p0, p1, spec.sides)
        ok = pw >= target - 1e-12
        if ok.any():
            first = int(np.argmax(ok))
            bad = np.flatnonzero(~ok)
            stable = int(bad[-1] + 1) if bad.size else 0
            if stable < limit // 2:
                break
        limit *= 2
    idx = stable if definition == "stable" else first
    return PanelSizeResult(
        method=method, pd=pd, alpha=alpha, beta=beta, n=int(ns[idx]),
        critical=int(crit[idx]), power=float(pw[idx]), definition=definition,
        n_first=int(ns[first]), n_stable=int(ns[stable]), checked_up_to=limit,
        note=("n is the first size from which every larger size keeps the power"
              if definition == "stable" else "n is the first size that reaches the power"),
    )


@dataclass(frozen=True, slots=True)
class PanelistsNeeded(Record):
    """For a test under way: how many more panelists the plan needs.

    ``more`` = ``planned - done`` (0 when the plan is met). With ``correct`` given,
    ``correct_needed`` is how many of the remaining answers must be correct to reach the
    critical count at the planned size, and ``reachable`` whether that is still possible.
    """

    method: str
    done: int
    planned: int
    more: int
    critical: int
    correct: int | None
    correct_needed: int | None
    reachable: bool | None
    definition: str


def panelists_needed(done: int, *, method: str, pd: float, alpha: float = 0.05,
                     beta: float = 0.20, correct: int | None = None,
                     definition: str = "stable") -> PanelistsNeeded:
    """How many more panelists a test under way needs to meet its planned risks.

    Parameters
    ----------
    done : int
        Panelists who have answered so far (>= 0).
    method, pd, alpha, beta, definition
        As for :func:`panel_size`.
    correct : int, optional
        Correct answers so far (at most ``done``).

    Returns
    -------
    PanelistsNeeded

    Notes
    -----
    The plan is :func:`panel_size`; where ``done`` already exceeds it, the critical
    count is that of ``done`` panelists (exact binomial, ISO 4120). The test keeps its
    risks only if the final size is fixed in advance; looking at the answers and
    stopping early changes alpha (common practice: decide at the planned size).

    References
    ----------
    ISO 4120:2021; ASTM E1885-04.
    """
    done = _count(done, "done")
    plan = panel_size(pd, method=method, alpha=alpha, beta=beta, definition=definition)
    total = max(plan.n, done)
    crit = critical_value(total, method=method, alpha=alpha).critical
    crit = total + 1 if crit is None else crit
    needed = reachable = None
    if correct is not None:
        correct = _count(correct, "correct")
        if correct > done:
            raise TrialsError(f"correct ({correct!r}) cannot exceed done ({done!r})")
        needed = max(0, crit - correct)
        reachable = needed <= total - done
    return PanelistsNeeded(method=method, done=done, planned=plan.n, more=total - done,
                           critical=crit, correct=correct, correct_needed=needed,
                           reachable=reachable, definition=definition)
