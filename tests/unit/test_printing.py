"""Ballots, serving sheets and cup labels: what a panelist may see, what the kitchen
needs, and that every method of the registry prints.

The trials, samples and codes below are invented. The PDFs are read back with pypdf.
"""

from __future__ import annotations

import ast
import datetime as dt
import io
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from pypdf import PdfReader

from trials.errors import TrialsError, UnknownMethodError
from trials.methods import METHODS, Family, get_method
from trials.model import (
    AllergenConflict,
    Attribute,
    AttributeKind,
    Batch,
    Measurement,
    Panelist,
    PlanEntry,
    Sample,
    Trial,
)
from trials.printing import (
    A4_3X7,
    A4_3X8,
    LETTER_3X10,
    LabelLayout,
    PrintResult,
    ballots_pdf,
    labels_pdf,
    serving_sheet_pdf,
)
from trials.printing.ballots import HEDONIC_9, JAR_5
from trials.printing.layout import MM, QUIET_ZONE, printable, qr_matrix

ROOT = Path(__file__).resolve().parents[2]
OUT = ROOT / "test-output"

# ---------------------------------------------------------------- invented fixtures

SAMPLES = (
    Sample("Sesame Crust Trial Loaf", is_control=True, allergens=("gluten", "sesame"),
           description="Classic crust, eighteen hour cold proof"),
    Sample("Zephyr Rye Ember Boule", allergens=("gluten",), description="Rye sour, dark bake"),
    Sample("Honeyed Oat Lantern Roll", allergens=("gluten", "milk")),
    Sample("Caraway Moonfield Bap", allergens=()),
)
# words of the sample names, descriptions and batch labels that must never reach a
# panelist (allergen words such as "sesame" may: they are printed pooled, per session)
SECRET_WORDS = ("Zephyr", "Ember", "Boule", "Honeyed", "Lantern", "Caraway", "Moonfield",
                "Crust Trial Loaf", "Oat Lantern", "eighteen hour", "Rye sour",
                "Batch-Q7", "Batch-W3", "Crust switch trial")
BATCH_LABELS = {SAMPLES[0].name: "Batch-Q7", SAMPLES[1].name: "Batch-W3",
                SAMPLES[2].name: "Batch-Q7", SAMPLES[3].name: "Batch-W3"}
ATTRIBUTES = (
    Attribute("Overall liking", AttributeKind.HEDONIC, 1, 9),
    Attribute("Crust crispness", AttributeKind.INTENSITY, 1, 7),
    Attribute("Saltiness", AttributeKind.JAR, 1, 5),
)
TODAY = dt.date(2026, 3, 4)
BASE_URL = "https://kitchen.example:8501"


def fixed_codes(n: int) -> list[str]:
    """A fixed list of distinct three-digit codes (100..999, a stride prime to 900)."""
    return [str(100 + (17 + 389 * i) % 900) for i in range(n)]


def make_study(method: str, *, name: str = "Crust switch trial") -> Trial:
    spec = get_method(method)
    if spec.served_in_sets:  # forced choice and signal detection: two samples
        samples, attrs = SAMPLES[:2], (ATTRIBUTES[1],)
    elif spec.family is Family.RATING:
        samples, attrs = SAMPLES, ATTRIBUTES
    else:
        samples, attrs = SAMPLES, (ATTRIBUTES[1],)
    return Trial(name, method, id=7, samples=samples, attributes=attrs)


def make_plan(study: Trial, *, panelists: int = 4, sessions=("S1", "S2"),
              sets: int = 1) -> list[PlanEntry]:
    """A plan: forced-choice sets from the registry's patterns (A = control, B = the
    other; the duo-trio reference first, role "R"), or every sample in rotated order."""
    spec = get_method(study.method)
    codes = iter(fixed_codes(900))
    plan: list[PlanEntry] = []
    for session in sessions:
        for p in range(panelists):
            pan = f"P{p + 1:02d}"
            pos = 1
            if spec.served_in_sets:
                for s in range(sets):
                    pattern = spec.patterns[(p + s) % len(spec.patterns)]
                    for k, letter in enumerate(pattern):
                        sample = study.samples[0 if letter == "A" else 1].name
                        role = "R" if (spec.name == "duo-trio" and k == 0) else letter
                        plan.append(PlanEntry(session, pan, pos, next(codes), sample, s,
                                              role, BATCH_LABELS.get(sample, "")))
                        pos += 1
            else:
                n = len(study.samples)
                for k in range(n):
                    sample = study.samples[(k + p) % n].name
                    plan.append(PlanEntry(session, pan, pos, next(codes), sample, 0, "",
                                          BATCH_LABELS.get(sample, "")))
                    pos += 1
    return plan


def tokens_for(plan) -> dict[str, str]:
    return {e.panelist_code: f"/taste?t=tok{e.panelist_code.lower()}xyz" for e in plan}


def reader(result: PrintResult) -> PdfReader:
    return PdfReader(io.BytesIO(result.data))


def page_texts(result: PrintResult) -> list[str]:
    return [p.extract_text() for p in reader(result).pages]


def positioned(page) -> list[tuple[float, float, str]]:
    """(x, y, text) of every text piece of a page."""
    out: list[tuple[float, float, str]] = []

    def visit(text, cm, tm, font, size):
        if text.strip():
            out.append((cm[4] + tm[4], cm[5] + tm[5], text.strip()))

    page.extract_text(visitor_text=visit)
    return out


def drawing(page) -> str:
    """The page's content stream followed by the forms (XObjects) it draws, in the order
    the page draws them (ballots draw repeated content as forms)."""
    xobjects = page["/Resources"].get("/XObject", {})
    xobjects = xobjects.get_object() if xobjects else {}
    content = page.get_contents().get_data().decode("latin-1")
    parts = [content]
    for name in re.findall(r"/(\S+) Do", content):
        parts.append(xobjects["/" + name].get_object().get_data().decode("latin-1"))
    return "\n".join(parts)


def rows_of(page) -> list[list[str]]:
    """Text pieces grouped into lines by their baseline, left to right."""
    lines: dict[float, list[tuple[float, str]]] = {}
    for x, y, t in positioned(page):
        lines.setdefault(round(y, 1), []).append((x, t))
    return [[t for _, t in sorted(v)] for _, v in sorted(lines.items(), reverse=True)]


def code_positions(text: str, codes) -> list[int]:
    """Where each code first appears as a whole word in ``text``."""
    out = []
    for code in codes:
        m = re.search(rf"(?<!\d){re.escape(code)}(?!\d)", text)
        assert m, f"code {code} missing from the page"
        out.append(m.start())
    return out


def ballots_of(plan):
    """The (session, panelist) ballots in print order, with their cups by position."""
    groups: dict[tuple[str, str], list[PlanEntry]] = {}
    for e in plan:
        groups.setdefault((e.session, e.panelist_code), []).append(e)
    return [(k, sorted(v, key=lambda e: e.position)) for k, v in groups.items()]


METHOD_NAMES = [m.name for m in METHODS]

# ---------------------------------------------------------------- ballots


@pytest.mark.parametrize("method", METHOD_NAMES)
def test_every_method_prints_one_ballot_page_per_panelist_and_session(method):
    study = make_study(method)
    plan = make_plan(study)
    result = ballots_pdf(study, plan, today=TODAY)
    assert result.items == 8
    assert result.pages == 8
    assert len(reader(result).pages) == 8


@pytest.mark.parametrize("method", METHOD_NAMES)
def test_each_ballot_shows_its_panelists_codes_in_serving_order(method):
    study = make_study(method)
    plan = make_plan(study)
    texts = page_texts(ballots_pdf(study, plan))
    for text, ((session, panelist), cups) in zip(texts, ballots_of(plan), strict=True):
        assert f"{panelist} · session {session}" in text
        assert f"Session {session}" in text
        positions = code_positions(text, [e.code for e in cups])
        assert positions == sorted(positions), (method, panelist, [e.code for e in cups])
        # no other panelist's codes on this ballot
        others = {e.code for e in plan} - {e.code for e in cups}
        assert not [c for c in others if re.search(rf"(?<!\d){c}(?!\d)", text)]


@pytest.mark.parametrize("method", METHOD_NAMES)
def test_no_sample_name_batch_or_trial_name_reaches_ballots_or_labels(method):
    study = make_study(method)
    plan = make_plan(study)
    for result in (ballots_pdf(study, plan, tokens=tokens_for(plan), base_url=BASE_URL,
                               today=TODAY),
                   labels_pdf(plan)):
        r = reader(result)
        text = "\n".join(p.extract_text() for p in r.pages).lower()
        meta = " ".join(str(v) for v in (r.metadata or {}).values()).lower()
        for s in study.samples:
            assert s.name.lower() not in text and s.name.lower() not in meta
        for word in SECRET_WORDS:
            assert word.lower() not in text, word
            assert word.lower() not in meta, word


@pytest.mark.parametrize("method", METHOD_NAMES)
def test_every_ballot_page_carries_the_cautions(method):
    study = make_study(method)
    plan = make_plan(study)
    for text in page_texts(ballots_pdf(study, plan)):
        assert "tell the panel leader about any allergy, intolerance or dietary" in text
        assert "restriction" in text
        assert "voluntary" in text and "consent" in text
        assert "Allergens in this session's samples" in text


def test_the_allergen_line_pools_the_sessions_samples_and_names_no_code():
    study = make_study("rating")
    plan = make_plan(study, sessions=("S1",))
    # session S2 serves only the allergen-free sample
    plan += [PlanEntry("S2", "P01", 1, "888", SAMPLES[3].name)]
    texts = page_texts(ballots_pdf(study, plan))
    codes = {e.code for e in plan}
    for text in texts[:-1]:
        line = next(ln for ln in text.splitlines() if ln.startswith("Allergens in this"))
        assert line.endswith("gluten, milk, sesame.")  # the union over the four samples
        assert not any(re.search(rf"(?<!\d){c}(?!\d)", line) for c in codes)
    assert "No allergens are declared for this session's samples." in texts[-1]
    assert "sesame" not in texts[-1]


def test_a_panelist_with_a_matching_allergy_or_no_consent_is_asked_to_see_the_leader():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=3)
    people = (Panelist("P01", allergens=("Sesame",), consent_on=TODAY),
              Panelist("P02", consent_on=None),
              Panelist("P03", allergens=("peanut",), consent_on=TODAY))
    t1, t2, t3 = page_texts(ballots_pdf(study, plan, panelists=people))
    assert "Your declared allergies include one listed above" in t1
    assert "No consent is on file" not in t1
    assert "No consent is on file for you" in t2
    assert "Your declared allergies" not in t2
    assert "Your declared allergies" not in t3 and "No consent" not in t3


def test_the_heading_is_neutral_and_the_date_field_is_filled_only_when_given():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=1)
    with_date = page_texts(ballots_pdf(study, plan, today=TODAY))[0]
    without = page_texts(ballots_pdf(study, plan))[0]
    assert with_date.startswith("Tasting ballot")
    assert "2026-03-04" in with_date and "2026-03-04" not in without
    assert "Trial no. 7" in with_date and "Triangle test" in with_date
    assert study.name.lower() not in with_date.lower()


@pytest.mark.parametrize("method", [m for m in METHOD_NAMES
                                    if get_method(m).is_forced_choice])
def test_forced_choice_ballots_print_the_registry_question_and_instructions(method):
    spec = get_method(method)
    study = make_study(method)
    text = page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0]
    flat = " ".join(text.split())
    assert spec.question in flat
    assert " ".join(spec.instructions.split()) in flat


def test_afc_ballots_name_the_attribute_or_leave_a_line_for_it():
    for method in ("2afc", "3afc"):
        study = make_study(method)
        text = page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0]
        assert "Attribute: Crust crispness" in text
        bare = Trial("Crust switch trial", method, samples=SAMPLES[:2])
        text = page_texts(ballots_pdf(bare, make_plan(bare, panelists=1)))[0]
        assert "Attribute (written in by the panel leader)" in text


def test_a_duo_trio_ballot_marks_the_reference_cup_r_with_its_code_first():
    study = make_study("duo-trio")
    plan = make_plan(study, sessions=("S1",), panelists=2)
    page = reader(ballots_pdf(study, plan)).pages[0]
    cups = ballots_of(plan)[0][1]
    ref = next(e for e in cups if e.role == "R")
    pieces = positioned(page)
    r_mark = next((x, y) for x, y, t in pieces if t == "R")
    ref_code = next((x, y) for x, y, t in pieces if t == ref.code)
    others = [(x, y) for x, y, t in pieces if t in {e.code for e in cups} - {ref.code}]
    # the R sits in the reference's box (same box: just left of and above the code)
    assert 0 < ref_code[0] - r_mark[0] < 60 and 0 < r_mark[1] - ref_code[1] < 30
    assert all(x > ref_code[0] for x, _ in others)  # the reference comes first


def test_a_duo_trio_set_without_a_role_takes_its_first_cup_as_the_reference():
    study = make_study("duo-trio")
    plan = [PlanEntry("S1", "P01", i + 1, c, SAMPLES[i // 2].name)
            for i, c in enumerate(("415", "526", "637"))]
    text = page_texts(ballots_pdf(study, plan))[0]
    assert re.search(r"R\s+reference\s+415", text)


def test_tetrad_ballots_ask_for_two_groups():
    study = make_study("tetrad")
    text = page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0]
    assert "Circle two codes" in text and "other group" in text


def test_replicate_sets_in_one_session_print_as_numbered_sets_on_one_ballot():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=2, sets=2)
    result = ballots_pdf(study, plan)
    assert result.pages == 2
    text = page_texts(result)[0]
    assert "Set 1 of 2" in text and "Set 2 of 2" in text


def test_a_rating_ballot_prints_the_standard_anchors():
    study = make_study("rating")
    text = " ".join(page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0].split())
    # 9-point hedonic scale: Peryam and Pilgrim (1957), Food Technol. 11(9):9-14
    for anchor in HEDONIC_9:
        assert anchor in text, anchor
    # 5-point just-about-right scale (common practice)
    for anchor in JAR_5:
        assert anchor in text, anchor
    assert "Very weak" in text and "Very strong" in text  # intensity ends, common practice
    for attr in ATTRIBUTES:
        assert attr.name in text


def test_a_rating_ballot_has_one_box_per_point_per_code_and_attribute():
    study = make_study("rating")
    plan = make_plan(study, sessions=("S1",), panelists=1)
    page = reader(ballots_pdf(study, plan)).pages[0]
    content = drawing(page)
    small_squares = re.findall(r"[-\d.]+ [-\d.]+ 11(?:\.0+)? 11(?:\.0+)? re", content)
    points = sum(a.high - a.low + 1 for a in ATTRIBUTES)  # 9 + 7 + 5
    assert len(small_squares) == points * len(SAMPLES)


def test_the_own_anchors_of_an_attribute_replace_the_defaults():
    attr = Attribute("Crumb softness", AttributeKind.INTENSITY, 0, 4,
                     ("none", "faint", "clear", "strong", "extreme"))
    study = Trial("Crust switch trial", "rating", samples=SAMPLES, attributes=(attr,))
    text = page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0]
    for word in attr.anchors:
        assert word in text
    assert "Very weak" not in text


def test_a_rating_of_twelve_samples_on_three_scales_fits_one_page():
    samples = tuple(Sample(f"Invented variant {k}") for k in range(12))
    study = Trial("Crust switch trial", "rating", samples=samples, attributes=ATTRIBUTES)
    result = ballots_pdf(study, make_plan(study, panelists=2, sessions=("S1",)))
    assert result.pages == 2 == result.items
    # one table of all three scales: a box per point (9 + 7 + 5) for each of the 12 codes
    page = reader(result).pages[0]
    content = drawing(page)
    squares = re.findall(r"[-\d.]+ [-\d.]+ 11(?:\.0+)? 11(?:\.0+)? re", content)
    assert len(squares) == 21 * 12
    text = " ".join(page.extract_text().split())
    for anchor in HEDONIC_9 + JAR_5:
        assert anchor in text


def test_a_ballot_too_long_for_one_page_continues_with_heading_and_cautions():
    samples = tuple(Sample(f"Invented variant {k}", allergens=("egg",)) for k in range(20))
    attrs = ATTRIBUTES + (Attribute("Chewiness", AttributeKind.INTENSITY, 1, 9),)
    study = Trial("Crust switch trial", "rating", samples=samples, attributes=attrs)
    plan = make_plan(study, panelists=1, sessions=("S1",))
    result = ballots_pdf(study, plan)
    assert result.items == 1 and result.pages > 1
    texts = page_texts(result)
    assert "Tasting ballot (continued)" in texts[1]
    for text in texts:
        assert "Allergens in this session's samples (all cups together, not per cup): egg." in text
    # the codes keep serving order across the pages
    joined = "\n".join(texts)
    for attr in attrs:
        block = joined[joined.index(attr.name):]
        codes = [e.code for e in plan]
        assert code_positions(block, codes) == sorted(code_positions(block, codes))


def test_a_ranking_ballot_has_a_rank_box_per_code_for_each_attribute():
    study = Trial("Crust switch trial", "ranking", samples=SAMPLES,
                  attributes=(ATTRIBUTES[1], Attribute("Overall liking")))
    plan = make_plan(study, panelists=1, sessions=("S1",))
    text = page_texts(ballots_pdf(study, plan))[0]
    assert "Crust crispness: rank 1 = the sample with the most crust crispness" in text
    assert "Overall liking: rank 1 = the sample you like most" in text
    assert len(re.findall(r"^rank$", text, flags=re.M)) == 2 * len(SAMPLES)


def test_a_rating_without_attributes_asks_for_overall_liking_on_the_hedonic_scale():
    study = Trial("Crust switch trial", "rating", samples=SAMPLES)
    text = " ".join(page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0].split())
    assert "Overall liking" in text and "Neither like nor dislike" in text


def test_the_qr_code_is_printed_with_its_address_only_when_tokens_and_a_base_url_are_given():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=2)
    tokens = {"P01": "/taste?t=abcdefghjk"}  # P02 has no token
    result = ballots_pdf(study, plan, base_url=BASE_URL + "/", tokens=tokens)
    p1, p2 = reader(result).pages
    url = "https://kitchen.example:8501/taste?t=abcdefghjk"
    assert url in "".join(p1.extract_text().split())
    assert qr_modules(p1) == qr_matrix(url)
    assert "kitchen.example" not in p2.extract_text() and qr_modules(p2) is None
    bare = reader(ballots_pdf(study, plan, tokens=tokens)).pages[0]  # no base_url
    assert "taste?t=" not in bare.extract_text() and qr_modules(bare) is None


def qr_modules(page) -> list[list[bool]] | None:
    """The QR code read back from the page's drawing: the dark rectangles of the QR
    path (one fill of many equal-height rectangles) mapped onto the module grid."""
    from pypdf.generic import ContentStream

    ops = ContentStream(page.get_contents(), page.pdf).operations
    rects: list[tuple[float, float, float, float]] = []
    best: list[tuple[float, float, float, float]] = []
    for operands, op in ops:
        if op == b"re":
            rects.append(tuple(float(v) for v in operands))
        elif op in (b"f", b"F", b"f*", b"S", b"s", b"B", b"b", b"n"):
            heights = {round(h, 4) for *_, h in rects}
            if op in (b"f", b"f*") and len(rects) > 40 and len(heights) == 1:
                best = rects
            rects = []
    if not best:
        return None
    module = best[0][3]
    left = min(x for x, *_ in best)
    top = max(y + h for _, y, _, h in best)
    n = round((max(x + w for x, _, w, _ in best) - left) / module)
    grid = [[False] * n for _ in range(n)]
    for x, y, w, _ in best:
        r = round((top - y) / module) - 1
        c0 = round((x - left) / module)
        for c in range(c0, c0 + round(w / module)):
            grid[r][c] = True
    # the three finder patterns of ISO/IEC 18004 (7 x 7 rings) must be in the corners
    ring = [[max(abs(i - 3), abs(j - 3)) != 2 for j in range(7)] for i in range(7)]
    for r0, c0 in ((0, 0), (0, n - 7), (n - 7, 0)):
        assert [row[c0:c0 + 7] for row in grid[r0:r0 + 7]] == ring
    return grid


def test_the_qr_code_keeps_a_quiet_zone_inside_its_white_square():
    matrix = qr_matrix(BASE_URL + "/taste?t=abc")
    assert len(matrix) >= 21 and (len(matrix) - 17) % 4 == 0  # versions: 21 + 4(v-1)
    assert QUIET_ZONE == 4


# ---------------------------------------------------------------- serving sheet


def make_batches(signed=True):
    return (
        Batch(SAMPLES[0].name, "Batch-Q7", prepared_on=TODAY, prepared_by="Cook A",
              settings=(Measurement("cold proof", 18, "h"), Measurement("oven", 230, "°C")),
              safety_signed_by="Chef K", safety_signed_on=TODAY,
              notes="Slice 1 cm, serve at room temperature"),
        Batch(SAMPLES[1].name, "Batch-W3", prepared_on=TODAY,
              safety_signed_by="Chef K" if signed else ""),
        Batch(SAMPLES[2].name, "Batch-Q7", safety_signed_by="Chef K"),
        Batch(SAMPLES[3].name, "Batch-W3", safety_signed_by="Chef K"),
    )


def sheet_rows(result: PrintResult) -> dict[str, list[str]]:
    """The cup table read back, session -> its rows as text (cells joined by spaces,
    in reading order), from the rows that start with a panelist code."""
    out: dict[str, list[str]] = {}
    session = None
    for page in reader(result).pages:
        for row in rows_of(page):
            joined = " ".join(row)
            if m := re.search(r"·\s+session (\S+)$", joined):
                session = m.group(1)
            if re.fullmatch(r"P\d\d", row[0]) and len(joined.split()) >= 6:
                out.setdefault(session, []).append(joined)
    return out


def key_rows(plan) -> dict[str, list[str]]:
    """What the cup table should read: panelist, position, code, sample, batch."""
    expected: dict[str, list[str]] = {}
    for (session, _), cups in ballots_of(plan):
        expected.setdefault(session, []).extend(
            f"{e.panelist_code} {e.position} {e.code} {e.sample_name} {e.batch_label} "
            for e in cups)
    return expected


@pytest.mark.parametrize("method", METHOD_NAMES)
def test_the_serving_sheet_key_equals_the_plan(method):
    study = make_study(method)
    plan = make_plan(study, panelists=5)
    result = serving_sheet_pdf(study, plan, batches=make_batches())
    assert result.items == 2
    got, expected = sheet_rows(result), key_rows(plan)
    assert list(got) == list(expected) == ["S1", "S2"]
    for session in expected:
        assert len(got[session]) == len(expected[session])
        for row, want in zip(got[session], expected[session]):
            assert row.startswith(want), (row, want)


def test_a_long_serving_sheet_says_kitchen_only_on_every_page_and_keeps_the_key():
    study = make_study("rating")
    plan = make_plan(study, panelists=40, sessions=("S1", "S2"))
    result = serving_sheet_pdf(study, plan, batches=make_batches())
    texts = page_texts(result)
    assert result.pages == len(texts) > 4
    for k, text in enumerate(texts, start=1):
        assert text.count("KITCHEN ONLY: do not show to panelists") == 2
        assert f"page {k} of {len(texts)}" in text
    got, expected = sheet_rows(result), key_rows(plan)
    assert sum(len(v) for v in got.values()) == len(plan)
    for session in expected:
        assert all(r.startswith(w) for r, w in zip(got[session], expected[session]))


def test_the_sheet_flags_unsigned_batches_and_allergen_conflicts():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=3)
    conflicts = (AllergenConflict("P02", SAMPLES[0].name, ("sesame",)),)
    result = serving_sheet_pdf(study, plan, batches=make_batches(signed=False),
                               conflicts=conflicts,
                               panelists=(Panelist("P03", allergens=("Gluten",)),))
    text = " ".join(page_texts(result)[0].split())
    assert (f"FOOD SAFETY: batch Batch-W3 of {SAMPLES[1].name} is not signed off") in text
    assert f"panelist P02 declared sesame, which {SAMPLES[0].name} contains" in text
    # found from the panelist's own declaration: both samples hold gluten
    assert f"panelist P03 declared gluten, which {SAMPLES[1].name} contains" in text
    rows = sheet_rows(result)["S1"]
    assert len(rows) == 9
    for row in rows:
        if SAMPLES[1].name in row:
            assert row.endswith("batch not signed off") or "batch not signed off" in row
        if row.startswith("P02") and SAMPLES[0].name in row:
            assert row.endswith("ALLERGEN: sesame")
        if row.startswith("P01") and SAMPLES[0].name in row:
            assert "ALLERGEN" not in row
    assert "NOT SIGNED OFF for food safety" in text
    assert "signed off by Chef K on 2026-03-04" in text
    assert "cold proof 18 h; oven 230 °C" in text  # settings as preparation notes


def test_the_sheet_flags_a_batch_label_with_no_record():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=1)
    text = " ".join(page_texts(serving_sheet_pdf(study, plan))[0].split())
    assert "no batch record given, food-safety sign-off unknown" in text
    assert "No unsigned batches" not in text


def test_a_clean_session_says_every_batch_is_signed_off_and_no_conflict_was_found():
    study = make_study("triangle")
    plan = make_plan(study, sessions=("S1",), panelists=2)
    text = page_texts(serving_sheet_pdf(study, plan, batches=make_batches()))[0]
    assert ("Every batch is signed off and no allergen conflict was found"
            in " ".join(text.split()))


def test_a_session_with_no_batch_recorded_says_so_rather_than_all_clear():
    import dataclasses

    study = make_study("triangle")
    plan = [dataclasses.replace(e, batch_label="")
            for e in make_plan(study, sessions=("S1",), panelists=2)]
    text = " ".join(page_texts(serving_sheet_pdf(study, plan, batches=[]))[0].split())
    assert "FOOD SAFETY: no batch is recorded for" in text
    assert "Every batch is signed off" not in text and "No unsigned batches" not in text


# ---------------------------------------------------------------- labels


@pytest.mark.parametrize("method", METHOD_NAMES)
def test_labels_show_every_code_in_serving_order_with_panelist_and_position(method):
    study = make_study(method)
    plan = make_plan(study)
    result = labels_pdf(plan)
    assert result.items == len(plan)
    pieces = [t for page in reader(result).pages for _, _, t in positioned(page)]
    expected = []
    for (session, panelist), cups in ballots_of(plan):
        for e in cups:
            expected += [e.code, f"{panelist} · {e.position} of {len(cups)} · session {session}"]
    assert [t for t in pieces if t != "R"] == expected


def test_duo_trio_reference_labels_carry_an_r():
    study = make_study("duo-trio")
    plan = make_plan(study, sessions=("S1",), panelists=3)
    pieces = [t for _, _, t in positioned(reader(labels_pdf(plan)).pages[0])]
    assert pieces.count("R") == 3


@pytest.mark.parametrize(
    ("layout", "per_sheet", "size_mm"),
    [
        pytest.param(A4_3X8, 24, (70.0, 37.0), id="A4 3x8 of 70x37 mm (common practice)"),
        pytest.param(A4_3X7, 21, (63.5, 38.1), id="A4 3x7 of 63.5x38.1 mm (common practice)"),
        pytest.param(LETTER_3X10, 30, (66.675, 25.4),
                     id="Letter 3x10 of 2.625x1 in (common practice)"),
    ],
)
def test_label_presets_describe_common_stock(layout, per_sheet, size_mm):
    assert layout.per_sheet == per_sheet
    w, h = layout.label_size()
    assert w / MM == pytest.approx(size_mm[0], abs=0.01)
    assert h / MM == pytest.approx(size_mm[1], abs=0.01)


def test_labels_fill_sheets_and_start_each_panelist_on_a_new_row_when_asked():
    study = make_study("2afc")
    plan = make_plan(study, sessions=("S1",), panelists=3)  # 3 panelists x 2 cups
    small = LabelLayout("A4", rows=2, columns=3, margins=(10, 10, 10, 10), gaps=(2, 2))
    assert labels_pdf(plan, layout=small).pages == 2  # 3 rows of 2 on sheets of 2 rows
    run_on = LabelLayout("A4", rows=2, columns=3, margins=(10, 10, 10, 10), gaps=(2, 2),
                         new_row_per_panelist=False)
    assert labels_pdf(plan, layout=run_on).pages == 1
    skipped = LabelLayout("A4", rows=2, columns=3, new_row_per_panelist=False, skip=1)
    assert labels_pdf(plan, layout=skipped).pages == 2


def test_labels_on_letter_stock_place_codes_inside_their_labels():
    study = make_study("rating")
    plan = make_plan(study, panelists=10)  # 80 cups on 30-up sheets
    result = labels_pdf(plan, layout=LETTER_3X10)
    r = reader(result)
    assert result.pages == len(r.pages) == 4  # 20 ballots x 4 cups, a new row each: 40 rows
    assert [float(v) for v in r.pages[0].mediabox[2:]] == [612.0, 792.0]
    w, h = LETTER_3X10.label_size()
    for page in r.pages:
        for x, _y, t in positioned(page):
            if re.fullmatch(r"\d{3}", t):
                col = min(range(3), key=lambda k: abs(LETTER_3X10.origin(k)[0] + w / 2 - x))
                ox = LETTER_3X10.origin(col)[0]
                assert ox < x < ox + w


# ---------------------------------------------------------------- common


def test_every_document_uses_only_embedded_vera_fonts():
    study = make_study("rating")
    plan = make_plan(study)
    for result in (ballots_pdf(study, plan), serving_sheet_pdf(study, plan), labels_pdf(plan)):
        for page in reader(result).pages:
            fonts = page["/Resources"]["/Font"]
            assert fonts
            for ref in fonts.values():
                font = ref.get_object()
                assert font["/Subtype"] == "/TrueType"
                assert "BitstreamVeraSans" in font["/BaseFont"]
                assert "/FontFile2" in font["/FontDescriptor"].get_object()


def test_accents_and_the_en_dash_survive_and_missing_letters_fall_back_to_their_base():
    attr = Attribute("Crème brûlée crust – crispness", AttributeKind.INTENSITY, 1, 7)
    study = Trial("Crust switch trial", "rating", samples=SAMPLES, attributes=(attr,))
    text = page_texts(ballots_pdf(study, make_plan(study, panelists=1)))[0]
    assert "Crème brûlée crust – crispness" in text
    assert printable("Wąż, łódź – ő") == "Waz, łódz – o"  # ą ż ź ő are not in Vera
    assert printable("a → b") == "a ? b"  # no base letter to fall back to


def test_the_same_input_gives_the_same_bytes():
    study = make_study("tetrad")
    plan = make_plan(study)
    assert ballots_pdf(study, plan).data == ballots_pdf(study, plan).data


def test_progress_is_reported_up_to_the_total():
    study = make_study("rating")
    plan = make_plan(study, panelists=30)
    for call, total in ((lambda cb: ballots_pdf(study, plan, progress=cb), 60),
                        (lambda cb: serving_sheet_pdf(study, plan, progress=cb), len(plan)),
                        (lambda cb: labels_pdf(plan, progress=cb), len(plan))):
        seen: list[tuple[int, int]] = []
        call(lambda d, t: seen.append((d, t)))
        assert seen[0] == (0, total) and seen[-1] == (total, total)
        assert [d for d, _ in seen] == sorted(d for d, _ in seen)
        assert len(seen) <= 103


def test_to_dict_leaves_the_bytes_out():
    study = make_study("triangle")
    result = labels_pdf(make_plan(study))
    assert result.to_dict() == {"kind": "labels", "pages": 1, "items": 24,
                                "size": len(result.data)}
    assert result.data.startswith(b"%PDF-")


@pytest.mark.parametrize(
    ("call", "quoted"),
    [
        pytest.param(lambda: ballots_pdf(make_study("triangle"), []), "empty", id="empty plan"),
        pytest.param(lambda: labels_pdf(make_plan(make_study("triangle")),
                                        layout=LabelLayout("A5")), "'A5'", id="page size"),
        pytest.param(lambda: labels_pdf(make_plan(make_study("triangle")),
                                        layout=LabelLayout(rows=40, columns=9)),
                     "too small", id="tiny labels"),
        pytest.param(lambda: ballots_pdf(Trial("x", "hexad"), make_plan(make_study("triangle"))),
                     "'hexad'", id="unknown method"),
        pytest.param(lambda: ballots_pdf(make_study("triangle"),
                                         make_plan(make_study("triangle"))[:2]),
                     "holds 3 cups, got 2", id="short set"),
        pytest.param(lambda: ballots_pdf(make_study("triangle"),
                                         [PlanEntry("S1", "P01", 1, "123", "Nope Bun")] * 3),
                     "position 1", id="same position twice"),
        pytest.param(lambda: ballots_pdf(make_study("2afc"),
                                         [PlanEntry("S1", "P01", 1, "123", "Nope Bun"),
                                          PlanEntry("S1", "P01", 2, "456", SAMPLES[0].name)]),
                     "'Nope Bun'", id="unknown sample"),
        pytest.param(lambda: ballots_pdf(
            Trial("x", "rating", samples=SAMPLES,
                  attributes=(Attribute("Bite", anchors=("a", "b", "c")),)),
            make_plan(make_study("rating"))), "3 anchors for 9 points", id="anchors"),
        pytest.param(lambda: serving_sheet_pdf(make_study("triangle"),
                                               [PlanEntry("S1", "P01", 1, "1", "Nope Bun")]),
                     "'Nope Bun'", id="sheet: unknown sample"),
    ],
)
def test_bad_input_raises_a_trials_error_quoting_the_value(call, quoted):
    with pytest.raises(TrialsError) as err:
        call()
    assert quoted in str(err.value)


def test_an_unknown_method_is_the_registrys_error():
    with pytest.raises(UnknownMethodError):
        serving_sheet_pdf(Trial("x", "hexad"), make_plan(make_study("triangle")))


def test_the_printing_layer_imports_no_database_service_or_screen_code():
    forbidden = ("trials.store", "trials.service", "trials.cli", "trials.app", "trials.ui",
                 "sqlalchemy", "streamlit")
    for path in (ROOT / "trials" / "printing").glob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module]
            assert not [n for n in names if n.startswith(forbidden)], path


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm (poppler-utils) missing")
@pytest.mark.parametrize("method", METHOD_NAMES)
def test_first_pages_render_to_png_for_a_look(method):
    """Writes test-output/<kind>-<method>.png (gitignored) for a person to look at."""
    study = make_study(method)
    plan = make_plan(study)
    docs = {
        "ballot": ballots_pdf(study, plan, tokens=tokens_for(plan), base_url=BASE_URL,
                              today=TODAY,
                              panelists=(Panelist("P01", allergens=("sesame",),
                                                  consent_on=TODAY),)),
        "sheet": serving_sheet_pdf(study, plan, batches=make_batches(signed=False),
                                   conflicts=(AllergenConflict("P01", SAMPLES[0].name,
                                                               ("sesame",)),)),
        "labels": labels_pdf(plan, layout=A4_3X8),
    }
    OUT.mkdir(exist_ok=True)
    from PIL import Image

    for kind, result in docs.items():
        pdf = OUT / f"{kind}-{method}.pdf"
        pdf.write_bytes(result.data)
        stem = OUT / f"{kind}-{method}"
        subprocess.run(["pdftoppm", "-png", "-r", "60", "-f", "1", "-l", "1", "-singlefile",
                        str(pdf), str(stem)], check=True, capture_output=True)
        with Image.open(f"{stem}.png") as im:
            lo, hi = im.convert("L").getextrema()
            assert lo < 60 and hi > 240  # dark print on white paper


@pytest.mark.parametrize("extra", [0, 7, 30, 90, 200], ids=lambda n: f"{n} more chars")
def test_the_fast_mask_choice_gives_the_same_qr_symbol_as_reportlabs_encoder(extra):
    """Reference: reportlab's own QRCode.make (mask by its getBestMaskPattern)."""
    from reportlab.graphics.barcode import qrencoder

    for k in range(6):
        url = f"{BASE_URL}/taste?t=tok{k * 7919:x}" + "Ab9-_" * (extra // 5)
        code = qrencoder.QRCode(None, qrencoder.QRErrorCorrectLevel.M)
        code.addData(url)
        code.make()
        n = code.getModuleCount()
        expected = [[bool(code.isDark(r, c)) for c in range(n)] for r in range(n)]
        assert qr_matrix(url) == expected


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm (poppler-utils) missing")
@pytest.mark.parametrize("samples", [4, 12, 20], ids=["grids", "one table", "two pages"])
def test_every_code_of_a_rating_grid_is_visible_on_the_rendered_page(samples, tmp_path):
    """The shading of alternate rows must sit under the codes, not over them."""
    from PIL import Image

    variants = tuple(Sample(f"Invented variant {k}") for k in range(samples))
    study = Trial("Crust switch trial", "rating", samples=variants, attributes=ATTRIBUTES)
    plan = make_plan(study, panelists=1, sessions=("S1",))
    result = ballots_pdf(study, plan)
    pdf = tmp_path / "b.pdf"
    pdf.write_bytes(result.data)
    dpi = 100
    subprocess.run(["pdftoppm", "-png", "-r", str(dpi), str(pdf), str(tmp_path / "p")],
                   check=True, capture_output=True)
    codes = {e.code for e in plan}
    seen = set()
    for k, page in enumerate(reader(result).pages, start=1):
        png = sorted(tmp_path.glob("p-*.png"))[k - 1]
        with Image.open(png) as im:
            gray = im.convert("L")
            height = float(page.mediabox[3])
            for x, y, t in positioned(page):
                if t in codes and x < 60:  # the code at the start of a grid row
                    box = (int(x * dpi / 72), int((height - y - 9) * dpi / 72),
                           int((x + 20) * dpi / 72), int((height - y) * dpi / 72))
                    assert gray.crop(box).getextrema()[0] < 80, (t, k)
                    seen.add(t)
    assert seen == codes


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm (poppler-utils) missing")
def test_every_code_on_the_serving_sheet_is_visible_on_the_rendered_page(tmp_path):
    """The shading of alternate panelists must sit under the cup rows, not hide them.

    Word boxes come from poppler's ``pdftotext -bbox``, independent of the PDF writer."""
    from PIL import Image

    study = Trial("Crumb trial", "triangle",
                  samples=(Sample("Invented loaf one"), Sample("Invented loaf two")))
    plan = make_plan(study, panelists=6, sessions=("S1",))
    result = serving_sheet_pdf(study, plan)
    pdf = tmp_path / "s.pdf"
    pdf.write_bytes(result.data)
    dpi = 100
    subprocess.run(["pdftoppm", "-png", "-r", str(dpi), "-f", "1", "-l", "1", "-singlefile",
                    str(pdf), str(tmp_path / "p")], check=True, capture_output=True)
    subprocess.run(["pdftotext", "-bbox", "-f", "1", "-l", "1", str(pdf),
                    str(tmp_path / "words.html")], check=True, capture_output=True)
    words = re.findall(r'xMin="([\d.]+)" yMin="([\d.]+)" xMax="([\d.]+)" yMax="([\d.]+)">'
                       r"(\d{3})</word>", (tmp_path / "words.html").read_text())
    codes = {e.code for e in plan}
    seen = set()
    with Image.open(tmp_path / "p.png") as im:
        gray = im.convert("L")
        for x0, y0, x1, y1, word in words:
            if word in codes:
                box = tuple(int(float(v) * dpi / 72) for v in (x0, y0, x1, y1))
                assert gray.crop(box).getextrema()[0] < 80, word
                seen.add(word)
    assert seen == codes
