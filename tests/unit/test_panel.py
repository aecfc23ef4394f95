"""Panel performance checked against scipy's one-way ANOVA and numpy's correlation."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from trials.errors import TrialsError
from trials.stats.panel import panel_performance


def _panel(seed=2, odd_one=True):
    rng = np.random.default_rng(seed)
    rows = []
    for p in range(6):
        for s, mu in zip("ABCD", [3, 5, 6, 8]):
            for r in range(3):
                m = 5.5 if (odd_one and p == 5) else mu  # P5 cannot tell the samples apart
                rows.append((f"P{p}", s, r + 1, m + rng.normal(0, 1.0)))
    return pd.DataFrame(rows, columns=["panelist", "sample", "replicate", "score"])


def test_each_panelist_f_and_mse_match_scipy_one_way_anova():
    d = _panel()
    res = panel_performance(d)
    for perf in res.panelists:
        own = d[d["panelist"] == perf.panelist]
        groups = [g["score"].to_numpy() for _, g in own.groupby("sample")]
        ref = stats.f_oneway(*groups)
        assert perf.F == pytest.approx(ref.statistic, rel=1e-9)
        assert perf.p_value == pytest.approx(ref.pvalue, rel=1e-9)
        within = sum(((g - g.mean()) ** 2).sum() for g in groups) / (12 - 4)
        assert perf.mse == pytest.approx(within, rel=1e-9) and perf.df_error == 8


def test_agreement_is_the_correlation_with_the_other_panelists_means():
    d = _panel()
    res = panel_performance(d)
    means = d.groupby(["panelist", "sample"])["score"].mean().unstack()
    for perf in res.panelists:
        others = means.drop(index=perf.panelist).mean()
        assert perf.agreement == pytest.approx(np.corrcoef(means.loc[perf.panelist], others)[0, 1])


def test_a_panelist_who_cannot_tell_the_samples_apart_is_flagged():
    res = panel_performance(_panel())
    assert res.flagged() == ("P5",)
    flags = res.panelists[5].flags
    assert any("does not discriminate" in f for f in flags)
    assert "house rule" in res.rule


def test_without_replicates_only_agreement_is_computed():
    d = _panel(odd_one=False)
    d = d[d["replicate"] == 1]
    res = panel_performance(d, replicate=None)
    assert all(p.F is None and p.mse is None for p in res.panelists)
    assert all(p.agreement is not None for p in res.panelists)


def test_a_duplicated_replicate_is_refused():
    d = _panel()
    d.loc[1, "replicate"] = 1
    with pytest.raises(TrialsError, match="more than once"):
        panel_performance(d)
