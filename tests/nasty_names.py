"""Names that hold Markdown, HTML and Streamlit directives, and an invented trial made of
them: for the checks that leader-entered text is shown as typed (tests/app, tests/e2e)."""

from __future__ import annotations

import datetime as dt

from trials import service
from trials.model import Attribute, Sample

IMAGE = "![x](http://example.invalid/x.png)"
LINK = "[link](http://example.invalid)"
TAG = '<a href="http://example.invalid">s</a>'
DIRECTIVE = ":red[alarm]"


def nasty(what: str) -> str:
    return f"{what} {IMAGE} {LINK} {TAG} {DIRECTIVE}"


NAME = nasty("Rye")
SAMPLES = (nasty("Old flour"), nasty("New flour"))
ATTRIBUTES = (nasty("Crumb"), nasty("Crust"))
ANCHORS_2 = (nasty("too soft"), nasty("too firm"))
ANCHORS_5 = tuple(nasty(f"point {i}") for i in range(1, 6))
BATCH = "[b](http://example.invalid)"
SETTING = nasty("oven")
PANELISTS = ("[p](http://x.invalid)", "<b>P2</b>", ":red[P3]")
COMMENT = nasty("note")


def make_nasty_trial(store) -> int:
    """A rating trial of two samples on two scales whose every name holds markup, with a
    batch, three panelists in the plan (two answered, with comments), one more panelist
    whose declared allergen a sample holds, and a decision; returns its id."""
    for code in PANELISTS:
        service.add_panelist(store, code, consent_on=dt.date(2026, 1, 5))
    service.add_panelist(store, nasty("A")[:40], allergens="![g](http://example.invalid/g)",
                         consent_on=dt.date(2026, 1, 5))
    trial = service.create_trial(
        store, name=NAME, method="rating", product=nasty("bread"), objective=nasty("why"),
        samples=[Sample(SAMPLES[0], is_control=True,
                        allergens=("![g](http://example.invalid/g)",)),
                 Sample(SAMPLES[1])],
        attributes=[Attribute(ATTRIBUTES[0], low=1, high=9, anchors=ANCHORS_2),
                    Attribute(ATTRIBUTES[1], low=1, high=5, anchors=ANCHORS_5)])
    service.add_batch(store, trial.id, SAMPLES[0], BATCH, settings=[(SETTING, "220", "°C")],
                      measures=[(nasty("moisture"), "41", "%")])
    service.draw_plan(store, trial.id, panelist_codes=list(PANELISTS), seed=2)
    for i, code in enumerate(PANELISTS[:2]):
        token = service.panelist_token(store, trial.id, code)
        for k, entry in enumerate(e for e in service.plan(store, trial.id)
                                  if e.panelist_code == code):
            for attribute in ATTRIBUTES:
                service.record_answer(store, token, code=entry.code, attribute=attribute,
                                      value=str(2 + (i + k) % 3), comment=COMMENT)
    service.record_decision(store, trial.id, nasty("Switch"), nasty("Because") + "\n\n# no",
                            by="test")
    return trial.id
