"""Browser walks against a real app server (Debian's Chromium through Playwright):
the panelist's tablet flow with a reload in the middle, and the passcode gate."""

from __future__ import annotations

import datetime as dt

import pytest

from tests.e2e.conftest import start_app
from trials import service, ui
from trials.model import Attribute, Sample

pytestmark = pytest.mark.browser

TIMEOUT = 30_000  # ms: the first page load imports the whole app


def _fresh_rating_trial(db: str) -> tuple[int, str, list[str], list[str]]:
    """An invented rating trial with three samples and two scales, served to one new
    panelist; returns (study id, that panelist's token, cups in order, sample names)."""
    store = service.open_store(db)
    service.add_panelist(store, "W01", consent_on=dt.date(2026, 2, 1))
    names = ["Oat milk custard", "Almond milk custard", "Dairy custard"]
    study = service.create_trial(
        store, name="Custard: three milks", method="rating",
        samples=[Sample(names[2], is_control=True), Sample(names[0]), Sample(names[1])],
        attributes=[Attribute("overall liking", low=1, high=9,
                              anchors=("dislike extremely", "like extremely")),
                    Attribute("sweetness", kind="intensity", low=1, high=5)],
    )
    service.draw_plan(store, study.id, panelist_codes=["W01"], seed=8)
    cups = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)]
    return study.id, service.panelist_token(store, study.id, "W01"), cups, names


def _wait_text(page, text: str) -> None:
    page.get_by_text(text, exact=False).first.wait_for(timeout=TIMEOUT)


def _settled(page) -> None:
    """Wait until the app's script run has finished and nothing is still loading."""
    page.wait_for_function(
        "() => { const app = document.querySelector('[data-testid=\"stApp\"]');"
        " return app && app.getAttribute('data-test-script-state') === 'notRunning'"
        " && !document.querySelector('[data-testid=\"stSkeleton\"]'); }",
        timeout=TIMEOUT)
    page.wait_for_timeout(400)  # charts and tables paint after the run ends


def _body(page) -> str:
    return page.inner_text("body")


def _score(page, session: str, code: str, attribute: int, point: int) -> None:
    page.locator(f".st-key-score_{session}_{code}_{attribute}_{point} button").click()


def test_a_panelist_answers_reloads_resumes_and_finishes_on_a_tablet(app_server, tablet, shots):
    url, db = app_server
    trial_id, token, cups, names = _fresh_rating_trial(db)
    page = tablet
    page.goto(f"{url}/taste?t={token}")
    _wait_text(page, "Before you start")
    _settled(page)
    page.screenshot(path=shots / "0-first-screen.png", full_page=True)
    page.locator(".st-key-nav_start button").click()
    _wait_text(page, "Cup 1 of 3")
    _settled(page)
    page.screenshot(path=shots / "1-first-cup.png", full_page=True)
    assert cups[0] in _body(page)

    _score(page, "1", cups[0], 0, 7)
    page.locator(f".st-key-score_1_{cups[0]}_0_7 button[kind='primary']").wait_for(timeout=TIMEOUT)
    page.screenshot(path=shots / "2-one-score-saved.png", full_page=True)
    store = service.open_store(db)
    assert [(r.code, r.attribute, r.value) for r in service.list_answers(store, trial_id)] == [
        (cups[0], "overall liking", "7")]

    _score(page, "1", cups[0], 1, 3)
    page.locator(f".st-key-score_1_{cups[0]}_1_3 button[kind='primary']").wait_for(timeout=TIMEOUT)
    page.locator(".st-key-nav_next button").click()
    _wait_text(page, "Cup 2 of 3")
    _settled(page)
    page.screenshot(path=shots / "3-second-cup.png", full_page=True)

    page.reload()
    _wait_text(page, "Cup 2 of 3")
    _settled(page)
    page.screenshot(path=shots / "4-after-reload.png", full_page=True)
    assert cups[1] in _body(page)

    for i, code in enumerate(cups[1:], start=2):
        _score(page, "1", code, 0, 5)
        page.locator(f".st-key-score_1_{code}_0_5 button[kind='primary']").wait_for(
            timeout=TIMEOUT)
        _score(page, "1", code, 1, 2)
        page.locator(f".st-key-score_1_{code}_1_2 button[kind='primary']").wait_for(
            timeout=TIMEOUT)
        page.locator(".st-key-nav_next button").click()
        if i < 3:
            _wait_text(page, f"Cup {i + 1} of 3")
        body = _body(page)
        assert not any(n in body for n in names)
    _wait_text(page, "Check your answers")
    page.locator(".st-key-nav_finish button").click()
    _wait_text(page, "Thank you, you are done.")
    page.screenshot(path=shots / "5-done.png", full_page=True)
    body = _body(page)
    assert not any(n in body for n in names), "a sample name reached the tasting screen"
    assert len(service.list_answers(store, trial_id)) == 3 * 2


def test_a_bad_tasting_link_shows_an_error_in_the_browser(app_server, tablet, shots):
    url, _ = app_server
    tablet.goto(f"{url}/taste?t=not-a-token")
    _wait_text(tablet, "This link does not open a ballot")
    tablet.screenshot(path=shots / "bad-link.png", full_page=True)
    assert "Cup" not in _body(tablet)


def test_leader_screens_refuse_without_the_passcode(tmp_path, browser, shots):
    url, proc, db = start_app(tmp_path, passcode="rye-and-caraway")
    try:
        store = service.open_store(db)
        names = [x.name for s in service.list_trials(store)
                 for x in service.get_trial(store, s.id).samples]
        context = browser.new_context(viewport={"width": 1280, "height": 900})
        page = context.new_page()
        for path in ("/", "/results?study=1", "/plan?study=1"):
            page.goto(url + path)
            page.get_by_label("Leader passcode").wait_for(timeout=TIMEOUT)
            _settled(page)
            page.screenshot(path=shots / f"gate{path.split('?')[0].replace('/', '-')}.png")
            body = _body(page)
            assert not any(n in body for n in names)
        page.get_by_label("Leader passcode").fill("wrong")
        page.get_by_role("button", name="Open").click()
        _wait_text(page, "That passcode does not open the leader screens.")
        page.get_by_label("Leader passcode").fill("rye-and-caraway")
        page.get_by_role("button", name="Open").click()
        _wait_text(page, "Serving plan:")
        _settled(page)
        page.screenshot(path=shots / "gate-open.png", full_page=True)
        context.close()
    finally:
        proc.terminate()
        proc.wait(timeout=10)


@pytest.mark.parametrize("method", ["triangle", "rating"])
def test_every_leader_screen_opens_in_the_browser_without_an_error(app_server, browser, shots,
                                                                   method):
    from trials import ui

    url, db = app_server
    store = service.open_store(db)
    trial_id = next(s.id for s in service.list_trials(store) if s.method == method)
    # tall, so that a screenshot holds the whole screen (the app scrolls inside itself)
    context = browser.new_context(viewport={"width": 1366, "height": 2600})
    page = context.new_page()
    for i, (name, _title, _) in enumerate(ui.LEADER_PAGES):
        path = "" if i == 0 else name  # the default page is served at the root
        page.goto(f"{url}/{path}?study={trial_id}")
        page.get_by_text("Single-user mode").first.wait_for(timeout=TIMEOUT)
        _settled(page)
        page.screenshot(path=shots / f"{i}-{name}.png", full_page=True)
        assert page.locator("[data-testid='stException']").count() == 0, name
    context.close()


def test_the_locked_app_lists_no_screen_names_before_the_passcode(tmp_path, browser, shots):
    url, proc, _db = start_app(tmp_path, passcode="rye-and-caraway")
    try:
        context = browser.new_context(viewport={"width": 1280, "height": 900})
        page = context.new_page()
        page.goto(url + "/")
        page.get_by_label("Leader passcode").wait_for(timeout=TIMEOUT)
        _settled(page)
        page.screenshot(path=shots / "locked.png")
        body = _body(page)
        for _name, title, _icon in ui.LEADER_PAGES[1:]:
            assert title not in body
        page.get_by_label("Leader passcode").fill("rye-and-caraway")
        page.get_by_role("button", name="Open").click()
        page.get_by_text("Serving plan").first.wait_for(timeout=TIMEOUT)
        assert "Serving plan" in _body(page)
        context.close()
    finally:
        proc.terminate()
        proc.wait(timeout=10)
