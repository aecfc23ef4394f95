"""A check-all-that-apply trial end to end through the use cases (issue 17, item 2): its
words are attributes of kind ``check``; ballots, tablet answers, the paper grid, an
answer file, Cochran's Q per word, the correspondence map, penalty-lift, the decision
and the report. Expected statistics are recomputed with statsmodels (``cochrans_q``)
and pandas from the same ticks. The kitchen, samples and ticks are invented."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
import pytest
from pypdf import PdfReader
from statsmodels.stats.contingency_tables import cochrans_q
from store_builders import roster

from trials import service
from trials.errors import TrialsError
from trials.methods import CATA
from trials.model import Attribute, AttributeKind, Sample

pytestmark = pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")

SAMPLES = ["Plain scone", "Cheese scone", "Fruit scone"]
WORDS = ["crumbly", "salty", "sweet"]


def test_a_cata_trial_runs_from_ballot_to_decision(store):
    codes = roster(store, 12)
    study = service.create_trial(
        store, name="Scones: three recipes", method=CATA,
        samples=[Sample(SAMPLES[0], is_control=True), Sample(SAMPLES[1]), Sample(SAMPLES[2])],
        attributes=[*(Attribute(w, AttributeKind.CHECK, 0, 1) for w in WORDS),
                    Attribute("overall liking", AttributeKind.HEDONIC, 1, 9)], by="test")
    with pytest.raises(TrialsError, match="scored 0"):
        service.add_attribute(store, study.id, "dry", kind="check", low=1, high=9, by="test")
    plan = service.draw_plan(store, study.id, panelist_codes=codes, seed=6, by="test")
    page = PdfReader(io.BytesIO(service.print_bytes(store, study.id, "ballots"))).pages[0]
    text = page.extract_text()
    assert all(w in text for w in WORDS) and "Cup " in text
    assert not any(s in text for s in SAMPLES)

    rng = np.random.default_rng(4)
    chance = {"crumbly": (0.5, 0.5, 0.5), "salty": (0.1, 0.9, 0.1), "sweet": (0.1, 0.1, 0.9)}
    ticks, liking = {}, {}
    for e in plan:
        j = SAMPLES.index(e.sample_name)
        for w in WORDS:
            ticks[(e.panelist_code, e.sample_name, w)] = int(rng.random() < chance[w][j])
        liking[(e.panelist_code, e.sample_name)] = int(5 + j + rng.integers(-1, 2))

    def value(e, attr):
        return (liking[(e.panelist_code, e.sample_name)] if attr == "overall liking"
                else ticks[(e.panelist_code, e.sample_name, attr)])

    # four panelists on the tablet, four on the paper grid, four from a file
    for e in (x for x in plan if x.panelist_code in codes[:4]):
        token = service.panelist_token(store, study.id, e.panelist_code)
        for attr in [*WORDS, "overall liking"]:
            service.record_answer(store, token, code=e.code, attribute=attr,
                                  value=value(e, attr))
    grid = service.paper_sheet(store, study.id, "1")
    assert list(grid.columns) == ["panelist", "position", "code", *WORDS, "overall liking"]
    part = grid[grid["panelist"].isin(codes[4:8])].copy()
    for i, row in part.iterrows():
        e = next(x for x in plan if x.code == row["code"] and x.panelist_code == row["panelist"])
        for attr in [*WORDS, "overall liking"]:
            part.loc[i, attr] = value(e, attr)
    assert service.check_paper_sheet(store, study.id, "1", part) == []
    assert service.save_paper_sheet(store, study.id, "1", part) == 4 * 3 * 4
    rows = [{"session": "1", "panelist": e.panelist_code, "code": e.code, "attribute": a,
             "value": value(e, a)} for e in plan if e.panelist_code in codes[8:]
            for a in [*WORDS, "overall liking"]]
    data = pd.DataFrame(rows).to_csv(index=False).encode()
    assert service.import_answers(store, study.id, data, name="ticks.csv") == 48

    analysis = service.analyse_trial(store, study.id)
    ca = analysis.cata
    assert analysis.answers == 144 and analysis.panelists_answered == 12
    for w in WORDS:
        wide = np.array([[ticks[(p, s, w)] for s in SAMPLES] for p in codes])
        ref = cochrans_q(wide)
        test = next(t for t in ca.tests if t.word == w)
        assert test.q == pytest.approx(ref.statistic, rel=1e-12)
        assert ca.counts[SAMPLES[1]][w] == int(wide[:, 1].sum())
    assert {t.word for t in ca.tests if t.significant} >= {"salty", "sweet"}
    assert ca.correspondence is not None and len(ca.correspondence.shares) == 2
    sweet = next(x for x in ca.lifts if x.word == "sweet")
    on = [liking[(p, s)] for (p, s, w), v in ticks.items() if w == "sweet" and v]
    off = [liking[(p, s)] for (p, s, w), v in ticks.items() if w == "sweet" and not v]
    assert sweet.lift == pytest.approx(np.mean(on) - np.mean(off), rel=1e-12)
    decision = service.trial_decision(store, study.id, analysis)
    assert decision.verdict == "difference" and "salty" in decision.headline
    assert any("Penalty-lift" in d for d in decision.details)
    html = service.report_html(store, study.id)
    assert "Cochran" in html and "Correspondence analysis" in html and "Penalty-lift" in html
    assert service.report_pdf(store, study.id)[:4] == b"%PDF"
