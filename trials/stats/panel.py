"""Panel performance: does each panelist discriminate, repeat and agree with the panel?"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from trials.model import Record
from trials.stats.posthoc import _check_alpha
from trials.stats.ratings import (
    check_unique,
    label_codes,
    numeric_column,
    require_columns,
    sample_panelist_codes,
)


@dataclass(frozen=True, slots=True)
class PanelistPerformance(Record):
    """One panelist's performance on one attribute.

    ``F``/``p_value``: one-way ANOVA of the panelist's scores across samples
    (discrimination; None without replicates); ``mse``: the residual mean square across
    replicates (repeatability, lower is better); ``agreement``: Pearson correlation of
    the panelist's sample means with the other panelists' sample means; ``flags``: why
    the panelist stands apart (empty when not).
    """

    panelist: str
    n: int
    F: float | None
    p_value: float | None
    mse: float | None
    df_error: int | None
    agreement: float | None
    flags: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class PanelPerformance(Record):
    """Per-panelist discrimination, repeatability and agreement, with the flag rule."""

    score: str
    alpha: float
    rule: str
    panelists: tuple[PanelistPerformance, ...]
    median_mse: float | None

    def to_frame(self) -> pd.DataFrame:
        rows = [p.to_dict() for p in self.panelists]
        for r in rows:
            r["flags"] = "; ".join(r["flags"])
        return pd.DataFrame(rows).set_index("panelist")

    def flagged(self) -> tuple[str, ...]:
        return tuple(p.panelist for p in self.panelists if p.flags)


def panel_performance(
    data: pd.DataFrame,
    *,
    score: str = "score",
    sample: str = "sample",
    panelist: str = "panelist",
    replicate: str | None = "replicate",
    alpha: float = 0.05,
    min_agreement: float = 0.5,
    mse_ratio: float = 2.0,
) -> PanelPerformance:
    """Per-panelist performance on one attribute: discrimination, repeatability, agreement.

    Parameters
    ----------
    data : DataFrame
        Tidy ratings of one attribute (one row per score).
    score, sample, panelist, replicate : str
        Column names; ``replicate`` None when each sample was rated once.
    alpha : float
        A panelist whose one-way F across samples has ``p >= alpha`` is flagged as
        not discriminating.
    min_agreement : float
        Agreement (correlation) below this is flagged (0.5).
    mse_ratio : float
        A residual mean square above ``mse_ratio`` times the panel's median is flagged as
        poor repeatability (2).

    Returns
    -------
    PanelPerformance

    Notes
    -----
    For panelist j with ratings ``y_ijr``: ``F_j = MS_samples / MS_error`` of a one-way
    ANOVA over samples i (``(t - 1, n_j - t)`` df; ``scipy.stats.f`` tail), the
    discrimination test of the per-assessor ANOVA (Naes, Brockhoff and Tomic 2010,
    ch. 3); ``mse_j = MS_error`` is the repeatability. Agreement ``r_j`` is the Pearson
    correlation between panelist j's sample means and the mean of the other panelists'
    sample means (leave-one-out, so the panelist does not agree with himself), over the
    samples j rated. The three flag thresholds (``p >= alpha``, ``r < 0.5``,
    ``mse > 2 x median``) are a house rule for spotting a panelist who stands apart,
    not a published criterion; they prompt a look and retraining, not exclusion.
    Assumes normal errors within each panelist; needs replicates for F and mse.

    References
    ----------
    Naes, T., Brockhoff, P. B. and Tomic, O. (2010). Statistics for Sensory and
    Consumer Science. Wiley, ch. 3 (quality control of sensory profile data).
    """
    alpha = _check_alpha(alpha)
    cols = [score, sample, panelist] + ([replicate] if replicate else [])
    require_columns(data, cols)
    y = numeric_column(data, score)
    s_codes, s_names, p_codes, p_names = sample_panelist_codes(data, sample, panelist)
    t, b = len(s_names), len(p_names)
    if replicate:
        r_codes, r_names = label_codes(data, replicate)
        check_unique([p_codes, s_codes, r_codes], [b, t, len(r_names)],
                     [panelist, sample, replicate])
    else:
        check_unique([p_codes, s_codes], [b, t], [panelist, sample])
    cell = p_codes * t + s_codes
    n = np.bincount(cell, minlength=b * t).reshape(b, t).astype(float)
    sums = np.bincount(cell, weights=y, minlength=b * t).reshape(b, t)
    sq = np.bincount(cell, weights=y * y, minlength=b * t).reshape(b, t)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = np.where(n > 0, sums / n, np.nan)
    out_rows = []
    mses: list[float] = []
    for j in range(b):
        nj = int(n[j].sum())
        rated = n[j] > 0
        tj = int(rated.sum())
        df_e = nj - tj
        f = p = mse = None
        if df_e > 0 and tj >= 2:
            grand = sums[j].sum() / nj
            ss_between = float((n[j][rated] * (means[j][rated] - grand) ** 2).sum())
            ss_within = float((sq[j][rated] - sums[j][rated] ** 2 / n[j][rated]).sum())
            ss_within = max(ss_within, 0.0)
            mse = ss_within / df_e
            ms_b = ss_between / (tj - 1)
            f = ms_b / mse if mse > 0 else (math.inf if ms_b > 0 else None)
            if f is not None:
                p = float(stats.f.sf(f, tj - 1, df_e)) if math.isfinite(f) else 0.0
            mses.append(mse)
        others = np.delete(means, j, axis=0)
        with np.errstate(invalid="ignore"):
            panel = np.nanmean(others, axis=0) if others.size else np.full(t, np.nan)
        ok = rated & np.isfinite(panel)
        agreement = None
        if ok.sum() >= 3:  # two points always correlate +-1
            a, c = means[j][ok], panel[ok]
            if a.std() > 0 and c.std() > 0:
                agreement = float(np.corrcoef(a, c)[0, 1])
        out_rows.append((p_names[j], nj, f, p, mse, df_e if df_e > 0 else None, agreement))
    median_mse = float(np.median(mses)) if mses else None
    rated_count = {p_names[j]: int((n[j] > 0).sum()) for j in range(b)}
    result = []
    for name, nj, f, p, mse, df_error, agreement in out_rows:
        flags = []
        if p is not None and p >= alpha:
            flags.append(f"does not discriminate (p = {p:.3g} >= {alpha:g})")
        if mse is not None and median_mse and mse > mse_ratio * median_mse:
            flags.append(f"poor repeatability (mse {mse:.3g} > {mse_ratio:g} x median "
                         f"{median_mse:.3g})")
        if agreement is not None and agreement < min_agreement:
            flags.append(f"disagrees with the panel (r = {agreement:.2f} < {min_agreement:g})")
        elif agreement is None and rated_count[name] >= 3:
            flags.append("agreement not computable (constant means)")
        result.append(PanelistPerformance(name, nj, f, p, mse, df_error, agreement, tuple(flags)))
    rule = (
        f"house rule (no published source): flag p >= {alpha:g} for the panelist's F across "
        f"samples, agreement r < {min_agreement:g} with the other panelists' means, or "
        f"mse > {mse_ratio:g} x the panel's median mse"
    )
    return PanelPerformance(score=score, alpha=alpha, rule=rule, panelists=tuple(result),
                            median_mse=median_mse)
