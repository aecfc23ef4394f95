"""In Chromium: once the passcode is accepted a reload keeps the leader signed in (a signed,
expiring cookie); a tampered, expired, signed-out or other-passcode cookie opens nothing;
"Sign out" clears it. The serving sheet's download address stops answering once the leader
moves on."""

from __future__ import annotations

import time
import urllib.error
import urllib.request

import pytest

from tests.e2e.conftest import start_app
from tests.e2e.test_browser import TIMEOUT, _settled
from trials import gate

pytestmark = pytest.mark.browser

PASSCODE = "rye-and-caraway"
SECRET = "a test secret shared with the server"


@pytest.fixture
def locked_server(tmp_path, monkeypatch):
    monkeypatch.setenv("TRIALS_SESSION_SECRET", SECRET)
    url, proc, db = start_app(tmp_path, passcode=PASSCODE)
    yield url
    proc.terminate()
    proc.wait(timeout=10)


def _gate_shown(page) -> bool:
    _settled(page)
    return page.get_by_label("Leader passcode").count() == 1


def _open_with(browser, url: str, cookie: str | None):
    context = browser.new_context(viewport={"width": 1280, "height": 1000})
    if cookie is not None:
        context.add_cookies([{"name": gate.COOKIE, "value": cookie, "url": url}])
    page = context.new_page()
    page.goto(url + "/plan?study=1")
    page.get_by_text("Kitchen Trials").or_(page.get_by_text("Serving plan:")).first.wait_for(
        timeout=TIMEOUT)
    return context, page


def _sign_in(page) -> None:
    page.get_by_label("Leader passcode").fill(PASSCODE)
    page.get_by_role("button", name="Open").click()
    page.get_by_text("Serving plan:").first.wait_for(timeout=TIMEOUT)
    _settled(page)


def test_a_reload_keeps_the_leader_signed_in_and_sign_out_ends_it(locked_server, browser,
                                                                    shots):
    url = locked_server
    context, page = _open_with(browser, url, None)
    assert _gate_shown(page)
    _sign_in(page)
    page.wait_for_function(f"document.cookie.includes('{gate.COOKIE}=')", timeout=TIMEOUT)
    (cookie,) = [c for c in context.cookies() if c["name"] == gate.COOKIE]
    assert cookie["sameSite"] == "Strict" and cookie["path"] == "/"
    assert 11.9 * 3600 < cookie["expires"] - time.time() <= 12 * 3600
    assert "rye" not in cookie["value"] and PASSCODE not in page.url

    page.reload()
    page.get_by_text("Serving plan:").first.wait_for(timeout=TIMEOUT)
    assert not _gate_shown(page)
    page.screenshot(path=shots / "1-after-reload.png", full_page=True)

    page.get_by_role("button", name="Sign out").click()
    page.get_by_label("Leader passcode").wait_for(timeout=TIMEOUT)
    page.wait_for_function(f"!document.cookie.includes('{gate.COOKIE}=')", timeout=TIMEOUT)
    page.reload()
    assert _gate_shown(page)
    page.screenshot(path=shots / "2-signed-out-reload.png", full_page=True)
    context.close()

    # the signed-out token itself opens nothing, even copied into another browser
    other, page = _open_with(browser, url, cookie["value"])
    assert _gate_shown(page)
    other.close()


def test_a_tampered_expired_or_other_passcode_cookie_opens_nothing(locked_server, browser,
                                                                     shots):
    url = locked_server
    secret = SECRET.encode()
    good = gate.sign_in_token(PASSCODE, secret, "fresh")
    context, page = _open_with(browser, url, good)
    assert not _gate_shown(page)  # the same server secret: a well-made token opens
    context.close()
    cases = {
        "tampered": good[:-2] + ("AA" if not good.endswith("AA") else "BB"),
        "expired": gate.sign_in_token(PASSCODE, secret, "old",
                                      clock=lambda: time.time() - 12 * 3600 - 60),
        "other-passcode": gate.sign_in_token("another passcode", secret, "x"),
        "other-secret": gate.sign_in_token(PASSCODE, b"another secret", "x"),
    }
    for name, value in cases.items():
        context, page = _open_with(browser, url, value)
        assert _gate_shown(page), name
        page.screenshot(path=shots / f"refused-{name}.png")
        context.close()


def _status(address: str) -> int:
    try:
        with urllib.request.urlopen(address, timeout=5) as r:
            return r.status
    except urllib.error.HTTPError as exc:
        return exc.code


def test_the_serving_sheet_address_stops_answering_once_the_leader_moves_on(
        locked_server, browser, shots):
    url = locked_server
    context, page = _open_with(browser, url, None)
    _sign_in(page)
    page.goto(url + "/printing?study=1")
    page.get_by_role("button", name="Prepare the serving sheet").click()
    link = page.get_by_role("button", name="Download the serving sheet (PDF)")
    link.wait_for(timeout=TIMEOUT)
    _settled(page)
    page.screenshot(path=shots / "1-sheet-offered.png", full_page=True)
    with page.expect_download() as download:
        link.click()
    media = download.value.url
    assert "/media/" in media
    assert download.value.path().read_bytes().startswith(b"%PDF")
    assert _status(media) == 200  # anyone holding the address, for now

    page.get_by_role("button", name="Prepare the cup labels").click()  # the next action
    page.get_by_role("button", name="Download the cup labels (PDF)").wait_for(timeout=TIMEOUT)
    _settled(page)
    page.screenshot(path=shots / "2-after-next-action.png", full_page=True)
    assert page.get_by_role("button", name="Download the serving sheet (PDF)").count() == 0
    assert _status(media) == 404
    context.close()
