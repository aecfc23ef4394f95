"""Descriptive profiles: PCA against numpy's eigen-decomposition of the correlation
matrix, the bootstrap ellipses against a plain pandas resampling, the MANOVA against
E and H matrices computed by hand and a textbook example (from memory), the panelist
departures against numpy/statsmodels."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.multivariate.manova import MANOVA
from statsmodels.stats.anova import anova_lm

from trials.errors import TrialsError
from trials.stats.profile import (
    descriptive_profile,
    panelist_interaction,
    profile_manova,
    profile_means,
    profile_pca,
)

ATTRS = ("crust colour", "crumb softness", "sourness", "sweetness", "chewiness")


def _profile(panelists=10, samples=("A", "B", "C", "D"), reps=2, seed=3, scale=None,
             reverse=None, sd=0.7):
    """Invented ratings: true profiles plus panelist offsets and noise; ``scale`` maps a
    panelist to a factor on the sample effects, ``reverse`` a panelist to an attribute
    whose sample effects that panelist reverses."""
    rng = np.random.default_rng(seed)
    true = rng.normal(0, 1.5, size=(len(samples), len(ATTRS)))
    rows = []
    for p in range(panelists):
        code = f"P{p:02d}"
        off = rng.normal(0, 0.6, size=len(ATTRS))
        for i, s in enumerate(samples):
            for a, name in enumerate(ATTRS):
                eff = true[i, a] * (scale or {}).get(code, 1.0)
                if (reverse or {}).get(code) == name:
                    eff = -eff
                for r in range(reps):
                    rows.append({"panelist": code, "sample": s, "attribute": name,
                                 "replicate": r + 1,
                                 "score": 5 + off[a] + eff + rng.normal(0, sd)})
    return pd.DataFrame(rows)


def _means_table(data):
    cell = data.groupby(["panelist", "sample", "attribute"])["score"].mean()
    return cell.groupby(["sample", "attribute"]).mean().unstack()


# ---------------------------------------------------------------- means and PCA


def test_profile_means_are_the_average_of_the_panelists_cell_means():
    data = _profile()
    data = data.drop(index=data.index[:3])  # one panelist misses replicates of a cell
    res = profile_means(data)
    expected = _means_table(data)
    for s in res.samples:
        for a in res.attributes:
            assert res.means[s][a] == pytest.approx(expected.loc[s, a], rel=1e-12)


def test_pca_matches_numpy_eigen_decomposition_of_the_correlation_matrix():
    # Independent computation: numpy.linalg.eigh of numpy.corrcoef of the means table
    # (the correlation-matrix PCA, Jolliffe 2002, ch. 2).
    data = _profile()
    res = profile_pca(data, n_boot=0)
    x = _means_table(data).loc[list(res.samples), list(res.attributes)].to_numpy()
    vals, vecs = np.linalg.eigh(np.corrcoef(x, rowvar=False))
    order = np.argsort(vals)[::-1][: res.components]
    vals, vecs = vals[order], vecs[:, order]
    assert res.components == 3  # t - 1 components for 4 samples
    assert np.allclose(res.eigenvalues, vals, atol=1e-10)
    assert sum(res.explained) == pytest.approx(vals.sum() / len(ATTRS), rel=1e-10)
    z = (x - x.mean(0)) / x.std(0, ddof=1)
    scores = res.scores_frame().loc[list(res.samples)].to_numpy()
    loadings = res.loadings_frame().loc[list(res.attributes)].to_numpy()
    for k in range(res.components):
        sign = np.sign(scores[:, k] @ (z @ vecs[:, k]))
        assert np.allclose(scores[:, k], sign * z @ vecs[:, k], atol=1e-10)
        # loadings are the correlations of each attribute with the component
        comp = z @ vecs[:, k]
        corr = [np.corrcoef(z[:, j], comp)[0, 1] for j in range(len(ATTRS))]
        assert np.allclose(loadings[:, k], sign * np.array(corr), atol=1e-10)
        # the sign rule: the largest loading of each component is positive
        assert loadings[np.argmax(np.abs(loadings[:, k])), k] > 0


def test_pca_leaves_out_an_attribute_with_no_spread_and_names_it():
    data = _profile()
    flat = data["attribute"] == "sweetness"
    data.loc[flat, "score"] = data.loc[flat, "panelist"].map(
        {p: 4.0 + i % 3 for i, p in enumerate(sorted(data["panelist"].unique()))})
    res = profile_pca(data, n_boot=0)
    assert res.left_out == ("sweetness",)
    assert "sweetness" not in res.loadings
    assert sum(res.eigenvalues) <= len(ATTRS) - 1 + 1e-9


def test_pca_refuses_two_samples_and_a_missing_cell():
    with pytest.raises(TrialsError, match="at least 3 samples"):
        profile_pca(_profile(samples=("A", "B")))
    data = _profile()
    data = data[~((data["sample"] == "A") & (data["attribute"] == "sourness"))]
    with pytest.raises(TrialsError, match="every sample rated on every attribute"):
        profile_pca(data)


def test_ellipses_match_a_plain_pandas_resampling_of_the_panel_with_the_same_draws():
    # Independent computation of the partial bootstrap (Husson, Le and Pages 2005):
    # the same seeded draws of panelists, each virtual panel's means by pandas groupby,
    # standardized with the data's centres and scales, projected on the data's axes.
    data = _profile(panelists=8)
    res = profile_pca(data, n_boot=30, rng=11)
    panelists = list(dict.fromkeys(data["panelist"]))
    draws = np.random.default_rng(11).integers(0, len(panelists), size=(30, len(panelists)))
    cell = data.groupby(["panelist", "sample", "attribute"])["score"].mean().reset_index()
    load = res.loadings_frame().loc[list(res.attributes)].to_numpy()[:, :2]
    axes = load / np.sqrt(np.array(res.eigenvalues[:2]))  # back to unit eigenvectors
    centre = np.array([res.center[a] for a in res.attributes])
    scale = np.array([res.scale[a] for a in res.attributes])
    points = {s: [] for s in res.samples}
    for row in draws:
        panel = pd.concat([cell[cell["panelist"] == panelists[j]] for j in row])
        m = panel.groupby(["sample", "attribute"])["score"].mean().unstack()
        m = m.loc[list(res.samples), list(res.attributes)].to_numpy()
        proj = ((m - centre) / scale) @ axes
        for i, s in enumerate(res.samples):
            points[s].append(proj[i])
    for e in res.ellipses:
        cov = np.cov(np.array(points[e.sample]), rowvar=False)
        assert np.allclose(np.array(e.cov), cov, rtol=1e-9, atol=1e-12)
        assert e.center == pytest.approx(res.scores[e.sample][:2], abs=1e-12)
        # semi-axes: sqrt(chi2_2(0.95) x eigenvalues of the covariance)
        lam = np.sort(np.linalg.eigvalsh(cov))[::-1]
        assert e.axes == pytest.approx(tuple(np.sqrt(stats.chi2.ppf(0.95, 2) * lam)), rel=1e-9)
        # the traced path stays on the ellipse: Mahalanobis radius^2 = chi2_2(0.95)
        d = np.stack([e.x, e.y], axis=1) - np.array(e.center)
        r2 = np.einsum("ij,jk,ik->i", d, np.linalg.inv(cov), d)
        assert np.allclose(r2, stats.chi2.ppf(0.95, 2), rtol=1e-9)


def test_ellipses_are_seeded_and_shrink_as_the_panel_grows():
    data = _profile(panelists=6)
    a = profile_pca(data, n_boot=200, rng=5)
    b = profile_pca(data, n_boot=200, rng=5)
    assert a.ellipses == b.ellipses
    big = pd.concat([data.assign(panelist=data["panelist"] + f"-{k}") for k in range(4)])
    c = profile_pca(big, n_boot=200, rng=5)
    # four copies of the panel: same map, the spread of a mean of 4x the panelists is
    # about half (1 / sqrt 4)
    ratio = np.mean([ce.axes[0] / ae.axes[0] for ae, ce in zip(a.ellipses, c.ellipses)])
    assert 0.35 < ratio < 0.65


# ---------------------------------------------------------------- MANOVA


@pytest.mark.filterwarnings("ignore:divide by zero:RuntimeWarning")  # Roy's F, p = 2
def test_statsmodels_manova_reproduces_the_textbook_wilks_lambda_from_memory():
    # Johnson and Wichern, Applied Multivariate Statistical Analysis, 6th ed.,
    # Example 6.9 (from memory): three groups, two variables, Wilks' lambda = 0.0385,
    # exact F = 8.19 on (4, 8) df (the book works from the rounded lambda, hence 0.01),
    # W = [[10, 1], [1, 24]], det W = 239, det(B + W) = 6215. Backed by numpy.
    x1 = [9, 6, 9, 0, 2, 3, 1, 2]
    x2 = [3, 2, 7, 4, 0, 8, 9, 7]
    g = ["1", "1", "1", "2", "2", "3", "3", "3"]
    frame = pd.DataFrame({"x1": x1, "x2": x2, "g": g})
    table = MANOVA.from_formula("x1 + x2 ~ C(g)", data=frame).mv_test().results["C(g)"]["stat"]
    assert table.loc["Wilks' lambda", "Value"] == pytest.approx(0.0385, abs=5e-5)
    assert table.loc["Wilks' lambda", "F Value"] == pytest.approx(8.19, abs=0.01)
    assert (table.loc["Wilks' lambda", "Num DF"], table.loc["Wilks' lambda", "Den DF"]) == (4, 8)
    y = frame[["x1", "x2"]].to_numpy(float)
    groups = frame["g"].to_numpy()
    w = sum(((y[groups == k] - y[groups == k].mean(0)).T @ (y[groups == k] - y[groups == k]
            .mean(0))) for k in "123")
    tot = (y - y.mean(0)).T @ (y - y.mean(0))
    assert np.allclose(w, [[10, 1], [1, 24]])
    assert np.linalg.det(w) == pytest.approx(239) and np.linalg.det(tot) == pytest.approx(6215)
    assert table.loc["Wilks' lambda", "Value"] == pytest.approx(239 / 6215, rel=1e-9)


def _e_and_h(data):
    cell = data.groupby(["panelist", "sample", "attribute"])["score"].mean().unstack()
    panelists = sorted(data["panelist"].unique())
    samples = sorted(data["sample"].unique())
    y = np.stack([cell.loc[p].loc[samples].to_numpy() for p in panelists])  # b x t x m
    grand = y.mean((0, 1))
    s_eff = y.mean(0) - grand
    p_eff = y.mean(1) - grand
    resid = y - grand - s_eff[None] - p_eff[:, None]
    h = len(panelists) * s_eff.T @ s_eff
    e = np.einsum("bti,btj->ij", resid, resid)
    return e, h, len(panelists), len(samples), y.shape[2]


def test_profile_manova_matches_wilks_and_pillai_from_the_e_and_h_matrices():
    # Independent computation: H and E of the additive two-way model by hand (balanced
    # data), Wilks = det(E)/det(E+H), Pillai = tr(H (H+E)^-1), Hotelling-Lawley =
    # tr(E^-1 H), Roy = the largest eigenvalue of E^-1 H; Pillai's F approximation
    # (Johnson and Wichern 2007, ch. 6; Rencher, Methods of Multivariate Analysis).
    data = _profile(panelists=9)
    res = profile_manova(data)
    e, h, b, t, m = _e_and_h(data)
    eig = np.linalg.eigvals(np.linalg.solve(e, h)).real
    assert res.wilks == pytest.approx(np.linalg.det(e) / np.linalg.det(e + h), rel=1e-8)
    pillai = np.trace(h @ np.linalg.inv(h + e))
    assert res.pillai == pytest.approx(pillai, rel=1e-8)
    tests = {r.statistic: r for r in res.tests}
    assert tests["hotelling_lawley"].value == pytest.approx(eig.sum(), rel=1e-8)
    assert tests["roy"].value == pytest.approx(eig.max(), rel=1e-8)
    q, dfe = t - 1, (t - 1) * (b - 1)
    assert (res.df_hypothesis, res.df_error) == (q, dfe)
    s = min(m, q)
    mm, nn = (abs(m - q) - 1) / 2, (dfe - m - 1) / 2
    f = (2 * nn + s + 1) / (2 * mm + s + 1) * pillai / (s - pillai)
    p = stats.f.sf(f, s * (2 * mm + s + 1), s * (2 * nn + s + 1))
    assert res.p_value == pytest.approx(p, rel=1e-8)
    assert res.significant


def test_profile_manova_refuses_more_attributes_than_error_degrees_of_freedom():
    data = _profile(panelists=2, samples=("A", "B", "C"))  # error df = 2 < 5 attributes
    with pytest.raises(TrialsError, match="too few panelists"):
        profile_manova(data)


@pytest.mark.slow
def test_profile_manova_without_sample_effects_is_rarely_significant():
    # Under the null the p-values are uniform: of 20 seeded data sets at alpha 0.05
    # about 1 rejects; more than 5 would be a fault (binomial P < 0.001).
    rejections = 0
    for seed in range(20):
        data = _profile(panelists=10, seed=seed)
        data["score"] = data["score"] - data.groupby(["sample", "attribute"])["score"] \
            .transform("mean") + np.random.default_rng(seed).normal(0, 0.7, len(data))
        rejections += profile_manova(data).significant
    assert rejections <= 5


# ---------------------------------------------------------------- panelist departures


def test_panelist_departures_name_the_reversed_and_the_compressed_panelist():
    data = _profile(panelists=10, scale={"P03": 0.2}, reverse={"P07": "sourness"}, sd=0.3)
    res = panelist_interaction(data, replicate="replicate")
    by = {(p.attribute, p.panelist): p for at in res.attributes for p in at.panelists}
    rev = by[("sourness", "P07")]
    assert rev.r is not None and rev.r < 0 and rev.flags[0].startswith("direction")
    scaled = [by[(a, "P03")] for a in ATTRS]
    assert all(p.r is not None and p.r > 0.5 for p in scaled)  # the same order ...
    flagged = [p for p in scaled if p.flags]
    assert len(flagged) >= 4  # ... on a narrower range (one attribute may hide it in noise)
    assert all(p.flags[0].startswith("scale") and p.slope < 0.5 for p in flagged)
    quiet = [p for (a, who), p in by.items() if who not in ("P03", "P07")]
    assert sum(bool(p.flags) for p in quiet) <= 2
    sour = next(at for at in res.attributes if at.attribute == "sourness")
    assert max(sour.panelists, key=lambda p: p.share or 0).panelist == "P07"
    assert sum(p.share for p in sour.panelists) == pytest.approx(1.0, rel=1e-12)
    assert sour.significant


def test_panelist_departure_values_match_numpy_and_the_interaction_f_matches_statsmodels():
    data = _profile(panelists=7, reverse={"P02": "sweetness"})
    res = panelist_interaction(data, replicate="replicate")
    part = data[data["attribute"] == "sweetness"]
    cell = part.groupby(["panelist", "sample"])["score"].mean().unstack()
    mine = cell.loc["P02"]
    others = cell.drop(index="P02").mean()
    at = next(a for a in res.attributes if a.attribute == "sweetness")
    p02 = next(p for p in at.panelists if p.panelist == "P02")
    assert p02.r == pytest.approx(np.corrcoef(mine, others)[0, 1], rel=1e-10)
    assert p02.slope == pytest.approx(np.polyfit(others, mine, 1)[0], rel=1e-10)
    # the interaction test: statsmodels ols + anova_lm, F = MS_int / MS_error
    table = anova_lm(smf.ols("score ~ C(sample) * C(panelist)", data=part).fit(), typ=2)
    assert at.F == pytest.approx(table.loc["C(sample):C(panelist)", "F"], rel=1e-8)
    assert at.p_value == pytest.approx(table.loc["C(sample):C(panelist)", "PR(>F)"], rel=1e-6)


def test_without_replicates_the_departures_are_given_but_the_interaction_is_not_tested():
    data = _profile(reps=1)
    res = panelist_interaction(data)
    assert all(at.F is None and at.p_value is None for at in res.attributes)
    assert all(p.r is not None for at in res.attributes for p in at.panelists)


def test_descriptive_profile_says_why_a_part_is_missing():
    res = descriptive_profile(_profile(samples=("A", "B"), panelists=3), n_boot=20)
    assert res.pca is None and any("no map" in n for n in res.notes)
    assert res.manova is None and any("no MANOVA" in n for n in res.notes)
    assert res.interaction is None or res.interaction.attributes
    full = descriptive_profile(_profile(), replicate="replicate", n_boot=50)
    assert full.pca is not None and full.manova is not None and not full.notes
    assert set(full.to_dict()) == {"means", "pca", "manova", "interaction", "notes"}


def test_no_panelist_is_flagged_where_the_interaction_is_not_significant():
    # the house rule flags only on an attribute whose interaction test rejects; without
    # departures in the invented data most attributes do not reject
    res = panelist_interaction(_profile(panelists=8, seed=9), replicate="replicate")
    quiet = [at for at in res.attributes if at.significant is False]
    assert quiet
    assert all(not p.flags for at in quiet for p in at.panelists)
    assert all(p.r is not None for at in quiet for p in at.panelists)  # still reported
