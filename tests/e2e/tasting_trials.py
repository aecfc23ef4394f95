"""Invented trials for the tasting-screen walks: one per registered method, each served
to one panelist, with sample names that must never reach a panelist's page.

The kitchen, the tarts and their variants are made up for these tests.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from trials import service
from trials.methods import Family, Scoring, all_methods, get_method
from trials.model import Attribute, AttributeKind, Sample

PANELIST = "K07"
# distinctive words, so that a leak of any of them into a page is found by a plain search
SAMPLE_NAMES = ("Quince tart Marlowe", "Quince tart Pellham", "Quince tart Oxbury")
CATA_WORDS = ("flaky", "tart", "buttery")
ALLERGENS = (("gluten", "milk"), ("gluten", "egg"), ("gluten", "sesame"))


@dataclass(frozen=True)
class Built:
    trial_id: int
    method: str
    token: str
    cups: tuple[str, ...]  # the panelist's codes in serving order
    sets: tuple[tuple[str, ...], ...]  # the same codes, set by set
    sample_names: tuple[str, ...]


def attributes_for(method: str) -> list[Attribute]:
    spec = get_method(method)
    if spec.family is Family.RATING:
        # hedonic without its own words: the screen takes the paper ballot's nine anchors
        return [Attribute("overall liking", AttributeKind.HEDONIC, 1, 9),
                Attribute("crust crispness", AttributeKind.INTENSITY, 1, 5),
                Attribute("sweetness", AttributeKind.JAR, 1, 5)]
    if spec.family is Family.RANKING:
        return [Attribute("sweetness", AttributeKind.INTENSITY, 1, 5)]
    if spec.family is Family.CATA:
        return [Attribute(w, AttributeKind.CHECK, 0, 1) for w in CATA_WORDS]
    if spec.asks_attribute:
        return [Attribute("crust crispness", AttributeKind.INTENSITY, 1, 5)]
    return []


def build(db: str, method: str) -> Built:
    """A trial of ``method`` with invented samples, served to :data:`PANELIST`."""
    store = service.open_store(db)
    if PANELIST not in {p.code for p in service.list_panelists(store)}:
        service.add_panelist(store, PANELIST, consent_on=dt.date(2026, 3, 2))
    spec = get_method(method)
    n = 2 if spec.is_forced_choice or spec.family is Family.SIGNAL else 3
    names = SAMPLE_NAMES[:n]
    samples = [Sample(names[i], is_control=i == 0, allergens=ALLERGENS[i]) for i in range(n)]
    study = service.create_trial(
        store, name=f"Quince tart: {method}", method=method, samples=samples,
        attributes=attributes_for(method),
        target_sample=names[1] if spec.scoring is Scoring.TARGET_BY_ROLE else "")
    service.draw_plan(store, study.id, panelist_codes=[PANELIST], seed=11)
    served = sorted(service.plan(store, study.id), key=lambda e: (e.set_index, e.position))
    cups = tuple(e.code for e in served)
    sets = tuple(tuple(e.code for e in served if e.set_index == k)
                 for k in dict.fromkeys(e.set_index for e in served))
    token = service.panelist_token(store, study.id, PANELIST)
    store.close()
    return Built(study.id, method, token, cups, sets, names)


def every_method() -> list[str]:
    return [m.name for m in all_methods()]
