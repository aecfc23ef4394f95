"""JAR penalty analysis checked against a hand computation and pandas/scipy."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from trials.errors import TrialsError
from trials.stats.jar import jar_penalty

# ten invented answers on a 5-point JAR scale for saltiness, with overall liking
SALT = [1, 2, 3, 3, 3, 4, 5, 3, 2, 3]
LIKING = [4, 5, 8, 7, 9, 6, 3, 8, 4, 7]


def _table():
    return pd.DataFrame(
        {"panelist": [f"c{i}" for i in range(10)], "salt": SALT, "liking": LIKING}
    )


def _row(res, group, attribute="salt"):
    return [r for r in res.rows if r.group == group and r.attribute == attribute][0]


def test_penalties_of_a_small_table_match_the_hand_computation():
    # by hand: JAR (3): liking 8, 7, 9, 8, 7 -> mean 7.8, share 0.5
    # too little (1, 2, 2): liking 4, 5, 4 -> mean 4.333, share 0.3, drop 3.467, penalty 1.04
    # too much (4, 5): liking 6, 3 -> mean 4.5, share 0.2, drop 3.3, penalty 0.66
    res = jar_penalty(_table(), ["salt"], sample=None)
    jar, little, much = _row(res, "just right"), _row(res, "too little"), _row(res, "too much")
    assert (jar.n, jar.share, jar.mean_liking) == (5, 0.5, pytest.approx(7.8))
    assert jar.drop is None and not jar.flagged
    assert little.share == pytest.approx(0.3)
    assert little.drop == pytest.approx(7.8 - 13 / 3)
    assert little.penalty == pytest.approx((7.8 - 13 / 3) * 0.3)
    assert much.drop == pytest.approx(3.3) and much.penalty == pytest.approx(0.66)
    # 20 % or more flagged (common practice): 0.3 and exactly 0.2 both flagged
    assert little.flagged and much.flagged
    assert [r.group for r in res.flagged()] == ["too little", "too much"]


def test_the_drop_is_tested_with_welch_t():
    res = jar_penalty(_table(), ["salt"], sample=None)
    ref = stats.ttest_ind([8, 7, 9, 8, 7], [4, 5, 4], equal_var=False)
    assert _row(res, "too little").p_value == pytest.approx(ref.pvalue, rel=1e-12)


def test_penalties_per_sample_agree_with_a_pandas_groupby():
    rng = np.random.default_rng(3)
    n = 60
    d = pd.DataFrame({
        "panelist": [f"c{i % 30}" for i in range(n)],
        "sample": ["A"] * 30 + ["B"] * 30,
        "sweet": rng.integers(1, 6, n),
        "crisp": rng.integers(1, 6, n),
        "liking": rng.integers(1, 10, n),
    })
    res = jar_penalty(d, ["sweet", "crisp"], sample="sample", threshold=0.25)
    frame = res.to_frame()
    for attr in ("sweet", "crisp"):
        g = pd.cut(d[attr], [0, 2, 3, 5], labels=["too little", "just right", "too much"])
        ref = d.assign(g=g).groupby(["sample", "g"], observed=False)["liking"].agg(["mean", "size"])
        for (s, grp), row in ref.iterrows():
            got = frame[(frame["sample"] == s) & (frame["attribute"] == attr)
                        & (frame["group"] == grp)]
            assert int(got["n"].iloc[0]) == row["size"]
            assert got["share"].iloc[0] == pytest.approx(row["size"] / 30)
            if row["size"]:
                assert got["mean_liking"].iloc[0] == pytest.approx(row["mean"])
            assert bool(got["flagged"].iloc[0]) == (grp != "just right"
                                                    and row["size"] / 30 >= 0.25)


def test_a_seven_point_jar_scale_collapses_around_its_middle():
    d = pd.DataFrame({"panelist": list("abcdefg"), "salt": [1, 2, 3, 4, 5, 6, 7],
                      "liking": [1, 2, 3, 9, 3, 2, 1]})
    res = jar_penalty(d, ["salt"], sample=None, low=1, high=7)
    assert [r.n for r in res.rows] == [3, 1, 3]
    assert _row(res, "too much").drop == pytest.approx(9 - 2)


def test_a_jar_score_off_the_scale_names_its_line():
    d = _table()
    d.loc[4, "salt"] = 6
    with pytest.raises(TrialsError, match=r"'salt'.*line\(s\) 6"):
        jar_penalty(d, ["salt"], sample=None)


def test_a_fractional_jar_score_is_refused():
    d = _table().astype({"salt": float})
    d.loc[0, "salt"] = 2.5
    with pytest.raises(TrialsError, match="whole numbers"):
        jar_penalty(d, ["salt"], sample=None)


def test_an_even_jar_scale_is_refused():
    with pytest.raises(TrialsError, match="odd number"):
        jar_penalty(_table(), ["salt"], sample=None, low=1, high=4)


def test_a_missing_attribute_column_is_named():
    with pytest.raises(TrialsError, match="'sour'"):
        jar_penalty(_table(), ["sour"], sample=None)


def test_a_sample_with_no_just_right_answer_is_named_in_the_decision():
    # common practice: the penalty is the drop from the "just right" group's liking, so
    # with no "just right" answer there is nothing to compare with
    from trials.analysis import AttributeAnalysis
    from trials.decision import _penalty_line

    data = pd.DataFrame({
        "panelist": [f"c{i}" for i in range(6)] * 2,
        "sample": ["Brine A"] * 6 + ["Brine B"] * 6,
        "salt": [3, 3, 3, 4, 2, 3] + [5, 5, 4, 5, 4, 5],  # nobody finds Brine B just right
        "liking": [7, 8, 7, 5, 5, 8] + [3, 4, 4, 2, 5, 3],
    })
    res = jar_penalty(data, ["salt"], sample="sample")
    assert _row_of(res, "Brine B", "just right").n == 0
    too_much = _row_of(res, "Brine B", "too much")
    assert too_much.flagged and too_much.drop is None and too_much.share == 1.0
    at = AttributeAnalysis("salt", "jar", 1, 5, 6, 12, {}, None, res, ())
    line = _penalty_line(at)
    assert ("Brine B: no panelist answered 'just right', so the penalty of 'too much' "
            "(100 % of answers) cannot be computed.") in line


def _row_of(res, sample, group):
    return [r for r in res.rows if r.sample == sample and r.group == group][0]
