"""CATA statistics (issue 17, item 2) against statsmodels (``cochrans_q``, ``mcnemar``),
scipy (Welch's t-test, the chi-square of the table) and an independent eigen-decomposition
for the correspondence analysis. No published worked example is used (none at hand); the
invented tick tables are seeded."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from statsmodels.stats.contingency_tables import cochrans_q as sm_cochrans_q
from statsmodels.stats.contingency_tables import mcnemar as sm_mcnemar

from trials.errors import TrialsError
from trials.stats.cata import (
    cochran_q,
    correspondence_analysis,
    mcnemar_exact,
    penalty_lift,
    word_tests,
)

SAMPLES = ["Plain scone", "Cheese scone", "Fruit scone"]
WORDS = ["crumbly", "salty", "sweet", "dry", "buttery"]


def seeded_ticks(seed=5, panel=24):
    rng = np.random.default_rng(seed)
    chance = {"crumbly": (0.5, 0.4, 0.5), "salty": (0.2, 0.8, 0.1), "sweet": (0.2, 0.1, 0.85),
              "dry": (0.5, 0.3, 0.3), "buttery": (0.4, 0.6, 0.4)}
    rows = []
    for p in range(panel):
        for j, s in enumerate(SAMPLES):
            for w in WORDS:
                rows.append({"panelist": f"Q{p:02d}", "sample": s, "word": w,
                             "tick": int(rng.random() < chance[w][j])})
    return pd.DataFrame(rows)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_cochrans_q_matches_statsmodels(seed):
    x = np.random.default_rng(seed).integers(0, 2, size=(20, 4))
    q, df, p = cochran_q(x)
    ref = sm_cochrans_q(x)
    assert q == pytest.approx(ref.statistic, rel=1e-12) and df == ref.df
    assert p == pytest.approx(ref.pvalue, rel=1e-10)


def test_cochrans_q_without_informative_panelists_is_none():
    assert cochran_q(np.array([[1, 1, 1], [0, 0, 0]]))[0] is None


@pytest.mark.parametrize("b, c", [(7, 2), (0, 5), (3, 3), (12, 4)])
def test_exact_mcnemar_matches_statsmodels(b, c):
    ref = sm_mcnemar(np.array([[4, b], [c, 6]]), exact=True)
    assert mcnemar_exact(b, c) == pytest.approx(ref.pvalue, rel=1e-12)


def test_word_tests_read_every_word_and_pair():
    frame = seeded_ticks()
    got = {t.word: t for t in word_tests(frame)}
    assert list(got) == WORDS
    salty = got["salty"]
    wide = frame[frame.word == "salty"].pivot(index="panelist", columns="sample",
                                              values="tick")[SAMPLES].to_numpy()
    ref = sm_cochrans_q(wide)
    assert salty.q == pytest.approx(ref.statistic) and salty.significant
    pair = next(x for x in salty.pairs if {x.first, x.second} == {"Plain scone", "Cheese scone"})
    i, j = SAMPLES.index(pair.first), SAMPLES.index(pair.second)
    table = pd.crosstab(wide[:, i], wide[:, j]).reindex(index=[0, 1], columns=[0, 1],
                                                        fill_value=0).to_numpy()
    assert pair.p_value == pytest.approx(sm_mcnemar(table, exact=True).pvalue, rel=1e-12)
    assert pair.p_adjusted == pytest.approx(min(1.0, 3 * pair.p_value))


def test_correspondence_analysis_agrees_with_an_eigen_decomposition():
    frame = seeded_ticks()
    table = frame.pivot_table(index="sample", columns="word", values="tick", aggfunc="sum")
    ca = correspondence_analysis(table)
    n = table.to_numpy().sum()
    # total inertia is the table's chi-square over n (scipy, independent of the SVD)
    chi2 = stats.chi2_contingency(table.to_numpy(), correction=False)[0]
    assert ca.total_inertia == pytest.approx(chi2 / n, rel=1e-10)
    assert sum(ca.inertia) == pytest.approx(ca.total_inertia, rel=1e-10)  # 3 samples: 2 dims
    # principal inertias are the eigenvalues of the column profile cross-product, computed
    # with numpy.linalg.eigh on the centred profiles (a different route from the SVD)
    p = table.to_numpy() / n
    r, c = p.sum(1), p.sum(0)
    prof = p / r[:, None] - c  # row profiles minus the average profile
    m = (prof.T * r) @ prof
    w = np.diag(1 / np.sqrt(c))
    eig = np.sort(np.linalg.eigvalsh(w @ m @ w))[::-1][:2]
    assert np.allclose(ca.inertia, eig, rtol=1e-9, atol=1e-14)
    # transition formula: sample coordinates = profiles x word standard coordinates
    g = np.array(ca.word_coords) / np.sqrt(ca.inertia)
    f = (p / r[:, None]) @ g
    assert np.allclose(f, np.array(ca.sample_coords), atol=1e-10)


def test_words_never_ticked_are_dropped_from_the_map():
    table = pd.DataFrame({"a": [3, 1, 2], "b": [0, 0, 0], "c": [1, 4, 2]},
                         index=["x", "y", "z"])
    ca = correspondence_analysis(table)
    assert ca.dropped_words == ("b",) and ca.words == ("a", "c")
    with pytest.raises(TrialsError, match="two words"):
        correspondence_analysis(table[["a", "b"]])


def test_penalty_lift_is_the_mean_difference_with_welchs_test():
    frame = seeded_ticks()
    liking = {"Plain scone": 5.0, "Cheese scone": 6.0, "Fruit scone": 7.5}
    rng = np.random.default_rng(9)
    frame["liking"] = [liking[s] + rng.normal(0, 1) for s in frame["sample"]]
    got = {x.word: x for x in penalty_lift(frame)}
    sub = frame[frame.word == "sweet"]
    a, b = sub[sub.tick == 1].liking, sub[sub.tick == 0].liking
    assert got["sweet"].lift == pytest.approx(a.mean() - b.mean(), rel=1e-12)
    assert got["sweet"].p_value == pytest.approx(
        stats.ttest_ind(a, b, equal_var=False).pvalue, rel=1e-9)
    assert got["sweet"].lift > 0 and got["salty"].lift < got["sweet"].lift


def test_the_command_line_analyses_a_tidy_tick_file(tmp_path, capsys):
    import json

    from trials.cli import main

    frame = seeded_ticks()
    frame["liking"] = [6 + (s == "Fruit scone") for s in frame["sample"]]
    path = tmp_path / "ticks.csv"
    frame.to_csv(path, index=False)
    code = main(["analyze", "cata", str(path), "--liking", "liking", "--json"])
    data = json.loads(capsys.readouterr().out)
    assert code == 0 and [w["word"] for w in data["words"]] == WORDS
    wide = frame[frame.word == "sweet"].pivot(index="panelist", columns="sample",
                                              values="tick")[SAMPLES].to_numpy()
    sweet = next(w for w in data["words"] if w["word"] == "sweet")
    assert sweet["q"] == pytest.approx(sm_cochrans_q(wide).statistic)
    assert len(data["penalty_lift"]) == len(WORDS)
    assert data["correspondence"]["samples"] == SAMPLES
