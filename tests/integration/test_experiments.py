"""Recipe experiments end to end on a real store: runs become batches of a rating
trial, the tasting is planned in incomplete blocks after sign-off, measured variables
are recorded per run, and every response is analysed.

Independent checks: the attribute's run means are those of the trial's own rating
ANOVA (trials.stats.ratings, itself checked against published examples), and each
surface fit is compared with statsmodels' formula OLS on the run table.
"""

from __future__ import annotations

import json
from collections import Counter

import numpy as np
import pytest
import statsmodels.formula.api as smf
from pypdf import PdfReader
from store_builders import roster

from trials import service
from trials.cli import main
from trials.errors import TrialsError
from trials.methods import get_method

# an invented bread roll: proof time x salt, face-centred, 3 centre points (11 runs)
FACTORS = [
    {"name": "proof time", "unit": "min", "low": 40, "high": 60, "safe_low": 30,
     "safe_high": 80},
    {"name": "salt", "unit": "%", "low": 1.5, "high": 2.1, "safe_low": 1.0, "safe_high": 2.6},
]


def _experiment(store, **kw):
    return service.create_experiment(store, name="Roll trial", kind="ccd-face",
                                     factors=FACTORS, center_points=3, seed=5,
                                     allergens="gluten", by="test", **kw)


def _liking(coded):
    x1, x2 = coded
    return 6 + 0.8 * x1 - 0.9 * x1 ** 2 - 0.6 * x2 ** 2 + 0.2 * x1 * x2


def _tasted(store, panelists=10, per_panelist=5):
    exp = _experiment(store)
    codes = roster(store, panelists)
    service.sign_off_runs(store, exp.id, by="sous chef")
    entries = service.plan_experiment_tasting(store, exp.id, panelist_codes=codes,
                                              per_panelist=per_panelist, seed=3, by="test")
    coded = {r.sample_name: r.coded for r in exp.runs}
    rng = np.random.default_rng(11)
    lines = ["session,panelist,code,attribute,value"]
    for e in entries:
        score = int(np.clip(round(_liking(coded[e.sample_name]) + rng.normal(0, 0.6)), 1, 9))
        lines.append(f"{e.session},{e.panelist_code},{e.code},overall liking,{score}")
    # one import, one transaction (the answer file format of the README)
    service.import_answers(store, exp.trial_id, "\n".join(lines).encode(), name="a.csv")
    for r in exp.runs:
        x1, x2 = r.coded
        service.record_run_measures(store, exp.id, r.run,
                                    {"yield": (93 - 1.2 * x1 + 0.4 * x2 - 0.5 * x1 * x1
                                               + 0.05 * r.run % 3, "%")})
    return exp, entries


def test_each_run_becomes_a_batch_of_a_rating_trial_with_its_settings(store):
    exp = _experiment(store)
    assert len(exp.runs) == 4 + 4 + 3
    trial = service.get_trial(store, exp.trial_id)
    assert trial.method == get_method("rating").name
    assert [s.name for s in trial.samples] == [r.sample_name for r in exp.runs]
    assert all(s.allergens == ("gluten",) for s in trial.samples)
    batches = {(b.sample_name, b.label): b for b in service.list_batches(store, exp.trial_id)}
    for r in exp.runs:
        b = batches[(r.sample_name, r.batch_label)]
        assert [(m.name, m.value, m.unit) for m in b.settings] == [
            ("proof time", r.settings[0], "min"), ("salt", r.settings[1], "%")]
        assert not b.signed_off
    assert service.experiment_of_trial(store, exp.trial_id) == exp
    assert service.get_experiment(store, exp.id).runs == exp.runs
    # the stored design is the same design again (same seed)
    again = service.experiment_design_of(exp)
    assert [r.std_order for r in again.runs] == [r.std_order for r in exp.runs]


def test_a_run_outside_a_safe_range_is_refused_and_nothing_is_stored(store):
    before = service.list_trials(store)
    tight = [dict(FACTORS[0], safe_low=40, safe_high=60), FACTORS[1]]
    with pytest.raises(TrialsError, match="outside the declared safe range"):
        service.create_experiment(store, name="Too far", kind="ccd-rotatable", factors=tight,
                                  seed=1)
    assert service.list_trials(store) == before
    assert service.list_experiments(store) == []


def test_the_tasting_waits_for_every_sign_off_then_serves_incomplete_blocks(store):
    exp = _experiment(store)
    codes = roster(store, 11)
    with pytest.raises(TrialsError, match="no food-safety sign-off"):
        service.plan_experiment_tasting(store, exp.id, panelist_codes=codes, per_panelist=5)
    service.sign_off_runs(store, exp.id, by="sous chef")
    assert service.unsigned_runs(store, exp.id) == []
    entries = service.plan_experiment_tasting(store, exp.id, panelist_codes=codes,
                                              per_panelist=5, seed=2)
    per = Counter(e.panelist_code for e in entries)
    assert set(per.values()) == {5}  # each panelist tastes 5 of the 11 runs
    served = Counter(e.sample_name for e in entries)
    assert set(served.values()) == {5}  # 11 x 5 / 11: every run served equally often
    assert {e.batch_label for e in entries} == {r.batch_label for r in exp.runs}


@pytest.mark.slow
def test_every_response_is_analysed_and_the_optimum_lies_in_the_safe_ranges(store):
    exp, _ = _tasted(store)
    table = service.run_table(store, exp.id)
    trial_result = service.analyse_trial(store, exp.trial_id).attribute("overall liking")
    # the run means are the rating model's panelist-adjusted means
    for rec in table.to_dict("records"):
        assert rec["overall liking"] == pytest.approx(trial_result.anova.means[rec["sample"]])
    goals = [{"response": "overall liking", "kind": "maximize", "low": 5, "high": 7},
             {"response": "yield", "kind": "maximize", "low": 91, "high": 94}]
    analysis = service.analyse_experiment(store, exp.id, goals=goals)
    for name in ("overall liking", "yield"):
        ra = analysis.response(name)
        assert ra.model == "quadratic"
        # independent: statsmodels' formula OLS on the same run table
        data = table.rename(columns={name: "y"})
        ref = smf.ols("y ~ coded_0 + coded_1 + coded_0:coded_1 + I(coded_0**2) "
                      "+ I(coded_1**2)", data=data).fit()
        assert ra.fit.r2 == pytest.approx(ref.rsquared)
        assert ra.fit.to_frame()["estimate"]["proof time"] == pytest.approx(
            ref.params["coded_0"])
        assert ra.fit.line("pure error").df == 2  # 3 centre points
    opt = analysis.optimum
    assert opt is not None and opt.feasible
    for f in exp.factors:
        assert f.safe_low <= analysis.confirmation[f.name] <= f.safe_high
        assert f.low <= analysis.confirmation[f.name] <= f.high
    json.dumps(analysis.to_dict())  # JSON-ready
    xs, ys, z = service.contour(analysis, "yield", "proof time", "salt", n=30)
    assert z.shape == (30, 30) and xs[0] == pytest.approx(40) and ys[-1] == pytest.approx(2.1)


@pytest.mark.slow
def test_the_run_sheet_and_the_report_carry_the_runs_and_the_food_code(store):
    exp, _ = _tasted(store, panelists=6, per_panelist=11)
    sheet = service.run_sheet(store, exp.id)
    import io
    text = " ".join(p.extract_text() for p in PdfReader(io.BytesIO(sheet.data)).pages)
    assert "local food code" in text and "safe range" in text
    assert "R01" in text and "sous chef" in text
    reads = []
    original = store.read

    def counted():
        reads.append(1)
        return original()

    store.read = counted
    try:
        html = service.report_html(store, exp.trial_id)
    finally:
        store.read = original
    assert len(reads) == 1  # the report reads one snapshot, experiment and all
    assert "Recipe experiment" in html and "Stationary point" in html
    assert "lack of fit" in html


def test_the_cli_designs_saves_and_analyses(store, db_url, capsys):
    args = ["experiment", "design", "--kind", "full-factorial", "--factor",
            "proof time:min:40:60:30:80", "--factor", "salt:%:1.5:2.1:1:2.6",
            "--center", "2", "--seed", "4", "--json"]
    assert main(args) == 0
    preview = json.loads(capsys.readouterr().out)
    assert len(preview["runs"]) == 6 and "food code" in preview["caution"]
    assert main([*args, "--save", "CLI roll", "--db", db_url]) == 0
    saved = json.loads(capsys.readouterr().out)
    assert saved["experiment"] and saved["runs"][0]["batch_label"] == "R1"
    for run in range(1, 7):
        service.record_run_measures(store, saved["experiment"], run,
                                    {"yield": (90.0 + run % 3, "%")})
    assert main(["experiment", "analyze", str(saved["experiment"]), "--db", db_url,
                 "--goal", "yield:maximize:90:92", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert {"responses", "optimum", "confirmation", "runs"} <= set(out)
    assert [r["response"] for r in out["responses"]] == ["overall liking", "yield"]
    assert out["responses"][1]["effects"]["lenth"]["m"] == 3
    bad = ["experiment", "design", "--kind", "ccd-rotatable", "--factor",
           "oven:C:200:230:200:230", "--factor", "salt:%:1.5:2.1"]
    assert main(bad) == 2
    assert "outside the declared safe range" in capsys.readouterr().err
