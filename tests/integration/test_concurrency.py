"""Many panelists at once: no answer lost, none duplicated; a killed writer leaves the
store consistent."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
import sqlalchemy as sa

from trials import service
from trials.model import Attribute, AttributeKind, Sample

ROOT = Path(__file__).resolve().parents[2]
PANEL = 30


def _trial(store) -> int:
    codes = [f"C{i:02d}" for i in range(1, PANEL + 1)]
    for c in codes:
        service.add_panelist(store, c, consent_on="2026-01-01")
    sid = service.create_trial(
        store, name="Concurrency: four breads", method="rating",
        samples=[Sample(f"Bread {k}") for k in "ABCD"],
        attributes=[Attribute(n, AttributeKind.INTENSITY, 1, 9)
                    for n in ("crust", "crumb", "salt")],
    ).id
    service.draw_plan(store, sid, panelist_codes=codes, seed=11)
    return sid


def _answer_all(url: str, token: str) -> int:
    """12 answers (4 cups x 3 attributes), each sent twice as a double tap would."""
    store = service.open_store(url)
    try:
        ballot = service.ballot_for_token(store, token)
        n = 0
        for code in ballot.sets[0].codes:
            for attr in ballot.attributes:
                for _ in range(2):
                    service.record_answer(store, token, code=code, attribute=attr.name,
                                          value=(int(code) % 9) + 1)
                n += 1
        return n
    finally:
        store.close()


def _check_complete(store, sid) -> None:
    rows = service.list_answers(store, sid)
    keys = [(r.panelist_code, r.code, r.attribute) for r in rows]
    assert len(rows) == PANEL * 12
    assert len(set(keys)) == len(keys)
    assert all(r.value == str(int(r.code) % 9 + 1) for r in rows)


def test_thirty_panelists_answering_at_once_in_threads_lose_and_duplicate_nothing(db_url):
    store = service.open_store(db_url)
    sid = _trial(store)
    tokens = list(service.panelist_links(store, sid).values())
    with ThreadPoolExecutor(max_workers=PANEL) as pool:
        done = list(pool.map(lambda link: _answer_all(db_url, link.split("=", 1)[1]), tokens))
    assert done == [12] * PANEL
    _check_complete(store, sid)
    store.close()


CHILD = textwrap.dedent("""
    import sys
    sys.path.insert(0, {root!r})
    from trials import service
    url, tokens = sys.argv[1], sys.argv[2:]
    store = service.open_store(url)
    for token in tokens:
        ballot = service.ballot_for_token(store, token)
        for code in ballot.sets[0].codes:
            for attr in ballot.attributes:
                for _ in range(2):
                    service.record_answer(store, token, code=code, attribute=attr.name,
                                          value=(int(code) % 9) + 1)
    store.close()
""")


@pytest.mark.slow
def test_thirty_panelists_answering_from_separate_processes_lose_and_duplicate_nothing(db_url):
    # 10 processes of 3 panelists each: 30 panelists at once on a 2-core machine.
    store = service.open_store(db_url)
    sid = _trial(store)
    tokens = [link.split("=", 1)[1] for link in service.panelist_links(store, sid).values()]
    code = CHILD.format(root=str(ROOT))
    procs = [subprocess.Popen([sys.executable, "-c", code, db_url, *tokens[i:i + 3]],
                              stderr=subprocess.PIPE, text=True)
             for i in range(0, PANEL, 3)]
    errors = [p.communicate(timeout=300)[1] for p in procs]
    assert [p.returncode for p in procs] == [0] * len(procs), errors
    _check_complete(store, sid)
    store.close()


KILLED = textwrap.dedent("""
    import sys, time
    sys.path.insert(0, {root!r})
    import sqlalchemy as sa
    from trials import service
    from trials.store.schema import ResponseRow, AuditRow
    store = service.open_store(sys.argv[1])
    sid = int(sys.argv[2])

    def work(s):
        # half a big import: rows written, not committed
        s.execute(sa.insert(ResponseRow), [
            dict(study_id=sid, session_id=1, panelist_id=1, question=f"x{{i}}", code="1",
                 attribute="crust", value="5", comment="", entered_by="killed", mode="import")
            for i in range(500)])
        s.flush()
        print("ready", flush=True)
        time.sleep(120)

    store.write(work)
""")


def test_a_writer_killed_mid_transaction_leaves_the_store_consistent(db_url):
    store = service.open_store(db_url)
    sid = _trial(store)
    e = service.plan(store, sid)[0]
    service.enter_answer(store, sid, panelist_code=e.panelist_code, code=e.code,
                            attribute="crust", value=4)
    before = service.list_answers(store, sid)
    child = subprocess.Popen([sys.executable, "-c", KILLED.format(root=str(ROOT)), db_url,
                              str(sid)], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    line = child.stdout.readline()
    assert line.strip() == "ready", child.stderr.read()
    os.kill(child.pid, signal.SIGKILL)
    child.wait(timeout=30)
    assert child.returncode == -signal.SIGKILL
    if store.dialect == "postgresql":
        time.sleep(0.5)  # the server notices the dropped connection and rolls back
    assert service.list_answers(store, sid) == before
    with store.engine.connect() as conn:
        assert conn.execute(sa.text("SELECT count(*) FROM response WHERE entered_by = 'killed'")
                            ).scalar() == 0
        if store.dialect == "sqlite":
            assert conn.exec_driver_sql("PRAGMA integrity_check").scalar() == "ok"
    # the lock is gone: the next writer gets through at once
    e2 = service.plan(store, sid)[1]
    service.enter_answer(store, sid, panelist_code=e2.panelist_code, code=e2.code,
                            attribute="crust", value=6)
    assert len(service.list_answers(store, sid)) == 2
    store.close()
