"""Small builders shared by the store tests (invented trials only)."""

from __future__ import annotations

import datetime as dt

from trials import service
from trials.model import Attribute, AttributeKind, Sample

CONSENT = dt.date(2026, 1, 5)


def roster(store, n: int, *, allergens: dict[str, tuple[str, ...]] | None = None) -> list[str]:
    codes = [f"T{i:02d}" for i in range(1, n + 1)]
    for c in codes:
        service.add_panelist(store, c, allergens=(allergens or {}).get(c, ()),
                             consent_on=CONSENT, by="test")
    return codes


def rating_trial(store, codes: list[str], *, seed: int = 7) -> int:
    study = service.create_trial(
        store, name="Test rating: three glazes", method="rating",
        samples=[Sample("Glaze A", is_control=True), Sample("Glaze B"), Sample("Glaze C")],
        attributes=[Attribute("overall liking", AttributeKind.HEDONIC, 1, 9),
                    Attribute("sweetness", AttributeKind.INTENSITY, 0, 10)],
        by="test",
    )
    service.draw_plan(store, study.id, panelist_codes=codes, seed=seed, by="test")
    return study.id


def triangle_trial(store, codes: list[str], *, seed: int = 3) -> int:
    study = service.create_trial(
        store, name="Test triangle: two proofs", method="triangle",
        samples=[Sample("Usual", is_control=True), Sample("Short")], by="test",
    )
    service.draw_plan(store, study.id, panelist_codes=codes, seed=seed, by="test")
    return study.id


def ranking_trial(store, codes: list[str], *, seed: int = 5) -> int:
    study = service.create_trial(
        store, name="Test ranking: four crumbs", method="ranking",
        samples=[Sample(f"Crumb {k}") for k in "ABCD"], by="test",
    )
    service.draw_plan(store, study.id, panelist_codes=codes, seed=seed, by="test")
    return study.id
