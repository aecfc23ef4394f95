"""The HTML report: self-contained (nothing loaded from the network), escaped, says
when there are no answers, and quotes the same numbers as trials.stats; the PDF
summary opens with pypdf and holds the decision."""

from __future__ import annotations

import io
import re
from html.parser import HTMLParser

import pytest
from pypdf import PdfReader

from tests.unit.test_analysis import (
    SAMPLES3,
    TRIANGLE_24,
    batches3,
    plan_for,
    rating_trial,
    study,
    triangle_answers,
)
from trials.analysis import analyse
from trials.decision import decide, fmt, fmt_p
from trials.model import Answer, Sample, Trial
from trials.printing.report import CAUTION, report_html, report_pdf
from trials.stats.discrimination import difference_test

NASTY = "<b>Crust & Co</b>"
SCRIPTY = "</script><script>alert(1)</script>"


class _Tags(HTMLParser):
    """Every tag with its attributes, and the text of each script element."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []
        self._in_script = False

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        self._in_script = tag == "script"

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_script = False

    def handle_data(self, data):
        if not self._in_script:
            self.text.append(data)


def parse(doc: str) -> _Tags:
    p = _Tags()
    p.feed(doc)
    return p


@pytest.fixture(scope="module")
def rating_report():
    s0, plan, responses, _ = rating_trial()
    samples = (Sample(NASTY, is_control=True), Sample("Crust B"), Sample(SCRIPTY))
    rename = {"Crust A": NASTY, "Crust C": SCRIPTY}
    plan = [type(e)(e.session, e.panelist_code, e.position, e.code,
                    rename.get(e.sample_name, e.sample_name), e.set_index, e.role) for e in plan]
    batches = [type(b)(rename.get(b.sample_name, b.sample_name), b.label, measures=b.measures)
               for b in batches3()]
    responses = list(responses) + [Answer("S1", "P01", plan[0].code, "comment-only", "x",
                                            comment="tasted <i>burnt</i> & dry")]
    s = Trial(name=f"{NASTY} trial", method="rating", samples=samples,
              attributes=s0.attributes, objective="Which crust <script>wins</script>?")
    a = analyse(s, plan, responses, batches=batches)
    return s, a, report_html(s, a, plan=plan, responses=responses, batches=batches)


def test_the_report_loads_nothing_from_the_network(rating_report):
    _, _, doc = rating_report
    tags = parse(doc).tags
    for tag, attrs in tags:
        for key in ("src", "href", "srcset", "data", "action", "poster"):
            value = (attrs.get(key) or "").strip().lower()
            assert not value.startswith(("http:", "https:", "//")), (tag, key, value)
    assert not any(t == "link" for t, _ in tags)  # no external stylesheet or font
    assert not re.search(r"@import|url\(\s*['\"]?(https?:)?//", doc.split("<script", 1)[0])
    scripts = [a for t, a in tags if t == "script"]
    assert scripts and all("src" not in a for a in scripts)
    # the plotly.js bundle is inline exactly once, and every chart is drawn
    assert doc.count("Plotly.newPlot") >= 3
    assert len(re.findall(r"/\*\*\s*\n\s*\* plotly\.js v", doc)) == 1


def test_user_text_is_escaped_everywhere(rating_report):
    _, _, doc = rating_report
    assert NASTY not in doc and "<i>burnt</i>" not in doc
    assert "&lt;b&gt;Crust &amp; Co&lt;/b&gt;" in doc
    # the sample named like a closing script tag never closes a script element
    assert doc.count("</script>") == doc.count("<script")
    text = "".join(parse(doc).text)
    assert NASTY in text and "tasted <i>burnt</i> & dry" in text and "alert(1)" in text
    assert not any(t == "b" for t, _ in parse(doc).tags)


def test_the_report_quotes_the_anova_and_the_measures(rating_report):
    s, a, doc = rating_report
    text = " ".join(parse(doc).text)
    liking = a.attribute("liking").anova
    row = liking.term("sample")
    assert f"F = {fmt(row.F)} on 2 and 14 df" in text
    for sample, letters in liking.groups.items():
        assert f"{sample} {fmt(liking.means[sample], 1)} {letters}" in text
    assert "one-way ANOVA across batches" in text and "salt" in text
    assert "not proof" in text and CAUTION in text
    assert "Panelists are known by their codes only" in text


def test_a_trial_without_answers_gives_a_report_that_says_so():
    plan = plan_for("triangle", TRIANGLE_24)
    s = study("triangle")
    doc = report_html(s, analyse(s, plan, []), plan=plan, responses=[])
    text = " ".join(parse(doc).text)
    assert "No answers yet" in text and "no answers yet" in text
    assert "24" in text and "Plotly.newPlot" not in doc  # plan shown, no chart
    assert CAUTION in text


def test_the_triangle_report_matches_the_exact_test_and_draws_pc_against_critical():
    plan = plan_for("triangle", TRIANGLE_24)
    s = study("triangle", pd=0.3, objective="Can tasters tell the crumbs apart?")
    answers = triangle_answers(plan, 15)
    doc = report_html(s, analyse(s, plan, answers), plan=plan, responses=answers)
    ref = difference_test(15, 24, method="triangle", alpha=0.05)
    text = " ".join(parse(doc).text)
    assert f"15 of 24 picked the odd sample ({fmt_p(ref.p_value)}; 13 needed" in text
    assert "critical 13 of 24" in doc and "chance 0.33" in doc
    assert doc.count("Plotly.newPlot") == 1
    assert "ISO 4120" in text


def test_a_given_decision_text_is_printed_escaped():
    plan = plan_for("triangle", ["AAB"])
    s = study("triangle")
    doc = report_html(s, analyse(s, plan, []), plan=plan, responses=[],
                      decision_text="Keep <old> crumb")
    assert "Keep &lt;old&gt; crumb" in doc


def test_the_pdf_summary_holds_the_decision_and_the_caution():
    s, plan, responses, _ = rating_trial()
    a = analyse(s, plan, responses)
    d = decide(a, study=s)
    data = report_pdf(s, a, plan=plan, responses=responses)
    reader = PdfReader(io.BytesIO(data))
    text = " ".join(page.extract_text() for page in reader.pages)
    flat = re.sub(r"\s+", " ", text)
    assert data.startswith(b"%PDF") and len(reader.pages) >= 1
    assert re.sub(r"\s+", " ", d.headline) in flat
    assert "informed consent" in flat
    weird = Trial(name=NASTY, method="rating", samples=SAMPLES3, attributes=s.attributes)
    assert NASTY in " ".join(p.extract_text() for p in
                             PdfReader(io.BytesIO(report_pdf(weird, analyse(weird, plan, responses),
                                                             plan=plan,
                                                             responses=responses))).pages)


def test_the_pdf_summary_prints_the_anova_and_the_means_of_every_attribute():
    from trials.stats.ratings import rating_anova

    s, plan, responses, truth = rating_trial()
    a = analyse(s, plan, responses)
    text = " ".join(pg.extract_text() for pg in
                    PdfReader(io.BytesIO(report_pdf(s, a, plan=plan, responses=responses))).pages)
    flat = re.sub(r"\s+", " ", text)
    for name in ("liking", "crunch"):
        ref = rating_anova(truth[truth["attribute"] == name])  # recomputed apart from the PDF
        assert fmt(ref.term("sample").F) in flat
        assert f"Tukey HSD {fmt(ref.hsd)}" in flat
        for sample, mean in ref.means.items():
            low, high = ref.ci[sample]
            # one row of the means table: sample, mean, interval, n, letters
            assert (f"{sample} {fmt(mean)} {fmt(low)} to {fmt(high)} {ref.n[sample]} "
                    f"{ref.groups[sample]}") in flat


def test_the_pdf_summary_of_a_triangle_prints_the_counts_and_estimates():
    s = study("triangle")
    plan = plan_for("triangle", ["AAB", "ABA", "BAA", "BBA", "BAB", "ABB"] * 4)
    a = analyse(s, plan, triangle_answers(plan, 15))
    d = a.choice.difference
    assert (d.n, d.correct) == (24, 15)
    text = " ".join(pg.extract_text() for pg in PdfReader(io.BytesIO(report_pdf(s, a))).pages)
    # 24 assessors need 13 at alpha 0.05 (ISO 4120; see test_discrimination.py)
    assert f"24 15 13 {fmt_p(d.p_value)}" in re.sub(r"\s+", " ", text)


def _serving_plan_trial(method, n=12):
    from trials.design.plan import serving_plan

    plan = serving_plan(method, ["Old crumb", "New crumb"], [f"P{i:02d}" for i in range(n)], rng=7)
    answers = []
    for p in dict.fromkeys(e.panelist_code for e in plan):
        cups = [e for e in plan if e.panelist_code == p]
        codes = [c.code for c in cups if c.sample_name == "New crumb"]
        if method == "tetrad":
            answers.append(Answer("1", p, " ".join(codes[:2]), "choice", ""))
        elif method == "duo-trio":
            ref = next(c for c in cups if c.role == "R")
            match = next(c for c in cups if c is not ref and c.sample_name == ref.sample_name)
            answers.append(Answer("1", p, match.code, "choice", ""))
        elif method == "triangle":
            names = [c.sample_name for c in cups]
            odd = next(c for c in cups if names.count(c.sample_name) == 1)
            answers.append(Answer("1", p, odd.code, "choice", ""))
        else:
            answers.append(Answer("1", p, codes[0], "choice", ""))
    return study(method, pd=0.3), plan, answers


@pytest.mark.parametrize("method", ["triangle", "duo-trio", "2afc", "3afc", "tetrad",
                                    "paired-preference"])
def test_every_forced_choice_method_reports_on_a_plan_from_the_design_module(method):
    s, plan, answers = _serving_plan_trial(method)
    a = analyse(s, plan, answers)
    # every answer above is the correct one (or, for preference, the new crumb)
    assert (a.choice.counts.correct, a.choice.counts.n, a.problems) == (12, 12, ())
    doc = report_html(s, a, plan=plan, responses=answers)
    text = " ".join(parse(doc).text)
    assert decide(a).headline in text and "Plotly.newPlot" in doc


def test_a_ranking_report_shows_the_rank_sums():
    from trials.model import PlanEntry

    s = Trial(name="Ranks", method="ranking", samples=SAMPLES3)
    plan, responses, code = [], [], 600
    for p in range(6):
        for pos, sample in enumerate(SAMPLES3, start=1):
            plan.append(PlanEntry("S1", f"P{p}", pos, str(code), sample.name, 0))
            responses.append(Answer("S1", f"P{p}", str(code), "rank",
                                    str(pos if p % 3 else 4 - pos)))
            code += 1
    a = analyse(s, plan, responses)
    doc = report_html(s, a, plan=plan, responses=responses)
    text = " ".join(parse(doc).text)
    assert "Rank sums" in doc and "Friedman chi-square" in text
    for sample, total in a.ranking.result.rank_sums.items():
        assert f"{sample} {fmt(total, 1)}" in text


def test_an_incomplete_block_ranking_report_names_durbin_in_html_and_pdf():
    from tests.unit.test_decision import ice_cream_ranking_trial

    s, plan, responses = ice_cream_ranking_trial()
    a = analyse(s, plan, responses)
    text = " ".join(parse(report_html(s, a, plan=plan, responses=responses)).text)
    assert "Durbin (1951)" in text and "Durbin chi-square" in text
    assert "Friedman" not in text
    pdf = " ".join(pg.extract_text() for pg in
                   PdfReader(io.BytesIO(report_pdf(s, a, plan=plan, responses=responses))).pages)
    assert f"Durbin (1951) chi-square {fmt(12.0)} on 6 df" in " ".join(pdf.split())
