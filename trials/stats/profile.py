"""Descriptive profiles: many intensity attributes rated by a trained panel.

A descriptive (profile) trial rates every sample on several intensity attributes. This
module gives the multivariate view of such a trial, from tidy ratings (one row per
score: panelist, sample, attribute, score, optionally replicate):

- :func:`profile_means`: the sample-by-attribute table of means (the spider chart);
- :func:`profile_pca`: principal component analysis of that table on the correlation
  matrix, with attribute loadings, the share of variance per component and confidence
  ellipses of the samples from resampling the panel (Husson, Le and Pages 2005);
- :func:`profile_manova`: a MANOVA of the samples with panelists as blocks
  (statsmodels);
- :func:`panelist_interaction`: per attribute, how each panelist departs from the
  panel's order of the samples, in direction (correlation) and in scale (slope).

Pure: values and DataFrames in, frozen records out.

References
----------
Husson, F., Le, S. and Pages, J. (2005). Confidence ellipse for the sensory profiles
obtained by principal component analysis. Food Quality and Preference 16:245-250.
Jolliffe, I. T. (2002). Principal Component Analysis, 2nd ed. Springer.
Gabriel, K. R. (1971). The biplot graphic display of matrices with application to
principal component analysis. Biometrika 58:453-467.
Brockhoff, P. B. and Skovgaard, I. M. (1994). Modelling individual differences between
assessors in sensory evaluations. Food Quality and Preference 5:215-224.
Naes, T., Brockhoff, P. B. and Tomic, O. (2010). Statistics for Sensory and Consumer
Science. Wiley, ch. 3 and 5.
Johnson, R. A. and Wichern, D. W. (2007). Applied Multivariate Statistical Analysis,
6th ed. Pearson, ch. 6 (MANOVA).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from trials.errors import TrialsError
from trials.model import Record
from trials.stats.posthoc import _check_alpha
from trials.stats.ratings import label_codes, numeric_column, require_columns

BOOTSTRAP_RULE = (
    "partial bootstrap (Husson, Le and Pages 2005): panelists drawn with replacement, "
    "each virtual panel's sample means centred and scaled like the data and projected "
    "onto the full data's components; the axes stay those of the map, so an ellipse "
    "shows how far a sample's place moves with the panel, not how the axes turn"
)


# ---------------------------------------------------------------- the cell means


@dataclass(frozen=True, slots=True)
class ProfileMeans(Record):
    """Samples by attributes: each sample's mean on each attribute (radar chart).

    ``means[s][a]`` is the average over panelists of the panelist's mean over
    replicates (every panelist weighs the same). ``panelists`` rated at least once.
    """

    samples: tuple[str, ...]
    attributes: tuple[str, ...]
    means: dict[str, dict[str, float]]
    panelists: int

    def to_frame(self) -> pd.DataFrame:
        return pd.DataFrame(self.means).T.loc[list(self.samples), list(self.attributes)]


class _Cells:
    """Panelist x sample x attribute cell means of tidy ratings (NaN where missing)."""

    def __init__(self, data: pd.DataFrame, score: str, sample: str, panelist: str,
                 attribute: str):
        require_columns(data, [score, sample, panelist, attribute])
        if data.empty:
            raise TrialsError("no ratings: the profile needs scores")
        y = numeric_column(data, score)
        self.s_codes, self.samples = label_codes(data, sample)
        self.p_codes, self.panelists = label_codes(data, panelist)
        self.a_codes, self.attributes = label_codes(data, attribute)
        b, t, m = len(self.panelists), len(self.samples), len(self.attributes)
        idx = (self.p_codes * t + self.s_codes) * m + self.a_codes
        n = np.bincount(idx, minlength=b * t * m).reshape(b, t, m).astype(float)
        s = np.bincount(idx, weights=y, minlength=b * t * m).reshape(b, t, m)
        with np.errstate(invalid="ignore", divide="ignore"):
            self.cell = np.where(n > 0, s / np.where(n > 0, n, 1), np.nan)
        self.n = n

    def sample_means(self, weights: np.ndarray | None = None) -> np.ndarray:
        """Sample x attribute means over panelists; ``weights`` (draws x panelists)
        gives one table per draw (draws x samples x attributes)."""
        filled = np.nan_to_num(self.cell)
        have = (~np.isnan(self.cell)).astype(float)
        if weights is None:
            with np.errstate(invalid="ignore", divide="ignore"):
                return filled.sum(0) / have.sum(0)
        sums = np.einsum("kb,btm->ktm", weights, filled)
        counts = np.einsum("kb,btm->ktm", weights, have)
        with np.errstate(invalid="ignore", divide="ignore"):
            return sums / counts


def profile_means(data: pd.DataFrame, *, score: str = "score", sample: str = "sample",
                  panelist: str = "panelist", attribute: str = "attribute") -> ProfileMeans:
    """The sample-by-attribute table of means of a descriptive profile.

    Parameters
    ----------
    data : DataFrame
        Tidy ratings, one row per score.
    score, sample, panelist, attribute : str
        Column names.

    Returns
    -------
    ProfileMeans

    Notes
    -----
    Each panelist's replicates are averaged first, then the panelists' cell means
    (the usual input of profile PCA; Naes, Brockhoff and Tomic 2010, ch. 3). For a
    balanced trial these are the plain means of the scores.
    """
    c = _Cells(data, score, sample, panelist, attribute)
    m = c.sample_means()
    return ProfileMeans(
        samples=tuple(c.samples), attributes=tuple(c.attributes),
        means={s: {a: float(m[i, j]) for j, a in enumerate(c.attributes)}
               for i, s in enumerate(c.samples)},
        panelists=len(c.panelists),
    )


# ---------------------------------------------------------------- PCA


@dataclass(frozen=True, slots=True)
class Ellipse(Record):
    """A sample's confidence ellipse on components 1 and 2.

    ``center`` is the sample's place on the map; ``axes`` the semi-axes and ``angle``
    (radians, from component 1) the orientation, from the covariance ``cov`` of the
    bootstrap points scaled by ``sqrt(chi2_2(level))``; ``x``/``y`` trace it.
    """

    sample: str
    center: tuple[float, float]
    cov: tuple[tuple[float, float], tuple[float, float]]
    axes: tuple[float, float]
    angle: float
    level: float
    x: tuple[float, ...]
    y: tuple[float, ...]


@dataclass(frozen=True, slots=True)
class ProfilePCA(Record):
    """PCA of the sample-by-attribute means on the correlation matrix.

    ``eigenvalues`` of the attributes' correlation matrix (they sum to the number of
    attributes), ``explained`` their shares; ``scores[s]`` a sample's coordinates
    (standardized means times the eigenvectors); ``loadings[a]`` the correlation of
    attribute ``a`` with each component; ``ellipses`` on components 1-2 (empty when
    ``n_boot`` is 0); ``left_out`` attributes with no spread across samples.
    """

    samples: tuple[str, ...]
    attributes: tuple[str, ...]
    components: int
    center: dict[str, float]
    scale: dict[str, float]
    eigenvalues: tuple[float, ...]
    explained: tuple[float, ...]
    cumulative: tuple[float, ...]
    scores: dict[str, tuple[float, ...]]
    loadings: dict[str, tuple[float, ...]]
    ellipses: tuple[Ellipse, ...]
    n_boot: int
    level: float
    seed: int | None
    bootstrap: str
    left_out: tuple[str, ...]
    method: str

    def scores_frame(self) -> pd.DataFrame:
        cols = [f"PC{k + 1}" for k in range(self.components)]
        return pd.DataFrame(self.scores, index=cols).T

    def loadings_frame(self) -> pd.DataFrame:
        cols = [f"PC{k + 1}" for k in range(self.components)]
        return pd.DataFrame(self.loadings, index=cols).T

    def variance_frame(self) -> pd.DataFrame:
        return pd.DataFrame({"component": [f"PC{k + 1}" for k in range(self.components)],
                             "eigenvalue": self.eigenvalues, "share": self.explained,
                             "cumulative": self.cumulative})


def _ellipse(points: np.ndarray, center: np.ndarray, level: float, steps: int = 72):
    cov = np.cov(points, rowvar=False)
    vals, vecs = np.linalg.eigh(cov)
    vals = np.clip(vals, 0.0, None)[::-1]
    vecs = vecs[:, ::-1]
    radius = math.sqrt(stats.chi2.ppf(level, 2))
    axes = radius * np.sqrt(vals)
    angle = math.atan2(vecs[1, 0], vecs[0, 0])
    t = np.linspace(0.0, 2.0 * math.pi, steps)
    circle = np.stack([axes[0] * np.cos(t), axes[1] * np.sin(t)])
    path = vecs @ circle + center[:, None]
    return cov, axes, angle, path


def profile_pca(
    data: pd.DataFrame,
    *,
    score: str = "score",
    sample: str = "sample",
    panelist: str = "panelist",
    attribute: str = "attribute",
    n_boot: int = 500,
    level: float = 0.95,
    rng: int | np.random.Generator | None = 0,
) -> ProfilePCA:
    """PCA of a descriptive profile, with bootstrap confidence ellipses of the samples.

    Parameters
    ----------
    data : DataFrame
        Tidy ratings, one row per score (several attributes).
    score, sample, panelist, attribute : str
        Column names.
    n_boot : int
        Virtual panels drawn for the ellipses (0: no ellipses). Default 500.
    level : float
        Coverage of each ellipse (0.95).
    rng : int or numpy Generator
        Seed of the panel resampling (the same seed draws the same ellipses).

    Returns
    -------
    ProfilePCA

    Notes
    -----
    *PCA.* ``X`` is the samples x attributes table of :func:`profile_means`. Each column
    is centred and divided by its standard deviation across samples (``ddof = 1``), so
    the analysis is that of the attributes' correlation matrix (Jolliffe 2002, ch. 2).
    With ``Z = U S V'`` (singular value decomposition) the eigenvalues are
    ``s_k^2 / (t - 1)``, the sample scores ``U S`` and the loadings ``V S / sqrt(t - 1)``,
    the correlation of each attribute with each component (the arrows of the biplot,
    Gabriel 1971). There are at most ``t - 1`` components for ``t`` samples. Signs are
    fixed so that the largest loading of each component is positive. An attribute
    with the same mean for every sample has no correlation and is left out (named).

    *Ellipses.* Partial bootstrap of Husson, Le and Pages (2005): ``n_boot`` virtual
    panels of as many panelists as the trial, drawn with replacement; each one's table
    of means is centred and scaled with the *data's* centres and scales and projected
    onto the data's components (a supplementary point). The ellipse holds ``level`` of
    a normal distribution with the bootstrap points' covariance: semi-axes
    ``sqrt(chi2_2(level) * lambda)`` about the sample's place. Projection rather than a
    Procrustes fit of each virtual panel's own PCA: the map the leader reads has fixed
    axes, and the question is how far each sample moves on it; a fresh PCA per panel
    would also turn and reflect the axes, which a Procrustes fit only partly undoes.
    Two samples whose ellipses do not overlap are told apart on this map.

    Assumes panelists exchangeable (a random panel from a population of trained
    panelists) and a sample x attribute table worth summarising in few components.
    """
    if n_boot < 0 or int(n_boot) != n_boot:
        raise TrialsError(f"n_boot must be a whole number >= 0, got {n_boot!r}")
    if not 0 < level < 1:
        raise TrialsError(f"level must be in (0, 1), got {level!r}")
    c = _Cells(data, score, sample, panelist, attribute)
    x = c.sample_means()
    t = len(c.samples)
    if t < 3:
        raise TrialsError(f"a profile map needs at least 3 samples, got {t}")
    if np.isnan(x).any():
        raise TrialsError("some sample has no score on some attribute; the profile needs "
                          "every sample rated on every attribute")
    sd = x.std(axis=0, ddof=1)
    keep = sd > 1e-12 * np.maximum(1.0, np.abs(x).max(axis=0))
    left_out = tuple(a for a, k in zip(c.attributes, keep) if not k)
    attrs = [a for a, k in zip(c.attributes, keep) if k]
    if len(attrs) < 2:
        raise TrialsError("a profile map needs at least 2 attributes that differ across "
                          f"samples; left out (no spread): {list(left_out)!r}")
    x, sd = x[:, keep], sd[keep]
    mu = x.mean(axis=0)
    z = (x - mu) / sd
    u, s, vt = np.linalg.svd(z, full_matrices=False)
    k = min(t - 1, len(attrs))
    u, s, v = u[:, :k], s[:k], vt[:k].T
    flip = np.sign(v[np.argmax(np.abs(v), axis=0), np.arange(k)])
    u, v = u * flip, v * flip
    eig = s**2 / (t - 1)
    scores = u * s
    loadings = v * s / math.sqrt(t - 1)
    share = eig / len(attrs)

    ellipses: list[Ellipse] = []
    seed = rng if isinstance(rng, int) else None
    if n_boot and k >= 2:
        gen = np.random.default_rng(rng)
        b = len(c.panelists)
        draws = gen.integers(0, b, size=(int(n_boot), b))
        weights = np.zeros((int(n_boot), b))
        np.add.at(weights, (np.repeat(np.arange(int(n_boot)), b), draws.ravel()), 1.0)
        boot = c.sample_means(weights)[:, :, keep]
        proj = ((boot - mu) / sd) @ v[:, :2]  # draws x samples x 2
        for i, name in enumerate(c.samples):
            pts = proj[:, i, :]
            pts = pts[np.isfinite(pts).all(axis=1)]
            if len(pts) < 3:
                continue
            cov, axes, angle, path = _ellipse(pts, scores[i, :2], level)
            ellipses.append(Ellipse(
                sample=name, center=(float(scores[i, 0]), float(scores[i, 1])),
                cov=((float(cov[0, 0]), float(cov[0, 1])), (float(cov[1, 0]), float(cov[1, 1]))),
                axes=(float(axes[0]), float(axes[1])), angle=float(angle), level=level,
                x=tuple(float(v_) for v_ in path[0]), y=tuple(float(v_) for v_ in path[1])))
    return ProfilePCA(
        samples=tuple(c.samples), attributes=tuple(attrs), components=k,
        center={a: float(m_) for a, m_ in zip(attrs, mu)},
        scale={a: float(s_) for a, s_ in zip(attrs, sd)},
        eigenvalues=tuple(float(e_) for e_ in eig), explained=tuple(float(e_) for e_ in share),
        cumulative=tuple(float(e_) for e_ in np.cumsum(share)),
        scores={n_: tuple(float(v_) for v_ in scores[i]) for i, n_ in enumerate(c.samples)},
        loadings={a: tuple(float(v_) for v_ in loadings[j]) for j, a in enumerate(attrs)},
        ellipses=tuple(ellipses), n_boot=int(n_boot) if k >= 2 else 0, level=level,
        seed=seed, bootstrap=BOOTSTRAP_RULE if ellipses else "",
        left_out=left_out,
        method=("PCA of the sample x attribute means on the correlation matrix (Jolliffe "
                "2002); biplot after Gabriel (1971)"),
    )


# ---------------------------------------------------------------- MANOVA


@dataclass(frozen=True, slots=True)
class ManovaRow(Record):
    """One multivariate test statistic, with its F approximation."""

    statistic: str
    value: float
    num_df: float
    den_df: float
    F: float
    p_value: float


@dataclass(frozen=True, slots=True)
class ProfileManova(Record):
    """MANOVA of the samples over all attributes, panelists as blocks.

    ``tests``: Wilks' lambda, Pillai's trace, the Hotelling-Lawley trace and Roy's
    greatest root for the term ``sample``; ``df_hypothesis`` ``t - 1`` and
    ``df_error`` of the residual (the sample x panelist interaction of the cell means).
    """

    samples: tuple[str, ...]
    attributes: tuple[str, ...]
    panelists: int
    df_hypothesis: int
    df_error: int
    alpha: float
    tests: tuple[ManovaRow, ...]
    wilks: float
    pillai: float
    p_value: float
    significant: bool
    error_term: str
    method: str

    def to_frame(self) -> pd.DataFrame:
        return pd.DataFrame([r.to_dict() for r in self.tests]).set_index("statistic")


def profile_manova(
    data: pd.DataFrame,
    *,
    score: str = "score",
    sample: str = "sample",
    panelist: str = "panelist",
    attribute: str = "attribute",
    alpha: float = 0.05,
) -> ProfileManova:
    """MANOVA of a descriptive profile: do the samples differ on the attributes jointly?

    Parameters
    ----------
    data : DataFrame
        Tidy ratings, one row per score.
    score, sample, panelist, attribute : str
        Column names.
    alpha : float
        Risk of the test (``significant`` is Pillai's ``p < alpha``).

    Returns
    -------
    ProfileManova

    Notes
    -----
    The panelists' cell means (replicates averaged) of the p attributes are fitted by
    the additive two-way multivariate model ``y_ij = mu + tau_i + beta_j + e_ij``
    (sample i, panelist j as a block) with ``statsmodels.multivariate.manova.MANOVA``;
    ``H`` is the hypothesis and ``E`` the error matrix of sums of squares and products
    for the samples; Wilks' ``Lambda = det(E) / det(E + H)``, Pillai's
    ``V = tr(H (H + E)^-1)`` with their F approximations (Rao's for Wilks). The error
    is the residual of the cell means, i.e. the sample x panelist interaction: the
    multivariate form of testing samples against the interaction in the mixed assessor
    model (Naes, Brockhoff and Tomic 2010, ch. 5). ``significant`` follows Pillai's
    trace, the most robust of the four to unequal covariances (Johnson and Wichern
    2007, ch. 6). Needs ``df_error >= p`` (E invertible): enough panelists for the
    attributes. Panelists with a missing cell are left out (listwise).

    Assumes multivariate normal errors with one covariance matrix, additive panelist
    effects.
    """
    from statsmodels.multivariate.manova import MANOVA

    alpha = _check_alpha(alpha)
    c = _Cells(data, score, sample, panelist, attribute)
    b, t, m = c.cell.shape
    if t < 2:
        raise TrialsError(f"a MANOVA of samples needs at least 2 samples, got {t}")
    complete = ~np.isnan(c.cell).any(axis=(1, 2))
    if complete.sum() < 2:
        raise TrialsError("a MANOVA needs at least 2 panelists who rated every sample on "
                          "every attribute")
    cell = c.cell[complete]
    bb = int(complete.sum())
    df_h, df_e = t - 1, (t - 1) * (bb - 1)
    if df_e < m:
        raise TrialsError(f"too few panelists for {m} attributes: the error has {df_e} df "
                          f"and needs at least {m}")
    names = [f"y{j}" for j in range(m)]
    frame = pd.DataFrame(cell.reshape(bb * t, m), columns=names)
    frame["s"] = np.tile(np.arange(t), bb).astype(str)
    frame["p"] = np.repeat(np.arange(bb), t).astype(str)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        fit = MANOVA.from_formula(" + ".join(names) + " ~ C(s) + C(p)", data=frame)
        table = fit.mv_test().results["C(s)"]["stat"]
    labels = {"Wilks' lambda": "wilks", "Pillai's trace": "pillai",
              "Hotelling-Lawley trace": "hotelling_lawley", "Roy's greatest root": "roy"}
    rows = []
    for key, name in labels.items():
        r = table.loc[key]
        rows.append(ManovaRow(name, float(r["Value"]), float(r["Num DF"]), float(r["Den DF"]),
                              float(r["F Value"]), float(r["Pr > F"])))
    pillai = rows[1]
    return ProfileManova(
        samples=tuple(c.samples), attributes=tuple(c.attributes), panelists=bb,
        df_hypothesis=df_h, df_error=df_e, alpha=alpha, tests=tuple(rows),
        wilks=rows[0].value, pillai=pillai.value, p_value=pillai.p_value,
        significant=bool(pillai.p_value < alpha),
        error_term="sample:panelist (residual of the panelists' cell means)",
        method=("MANOVA of the panelists' cell means, samples fixed and panelists as "
                "blocks (statsmodels MANOVA); Wilks, Pillai, Hotelling-Lawley, Roy"),
    )


# ---------------------------------------------------------------- panelist x sample


@dataclass(frozen=True, slots=True)
class PanelistDeparture(Record):
    """How one panelist's sample means on one attribute depart from the panel's.

    ``r``: correlation with the other panelists' sample means (direction; 1 = same
    order); ``slope``: regression slope on them (scale; 1 = same range, < 1 a narrower
    range, > 1 a wider one); ``share``: the panelist's share of the attribute's sample x
    panelist interaction sum of squares; ``flags`` why the panelist stands apart.
    """

    attribute: str
    panelist: str
    samples: int
    r: float | None
    slope: float | None
    share: float | None
    flags: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class AttributeInteraction(Record):
    """The sample x panelist interaction of one attribute (``F``/``p_value`` from the
    replicates, None without them) and each panelist's departure."""

    attribute: str
    F: float | None
    p_value: float | None
    significant: bool | None
    panelists: tuple[PanelistDeparture, ...]


@dataclass(frozen=True, slots=True)
class ProfileInteraction(Record):
    """Per attribute, the sample x panelist interaction and who departs, and how."""

    alpha: float
    rule: str
    attributes: tuple[AttributeInteraction, ...]
    method: str

    def to_frame(self) -> pd.DataFrame:
        rows = []
        for at in self.attributes:
            for p in at.panelists:
                d = p.to_dict()
                d["flags"] = "; ".join(p.flags)
                d["interaction_p"] = at.p_value
                rows.append(d)
        return pd.DataFrame(rows)

    def flagged(self) -> tuple[tuple[str, str], ...]:
        return tuple((p.attribute, p.panelist) for at in self.attributes for p in at.panelists
                     if p.flags)


def _flag(p: PanelistDeparture, min_agreement: float, lo: float, hi: float,
          share: float) -> PanelistDeparture:
    if p.share is None or p.share <= share:
        return p
    if p.r is not None and p.r < min_agreement:
        why = (f"direction: {'reverses' if p.r < 0 else 'departs from'} the panel's order "
               f"(r = {p.r:.2f})")
    elif p.slope is not None and not lo <= p.slope <= hi:
        why = (f"scale: {'narrower' if p.slope < lo else 'wider'} range than the panel "
               f"(slope {p.slope:.2f})")
    else:
        return p
    return PanelistDeparture(p.attribute, p.panelist, p.samples, p.r, p.slope, p.share, (why,))


def panelist_interaction(
    data: pd.DataFrame,
    *,
    score: str = "score",
    sample: str = "sample",
    panelist: str = "panelist",
    attribute: str = "attribute",
    replicate: str | None = None,
    alpha: float = 0.05,
    min_agreement: float = 0.5,
    scale_range: tuple[float, float] = (0.5, 2.0),
    min_share: float = 2.0,
) -> ProfileInteraction:
    """Sample x panelist interaction per attribute: which panelist disagrees, and how.

    Parameters
    ----------
    data : DataFrame
        Tidy ratings, one row per score.
    score, sample, panelist, attribute : str
        Column names.
    replicate : str, optional
        Replicate column; with replicates the interaction is tested
        (:func:`trials.stats.ratings.rating_anova`, ``MS_sample:panelist / MS_error``).
    alpha : float
        Risk of the interaction test.
    min_agreement : float
        A correlation below this is flagged as a disagreement in direction (0.5).
    scale_range : (low, high)
        A slope outside is flagged as a difference in scale (0.5, 2), when the
        direction agrees.
    min_share : float
        Only a panelist whose share of the interaction sum of squares exceeds
        ``min_share / b`` (b panelists; twice the average share by default) is flagged,
        and only on an attribute whose interaction is significant (or untested).

    Returns
    -------
    ProfileInteraction

    Notes
    -----
    For attribute a and panelist j with cell means ``y_ij`` (replicates averaged) and
    the other panelists' sample means ``c_i`` (leave-one-out, so that j's own noise is
    not on both sides): direction ``r_j = corr(y_.j, c)``; scale ``beta_j``, the least
    squares slope of ``y_ij = alpha_j + beta_j c_i + e_ij``, the scaling of the assessor
    model of Brockhoff and Skovgaard (1994); the interaction residuals
    ``d_ij = y_ij - y_i. - y_.j + y_..`` of the full panel give each panelist's share
    ``sum_i d_ij^2 / sum_ij d_ij^2`` of the interaction sum of squares (complete
    panelists only). A panelist can disagree in direction (a low or negative r: a
    different order) or in scale (r high, slope far from 1: the same order on a
    narrower or wider range); only the first is a real disagreement, the second is
    often removed by scaling (Naes, Brockhoff and Tomic 2010, ch. 3). The thresholds
    are a house rule, not a published criterion.
    """
    from trials.stats.ratings import rating_anova

    alpha = _check_alpha(alpha)
    c = _Cells(data, score, sample, panelist, attribute)
    b, t, m = c.cell.shape
    lo, hi = scale_range
    out = []
    for a in range(m):
        y = c.cell[:, :, a]
        complete = ~np.isnan(y).any(axis=1)
        share = np.full(b, np.nan)
        if complete.sum() >= 2:
            yc = y[complete]
            d = yc - yc.mean(1, keepdims=True) - yc.mean(0, keepdims=True) + yc.mean()
            total = float((d**2).sum())
            if total > 0:
                share[complete] = (d**2).sum(1) / total
        rows = []
        for j in range(b):
            others = np.delete(y, j, axis=0)
            with np.errstate(invalid="ignore"), warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                cons = np.nanmean(others, axis=0) if len(others) else np.full(t, np.nan)
            ok = np.isfinite(y[j]) & np.isfinite(cons)
            r = slope = None
            if ok.sum() >= 3 and cons[ok].std() > 0:
                xv, yv = cons[ok], y[j][ok]
                slope = float(np.polyfit(xv, yv, 1)[0])
                if yv.std() > 0:
                    r = float(np.corrcoef(xv, yv)[0, 1])
                else:
                    r = 0.0
            rows.append(PanelistDeparture(
                c.attributes[a], c.panelists[j], int(ok.sum()), r, slope,
                None if math.isnan(share[j]) else float(share[j]), ()))
        f_val = p_val = sig = None
        if replicate is not None:
            part = data[c.a_codes == a]
            try:
                anova = rating_anova(part, score=score, sample=sample, panelist=panelist,
                                     replicate=replicate, alpha=alpha)
                row = anova.term("sample:panelist")
            except (TrialsError, KeyError):
                row = None
            if row is not None and row.F is not None and row.p is not None:
                f_val, p_val = float(row.F), float(row.p)
                sig = bool(p_val < alpha)
        if sig is not False:  # flag only where the interaction is significant or untested
            rows = [_flag(p, min_agreement, lo, hi, min_share / b) for p in rows]
        out.append(AttributeInteraction(c.attributes[a], f_val, p_val, sig, tuple(rows)))
    rule = (f"house rule (no published source): where the attribute's sample x panelist "
            f"interaction is significant at {alpha:g} (or untested, without replicates), a "
            f"panelist carrying more than {min_share:g}/{b} of its sum of squares is flagged: "
            f"in direction when r < {min_agreement:g} with the other panelists' means, "
            f"else in scale when the slope is outside [{lo:g}, {hi:g}]")
    return ProfileInteraction(
        alpha=alpha, rule=rule, attributes=tuple(out),
        method=("per-panelist correlation and slope against the panel (assessor model, "
                "Brockhoff and Skovgaard 1994); interaction F from the replicates"),
    )


# ---------------------------------------------------------------- the whole profile


@dataclass(frozen=True, slots=True)
class DescriptiveProfile(Record):
    """A descriptive profile's means, map, MANOVA and panelist departures (``notes``
    say why a part is missing)."""

    means: ProfileMeans
    pca: ProfilePCA | None
    manova: ProfileManova | None
    interaction: ProfileInteraction | None
    notes: tuple[str, ...]


def descriptive_profile(
    data: pd.DataFrame,
    *,
    score: str = "score",
    sample: str = "sample",
    panelist: str = "panelist",
    attribute: str = "attribute",
    replicate: str | None = None,
    alpha: float = 0.05,
    n_boot: int = 500,
    rng: int | np.random.Generator | None = 0,
) -> DescriptiveProfile:
    """:func:`profile_means`, :func:`profile_pca`, :func:`profile_manova` and
    :func:`panelist_interaction` of one set of tidy ratings; a part that the data
    cannot support (too few samples or panelists) is None, with a note saying why."""
    means = profile_means(data, score=score, sample=sample, panelist=panelist,
                          attribute=attribute)
    notes = []
    pca = manova = inter = None
    try:
        pca = profile_pca(data, score=score, sample=sample, panelist=panelist,
                          attribute=attribute, n_boot=n_boot, rng=rng)
    except TrialsError as exc:
        notes.append(f"no map: {exc}")
    try:
        manova = profile_manova(data, score=score, sample=sample, panelist=panelist,
                                attribute=attribute, alpha=alpha)
    except TrialsError as exc:
        notes.append(f"no MANOVA: {exc}")
    try:
        inter = panelist_interaction(data, score=score, sample=sample, panelist=panelist,
                                     attribute=attribute, replicate=replicate, alpha=alpha)
    except TrialsError as exc:
        notes.append(f"no panelist departures: {exc}")
    return DescriptiveProfile(means, pca, manova, inter, tuple(notes))
