"""The R-index (issue 17, item 3) against a brute-force count of every signal-noise pair
(its definition: O'Mahony 1992; Brown 1974), scipy.stats.mannwhitneyu (the Mann-Whitney
equivalence, Bamber 1975) and a seeded simulation of the d' it reads as.

No published worked example of the R-index is used (none at hand); its definition is
counted here pair by pair, independently of the module's mid-rank computation.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from scipy import stats

from trials.errors import TrialsError
from trials.stats.rindex import RANKS, SCORES, r_index


def brute_r(signal, noise, larger_is_more=True):
    pairs = list(itertools.product(signal, noise))
    above = sum((s > n) if larger_is_more else (s < n) for s, n in pairs)
    ties = sum(s == n for s, n in pairs)
    return (above + 0.5 * ties) / len(pairs)


CASES = [
    ([7, 8, 6, 9, 7, 8, 5, 8, 9, 7, 6, 8], [5, 6, 4, 6, 7, 5, 3, 6, 5, 4, 6, 5]),
    ([3, 3, 4, 2, 3, 4, 4, 3], [3, 2, 2, 3, 1, 2, 3, 2, 2]),  # many ties, a short panel
    ([5, 5, 5, 5], [5, 5, 5, 6]),
]


@pytest.mark.parametrize("signal, noise", CASES)
def test_r_index_is_the_share_of_pairs_with_the_test_sample_above(signal, noise):
    res = r_index(signal, noise, kind=SCORES)
    assert res.r_index == pytest.approx(brute_r(signal, noise), abs=1e-12)
    mw = stats.mannwhitneyu(signal, noise, alternative="two-sided", method="asymptotic",
                            use_continuity=False)
    assert res.u == pytest.approx(mw.statistic, abs=1e-9)
    assert res.p_value == pytest.approx(mw.pvalue, rel=1e-9)
    greater = stats.mannwhitneyu(signal, noise, alternative="greater", method="asymptotic",
                                 use_continuity=False)
    assert res.p_greater == pytest.approx(greater.pvalue, rel=1e-9)


def test_ranks_count_rank_one_as_most():
    # rank 1 = most (ISO 8587): the test sample ranked first by most panelists has R > 0.5
    signal, noise = [1, 1, 2, 1, 1, 2, 1, 1], [2, 2, 1, 2, 2, 1, 2, 2]
    res = r_index(signal, noise, kind=RANKS)
    assert res.r_index == pytest.approx(brute_r(signal, noise, larger_is_more=False))
    assert res.r_index == pytest.approx(0.5 + 0.5 * (6 * 6 - 2 * 2) / 64)


def test_all_alike_answers_give_one_half_and_no_test():
    res = r_index([4, 4, 4], [4, 4], kind=SCORES)
    assert res.r_index == 0.5 and res.z is None and res.p_value == 1.0
    assert "no test" in res.note and "normal approximation is rough" in res.note


def test_the_r_index_reads_as_the_2afc_dprime_in_a_simulation():
    # equal-variance normal model: R = Phi(d' / sqrt 2) (Brown 1974); seeded simulation of
    # continuous sensations with d' = 1, 4000 answers each
    rng = np.random.default_rng(11)
    res = r_index(rng.standard_normal(4000) + 1.0, rng.standard_normal(4000))
    assert res.r_index == pytest.approx(stats.norm.cdf(1 / math.sqrt(2)), abs=0.012)
    assert res.dprime == pytest.approx(1.0, abs=0.05) and res.significant


def test_bad_input_is_refused():
    with pytest.raises(TrialsError, match="at least one answer"):
        r_index([], [1, 2])
    with pytest.raises(TrialsError, match="kind"):
        r_index([1], [2], kind="votes")


def test_the_command_line_gives_each_sample_against_the_control(tmp_path, capsys):
    import json

    from trials.cli import main

    signal, noise = CASES[0]
    other = [6, 5, 7, 6, 6, 5, 6, 7, 5, 6, 6, 5]
    rows = ([("Honey glaze", x) for x in signal] + [("Plain glaze", x) for x in noise]
            + [("Maple glaze", x) for x in other])
    path = tmp_path / "scores.csv"
    path.write_text("sample,score\n" + "".join(f"{s},{x}\n" for s, x in rows))
    code = main(["analyze", "rindex", str(path), "--control", "Plain glaze", "--json"])
    data = json.loads(capsys.readouterr().out)
    assert code == 0 and data["control"] == "Plain glaze"
    got = {r["sample"]: r["r_index"] for r in data["rows"]}
    assert got == pytest.approx({"Honey glaze": brute_r(signal, noise),
                                 "Maple glaze": brute_r(other, noise)})
    assert "no adjustment" in data["note"]
