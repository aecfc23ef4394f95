"""Changing a panelist on the roster (allergens, restrictions, consent): stored, each
changed field audited with its old and new value, an unknown code refused."""

from __future__ import annotations

import datetime as dt

import pytest

from trials import service
from trials.errors import TrialsError


def test_a_panelists_allergens_and_consent_change_and_each_change_is_audited(store):
    service.add_panelist(store, "R01", allergens="milk", consent_on=dt.date(2026, 1, 5))
    changed = service.update_panelist(store, "R01", allergens="milk, sesame",
                                      restrictions="vegetarian", consent_on=None, by="chef")
    assert set(changed.allergens) == {"milk", "sesame"}
    assert (changed.restrictions, changed.consented) == ("vegetarian", False)
    assert {p.code: p for p in service.list_panelists(store)}["R01"] == changed
    entries = service.roster_audit(store, "R01")
    assert [e.field for e in entries] == ["created", "allergens", "restrictions", "consent_on"]
    assert {e.who for e in entries[1:]} == {"chef"}
    consent = entries[-1]
    assert (consent.old, consent.new) == ("2026-01-05", None)
    # the same values again change nothing and add no entry
    service.update_panelist(store, "R01", allergens="sesame, milk", restrictions="vegetarian",
                            consent_on=None, by="chef")
    assert len(service.roster_audit(store, "R01")) == 4


def test_changing_a_panelist_not_on_the_roster_is_refused(store):
    with pytest.raises(TrialsError, match="no panelist with code 'R99'"):
        service.update_panelist(store, "R99", allergens="egg")
    with pytest.raises(TrialsError, match="consent_on"):
        service.add_panelist(store, "R02")
        service.update_panelist(store, "R02", consent_on="05/01/2026")
