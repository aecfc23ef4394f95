"""The 2-AFC and 3-AFC target is chosen at set-up and holds whatever the listing order
(issue 16, item 1).

The scenario of the issue: the samples are listed [new, control], the new sample is
expected to have more of the attribute, and all 12 panelists pick it. Before the target
was stored, the analysis took the plan's role B (the second sample once the control was
sorted first, the second listed without a control flag) and could score 0 of 12. The
expected p-values come from scipy.stats.binomtest (exact one-sided binomial at the
method's guessing probability: 1/2 for 2-AFC, ISO 5495; 1/3 for 3-AFC, Frijters 1979).
"""

from __future__ import annotations

import pytest
from scipy import stats as sps
from store_builders import roster

from trials import service
from trials.errors import TrialsError
from trials.model import Sample

NEW, CONTROL = "New brine", "Usual brine"
GUESS = {"2afc": 1 / 2, "3afc": 1 / 3}  # ISO 5495; Frijters (1979)


def _trial(store, method, *, control_flag, target=NEW):
    return service.create_trial(
        store, name=f"Brine {method} {control_flag}", method=method,
        samples=[Sample(NEW), Sample(CONTROL, is_control=control_flag)],
        target_sample=target, by="test")


@pytest.mark.parametrize("control_flag", [True, False], ids=["control-flagged", "no-flag"])
@pytest.mark.parametrize("method", ["2afc", "3afc"])
def test_every_panelist_picking_the_target_scores_12_of_12_whatever_the_order(
        store, method, control_flag):
    codes = roster(store, 12)
    study = _trial(store, method, control_flag=control_flag)
    assert service.get_trial(store, study.id).target_sample == NEW
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=4, by="test")
    # the plan carries the target's role: every cup of the new sample is role B
    assert {e.role for e in plan if e.sample_name == NEW} == {"B"}
    assert {e.role for e in plan if e.sample_name == CONTROL} == {"A"}
    for c in codes:
        token = service.panelist_token(store, study.id, c)
        pick = next(e for e in plan if e.panelist_code == c and e.sample_name == NEW)
        service.record_answer(store, token, code=pick.code, attribute="choice")
    analysis = service.analyse_trial(store, study.id)
    counts = analysis.choice.counts
    assert (counts.correct, counts.n, counts.target, counts.problems) == (12, 12, NEW, ())
    expected = sps.binomtest(12, 12, GUESS[method], alternative="greater").pvalue
    assert analysis.choice.difference.p_value == pytest.approx(expected, rel=1e-12)
    decision = service.trial_decision(store, study.id, analysis)
    assert f"12 of 12 picked {NEW}" in decision.headline
    assert decision.verdict == "difference"
    html = service.report_html(store, study.id)
    assert "12 of 12" in html and "target sample" in html


@pytest.mark.parametrize("method", ["2afc", "3afc"])
def test_a_plan_is_refused_until_the_target_is_chosen(store, method):
    codes = roster(store, 6)
    study = _trial(store, method, control_flag=True, target="")
    with pytest.raises(TrialsError, match="needs its target sample"):
        service.draw_plan(store, study.id, panelist_codes=codes, by="test")
    assert service.plan(store, study.id) == []
    service.update_trial(store, study.id, by="test", target_sample=CONTROL)
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=2, by="test")
    assert {e.role for e in plan if e.sample_name == CONTROL} == {"B"}


def test_the_target_is_one_of_the_samples_and_fixed_once_a_plan_is_drawn(store):
    with pytest.raises(TrialsError, match="'Other' is not a sample"):
        _trial(store, "2afc", control_flag=True, target="Other")
    study = _trial(store, "2afc", control_flag=True)
    with pytest.raises(TrialsError, match="'Other' is not a sample"):
        service.update_trial(store, study.id, by="test", target_sample="Other")
    service.draw_plan(store, study.id, panelist_codes=roster(store, 4), seed=1, by="test")
    with pytest.raises(TrialsError, match="cannot change the target sample"):
        service.update_trial(store, study.id, by="test", target_sample=CONTROL)
    assert service.get_trial(store, study.id).target_sample == NEW


def test_the_serving_sheet_names_the_target(store):
    import io

    from pypdf import PdfReader

    study = _trial(store, "3afc", control_flag=False)
    service.draw_plan(store, study.id, panelist_codes=roster(store, 3), seed=1, by="test")
    pdf = service.print_bytes(store, study.id, "sheet")
    text = " ".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages)
    assert f"Target sample: {NEW}" in text and "role B" in text
