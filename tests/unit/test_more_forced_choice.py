"""The specified tetrad and the two-out-of-five test (issue 17, item 3): the registry
entries, their scoring rules, the command line and the planning figures.

Critical counts are checked against the defining inequality of ISO 4120's table
(``P(X >= c) <= alpha < P(X >= c - 1)``), here computed by hand with fractions; no
published critical-value table of these two methods is used (none is at hand).
"""

from __future__ import annotations

import json
from fractions import Fraction
from math import comb

import pytest
from scipy import stats

from trials.analysis import analyse
from trials.cli import main
from trials.design.plan import serving_plan
from trials.design.sets import discrimination_sets
from trials.methods import SPECIFIED_TETRAD, TWO_OUT_OF_FIVE, get_method
from trials.model import Answer, Sample, Trial
from trials.stats.discrimination import critical_value
from trials.stats.power import panel_size

pytestmark = pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")


def _tail(k: int, n: int, p: Fraction) -> Fraction:
    return sum((comb(n, j) * p**j * (1 - p) ** (n - j) for j in range(k, n + 1)), Fraction(0))


def _hand_critical(n: int, p: Fraction, alpha: Fraction) -> int | None:
    return next((k for k in range(n + 1) if _tail(k, n, p) <= alpha), None)


@pytest.mark.parametrize(("method", "p"), [(TWO_OUT_OF_FIVE, Fraction(1, 10)),
                                           (SPECIFIED_TETRAD, Fraction(1, 6))])
@pytest.mark.parametrize("n", [5, 10, 20, 30])
@pytest.mark.parametrize("alpha", [Fraction(1, 20), Fraction(1, 100)])
def test_critical_counts_match_a_hand_computed_binomial_tail(method, p, n, alpha):
    got = critical_value(n, method=method, alpha=float(alpha)).critical
    assert got == _hand_critical(n, p, alpha)


def test_two_out_of_five_sets_use_the_twenty_orders_equally():
    spec = get_method(TWO_OUT_OF_FIVE)
    assert len(spec.patterns) == 20 and len(set(spec.patterns)) == 20
    assert all(sorted(x.count(c) for c in "AB") == [2, 3] for x in spec.patterns)
    sets = discrimination_sets(TWO_OUT_OF_FIVE, 40, rng=3)
    assert sets.balanced and set(sets.pattern_counts.values()) == {2}


def _two_of_five_trial():
    return Trial(name="Rub blend", method=TWO_OUT_OF_FIVE,
                 samples=(Sample("Mild rub", is_control=True), Sample("Hot rub")), alpha=0.05)


def test_two_out_of_five_is_right_only_for_the_two_cups_of_the_pair():
    study = _two_of_five_trial()
    panel = ["P1", "P2", "P3"]
    plan = serving_plan(TWO_OUT_OF_FIVE, ["Mild rub", "Hot rub"], panel, rng=4)
    got = []
    for i, p in enumerate(panel):
        cups = sorted((e for e in plan if e.panelist_code == p), key=lambda e: e.position)
        names = [e.sample_name for e in cups]
        few = min(set(names), key=names.count)
        pair = [e for e in cups if e.sample_name == few]
        three = [e for e in cups if e.sample_name != few]
        pick = [pair, three[:2], [pair[0], three[0]]][i]  # right; two alike; mixed
        got.append(Answer("1", p, " ".join(e.code for e in pick), "choice", ""))
    counts = analyse(study, plan, got).choice.counts
    assert (counts.correct, counts.n, counts.problems) == (1, 3, ())


def test_the_tablet_label_comes_from_the_registry():
    assert get_method(TWO_OUT_OF_FIVE).group_label.startswith("The two cups that differ")
    assert "more of the attribute" in get_method(SPECIFIED_TETRAD).group_label
    assert all("tap" in get_method(m).tablet_instructions
               for m in (TWO_OUT_OF_FIVE, SPECIFIED_TETRAD))


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, (json.loads(out) if code == 0 else None), err


def test_the_command_line_tests_two_out_of_five_and_gives_no_dprime(capsys):
    code, data, _ = run(capsys, "difference", "--method", TWO_OUT_OF_FIVE, "--correct", "5",
                        "--n", "20", "--json")
    assert code == 0 and data["dprime"] is None and data["dprime_ci"] is None
    # exact one-sided binomial at 1/10, recomputed with scipy and by hand
    assert data["p_value"] == pytest.approx(
        stats.binomtest(5, 20, 0.1, alternative="greater").pvalue, rel=1e-12)
    assert data["p_value"] == pytest.approx(float(_tail(5, 20, Fraction(1, 10))), rel=1e-12)
    assert data["pd"] == pytest.approx((0.25 - 0.1) / 0.9, rel=1e-12)
    code, _, err = run(capsys, "dprime", "--method", TWO_OUT_OF_FIVE, "--pc", "0.3")
    assert code == 2 and "no Thurstonian model" in err


def test_the_command_line_converts_specified_tetrad_dprime(capsys):
    code, data, _ = run(capsys, "dprime", "--method", SPECIFIED_TETRAD, "--dprime", "0",
                        "--json")
    assert code == 0 and data["pc"] == pytest.approx(1 / 6, abs=1e-12)


def test_panel_sizes_fall_as_the_guessing_probability_falls():
    # the same pd needs fewer panelists at chance 1/10 than at 1/3 (guessing model of
    # ISO 4120: pc = p0 + pd (1 - p0)); common practice, computed here
    n5 = panel_size(0.3, method=TWO_OUT_OF_FIVE).n
    n_tri = panel_size(0.3, method="triangle").n
    n_spec = panel_size(0.3, method=SPECIFIED_TETRAD).n
    assert n5 < n_spec < n_tri
