"""Leader-entered text is shown as typed on every screen and chart: a name holding Markdown,
an HTML tag or a Streamlit directive makes no image, link or coloured text.

Each screen runs under AppTest on a trial whose every name holds such text; every piece of
Markdown an element carries (bodies, labels, help, radio and pill options, tab and expander
labels) and every string of every plotly figure is then inspected.
"""

from __future__ import annotations

import json
import re

import pytest

from tests.app.conftest import page_test, shown
from tests.nasty_names import (
    ANCHORS_2,
    ANCHORS_5,
    ATTRIBUTES,
    DIRECTIVE,
    IMAGE,
    LINK,
    NAME,
    PANELISTS,
    SAMPLES,
    TAG,
    make_nasty_trial,
    nasty,
)
from trials import service, ui

# Markdown fields of element protos; select box and multiselect options are plain text in
# Streamlit 1.67 (checked in a browser), and widget values are never rendered as Markdown.
MARKDOWN_FIELDS = {"body", "label", "help", "options", "content", "caption"}
PLAIN_OPTIONS = {"Selectbox", "MultiSelect"}


@pytest.fixture
def nasty_trial(app_db):
    store = service.open_store(app_db)
    return store, make_nasty_trial(store)


def _nodes(node):
    yield node
    for child in getattr(node, "children", {}).values():
        yield from _nodes(child)


def _repeated(field) -> bool:
    if hasattr(field, "is_repeated"):  # protobuf 6
        return bool(field.is_repeated)
    return field.label == field.LABEL_REPEATED


def _markdown_strings(at) -> list[tuple[str, str]]:
    """(proto type, string) for every Markdown string the elements of ``at`` hold; the type
    of Markdown allowed to hold HTML is ``"html"``."""
    found = []
    for node in _nodes(at._tree):
        proto = getattr(node, "proto", None)
        if proto is None:
            continue
        kind = type(proto).__name__
        if kind == "Markdown" and proto.allow_html:
            kind = "html"
        stack = [proto]
        while stack:
            message = stack.pop()
            for field, value in message.ListFields():
                repeated = _repeated(field)
                if field.message_type is not None:
                    stack.extend(value if repeated else [value])
                elif field.name in MARKDOWN_FIELDS and isinstance(value, str):
                    found.append((kind, value))
                elif field.name == "options" and kind not in PLAIN_OPTIONS and repeated:
                    found += [(kind, v) for v in value if isinstance(v, str)]
    return found


def _chart_strings(at) -> list[str]:
    out = []
    for node in _nodes(at._tree):
        proto = getattr(node, "proto", None)
        if type(proto).__name__ != "PlotlyChart":
            continue

        def walk(value):
            if isinstance(value, str):
                out.append(value)
            elif isinstance(value, dict):
                for v in value.values():
                    walk(v)
            elif isinstance(value, list):
                for v in value:
                    walk(v)

        walk(json.loads(proto.spec))
    return out


LIVE = re.compile(r"\]\(|!\[|<a\b|<img\b|://|:red\[|www\.", re.IGNORECASE)


def _live_markup(markdown: str) -> str | None:
    """The first piece of ``markdown`` that Streamlit would turn into an image, a link or a
    directive, once every backslash-escaped character is set aside; None when inert."""
    bare = re.sub(r"\\.", "", markdown)
    hit = LIVE.search(bare)
    return hit.group(0) if hit else None


def _check(at) -> list[str]:
    assert not at.exception, [e.message for e in at.exception]
    strings = _markdown_strings(at)
    assert strings
    # Markdown that holds HTML (the code cards of the tasting screen) is one HTML block,
    # which Streamlit does not parse as Markdown: there, only a tag could be live.
    bad = [f"{kind}: {s!r}" for kind, s in strings
           if (re.search(r"<(a|img)\b", s) if kind == "html" else _live_markup(s))]
    for s in _chart_strings(at):
        if re.search(r"<a\b|<img\b|<b>", s, re.IGNORECASE):
            bad.append(f"chart: {s!r}")
    assert not bad, "live markup:\n" + "\n".join(bad)
    return [shown(s) for _, s in strings]


def test_literal_makes_each_kind_of_markup_inert_and_reads_back_as_typed():
    for text in (IMAGE, LINK, TAG, DIRECTIVE, "www.example.invalid", "a@b.example",
                 "$x$ **b** _i_ `c` # h", ":material/home: :smile:"):
        escaped = ui.literal(text)
        assert _live_markup(text) or text[0] in "$a:"  # the raw text is not inert...
        assert _live_markup(escaped) is None  # ...the escaped text is
        assert "://" not in escaped and "www." not in escaped.lower()
        assert shown(escaped) == text
    assert ui.literal("one\ntwo") == "one two"
    assert ui.literal("one\r\ntwo", lines=True) == "one  \ntwo"
    assert ui.chart_text(TAG) == '&lt;a href="http://example.invalid"&gt;s&lt;/a&gt;'


@pytest.mark.parametrize("name", [name for name, _, _ in ui.LEADER_PAGES])
def test_every_leader_screen_shows_entered_names_as_typed(nasty_trial, name):
    store, trial_id = nasty_trial
    at = page_test(name)
    at.query_params["study"] = str(trial_id)
    texts = _check(at.run())
    # the experiments screen works on experiments, not on the trial in hand
    if name not in ("home", "panel", "history", "experiment"):
        assert any(NAME in t for t in texts), "the trial's name is shown, escaped"


def test_the_results_screen_and_its_charts_show_names_as_typed(nasty_trial):
    store, trial_id = nasty_trial
    at = page_test("results")
    at.query_params["study"] = str(trial_id)
    at.run()
    texts = _check(at)
    assert [shown(t.label) for t in at.tabs] == list(ATTRIBUTES)
    assert any(SAMPLES[0] in t or SAMPLES[1] in t for t in texts + [NAME]), texts
    charts = _chart_strings(at)
    assert ui.chart_text(SAMPLES[0]) in charts  # the axis's category, escaped for plotly
    at.toggle(key="perf_show").set_value(True).run()
    _check(at)
    assert any(ui.chart_text(PANELISTS[0]) in s for s in _chart_strings(at))


def test_the_decision_screen_shows_the_decision_and_rationale_as_typed(nasty_trial):
    store, trial_id = nasty_trial
    at = page_test("decision")
    at.query_params["study"] = str(trial_id)
    _check(at.run())
    on_file = shown(at.success[0].value)
    assert nasty("Switch") in on_file and "# no" in on_file


def test_the_history_chart_shows_trial_and_attribute_names_as_typed(nasty_trial):
    at = page_test("history").run()
    _check(at)
    charts = _chart_strings(at)
    assert ui.chart_text(ATTRIBUTES[0]) in charts  # a legend entry
    assert any(ui.chart_text(NAME) in s for s in charts)  # an axis category


def test_the_tasting_screen_shows_attributes_and_anchors_as_typed(nasty_trial):
    store, trial_id = nasty_trial
    at = page_test("taste")
    at.query_params["t"] = service.panelist_token(store, trial_id, PANELISTS[2])
    _check(at.run())
    at.button(key="nav_start").click()
    texts = _check(at.run())
    assert any(ATTRIBUTES[0] in t for t in texts) and any(ATTRIBUTES[1] in t for t in texts)
    # each point's button carries its words: the two ends, or every point
    assert f"**1** {ANCHORS_2[0]}" in texts and f"**9** {ANCHORS_2[1]}" in texts
    assert {f"**{i}** {a}" for i, a in enumerate(ANCHORS_5, start=1)} <= set(texts)
    assert not any(s in "\n".join(texts) for s in SAMPLES)  # blinding holds
