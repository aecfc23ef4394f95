"""Descriptive profiles and rating power through the use cases, on the invented demo:
the loaf profile's map, MANOVA and departing panelists, the report's profile section,
and the panel size read from an earlier trial's own error."""

from __future__ import annotations

import math

import pandas as pd
import pytest

from trials import service
from trials.demo import COATINGS, LOAF, LOAF_NARROW, LOAF_REVERSED, seed_demo
from trials.errors import TrialsError
from trials.stats.power import rating_error_sd, rating_panel_size
from trials.stats.profile import descriptive_profile


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    url = f"sqlite:///{tmp_path_factory.mktemp('profiles') / 'demo.db'}"
    store = service.open_store(url)
    seed_demo(store)
    ids = {t.name: t.id for t in service.list_trials(store)}
    yield store, ids
    store.close()


def test_the_loaf_profile_maps_four_loaves_and_names_the_invented_departures(demo):
    store, ids = demo
    prof = service.trial_profile(store, ids[LOAF], n_boot=100)
    assert prof is not None and not prof.notes
    assert set(prof.means.samples) == {s.name for s in service.get_trial(store, ids[LOAF]).samples}
    assert len(prof.means.attributes) == 10
    assert prof.pca.components == 3 and prof.pca.cumulative[1] > 0.8
    assert len(prof.pca.ellipses) == 4
    assert prof.manova.significant and prof.manova.panelists == 12
    flagged = dict(prof.interaction.flagged())
    assert ("sourness", LOAF_REVERSED) in prof.interaction.flagged()
    assert LOAF_NARROW in set(flagged.values())
    rev = next(p for at in prof.interaction.attributes if at.attribute == "sourness"
               for p in at.panelists if p.panelist == LOAF_REVERSED)
    assert rev.r < 0 and rev.flags[0].startswith("direction")


def test_the_profile_of_a_trial_file_is_that_of_its_tidy_scores(demo):
    # the use case decodes the answers through the plan; the same scores exported with
    # the key (answers_frame) give the same profile
    store, ids = demo
    prof = service.trial_profile(store, ids[LOAF], n_boot=0)
    frame = service.answers_frame(store, ids[LOAF])
    frame["replicate"] = frame["session"].astype(int)
    again = descriptive_profile(frame, replicate="replicate", n_boot=0)
    assert again.manova.wilks == pytest.approx(prof.manova.wilks, rel=1e-10)
    assert again.pca.eigenvalues == pytest.approx(prof.pca.eigenvalues, rel=1e-10)


def test_a_rating_trial_with_two_intensity_attributes_has_no_profile(demo):
    store, ids = demo
    assert service.profile_attributes(service.get_trial(store, ids[COATINGS])) == [
        "crispness", "saltiness"]
    assert service.trial_profile(store, ids[COATINGS]) is None


@pytest.mark.slow  # two whole reports with their charts
def test_the_report_prints_the_profile_only_where_there_is_one(demo):
    store, ids = demo
    html = service.report_html(store, ids[LOAF])
    assert "Descriptive profile" in html and "Pillai" in html and "Spider chart" in html
    assert f"<td>{LOAF_REVERSED}</td>" in html  # the reversing panelist is named
    assert "Descriptive profile" not in service.report_html(store, ids[COATINGS])


def test_the_panel_size_from_an_earlier_trials_error(demo):
    store, ids = demo
    earlier = service.analyse_trial(store, ids[COATINGS]).attribute("crispness")
    err = rating_error_sd(earlier.anova)
    assert err.sd == pytest.approx(math.sqrt(earlier.anova.term("error").ms), rel=1e-12)
    got = service.rating_panel_size_needed(store, ids[LOAF], from_trial=ids[COATINGS],
                                           attribute="crispness")
    want = rating_panel_size(1.0, sd=err.sd, samples=4)
    assert (got.n, got.sd) == (want.n, pytest.approx(want.sd))
    assert COATINGS in got.sd_source
    errors = service.panel_errors(store, exclude=ids[LOAF])
    assert any(e.trial_id == ids[COATINGS] and e.attribute == "crispness"
               and e.sd == pytest.approx(err.sd) for e in errors)
    assert all(e.trial_id != ids[LOAF] for e in errors)


def test_rating_panel_size_is_none_for_a_forced_choice_trial_and_needs_an_error(demo):
    store, ids = demo
    tri = next(t.id for t in service.list_trials(store) if t.method == "triangle")
    assert service.rating_panel_size_needed(store, tri, sd=1.0) is None
    with pytest.raises(TrialsError, match="error sd"):
        service.rating_panel_size_needed(store, ids[LOAF])


def test_panelist_departures_of_one_attribute(demo):
    store, ids = demo
    at, rule = service.panelist_departures_of(store, ids[LOAF], "sourness")
    assert at.significant and "house rule" in rule
    assert [p.panelist for p in at.panelists if p.flags] == [LOAF_REVERSED]
    with pytest.raises(TrialsError, match="no scores"):
        service.panelist_departures_of(store, ids[LOAF], "no such attribute")
    assert isinstance(pd.DataFrame([p.to_dict() for p in at.panelists]), pd.DataFrame)
