"""Schema versions and the ordered upgrade steps applied when a store is opened.

A fresh database gets the current tables in one step and records ``LATEST``. An older
database gets each step above its recorded version, in order, inside the same
transaction as the version row, so that an upgrade is applied whole or not at all.

Versions:

1. the first schema (study, sample, attribute, batch, batch_value, panelist,
   tasting_session, plan_entry, access_token, response, audit_log, schema_version);
2. ``study.product``: what the samples are variants of, for the history search;
3. ``study.aim``: ``difference`` or ``similarity``, the question a discrimination test
   answers (empty: read from the objective's wording, see ``trials.analysis``);
4. ``study.target_sample``: the sample a target-by-role method (2-AFC, 3-AFC) expects
   to be stronger in the attribute, chosen at set-up (empty for other methods, and for
   trials set up before version 4: their analysis reads the target from the plan's roles);
5. ``experiment``, ``experiment_factor``, ``experiment_run``: recipe experiments, each
   tasted as one rating trial whose samples and batches are its runs;
6. ``ballot_finish``: a panelist's Finish on the tablet, per session, after which the
   tablet no longer changes that session's answers.

To add a version: append a step here that upgrades ``LATEST - 1`` to ``LATEST``,
change the mapping in ``schema.py`` to match, and keep the test that upgrades a
version-1 database passing. Steps use plain DDL that SQLite and PostgreSQL both accept.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable

import sqlalchemy as sa
from sqlalchemy.engine import Connection

from trials.errors import TrialsError
from trials.store.schema import Base, SchemaVersion


def _v2_study_product(conn: Connection) -> None:
    conn.execute(sa.text("ALTER TABLE study ADD COLUMN product VARCHAR(200) NOT NULL DEFAULT ''"))


def _v3_study_aim(conn: Connection) -> None:
    conn.execute(sa.text("ALTER TABLE study ADD COLUMN aim VARCHAR(20) NOT NULL DEFAULT ''"))


def _v4_study_target_sample(conn: Connection) -> None:
    conn.execute(sa.text(
        "ALTER TABLE study ADD COLUMN target_sample VARCHAR(200) NOT NULL DEFAULT ''"))


def _v5_experiments(conn: Connection) -> None:
    # new tables only: created from the mapping, which both dialects accept
    tables = [Base.metadata.tables[name]
              for name in ("experiment", "experiment_factor", "experiment_run")]
    Base.metadata.create_all(conn, tables=tables)


def _v6_ballot_finish(conn: Connection) -> None:
    Base.metadata.tables["ballot_finish"].create(conn)


# version reached -> (step, note); the step upgrades from version - 1
STEPS: dict[int, tuple[Callable[[Connection], None], str]] = {
    2: (_v2_study_product, "study.product"),
    3: (_v3_study_aim, "study.aim"),
    4: (_v4_study_target_sample, "study.target_sample"),
    5: (_v5_experiments, "experiment, experiment_factor, experiment_run"),
    6: (_v6_ballot_finish, "ballot_finish"),
}
LATEST = 6


def current_version(conn: Connection) -> int | None:
    """The recorded schema version, 0 for an empty database, None for a foreign one."""
    names = set(sa.inspect(conn).get_table_names())
    if "schema_version" not in names:
        # an empty database is new; tables of another program's make it foreign
        return 0 if not names else None
    top = conn.execute(sa.select(sa.func.max(SchemaVersion.version))).scalar()
    return int(top or 0)


def upgrade(conn: Connection) -> list[int]:
    """Bring the schema to ``LATEST``; returns the versions applied (empty: up to date)."""
    now = dt.datetime.now(dt.UTC).replace(tzinfo=None)
    version = current_version(conn)
    if version is None:
        raise TrialsError(
            "the database holds tables but no 'schema_version': not a trial store (another "
            "program's database?); give a new file or an empty database"
        )
    if version > LATEST:
        raise TrialsError(
            f"the database is at schema version {version}, newer than this program's "
            f"{LATEST}; update the program"
        )
    if version == 0:
        Base.metadata.create_all(conn)
        conn.execute(
            sa.insert(SchemaVersion).values(version=LATEST, applied_at=now, note="created")
        )
        return [LATEST]
    applied = []
    for target in range(version + 1, LATEST + 1):
        step, note = STEPS[target]
        step(conn)
        conn.execute(sa.insert(SchemaVersion).values(version=target, applied_at=now, note=note))
        applied.append(target)
    return applied
