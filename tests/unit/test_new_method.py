"""DEVELOPERS.md, "Adding a test method", holds: one registry entry carries a new
forced-choice method through set design, the serving plan, the ballot PDF, the tablet
wording, answer checks, paper entry, the analysis and the decision, with no other edit.

The throwaway method is a 3-AFC asked the other way round ("which has the least?"),
served as one cup of the control (role A) and two of the test sample: the target is
named by its role in the plan, the control's letter A, and the 3-AFC psychometric
model applies (Frijters 1979: the decision rule and chance level 1/3 are the same).
"""

from __future__ import annotations

import dataclasses
import io

import pytest
from pypdf import PdfReader
from scipy import stats as sps

from trials import answers
from trials.analysis import analyse
from trials.decision import Verdict, decide
from trials.design.plan import serving_plan
from trials.design.sets import discrimination_sets
from trials.errors import AnswerError
from trials.methods import (
    FORCED_CHOICE_COLUMNS,
    MODEL_3AFC,
    Family,
    MethodSpec,
    Scoring,
    get_method,
    register_method,
    unregister_method,
)
from trials.model import Answer, Sample, Trial
from trials.printing import ballots_pdf

CONTROL, TEST = "Full-salt stock", "Half-salt stock"
PANEL = [f"N{i:02d}" for i in range(1, 7)]

LEAST = MethodSpec(
    name="3afc-least",
    label="3-AFC (least)",
    family=Family.DISCRIMINATION,
    guess=1 / 3,
    set_size=3,
    sides=1,
    question="Which sample has the least of the attribute?",
    instructions=("Taste the three samples in the order given. Circle the code of the sample "
                  "with the least of the named attribute. You must choose one."),
    patterns=("ABB", "BAB", "BBA"),
    reference="Frijters (1979), Br. J. Math. Stat. Psychol. 32:229-241",
    scoring=Scoring.TARGET_BY_ROLE,
    target_role="A",
    correct_phrase="picked {target} as having the least of the attribute",
    model=MODEL_3AFC,
    tablet_instructions=("Taste the three samples in the order given. Tap the code of the "
                         "sample with the least of the named attribute."),
    ballot_note="Circle one code only.",
    asks_attribute=True,
    set_design="each position of the single control cup equally often (common practice)",
    paper_columns=FORCED_CHOICE_COLUMNS,
)


@pytest.fixture
def least():
    spec = register_method(LEAST)
    yield spec
    unregister_method(spec.name)


def trial() -> Trial:
    return Trial(name="Stock: half the salt", method=LEAST.name,
                 samples=(Sample(CONTROL, is_control=True), Sample(TEST)), alpha=0.05)


@dataclasses.dataclass(frozen=True)
class BallotSet:  # the shape of the service's ballot sets (session, set_index, codes)
    session: str
    set_index: int
    codes: tuple[str, ...]


def test_the_registry_knows_the_method_only_while_it_is_registered(least):
    assert get_method(LEAST.name) is least
    unregister_method(LEAST.name)
    with pytest.raises(Exception, match="unknown method"):
        get_method(LEAST.name)
    register_method(LEAST)  # for the fixture to remove


def test_a_new_method_runs_from_the_design_to_the_decision(least):
    # set design: each of the three orders once per block of three
    sets = discrimination_sets(least.name, 6, rng=1)
    assert sets.balanced and sets.pattern_counts == {"ABB": 2, "BAB": 2, "BBA": 2}
    assert sets.reference == least.set_design

    # the serving plan: role A is the control, one cup of it in every set; no reference
    study = trial()
    plan = serving_plan(least.name, [CONTROL, TEST], PANEL, rng=2)
    assert len(plan) == 18 and {e.role for e in plan} == {"A", "B"}
    assert all(e.sample_name == (CONTROL if e.role == "A" else TEST) for e in plan)

    # the ballot PDF: one page per panelist with the question, the codes and the note
    pdf = ballots_pdf(study, plan)
    assert pdf.pages == 6
    first = PdfReader(io.BytesIO(pdf.data)).pages[0].extract_text()
    mine = sorted((e for e in plan if e.panelist_code == "N01"), key=lambda e: e.position)
    assert least.question in first and "Circle one code only." in first
    assert all(e.code in first for e in mine)
    assert CONTROL not in first and TEST not in first  # blind: no sample names

    # the tablet: every cup is a choice, and the wording taps
    codes = tuple(e.code for e in mine)
    assert answers.choice_options(least, codes) == ("", codes)
    steps = answers.tasting_steps(least, [BallotSet("1", 0, codes)], [], ())
    assert [(s.kind, s.done) for s in steps] == [("choose", False)]
    assert "Tap" in least.tablet_instructions

    # answer checks: one code of the set, kept as the set's question
    checker = answers.AnswerChecker.for_trial(study, plan)
    target = next(e for e in mine if e.role == "A")
    assert checker.check("1", "N01", target.code, "choice", "").question == "choice:0"
    with pytest.raises(AnswerError, match="expected one code"):
        checker.check("1", "N01", f"{codes[0]} {codes[1]}", "choice", "")

    # paper entry: the forced-choice grid, one row per panelist
    grid = answers.paper_sheet(least, plan, [])
    assert tuple(grid.columns) == FORCED_CHOICE_COLUMNS and len(grid) == 6

    # analysis: five of six pick the control's cup, the target by role A
    got = []
    for i, p in enumerate(PANEL):
        cups = [e for e in plan if e.panelist_code == p]
        pick = next(e for e in cups if (e.role == "A") == (i < 5))
        got.append(Answer("1", p, pick.code, "choice", ""))
    result = analyse(study, plan, got)
    counts = result.choice.counts
    assert (counts.correct, counts.n, counts.target) == (5, 6, CONTROL)
    # exact one-sided binomial at chance 1/3 (ISO 4120's test, the method's guess),
    # recomputed with scipy, and by hand: P(X >= 5) = (6 * 2 + 1) / 3**6 = 13/729
    p_value = sps.binom.sf(4, 6, 1 / 3)
    assert p_value == pytest.approx(13 / 729, rel=1e-12)
    assert result.choice.difference.p_value == pytest.approx(p_value, rel=1e-12)

    # the decision: the registry's sentence, with the target's name
    decision = decide(result, study=study)
    assert decision.verdict == Verdict.DIFFERENCE  # 13/729 < alpha 0.05
    assert f"5 of 6 picked {CONTROL} as having the least of the attribute" in decision.headline
