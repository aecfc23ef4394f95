"""The specified tetrad and the two-out-of-five test run end to end through the use cases
(issue 17, item 3): set-up, serving plan, ballot PDF, tablet answers, paper entry, an
answer file, analysis, decision and report.

Expected p-values are recomputed with ``scipy.stats.binomtest`` (exact one-sided binomial
at the method's guessing probability) and, for the small counts, by hand with fractions:
the specified tetrad's chance is 1/6 (one right pair of the C(4, 2) = 6 pairs of four
cups; Ennis, Ennis, Yip and O'Mahony 1998, from memory) and the two-out-of-five's 1/10
(one right pair of the C(5, 2) = 10; Amerine, Pangborn and Roessler 1965, from memory).
The sample names are invented.
"""

from __future__ import annotations

import io
from fractions import Fraction
from math import comb

import pandas as pd
import pytest
from pypdf import PdfReader
from scipy import stats as sps
from store_builders import roster

from trials import service
from trials.methods import SPECIFIED_TETRAD, TWO_OUT_OF_FIVE, get_method
from trials.model import Sample

pytestmark = pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")

STRONG, MILD = "Smoked paprika rub", "Sweet paprika rub"


def _tail(k: int, n: int, p: Fraction) -> Fraction:
    """P(X >= k) for X ~ binomial(n, p), exactly (by hand, independent of scipy)."""
    return sum((comb(n, j) * p**j * (1 - p) ** (n - j) for j in range(k, n + 1)), Fraction(0))


def _cups(plan, panelist):
    return sorted((e for e in plan if e.panelist_code == panelist), key=lambda e: e.position)


def test_a_specified_tetrad_scores_only_the_two_stronger_cups(store):
    codes = roster(store, 12)
    study = service.create_trial(
        store, name="Rub heat: specified tetrad", method=SPECIFIED_TETRAD,
        samples=[Sample(MILD, is_control=True), Sample(STRONG)], target_sample=STRONG,
        by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=5, by="test")
    assert {e.role for e in plan if e.sample_name == STRONG} == {"B"}
    assert all(sorted(e.role for e in _cups(plan, c)) == ["A", "A", "B", "B"] for c in codes)

    # the ballot: question, the four codes, the registry's note, no sample names
    pdf = service.print_bytes(store, study.id, "ballots")
    page = PdfReader(io.BytesIO(pdf)).pages[0].extract_text()
    spec = get_method(SPECIFIED_TETRAD)
    assert spec.question in page and spec.ballot_note in page
    assert all(e.code in page for e in _cups(plan, codes[0]))
    assert STRONG not in page and MILD not in page

    # eight panelists pick both strong cups on the tablet; four pick the two mild cups,
    # which groups the pairs correctly (the unspecified tetrad's rule) but is wrong here
    for i, c in enumerate(codes):
        token = service.panelist_token(store, study.id, c)
        want = STRONG if i < 8 else MILD
        pick = " ".join(e.code for e in _cups(plan, c) if e.sample_name == want)
        service.record_answer(store, token, code=pick, attribute="choice")
    analysis = service.analyse_trial(store, study.id)
    counts = analysis.choice.counts
    assert (counts.correct, counts.n, counts.problems) == (8, 12, ())
    expected = sps.binomtest(8, 12, 1 / 6, alternative="greater").pvalue
    assert expected == pytest.approx(float(_tail(8, 12, Fraction(1, 6))), rel=1e-12)
    diff = analysis.choice.difference
    assert diff.p_value == pytest.approx(expected, rel=1e-12)
    assert diff.dprime is not None and diff.dprime > 0
    decision = service.trial_decision(store, study.id, analysis)
    assert decision.verdict == "difference"
    assert f"8 of 12 picked both cups of {STRONG} as having more of the attribute" \
        in decision.headline
    html = service.report_html(store, study.id)
    assert "8 of 12" in html and "specified" in html.lower()
    assert service.report_pdf(store, study.id)[:4] == b"%PDF"


def test_a_two_out_of_five_runs_from_paper_and_file_to_a_decision_without_dprime(store):
    codes = roster(store, 20)
    study = service.create_trial(
        store, name="Rub blend: two-out-of-five", method=TWO_OUT_OF_FIVE,
        samples=[Sample(MILD, is_control=True), Sample(STRONG)], by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=9, by="test")
    counts = {tuple(sorted(e.sample_name for e in _cups(plan, c))).count(STRONG)
              for c in codes}
    assert counts == {2, 3}  # each sample is the pair of two in some sets
    spec = get_method(TWO_OUT_OF_FIVE)
    pdf = service.print_bytes(store, study.id, "ballots")
    page = PdfReader(io.BytesIO(pdf)).pages[0].extract_text()
    assert spec.question in page and all(e.code in page for e in _cups(plan, codes[0]))

    def pair_of_two(c):
        cups = _cups(plan, c)
        names = [e.sample_name for e in cups]
        few = min(set(names), key=names.count)
        return [e.code for e in cups if e.sample_name == few]

    def two_of_three(c):
        cups = _cups(plan, c)
        names = [e.sample_name for e in cups]
        many = max(set(names), key=names.count)
        return [e.code for e in cups if e.sample_name == many][:2]

    # the first ten ballots entered on the paper grid: six right, four who circled two of
    # the three alike cups (wrong)
    grid = service.paper_sheet(store, study.id, "1")
    assert list(grid.columns) == ["panelist", "set", "cups", "chosen"] and len(grid) == 20
    first = grid[grid["panelist"].isin(codes[:10])].copy()
    first["chosen"] = [" ".join(pair_of_two(c) if i < 6 else two_of_three(c))
                       for i, c in enumerate(first["panelist"])]
    assert service.check_paper_sheet(store, study.id, "1", first) == []
    assert service.save_paper_sheet(store, study.id, "1", first) == 10
    # the other ten from an answer file: one right, nine wrong
    rows = [{"session": "1", "panelist": c, "attribute": "choice", "value": "",
             "code": " ".join(pair_of_two(c) if i == 0 else two_of_three(c))}
            for i, c in enumerate(codes[10:])]
    data = pd.DataFrame(rows).to_csv(index=False).encode()
    assert service.import_answers(store, study.id, data, name="answers.csv") == 10

    analysis = service.analyse_trial(store, study.id)
    got = analysis.choice.counts
    assert (got.correct, got.n, got.problems) == (7, 20, ())
    diff = analysis.choice.difference
    # hand computation and scipy agree; 7 of 20 at chance 1/10 is well past alpha 0.05
    assert diff.p_value == pytest.approx(float(_tail(7, 20, Fraction(1, 10))), rel=1e-12)
    assert diff.p_value == pytest.approx(
        sps.binomtest(7, 20, 0.1, alternative="greater").pvalue, rel=1e-12)
    # pd = (pc - 1/10) / (9/10) = (0.35 - 0.1) / 0.9; no d' and the note says why
    assert diff.pd == pytest.approx((7 / 20 - 0.1) / 0.9, rel=1e-12)
    assert diff.dprime is None and diff.dprime_ci is None and "no d'" in diff.note
    decision = service.trial_decision(store, study.id, analysis)
    assert decision.verdict == "difference"
    assert "7 of 20 picked the two cups that differ from the other three" in decision.headline
    assert any("no Thurstonian model" in d for d in decision.details)
    html = service.report_html(store, study.id)
    assert "no Thurstonian model" in html and "7 of 20" in html
    assert service.report_pdf(store, study.id)[:4] == b"%PDF"
