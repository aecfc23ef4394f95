"""The trial store: the only code that touches the database (SQLAlchemy 2).

``open_store(url)`` returns a :class:`Store`; the tables live in ``schema``, the
upgrade steps in ``migrations``.
"""

from trials.store.engine import DEFAULT_URL, Store, open_store, resolve_url
from trials.store.migrations import LATEST as SCHEMA_VERSION

__all__ = ["DEFAULT_URL", "SCHEMA_VERSION", "Store", "open_store", "resolve_url"]
