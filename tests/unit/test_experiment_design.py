"""Designed experiments: the design properties hold whatever the factors and seed.

Sources: Box, Hunter and Hunter (2005), Statistics for Experimenters, 2nd ed. (BH&H):
section 5 (orthogonal two-level columns), section 6.3 (defining relation, resolution =
shortest word), section 11 (a central composite design is rotatable with axial
distance (n_F)^(1/4)); Montgomery (2017), Design and Analysis of Experiments, 9th ed.,
section 11.4 (rotatability: equal prediction variance at equal distance from the
centre). Every property is computed here from the run matrix, never taken from the
module's own report.
"""

from __future__ import annotations

from itertools import combinations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from trials.design.experiment import (
    BOX_BEHNKEN,
    CCD_FACE,
    CCD_ROTATABLE,
    FRACTIONAL_FACTORIAL,
    FULL_FACTORIAL,
    PLACKETT_BURMAN,
    experiment_design,
    make_factor,
)
from trials.errors import TrialsError
from trials.stats.response_surface import QUADRATIC, model_matrix, model_terms


def _factors(k, wide_safe=True):
    out = []
    for i in range(k):
        low, high = 10.0 * (i + 1), 10.0 * (i + 1) + 4
        pad = 10 if wide_safe else 0
        out.append(make_factor(f"f{i}", "u", low=low, high=high, safe_low=low - pad,
                               safe_high=high + pad))
    return out


def _factorial_part(design):
    m = design.coded_matrix()
    return m[np.all(np.abs(m) == 1, axis=1)]


@settings(derandomize=True, max_examples=30, deadline=None)
@given(k=st.integers(2, 6), kind=st.sampled_from([FULL_FACTORIAL, PLACKETT_BURMAN]),
       seed=st.integers(0, 10_000))
def test_two_level_columns_are_orthogonal_and_balanced(k, kind, seed):
    m = _factorial_part(experiment_design(kind, _factors(k), rng=seed))
    # BH&H section 5: X'X = N I for the main-effect columns
    assert np.allclose(m.T @ m, len(m) * np.eye(k))
    assert np.allclose(m.sum(axis=0), 0)


@settings(derandomize=True, max_examples=30, deadline=None)
@given(k=st.integers(4, 6), res=st.integers(3, 5), seed=st.integers(0, 10_000))
def test_a_fraction_has_at_least_the_resolution_asked(k, res, seed):
    try:
        d = experiment_design(FRACTIONAL_FACTORIAL, _factors(k), resolution=res, rng=seed)
    except TrialsError:
        assert res > k  # a fraction of resolution R needs R <= k (no word longer than k)
        return
    m = _factorial_part(d)
    # resolution R: every product of fewer than R columns has mean zero (BH&H 6.3)
    for size in range(1, res):
        for idx in combinations(range(k), size):
            assert abs(np.prod(m[:, idx], axis=1).sum()) < 1e-9, idx
    assert d.resolution is not None and d.resolution >= res
    # the shortest defining word is constant over the runs (it is in the relation)
    word = min(d.defining_relation, key=len)
    idx = tuple("ABCDEF".index(c) for c in word[1:])
    prod = np.prod(m[:, idx], axis=1)
    assert np.all(prod == prod[0])


def test_a_resolution_iii_fraction_aliases_a_main_effect_with_a_two_factor_interaction():
    # 2^(3-1) with C = AB (BH&H section 6.2): I = ABC, A = BC, B = AC, C = AB
    d = experiment_design(FRACTIONAL_FACTORIAL, _factors(3), generators="a b ab", rng=1)
    assert len(d.runs) == 4
    assert d.resolution == 3
    assert d.defining_relation == ("+ABC",)
    assert d.aliases["A"] == ("BC",)
    assert d.aliases["AB"] == ("C",)


@pytest.mark.parametrize("k", [2, 3, 4, 5, 6])
def test_a_rotatable_ccd_predicts_equally_well_at_equal_distance(k):
    d = experiment_design(CCD_ROTATABLE, _factors(k), center_points=3, rng=0)
    m = d.coded_matrix()
    assert d.axial == pytest.approx((2 ** k) ** 0.25)  # BH&H section 11, from n_F
    X = model_matrix(m, model_terms(k, QUADRATIC))
    inv = np.linalg.inv(X.T @ X)
    rng = np.random.default_rng(k)
    for radius in (0.5, 1.0, 1.5):
        v = []
        for _ in range(6):
            u = rng.normal(size=k)
            p = radius * u / np.linalg.norm(u)
            row = model_matrix(p[None, :], model_terms(k, QUADRATIC))[0]
            v.append(row @ inv @ row)
        # coded values are kept to 6 decimals, so equal to about 1e-6 relative
        assert np.ptp(v) < 1e-6 * max(v), (radius, v)


def test_a_face_centred_ccd_is_not_rotatable_and_stays_on_the_cube():
    d = experiment_design(CCD_FACE, _factors(3), center_points=2, rng=0)
    m = d.coded_matrix()
    assert np.max(np.abs(m)) == 1.0
    X = model_matrix(m, model_terms(3, QUADRATIC))
    inv = np.linalg.inv(X.T @ X)
    a, b = np.array([[1.0, 0, 0]]), np.array([[1, 1, 0]]) / np.sqrt(2)
    va = (model_matrix(a, model_terms(3, QUADRATIC)) @ inv @ model_matrix(
        a, model_terms(3, QUADRATIC)).T).item()
    vb = (model_matrix(b, model_terms(3, QUADRATIC)) @ inv @ model_matrix(
        b, model_terms(3, QUADRATIC)).T).item()
    assert abs(va - vb) > 1e-3


@pytest.mark.parametrize("k,runs", [(3, 12), (4, 24), (5, 40), (6, 60)])
def test_box_behnken_runs_and_three_levels(k, runs):
    # pyDOE3 builds a Box-Behnken design from every pair of factors (4 runs per pair):
    # 12, 24, 40 edge runs for 3 to 5 factors as in Box and Behnken (1960) (from memory);
    # for 6 factors the paper's plan on triples has 48, pyDOE3's on pairs 60 (counted)
    d = experiment_design(BOX_BEHNKEN, _factors(k), center_points=3, rng=0)
    m = d.coded_matrix()
    assert len(m) == runs + 3
    for col in m.T:
        assert set(np.round(col, 6)) == {-1.0, 0.0, 1.0}
    X = model_matrix(m, model_terms(k, QUADRATIC))
    assert np.linalg.matrix_rank(X) == X.shape[1]


@settings(derandomize=True, max_examples=20, deadline=None)
@given(seed=st.integers(0, 10_000))
def test_the_run_order_is_a_seeded_permutation_within_blocks(seed):
    fs = _factors(3)
    a = experiment_design(FULL_FACTORIAL, fs, center_points=2, blocks=2, rng=seed)
    b = experiment_design(FULL_FACTORIAL, fs, center_points=2, blocks=2, rng=seed)
    assert a.runs == b.runs
    assert sorted(r.std_order for r in a.runs) == list(range(1, 11))
    blocks = [r.block for r in a.runs]
    assert blocks == sorted(blocks)
    # block 2 holds the corners where ABC = +1 (BH&H section 5.15)
    for r in a.runs:
        if r.point == "factorial":
            assert (r.block == 2) == (np.prod(r.coded) > 0)


def test_runs_outside_a_safe_range_are_refused():
    fs = [make_factor("oven", "C", low=200, high=230, safe_low=190, safe_high=250),
          make_factor("salt", "%", low=1.5, high=2.1, safe_low=1.0, safe_high=2.6)]
    # axial distance 2^(2/4) = 1.414: oven 215 - 1.414 * 15 = 193.8, inside
    experiment_design(CCD_ROTATABLE, fs, rng=1)
    tight = [make_factor("oven", "C", low=200, high=230, safe_low=200, safe_high=230), fs[1]]
    with pytest.raises(TrialsError, match="outside the declared safe range"):
        experiment_design(CCD_ROTATABLE, tight, rng=1)


def test_declared_levels_must_hold_every_run():
    timer = make_factor("proof", "min", levels=[40, 50, 60])
    salt = make_factor("salt", "%", low=1.5, high=2.1)
    experiment_design(CCD_FACE, [timer, salt], rng=1)  # -1, 0, +1 are levels
    with pytest.raises(TrialsError, match="not one of its declared levels"):
        experiment_design(CCD_ROTATABLE, [timer, salt], rng=1)


def test_a_safe_range_must_hold_the_experimental_range():
    with pytest.raises(TrialsError, match="safe range"):
        make_factor("oven", "C", low=200, high=230, safe_low=210, safe_high=250)
