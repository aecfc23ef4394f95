"""Blinding codes: three digits, unique, none of the patterns the module rules out.

The rules themselves are common practice (no source); the pool size is checked by
counting each rule's codes independently of the module.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from trials.design.codes import POOL, avoided_reason, blinding_codes
from trials.errors import TrialsError


def _independent_pool() -> set[str]:
    # Counted rule by rule, written apart from the module's own test of a code.
    every = {str(n) for n in range(100, 1000)}
    repeated = {str(d) * 3 for d in range(1, 10)}
    runs_up = {f"{d}{d + 1}{d + 2}" for d in range(1, 8)}
    runs_down = {f"{d}{d - 1}{d - 2}" for d in range(2, 10)}
    hundreds = {f"{d}00" for d in range(1, 10)}
    palindromes = {f"{a}{b}{a}" for a in range(1, 10) for b in range(10)}
    return every - repeated - runs_up - runs_down - hundreds - palindromes


def test_the_pool_is_every_three_digit_code_less_the_four_rules():
    # 900 - 90 palindromes (the 9 repeated included) - 15 runs - 9 hundreds = 786
    assert set(POOL) == _independent_pool()
    assert len(POOL) == 786


@pytest.mark.parametrize("code, rule", [
    ("111", "repeated"), ("999", "repeated"), ("123", "run"), ("789", "run"),
    ("321", "run"), ("210", "run"), ("100", "round"), ("500", "round"),
    ("121", "palindrome"), ("505", "palindrome"), ("099", "range"), ("1000", "range"),
    ("12a", "range"),
], ids=lambda v: str(v))
def test_a_patterned_code_is_kept_out_with_its_rule(code, rule):
    assert avoided_reason(code) == rule


@pytest.mark.parametrize("code", ["112", "455", "250", "739", "120"])
def test_an_ordinary_code_is_usable(code):
    assert avoided_reason(code) is None


@settings(derandomize=True, max_examples=40, deadline=None)
@given(count=st.integers(0, 786), seed=st.integers(0, 2**32 - 1))
def test_codes_are_unique_usable_three_digit_strings(count, seed):
    codes = blinding_codes(count, rng=seed).codes
    assert len(codes) == count == len(set(codes))
    for c in codes:
        assert len(c) == 3 and c.isdigit() and "100" <= c <= "999"
        assert avoided_reason(c) is None


def test_codes_already_used_in_other_sessions_are_never_drawn_again():
    first = blinding_codes(300, rng=1).codes
    second = blinding_codes(486, rng=2, exclude=first).codes
    assert not set(first) & set(second)
    assert set(first) | set(second) == set(POOL)


def test_integer_codes_to_exclude_count_as_their_digits():
    result = blinding_codes(785, rng=3, exclude=[559])
    assert "559" not in result.codes and result.available == 785


def test_drawing_the_whole_pool_gives_every_usable_code_once():
    codes = blinding_codes(len(POOL), rng=4).codes
    assert sorted(codes) == list(POOL)
    assert codes != list(POOL)  # drawn in random order, not sorted


def test_ten_thousand_codes_cannot_fit_in_three_digits_and_the_message_says_so():
    with pytest.raises(TrialsError, match=r"cannot draw 10000 .* only 786"):
        blinding_codes(10_000, rng=1)


def test_asking_for_more_codes_than_are_left_names_both_counts():
    with pytest.raises(TrialsError, match=r"cannot draw 10 .* only 6 .* 780 excluded"):
        blinding_codes(10, rng=1, exclude=POOL[:780])


@pytest.mark.parametrize("bad", [-1, 2.5, "5", True])
def test_a_count_that_is_not_a_whole_number_of_zero_or_more_is_refused(bad):
    with pytest.raises(TrialsError, match=repr(bad).replace(".", r"\.")):
        blinding_codes(bad)


def test_the_same_seed_gives_the_same_codes_and_other_seeds_differ():
    assert blinding_codes(20, rng=7).codes == blinding_codes(20, rng=7).codes
    assert blinding_codes(20, rng=7).codes != blinding_codes(20, rng=8).codes


def test_a_numpy_generator_is_accepted_and_advanced():
    gen = np.random.default_rng(5)
    a = blinding_codes(5, rng=gen).codes
    b = blinding_codes(5, rng=gen).codes
    assert a != b


@pytest.mark.parametrize("bad", [-3, "seed", 1.5])
def test_a_bad_seed_is_refused_with_its_value(bad):
    with pytest.raises(TrialsError, match="seed|rng"):
        blinding_codes(3, rng=bad)


def test_a_single_string_as_exclude_is_refused_rather_than_read_digit_by_digit():
    with pytest.raises(TrialsError, match="'559'"):
        blinding_codes(3, exclude="559")


def test_the_result_echoes_the_rules_and_pool_in_its_dict():
    d = blinding_codes(2, rng=1).to_dict()
    assert set(d) >= {"codes", "count", "pool_size", "available", "rules"}
    assert d["pool_size"] == 786 and len(d["rules"]) == 4
