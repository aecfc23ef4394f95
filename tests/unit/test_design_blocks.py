"""Incomplete blocks: known BIBDs have equal concurrences, the search comes close, and
the serving order within blocks is balanced for position.

Sources: Cochran and Cox (1957), Experimental Designs, 2nd ed., ch. 11 (plans and the
efficiency factor E = t(k-1)/(k(t-1))); John and Williams (1995), Cyclic and Computer
Generated Designs (efficiency factors). Every concurrence is computed here from the
blocks, never taken from the module's own report.
"""

from __future__ import annotations

import math
import warnings
from itertools import combinations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from trials.design import blocks as bmod
from trials.design.blocks import (
    affine_plane,
    develop,
    efficiency_factor,
    incomplete_blocks,
    known_designs,
    lattice_16_6_2,
)
from trials.errors import TrialsError, UnbalancedPlanWarning


def _pair_counts(blocks, t):
    lam = {pair: 0 for pair in combinations(range(t), 2)}
    rep = [0] * t
    for b in blocks:
        assert len(set(b)) == len(b), b
        for s in b:
            rep[s] += 1
        for pair in combinations(sorted(b), 2):
            lam[pair] += 1
    return rep, lam


def _quiet(fn, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UnbalancedPlanWarning)
        return fn(*args, **kwargs)


@pytest.mark.parametrize("t, k, lam, b", [
    (7, 3, 1, 7),  # Cochran and Cox 1957, ch. 11 (from memory); PG(2,2)
    (9, 3, 1, 12),  # a balanced lattice, Cochran and Cox 1957 (from memory)
    (13, 4, 1, 13),  # PG(2,3), difference set {0,1,3,9} mod 13
    (16, 6, 2, 16),  # a symmetric (16,6,2) design (from memory: 4x4 grid rows+columns)
], ids=["cochran-cox-7-3-1", "cochran-cox-9-3-1", "pg23-13-4-1", "grid-16-6-2"])
def test_known_bibds_have_every_pair_together_lambda_times(t, k, lam, b):
    result = incomplete_blocks(t, k, rng=1)
    assert result.balanced and result.panelists == b
    rep, pairs = _pair_counts(result.blocks, t)
    assert set(pairs.values()) == {lam}
    assert set(rep) == {b * k // t}
    assert result.lambda_min == result.lambda_max == lam


def test_the_seven_sample_plan_is_the_published_cyclic_one():
    # Cochran and Cox (1957), ch. 11, the plan for t = 7, k = 3 (from memory), 1-based:
    # (1,2,4) (2,3,5) (3,4,6) (4,5,7) (5,6,1) (6,7,2) (7,1,3)
    published = [(1, 2, 4), (2, 3, 5), (3, 4, 6), (4, 5, 7), (5, 6, 1), (6, 7, 2), (7, 1, 3)]
    built = develop([(0, 1, 3)], 7)
    assert [tuple(s + 1 for s in b) for b in built] == published


@pytest.mark.parametrize("entry", bmod._CYCLIC, ids=lambda e: e[3])
def test_every_cyclic_construction_in_the_table_is_a_bibd(entry):
    v, bases, inf, _name = entry
    blocks = develop(bases, v, infinity=inf)
    rep, pairs = _pair_counts(blocks, v)
    k = len(bases[0])
    r = len(blocks) * k // v
    assert set(rep) == {r}
    assert len(set(pairs.values())) == 1
    lam = next(iter(pairs.values()))
    assert r * (k - 1) == lam * (v - 1)  # the BIBD identity r(k-1) = lambda(t-1)


@pytest.mark.parametrize("q", [3, 4, 5])
def test_the_affine_plane_is_resolvable_with_lambda_one(q):
    blocks = affine_plane(q)
    assert len(blocks) == q * q + q
    rep, pairs = _pair_counts(blocks, q * q)
    assert set(pairs.values()) == {1}
    # q + 1 parallel classes, each a partition of the q^2 points
    for c in range(q + 1):
        chunk = blocks[c * q:(c + 1) * q]
        assert sorted(s for b in chunk for s in b) == list(range(q * q))


def test_the_grid_design_is_16_6_2():
    rep, pairs = _pair_counts(lattice_16_6_2(), 16)
    assert set(rep) == {6} and set(pairs.values()) == {2}


@pytest.mark.parametrize("t, k", [(t, k) for t in range(3, 26) for k in range(2, 7) if k < t])
def test_every_known_design_offered_is_balanced(t, k):
    for d in known_designs(t, k):
        rep, pairs = _pair_counts(d.blocks, t)
        assert all(len(b) == k for b in d.blocks), d.name
        assert len(set(rep)) == 1 and len(set(pairs.values())) == 1, d.name


@pytest.mark.parametrize("t, k", [(7, 3), (9, 3), (13, 4), (16, 6), (11, 5), (6, 3), (8, 3)])
def test_the_efficiency_of_a_bibd_is_t_k_minus_1_over_k_t_minus_1(t, k):
    # Cochran and Cox (1957), ch. 11: E = t(k-1) / (k(t-1)).
    d = known_designs(t, k)[0]
    formula = t * (k - 1) / (k * (t - 1))
    assert efficiency_factor(d.blocks, t) == pytest.approx(formula, abs=1e-12)


def _efficiency_by_pairwise_variances(blocks, t):
    # Independent route: the average variance of all pairwise differences from the
    # generalised inverse of C, against 2/rbar for complete blocks.
    n = np.zeros((t, len(blocks)))
    for j, b in enumerate(blocks):
        n[b, j] = 1
    k = n.sum(axis=0)
    c = np.diag(n.sum(axis=1)) - (n / k) @ n.T
    g = np.linalg.pinv(c)
    var = [g[i, i] + g[j, j] - 2 * g[i, j] for i, j in combinations(range(t), 2)]
    return (2 / n.sum(axis=1).mean()) / np.mean(var)


@settings(derandomize=True, max_examples=25, deadline=None)
@given(t=st.integers(5, 14), k=st.integers(2, 5), extra=st.integers(0, 10),
       seed=st.integers(0, 2**32 - 1))
def test_searched_plans_are_near_balanced_and_their_efficiency_checks_out(t, k, extra, seed):
    if k >= t:
        k = t - 1
    n = t + extra
    result = _quiet(incomplete_blocks, t, k, panelists=n, rng=seed)
    assert len(result.blocks) == n and all(len(b) == k for b in result.blocks)
    rep, pairs = _pair_counts(result.blocks, t)
    assert max(rep) - min(rep) <= 1  # as equal replication as n*k allows
    assert (result.lambda_min, result.lambda_max) == (min(pairs.values()), max(pairs.values()))
    if result.connected:
        assert result.efficiency == pytest.approx(
            _efficiency_by_pairwise_variances(result.blocks, t), rel=1e-9)
    if min(rep) == max(rep):
        # equireplicate: E can never beat the BIBD bound (John and Williams 1995)
        assert result.efficiency <= result.efficiency_bound + 1e-12
    pos = result.position_counts()
    for s in range(t):
        assert pos[s].max() - pos[s].min() <= 1  # serving positions as even as possible


def test_the_search_finds_a_bibd_for_ten_samples_in_fifteen_blocks_of_four():
    # (10,4,2) exists with b = 15 (Cochran and Cox 1957 list it; from memory).
    result = incomplete_blocks(10, 4, panelists=15, rng=1)
    assert result.construction == "search"
    rep, pairs = _pair_counts(result.blocks, 10)
    assert set(pairs.values()) == {2} and set(rep) == {6}
    assert result.balanced


def test_a_panel_of_whole_copies_is_balanced_and_each_copy_is_relabelled():
    result = incomplete_blocks(7, 3, panelists=21, rng=2)
    assert result.balanced and result.construction.startswith("3 x")
    rep, pairs = _pair_counts(result.blocks, 7)
    assert set(pairs.values()) == {3}
    copies = [sorted(map(sorted, result.blocks[i * 7:(i + 1) * 7])) for i in range(3)]
    assert len({str(c) for c in copies}) > 1


def test_a_cyclic_design_is_served_in_every_position_equally():
    # Youden-type arrangement: r = k = 3, so each sample once in each position.
    result = incomplete_blocks(7, 3, rng=3)
    assert result.position_min == result.position_max == 1


def test_the_grid_design_reaches_equal_positions_after_reordering():
    # r = k = 6: an arrangement with each sample once per position exists (an
    # equitable edge colouring of a regular bipartite graph, Konig's theorem).
    result = incomplete_blocks(16, 6, rng=4)
    assert result.position_min == result.position_max == 1


def test_an_unbalanced_plan_warns_with_its_concurrence_range():
    with pytest.warns(UnbalancedPlanWarning, match="pair concurrences"):
        result = incomplete_blocks(7, 3, panelists=10, rng=5)
    assert not result.balanced
    assert result.lambda_max - result.lambda_min <= 1


def test_twenty_five_samples_six_at_a_time_are_planned_near_balanced():
    result = _quiet(incomplete_blocks, 25, 6, rng=6)
    assert result.panelists == 25 and result.replication_min == result.replication_max == 6
    assert result.connected and result.lambda_max <= 3
    assert result.efficiency > 0.98 * result.efficiency_bound


def test_the_same_seed_gives_the_same_plan_and_other_seeds_differ():
    a = _quiet(incomplete_blocks, 12, 4, panelists=20, rng=7).blocks
    assert a == _quiet(incomplete_blocks, 12, 4, panelists=20, rng=7).blocks
    assert a != _quiet(incomplete_blocks, 12, 4, panelists=20, rng=8).blocks


@pytest.mark.parametrize("args, kwargs, text", [
    ((1, 2), {}, "samples must be at least 2, got 1"),
    ((5, 1), {}, "per_panelist must be at least 2, got 1"),
    ((5, 5), {}, "k=5 with t=5"),
    ((5, 7), {}, "k=7 with t=5"),
    ((6, 3), {"panelists": 0}, "panelists must be at least 1, got 0"),
])
def test_bad_input_is_refused_quoting_the_values(args, kwargs, text):
    with pytest.raises(TrialsError, match=text):
        incomplete_blocks(*args, **kwargs)


def test_the_default_panel_is_a_multiple_of_the_samples_when_no_small_bibd_is_known():
    result = _quiet(incomplete_blocks, 8, 3, rng=1)
    # complete design of 56 subsets is more than 3t, so t/gcd(t,k) * ... = 8 blocks
    assert math.comb(8, 3) > 3 * 8 and result.panelists == 8


def test_the_result_dict_and_table():
    result = incomplete_blocks(7, 3, rng=1)
    d = result.to_dict()
    assert {"blocks", "balanced", "lambda_min", "lambda_max", "efficiency"} <= set(d)
    assert len(result.to_frame()) == 21


@pytest.mark.parametrize("t", [8, 13, 25])
def test_pairs_served_twice_each_form_one_cycle_with_the_cycle_efficiency(t):
    # k = 2, r = 2: the only connected plan is a single cycle of pairs; its efficiency
    # follows from the cycle's eigenvalues 1 - cos(2 pi j / t), j = 1..t-1 (computed
    # here in closed form, independently of the module).
    result = _quiet(incomplete_blocks, t, 2, rng=2)
    assert result.panelists == t and result.connected
    mu = 1 - np.cos(2 * np.pi * np.arange(1, t) / t)
    assert result.efficiency == pytest.approx((t - 1) / (2 * np.sum(1 / mu)), rel=1e-9)
