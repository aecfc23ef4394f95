"""The command line on a store, and the invented demo: seeded once, its claims checked
against scipy and statsmodels."""

from __future__ import annotations

import json

import pandas as pd
import pytest
import scipy.stats
import statsmodels.api as sm
import statsmodels.formula.api as smf

from trials import demo, service
from trials.cli import main
from trials.demo import seed_demo

ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def demo_url(tmp_path_factory):
    url = f"sqlite:///{tmp_path_factory.mktemp('demo') / 'demo.db'}"
    store = service.open_store(url)
    seed_demo(store)
    store.close()
    return url


def test_the_demo_seeds_its_trials_once(demo_url):
    store = service.open_store(demo_url)
    first = service.list_trials(store)
    again = seed_demo(store)
    assert sorted(s.id for s in again) == sorted(s.id for s in first)
    assert len(service.list_trials(store)) == 7  # six trials and the recipe experiment's
    assert len(service.list_experiments(store)) == 1
    assert len(service.list_panelists(store)) == 30
    for s in first:
        assert all(b.signed_off for b in service.list_batches(store, s.id))
    store.close()


def test_the_demo_triangle_shows_a_difference_by_the_exact_binomial_test(demo_url):
    store = service.open_store(demo_url)
    sid = next(s.id for s in service.list_trials(store) if s.method == "triangle")
    frame = service.answers_frame(store, sid)
    correct = sum(p.count(r) == 1 for p, r in zip(frame["pattern"], frame["role"], strict=True))
    assert (correct, len(frame)) == (16, 27)
    # scipy.stats.binomtest, one-sided against the triangle's guessing probability 1/3
    p = scipy.stats.binomtest(16, 27, 1 / 3, alternative="greater").pvalue
    assert p < 0.05
    store.close()


def test_the_demo_coatings_differ_in_crispness_but_not_in_saltiness(demo_url):
    store = service.open_store(demo_url)
    sid = next(s.id for s in service.list_trials(store) if s.name == demo.COATINGS)
    frame = service.answers_frame(store, sid)
    assert frame["panelist"].nunique() == 12 and frame["sample"].nunique() == 4
    p = {}
    for attr in ("crispness", "saltiness", "overall liking"):
        part = frame[frame["attribute"] == attr]
        fit = smf.ols("score ~ C(sample) + C(panelist)", data=part).fit()  # statsmodels
        p[attr] = sm.stats.anova_lm(fit, typ=2).loc["C(sample)", "PR(>F)"]
    assert p["crispness"] < 0.001 and p["saltiness"] > 0.05
    # Williams orders (trials.design): each coating once in each position per 4 panelists
    entries = service.plan(store, sid)
    counts = pd.crosstab(pd.Series([e.sample_name for e in entries]),
                         pd.Series([e.position for e in entries]))
    assert (counts.to_numpy() == 3).all()
    m = service.measures_frame(store, sid)
    assert set(m["name"]) >= {"yield", "core temperature", "oil uptake", "fryer temperature"}
    store.close()


def test_the_committed_sample_data_is_what_the_demo_writes(tmp_path):
    written = demo.write_sample_data(tmp_path)
    for path in written:
        committed = ROOT / "sample_data" / path.name
        assert committed.read_text(encoding="utf-8") == path.read_text(encoding="utf-8"), path.name
    assert "invented" in (ROOT / "sample_data" / "README.md").read_text(encoding="utf-8")


def test_the_cli_seeds_lists_shows_exports_and_imports_a_trial(tmp_path, capsys):
    url = f"sqlite:///{tmp_path / 'cli.db'}"
    code, out, _ = _run(capsys, "demo", "--db", url, "--json")
    assert code == 0
    seeded = json.loads(out)["studies"]
    code, out, _ = _run(capsys, "study", "list", "--db", url, "--json")
    listed = json.loads(out)["studies"]
    assert code == 0 and {s["id"] for s in listed} == {s["id"] for s in seeded}
    assert {"id", "name", "method", "status"} <= set(listed[0])
    sid = next(s["id"] for s in listed if s["name"] == demo.COATINGS)
    code, out, _ = _run(capsys, "study", "show", str(sid), "--db", url, "--json")
    shown = json.loads(out)["study"]
    assert (shown["panelists"], shown["plan_size"], shown["responses"]) == (12, 48, 144)
    assert all(v.startswith("/taste?t=") for v in shown["links"].values())
    out_file = tmp_path / "answers.csv"
    code, out, _ = _run(capsys, "export", "responses", "--study", str(sid), "--out",
                        str(out_file), "--db", url, "--json")
    assert code == 0 and json.loads(out) == {"rows": 144, "path": str(out_file)}
    code, out, _ = _run(capsys, "import", "responses", str(out_file), "--study", str(sid),
                        "--db", url, "--json")
    assert code == 0 and json.loads(out) == {
        "imported": 0, "already_on_record": 144,
        "message": "All 144 answers in this file are already on record; nothing new imported."}
    code, out, _ = _run(capsys, "import", "responses", str(out_file), "--study", str(sid),
                        "--db", url)
    assert code == 0 and ("message: All 144 answers in this file are already on record; "
                          "nothing new imported.") in out


def test_a_bad_import_on_the_cli_exits_2_naming_each_bad_row(tmp_path, capsys):
    url = f"sqlite:///{tmp_path / 'cli.db'}"
    _run(capsys, "demo", "--db", url, "--json")
    store = service.open_store(url)
    sid = next(s.id for s in service.list_trials(store) if s.name == demo.COATINGS)
    e = service.plan(store, sid)[0]
    before = len(service.list_answers(store, sid))
    bad = tmp_path / "bad.csv"
    bad.write_text("session,panelist,code,attribute,value\n"
                   f"1,{e.panelist_code},{e.code},crispness,12\n"
                   f"1,P99,{e.code},crispness,3\n", encoding="utf-8")
    code, out, err = _run(capsys, "import", "responses", str(bad), "--study", str(sid),
                          "--db", url, "--json")
    assert code == 2 and out == ""
    assert "row 2, column 'value': expected a whole number from 1 to 9, got '12'" in err
    assert "row 3, column 'panelist': panelist 'P99' has no serving plan" in err
    assert len(service.list_answers(store, sid)) == before
    store.close()


def test_report_writes_the_pdf_summary_for_a_pdf_name_and_html_otherwise(demo_url, tmp_path,
                                                                         capsys):
    from pypdf import PdfReader

    store = service.open_store(demo_url)
    brioche = next(t for t in service.list_trials(store) if t.name == demo.BRIOCHE)
    decided = service.get_trial(store, brioche.id)
    store.close()
    pdf, html = tmp_path / "summary.pdf", tmp_path / "report.html"
    assert _run(capsys, "report", "--db", demo_url, "--trial", str(brioche.id),
                "--out", str(pdf))[0] == 0
    assert pdf.read_bytes().startswith(b"%PDF")
    text = " ".join(p.extract_text() for p in PdfReader(pdf).pages)
    assert "Decision recorded by the panel leader" in text
    assert decided.decision.split()[0] in text  # the leader's own words are printed
    assert _run(capsys, "report", "--db", demo_url, "--trial", str(brioche.id),
                "--out", str(html))[0] == 0
    assert html.read_text(encoding="utf-8").lstrip().lower().startswith("<!doctype html")
