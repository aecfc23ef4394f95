"""Use cases of the panel roster: panelist codes (no personal data is needed), their
declared allergens and restrictions, and the date of informed consent."""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable
from pathlib import Path

from trials.errors import ImportRowsError, TrialsError
from trials.model import AuditEntry, Panelist
from trials.service import _input
from trials.store import Store
from trials.store import panel as panel_rows


def add_panelist(
    store: Store,
    code: str,
    *,
    allergens: Iterable[str] | str = (),
    restrictions: str = "",
    consent_on: dt.date | str | None = None,
    by: str = "leader",
) -> Panelist:
    """Add a panelist to the roster (a code; no personal data is required)."""
    code = _input.name(code, "a panelist code")
    consent = _input.as_date(consent_on, "consent_on")
    declared = _input.allergens(allergens)
    return store.write(lambda tx: panel_rows.add_panelist(
        tx, code, allergens=declared, restrictions=restrictions, consent_on=consent, by=by))


def update_panelist(
    store: Store,
    code: str,
    *,
    allergens: Iterable[str] | str = (),
    restrictions: str = "",
    consent_on: dt.date | str | None = None,
    by: str = "leader",
) -> Panelist:
    """Change a panelist's declared allergens, other restrictions and date of informed
    consent (None: no consent on record). Every changed field is audited (old and new
    value); the allergen checks of the serving plan read the new declaration."""
    code = _input.name(code, "a panelist code")
    consent = _input.as_date(consent_on, "consent_on")
    declared = _input.allergens(allergens)
    return store.write(lambda tx: panel_rows.update_panelist(
        tx, code, allergens=declared, restrictions=str(restrictions or "").strip(),
        consent_on=consent, by=by))


def roster_audit(store: Store, code: str | None = None) -> list[AuditEntry]:
    """Every change to the roster (additions, allergens, restrictions, consent), oldest
    first; with ``code``, one panelist's."""
    with store.read() as tx:
        return panel_rows.roster_audit(tx, code)


def list_panelists(store: Store, trial_id: int | None = None) -> list[Panelist]:
    """The roster, or (with ``trial_id``) the panelists in that trial's plan."""
    with store.read() as tx:
        return panel_rows.list_panelists(tx, trial_id)


def import_panelists(store: Store, path: str | Path, *, by: str = "import") -> int:
    """Import a roster from CSV/Excel: ``code`` and optional ``allergens`` (separated by
    ``;``, ``|`` or ``,``), ``restrictions``, ``consent_on`` (YYYY-MM-DD).

    New codes are added, known codes updated (audited). Returns the rows imported.
    """
    frame = _input.read_rows(path)
    _input.require_columns(frame, ("code",))
    problems: list[str] = []
    parsed = []
    seen: dict[str, int] = {}
    for i, rec in enumerate(frame.to_dict("records")):
        rowno = i + 2
        code = str(rec["code"]).strip()
        if not code:
            problems.append(f"row {rowno}, column 'code': a panelist code is required")
            continue
        if code in seen:
            problems.append(f"row {rowno}, column 'code': {code!r} repeats row {seen[code]}")
            continue
        seen[code] = rowno
        try:
            consent = _input.as_date(rec.get("consent_on", ""), "consent_on")
        except TrialsError as exc:
            problems.append(f"row {rowno}, column 'consent_on': {exc}")
            continue
        parsed.append((code, _input.allergens(str(rec.get("allergens", "") or "")),
                       str(rec.get("restrictions", "") or "").strip(), consent))
    if problems:
        raise ImportRowsError(problems)
    columns = list(frame.columns)
    return store.write(lambda tx: panel_rows.store_roster(tx, parsed, columns, by))
