"""`trials analyze ratings|ranks FILE.csv --json` through trials.cli.main."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pandas as pd
import pytest
from scipy import stats

from trials.cli import main

DATA = Path(__file__).parent / "data"


def _run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_analyze_ratings_prints_the_contract_keys_for_a_block_design(capsys):
    code, out, err = _run(capsys, "analyze", "ratings", str(DATA / "rcbd_vascular_graft.csv"),
                          "--json")
    assert code == 0, err
    result = json.loads(out)
    assert {"anova", "means", "hsd", "groups"} <= set(result)
    terms = [row["term"] for row in result["anova"]]
    assert terms == ["sample", "panelist", "error"]
    assert set(result["anova"][0]) == {"term", "df", "ss", "ms", "F", "p"}
    # Montgomery Example 4.1 (from memory): F = 8.11 for the treatments
    assert result["anova"][0]["F"] == pytest.approx(8.11, abs=0.005)
    assert result["groups"]["p9100"] == "b"
    assert result["hsd"] > 0


def test_analyze_ratings_with_replicates_names_the_interaction(capsys, tmp_path):
    rows = []
    for p in range(4):
        for s, mu in zip("XYZ", [4, 6, 7]):
            for r in (1, 2):
                rows.append({"who": f"P{p}", "variant": s, "rep": r, "liking": mu + (p + r) % 3})
    path = tmp_path / "reps.csv"
    pd.DataFrame(rows).to_csv(path, index=False)
    code, out, err = _run(
        capsys, "analyze", "ratings", str(path), "--score", "liking", "--sample", "variant",
        "--panelist", "who", "--replicate", "rep", "--json",
    )
    assert code == 0, err
    result = json.loads(out)
    assert [row["term"] for row in result["anova"]] == [
        "sample", "panelist", "sample:panelist", "error"]
    assert "tested against sample:panelist" in result["method"]


def test_analyze_ratings_with_a_bad_score_exits_2_naming_the_line(capsys, tmp_path):
    path = tmp_path / "bad.csv"
    text = (DATA / "rcbd_vascular_graft.csv").read_text().splitlines()
    text[3] = text[3].rsplit(",", 1)[0] + ",n/a"
    path.write_text("\n".join(text) + "\n")
    code, out, err = _run(capsys, "analyze", "ratings", str(path), "--json")
    assert code == 2 and out == ""
    assert "line(s) 4" in err and "'n/a'" in err


def test_analyze_ratings_with_a_duplicated_row_exits_2_naming_both_lines(capsys, tmp_path):
    path = tmp_path / "dup.csv"
    lines = (DATA / "rcbd_vascular_graft.csv").read_text().splitlines()
    path.write_text("\n".join(lines + [lines[1]]) + "\n")
    code, _, err = _run(capsys, "analyze", "ratings", str(path), "--json")
    assert code == 2
    assert f"line(s) 2, {len(lines) + 1}" in err


def test_analyze_ranks_prints_the_contract_keys(capsys, tmp_path):
    rows = [("a", "X", 1), ("a", "Y", 2), ("a", "Z", 3), ("b", "X", 1), ("b", "Y", 3),
            ("b", "Z", 2), ("c", "X", 1), ("c", "Y", 2), ("c", "Z", 3), ("d", "X", 2),
            ("d", "Y", 1), ("d", "Z", 3)]
    path = tmp_path / "ranks.csv"
    pd.DataFrame(rows, columns=["panelist", "sample", "rank"]).to_csv(path, index=False)
    code, out, err = _run(capsys, "analyze", "ranks", str(path), "--json")
    assert code == 0, err
    result = json.loads(out)
    assert {"statistic", "df", "p_value", "rank_sums", "lsd"} <= set(result)
    ref = stats.friedmanchisquare([1, 1, 1, 2], [2, 3, 2, 1], [3, 2, 3, 3])
    assert result["statistic"] == pytest.approx(ref.statistic)
    assert result["rank_sums"] == {"X": 5.0, "Y": 8.0, "Z": 11.0}
    assert result["df"] == 2


def test_analyze_ranks_of_incomplete_blocks_runs_durbin(capsys, tmp_path):
    path = tmp_path / "bib.csv"
    shutil.copy(DATA / "durbin_ice_cream.csv", path)
    code, out, err = _run(capsys, "analyze", "ranks", str(path), "--json")
    assert code == 0, err
    result = json.loads(out)
    assert result["test"] == "durbin"
    assert result["statistic"] == pytest.approx(12.0)  # Conover (1999), from memory


def test_analyze_ranks_with_a_missing_column_exits_2(capsys, tmp_path):
    path = tmp_path / "nocol.csv"
    path.write_text("panelist,sample,score\na,X,1\na,Y,2\n")
    code, out, err = _run(capsys, "analyze", "ranks", str(path), "--json")
    assert code == 2 and out == ""
    assert "'rank'" in err
