"""Opening a store: the engine, the per-connection settings, sessions and retries.

SQLite (the default, one file) gets WAL journalling, foreign keys and a busy timeout on
every connection; a write transaction starts with ``BEGIN IMMEDIATE`` so that two
writers queue on the lock instead of failing when one upgrades a read to a write.
PostgreSQL is reached by URL (``postgresql+psycopg://...``). Either way, a write is a
function run inside one transaction by :meth:`Store.write`, retried when the database
reports a busy lock, a serialization failure, a deadlock or a unique-key race (the
retry then sees the row the other writer committed).
"""

from __future__ import annotations

import os
import random
import sys
import threading
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager, nullcontext
from dataclasses import dataclass, field
from typing import TypeVar

import sqlalchemy as sa
from sqlalchemy import event
from sqlalchemy.engine import Engine
from sqlalchemy.exc import DBAPIError, IntegrityError, OperationalError
from sqlalchemy.orm import Session, sessionmaker

from trials.errors import TrialsError
from trials.store import limits, migrations

T = TypeVar("T")

DEFAULT_URL = "sqlite:///trials.db"
BUSY_TIMEOUT_MS = 5_000  # one wait for another process's write lock
BUSY_DEADLINE_S = 10.0  # all waits of one write together, then it says the store is busy
RETRIES = 8
_PG_MIGRATION_LOCK = 727_401  # an arbitrary key for pg_advisory_xact_lock


def resolve_url(url: str | None = None) -> str:
    """The store's URL: the argument, else ``$TRIALS_DB``, else ``sqlite:///trials.db``."""
    url = url or os.environ.get("TRIALS_DB") or DEFAULT_URL
    if url.startswith("postgres://"):
        url = "postgresql+psycopg://" + url[len("postgres://"):]
    elif url.startswith("postgresql://"):
        url = "postgresql+psycopg://" + url[len("postgresql://"):]
    return url


def _sqlite_settings(engine: Engine) -> None:
    @event.listens_for(engine, "connect")
    def _on_connect(dbapi_conn, _record) -> None:  # pragma: no cover - exercised via engine
        dbapi_conn.isolation_level = None  # SQLAlchemy emits BEGIN itself (below)
        cur = dbapi_conn.cursor()
        cur.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
        cur.execute("PRAGMA foreign_keys = ON")
        if engine.url.database not in (None, "", ":memory:"):
            cur.execute("PRAGMA journal_mode = WAL")
            cur.execute("PRAGMA synchronous = NORMAL")
        cur.close()

    @event.listens_for(engine, "begin")
    def _on_begin(conn) -> None:
        if conn.get_execution_options().get("trials_write"):
            conn.exec_driver_sql("BEGIN IMMEDIATE")
        else:
            conn.exec_driver_sql("BEGIN")


class _WriterQueue:
    """Writers of every process on this machine queue on an advisory lock (``flock``) on
    a file beside the SQLite file, ``<file>.writer``, before ``BEGIN IMMEDIATE``. A
    waiter polls it every millisecond or two, where SQLite's busy handler sleeps up to
    100 ms between tries; the lock dies with its process. SQLite's own lock still
    guards the file against programs that do not take this one (their wait is the busy
    timeout). Where ``flock`` is missing (Windows) this does nothing."""

    def __init__(self, path: str) -> None:
        self.path = path
        self._fd: int | None = None
        self._pid: int | None = None

    def _file(self) -> int | None:
        if self._pid != os.getpid():  # a forked child opens its own: flock is per file
            self._fd, self._pid = None, os.getpid()
            try:
                self._fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o666)
            except OSError:  # a read-only folder: SQLite's lock alone then
                self._fd = None
        return self._fd

    @staticmethod
    def _turn(fd: int) -> int:
        """How many times the lock has been taken: its holder counts in the file's first
        8 bytes, so a waiter can tell a moving queue from a lock held still."""
        return int.from_bytes(os.pread(fd, 8, 0) or b"\0", "little")

    @contextmanager
    def held(self, deadline_s: float) -> Iterator[None]:
        """Hold the lock. The wait is refused once one holder has kept the lock for
        ``deadline_s`` without it changing hands, or after six such spans in all (the
        lock is not fair: with many writers, one may be passed over a few times)."""
        import fcntl

        fd = self._file()
        if fd is None:
            yield
            return
        start = still = time.monotonic()
        pause, seen = 0.0005, self._turn(fd)
        while True:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except BlockingIOError:
                now, turn = time.monotonic(), self._turn(fd)
                if turn != seen:  # the queue moves: the wait for one holder starts again
                    seen, still = turn, now
                if now - still > deadline_s or now - start > 6 * deadline_s:
                    raise TrialsError(
                        f"the store is busy: another program has held its write lock for "
                        f"{now - still:.0f} s; nothing was changed, try again") from None
                time.sleep(pause)
                pause = min(0.002, pause * 1.5)
        try:
            os.pwrite(fd, ((self._turn(fd) + 1) % 2**63).to_bytes(8, "little"), 0)
            yield
        finally:
            fcntl.flock(fd, fcntl.LOCK_UN)

    def close(self) -> None:
        if self._fd is not None and self._pid == os.getpid():
            os.close(self._fd)
        self._fd = None


def _busy(exc: BaseException) -> bool:
    text = str(getattr(exc, "orig", exc)).lower()
    return "locked" in text or "busy" in text


def _retryable(exc: BaseException) -> bool:
    if isinstance(exc, IntegrityError):
        return True  # a unique-key race: the retry sees the committed row
    if isinstance(exc, OperationalError):
        text = str(exc.orig).lower()
        if "locked" in text or "busy" in text:
            return True
    if isinstance(exc, DBAPIError):
        code = getattr(exc.orig, "sqlstate", None) or getattr(exc.orig, "pgcode", None)
        if code in ("40001", "40P01"):  # serialization failure, deadlock detected
            return True
    return False


@dataclass
class Store:
    """An open trial store: the engine and its session factories (``url`` is shown
    with any password hidden)."""

    url: str
    engine: Engine
    _read: sessionmaker
    _write: sessionmaker
    # SQLite has one writer at a time; writers of this process queue on this lock in
    # turn instead of in SQLite's busy handler, whose sleeps grow to 100 ms. Other
    # processes still meet the busy timeout.
    _write_lock: threading.Lock | None = field(default=None, repr=False)
    # ... and writers of all processes on a lock file beside it (see _WriterQueue)
    _queue: _WriterQueue | None = field(default=None, repr=False)
    # small caches of the use cases, each checked against the store before it is trusted
    memo: dict = field(default_factory=dict, repr=False)

    @property
    def dialect(self) -> str:
        return self.engine.dialect.name

    @contextmanager
    def read(self) -> Iterator[Session]:
        """A session for reading; nothing it does is committed."""
        with self._read() as session:
            try:
                yield session
            finally:
                session.rollback()

    def write(self, work: Callable[[Session], T], *, retries: int = RETRIES) -> T:
        """Run ``work(session)`` in one transaction and commit; all or nothing.

        Retried (from the start, in a fresh transaction) on a busy lock, a serialization
        failure, a deadlock or a unique-key race; a :class:`TrialsError` raised by
        ``work`` rolls back and propagates at once.
        """
        attempt = 0
        first_busy: float | None = None  # waits count from the first refusal, not the queue
        while True:
            queued = self._queue.held(BUSY_DEADLINE_S) if self._queue else nullcontext()
            with self._write_lock or nullcontext(), queued, self._write() as session:
                try:
                    result = work(session)
                    session.commit()
                    return result
                except (OperationalError, IntegrityError, DBAPIError) as exc:
                    session.rollback()
                    attempt += 1
                    if not _retryable(exc):
                        if isinstance(exc, OperationalError):  # read-only file, disk full
                            reason = str(exc.orig).strip().splitlines()[0]
                            raise TrialsError(f"the store refused the change: {reason}; "
                                              "nothing was changed") from None
                        raise
                    now = time.monotonic()
                    first_busy = now if first_busy is None else first_busy
                    waited = now - first_busy + BUSY_TIMEOUT_MS / 1000
                    if attempt > retries or waited > BUSY_DEADLINE_S:
                        if _busy(exc):
                            raise TrialsError(
                                f"the store is busy: another program has held its write lock "
                                f"for {waited:.0f} s; nothing was changed, try again") from None
                        raise
                except BaseException:
                    session.rollback()
                    raise
            time.sleep(min(0.5, 0.01 * 2**attempt) * (0.5 + random.random()))

    def close(self) -> None:
        self.engine.dispose()
        if self._queue is not None:
            self._queue.close()


def open_store(url: str | None = None, *, echo: bool = False) -> Store:
    """Open (and create or upgrade) the trial store at ``url``.

    Parameters
    ----------
    url
        A SQLAlchemy URL; default ``$TRIALS_DB``, else ``sqlite:///trials.db``.
        ``postgresql://`` and ``postgres://`` mean psycopg 3.
    echo
        Log every SQL statement (for debugging).

    Returns
    -------
    Store
        With the tables created on first use and the schema upgraded to
        :data:`trials.store.migrations.LATEST`.
    """
    url = resolve_url(url)
    try:
        sa_url = sa.engine.make_url(url)
    except (sa.exc.ArgumentError, ValueError):
        raise TrialsError(f"not a database URL: {url!r}; expected e.g. "
                          "sqlite:///trials.db or postgresql://user@host/dbname") from None
    if sa_url.get_backend_name() == "sqlite":
        if sa_url.host or (sa_url.database is not None and not sa_url.database.strip()):
            raise TrialsError(f"not a SQLite file URL: {url!r}; write sqlite:///relative.db "
                              "or sqlite:////absolute/path.db")
    kwargs: dict = {"echo": echo}
    if sa_url.get_backend_name() == "sqlite":
        kwargs["connect_args"] = {"timeout": BUSY_TIMEOUT_MS / 1000, "check_same_thread": False}
    else:
        kwargs["pool_pre_ping"] = True
    shown = sa_url.render_as_string(hide_password=True)
    try:
        engine = sa.create_engine(sa_url, **kwargs)
    except (ImportError, sa.exc.NoSuchModuleError, sa.exc.ArgumentError, ValueError) as exc:
        raise TrialsError(f"cannot open {shown!r}: {exc}") from None
    if engine.dialect.name == "sqlite":
        _sqlite_settings(engine)
    writer = engine.execution_options(trials_write=True)
    write_sessions = sessionmaker(writer, expire_on_commit=False)
    limits.guard(write_sessions)  # texts too long or holding NUL: refused alike everywhere
    store = Store(
        url=shown,
        engine=engine,
        _read=sessionmaker(engine, expire_on_commit=False),
        _write=write_sessions,
        _write_lock=threading.Lock() if engine.dialect.name == "sqlite" else None,
        _queue=_writer_queue(sa_url),
    )
    _migrate(store)
    return store


def _writer_queue(url: sa.engine.URL) -> _WriterQueue | None:
    """The cross-process writer queue of a SQLite file (none for memory or PostgreSQL)."""
    if url.get_backend_name() != "sqlite" or sys.platform == "win32":
        return None
    name = url.database or ""
    if name in ("", ":memory:") or name.startswith("file:") or url.query.get("mode") == "memory":
        return None
    return _WriterQueue(os.path.abspath(name) + ".writer")


def _migrate(store: Store) -> None:
    """Create or upgrade the schema. The version is read first in a read transaction, so
    that opening an up-to-date store never waits on a writer; only a new or older store
    takes the write lock."""

    def step(session: Session) -> None:
        conn = session.connection()
        if store.dialect == "postgresql":
            conn.execute(sa.text("SELECT pg_advisory_xact_lock(:k)"), {"k": _PG_MIGRATION_LOCK})
        migrations.upgrade(conn)

    try:
        with store.read() as session:
            version = migrations.current_version(session.connection())
        if version != migrations.LATEST:
            store.write(step)
    except DBAPIError as exc:  # not a database, truncated, read-only, unreachable
        store.engine.dispose()
        reason = str(getattr(exc, "orig", exc)).strip().splitlines()[0]
        raise TrialsError(f"cannot open the store {store.url!r}: {reason}") from None
    except TrialsError:
        store.engine.dispose()
        raise
