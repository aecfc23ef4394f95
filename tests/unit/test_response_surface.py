"""Effects, Lenth's PSE, response-surface fits and desirability against published
worked examples, each backed by an independent computation (numpy lstsq, statsmodels
formula OLS, hand arithmetic written out).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf

from trials.errors import TrialsError
from trials.stats.response_surface import (
    INTERACTION,
    MAXIMIZE,
    MINIMIZE,
    TARGET,
    Goal,
    contour_grid,
    desirability,
    desirability_optimum,
    factorial_effects,
    half_normal_points,
    lenth_pse,
    response_surface_fit,
)


def _yates(ys, letters):
    """Standard (Yates) order: the first factor changes fastest."""
    rows = []
    for i, y in enumerate(ys):
        row = {f: (1 if i >> j & 1 else -1) for j, f in enumerate(letters)}
        row["y"] = y
        rows.append(row)
    return pd.DataFrame(rows)


def _lstsq_effects(frame, letters):
    """Independent: full interaction model by numpy lstsq, effect = 2 x coefficient."""
    from itertools import combinations
    cols, names = [np.ones(len(frame))], []
    for size in range(1, len(letters) + 1):
        for idx in combinations(letters, size):
            cols.append(np.prod(frame[list(idx)].to_numpy(float), axis=1))
            names.append("*".join(idx))
    beta, *_ = np.linalg.lstsq(np.column_stack(cols), frame["y"].to_numpy(float), rcond=None)
    return dict(zip(names, 2 * beta[1:]))


# Montgomery, Design and Analysis of Experiments, 9th ed. (2017), Example 6.2: the
# pilot-plant filtration rate, a single replicate of the 2^4 (from memory), in
# standard order; effect estimates as printed there (from memory).
FILTRATION = [45, 71, 48, 65, 68, 60, 80, 65, 43, 100, 45, 104, 75, 86, 70, 96]
FILTRATION_EFFECTS = {"A": 21.625, "B": 3.125, "C": 9.875, "D": 14.625, "A*B": 0.125,
                      "A*C": -18.125, "A*D": 16.625, "B*C": 2.375, "B*D": -0.375,
                      "C*D": -1.125, "A*B*C": 1.875, "A*B*D": 4.125, "A*C*D": -1.625,
                      "B*C*D": -2.625, "A*B*C*D": 1.375}


def test_montgomery_example_6_2_effects():
    frame = _yates(FILTRATION, "ABCD")
    res = factorial_effects(frame, list("ABCD"), "y")
    got = {e.term: e.estimate for e in res.effects}
    independent = _lstsq_effects(frame, "ABCD")
    for term, printed in FILTRATION_EFFECTS.items():
        assert got[term] == pytest.approx(printed, abs=1e-9), term
        assert independent[term] == pytest.approx(printed, abs=1e-9), term
    assert res.se_source == "none"  # unreplicated, saturated: judge by Lenth
    assert all(e.se is None for e in res.effects)


def test_lenth_pse_on_montgomery_example_6_2_by_hand():
    # Lenth (1989): s0 = 1.5 median|c| = 1.5 x 2.625 = 3.9375; 2.5 s0 = 9.84375 drops
    # A, C, D, AC, AD; the median of the ten left (1.625 and 1.875 in the middle) is
    # 1.75, so PSE = 2.625 (hand arithmetic on the effects above). ME = t(0.975, 5) PSE,
    # t(0.975, 5) = 2.5706 (t table); SME with gamma = (1 + 0.95^(1/15)) / 2.
    res = lenth_pse(FILTRATION_EFFECTS)
    assert res.s0 == pytest.approx(3.9375)
    assert res.pse == pytest.approx(2.625)
    assert res.df == pytest.approx(5.0)
    assert res.me == pytest.approx(2.5706 * 2.625, abs=5e-4)
    from scipy import stats
    gamma = (1 + 0.95 ** (1 / 15)) / 2
    assert res.sme == pytest.approx(stats.t.ppf(gamma, 5) * 2.625)
    assert set(res.active) == {"A", "C", "D", "A*C", "A*D"}  # the effects Montgomery keeps


def test_half_normal_quantiles_follow_daniel():
    pts = half_normal_points({"a": -3.0, "b": 1.0, "c": 2.0})
    assert list(pts["term"]) == ["b", "c", "a"]
    # Phi^-1(0.5 + 0.5 (i - 0.5) / 3) for i = 1, 2, 3 (normal table: 0.2104, 0.6745, 1.3830)
    assert np.allclose(pts["quantile"], [0.2104, 0.6745, 1.3830], atol=1e-4)


# NIST/SEMATECH e-Handbook of Statistical Methods, chapter 5.6 (DOE case studies), the
# eddy current probe sensitivity case study: a 2^3 full factorial (number of turns,
# winding distance, wire gauge), responses in standard order, the mean and the effects
# (all from memory, section number included; every effect is also checked by lstsq).
EDDY = [1.70, 4.57, 0.55, 3.39, 1.51, 4.59, 0.67, 4.29]


def test_nist_eddy_current_case_study_effects():
    frame = _yates(EDDY, "XYZ")
    res = factorial_effects(frame, list("XYZ"), "y")
    got = {e.term: e.estimate for e in res.effects}
    assert res.mean == pytest.approx(2.65875)
    assert got["X"] == pytest.approx(3.1025)
    assert got["Y"] == pytest.approx(-0.8675)
    independent = _lstsq_effects(frame, "XYZ")
    for term, value in independent.items():
        assert got[term] == pytest.approx(value, abs=1e-12)


# Box, Hunter and Hunter, Statistics for Experimenters, 2nd ed. (2005), the pilot plant
# 2^3 (temperature T, concentration C, catalyst K), yields 60 72 54 68 52 83 45 80 in
# standard order; effects T 23, C -5, K 1.5, TC 1.5, TK 10, CK 0, TCK 0.5 (from memory).
def test_bhh_pilot_plant_effects_with_centre_points_and_curvature():
    frame = _yates([60, 72, 54, 68, 52, 83, 45, 80], "TCK")
    res = factorial_effects(frame, list("TCK"), "y")
    got = {e.term: e.estimate for e in res.effects}
    for term, value in {"T": 23, "C": -5, "K": 1.5, "T*C": 1.5, "T*K": 10, "C*K": 0,
                        "T*C*K": 0.5}.items():
        assert got[term] == pytest.approx(value), term
    # invented centre points: pure error and curvature (Montgomery 2017, section 6.8):
    # SS_curv = nF nC (ybar_F - ybar_C)^2 / (nF + nC), by hand: ybar_F = 64.25
    centre = pd.DataFrame({"T": [0] * 3, "C": [0] * 3, "K": [0] * 3, "y": [60.0, 62.0, 61.0]})
    res = factorial_effects(pd.concat([frame, centre]), list("TCK"), "y")
    assert res.se_source == "pure error"
    assert res.error_df == 2 and res.error_ms == pytest.approx(1.0)
    assert res.curvature_ss == pytest.approx(8 * 3 * (64.25 - 61.0) ** 2 / 11)
    t = next(e for e in res.effects if e.term == "T")
    assert t.se == pytest.approx(2 * math.sqrt(1.0 / 8))  # var(effect) = 4 s^2 / N


def test_a_fraction_skips_aliased_words():
    # 2^(3-1), C = AB: AB is C, so only A, B, C are estimable (BH&H 2005, section 6.2)
    frame = pd.DataFrame({"A": [-1, 1, -1, 1], "B": [-1, -1, 1, 1], "y": [1.0, 2, 3, 5]})
    frame["C"] = frame["A"] * frame["B"]
    res = factorial_effects(frame, list("ABC"), "y")
    assert [e.term for e in res.effects] == ["A", "B", "C"]
    assert "A*B" in res.skipped


# Montgomery (2017), Example 11.2: the chemical process yield, a central composite
# design in time and temperature (coded, axial 1.414) with 5 centre points; fitted
# y = 79.94 + 0.995 x1 + 0.515 x2 - 1.376 x1^2 - 1.001 x2^2 + 0.25 x1 x2, stationary
# point x = (0.389, 0.306), y_s = 80.21, eigenvalues -0.9634 and -1.4141 (from memory).
R2 = math.sqrt(2)
YIELD = pd.DataFrame({
    "x1": [-1, -1, 1, 1, 0, 0, 0, 0, 0, R2, -R2, 0, 0],
    "x2": [-1, 1, -1, 1, 0, 0, 0, 0, 0, 0, 0, R2, -R2],
    "y": [76.5, 77.0, 78.0, 79.5, 79.9, 80.3, 80.0, 79.7, 79.8, 78.4, 75.6, 78.5, 77.0],
})


def test_montgomery_example_11_2_second_order_fit():
    fit = response_surface_fit(YIELD, ["x1", "x2"], "y", bound=R2)
    coef = fit.to_frame()["estimate"]
    printed = {"intercept": 79.94, "x1": 0.995, "x2": 0.515, "x1^2": -1.376,
               "x2^2": -1.001, "x1*x2": 0.25}
    for term, value in printed.items():
        assert coef[term] == pytest.approx(value, abs=6e-4), term
    # independent: statsmodels' formula interface
    ref = smf.ols("y ~ x1 + x2 + I(x1**2) + I(x2**2) + x1:x2", data=YIELD).fit()
    assert coef["x1^2"] == pytest.approx(ref.params["I(x1 ** 2)"])
    assert coef["x1*x2"] == pytest.approx(ref.params["x1:x2"])
    assert fit.to_frame()["se"]["x1"] == pytest.approx(ref.bse["x1"])
    assert fit.r2 == pytest.approx(ref.rsquared)
    can = fit.canonical
    assert can.stationary == pytest.approx((0.389, 0.306), abs=1e-3)
    assert can.value == pytest.approx(80.21, abs=5e-3)
    assert sorted(can.eigenvalues) == pytest.approx([-1.4141, -0.9634], abs=1e-4)
    assert can.nature == "maximum" and can.inside
    # independent: the stationary point is where numpy's gradient of the fit vanishes
    grad = [(fit.predict(np.array([can.stationary]) + h)[0]
             - fit.predict(np.array([can.stationary]) - h)[0]) / 2e-6
            for h in (np.array([1e-6, 0]), np.array([0, 1e-6]))]
    assert np.allclose(grad, 0, atol=1e-6)


def test_lack_of_fit_against_pure_error_from_the_centre_points():
    fit = response_surface_fit(YIELD, ["x1", "x2"], "y", bound=R2)
    # by hand: the 5 centre points 79.9 80.3 80.0 79.7 79.8, mean 79.94, squared
    # deviations 0.0016 0.1296 0.0036 0.0576 0.0196 -> pure error SS 0.2120 on 4 df
    pe = fit.line("pure error")
    assert pe.df == 4 and pe.ss == pytest.approx(0.2120)
    ref = smf.ols("y ~ x1 + x2 + I(x1**2) + I(x2**2) + x1:x2", data=YIELD).fit()
    lof = fit.line("lack of fit")
    assert lof.df == 3
    assert lof.ss == pytest.approx(ref.ssr - 0.2120)
    assert lof.F == pytest.approx((lof.ss / 3) / (0.2120 / 4))
    assert fit.line("residual").ss == pytest.approx(ref.ssr)
    assert fit.line("model").ss == pytest.approx(ref.ess)


def test_blocks_enter_before_the_model():
    data = YIELD.assign(block=[1, 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2])
    fit = response_surface_fit(data, ["x1", "x2"], "y", block="block", bound=R2)
    ref = smf.ols("y ~ C(block) + x1 + x2 + I(x1**2) + I(x2**2) + x1:x2", data=data).fit()
    assert fit.line("residual").ss == pytest.approx(ref.ssr)
    assert fit.to_frame()["estimate"]["x1"] == pytest.approx(ref.params["x1"])


def test_a_two_level_design_cannot_fit_squares():
    frame = _yates(EDDY, "XYZ")
    with pytest.raises(TrialsError):
        response_surface_fit(frame, list("XYZ"), "y")
    fit = response_surface_fit(frame, list("XYZ"), "y", model=INTERACTION)
    assert fit.canonical is None and fit.df_resid == 1


def test_contour_grid_matches_pointwise_predictions():
    fit = response_surface_fit(YIELD, ["x1", "x2"], "y")
    xs, ys, z = contour_grid(fit, 0, 1, n=50)
    assert z.shape == (50, 50)
    i, j = 7, 31
    assert z[i, j] == pytest.approx(fit.predict(np.array([[xs[j], ys[i]]]))[0])


def test_desirability_shapes_of_derringer_and_suich():
    up = Goal("liking", MAXIMIZE, low=7, high=9)
    assert desirability(up, np.array([6.0, 7.0, 8.0, 9.0, 10.0])) == pytest.approx(
        [0, 0, 0.5, 1, 1])
    down = Goal("loss", MINIMIZE, low=2, high=6, weight=2)
    assert desirability(down, np.array([3.0])) == pytest.approx([0.75 ** 2])
    aim = Goal("salt", TARGET, low=1, high=3, target=2)
    assert desirability(aim, np.array([1.5, 2.0, 2.5, 3.5])) == pytest.approx([0.5, 1, .5, 0])


def test_the_desirability_optimum_beats_a_brute_force_grid():
    liking = response_surface_fit(YIELD, ["x1", "x2"], "y")
    # an invented second response: a yield falling with x1 and rising with x2
    second = YIELD.assign(y=90 - 2 * YIELD["x1"] + 1.5 * YIELD["x2"]
                          + 0.1 * np.sin(np.arange(13)))
    loss = response_surface_fit(second, ["x1", "x2"], "y")
    fits = {"yield": liking, "y2": loss}
    goals = [Goal("yield", MAXIMIZE, low=78, high=80.5), Goal("y2", MAXIMIZE, low=88, high=92)]
    bounds = [(-1, 1), (-1, 1)]
    opt = desirability_optimum(fits, goals, bounds)
    n = 401
    g = np.linspace(-1, 1, n)
    gx, gy = np.meshgrid(g, g)
    pts = np.column_stack([gx.ravel(), gy.ravel()])
    d1 = np.clip((liking.predict(pts) - 78) / 2.5, 0, 1)
    d2 = np.clip((loss.predict(pts) - 88) / 4, 0, 1)
    D = np.sqrt(d1 * d2)
    assert opt.feasible
    assert opt.D >= D.max() - 1e-9
    assert np.allclose(opt.coded, pts[np.argmax(D)], atol=2 / (n - 1) * 2)
    assert all(-1 <= c <= 1 for c in opt.coded)
    lo, hi = opt.interval["yield"]
    assert lo < opt.predicted["yield"] < hi


def test_no_setting_meeting_every_constraint_is_reported_infeasible():
    fit = response_surface_fit(YIELD, ["x1", "x2"], "y")
    opt = desirability_optimum({"y": fit}, [Goal("y", MAXIMIZE, low=85, high=90)],
                               [(-1, 1), (-1, 1)])
    assert not opt.feasible and opt.D == 0
