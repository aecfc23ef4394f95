"""trials.answers decides every answer as the service does today, on a real store.

The service will call trials.answers in place of its own checks; until then, the
same answers (good and bad) go through both, and the messages, the stored code and
value, the paper grid and the progress counts must agree.
"""

from __future__ import annotations

import pandas as pd
import pytest
from store_builders import roster

from trials import answers, service
from trials.errors import AnswerError, TrialsError
from trials.methods import get_method
from trials.model import Attribute, AttributeKind, Sample

SAMPLES = {
    "triangle": 2, "duo-trio": 2, "2afc": 2, "3afc": 2, "tetrad": 2, "paired-preference": 2,
    "rating": 3, "ranking": 5,
}


def _trial(store, method):
    codes = roster(store, 6)
    attrs = ([Attribute("liking", AttributeKind.HEDONIC, 1, 9)] if method == "rating" else [])
    study = service.create_trial(
        store, name=f"Check {method}", method=method,
        samples=[Sample(f"Sample {i}") for i in range(SAMPLES[method])], attributes=attrs,
        target_sample="Sample 0" if get_method(method).target_role else "", by="test")
    service.draw_plan(store, study.id, panelist_codes=codes, seed=11, by="test",
                      per_panelist=3 if method == "ranking" else None)
    return study.id, codes


def _candidates(spec, plan, panelist):
    cups = sorted((e for e in plan if e.panelist_code == panelist), key=lambda e: e.position)
    other = next(e for e in plan if e.panelist_code != panelist)
    codes = [c.code for c in cups]
    attribute = ("choice" if spec.is_forced_choice else
                 "rank" if spec.family.value == "ranking" else "liking")
    out = [("1", panelist, c, attribute, v) for c in codes for v in ("", "1", "3", "4", "10")]
    out += [("1", panelist, f"{codes[0]} {codes[1]}", attribute, ""),
            ("1", panelist, f"{codes[0]} {codes[0]}", attribute, ""),
            ("1", panelist, "", attribute, "no preference"),
            ("1", panelist, codes[0], attribute, "no preference"),
            ("1", panelist, other.code, attribute, ""),
            ("1", panelist, codes[0], "crunch", "3"),
            ("2", panelist, codes[0], attribute, ""),
            ("1", "NOBODY", codes[0], attribute, "")]
    return out


@pytest.mark.parametrize("method", list(SAMPLES))
def test_every_answer_is_decided_as_the_service_decides_it(store, method):
    trial_id, codes = _trial(store, method)
    study = service.get_trial(store, trial_id)
    plan = service.plan(store, trial_id)
    spec = get_method(method)
    checker = answers.AnswerChecker.for_trial(study, plan, sessions=["1"])
    for args in _candidates(spec, plan, codes[0]):
        try:
            mine = checker.check(*args)
        except AnswerError as exc:
            mine = str(exc)
        try:
            r = service.enter_answer(store, trial_id, session=args[0], panelist_code=args[1],
                                        code=args[2], attribute=args[3], value=args[4])
            theirs = (r.code, r.value)
        except TrialsError as exc:
            theirs = str(exc)
        if isinstance(mine, answers.CheckedAnswer):
            mine = (mine.code, mine.value)
        assert mine == theirs, args


@pytest.mark.parametrize("method", ["triangle", "paired-preference", "rating", "ranking"])
def test_the_paper_grid_and_the_progress_are_the_services(store, method):
    trial_id, codes = _trial(store, method)
    study = service.get_trial(store, trial_id)
    plan = service.plan(store, trial_id)
    spec = get_method(method)
    first = min((e for e in plan if e.panelist_code == codes[1]), key=lambda e: e.position)
    attribute = ("choice" if spec.is_forced_choice else
                 "rank" if method == "ranking" else "liking")
    service.enter_answer(store, trial_id, panelist_code=codes[1], code=first.code,
                            attribute=attribute, value="" if spec.is_forced_choice else "2")
    got = service.list_answers(store, trial_id)
    names = [a.name for a in study.attributes]
    mine = answers.paper_sheet(spec, service.plan(store, trial_id, "1"), got, names)
    pd.testing.assert_frame_equal(mine, service.paper_sheet(store, trial_id, "1"))
    progress = answers.answer_progress(spec, plan, got, attributes=len(study.attributes))
    pd.testing.assert_frame_equal(progress, service.answer_progress(store, trial_id))
    checker = answers.AnswerChecker.for_trial(study, plan, sessions=["1"])
    grid = mine.copy()
    assert answers.sheet_problems(checker, "1", grid) == service.check_paper_sheet(
        store, trial_id, "1", grid)
