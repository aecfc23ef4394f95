"""The Thurstonian psychometric functions and their inverses match published values,
adaptive quadrature, a root finder and a Monte Carlo simulation of each decision rule."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, optimize, stats

from trials.errors import TrialsError, UnknownMethodError
from trials.methods import DISCRIMINATION, FORCED_CHOICE, get_method
from trials.stats.thurstonian import (
    DPRIME_MAX,
    b_value,
    dprime_conversion,
    dprime_from_pc,
    pc_from_dprime,
    pc_slope,
)

N = stats.norm
# The forced-choice methods whose registry entry names a Thurstonian model (two-out-of-five
# names none: its analysis gives pd only; see test_a_method_without_a_model_says_so).
MODELLED = tuple(m for m in DISCRIMINATION if get_method(m).has_dprime)
MODELLED_FC = tuple(m for m in FORCED_CHOICE if get_method(m).has_dprime)


# ------------------------------------------------------------- reference formulas
# Written independently with scipy.integrate.quad (adaptive), from the published
# formulas: Ennis (1993) J. Sensory Stud. 8:353-370 (triangle, duo-trio, 2-AFC, 3-AFC)
# and Ennis and Jesionka (2011) (unspecified tetrad).


def quad_triangle(d):
    def f(z):
        return (N.cdf(-z * math.sqrt(3) + d * math.sqrt(2 / 3))
                + N.cdf(-z * math.sqrt(3) - d * math.sqrt(2 / 3))) * N.pdf(z)
    return 2 * integrate.quad(f, 0, np.inf, epsabs=1e-13)[0]


def quad_3afc(d):
    return integrate.quad(lambda z: N.pdf(z - d) * N.cdf(z) ** 2, -np.inf, np.inf,
                          epsabs=1e-13)[0]


def quad_tetrad(d):
    def f(z):
        return N.pdf(z) * (2 * N.cdf(z) * N.cdf(z - d) - N.cdf(z - d) ** 2)
    return 1 - 2 * integrate.quad(f, -np.inf, np.inf, epsabs=1e-13)[0]


def quad_specified_tetrad(d):
    # Derived independently of the module: both stronger cups (N(d, 1)) lie above the larger
    # weaker cup M = max of two N(0, 1), whose density is 2 phi(m) Phi(m). quad on
    # a finite range wide enough (phi < 1e-31 outside), as the infinite range loses 1e-8.
    def f(m):
        return 2 * N.pdf(m) * N.cdf(m) * N.sf(m - d) ** 2
    return integrate.quad(f, -12, 12 + d, epsabs=1e-14, epsrel=1e-13, limit=200)[0]


def closed_duotrio(d):
    a, b = N.cdf(d / math.sqrt(2)), N.cdf(d / math.sqrt(6))
    return 1 - a - b + 2 * a * b


def closed_2afc(d):
    return N.cdf(d / math.sqrt(2))


REFERENCE = {"triangle": quad_triangle, "3afc": quad_3afc, "tetrad": quad_tetrad,
             "duo-trio": closed_duotrio, "2afc": closed_2afc,
             "tetrad-specified": quad_specified_tetrad}


@pytest.mark.parametrize("method", MODELLED)
def test_every_discrimination_method_of_the_registry_has_a_model_at_its_guess(method):
    assert pc_from_dprime(0.0, method=method) == pytest.approx(get_method(method).guess, abs=1e-12)


@pytest.mark.parametrize("method", sorted(REFERENCE))
@pytest.mark.parametrize("d", [0.0, 0.25, 1.0, 2.2, 4.0, 7.5, 12.0])
def test_pc_from_dprime_matches_adaptive_quadrature(method, d):
    assert pc_from_dprime(d, method=method) == pytest.approx(REFERENCE[method](d), abs=1e-11)


# Values of the published d' tables (Ennis 1993, table of pc against d'; the same values
# appear in Bi 2006), written down from memory to three decimals; each is also
# recomputed above by quadrature and below by simulation.
PUBLISHED_PC = [
    pytest.param("2afc", 1.0, 0.760, id="closed-form-2afc-d1"),
    pytest.param("2afc", 2.0, 0.921, id="closed-form-2afc-d2"),
    pytest.param("triangle", 1.0, 0.418, id="Ennis1993-from-memory-triangle-d1"),
    pytest.param("triangle", 2.0, 0.605, id="Ennis1993-from-memory-triangle-d2"),
    pytest.param("duo-trio", 1.0, 0.582, id="Ennis1993-from-memory-duotrio-d1"),
    pytest.param("duo-trio", 2.0, 0.747, id="Ennis1993-from-memory-duotrio-d2"),
    pytest.param("3afc", 1.0, 0.634, id="Ennis1993-from-memory-3afc-d1"),
    pytest.param("3afc", 2.0, 0.866, id="Ennis1993-from-memory-3afc-d2"),
    pytest.param("tetrad", 1.0, 0.494, id="EnnisJesionka2011-from-memory-tetrad-d1"),
]


@pytest.mark.parametrize(("method", "d", "pc"), PUBLISHED_PC)
def test_pc_matches_the_published_table_to_three_decimals(method, d, pc):
    assert pc_from_dprime(d, method=method) == pytest.approx(pc, abs=5e-4)
    assert dprime_from_pc(pc, method=method) == pytest.approx(d, abs=0.01)


# ------------------------------------------------------------- Monte Carlo of the rules


def simulate(method: str, d: float, trials: int, rng: np.random.Generator) -> float:
    """Share of correct answers when each decision rule is applied to normal sensations:
    A ~ N(0, 1), B ~ N(d, 1), one draw per cup (Thurstone's model)."""
    if method == "2afc":  # choose the stronger of A, B
        a, b = rng.standard_normal(trials), rng.standard_normal(trials) + d
        return float(np.mean(b > a))
    if method == "3afc":  # choose the strongest of A, A, B
        a = rng.standard_normal((trials, 2))
        b = rng.standard_normal(trials) + d
        return float(np.mean(b > a.max(axis=1)))
    if method == "duo-trio":  # reference A; choose the cup closer to the reference
        r, a = rng.standard_normal(trials), rng.standard_normal(trials)
        b = rng.standard_normal(trials) + d
        return float(np.mean(np.abs(a - r) < np.abs(b - r)))
    if method == "triangle":  # the odd cup is the one left out of the closest pair
        x = np.column_stack([rng.standard_normal((trials, 2)), rng.standard_normal(trials) + d])
        d01, d02, d12 = (np.abs(x[:, 0] - x[:, 1]), np.abs(x[:, 0] - x[:, 2]),
                         np.abs(x[:, 1] - x[:, 2]))
        return float(np.mean((d01 < d02) & (d01 < d12)))
    if method == "tetrad":  # group the two weakest against the two strongest
        x = np.column_stack([rng.standard_normal((trials, 2)),
                             rng.standard_normal((trials, 2)) + d])
        order = np.argsort(x, axis=1)
        labels = np.array([0, 0, 1, 1])[order[:, :2]]
        return float(np.mean(labels[:, 0] == labels[:, 1]))
    if method == "tetrad-specified":  # pick the two strongest; both must be B
        a = rng.standard_normal((trials, 2))
        b = rng.standard_normal((trials, 2)) + d
        return float(np.mean(b.min(axis=1) > a.max(axis=1)))
    raise AssertionError(method)


@pytest.mark.parametrize("method", MODELLED)
@pytest.mark.parametrize("d", [0.0, 0.8, 1.6, 3.0])
def test_pc_matches_a_seeded_monte_carlo_of_the_decision_rule(method, d):
    trials = 200_000
    rng = np.random.default_rng(12345 + 100 * DISCRIMINATION.index(method) + int(d * 10))
    observed = simulate(method, d, trials, rng)
    expected = pc_from_dprime(d, method=method)
    se = math.sqrt(expected * (1 - expected) / trials)
    assert abs(observed - expected) < 4.5 * se  # tolerance: 4.5 binomial standard errors


# ------------------------------------------------------------- inverse


@pytest.mark.parametrize("method", MODELLED)
def test_dprime_from_pc_agrees_with_brentq_on_the_exact_function(method):
    # d' is compared up to d' = 6, where pc still moves enough with d' for 1e-7 to be
    # meaningful; above it (3-AFC at d' = 9 leaves 1 - pc = 2e-10) the inverse is
    # ill-conditioned: a rounding of pc in the 16th digit moves d' by 1e-7. There the
    # check is the round trip in pc itself.
    guess = get_method(method).guess
    top = pc_from_dprime(6.0, method=method)
    pcs = np.linspace(guess + 1e-4, top, 157)
    ref = [optimize.brentq(lambda x, p=p: pc_from_dprime(x, method=method) - p, 0, 15,
                           xtol=1e-14) for p in pcs]
    assert np.max(np.abs(dprime_from_pc(pcs, method=method) - ref)) < 1e-7
    assert dprime_from_pc(float(pcs[40]), method=method) == pytest.approx(ref[40], abs=1e-7)
    high = pc_from_dprime(np.linspace(6.0, 9.0, 31), method=method)
    back = pc_from_dprime(dprime_from_pc(high, method=method), method=method)
    assert np.max(np.abs(back - high)) < 1e-12


@pytest.mark.parametrize("method", MODELLED)
def test_dprime_round_trip_recovers_pc(method):
    d = np.linspace(0.01, 8.0, 400)
    assert np.allclose(dprime_from_pc(pc_from_dprime(d, method=method), method=method), d,
                       atol=1e-7)


@pytest.mark.parametrize("method", MODELLED)
def test_newton_refinement_agrees_with_the_interpolation(method):
    pcs = np.linspace(0.4, 0.97, 50)
    assert np.allclose(dprime_from_pc(pcs, method=method, newton_steps=2),
                       dprime_from_pc(pcs, method=method), atol=1e-7)


@pytest.mark.parametrize("method", MODELLED)
def test_pc_at_or_below_chance_gives_zero_and_pc_one_gives_the_cap(method):
    guess = get_method(method).guess
    assert dprime_from_pc(guess, method=method) == 0.0
    assert dprime_from_pc(0.0, method=method) == 0.0
    assert dprime_from_pc(1.0, method=method) == DPRIME_MAX
    assert np.all(dprime_from_pc(np.array([0.1, guess, 1.0]), method=method) == [0, 0, DPRIME_MAX])


def test_conversion_records_the_convention_that_applied():
    low = dprime_conversion(method="triangle", pc=0.2)
    assert low.dprime == 0.0 and "chance" in low.note and not low.capped
    top = dprime_conversion(method="triangle", pc=1.0)
    assert top.dprime == DPRIME_MAX and top.capped
    back = dprime_conversion(method="duo-trio", dprime=1.0)
    assert back.pc == pytest.approx(closed_duotrio(1.0))
    assert set(back.to_dict()) >= {"method", "pc", "dprime"}
    pref = dprime_conversion(method="paired-preference", pc=0.76)
    assert pref.model == "2afc" and "2-AFC" in pref.note
    assert pref.dprime == pytest.approx(math.sqrt(2) * N.ppf(0.76), abs=1e-8)


# ------------------------------------------------------------- slope and B-value


@pytest.mark.parametrize("method", MODELLED)
def test_slope_matches_a_central_difference(method):
    d = np.array([0.3, 1.0, 2.5, 5.0])
    h = 1e-5
    numeric = (pc_from_dprime(d + h, method=method)
               - pc_from_dprime(d - h, method=method)) / (2 * h)
    assert np.allclose(pc_slope(d, method=method), numeric, atol=1e-8)


def test_b_value_of_2afc_has_its_closed_form():
    # 2-AFC: pc = Phi(d/sqrt2), slope = phi(d/sqrt2)/sqrt2, so B = 2 pc(1-pc) / phi^2
    d = 1.2
    pc = N.cdf(d / math.sqrt(2))
    assert b_value(d, method="2afc") == pytest.approx(
        2 * pc * (1 - pc) / N.pdf(d / math.sqrt(2)) ** 2)


def test_b_value_is_none_where_the_delta_method_fails():
    assert b_value(0.0, method="triangle") is None
    assert b_value(DPRIME_MAX, method="2afc") is None


# ------------------------------------------------------------- bad input


@pytest.mark.parametrize(("call", "quoted"), [
    (lambda: dprime_from_pc(1.2, method="triangle"), "1.2"),
    (lambda: dprime_from_pc(float("nan"), method="triangle"), "nan"),
    (lambda: pc_from_dprime(-1.0, method="triangle"), "-1.0"),
    (lambda: dprime_conversion(method="triangle"), "None"),
    (lambda: dprime_conversion(method="triangle", pc=0.5, dprime=1.0), "0.5"),
    (lambda: dprime_conversion(method="triangle", dprime=-2.0), "-2.0"),
    (lambda: dprime_conversion(method="ranking", pc=0.5), "ranking"),
])
def test_bad_input_raises_a_trials_error_quoting_the_value(call, quoted):
    with pytest.raises(TrialsError, match=quoted.replace(".", r"\.").replace("-", r"\-")):
        call()


def test_unknown_method_is_refused():
    with pytest.raises(UnknownMethodError, match="hexad"):
        dprime_from_pc(0.5, method="hexad")


@pytest.mark.parametrize("method", MODELLED_FC)
def test_vector_and_scalar_paths_agree(method):
    x = np.random.default_rng(7).random(300)
    vec = dprime_from_pc(x, method=method)
    assert np.allclose(vec, [dprime_from_pc(float(v), method=method) for v in x], atol=1e-12)


def test_the_specified_tetrad_differs_from_the_unspecified_one():
    # Ennis et al. (1998): the specified tetrad (pick the two stronger) has chance 1/6 and
    # a steeper start than the unspecified tetrad (chance 1/3, slope 0 at d' = 0); the
    # same pc therefore reads as different d' (values computed here, not from a table).
    assert pc_from_dprime(0.0, method="tetrad-specified") == pytest.approx(1 / 6, abs=1e-14)
    assert pc_slope(0.0, method="tetrad-specified") > 0.2
    assert pc_slope(0.0, method="tetrad") == pytest.approx(0.0, abs=1e-12)
    assert (dprime_from_pc(0.5, method="tetrad-specified")
            != pytest.approx(dprime_from_pc(0.5, method="tetrad"), abs=0.05))


def test_a_method_without_a_model_says_so():
    # two-out-of-five: no Thurstonian model is built; the conversion refuses, naming pd
    with pytest.raises(TrialsError, match="no Thurstonian model.*proportion of discriminators"):
        dprime_from_pc(0.5, method="2-out-of-5")
