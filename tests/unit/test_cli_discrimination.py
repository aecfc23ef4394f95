"""The statistics commands of the command line print one JSON object with the keys of
DESIGN.md, and bad input exits with status 2 and a message on stderr."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
from scipy import stats

from trials.cli import main

KEYS = {
    "critical": {"method", "n", "alpha", "critical"},
    "difference": {"method", "n", "correct", "alpha", "p_value", "significant", "critical",
                   "pc", "pd", "pd_ci", "dprime", "dprime_ci", "ci_method"},
    "similarity": {"method", "n", "correct", "pd", "beta", "similar", "max_correct", "pd_upper"},
    "plan": {"method", "pd", "alpha", "beta", "n", "critical", "power", "definition"},
    "dprime": {"method", "pc", "dprime"},
}


def run(capsys, *argv: str) -> tuple[int, dict | None, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, (json.loads(out) if code == 0 else None), err


def test_critical_prints_the_triangle_value_for_24_panelists(capsys):
    # ISO 4120 / ASTM E1885 table A.1 (from memory; exact binomial, checked below)
    code, data, err = run(capsys, "critical", "--method", "triangle", "--n", "24", "--json")
    assert code == 0 and err == ""
    assert set(data) >= KEYS["critical"]
    assert data["critical"] == 13
    assert stats.binom.sf(12, 24, 1 / 3) <= 0.05 < stats.binom.sf(11, 24, 1 / 3)


def test_critical_prints_null_where_no_count_reaches_alpha(capsys):
    code, data, _ = run(capsys, "critical", "--method", "triangle", "--n", "2", "--json")
    assert code == 0 and data["critical"] is None


def test_json_flag_may_come_first(capsys):
    code, data, _ = run(capsys, "critical", "--json", "--method", "2afc", "--n", "20",
                        "--alpha", "0.01")
    assert code == 0 and data["critical"] == 16 and data["alpha"] == 0.01
    assert stats.binom.sf(15, 20, 0.5) <= 0.01 < stats.binom.sf(14, 20, 0.5)


def test_difference_prints_every_key_and_the_binomtest_p_value(capsys):
    code, data, _ = run(capsys, "difference", "--method", "triangle", "--correct", "13",
                        "--n", "24", "--json")
    assert code == 0 and set(data) >= KEYS["difference"]
    assert data["p_value"] == pytest.approx(
        stats.binomtest(13, 24, 1 / 3, alternative="greater").pvalue)
    assert data["significant"] is True
    assert len(data["pd_ci"]) == 2 and data["pd_ci"][0] <= data["pd"] <= data["pd_ci"][1]
    assert data["dprime_ci"][0] <= data["dprime"] <= data["dprime_ci"][1]


def test_difference_for_paired_preference_is_two_sided(capsys):
    code, data, _ = run(capsys, "difference", "--method", "paired-preference", "--correct",
                        "21", "--n", "30", "--json")
    assert code == 0
    assert data["p_value"] == pytest.approx(stats.binomtest(21, 30, 0.5).pvalue)


def test_similarity_prints_its_keys(capsys):
    code, data, _ = run(capsys, "similarity", "--method", "triangle", "--correct", "20",
                        "--n", "66", "--pd", "0.3", "--json")
    assert code == 0 and set(data) >= KEYS["similarity"]
    assert data["beta"] == 0.05  # the DESIGN.md default for similarity
    assert data["similar"] == (data["correct"] <= data["max_correct"])


def test_plan_prints_its_keys_with_the_default_beta(capsys):
    code, data, _ = run(capsys, "plan", "--method", "duo-trio", "--pd", "0.4", "--json")
    assert code == 0 and set(data) >= KEYS["plan"]
    assert data["beta"] == 0.2 and data["definition"] in ("stable", "first")
    assert data["power"] >= 0.8


def test_dprime_converts_both_ways(capsys):
    code, data, _ = run(capsys, "dprime", "--method", "2afc", "--pc", "0.76", "--json")
    assert code == 0 and set(data) >= KEYS["dprime"]
    assert data["dprime"] == pytest.approx(2**0.5 * stats.norm.ppf(0.76), abs=1e-8)
    code, data, _ = run(capsys, "dprime", "--method", "2afc", "--dprime", "1", "--json")
    assert data["pc"] == pytest.approx(stats.norm.cdf(2**-0.5))


@pytest.mark.parametrize(("argv", "quoted"), [
    (["critical", "--method", "triangle", "--n", "0"], "0"),
    (["critical", "--method", "triangle", "--n", "10", "--alpha", "1.5"], "1.5"),
    (["difference", "--method", "triangle", "--correct", "30", "--n", "24"], "30"),
    (["difference", "--method", "triangle", "--correct", "-2", "--n", "24"], "-2"),
    (["similarity", "--method", "triangle", "--correct", "3", "--n", "24", "--pd", "2"], "2"),
    (["plan", "--method", "triangle", "--pd", "0.3", "--beta", "0"], "0"),
    (["dprime", "--method", "triangle", "--pc", "1.4"], "1.4"),
    (["dprime", "--method", "triangle"], "exactly one"),
])
def test_bad_input_exits_2_with_a_message_on_stderr(capsys, argv, quoted):
    code, _, err = run(capsys, *argv, "--json")
    assert code == 2
    assert err.startswith("trials: ") and quoted in err


def test_unknown_method_is_refused_by_the_parser(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["critical", "--method", "pentad", "--n", "10", "--json"])
    assert exc.value.code == 2
    assert "pentad" in capsys.readouterr().err


def test_module_entry_point_prints_one_json_object():
    proc = subprocess.run([sys.executable, "-m", "trials.cli", "critical", "--method",
                           "triangle", "--n", "30", "--json"], capture_output=True, text=True,
                          check=False)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["critical"] == 15  # ISO 4120 table A.1, from memory
