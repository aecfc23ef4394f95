"""`trials analyze profile FILE --json` and `trials plan --method rating` through
trials.cli.main, on the committed invented loaf profile (sample_data)."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest

from trials.cli import main
from trials.stats.power import rating_panel_size
from trials.stats.profile import descriptive_profile

LOAF = Path(__file__).resolve().parents[2] / "sample_data" / "loaf_profile.csv"


def _run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_analyze_profile_prints_the_profile_of_the_file(capsys):
    code, out, err = _run(capsys, "analyze", "profile", str(LOAF), "--replicate", "replicate",
                          "--boot", "40", "--seed", "3", "--json")
    assert code == 0, err
    got = json.loads(out)
    assert set(got) == {"means", "pca", "manova", "interaction", "notes"}
    want = descriptive_profile(pd.read_csv(LOAF), replicate="replicate", n_boot=40, rng=3)
    assert got["manova"]["wilks"] == pytest.approx(want.manova.wilks, rel=1e-12)
    assert got["pca"]["explained"] == pytest.approx(list(want.pca.explained), rel=1e-12)
    assert got["pca"]["ellipses"][0]["axes"] == pytest.approx(list(want.pca.ellipses[0].axes))
    assert [t["statistic"] for t in got["manova"]["tests"]] == [
        "wilks", "pillai", "hotelling_lawley", "roy"]


def test_analyze_profile_refuses_a_missing_column_and_too_many_virtual_panels(capsys):
    code, _, err = _run(capsys, "analyze", "profile", str(LOAF), "--attribute", "word",
                        "--json")
    assert code == 2 and "word" in err
    code, _, err = _run(capsys, "analyze", "profile", str(LOAF), "--boot", "10000000",
                        "--json")
    assert code == 2 and "--boot" in err


def test_plan_for_a_rating_trial_prints_the_panel_size(capsys):
    code, out, err = _run(capsys, "plan", "--method", "rating", "--delta", "1", "--sd", "1.2",
                          "--samples", "4", "--json")
    assert code == 0, err
    got = json.loads(out)
    want = rating_panel_size(1.0, sd=1.2, samples=4)
    assert got["n"] == want.n and got["power"] == pytest.approx(want.power)
    assert got["design"] == "blocked" and "noncentral F" in got["method"]
    code, out, _ = _run(capsys, "plan", "--method", "rating", "--delta", "1", "--sd", "1.2",
                        "--samples", "4", "--design", "monadic", "--json")
    assert code == 0 and json.loads(out)["design"] == "monadic"


@pytest.mark.parametrize("argv,says", [
    (["plan", "--method", "rating", "--sd", "1", "--samples", "3"], "--delta"),
    (["plan", "--method", "rating", "--delta", "1", "--samples", "3"], "--sd"),
    (["plan", "--method", "rating", "--delta", "1", "--sd", "1", "--samples", "1"], "samples"),
    (["plan", "--method", "triangle"], "--pd"),
])
def test_plan_refuses_what_it_lacks(capsys, argv, says):
    code, _, err = _run(capsys, *argv, "--json")
    assert code == 2 and says in err
