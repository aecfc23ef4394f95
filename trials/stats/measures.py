"""Measured variables of test batches, and how sensory results follow them.

A batch (see :class:`trials.model.Batch`) carries process settings (oven temperature,
proof time, brine strength ...) and measured variables (salt content, crumb moisture,
pH ...), each a name, a value and a unit. This module summarises them by sample,
compares samples with a one-way analysis of variance per variable, and relates the
samples' sensory means to the samples' measured or set values with a Pearson
correlation and a straight-line fit.

The functions take plain values (batches, mappings, sequences or DataFrames) and return
frozen records with ``to_dict()``. Pure: no I/O, no database.

A caution that the results repeat in their ``note``: a trial compares a handful of
samples, so a correlation between a sample's mean score and a sample's mean salt
content rests on as many points as there are samples (often 2 to 5). Read it as a
descriptive trend over the variants tried, not as proof that the variable causes the
difference; the batches were not assigned at random over a range of the variable.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats as sps

from trials.errors import TrialsError
from trials.model import Batch, Record
from trials.units import UnitError, convert, parse_unit

SMALL_SAMPLE_NOTE = (
    "few points: a descriptive trend over the samples tried, not proof that the "
    "variable causes the difference"
)

# --------------------------------------------------------------------------- records


@dataclass(frozen=True, slots=True)
class VariableSummary(Record):
    """Mean, standard deviation and count of one variable over one sample's batches.

    ``sd`` is the sample standard deviation (divisor n - 1); None when n < 2.
    ``kind`` is ``"measure"`` (measured variable) or ``"setting"`` (process setting).
    """

    variable: str
    unit: str
    kind: str
    sample: str
    n: int
    mean: float
    sd: float | None


@dataclass(frozen=True, slots=True)
class OneWayAnova(Record):
    """Fisher's one-way analysis of variance of one variable across samples.

    ``statistic`` is F = MS_between / MS_within with (``df_between``, ``df_within``)
    degrees of freedom; ``p_value`` the upper tail of that F distribution. Both are
    None (and ``note`` says why) when fewer than two samples or no within-sample
    replication leave nothing to test.
    """

    variable: str
    unit: str
    kind: str
    k: int
    n: int
    df_between: int
    df_within: int
    ss_between: float
    ss_within: float
    statistic: float | None
    p_value: float | None
    note: str = ""


@dataclass(frozen=True, slots=True)
class Correlation(Record):
    """Pearson's product-moment correlation ``r`` of ``n`` pairs, two-sided ``p_value``."""

    n: int
    r: float | None
    p_value: float | None
    note: str = ""


@dataclass(frozen=True, slots=True)
class Regression(Record):
    """Least-squares line ``y = intercept + slope * x``.

    ``r2`` is the coefficient of determination, ``p_value`` the two-sided t test of
    slope = 0 (n - 2 degrees of freedom), ``slope_se`` the slope's standard error.
    """

    n: int
    slope: float | None
    intercept: float | None
    r2: float | None
    p_value: float | None
    slope_se: float | None
    note: str = ""


@dataclass(frozen=True, slots=True)
class Relation(Record):
    """How an outcome (a sensory mean per sample) follows a predictor across samples."""

    outcome: str
    predictor: str
    unit: str
    kind: str
    samples: tuple[str, ...]
    x: tuple[float, ...]
    y: tuple[float, ...]
    correlation: Correlation
    regression: Regression
    note: str = SMALL_SAMPLE_NOTE


@dataclass(frozen=True, slots=True)
class MeasuresSummary(Record):
    """Every numeric variable of the batches: per-sample summaries and one ANOVA each."""

    summaries: tuple[VariableSummary, ...]
    anovas: tuple[OneWayAnova, ...]
    # values left out because their unit cannot be converted to the variable's unit
    notes: tuple[str, ...] = ()

    @property
    def empty(self) -> bool:
        return not self.summaries

    def to_frame(self) -> pd.DataFrame:
        """One row per variable and sample: variable unit kind sample n mean sd."""
        cols = ["variable", "unit", "kind", "sample", "n", "mean", "sd"]
        return pd.DataFrame([s.to_dict() for s in self.summaries], columns=cols)

    def sample_means(self, variable: str) -> dict[str, float]:
        """sample -> mean of ``variable`` over its batches."""
        return {s.sample: s.mean for s in self.summaries if s.variable == variable}


# --------------------------------------------------------------------------- tables


def _number(value: object) -> float | None:
    if isinstance(value, bool):
        return None
    if isinstance(value, (int, float)):
        out = float(value)
    else:
        text = str(value).strip().replace(",", ".") if value is not None else ""
        try:
            out = float(text)
        except ValueError:
            return None
    return out if math.isfinite(out) else None


def batch_table(batches: Iterable[Batch]) -> pd.DataFrame:
    """The batches' numeric settings and measures as a tidy table.

    Parameters
    ----------
    batches : iterable of trials.model.Batch

    Returns
    -------
    pandas.DataFrame
        One row per batch and variable, columns ``sample batch kind variable unit
        value``; ``kind`` is ``"measure"`` or ``"setting"``. Values that are not
        numbers (a flour type, "yes") are left out; a decimal comma is read as a point.
    """
    rows = []
    for b in batches:
        for kind, items in (("measure", b.measures), ("setting", b.settings)):
            for m in items:
                value = _number(m.value)
                if value is None:
                    continue
                rows.append(
                    {
                        "sample": b.sample_name,
                        "batch": b.label,
                        "kind": kind,
                        "variable": m.name,
                        "unit": m.unit,
                        "value": value,
                    }
                )
    cols = ["sample", "batch", "kind", "variable", "unit", "value"]
    return pd.DataFrame(rows, columns=cols)


# --------------------------------------------------------------------------- ANOVA


def one_way_anova(groups: Mapping[str, Sequence[float]], *, variable: str = "",
                  unit: str = "", kind: str = "measure") -> OneWayAnova:
    """Fisher's one-way analysis of variance of one variable across groups.

    Parameters
    ----------
    groups : mapping of str to sequence of float
        Group (sample) name -> the values of its batches.
    variable, unit, kind : str
        Echoed in the result.

    Returns
    -------
    OneWayAnova
        Sums of squares, degrees of freedom, F and its p-value.

    Notes
    -----
    With k groups, n values in all, group means m_i of n_i values and grand mean m:
    SS_between = sum n_i (m_i - m)^2 on k - 1 df; SS_within = sum (x - m_i)^2 on
    n - k df; F = (SS_between / (k - 1)) / (SS_within / (n - k)), referred to the F
    distribution with (k - 1, n - k) df. Assumes independent batches, normal errors
    and equal variances across groups. No test is possible with fewer than two groups
    or with no replication within groups (n = k); the result then says so. When every
    group is constant and the means differ, F is infinite and p = 0.

    References
    ----------
    Fisher, R. A. (1925). Statistical Methods for Research Workers, ch. VII.
    Oliver and Boyd. Cross-checked in the tests against ``scipy.stats.f_oneway``.
    """
    clean = {str(g): np.asarray([float(v) for v in vals], dtype=float)
             for g, vals in groups.items() if len(vals)}
    for g, vals in clean.items():
        if not np.all(np.isfinite(vals)):
            raise TrialsError(f"{variable or 'variable'}: group {g!r} holds a value that is "
                              "not a finite number")
    k = len(clean)
    n = int(sum(len(v) for v in clean.values()))
    df_b, df_w = k - 1, n - k
    if k == 0:
        return OneWayAnova(variable, unit, kind, 0, 0, 0, 0, 0.0, 0.0, None, None,
                           "no values")
    allv = np.concatenate(list(clean.values()))
    grand = float(allv.mean())
    ss_b = float(sum(len(v) * (v.mean() - grand) ** 2 for v in clean.values()))
    ss_w = float(sum(((v - v.mean()) ** 2).sum() for v in clean.values()))
    if k < 2:
        return OneWayAnova(variable, unit, kind, k, n, df_b, max(df_w, 0), ss_b, ss_w,
                           None, None, "one sample only: nothing to compare")
    if df_w < 1:
        return OneWayAnova(variable, unit, kind, k, n, df_b, 0, ss_b, ss_w, None, None,
                           "one batch per sample: no within-sample variation to test against")
    ms_b, ms_w = ss_b / df_b, ss_w / df_w
    if ms_w == 0.0:
        if ms_b == 0.0:
            return OneWayAnova(variable, unit, kind, k, n, df_b, df_w, ss_b, ss_w, None,
                               None, "every value is the same")
        return OneWayAnova(variable, unit, kind, k, n, df_b, df_w, ss_b, ss_w,
                           math.inf, 0.0, "no variation within samples")
    f = ms_b / ms_w
    p = float(sps.f.sf(f, df_b, df_w))
    return OneWayAnova(variable, unit, kind, k, n, df_b, df_w, ss_b, ss_w, float(f), p)


def summarise_measures(batches: Iterable[Batch] | pd.DataFrame) -> MeasuresSummary:
    """Per-sample mean, sd and n of every numeric variable, and a one-way ANOVA each.

    Parameters
    ----------
    batches : iterable of trials.model.Batch, or the DataFrame of :func:`batch_table`

    Returns
    -------
    MeasuresSummary
        ``summaries`` ordered by kind (measures first), variable, then sample in order
        of first appearance; ``anovas`` one per variable (see :func:`one_way_anova`).

    Notes
    -----
    The unit of a variable is the first one recorded for it; values recorded in
    another unit of the same kind of quantity (°C and K, g and kg) are converted to it
    with :func:`trials.units.convert` (pint). A value whose unit cannot be read or
    converted (g against °C) is left out, and ``notes`` says which; an empty unit is
    read as the variable's unit.
    """
    frame = batches if isinstance(batches, pd.DataFrame) else batch_table(batches)
    summaries: list[VariableSummary] = []
    anovas: list[OneWayAnova] = []
    notes: list[str] = []
    if frame.empty:
        return MeasuresSummary((), ())
    order = {"measure": 0, "setting": 1}
    keys = list(dict.fromkeys(zip(frame["kind"], frame["variable"])))
    keys.sort(key=lambda kv: order.get(kv[0], 2))
    sample_order = list(dict.fromkeys(frame["sample"]))
    for kind, variable in keys:
        sub = frame[(frame["kind"] == kind) & (frame["variable"] == variable)]
        sub, unit, note = _in_one_unit(sub, variable)
        if note:
            notes.append(note)
        groups: dict[str, list[float]] = {}
        for s in sample_order:
            vals = sub.loc[sub["sample"] == s, "value"].astype(float).tolist()
            if not vals:
                continue
            groups[s] = vals
            arr = np.asarray(vals)
            sd = float(arr.std(ddof=1)) if len(arr) > 1 else None
            summaries.append(VariableSummary(variable, unit, kind, s, len(arr),
                                             float(arr.mean()), sd))
        anovas.append(one_way_anova(groups, variable=variable, unit=unit, kind=kind))
    return MeasuresSummary(tuple(summaries), tuple(anovas), tuple(notes))


def _in_one_unit(sub: pd.DataFrame, variable: str) -> tuple[pd.DataFrame, str, str]:
    """One variable's rows with every value stated in its first readable unit; the rows
    whose unit cannot be converted are dropped and named in the note."""
    readable = []
    for u in dict.fromkeys(sub["unit"]):
        try:
            parse_unit(u)
        except UnitError:
            continue
        if u:
            readable.append(u)
    unit = readable[0] if readable else ""
    values: list[float | None] = []
    left_out: list[str] = []
    for value, u in zip(sub["value"].astype(float), sub["unit"]):
        try:
            values.append(convert(value, u, unit))
        except UnitError:
            values.append(None)
            if u not in left_out:
                left_out.append(u)
    out = sub.assign(value=values)
    out = out[out["value"].notna()]
    note = ""
    if left_out:
        shown = ", ".join(repr(u) for u in left_out)
        note = (f"{variable!r}: values in {shown} left out, because they cannot be stated "
                f"in {unit!r}" if unit else f"{variable!r}: values in {shown} left out, "
                "because the unit is not one this tool knows")
    return out, unit, note


# --------------------------------------------------------------------------- relations


def _pairs(x: Sequence[float], y: Sequence[float]) -> tuple[np.ndarray, np.ndarray]:
    xa = np.asarray([float(v) for v in x], dtype=float)
    ya = np.asarray([float(v) for v in y], dtype=float)
    if xa.shape != ya.shape:
        raise TrialsError(f"x and y differ in length: {len(xa)} and {len(ya)}")
    if not (np.all(np.isfinite(xa)) and np.all(np.isfinite(ya))):
        raise TrialsError("x and y must be finite numbers")
    return xa, ya


def pearson_correlation(x: Sequence[float], y: Sequence[float]) -> Correlation:
    """Pearson's product-moment correlation with its two-sided p-value.

    Parameters
    ----------
    x, y : sequences of float, the same length n

    Returns
    -------
    Correlation
        ``r`` and ``p_value``; both None (``note`` says why) when n < 3 or when x or
        y does not vary.

    Notes
    -----
    r = S_xy / sqrt(S_xx S_yy) with S the centred sums of squares and products;
    t = r sqrt((n - 2) / (1 - r^2)) follows Student's t with n - 2 df when x and y are
    bivariate normal and uncorrelated; p = 2 P(T > |t|) (p = 0 when |r| = 1). With two
    points r is always +1 or -1, so no test is given. Across a trial's few samples this
    is a descriptive trend, not proof of a cause.

    References
    ----------
    Pearson, K. (1896). Mathematical contributions to the theory of evolution III.
    Phil. Trans. R. Soc. A 187:253-318. Fisher, R. A. (1925), Statistical Methods for
    Research Workers (the t form). Cross-checked against ``scipy.stats.pearsonr``.
    """
    xa, ya = _pairs(x, y)
    n = int(xa.size)
    if n < 3:
        return Correlation(n, None, None, "fewer than 3 samples: no correlation test")
    dx, dy = xa - xa.mean(), ya - ya.mean()
    sxx, syy, sxy = float(dx @ dx), float(dy @ dy), float(dx @ dy)
    if sxx == 0.0 or syy == 0.0:
        return Correlation(n, None, None, "a variable does not vary across the samples")
    r = max(-1.0, min(1.0, sxy / math.sqrt(sxx * syy)))
    df = n - 2
    if abs(r) >= 1.0:
        return Correlation(n, r, 0.0, SMALL_SAMPLE_NOTE)
    t = r * math.sqrt(df / (1.0 - r * r))
    p = float(2.0 * sps.t.sf(abs(t), df))
    return Correlation(n, r, p, SMALL_SAMPLE_NOTE)


def linear_regression(x: Sequence[float], y: Sequence[float]) -> Regression:
    """Ordinary least-squares straight line of y on x.

    Parameters
    ----------
    x, y : sequences of float, the same length n

    Returns
    -------
    Regression
        ``slope``, ``intercept``, ``r2``, ``p_value`` (t test of slope = 0) and
        ``slope_se``; the test fields are None when n < 3, everything is None when
        x does not vary, and ``r2`` and the test are None when y does not vary (r2 is
        0/0 there, undefined, not 1).

    Notes
    -----
    slope = S_xy / S_xx, intercept = mean(y) - slope mean(x); residual variance
    s^2 = (S_yy - slope S_xy) / (n - 2); se(slope) = s / sqrt(S_xx);
    t = slope / se(slope) on n - 2 df; r2 = S_xy^2 / (S_xx S_yy). Assumes independent,
    normal errors of constant variance around a straight line. The p-value equals that
    of :func:`pearson_correlation` for the same data. With few samples, a descriptive
    trend, not proof.

    References
    ----------
    Draper, N. R. and Smith, H. (1998). Applied Regression Analysis, 3rd ed., ch. 1.
    Wiley. Cross-checked against ``statsmodels`` OLS and ``scipy.stats.linregress``.
    """
    xa, ya = _pairs(x, y)
    n = int(xa.size)
    if n < 2:
        return Regression(n, None, None, None, None, None, "fewer than 2 samples: no line")
    dx, dy = xa - xa.mean(), ya - ya.mean()
    sxx, syy, sxy = float(dx @ dx), float(dy @ dy), float(dx @ dy)
    if sxx == 0.0:
        return Regression(n, None, None, None, None, None,
                          "the predictor does not vary across the samples")
    slope = sxy / sxx
    intercept = float(ya.mean() - slope * xa.mean())
    if syy == 0.0:  # a constant response: r2 = 0/0, undefined (not a perfect fit)
        return Regression(n, 0.0, intercept, None, None, None,
                          "the response does not vary across the samples: r2 is undefined")
    r2 = (sxy * sxy) / (sxx * syy)
    if n < 3:
        return Regression(n, slope, intercept, r2, None, None,
                          "2 samples: the line passes through both; no test")
    df = n - 2
    sse = max(syy - slope * sxy, 0.0)
    s2 = sse / df
    se = math.sqrt(s2 / sxx)
    if se == 0.0:
        p = 0.0 if slope != 0.0 else None
    else:
        p = float(2.0 * sps.t.sf(abs(slope / se), df))
    return Regression(n, float(slope), intercept, float(r2), p, float(se), SMALL_SAMPLE_NOTE)


def relate(outcome_means: Mapping[str, float], predictor_means: Mapping[str, float], *,
           outcome: str, predictor: str, unit: str = "", kind: str = "measure") -> Relation:
    """Relate a per-sample outcome (a sensory mean) to a per-sample predictor.

    Parameters
    ----------
    outcome_means : mapping of sample -> float (e.g. mean liking of each sample)
    predictor_means : mapping of sample -> float (e.g. mean salt content of its batches)
    outcome, predictor, unit, kind : str
        Names echoed in the result.

    Returns
    -------
    Relation
        The samples present in both mappings, their (x, y) values, the Pearson
        correlation and the least-squares line (see :func:`pearson_correlation` and
        :func:`linear_regression`).

    Notes
    -----
    One point per sample, so n is the number of samples: a descriptive trend across
    the variants tried, not proof that the predictor causes the outcome.
    """
    samples = tuple(s for s in outcome_means if s in predictor_means)
    x = tuple(float(predictor_means[s]) for s in samples)
    y = tuple(float(outcome_means[s]) for s in samples)
    return Relation(outcome, predictor, unit, kind, samples, x, y,
                    pearson_correlation(x, y), linear_regression(x, y))


def relate_to_batches(outcome_means: Mapping[str, float], measures: MeasuresSummary, *,
                      outcome: str, min_samples: int = 3) -> tuple[Relation, ...]:
    """:func:`relate` the outcome to every batch variable known for enough samples.

    Variables known for fewer than ``min_samples`` of the outcome's samples, or that
    do not vary across them, are left out.
    """
    out: list[Relation] = []
    seen: set[tuple[str, str]] = set()
    for s in measures.summaries:
        key = (s.kind, s.variable)
        if key in seen:
            continue
        seen.add(key)
        means = {v.sample: v.mean for v in measures.summaries
                 if v.kind == s.kind and v.variable == s.variable}
        common = [k for k in outcome_means if k in means]
        if len(common) < min_samples or len({means[k] for k in common}) < 2:
            continue
        out.append(relate(outcome_means, means, outcome=outcome, predictor=s.variable,
                          unit=s.unit, kind=s.kind))
    return tuple(out)
