"""Analysis of variance of ratings with panelists as blocks, and the tidy-table checks
shared by the ratings, ranks, JAR and panel analyses.

Line numbers in error messages count as a spreadsheet does: the header is line 1, so the
first data row is line 2 (data row ``i``, 0-based, is line ``i + 2``).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from trials.errors import TrialsError
from trials.model import Record
from trials.stats.posthoc import (
    DunnettResult,
    PairComparison,
    _check_alpha,
    compact_letter_display,
    dunnett_test,
    pairwise_comparisons,
    tukey_q,
)

LINE_RULE = "line numbers count the header as line 1 (first data row = line 2)"


# ---------------------------------------------------------------- input checks


def _lines(positions: np.ndarray, limit: int = 10) -> str:
    lines = [str(int(p) + 2) for p in positions[:limit]]
    more = len(positions) - limit
    text = ", ".join(lines)
    if more > 0:
        text += f" and {more} more"
    return text


def require_columns(data: pd.DataFrame, columns: Sequence[str]) -> None:
    """Raise TrialsError naming the columns of ``columns`` that ``data`` lacks."""
    if not isinstance(data, pd.DataFrame):
        raise TrialsError(f"expected a pandas DataFrame, got {type(data).__name__!r}")
    missing = [c for c in columns if c not in data.columns]
    if missing:
        raise TrialsError(
            f"missing column(s) {missing!r}; the table has {[str(c) for c in data.columns]!r}"
        )
    if len(data) == 0:
        raise TrialsError("the table has no rows")


def numeric_column(
    data: pd.DataFrame,
    column: str,
    *,
    low: float | None = None,
    high: float | None = None,
) -> np.ndarray:
    """The column as float64, or TrialsError naming the lines that are not numbers.

    Blank cells are errors too (a cup not tasted is a row left out, not a blank score).
    ``low``/``high`` (optional) declare the scale: values outside it are errors.
    """
    col = data[column]
    if pd.api.types.is_bool_dtype(col.dtype):
        raise TrialsError(f"column {column!r} holds true/false values, expected numbers")
    if pd.api.types.is_numeric_dtype(col.dtype):
        values = col.to_numpy(dtype=float, na_value=np.nan)
        bad = np.flatnonzero(~np.isfinite(values))
    else:
        try:  # fast path: pyarrow's cast of clean text (it accepts surrounding spaces)
            values = col.astype("float64").to_numpy(dtype=float, na_value=np.nan)
        except (ValueError, TypeError):  # find the bad cells one by one
            text = col.astype("string").str.strip()
            values = pd.to_numeric(text, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
        bad = np.flatnonzero(~np.isfinite(values))
    if len(bad):
        shown = [str(col.iloc[i]) for i in bad[:5]]
        raise TrialsError(
            f"column {column!r}: not a number at line(s) {_lines(bad)} "
            f"(values {shown!r}); {LINE_RULE}"
        )
    if low is not None or high is not None:
        lo = -math.inf if low is None else float(low)
        hi = math.inf if high is None else float(high)
        if lo > hi:
            raise TrialsError(f"the scale's low end {low!r} lies above its high end {high!r}")
        out = np.flatnonzero((values < lo) | (values > hi))
        if len(out):
            outside = [float(values[i]) for i in out[:5]]
            raise TrialsError(
                f"column {column!r}: outside the scale {low!r}..{high!r} at line(s) "
                f"{_lines(out)} (values {outside!r}); {LINE_RULE}"
            )
    return values


def label_codes(data: pd.DataFrame, column: str) -> tuple[np.ndarray, list[str]]:
    """Integer codes and level names (as text, in order of first appearance) of a label column."""
    col = data[column]
    if col.isna().any():
        bad = np.flatnonzero(col.isna().to_numpy())
        raise TrialsError(f"column {column!r}: empty at line(s) {_lines(bad)}; {LINE_RULE}")
    codes, uniques = pd.factorize(col, sort=False)
    text = pd.Index(uniques).astype("string").str.strip()
    empty = np.asarray(text == "", dtype=bool)
    if empty.any():
        raise TrialsError(
            f"column {column!r}: empty at line(s) {_lines(np.flatnonzero(empty[codes]))}; "
            f"{LINE_RULE}"
        )
    if text.has_duplicates:  # e.g. "A" and "A ", or 1 and "1"
        codes, uniques = pd.factorize(col.astype("string").str.strip(), sort=False)
        text = pd.Index(uniques).astype("string")
    names = [str(u) for u in text.to_numpy(dtype=object).tolist()]
    return codes.astype(np.int64), names



def sample_panelist_codes(data: pd.DataFrame, sample: str, panelist: str):
    """Integer codes and names of the samples and panelists of ``data``, refusing a
    table with one sample or one panelist (nothing to compare, no block)."""
    s_codes, s_names = label_codes(data, sample)
    p_codes, p_names = label_codes(data, panelist)
    if len(s_names) < 2:
        raise TrialsError(
            f"column {sample!r} holds one sample only ({s_names[0]!r}); need two or more"
        )
    if len(p_names) < 2:
        raise TrialsError(
            f"column {panelist!r} holds one panelist only ({p_names[0]!r}); need two or more"
        )
    return s_codes, s_names, p_codes, p_names

def check_unique(
    codes: Sequence[np.ndarray], sizes: Sequence[int], columns: Sequence[str]
) -> None:
    """TrialsError naming the lines whose combination of ``columns`` repeats."""
    key = np.zeros(len(codes[0]), dtype=np.int64)
    for c, size in zip(codes, sizes):
        key = key * size + c
    counts = np.bincount(key)
    dup = np.flatnonzero(counts[key] > 1)
    if len(dup):
        hint = "" if "replicate" in " ".join(columns) else (
            "; if panelists rated samples more than once, name the replicate column"
        )
        raise TrialsError(
            f"the same {'/'.join(columns)} appears more than once at line(s) "
            f"{_lines(dup)}; {LINE_RULE}{hint}"
        )


# ---------------------------------------------------------------- results


@dataclass(frozen=True, slots=True)
class AnovaRow(Record):
    """One line of an ANOVA table. ``F``/``p`` are None where no test applies."""

    term: str
    df: float
    ss: float
    ms: float
    F: float | None
    p: float | None


@dataclass(frozen=True, slots=True)
class RatingAnova(Record):
    """ANOVA of ratings with panelists as blocks, sample means and comparisons.

    ``means`` are the sample means used in the comparisons (least-squares, i.e.
    panelist-adjusted, means when the design is unbalanced; raw means otherwise);
    ``raw_means`` are plain averages. ``se``/``ci`` are comparison standard errors and
    intervals of the means (see :func:`rating_anova`), ``n`` the ratings per sample.
    ``error_term``, ``ms_test`` and ``df_test`` name the term the sample effect is
    tested against; ``hsd`` and ``lsd`` are Tukey's and Fisher's least significant
    differences at alpha from it (for unbalanced data, from the average variance of a
    difference; ``pairs`` gives each pair's own). ``groups``: samples sharing a letter
    do not differ (Tukey at alpha). ``cov_unscaled`` is ``V`` of
    :mod:`trials.stats.posthoc`, in the order of ``samples``.
    """

    score: str
    sample: str
    panelist: str
    replicate: str | None
    alpha: float
    level: float
    design: str
    balanced: bool
    ss_type: str
    method: str
    error_term: str
    ms_test: float
    df_test: float
    anova: tuple[AnovaRow, ...]
    samples: tuple[str, ...]
    means: dict[str, float]
    raw_means: dict[str, float]
    n: dict[str, int]
    se: dict[str, float]
    ci: dict[str, tuple[float, float]]
    q_critical: float
    hsd: float
    lsd: float
    groups: dict[str, str]
    pairs: tuple[PairComparison, ...]
    panelists: int
    replicates: float | None
    cov_unscaled: tuple[tuple[float, ...], ...]

    def to_frame(self) -> pd.DataFrame:
        """The ANOVA table as a DataFrame (one row per term)."""
        return pd.DataFrame([r.to_dict() for r in self.anova]).set_index("term")

    def means_frame(self) -> pd.DataFrame:
        """Samples by mean (highest first) with n, se, ci and letters."""
        rows = [
            {
                "sample": s,
                "mean": self.means[s],
                "raw_mean": self.raw_means[s],
                "n": self.n[s],
                "se": self.se[s],
                "ci_low": self.ci[s][0],
                "ci_high": self.ci[s][1],
                "group": self.groups[s],
            }
            for s in self.samples
        ]
        return pd.DataFrame(rows).sort_values("mean", ascending=False).set_index("sample")

    def term(self, name: str) -> AnovaRow:
        for row in self.anova:
            if row.term == name:
                return row
        raise KeyError(name)

    def dunnett(self, control: str, *, rng: int | np.random.Generator | None = 0) -> DunnettResult:
        """Dunnett's test of each sample against ``control`` with this model's error term."""
        return dunnett_test(
            self.means,
            np.asarray(self.cov_unscaled),
            ms=self.ms_test,
            df=self.df_test,
            control=control,
            alpha=self.alpha,
            rng=rng,
        )


# ---------------------------------------------------------------- the analysis


def _absorb(n: np.ndarray, cell_sums: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Intra-block least squares of the additive model, panelists absorbed.

    ``n`` (panelists x samples) holds counts, ``cell_sums`` the sums of each cell.
    Returns (tau, Q, pinv(C)) with C = R - N' K^-1 N and Q = T - N' K^-1 B.
    """
    k = n.sum(axis=1)
    r = n.sum(axis=0)
    b_tot = cell_sums.sum(axis=1)
    t_tot = cell_sums.sum(axis=0)
    nk = n / k[:, None]
    c = np.diag(r) - n.T @ nk
    q = t_tot - nk.T @ b_tot
    c_plus = np.linalg.pinv(c, hermitian=True)
    tau = c_plus @ q
    return tau, q, c_plus


def _ls_means(n: np.ndarray, cell_sums: np.ndarray, tau: np.ndarray) -> np.ndarray:
    """Least-squares means: tau_i plus the average fitted panelist level."""
    k = n.sum(axis=1)
    beta = (cell_sums.sum(axis=1) - n @ tau) / k
    return tau + beta.mean()


def rating_anova(
    data: pd.DataFrame,
    *,
    score: str = "score",
    sample: str = "sample",
    panelist: str = "panelist",
    replicate: str | None = None,
    alpha: float = 0.05,
    level: float = 0.95,
    low: float | None = None,
    high: float | None = None,
) -> RatingAnova:
    """Two-way ANOVA of ratings, samples fixed and panelists as (random) blocks.

    Parameters
    ----------
    data : DataFrame
        Tidy ratings, one row per score (columns may be text, as read from a file).
    score, sample, panelist : str
        Column names.
    replicate : str, optional
        Column numbering the repeated ratings of a sample by a panelist. With
        replicates the model has a sample x panelist interaction.
    alpha : float
        Risk for the Tukey HSD, Fisher LSD and the letters.
    level : float
        Confidence level of the intervals of the means.
    low, high : float, optional
        The scale's ends; a score outside is an error.

    Returns
    -------
    RatingAnova
        The ANOVA table (terms ``sample``, ``panelist``, ``sample:panelist`` with
        replicates, ``error``), means, comparisons and letters.

    Notes
    -----
    *Model.* Without replicates: randomized complete block design
    ``y_ij = mu + tau_i + beta_j + e_ij``; samples and panelists are tested against
    the residual. With replicates: the mixed assessor model
    ``y_ijr = mu + tau_i + beta_j + (tau beta)_ij + e_ijr`` with panelists and the
    interaction random (unrestricted form, as fitted by mixed-model software); then
    ``F_sample = MS_sample / MS_sample:panelist`` on ``((t-1), (t-1)(b-1))`` df,
    ``F_panelist = MS_panelist / MS_sample:panelist`` and
    ``F_sample:panelist = MS_sample:panelist / MS_error``. If a replicate column is
    named but no cell has two ratings, the block model is used and the method says so.

    *Balanced data* (every panelist rates every sample equally often): closed-form sums
    of squares from cell, sample and panelist totals (``numpy.bincount``), e.g.
    ``SS_sample = sum_i T_i^2 / (b r) - G^2 / N``. They equal the sequential (type I)
    and type II sums of squares.

    *Unbalanced data, missing cells, incomplete blocks*: intra-block analysis (Yates
    1936; Cochran and Cox 1957, ch. 9) by least squares with panelists absorbed:
    ``C = R - N' K^-1 N``, ``Q = T - N' K^-1 B``, ``tau = C^+ Q`` (numpy pseudo-inverse),
    ``SS_sample|panelist = tau' Q``. Type II sums of squares are reported:
    ``SS(sample | panelist)``, ``SS(panelist | sample)`` and, with replicates,
    ``SS(sample:panelist | sample, panelist)`` = additive residual minus within-cell SS.
    Means are least-squares (adjusted) means, ``tau_i`` plus the average fitted
    panelist level. With replicates and unequal cell counts, adjusted means and their
    covariance come from the additive fit to the cell means with error variance
    ``MS_sample:panelist / r_h`` (``r_h`` the harmonic mean of the cell counts): an
    approximation, exact for balanced data. The F test against the interaction is then
    approximate too (no Satterthwaite correction).

    *Standard errors and intervals.* ``se_i = sqrt(MS_test * v_i)`` with
    ``v_i = 1 / n_i`` for balanced data and, for unbalanced, half the average of
    ``V_ii + V_kk - 2 V_ik`` over the other samples k: a *comparison* standard error
    (panelist effects cancel in differences), not the standard error of the mean in a
    population of panelists. ``ci = mean -/+ t(1 - (1-level)/2; df_test) se``.

    *Comparisons.* Tukey HSD and Fisher LSD from ``MS_test`` and ``df_test`` (see
    :func:`trials.stats.posthoc.pairwise_comparisons`); letters by Piepho (2004),
    highest mean first.

    Assumes normal errors with a common variance, additivity of panelist and sample
    effects apart from the modelled interaction, and a connected design (every pair of
    samples linked through panelists).

    References
    ----------
    Naes, T., Brockhoff, P. B. and Tomic, O. (2010). Statistics for Sensory and
    Consumer Science. Wiley, ch. 5 (mixed assessor model).
    Yates, F. (1936). Incomplete randomized blocks. Ann. Eugen. 7:121-140.
    Cochran, W. G. and Cox, G. M. (1957). Experimental Designs, 2nd ed. Wiley.
    Tukey (1953); Piepho (2004), J. Comput. Graph. Stat. 13(2):456-466.

    Examples
    --------
    >>> import pandas as pd
    >>> d = pd.DataFrame({"panelist": list("112233"), "sample": list("ABABAB"),
    ...                   "score": [6, 7, 5, 7, 6, 8]})
    >>> res = rating_anova(d)
    >>> round(res.term("sample").F, 3)  # the paired t of the differences 1, 2, 2 is 5
    25.0
    >>> from scipy import stats
    >>> round(float(stats.ttest_rel([7, 7, 8], [6, 5, 6]).statistic) ** 2, 3)
    25.0
    """
    alpha = _check_alpha(alpha)
    if not 0 < level < 1:
        raise TrialsError(f"level must lie strictly between 0 and 1, got {level!r}")
    cols = [score, sample, panelist] + ([replicate] if replicate else [])
    require_columns(data, cols)
    y = numeric_column(data, score, low=low, high=high)
    s_codes, s_names, p_codes, p_names = sample_panelist_codes(data, sample, panelist)
    t, b = len(s_names), len(p_names)
    if replicate:
        r_codes, r_names = label_codes(data, replicate)
        check_unique([p_codes, s_codes, r_codes], [b, t, len(r_names)],
                     [panelist, sample, replicate])
    else:
        check_unique([p_codes, s_codes], [b, t], [panelist, sample])

    big_n = len(y)
    ybar = float(y.mean())
    yc = y - ybar  # centred: the correction term is zero, sums keep their precision
    cell = p_codes * t + s_codes
    n = np.bincount(cell, minlength=b * t).reshape(b, t).astype(float)
    sums = np.bincount(cell, weights=yc, minlength=b * t).reshape(b, t)
    ss_total = float(yc @ yc)
    filled = n > 0
    ss_cells = float((sums[filled] ** 2 / n[filled]).sum())
    ss_within = max(ss_total - ss_cells, 0.0)
    df_within = big_n - int(filled.sum())
    with_reps = bool(replicate) and df_within > 0
    first = n[0, 0]
    balanced = bool(np.all(n == first))
    r_count = n.sum(axis=0)  # ratings per sample
    raw_means = sums.sum(axis=0) / r_count + ybar

    notes: list[str] = []
    if replicate and not with_reps:
        notes.append(
            f"replicate column {replicate!r} given but no panelist rated a sample twice: "
            "randomized complete block model without interaction"
        )

    if balanced:
        rr = first
        ss_s = float((sums.sum(axis=0) ** 2).sum() / (b * rr))
        ss_p = float((sums.sum(axis=1) ** 2).sum() / (t * rr))
        df_s, df_p = t - 1, b - 1
        ss_type = "closed-form sums of squares for balanced data (equal to sequential and type II)"
        means = raw_means.copy()
        v = np.eye(t) / (b * rr)
    else:
        tau, q, c_plus = _absorb(n, sums)
        df_s = int(np.linalg.matrix_rank(c_plus, hermitian=True))
        if df_s < t - 1:
            raise TrialsError(
                "the design is not connected: some samples were never tasted by panelists "
                "who tasted the others, so they cannot be compared"
            )
        ss_s = float(tau @ q)
        ss_s_unadj = float((sums.sum(axis=0) ** 2 / r_count).sum())
        ss_p_unadj = float((sums.sum(axis=1) ** 2 / n.sum(axis=1)).sum())
        ss_resid_add = ss_total - ss_p_unadj - ss_s
        ss_p = ss_total - ss_s_unadj - ss_resid_add
        df_p = b - 1
        ss_type = (
            "type II sums of squares by least squares (intra-block analysis, panelists "
            "absorbed, numpy pseudo-inverse)"
        )
        if with_reps:
            cm = np.where(filled, sums / np.where(filled, n, 1.0), 0.0)
            tau01, _, c01_plus = _absorb(filled.astype(float), cm)
            means = _ls_means(filled.astype(float), cm, tau01) + ybar
            r_h = float(filled.sum() / (1.0 / n[filled]).sum())
            v = c01_plus / r_h
            notes.append(
                "unequal replication: adjusted means from the additive fit to cell means, "
                f"variance MS_sample:panelist / r_h with r_h = {r_h:.4g} (approximation)"
            )
        else:
            means = _ls_means(n, sums, tau) + ybar
            v = c_plus

    rows: list[AnovaRow] = []
    if with_reps:
        ss_sp = max(ss_total - ss_s - ss_p - ss_within, 0.0) if balanced else max(
            ss_resid_add - ss_within, 0.0
        )
        df_sp = int(filled.sum()) - b - t + 1
        if df_sp <= 0:
            raise TrialsError(
                "too few filled panelist/sample cells to separate the interaction from "
                "the sample and panelist effects"
            )
        ms_sp = ss_sp / df_sp
        ms_e = ss_within / df_within
        ms_test, df_test, error_term = ms_sp, df_sp, "sample:panelist"
        f_sp = ms_sp / ms_e if ms_e > 0 else math.inf
        rows_spec = [
            ("sample", df_s, ss_s, ms_sp, df_sp),
            ("panelist", df_p, ss_p, ms_sp, df_sp),
        ]
        design = "mixed assessor model (panelists random, with sample x panelist interaction)"
    else:
        ss_e = max(ss_total - ss_s - ss_p, 0.0) if balanced else max(ss_resid_add, 0.0)
        df_e = big_n - b - t + 1
        if df_e <= 0:
            raise TrialsError("no degrees of freedom left for the error: too few ratings")
        ms_e = ss_e / df_e
        ms_test, df_test, error_term = ms_e, df_e, "error"
        rows_spec = [
            ("sample", df_s, ss_s, ms_e, df_e),
            ("panelist", df_p, ss_p, ms_e, df_e),
        ]
        design = (
            "randomized complete block design (panelists as blocks)"
            if balanced
            else "incomplete or unbalanced blocks (panelists as blocks), intra-block analysis"
        )
    for term, df, ss, ms_den, df_den in rows_spec:
        ms = ss / df
        f = ms / ms_den if ms_den > 0 else math.inf
        rows.append(AnovaRow(term, float(df), ss, ms, f, float(stats.f.sf(f, df, df_den))))
    if with_reps:
        rows.append(
            AnovaRow(
                "sample:panelist", float(df_sp), ss_sp, ms_sp, f_sp,
                float(stats.f.sf(f_sp, df_sp, df_within)),
            )
        )
        rows.append(AnovaRow("error", float(df_within), ss_within, ms_e, None, None))
    else:
        rows.append(AnovaRow("error", float(df_e), ss_e, ms_e, None, None))

    mean_map = {s_names[i]: float(means[i]) for i in range(t)}
    q_crit = tukey_q(alpha, t, df_test)
    pairs = pairwise_comparisons(mean_map, v, ms=ms_test, df=df_test, alpha=alpha,
                                 q_critical=q_crit)
    order = sorted(s_names, key=lambda s: -mean_map[s])
    groups = compact_letter_display(order, [(p.first, p.second) for p in pairs if p.different])
    t_crit = float(stats.t.ppf(1 - alpha / 2, df_test))
    vd = np.array([v[i, i] + v[k, k] - 2 * v[i, k] for i in range(t) for k in range(t) if k != i])
    avg_vd = float(vd.mean())
    hsd = q_crit * math.sqrt(ms_test * avg_vd / 2.0)
    lsd = t_crit * math.sqrt(ms_test * avg_vd)
    t_ci = float(stats.t.ppf(1 - (1 - level) / 2, df_test))
    se: dict[str, float] = {}
    ci: dict[str, tuple[float, float]] = {}
    for i, s in enumerate(s_names):
        if balanced:
            vi = 1.0 / r_count[i]
        else:
            vi = float(np.mean([v[i, i] + v[k, k] - 2 * v[i, k] for k in range(t) if k != i])) / 2
        se[s] = math.sqrt(ms_test * vi)
        ci[s] = (mean_map[s] - t_ci * se[s], mean_map[s] + t_ci * se[s])

    method = (
        f"{design}; {ss_type}; sample effect tested against {error_term} "
        f"(MS = {ms_test:.6g}, df = {df_test:g}); "
        "Tukey HSD (studentized range by quadrature, checked against scipy) "
        f"and Fisher LSD at alpha = {alpha:g} from that term; letters by Piepho (2004)"
    )
    if not balanced and not with_reps:
        method += "; Tukey-Kramer for adjusted means of unequal precision"
    if notes:
        method += "; " + "; ".join(notes)
    return RatingAnova(
        score=score,
        sample=sample,
        panelist=panelist,
        replicate=replicate,
        alpha=alpha,
        level=level,
        design=design,
        balanced=balanced,
        ss_type=ss_type,
        method=method,
        error_term=error_term,
        ms_test=float(ms_test),
        df_test=float(df_test),
        anova=tuple(rows),
        samples=tuple(s_names),
        means=mean_map,
        raw_means={s_names[i]: float(raw_means[i]) for i in range(t)},
        n={s_names[i]: int(r_count[i]) for i in range(t)},
        se=se,
        ci=ci,
        q_critical=q_crit,
        hsd=hsd,
        lsd=lsd,
        groups=groups,
        pairs=pairs,
        panelists=b,
        replicates=(
            (float(first) if balanced else float(big_n / filled.sum())) if with_reps else None
        ),
        cov_unscaled=tuple(tuple(float(x) for x in row) for row in v),
    )
