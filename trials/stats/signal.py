"""Signal-detection statistics of the response-table methods: A-not-A and same-different.

A trial of either method gives a 2 x 2 table of answers: rows are the kind of set served
(signal: the "not A" sample, or a pair of two different samples; noise: the "A" sample,
or a pair of one sample twice), columns the answer (the signal answer "not A" or
"different", and the other). From it:

- the hit rate ``H = P(signal answer | signal set)`` and the false-alarm rate
  ``F = P(signal answer | noise set)``;
- Fisher's exact test of the table, one-sided (H1: ``H > F``), the test that decides;
  and Pearson's chi-square of the table (1 df, no continuity correction) as a second
  reading, with its one-sided p from the signed root;
- d' with its standard error, by the method's model:

  * A-not-A (a yes/no task): ``d' = z(H) - z(F)``, criterion ``c = -(z(H) + z(F)) / 2``
    (Green and Swets 1966; Macmillan and Creelman 2005, ch. 1);
    ``var(d') = H (1 - H) / (N_s phi(z(H))^2) + F (1 - F) / (N_n phi(z(F))^2)``
    (Gourevitch and Galanter 1967; Macmillan and Creelman 2005, ch. 13);
  * same-different, the differencing (tau-criterion) model: a panelist answers
    "different" when the two sensations differ by more than ``k``; the difference is
    ``N(0, 2)`` for a matched pair and ``N(d', 2)`` for an unmatched one, so
    ``F = 2 Phi(-k / sqrt 2)`` and ``H = Phi((d' - k) / sqrt 2) + Phi((-d' - k) / sqrt 2)``
    (Macmillan, Kaplan and Creelman 1977; Macmillan and Creelman 2005, ch. 9;
    O'Mahony and Rousseau 2002). ``k`` is solved from ``F``, then d' from ``H``; its
    variance by the delta method on ``(H, F)`` with the partial derivatives of that
    inverse (implicit differentiation).

Assumptions: every answer independent (one set per panelist, or replicates treated as
independent, which overstates the evidence where panelists differ); a normal
(Thurstonian) model with equal variances; a fixed criterion per trial. Rates of 0 or 1
are moved to ``1/(2N)`` and ``1 - 1/(2N)`` for d' (Macmillan and Kaplan 1985), and the
note says so. d' is floored at 0 where ``H <= F`` (no evidence of a difference) and
capped at :data:`trials.stats.thurstonian.DPRIME_MAX`.

References
----------
Green, D. M. and Swets, J. A. (1966). Signal Detection Theory and Psychophysics. Wiley.
Gourevitch, V. and Galanter, E. (1967). A significance test for one parameter isosensitivity
functions. Psychometrika 32:25-33.
Macmillan, N. A., Kaplan, H. L. and Creelman, C. D. (1977). The psychophysics of
categorical perception. Psychol. Rev. 84:452-471.
Macmillan, N. A. and Kaplan, H. L. (1985). Detection theory analysis of group data.
Psychol. Bull. 98:185-199.
Macmillan, N. A. and Creelman, C. D. (2005). Detection Theory: A User's Guide, 2nd ed.
Erlbaum.
O'Mahony, M. and Rousseau, B. (2002). Discrimination testing: a few ideas, old and new.
Food Qual. Prefer. 14:157-164.
Fisher, R. A. (1935). The logic of inductive inference. J. R. Stat. Soc. 98:39-82.
Bi, J. (2006). Sensory Discrimination Tests and Measurements. Blackwell (A-not-A and
same-different, ch. 2 and 9).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import optimize, special, stats

from trials.errors import TrialsError
from trials.methods import MODEL_DIFFERENCING, MODEL_YES_NO, SIGNAL_MODELS
from trials.model import Record
from trials.stats.thurstonian import DPRIME_MAX

YES_NO = MODEL_YES_NO  # A-not-A: d' = z(H) - z(F)
DIFFERENCING = MODEL_DIFFERENCING  # same-different: the tau-criterion model
MODELS = SIGNAL_MODELS
_SQRT2 = math.sqrt(2.0)


def _z(p: float) -> float:
    return float(special.ndtri(p))


def _phi(x: float) -> float:
    return math.exp(-0.5 * x * x) / math.sqrt(2.0 * math.pi)


def _Phi(x: float) -> float:
    return float(special.ndtr(x))


def _counts(hits: int, n_signal: int, false_alarms: int, n_noise: int) -> None:
    for name, v in (("hits", hits), ("signal sets", n_signal),
                    ("false alarms", false_alarms), ("noise sets", n_noise)):
        if isinstance(v, bool) or not isinstance(v, int) or v < 0:
            raise TrialsError(f"{name} must be a whole number >= 0, got {v!r}")
    if n_signal < 1 or n_noise < 1:
        raise TrialsError(f"the table needs signal and noise sets, got {n_signal} and {n_noise}")
    if hits > n_signal or false_alarms > n_noise:
        raise TrialsError(f"hits {hits} of {n_signal} and false alarms {false_alarms} of "
                          f"{n_noise}: a count exceeds its row")


def _rate(x: int, n: int) -> tuple[float, bool]:
    """The rate x/n, moved to 1/(2n) or 1 - 1/(2n) when it is 0 or 1 (Macmillan and
    Kaplan 1985); the flag says whether it was moved."""
    if x == 0:
        return 1.0 / (2 * n), True
    if x == n:
        return 1.0 - 1.0 / (2 * n), True
    return x / n, False


# ----------------------------------------------------------------- the table's tests


@dataclass(frozen=True, slots=True)
class TableTest(Record):
    """Fisher's exact test (one-sided, H1: H > F) and Pearson's chi-square of a 2 x 2
    table ``[[hits, misses], [false alarms, correct rejections]]``."""

    table: tuple[tuple[int, int], tuple[int, int]]
    fisher_p: float
    chi2: float | None
    chi2_p: float | None  # two-sided, 1 df
    chi2_p_one_sided: float | None  # from the signed root, H1: H > F
    note: str


def table_test(hits: int, n_signal: int, false_alarms: int, n_noise: int) -> TableTest:
    """Fisher's exact test and Pearson's chi-square of the signal-detection table.

    Parameters
    ----------
    hits, n_signal : int
        Signal answers to the signal sets, and the signal sets answered.
    false_alarms, n_noise : int
        Signal answers to the noise sets, and the noise sets answered.

    Returns
    -------
    TableTest
        ``fisher_p = P(X >= hits)`` for X hypergeometric (the table's margins fixed;
        Fisher 1935), one-sided for ``H > F``; ``chi2 = N (ad - bc)^2 / (r1 r2 c1 c2)``
        (Pearson, no continuity correction, 1 df) with its two-sided p and the one-sided
        ``p = Phi(-z)``, ``z`` the signed root; None where a margin is 0.

    Notes
    -----
    Assumes independent answers. The chi-square is a large-sample reading (common
    practice: every expected count at least 5); Fisher's test is exact at any size.
    """
    _counts(hits, n_signal, false_alarms, n_noise)
    a, b, c, d = hits, n_signal - hits, false_alarms, n_noise - false_alarms
    total = a + b + c + d
    said = a + c
    fisher_p = float(min(1.0, stats.hypergeom.sf(a - 1, total, said, n_signal)))
    r1, r2, c1, c2 = a + b, c + d, a + c, b + d
    note = ""
    if min(r1, r2, c1, c2) == 0:
        return TableTest(((a, b), (c, d)), fisher_p, None, None, None,
                         "every answer is the same: no chi-square")
    chi2 = total * (a * d - b * c) ** 2 / (r1 * r2 * c1 * c2)
    z = math.copysign(math.sqrt(chi2), a * d - b * c)
    expected = min(r * k / total for r in (r1, r2) for k in (c1, c2))
    if expected < 5:
        note = f"smallest expected count {expected:.3g} < 5: read Fisher's exact test"
    return TableTest(((a, b), (c, d)), fisher_p, float(chi2), float(stats.chi2.sf(chi2, 1)),
                     float(special.ndtr(-z)), note)


# ----------------------------------------------------------------- d' by model


@dataclass(frozen=True, slots=True)
class SignalDprime(Record):
    """d' of a signal-detection table with its standard error and Wald interval.

    ``criterion`` is ``c`` (yes/no) or ``k`` (differencing); ``hit_rate`` and
    ``false_alarm_rate`` are the rates used (after any 1/(2N) move, said in ``note``).
    """

    model: str
    hit_rate: float
    false_alarm_rate: float
    dprime: float
    dprime_se: float | None
    dprime_ci: tuple[float, float] | None
    level: float
    criterion: float
    capped: bool
    note: str


def _yes_no(h: float, f: float, ns: int, nn: int) -> tuple[float, float | None, float]:
    zh, zf = _z(h), _z(f)
    d = zh - zf
    var = h * (1 - h) / (ns * _phi(zh) ** 2) + f * (1 - f) / (nn * _phi(zf) ** 2)
    return d, math.sqrt(var), -(zh + zf) / 2.0


def same_different_hit_rate(d: float, k: float) -> float:
    """``H = Phi((d - k)/sqrt 2) + Phi((-d - k)/sqrt 2)``: P("different" | unmatched pair)
    under the differencing model (Macmillan and Creelman 2005, ch. 9)."""
    return _Phi((d - k) / _SQRT2) + _Phi((-d - k) / _SQRT2)


def _differencing(h: float, f: float, ns: int, nn: int
                  ) -> tuple[float, float | None, float, bool]:
    k = _SQRT2 * _z(1.0 - f / 2.0)  # F = 2 Phi(-k / sqrt 2)
    if h <= f:
        return 0.0, None, k, False
    top = same_different_hit_rate(DPRIME_MAX, k)
    if h >= top:
        return DPRIME_MAX, None, k, True
    d = optimize.brentq(lambda x: same_different_hit_rate(x, k) - h, 0.0, DPRIME_MAX,
                        xtol=1e-13, rtol=1e-13)
    u, v = (d - k) / _SQRT2, (-d - k) / _SQRT2
    dh_dd = (_phi(u) - _phi(v)) / _SQRT2
    dh_dk = -(_phi(u) + _phi(v)) / _SQRT2
    dk_df = -1.0 / (_SQRT2 * _phi(k / _SQRT2))
    if dh_dd <= 1e-12:
        return float(d), None, k, False
    g_h = 1.0 / dh_dd
    g_f = -dh_dk * dk_df / dh_dd
    var = g_h**2 * h * (1 - h) / ns + g_f**2 * f * (1 - f) / nn
    return float(d), math.sqrt(var), k, False


def signal_dprime(hits: int, n_signal: int, false_alarms: int, n_noise: int, *, model: str,
                  level: float = 0.95) -> SignalDprime:
    """d' of a signal-detection table under the yes/no or the differencing model.

    Parameters
    ----------
    hits, n_signal, false_alarms, n_noise : int
        As in :func:`table_test`.
    model : str
        :data:`YES_NO` (A-not-A) or :data:`DIFFERENCING` (same-different).
    level : float
        Level of the two-sided Wald interval ``d' +- z se`` (floored at 0).

    Returns
    -------
    SignalDprime

    Notes
    -----
    Formulas, assumptions and references in the module docstring. The standard error is
    the delta method's; it is None where d' is floored at 0 by the differencing model
    (``H <= F``, the slope of ``H`` in d' is 0 there) or capped.
    """
    _counts(hits, n_signal, false_alarms, n_noise)
    if model not in MODELS:
        raise TrialsError(f"model must be one of {MODELS!r}, got {model!r}")
    if not 0.0 < level < 1.0:
        raise TrialsError(f"level must lie in (0, 1), got {level!r}")
    h, moved_h = _rate(hits, n_signal)
    f, moved_f = _rate(false_alarms, n_noise)
    notes = []
    if moved_h or moved_f:
        notes.append("a rate of 0 or 1 moved to 1/(2N) or 1 - 1/(2N) (Macmillan and Kaplan "
                     "1985)")
    capped = False
    if model == YES_NO:
        d, se, crit = _yes_no(h, f, n_signal, n_noise)
        if d >= DPRIME_MAX:
            d, se, capped = DPRIME_MAX, None, True
    else:
        d, se, crit, capped = _differencing(h, f, n_signal, n_noise)
        if h <= f:
            notes.append("hit rate at or below the false-alarm rate: d' set to 0")
    if capped:
        notes.append(f"d' capped at {DPRIME_MAX} (a lower bound)")
    ci = None
    if se is not None:
        zq = _z(0.5 + level / 2.0)
        ci = (max(0.0, d - zq * se) if model == DIFFERENCING else d - zq * se, d + zq * se)
    return SignalDprime(model, h, f, float(d), se, ci, level, float(crit), capped,
                        "; ".join(notes))


# ----------------------------------------------------------------- the whole test


@dataclass(frozen=True, slots=True)
class SignalResult(Record):
    """The test of a signal-detection table and its d'.

    ``significant`` is ``fisher_p <= alpha`` (Fisher's exact one-sided test decides).
    """

    method: str
    hits: int
    n_signal: int
    false_alarms: int
    n_noise: int
    alpha: float
    p_value: float
    significant: bool
    test: TableTest
    dprime: SignalDprime
    note: str


def signal_test(hits: int, n_signal: int, false_alarms: int, n_noise: int, *, method: str,
                model: str, alpha: float = 0.05, level: float = 0.95) -> SignalResult:
    """Fisher's exact test of the table (one-sided) and d' with its standard error.

    Parameters
    ----------
    hits, n_signal, false_alarms, n_noise : int
        As in :func:`table_test`.
    method : str
        The registry name (echoed).
    model : str
        :data:`YES_NO` or :data:`DIFFERENCING`.
    alpha, level : float
        The test's risk and the interval's level.

    Returns
    -------
    SignalResult

    Notes
    -----
    :func:`table_test` and :func:`signal_dprime`; Fisher (1935); Macmillan and Creelman
    (2005). Assumes independent answers.
    """
    if not 0.0 < alpha < 1.0:
        raise TrialsError(f"alpha must lie in (0, 1), got {alpha!r}")
    t = table_test(hits, n_signal, false_alarms, n_noise)
    dp = signal_dprime(hits, n_signal, false_alarms, n_noise, model=model, level=level)
    note = "; ".join(x for x in (t.note, dp.note) if x)
    return SignalResult(method, hits, n_signal, false_alarms, n_noise, float(alpha),
                        t.fisher_p, bool(t.fisher_p <= alpha), t, dp, note)
