"""A-not-A and same-different end to end through the use cases (issue 17, item 3):
set-up, serving plan, ballot PDF, tablet answers, paper entry, an answer file, the
response table, Fisher's exact test, d', the decision and the report.

Expected values are recomputed with scipy (``fisher_exact``, ``norm.ppf``) and the
differencing model is inverted here by a root finder on its own formula (Macmillan and
Creelman 2005, ch. 9, from memory). The sample names are invented.
"""

from __future__ import annotations

import io
import math

import pandas as pd
import pytest
from pypdf import PdfReader
from scipy import optimize, stats
from store_builders import roster

from trials import service
from trials.errors import AnswerError
from trials.methods import A_NOT_A, SAME_DIFFERENT, get_method
from trials.model import Sample

pytestmark = pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")

USUAL, NEW = "Usual oat biscuit", "Less-sugar oat biscuit"


def _cups(plan, panelist):
    return sorted((e for e in plan if e.panelist_code == panelist), key=lambda e: e.position)


def test_an_a_not_a_trial_from_tablet_paper_and_file_to_its_decision(store):
    codes = roster(store, 24)
    study = service.create_trial(store, name="Biscuit sugar: A-not-A", method=A_NOT_A,
                                 samples=[Sample(USUAL, is_control=True), Sample(NEW)],
                                 by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=3, by="test")
    # monadic: one cup per panelist; the control is A (role A), half the panel each
    assert all(len(_cups(plan, c)) == 1 for c in codes)
    assert {e.role for e in plan if e.sample_name == USUAL} == {"A"}
    assert sum(e.sample_name == NEW for e in plan) == 12

    spec = get_method(A_NOT_A)
    page = PdfReader(io.BytesIO(service.print_bytes(store, study.id, "ballots"))).pages[0]
    text = page.extract_text()
    assert spec.question in text and "not A" in text and _cups(plan, codes[0])[0].code in text
    assert USUAL not in text and NEW not in text
    # the kitchen's serving sheet asks for the uncoded familiarisation cup of sample A
    sheet = PdfReader(io.BytesIO(service.print_bytes(store, study.id, "sheet"))).pages[0]
    assert "uncoded cup of sample A" in " ".join(sheet.extract_text().split())

    # 10 of the 12 served the new biscuit say "not A"; 3 of the 12 served the usual one do
    def said(c):
        cup = _cups(plan, c)[0]
        k = [x for x in codes if _cups(plan, x)[0].sample_name == cup.sample_name].index(c)
        signal = cup.sample_name == NEW
        return "not A" if (k < 10 if signal else k < 3) else "A"

    for c in codes[:8]:  # the tablet
        token = service.panelist_token(store, study.id, c)
        service.record_answer(store, token, code=_cups(plan, c)[0].code, attribute="response",
                              value=said(c))
    grid = service.paper_sheet(store, study.id, "1")  # the paper grid
    assert list(grid.columns) == ["panelist", "set", "cups", "response"]
    part = grid[grid["panelist"].isin(codes[8:16])].copy()
    part["response"] = [said(c) for c in part["panelist"]]
    assert service.save_paper_sheet(store, study.id, "1", part) == 8
    rows = [{"session": "1", "panelist": c, "code": _cups(plan, c)[0].code,
             "attribute": "response", "value": said(c).upper()} for c in codes[16:]]
    data = pd.DataFrame(rows).to_csv(index=False).encode()
    assert service.import_answers(store, study.id, data, name="answers.csv") == 8
    with pytest.raises(AnswerError, match="expected 'A' or 'not A'"):
        token = service.panelist_token(store, study.id, codes[0])
        service.record_answer(store, token, code=_cups(plan, codes[0])[0].code,
                              attribute="response", value="maybe")

    analysis = service.analyse_trial(store, study.id)
    sg = analysis.signal
    assert (sg.hits, sg.n_signal, sg.false_alarms, sg.n_noise) == (10, 12, 3, 12)
    assert sg.problems == ()
    p = stats.fisher_exact([[10, 2], [3, 9]], alternative="greater").pvalue
    assert sg.result.p_value == pytest.approx(p, rel=1e-9)
    assert sg.result.dprime.dprime == pytest.approx(
        stats.norm.ppf(10 / 12) - stats.norm.ppf(3 / 12), abs=1e-12)
    decision = service.trial_decision(store, study.id, analysis)
    assert decision.verdict == ("difference" if p <= 0.05 else "no difference shown")
    assert '10 of 12 answered "not A" to the sample that is not A' in decision.headline
    html = service.report_html(store, study.id)
    assert "Response table" in html and "Fisher" in html
    assert service.report_pdf(store, study.id)[:4] == b"%PDF"


def test_a_same_different_trial_gives_the_differencing_dprime(store):
    codes = roster(store, 20)
    study = service.create_trial(store, name="Biscuit sugar: same-different",
                                 method=SAME_DIFFERENT,
                                 samples=[Sample(USUAL, is_control=True), Sample(NEW)], by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=8, by="test")
    mixed = {c: len({e.sample_name for e in _cups(plan, c)}) == 2 for c in codes}
    assert sum(mixed.values()) == 10  # AB and BA: half the pairs
    # 8 of 10 unmatched pairs called "different", 3 of 10 matched pairs too
    seen = {True: 0, False: 0}
    for c in codes:
        k = seen[mixed[c]]
        seen[mixed[c]] += 1
        word = "different" if (k < 8 if mixed[c] else k < 3) else "same"
        token = service.panelist_token(store, study.id, c)
        service.record_answer(store, token, code=_cups(plan, c)[1].code, attribute="response",
                              value=word)
    sg = service.analyse_trial(store, study.id).signal
    assert (sg.hits, sg.n_signal, sg.false_alarms, sg.n_noise) == (8, 10, 3, 10)
    # the differencing model inverted independently: k from F, then d' from H
    k = math.sqrt(2) * stats.norm.isf(0.3 / 2)
    def h(d):
        return stats.norm.cdf((d - k) / math.sqrt(2)) + stats.norm.cdf((-d - k) / math.sqrt(2))
    d = optimize.brentq(lambda x: h(x) - 0.8, 0, 10)
    assert sg.result.dprime.dprime == pytest.approx(d, abs=1e-9)
    decision = service.trial_decision(store, study.id)
    assert "8 of 10 answered \"different\" to pairs of two different samples" in decision.headline
    assert "differencing" in " ".join(decision.details)
