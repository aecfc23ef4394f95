"""In Chromium: the tasting screen and the results screen of a trial whose names hold
Markdown, HTML and directives fetch nothing from outside, link nowhere and colour nothing;
the names read as typed."""

from __future__ import annotations

import pytest

from tests.e2e.conftest import start_app
from tests.e2e.test_browser import TIMEOUT, _settled
from tests.nasty_names import ATTRIBUTES, NAME, PANELISTS, SAMPLES, make_nasty_trial
from trials import service

pytestmark = pytest.mark.browser

LIVE_MARKUP = """() => {
  const out = [];
  for (const img of document.querySelectorAll('img')) {
    const src = img.getAttribute('src') || '';
    if (!src.startsWith('/') && !src.startsWith('data:') && !src.startsWith('blob:')
        && !src.startsWith(location.origin)) out.push('img ' + src);
  }
  for (const a of document.querySelectorAll('a')) {
    const href = (a.getAttribute('href') || '') + ' ' + (a.getAttribute('xlink:href') || '');
    if (href.includes('example.invalid') || href.includes('x.invalid')) out.push('a ' + href);
  }
  for (const s of document.querySelectorAll('.stMarkdownColoredText')) {
    out.push('coloured ' + s.textContent);
  }
  return out;
}"""


@pytest.fixture
def nasty_server(tmp_path):
    url, proc, db = start_app(tmp_path, demo=False)
    store = service.open_store(db)
    yield url, store, make_nasty_trial(store)
    proc.terminate()
    proc.wait(timeout=10)


def _visible(page) -> str:
    return page.inner_text("body").replace("\u2060", "")


def _watch(page) -> list[str]:
    seen: list[str] = []
    page.on("request", lambda r: seen.append(r.url))
    return seen


def test_the_tablet_shows_markup_in_names_as_typed_and_fetches_nothing_outside(
        nasty_server, browser, shots):
    url, store, trial_id = nasty_server
    context = browser.new_context(viewport={"width": 820, "height": 2400}, has_touch=True)
    page = context.new_page()
    requests = _watch(page)
    page.goto(f"{url}/taste?t={service.panelist_token(store, trial_id, PANELISTS[2])}")
    page.get_by_text("Before you start").first.wait_for(timeout=TIMEOUT)
    _settled(page)
    page.locator(".st-key-nav_start button").click()
    page.get_by_text("Cup 1 of 2").first.wait_for(timeout=TIMEOUT)
    _settled(page)
    page.screenshot(path=shots / "tablet.png", full_page=True)
    assert page.evaluate(LIVE_MARKUP) == []
    text = _visible(page)
    assert ATTRIBUTES[0] in text and ATTRIBUTES[1] in text
    assert f"Panelist {PANELISTS[2]}" in text
    assert not any(s in text for s in SAMPLES)
    assert [u for u in requests if not u.startswith("http://127.0.0.1:")] == []
    context.close()


def test_the_results_screen_shows_markup_in_names_as_typed_and_fetches_nothing_outside(
        nasty_server, browser, shots):
    url, store, trial_id = nasty_server
    context = browser.new_context(viewport={"width": 1366, "height": 3000})
    page = context.new_page()
    requests = _watch(page)
    page.goto(f"{url}/results?study={trial_id}")
    page.get_by_text("Single-user mode").first.wait_for(timeout=TIMEOUT)
    _settled(page)
    page.locator(".js-plotly-plot").first.wait_for(timeout=TIMEOUT)
    page.wait_for_timeout(800)
    page.screenshot(path=shots / "results.png", full_page=True)
    assert page.evaluate(LIVE_MARKUP) == []
    text = _visible(page)
    assert f"Results: {NAME}" in text
    assert ATTRIBUTES[0] in text  # a tab label
    ticks = page.locator(".js-plotly-plot .xtick text").all_text_contents()
    assert set(SAMPLES) <= set(ticks), ticks  # the chart's categories, as typed
    assert [u for u in requests if not u.startswith("http://127.0.0.1:")] == []
    context.close()
