"""Every method's tablet ballot walked in Chromium, at a tablet's and a phone's size.

Each walk starts on the first screen (allergens, the stop-at-any-time note), answers,
goes back and changes an answer, confirms forced choices, reloads mid-way, finishes,
and then checks the store: the last value of each answer, one row per question, the
audit entries of the changes and the Finish. On every step the page's HTML holds no
sample name (blinding) and axe-core (axe-playwright-python) finds no serious or
critical violation (its rules follow WCAG 2.x; colour contrast is rule
``color-contrast``, WCAG 2.1 success criterion 1.4.3, 4.5:1 for normal text). The
scale buttons are at least 48 px high (common practice for touch targets: 48 dp in
Android's material guidance, 44 pt in Apple's; WCAG 2.2 SC 2.5.8 asks only 24 px).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from tests.e2e.conftest import OUTPUT, start_app
from tests.e2e.tasting_trials import CATA_WORDS, PANELIST, Built, build, every_method
from trials import service
from trials.answers import CHOICE, NO_PREFERENCE, RANK, RESPONSE, choice_options
from trials.methods import Family, get_method
from trials.printing.ballots import HEDONIC_9, INTENSITY_ENDS, JAR_5

pytestmark = [pytest.mark.browser, pytest.mark.slow]

TIMEOUT = 30_000
SIZES = {"tablet": (800, 1280), "phone": (390, 844)}
COMMENT = "The crust felt a little soft"  # invented


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    url, proc, db = start_app(tmp_path_factory.mktemp("walks"), demo=False)
    yield url, db
    proc.terminate()
    proc.wait(timeout=10)


def _axe():
    try:
        from axe_playwright_python.sync_playwright import Axe
    except ImportError:
        pytest.skip("axe-playwright-python is not installed (the test extra has it)")
    return Axe()


class Walk:
    """One panelist's walk through a ballot: taps by widget key, checks on every step."""

    def __init__(self, page, built: Built, folder: Path, axe):
        self.page, self.built, self.folder, self.axe = page, built, folder, axe
        self.spec = get_method(built.method)
        self.shot = 0
        self.checked = 0
        self.confirmed: list[str] = []  # forced choices as first confirmed, set by set

    def settled(self) -> None:
        self.page.wait_for_function(
            "() => { const app = document.querySelector('[data-testid=\"stApp\"]');"
            " return app && app.getAttribute('data-test-script-state') === 'notRunning'"
            " && !document.querySelector('[data-testid=\"stSkeleton\"]')"
            " && !document.querySelector('[data-stale=\"true\"]'); }",  # faded, mid-run
            timeout=TIMEOUT)
        self.page.wait_for_timeout(120)

    def wait(self, selector: str) -> None:
        self.page.locator(selector).first.wait_for(timeout=TIMEOUT)
        self.settled()

    def text(self, words: str) -> None:
        self.page.get_by_text(words, exact=False).first.wait_for(timeout=TIMEOUT)
        self.settled()

    def tap(self, key: str) -> None:
        self.page.locator(f".st-key-{key} button").click()

    def step(self, name: str) -> None:
        """The checks of every screen: no sample name in the HTML, no serious or
        critical axe violation, and a screenshot of the whole screen."""
        html = self.page.content()
        leaked = [n for n in self.built.sample_names if n in html]
        assert not leaked, f"{name}: sample names in the page: {leaked}"
        found = self.audit()
        bad = [(v["id"], v["impact"], [n["target"] for n in v["nodes"]][:3])
               for v in found if v["impact"] in ("serious", "critical")]
        assert not bad, f"{name}: axe-core violations {bad}"
        self.shot += 1
        size = self.page.viewport_size
        tall = self.page.evaluate(
            "() => document.querySelector('[data-testid=\"stMain\"]')?.scrollHeight || 0")
        self.page.set_viewport_size({"width": size["width"], "height": max(size["height"],
                                                                           tall + 40)})
        self.page.screenshot(path=self.folder / f"{self.shot:02d}-{name}.png")
        self.page.set_viewport_size(size)
        self.checked += 1

    def audit(self) -> list[dict]:
        """axe-core's violations on the page as it is (the script is injected once per
        page load, not on every run as ``Axe.run`` does)."""
        if not self.page.evaluate("() => typeof window.axe !== 'undefined'"):
            self.page.evaluate(self.axe.axe_script)
        return self.page.evaluate(
            "() => axe.run({resultTypes: ['violations']}).then(r => r.violations)")

    def reload(self) -> None:
        self.page.reload()
        self.wait("[data-testid='stMarkdownContainer']")

    def comment(self, session: str, code: str, text: str) -> None:
        box = self.page.locator(f".st-key-comment_{session}_{code} textarea")
        box.fill(text)
        box.press("Tab")  # a text area sends its value when it loses focus
        self.page.wait_for_timeout(400)  # the run it starts
        self.settled()


def _start(w: Walk, url: str) -> None:
    w.page.goto(f"{url}/taste?t={w.built.token}")
    w.text("Before you start")
    body = w.page.inner_text("body")
    assert "you may stop at any time" in body
    if len(w.built.cups) > 1:
        assert "egg, gluten, milk" in body  # pooled over the session's samples, sorted
    else:  # one cup (A-not-A is monadic): that sample's allergens, whichever it is
        assert "gluten" in body and ("milk" in body or "egg" in body)
    w.step("first-screen")
    w.tap("nav_start")
    w.text("Step 1 of")


def _finish(w: Walk) -> None:
    w.text("Check your answers")
    w.step("review")
    w.tap("nav_finish")
    w.text("Thank you, you are done.")
    w.step("done")


def _pick(w: Walk, codes, want: list[str], k: int) -> None:
    for c in want:
        w.tap(f"pick_1_{k}_{c}")
        w.wait(f".st-key-pick_1_{k}_{c} button[kind='primary']")
    shown = " and ".join(sorted(want, key=list(codes).index))
    w.text(f"Your choice: {shown}")


def walk_choice(w: Walk, url: str) -> dict:
    """Pick, change the pick, confirm; reload; go back from the review and change the
    first set's answer; finish. Returns {set: code} as last confirmed."""
    spec = w.spec
    _start(w, url)
    last: dict[int, str] = {}
    for k, codes in enumerate(w.built.sets):  # set indexes are 0-based
        _ref, options = choice_options(spec, codes)
        w.step(f"set{k + 1}")
        first = list(options[:spec.choose])
        _pick(w, codes, first, k)
        w.step(f"set{k + 1}-picked")
        # change before confirming: the next code replaces the earliest tap
        other = options[spec.choose]
        w.tap(f"pick_1_{k}_{other}")
        final = sorted([*first[1:], other], key=list(codes).index)
        w.text("Your choice: " + " and ".join(final))
        if k == 0:
            w.comment("1", codes[0], COMMENT)
        w.tap(f"confirm_1_{k}")
        last[k] = " ".join(final)
        w.confirmed.append(last[k])
        if k + 1 < len(w.built.sets):
            w.text(f"Step {k + 2} of")
    w.text("Check your answers")
    w.reload()  # a reload after a confirmed answer: nothing lost, the review again
    w.text("Check your answers")
    w.tap("change_0")
    codes = w.built.sets[0]
    _ref, options = choice_options(spec, codes)
    w.wait(".st-key-confirm_1_0 button")  # the answer on file is offered again
    if spec.allows_no_preference:
        w.tap("nopref_1_0")
        w.text("Your choice: no preference")
        last[0] = NO_PREFERENCE
    else:  # tap the first option: it joins the group, the earliest tap giving way
        w.tap(f"pick_1_0_{options[0]}")
        group = sorted((last[0].split() + [options[0]])[-spec.choose:], key=list(codes).index)
        last[0] = " ".join(group)
        w.text("Your choice: " + " and ".join(group))
    w.step("set1-changed")
    w.tap("confirm_1_0")
    _finish(w)
    return last


def _rate_cup(w: Walk, code: str, points: list[int]) -> None:
    for i, p in enumerate(points):
        w.tap(f"score_1_{code}_{i}_{p}")
        w.wait(f".st-key-score_1_{code}_{i}_{p} button[kind='primary']")


def _check_scale_buttons(w: Walk, code: str) -> None:
    """Every point labelled as the paper ballot words it, low to high in reading order,
    each button at least 48 px high, with no word running out of its button."""
    # a 9-point hedonic and a 5-point just-about-right scale: every point worded; an
    # intensity scale: its two ends (the paper ballot's defaults, trials.printing.ballots)
    words = [HEDONIC_9, (INTENSITY_ENDS[0], "", "", "", INTENSITY_ENDS[1]), JAR_5]
    for i, labels in enumerate(words):
        boxes = []
        for p, label in enumerate(labels, start=1):
            button = w.page.locator(f".st-key-score_1_{code}_{i}_{p} button")
            assert button.inner_text().split() == ([str(p)] + label.split()), (i, p)
            fits = button.locator("[data-testid='stMarkdownContainer']").evaluate(
                "e => e.scrollWidth <= e.clientWidth")  # else Streamlit cuts it with "..."
            assert fits, f"scale {i} point {p}: a word does not fit its button"
            box = button.bounding_box()
            assert box["height"] >= 48, (i, p, box)
            boxes.append((round(box["y"]), box["x"]))
        assert boxes == sorted(boxes), f"scale {i} is not low to high in reading order"


def walk_rating(w: Walk, url: str) -> dict:
    c0, c1, c2 = w.built.cups
    _start(w, url)
    _check_scale_buttons(w, c0)
    w.step("cup1")
    _rate_cup(w, c0, [7, 2, 3])
    w.comment("1", c0, COMMENT)
    w.step("cup1-answered")
    w.tap("nav_next")
    w.text("Cup 2 of 3")
    _rate_cup(w, c1, [5])
    w.reload()  # mid-cup: the saved score is kept, the screen resumes on this cup
    w.text("Cup 2 of 3")
    w.wait(f".st-key-score_1_{c1}_0_5 button[kind='primary']")
    w.step("cup2-after-reload")
    w.page.locator(f".st-key-score_1_{c1}_1_4 button").click()
    w.wait(f".st-key-score_1_{c1}_1_4 button[kind='primary']")
    w.tap(f"score_1_{c1}_2_3")
    w.wait(f".st-key-score_1_{c1}_2_3 button[kind='primary']")
    w.tap("nav_next")
    w.text("Cup 3 of 3")
    w.tap("nav_back")  # back to cup 2: change its liking from 5 to 8
    w.text("Cup 2 of 3")
    _rate_cup(w, c1, [8])
    w.tap("nav_next")
    w.text("Cup 3 of 3")
    _rate_cup(w, c2, [4, 5, 1])
    w.step("cup3")
    w.tap("nav_next")
    _finish(w)
    return {c0: ("7", "2", "3"), c1: ("8", "4", "3"), c2: ("4", "5", "1")}


def walk_ranking(w: Walk, url: str) -> dict:
    c0, c1, c2 = w.built.cups
    _start(w, url)
    w.step("ranks")
    w.tap(f"rank_1_{c0}_1")
    w.wait(f".st-key-rank_1_{c0}_1 button[kind='primary']")
    w.reload()  # mid-set: rank 1 is kept
    w.wait(f".st-key-rank_1_{c0}_1 button[kind='primary']")
    assert w.page.locator(f".st-key-rank_1_{c1}_1 button").is_disabled()  # taken
    for code, r in ((c1, 2), (c2, 3)):
        w.tap(f"rank_1_{code}_{r}")
        w.wait(f".st-key-rank_1_{code}_{r} button[kind='primary']")
    w.step("ranked")
    w.tap(f"rank_1_{c0}_2")  # a change: cup 1 takes rank 2, and cup 2 its old rank 1
    w.wait(f".st-key-rank_1_{c1}_1 button[kind='primary']")
    w.comment("1", c2, COMMENT)
    w.step("swapped")
    w.tap("nav_next")
    _finish(w)
    return {c0: "2", c1: "1", c2: "3"}


def walk_respond(w: Walk, url: str) -> dict:
    """Signal detection: tap a response, change it, confirm; reload at the review; change
    the first set's response from the review; finish. Returns {set: response}."""
    words = w.spec.responses
    _start(w, url)
    last: dict[int, str] = {}
    for k, _codes in enumerate(w.built.sets):
        w.step(f"set{k + 1}")
        w.tap(f"respond_1_{k}_0")
        w.text(f"Your answer: {words[0]}")
        w.tap(f"respond_1_{k}_1")  # changed before confirming: nothing saved yet
        w.text(f"Your answer: {words[1]}")
        if k == 0:
            w.comment("1", w.built.sets[0][0], COMMENT)
        w.step(f"set{k + 1}-picked")
        w.tap(f"confirm_1_{k}")
        last[k] = words[1]
        w.confirmed.append(words[1])
        if k + 1 < len(w.built.sets):
            w.text(f"Step {k + 2} of")
    w.text("Check your answers")
    w.reload()
    w.text("Check your answers")
    w.tap("change_0")
    w.wait(".st-key-confirm_1_0 button")  # the answer on file is offered again
    w.tap("respond_1_0_0")
    w.text(f"Your answer: {words[0]}")
    w.tap("confirm_1_0")
    last[0] = words[0]
    _finish(w)
    return last


def _tick(w: Walk, code: str, ticked: set[str]) -> None:
    """Set the cup's words to ``ticked`` (tapping those that differ), then save them."""
    box = w.page.locator(f".st-key-words_1_{code}")
    for word in CATA_WORDS:
        button = box.locator("button", has_text=word)
        on = button.get_attribute("aria-pressed") == "true"  # the words on file are shown
        if on != (word in ticked):
            button.click()
            w.settled()
    w.tap(f"save_words_1_{code}")
    w.wait(".st-key-nav_next button:not([disabled])")


def walk_cata(w: Walk, url: str) -> dict:
    """Check-all-that-apply: tick words per cup and save; reload mid-way; go back and
    change the first cup's words; finish. Returns {cup: {word: "0"/"1"}}."""
    c0, c1, c2 = w.built.cups
    _start(w, url)
    w.step("cup1")
    _tick(w, c0, {"flaky"})
    w.comment("1", c0, COMMENT)
    w.step("cup1-saved")
    w.tap("nav_next")
    w.text("Cup 2 of 3")
    w.reload()  # cup 1 on file: the screen resumes on cup 2
    w.text("Cup 2 of 3")
    _tick(w, c1, {"tart", "buttery"})
    w.tap("nav_next")
    w.text("Cup 3 of 3")
    w.tap("nav_back")
    w.text("Cup 2 of 3")
    w.tap("nav_back")
    w.text("Cup 1 of 3")
    _tick(w, c0, {"flaky", "buttery"})  # a change: buttery 0 -> 1
    w.tap("nav_next")
    w.text("Cup 2 of 3")
    w.tap("nav_next")
    w.text("Cup 3 of 3")
    _tick(w, c2, set())
    w.step("cup3")
    w.tap("nav_next")
    _finish(w)
    picked = {c0: {"flaky", "buttery"}, c1: {"tart", "buttery"}, c2: set()}
    return {c: {word: "1" if word in on else "0" for word in CATA_WORDS}
            for c, on in picked.items()}


WALKS = {Family.RATING: walk_rating, Family.RANKING: walk_ranking,
         Family.SIGNAL: walk_respond, Family.CATA: walk_cata}


def _walks() -> list[tuple[str, str]]:
    """Every method at the tablet's size; at the phone's size one method per kind of
    tasting screen (one code, a group of codes, a reference first, no preference, a
    response, scores, words, ranks), since methods of one kind share the screen's code
    and differ only in wording, which the tablet walks check. This keeps the suite
    inside its CI time."""
    methods = every_method()
    seen: set[tuple] = set()
    phone = []
    for m in methods:
        spec = get_method(m)
        kind = (spec.family, spec.choose, spec.reference_first, spec.allows_no_preference)
        if kind not in seen:
            seen.add(kind)
            phone.append(m)
    return [(m, "tablet") for m in methods] + [(m, "phone") for m in phone]


@pytest.mark.parametrize(("method", "size"), _walks())
def test_a_ballot_walked_on_a_touch_screen_keeps_the_last_answers(server, browser, method,
                                                                  size):
    url, db = server
    built = build(db, method)
    spec = get_method(method)
    width, height = SIZES[size]
    context = browser.new_context(viewport={"width": width, "height": height},
                                  has_touch=True)
    folder = OUTPUT / "tasting" / f"{method}-{size}"
    shutil.rmtree(folder, ignore_errors=True)  # no screenshot of an earlier run stays
    folder.mkdir(parents=True)
    w = Walk(context.new_page(), built, folder, _axe())
    try:
        expected = WALKS.get(spec.family, walk_choice)(w, url)
    finally:
        context.close()
    assert w.checked >= 4  # the walk reached its checks

    store = service.open_store(db)
    got = service.list_answers(store, built.trial_id)
    audit = service.audit_log(store, built.trial_id)
    store.close()
    assert {r.mode.value for r in got} == {"tablet"}
    assert {r.panelist_code for r in got} == {PANELIST}
    if spec.family is Family.RATING:
        names = [a.name for a in service.get_trial(service.open_store(db), built.trial_id)
                 .attributes]
        table = {(r.code, r.attribute): r.value for r in got}
        assert len(got) == len(table) == 9  # one row per question, though 2 were changed
        assert table == {(c, n): v[i] for c, v in expected.items() for i, n in enumerate(names)}
        c1 = built.cups[1]
        assert [(e.old, e.new) for e in audit
                if e.field == "value"] == [("5", "8")]
        assert next(r.comment for r in got if r.code == built.cups[0]
                    and r.attribute == names[0]) == COMMENT
        assert c1 in expected
    elif spec.family is Family.SIGNAL:
        assert len(got) == len(built.sets) and all(r.attribute == RESPONSE for r in got)
        by_set = {next(i for i, codes in enumerate(built.sets) if r.code in codes): r.value
                  for r in got}
        assert by_set == expected
        changes = [(e.old, e.new) for e in audit if e.field == "value"]
        assert changes == [(w.confirmed[0], expected[0])]
        assert got[0].comment == COMMENT
    elif spec.family is Family.CATA:
        table: dict[str, dict[str, str]] = {}
        for r in got:
            table.setdefault(r.code, {})[r.attribute] = r.value
        assert table == expected and len(got) == 3 * len(CATA_WORDS)
        assert [(e.old, e.new) for e in audit if e.field == "value"] == [("0", "1")]
        assert any(r.comment == COMMENT for r in got if r.code == built.cups[0])
    elif spec.family is Family.RANKING:
        assert {r.code: r.value for r in got} == expected and len(got) == 3
        assert all(r.attribute == RANK for r in got)
        changes = [(e.old, e.new) for e in audit if e.field == "value"]
        assert sorted(changes) == [("1", "2"), ("2", "1")]
        assert next(r.comment for r in got if r.code == built.cups[2]) == COMMENT
    else:
        assert len(got) == len(built.sets)  # one answer per set, however often changed
        by_set = {}
        for r in got:
            assert r.attribute == CHOICE
            k = next(i for i, codes in enumerate(built.sets)
                     if set(r.code.split()) & set(codes) or not r.code)
            by_set[k] = r.code or r.value
        assert by_set == expected
        # the change from the review is audited with both values: the first set's code
        # as first confirmed, then the last (or, for "no preference", the value)
        changes = [(e.field, e.old, e.new) for e in audit if e.field in ("code", "value")]
        if expected[0] == NO_PREFERENCE:
            assert changes == [("code", w.confirmed[0], ""), ("value", "", NO_PREFERENCE)]
        else:
            assert changes == [("code", w.confirmed[0], expected[0])]
        assert got[0].comment == COMMENT
    assert [e.field for e in audit].count("finished") == 1
