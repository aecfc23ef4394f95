"""Analysis of designed experiments: factorial effects, Lenth's pseudo standard error,
the half-normal plot, response-surface fits with lack of fit, canonical analysis and
desirability.

Factors enter coded (-1 = low, +1 = high, 0 = centre); the caller maps actual
settings to coded values and back (:class:`trials.design.experiment.Factor`).

References
----------
Box, G. E. P., Hunter, J. S. and Hunter, W. G. (2005). Statistics for Experimenters,
2nd ed., Wiley, ch. 5 (effects), ch. 10-11 (least squares, response surfaces).
Montgomery, D. C. (2017). Design and Analysis of Experiments, 9th ed., Wiley, ch. 6
(effects, centre points, curvature) and ch. 11 (response surfaces, canonical analysis).
Lenth, R. V. (1989). Quick and easy analysis of unreplicated factorials.
Technometrics 31, 469-473. Daniel, C. (1959). Use of half-normal plots in interpreting
factorial two-level experiments. Technometrics 1, 311-341. Derringer, G. and Suich, R.
(1980). Simultaneous optimization of several response variables. Journal of Quality
Technology 12, 214-219.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import combinations, product

import numpy as np
import pandas as pd
from scipy import optimize, stats

from trials.errors import TrialsError
from trials.model import Record

LINEAR = "linear"
INTERACTION = "interaction"
QUADRATIC = "quadratic"
MODELS = (LINEAR, INTERACTION, QUADRATIC)
_TOL = 1e-9


# ---------------------------------------------------------------- factorial effects
@dataclass(frozen=True, slots=True)
class Effect(Record):
    """One factorial effect: ``term`` names the factors (``"salt*oven"``), ``estimate``
    is the change in the mean response from low to high (twice the coded coefficient),
    ``se`` its standard error where an error estimate exists (else None)."""

    term: str
    estimate: float
    se: float | None
    t: float | None
    p: float | None


@dataclass(frozen=True, slots=True)
class LenthResult(Record):
    """Lenth's (1989) pseudo standard error of ``m`` contrasts.

    ``s0 = 1.5 median|c|``; ``pse = 1.5 median{|c| : |c| < 2.5 s0}``; ``df = m / 3``;
    ``me = t(1 - alpha/2, df) pse`` (margin of error) and ``sme = t(gamma, df) pse``
    with ``gamma = (1 + (1 - alpha)^(1/m)) / 2`` (simultaneous margin of error);
    ``active`` are the terms whose |effect| exceeds ``me``.
    """

    m: int
    s0: float
    pse: float
    df: float
    alpha: float
    me: float
    sme: float
    active: tuple[str, ...]
    reference: str = "Lenth (1989), Technometrics 31, 469-473"


@dataclass(frozen=True, slots=True)
class FactorialEffects(Record):
    """Effects of a two-level design, with an error estimate where one exists.

    ``se_source`` is ``"pure error"`` (replicated points, e.g. centre points),
    ``"residual"`` (terms left out of a non-saturated model) or ``"none"`` (then
    judge by ``lenth`` and the half-normal plot). ``curvature`` is the single-degree
    of freedom sum of squares ``nF nC (mean_F - mean_C)^2 / (nF + nC)`` of Montgomery
    (2017) section 6.8 when there are centre points, with its F test against pure
    error; ``skipped`` lists words aliased with a kept one (not estimable apart).
    """

    response: str
    factors: tuple[str, ...]
    n_factorial: int
    n_centre: int
    mean: float
    effects: tuple[Effect, ...]
    se_source: str
    error_df: int
    error_ms: float | None
    lenth: LenthResult
    curvature_ss: float | None
    curvature_p: float | None
    skipped: tuple[str, ...]

    def to_frame(self) -> pd.DataFrame:
        return pd.DataFrame([e.to_dict() for e in self.effects]).set_index("term")

    def half_normal(self) -> pd.DataFrame:
        return half_normal_points({e.term: e.estimate for e in self.effects})


def _term_name(names: tuple[str, ...] | list[str], idx: tuple[int, ...]) -> str:
    return "*".join(names[i] for i in idx)


def lenth_pse(effects: dict[str, float] | list[float], *, alpha: float = 0.05) -> LenthResult:
    """Lenth's pseudo standard error of unreplicated factorial contrasts.

    Parameters
    ----------
    effects : dict or list
        The effect estimates (contrasts), all on the same scale; names from a dict.
    alpha : float
        Risk of the margins of error.

    Returns
    -------
    LenthResult

    Notes
    -----
    Lenth (1989): assumes the effects are independent with equal variance and that most
    are inactive (effect sparsity). ``df = m / 3`` is Lenth's approximation for the
    reference t distribution.
    """
    if isinstance(effects, dict):
        names = list(effects)
        c = np.abs(np.asarray(list(effects.values()), dtype=float))
    else:
        c = np.abs(np.asarray(effects, dtype=float))
        names = [str(i) for i in range(len(c))]
    m = len(c)
    if m < 3:
        raise TrialsError(f"Lenth's method needs 3 or more effects, got {m}")
    s0 = 1.5 * float(np.median(c))
    trimmed = c[c < 2.5 * s0]
    pse = 1.5 * float(np.median(trimmed)) if len(trimmed) else 0.0
    df = m / 3
    me = float(stats.t.ppf(1 - alpha / 2, df)) * pse
    gamma = (1 + (1 - alpha) ** (1 / m)) / 2
    sme = float(stats.t.ppf(gamma, df)) * pse
    active = tuple(n for n, v in zip(names, c) if pse > 0 and v > me)
    return LenthResult(m=m, s0=s0, pse=pse, df=df, alpha=alpha, me=me, sme=sme,
                       active=active)


def half_normal_points(effects: dict[str, float]) -> pd.DataFrame:
    """Coordinates of Daniel's (1959) half-normal plot: ``term``, ``effect``,
    ``abs_effect`` (sorted ascending) and ``quantile`` = ``Phi^-1(0.5 + 0.5 (i - 0.5)
    / m)``, i = 1..m. Inactive effects lie on a line through the origin."""
    items = sorted(effects.items(), key=lambda kv: abs(kv[1]))
    m = len(items)
    q = stats.norm.ppf(0.5 + 0.5 * (np.arange(1, m + 1) - 0.5) / m)
    return pd.DataFrame({"term": [k for k, _ in items], "effect": [v for _, v in items],
                         "abs_effect": [abs(v) for _, v in items], "quantile": q})


def _replicate_groups(x: np.ndarray, extra: np.ndarray | None = None) -> np.ndarray:
    keys = np.round(x, 6)
    if extra is not None:
        keys = np.column_stack([keys, extra])
    _, inverse = np.unique(keys, axis=0, return_inverse=True)
    return inverse.ravel()


def _pure_error(x: np.ndarray, y: np.ndarray, extra: np.ndarray | None = None
                ) -> tuple[float, int]:
    """Sum of squares and df within groups of identical design points."""
    groups = _replicate_groups(x, extra)
    ss, df = 0.0, 0
    for g in np.unique(groups):
        yy = y[groups == g]
        if len(yy) > 1:
            ss += float(np.sum((yy - yy.mean()) ** 2))
            df += len(yy) - 1
    return ss, df


def factorial_effects(
    data: pd.DataFrame,
    factors: list[str] | tuple[str, ...],
    response: str,
    *,
    max_order: int | None = None,
    alpha: float = 0.05,
) -> FactorialEffects:
    """Effect estimates of a two-level design (full, fractional, Plackett-Burman).

    Parameters
    ----------
    data : DataFrame
        One row per run: the coded factors (+-1; centre points 0) and the response.
    factors : list of str
        Coded factor columns.
    response : str
        The response column.
    max_order : int, optional
        Highest interaction order estimated (default: all). A word whose column equals
        (up to sign) one already kept is aliased with it and skipped.
    alpha : float
        Risk of the tests and of Lenth's margins.

    Returns
    -------
    FactorialEffects

    Notes
    -----
    Effect = mean response at +1 minus mean at -1 over the factorial runs (BH&H 2005,
    ch. 5), i.e. ``2 sum(c y) / N``; its variance is ``4 sigma^2 / N``. Assumes
    independent errors of equal variance. Centre points do not enter the effects;
    they give pure error and the curvature test.
    """
    names = tuple(factors)
    frame = data.dropna(subset=[*names, response])
    x_all = frame[list(names)].to_numpy(dtype=float)
    y_all = frame[response].to_numpy(dtype=float)
    corner = np.all(np.abs(np.abs(x_all) - 1) < _TOL, axis=1)
    centre = np.all(np.abs(x_all) < _TOL, axis=1)
    x, y = x_all[corner], y_all[corner]
    n = len(y)
    if n < 4:
        raise TrialsError(f"{response}: effects need 4 or more factorial runs, got {n}")
    k = len(names)
    top = k if max_order is None else max(1, min(int(max_order), k))
    kept: list[tuple[str, np.ndarray]] = []
    skipped = []
    for order in range(1, top + 1):
        for idx in combinations(range(k), order):
            col = np.prod(x[:, idx], axis=1)
            if any(abs(abs(float(col @ c)) - n) < _TOL for _, c in kept):
                skipped.append(_term_name(names, idx))
                continue
            if abs(float(col @ np.ones(n))) > _TOL and abs(abs(float(col.sum())) - n) < _TOL:
                skipped.append(_term_name(names, idx))  # aliased with the mean
                continue
            if len(kept) >= n - 1:
                skipped.append(_term_name(names, idx))  # no df left to estimate it
                continue
            kept.append((_term_name(names, idx), col))
    # least squares with the kept columns (orthogonal in a regular design: the contrasts)
    cols = np.column_stack([np.ones(n)] + [c for _, c in kept])
    beta, *_ = np.linalg.lstsq(cols, y, rcond=None)
    estimates = 2 * beta[1:]
    pe_ss, pe_df = _pure_error(x_all, y_all)
    resid_df = n - cols.shape[1]
    if pe_df > 0:
        source, err_df, err_ms = "pure error", pe_df, pe_ss / pe_df
    elif resid_df > 0:
        resid = y - cols @ beta
        source, err_df, err_ms = "residual", resid_df, float(resid @ resid) / resid_df
    else:
        source, err_df, err_ms = "none", 0, None
    inv = np.linalg.inv(cols.T @ cols)
    effects = []
    for i, (term, _) in enumerate(kept):
        if err_ms is None:
            effects.append(Effect(term=term, estimate=float(estimates[i]), se=None, t=None,
                                  p=None))
            continue
        se = 2 * math.sqrt(err_ms * inv[i + 1, i + 1])
        t = float(estimates[i]) / se if se > 0 else math.inf
        p = float(2 * stats.t.sf(abs(t), err_df)) if se > 0 else 0.0
        effects.append(Effect(term=term, estimate=float(estimates[i]), se=se, t=t, p=p))
    n_c = int(centre.sum())
    curv_ss = curv_p = None
    if n_c:
        diff = float(y.mean() - y_all[centre].mean())
        curv_ss = n * n_c * diff ** 2 / (n + n_c)
        if pe_df > 0 and pe_ss > 0:
            curv_p = float(stats.f.sf(curv_ss / (pe_ss / pe_df), 1, pe_df))
    lenth = lenth_pse({e.term: e.estimate for e in effects}, alpha=alpha) \
        if len(effects) >= 3 else LenthResult(m=len(effects), s0=math.nan, pse=math.nan,
                                               df=math.nan, alpha=alpha, me=math.nan,
                                               sme=math.nan, active=())
    return FactorialEffects(
        response=response, factors=names, n_factorial=n, n_centre=n_c,
        mean=float(y.mean()), effects=tuple(effects), se_source=source, error_df=err_df,
        error_ms=err_ms, lenth=lenth, curvature_ss=curv_ss, curvature_p=curv_p,
        skipped=tuple(skipped))


# ---------------------------------------------------------------- response surfaces
def model_terms(k: int, model: str) -> list[tuple[int, ...]]:
    """Terms of a polynomial in ``k`` coded factors: ``(i,)`` linear, ``(i, j)`` the
    product, ``(i, i)`` the square; the intercept is implied."""
    if model not in MODELS:
        raise TrialsError(f"unknown model {model!r}; expected one of: {', '.join(MODELS)}")
    terms: list[tuple[int, ...]] = [(i,) for i in range(k)]
    if model in (INTERACTION, QUADRATIC):
        terms += list(combinations(range(k), 2))
    if model == QUADRATIC:
        terms += [(i, i) for i in range(k)]
    return terms


def model_matrix(x: np.ndarray, terms: list[tuple[int, ...]]) -> np.ndarray:
    """Columns: 1, then the product of the coded factors of each term."""
    x = np.atleast_2d(np.asarray(x, dtype=float))
    cols = [np.ones(len(x))] + [np.prod(x[:, list(t)], axis=1) for t in terms]
    return np.column_stack(cols)


def _label(names: tuple[str, ...], term: tuple[int, ...]) -> str:
    if len(term) == 2 and term[0] == term[1]:
        return f"{names[term[0]]}^2"
    return "*".join(names[i] for i in term)


@dataclass(frozen=True, slots=True)
class Coefficient(Record):
    term: str
    estimate: float
    se: float
    t: float | None
    p: float | None


@dataclass(frozen=True, slots=True)
class AnovaLine(Record):
    """A line of the fitted model's ANOVA; F and p None where no test applies."""

    source: str
    df: int
    ss: float
    ms: float | None
    F: float | None
    p: float | None


@dataclass(frozen=True, slots=True)
class CanonicalAnalysis(Record):
    """The stationary point ``x_s = -B^-1 b / 2`` of ``y = b0 + x'b + x'Bx`` (coded),
    the fitted value there, the eigenvalues (lambda) of ``B`` and their eigenvectors
    (rows: the canonical axes in coded units). ``nature``: ``maximum`` (all lambda
    < 0), ``minimum`` (all > 0), ``saddle`` (mixed), ``ridge`` (some |lambda| tiny);
    ``inside`` says whether x_s lies within the coded cube of the design."""

    stationary: tuple[float, ...]
    value: float
    eigenvalues: tuple[float, ...]
    eigenvectors: tuple[tuple[float, ...], ...]
    nature: str
    inside: bool
    reference: str = "Montgomery (2017), section 11.3; BH&H (2005), section 11.6"


@dataclass(frozen=True, slots=True)
class SurfaceFit(Record):
    """A polynomial response-surface fit by ordinary least squares (statsmodels OLS).

    ``anova`` lines: ``blocks`` (when given), ``model``, ``residual``, ``lack of fit``
    and ``pure error`` (when replicated points give pure error and the residual has
    more df than it), ``total`` (corrected). ``beta`` is the coefficient vector in the
    order of :func:`model_matrix` (block terms not included), so that predictions need
    no statsmodels; ``cov`` its covariance; ``mse`` and ``df_resid`` the residual.
    """

    response: str
    factors: tuple[str, ...]
    model: str
    n: int
    terms: tuple[tuple[int, ...], ...]
    coefficients: tuple[Coefficient, ...]
    anova: tuple[AnovaLine, ...]
    r2: float
    r2_adj: float
    mse: float
    df_resid: int
    beta: tuple[float, ...]
    cov: tuple[tuple[float, ...], ...]
    canonical: CanonicalAnalysis | None

    def to_frame(self) -> pd.DataFrame:
        return pd.DataFrame([c.to_dict() for c in self.coefficients]).set_index("term")

    def anova_frame(self) -> pd.DataFrame:
        return pd.DataFrame([a.to_dict() for a in self.anova]).set_index("source")

    def predict(self, x: np.ndarray) -> np.ndarray:
        """Fitted mean at coded points (rows), without block effects."""
        return model_matrix(x, list(self.terms)) @ np.asarray(self.beta)

    def prediction_interval(self, x: np.ndarray, level: float = 0.95) -> np.ndarray:
        """Rows ``(fit, low, high)``: the interval for one new run at each coded point,
        ``fit +- t se`` with ``se^2 = mse + x' cov x``."""
        mm = model_matrix(x, list(self.terms))
        fit = mm @ np.asarray(self.beta)
        var = self.mse + np.einsum("ij,jk,ik->i", mm, np.asarray(self.cov), mm)
        half = float(stats.t.ppf(0.5 + level / 2, max(self.df_resid, 1))) * np.sqrt(var)
        return np.column_stack([fit, fit - half, fit + half])

    def line(self, source: str) -> AnovaLine:
        for a in self.anova:
            if a.source == source:
                return a
        raise KeyError(source)


def canonical_analysis(b: np.ndarray, B: np.ndarray, b0: float, *,
                       bound: float = 1.0) -> CanonicalAnalysis:
    """Stationary point and canonical form of a fitted second-order model.

    ``y = b0 + x'b + x'Bx`` with ``B`` symmetric (diagonal: the squares' coefficients;
    off-diagonal: half the products'). Montgomery (2017) equations 11.6-11.8: ``x_s =
    -B^-1 b / 2``, ``y_s = b0 + x_s'b / 2``; the eigenvalues of ``B`` say whether x_s
    is a maximum, minimum or saddle point. Assumes ``B`` is invertible (else
    ``nature = "ridge"`` and the stationary point is the least-norm solution).
    """
    b = np.asarray(b, dtype=float)
    B = np.asarray(B, dtype=float)
    lam, vec = np.linalg.eigh(B)
    scale = max(float(np.max(np.abs(lam))), 1e-12)
    if np.min(np.abs(lam)) < 1e-6 * scale:
        xs = -0.5 * np.linalg.pinv(B) @ b
        nature = "ridge"
    else:
        xs = -0.5 * np.linalg.solve(B, b)
        nature = "maximum" if np.all(lam < 0) else "minimum" if np.all(lam > 0) else "saddle"
    ys = float(b0 + 0.5 * xs @ b)
    return CanonicalAnalysis(
        stationary=tuple(float(v) for v in xs), value=ys,
        eigenvalues=tuple(float(v) for v in lam),
        eigenvectors=tuple(tuple(float(v) for v in vec[:, i]) for i in range(len(lam))),
        nature=nature, inside=bool(np.all(np.abs(xs) <= bound + 1e-9)))


def response_surface_fit(
    data: pd.DataFrame,
    factors: list[str] | tuple[str, ...],
    response: str,
    *,
    model: str = QUADRATIC,
    block: str | None = None,
    bound: float = 1.0,
) -> SurfaceFit:
    """Fit a first-order, interaction or second-order model by OLS (statsmodels).

    Parameters
    ----------
    data : DataFrame
        One row per run: coded factor columns and the response (NaN rows dropped).
    factors : list of str
        The coded factor columns.
    response : str
        The response column.
    model : str
        ``linear``, ``interaction`` (linear and two-factor products) or ``quadratic``
        (adds the squares; needs three or more levels per factor).
    block : str, optional
        A column of block numbers; entered as fixed block effects before the model.
    bound : float
        Half-width of the coded region, for ``canonical.inside`` (the axial distance
        of a rotatable design, 1 otherwise).

    Returns
    -------
    SurfaceFit

    Notes
    -----
    Montgomery (2017) sections 10.3 and 11.2-11.3: lack of fit = residual minus pure
    error (the spread of runs at identical settings within a block, e.g. centre
    points), tested against pure error. Assumes independent normal errors of equal
    variance; the ANOVA's model sum of squares is sequential after blocks.
    """
    import statsmodels.api as sm

    names = tuple(factors)
    cols = [*names, response] + ([block] if block else [])
    frame = data.dropna(subset=cols)
    x = frame[list(names)].to_numpy(dtype=float)
    y = frame[response].to_numpy(dtype=float)
    k = len(names)
    terms = model_terms(k, model)
    mm = model_matrix(x, terms)
    blk = None
    bcols = np.empty((len(y), 0))
    if block:
        blk = frame[block].to_numpy()
        levels = sorted(set(blk.tolist()))
        if len(levels) > 1:
            # dummy columns of the blocks after the first
            bcols = np.column_stack([(blk == lv).astype(float) for lv in levels[1:]])
    full = np.column_stack([mm, bcols])
    p = full.shape[1]
    if len(y) <= p:
        raise TrialsError(f"{response}: a {model} model of {k} factors needs more than {p} "
                          f"runs with a value, got {len(y)}")
    if np.linalg.matrix_rank(full) < p:
        raise TrialsError(f"{response}: the design cannot estimate a {model} model "
                          f"(e.g. squares need three levels per factor)")
    res = sm.OLS(y, full).fit()
    sst = float(np.sum((y - y.mean()) ** 2))
    sse = float(res.ssr)
    df_e = int(res.df_resid)
    mse = sse / df_e if df_e > 0 else math.nan
    lines: list[AnovaLine] = []
    ss_blocks = 0.0
    df_blocks = bcols.shape[1]
    if df_blocks:
        rb = sm.OLS(y, np.column_stack([np.ones(len(y)), bcols])).fit()
        ss_blocks = sst - float(rb.ssr)
        lines.append(AnovaLine("blocks", df_blocks, ss_blocks, ss_blocks / df_blocks,
                               None, None))
    ss_model = sst - ss_blocks - sse
    df_model = len(terms)

    def tested(source: str, df: int, ss: float, ms_err: float, df_err: int) -> AnovaLine:
        ms = ss / df
        if df_err > 0 and ms_err > 0:
            F = ms / ms_err
            return AnovaLine(source, df, ss, ms, F, float(stats.f.sf(F, df, df_err)))
        return AnovaLine(source, df, ss, ms, None, None)

    lines.append(tested("model", df_model, ss_model, mse, df_e))
    lines.append(AnovaLine("residual", df_e, sse, mse if df_e else None, None, None))
    pe_ss, pe_df = _pure_error(x, y, blk)
    if 0 < pe_df < df_e:
        lof_df = df_e - pe_df
        lof = tested("lack of fit", lof_df, max(sse - pe_ss, 0.0), pe_ss / pe_df, pe_df)
        lines.append(lof)
        lines.append(AnovaLine("pure error", pe_df, pe_ss, pe_ss / pe_df, None, None))
    lines.append(AnovaLine("total", len(y) - 1, sst, None, None, None))
    params = np.asarray(res.params)
    bse = np.asarray(res.bse)
    labels = ["intercept"] + [_label(names, t) for t in terms]
    coefs = []
    for i, lab in enumerate(labels):
        se = float(bse[i]) if df_e > 0 else math.nan
        t = float(params[i] / se) if df_e > 0 and se > 0 else None
        pv = float(2 * stats.t.sf(abs(t), df_e)) if t is not None else None
        coefs.append(Coefficient(lab, float(params[i]), se, t, pv))
    beta = params[: 1 + len(terms)]
    cov = np.asarray(res.cov_params())[: 1 + len(terms), : 1 + len(terms)] if df_e > 0 \
        else np.zeros((1 + len(terms), 1 + len(terms)))
    canonical = None
    if model == QUADRATIC:
        b, B = _quadratic_parts(beta, terms, k)
        canonical = canonical_analysis(b, B, float(beta[0]), bound=bound)
    r2 = 1 - sse / sst if sst > 0 else math.nan
    r2_adj = 1 - (sse / df_e) / (sst / (len(y) - 1)) if sst > 0 and df_e > 0 else math.nan
    return SurfaceFit(
        response=response, factors=names, model=model, n=len(y), terms=tuple(terms),
        coefficients=tuple(coefs), anova=tuple(lines), r2=float(r2), r2_adj=float(r2_adj),
        mse=float(mse), df_resid=df_e, beta=tuple(float(v) for v in beta),
        cov=tuple(tuple(float(v) for v in row) for row in cov), canonical=canonical)


def _quadratic_parts(beta: np.ndarray, terms: list[tuple[int, ...]], k: int
                     ) -> tuple[np.ndarray, np.ndarray]:
    b = np.zeros(k)
    B = np.zeros((k, k))
    for coef, t in zip(beta[1:], terms):
        if len(t) == 1:
            b[t[0]] = coef
        elif t[0] == t[1]:
            B[t[0], t[0]] = coef
        else:
            B[t[0], t[1]] = B[t[1], t[0]] = coef / 2
    return b, B


def contour_grid(fit: SurfaceFit, x_factor: int, y_factor: int, *,
                 fixed: np.ndarray | list[float] | None = None, lo: float = -1.0,
                 hi: float = 1.0, n: int = 200) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The fitted surface over an ``n x n`` coded grid of two factors, the others held
    at ``fixed`` (coded; default the centre). Returns ``(xs, ys, z)`` with ``z[i, j]``
    at ``(xs[j], ys[i])``."""
    k = len(fit.factors)
    base = np.zeros(k) if fixed is None else np.asarray(fixed, dtype=float)
    xs = np.linspace(lo, hi, n)
    ys = np.linspace(lo, hi, n)
    gx, gy = np.meshgrid(xs, ys)
    pts = np.tile(base, (n * n, 1))
    pts[:, x_factor] = gx.ravel()
    pts[:, y_factor] = gy.ravel()
    return xs, ys, fit.predict(pts).reshape(n, n)


# ---------------------------------------------------------------- desirability
MAXIMIZE = "maximize"
MINIMIZE = "minimize"
TARGET = "target"
GOALS = (MAXIMIZE, MINIMIZE, TARGET)


@dataclass(frozen=True, slots=True)
class Goal(Record):
    """What the developer wants of one response (Derringer and Suich 1980).

    ``maximize``: d = 0 below ``low``, 1 above ``high``, ``((y - low)/(high - low))^
    weight`` between: "liking at least 7" is ``maximize`` with ``low = 7``.
    ``minimize``: mirror image. ``target``: 1 at ``target``, 0 outside low..high.
    """

    response: str
    kind: str
    low: float
    high: float
    target: float | None = None
    weight: float = 1.0


def check_goal(goal: Goal) -> Goal:
    if goal.kind not in GOALS:
        raise TrialsError(f"goal {goal.response!r}: kind must be one of {', '.join(GOALS)}, "
                          f"got {goal.kind!r}")
    if not goal.low < goal.high:
        raise TrialsError(f"goal {goal.response!r}: low must be below high, got "
                          f"{goal.low} .. {goal.high}")
    if goal.kind == TARGET and (goal.target is None or not goal.low <= goal.target
                                <= goal.high):
        raise TrialsError(f"goal {goal.response!r}: a target between low and high is needed")
    if goal.weight <= 0:
        raise TrialsError(f"goal {goal.response!r}: the weight must be positive")
    return goal


def desirability(goal: Goal, y: np.ndarray) -> np.ndarray:
    """Individual desirability d(y) in [0, 1] (Derringer and Suich 1980, eq. 1-4)."""
    y = np.asarray(y, dtype=float)
    lo, hi, w = goal.low, goal.high, goal.weight
    if goal.kind == MAXIMIZE:
        return np.clip((y - lo) / (hi - lo), 0, 1) ** w
    if goal.kind == MINIMIZE:
        return np.clip((hi - y) / (hi - lo), 0, 1) ** w
    t = float(goal.target)  # type: ignore[arg-type]
    up = np.where(y <= t, (y - lo) / max(t - lo, 1e-300), (hi - y) / max(hi - t, 1e-300))
    return np.clip(up, 0, 1) ** w


def overall_desirability(goals: list[Goal], predictions: np.ndarray) -> np.ndarray:
    """Geometric mean of the individual desirabilities; ``predictions`` is points x
    goals."""
    d = np.column_stack([desirability(g, predictions[:, i]) for i, g in enumerate(goals)])
    return np.prod(d, axis=1) ** (1 / len(goals))


@dataclass(frozen=True, slots=True)
class DesirabilityOptimum(Record):
    """The coded point that maximises the overall desirability D within ``bounds``,
    the fitted responses there with 95 % prediction intervals for a confirmation run,
    each d and D. ``feasible`` is False where D = 0 everywhere searched: no setting
    met every constraint."""

    coded: tuple[float, ...]
    predicted: dict[str, float]
    interval: dict[str, tuple[float, float]]
    d: dict[str, float]
    D: float
    feasible: bool
    bounds: tuple[tuple[float, float], ...]
    reference: str = "Derringer and Suich (1980), J. Quality Technology 12, 214-219"


def desirability_optimum(
    fits: dict[str, SurfaceFit],
    goals: list[Goal],
    bounds: list[tuple[float, float]],
    *,
    grid: int = 0,
) -> DesirabilityOptimum:
    """Maximise Derringer and Suich's overall desirability over a coded box.

    Parameters
    ----------
    fits : dict
        Response name -> fitted surface (all over the same factors).
    goals : list of Goal
        One per response to optimise; every goal's response must be in ``fits``.
    bounds : list of (low, high)
        Coded bounds per factor: the design region intersected with the safe ranges.
    grid : int
        Points per factor of the starting grid (default: about 4,000 points in all).

    Notes
    -----
    D is maximised by a grid search followed by bounded Nelder-Mead polishing (scipy)
    from the three best grid points; D is not smooth where a d reaches 0 or 1, so the grid
    matters. Assumes the fitted models hold inside the bounds (no extrapolation).
    """
    goals = [check_goal(g) for g in goals]
    if not goals:
        raise TrialsError("give at least one goal")
    missing = [g.response for g in goals if g.response not in fits]
    if missing:
        raise TrialsError(f"no fitted model for {', '.join(map(repr, missing))}")
    k = len(bounds)
    lo = np.array([b[0] for b in bounds], dtype=float)
    hi = np.array([b[1] for b in bounds], dtype=float)
    if np.any(lo > hi):
        raise TrialsError("each coded bound needs low <= high")
    per = grid or max(3, int(round(4000 ** (1 / k))))
    axes = [np.linspace(a, b, per) for a, b in zip(lo, hi)]
    pts = np.array(list(product(*axes)))
    models = [fits[g.response] for g in goals]
    shared = all(m.terms == models[0].terms for m in models)
    betas = np.column_stack([np.asarray(m.beta) for m in models]) if shared else None

    def predictions(p: np.ndarray) -> np.ndarray:
        if betas is not None:  # one model matrix for every response
            return model_matrix(p, list(models[0].terms)) @ betas
        return np.column_stack([m.predict(p) for m in models])

    def score(p: np.ndarray) -> np.ndarray:
        return overall_desirability(goals, predictions(p))

    def objective(v: np.ndarray) -> float:
        return -float(score(np.clip(v, lo, hi)[None, :])[0])

    D = score(pts)
    best = pts[int(np.argmax(D))]
    best_d = float(D.max())
    for start in pts[np.argsort(-D)[:3]]:
        r = optimize.minimize(objective, start, method="Nelder-Mead", bounds=list(zip(lo, hi)),
                              options={"xatol": 1e-6, "fatol": 1e-10, "maxiter": 400 * k})
        x = np.clip(r.x, lo, hi)
        val = -objective(x)
        if val > best_d:
            best, best_d = x, val
    pred = {g.response: float(fits[g.response].predict(best[None, :])[0]) for g in goals}
    intervals = {}
    for name, fit in fits.items():
        row = fit.prediction_interval(best[None, :])[0]
        pred.setdefault(name, float(row[0]))
        intervals[name] = (float(row[1]), float(row[2]))
    ds = {g.response: float(desirability(g, np.array([pred[g.response]]))[0]) for g in goals}
    return DesirabilityOptimum(
        coded=tuple(float(v) for v in best), predicted=pred, interval=intervals, d=ds,
        D=best_d, feasible=best_d > 0, bounds=tuple((float(a), float(b))
                                                    for a, b in zip(lo, hi)))
