"""Paper entry in a real browser: 60 triangle ballots typed at a human 70 ms per key and
60 more at full speed land, every one, on the ballot they were typed for; out-of-range
and malformed scores are refused with a message naming panelist and column, nothing is
saved, and the typed values stay in their boxes.

The codes typed are drawn (seeded) from each panelist's own cups; what is stored is read
back through the service and compared answer by answer.
"""

from __future__ import annotations

import datetime as dt
import random

import pytest

from tests.e2e.conftest import start_app
from trials import service
from trials.model import Attribute, Sample

pytestmark = pytest.mark.browser

TIMEOUT = 60_000  # ms: the first page load imports the whole app
HUMAN_DELAY = 70  # ms per key: the speed at which the issue saw codes vanish
PANEL = [f"K{i:02d}" for i in range(1, 61)]


@pytest.fixture(scope="module")
def entry_server(tmp_path_factory):
    """One app server on an empty store for this module's walks."""
    url, proc, db = start_app(tmp_path_factory.mktemp("entry"), demo=False)
    store = service.open_store(db)
    for code in PANEL:
        service.add_panelist(store, code, consent_on=dt.date(2026, 3, 1))
    yield url, store
    proc.terminate()
    proc.wait(timeout=10)


@pytest.fixture
def leader(browser):
    context = browser.new_context(viewport={"width": 1366, "height": 1000})
    page = context.new_page()
    yield page
    context.close()


def _settled(page) -> None:
    page.wait_for_function(
        "() => { const app = document.querySelector('[data-testid=\"stApp\"]');"
        " return app && app.getAttribute('data-test-script-state') === 'notRunning'; }",
        timeout=TIMEOUT)


def _box(page, key: str):
    """The entry box whose widget key is ``key`` (keys name panelist and set or code)."""
    return page.locator(f".st-key-{key} input")


def _chosen(store, trial_id: int, session: str, seed: int) -> dict[str, str]:
    """A code from each panelist's own cups of one session, drawn with ``seed``."""
    rng = random.Random(seed)
    cups: dict[str, list[str]] = {}
    for e in sorted(service.plan(store, trial_id, session), key=lambda e: e.position):
        cups.setdefault(e.panelist_code, []).append(e.code)
    return {p: rng.choice(cups[p]) for p in PANEL}


def _type_ballots(page, trial_id: int, session: str, want: dict[str, str], delay: int) -> None:
    """Click the first panelist's box, then type each code and Tab to the next box, as a
    leader does from a stack of ballots."""
    _box(page, f"paper_{trial_id}_{session}_0_{PANEL[0]}_1_chosen").click()
    for panelist in PANEL:
        page.keyboard.type(want[panelist], delay=delay)
        page.keyboard.press("Tab", delay=delay)


def _save(page, expect: str) -> None:
    page.get_by_role("button", name="Check and save").click()
    page.get_by_text(expect, exact=False).first.wait_for(timeout=TIMEOUT)
    _settled(page)


def _stored(store, trial_id: int, session: str) -> dict[str, str]:
    return {a.panelist_code: a.code for a in service.list_answers(store, trial_id)
            if a.session == session}


@pytest.mark.slow
def test_sixty_ballots_typed_at_human_and_at_full_speed_are_all_stored_as_typed(
        entry_server, leader, shots):
    url, store = entry_server
    trial = service.create_trial(
        store, name="Scone: butter against margarine", method="triangle", pd=0.3,
        samples=[Sample("Butter scone", is_control=True), Sample("Margarine scone")])
    service.draw_plan(store, trial.id, panelist_codes=PANEL, seed=11)
    page = leader
    page.goto(f"{url}/entry?study={trial.id}")
    page.get_by_text("Check and save").first.wait_for(timeout=TIMEOUT)
    _settled(page)

    human = _chosen(store, trial.id, "1", seed=5)
    _type_ballots(page, trial.id, "1", human, HUMAN_DELAY)
    page.screenshot(path=shots / "1-typed-at-70ms.png")
    assert _stored(store, trial.id, "1") == {}  # nothing is sent before Check and save
    _save(page, "Saved 60 changed row(s)")
    page.screenshot(path=shots / "2-saved.png")
    assert _stored(store, trial.id, "1") == human
    assert all(a.mode == "paper" for a in service.list_answers(store, trial.id))

    # a second session, typed at machine speed: the page opens on the latest session
    service.draw_plan(store, trial.id, panelist_codes=PANEL, session="2", seed=12)
    page.goto(f"{url}/entry?study={trial.id}")
    page.get_by_text("Check and save").first.wait_for(timeout=TIMEOUT)
    _settled(page)
    fast = _chosen(store, trial.id, "2", seed=6)
    _type_ballots(page, trial.id, "2", fast, 0)
    _save(page, "Saved 60 changed row(s)")
    page.screenshot(path=shots / "3-full-speed-saved.png")
    assert _stored(store, trial.id, "2") == fast
    assert _stored(store, trial.id, "1") == human
    assert page.locator("[data-testid='stException']").count() == 0


def test_out_of_range_and_malformed_scores_are_refused_by_name_and_kept_in_their_boxes(
        entry_server, leader, shots):
    url, store = entry_server
    trial = service.create_trial(
        store, name="Shortbread: two butters", method="rating",
        samples=[Sample("Salted butter", is_control=True), Sample("Cultured butter")],
        attributes=[Attribute("overall liking", low=1, high=9)])
    service.draw_plan(store, trial.id, panelist_codes=PANEL[:2], seed=4)
    plan = sorted(service.plan(store, trial.id), key=lambda e: (e.panelist_code, e.position))
    page = leader
    page.goto(f"{url}/entry?study={trial.id}")
    page.get_by_text("Check and save").first.wait_for(timeout=TIMEOUT)
    _settled(page)

    typed = ["7", "12", "six", "4"]  # 12 is off the 1..9 scale, "six" is not a number
    for e, text in zip(plan, typed):
        _box(page, f"paper_{trial.id}_1_0_{e.panelist_code}_{e.code}_overall liking".replace(
            " ", "-")).fill(text)
    _save(page, "nothing saved")
    page.screenshot(path=shots / "1-refused.png", full_page=True)
    body = page.inner_text("body").replace("\u2060", "")  # ui.literal's word joiners
    assert "2 bad cell(s); nothing saved" in body
    for e, text in zip(plan[1:3], typed[1:3]):
        assert (f"panelist '{e.panelist_code}', code '{e.code}', column 'overall liking': "
                f"expected a whole number from 1 to 9, got '{text}'") in body
    assert service.list_answers(store, trial.id) == []  # all or none
    boxes = [_box(page, f"paper_{trial.id}_1_0_{e.panelist_code}_{e.code}_overall-liking")
             for e in plan]
    assert [b.input_value() for b in boxes] == typed  # what was typed stays to be corrected

    boxes[1].fill("8")
    boxes[2].fill("6")
    _save(page, "Saved 4 changed row(s)")
    got = {(a.panelist_code, a.code): a.value for a in service.list_answers(store, trial.id)}
    assert got == {(e.panelist_code, e.code): v for e, v in zip(plan, ["7", "8", "6", "4"])}
