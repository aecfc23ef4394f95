"""The R-index of a rating trial and of a ranking trial through the use case (issue 17,
item 3): each sample against the control, from the answers on file. The expected R is
counted pair by pair (its definition, O'Mahony 1992) and the p-value recomputed with
scipy.stats.mannwhitneyu (asymptotic, no continuity correction). Invented data."""

from __future__ import annotations

import itertools

import pytest
from scipy import stats
from store_builders import roster

from trials import service
from trials.model import Attribute, Sample

pytestmark = pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")


def _r(signal, noise):
    pairs = list(itertools.product(signal, noise))
    return (sum(s > n for s, n in pairs) + 0.5 * sum(s == n for s, n in pairs)) / len(pairs)


def test_the_r_index_of_a_rating_trial_against_its_control(store):
    codes = roster(store, 12)
    study = service.create_trial(
        store, name="Loaf crumb: two flours", method="rating",
        samples=[Sample("White loaf", is_control=True), Sample("Rye loaf")],
        attributes=[Attribute("overall liking", low=1, high=9)], by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=4, by="test")
    score = {}
    for i, e in enumerate(plan):
        score[e.code, e.panelist_code] = (5 + i % 3) if e.sample_name == "Rye loaf" else 4 + i % 2
        service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                             attribute="overall liking", value=score[e.code, e.panelist_code])
    signal = [v for (c, p), v in score.items()
              if next(e for e in plan if e.code == c).sample_name == "Rye loaf"]
    noise = [v for (c, p), v in score.items()
             if next(e for e in plan if e.code == c).sample_name == "White loaf"]
    table = service.r_index_of(store, study.id, "overall liking")
    (row,) = table.rows
    assert (table.control, row.sample, row.n_sample, row.n_control) == (
        "White loaf", "Rye loaf", 12, 12)
    assert row.r_index == pytest.approx(_r(signal, noise), abs=1e-12)
    assert row.p_value == pytest.approx(stats.mannwhitneyu(
        signal, noise, method="asymptotic", use_continuity=False).pvalue, rel=1e-9)


def test_the_r_index_of_a_ranking_trial_reads_rank_one_as_most(store):
    codes = roster(store, 10)
    study = service.create_trial(store, name="Soup: three salt levels", method="ranking",
                                 samples=["Soup low salt", "Soup mid salt", "Soup high salt"],
                                 by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=2, by="test")
    order = {"Soup high salt": 1, "Soup mid salt": 2, "Soup low salt": 3}
    for e in plan:
        service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                             attribute="rank", value=order[e.sample_name])
    table = service.r_index_of(store, study.id, "rank")
    assert table.control == "Soup low salt"  # no control flagged: the first sample
    # every panelist put both others before the control: R = 1 for each
    assert {r.sample: r.r_index for r in table.rows} == {"Soup mid salt": 1.0,
                                                          "Soup high salt": 1.0}
    assert all(r.dprime is None for r in table.rows)  # no finite d' at R = 1
