"""Shared Streamlit helpers: the store, the access checks and the cautions.

With ``trials/app.py`` the only module under ``trials/`` that imports streamlit. Pages
call :func:`require_leader` or :func:`require_panelist` first thing, so that a page run
without the entry script still meets its gate.
"""

from __future__ import annotations

import hmac
import os
from collections.abc import Callable
from pathlib import Path
from typing import Any

import streamlit as st

from trials import service

PASSCODE_ENV = "TRIALS_PASSCODE"
PAGES_DIR = Path(__file__).resolve().parent.parent / "pages"

# (file name in pages/, title, icon); the first is the home screen.
LEADER_PAGES: tuple[tuple[str, str, str], ...] = (
    ("home", "Trials", ":material/list_alt:"),
    ("trial", "Trial set-up", ":material/science:"),
)


def leader_pages(make: Callable[..., Any]) -> list[Any]:
    """The leader's screens, in menu order, built with ``make(name, title, icon)``."""
    pages = []
    for i, (name, title, icon) in enumerate(LEADER_PAGES):
        if (PAGES_DIR / f"{name}.py").exists():
            pages.append(make(name, title, icon, default=(i == 0)))
    return pages


@st.cache_resource(show_spinner=False)
def _open_store(url: str | None):
    return service.open_store(url)


def store():
    """The store named by ``TRIALS_DB`` (default ``sqlite:///trials.db``), opened once."""
    return _open_store(os.environ.get("TRIALS_DB"))


def configured_passcode() -> str | None:
    """The leader passcode from ``TRIALS_PASSCODE``, else the app's secrets, else None.

    The environment is read first: with no secrets file even ``st.secrets.get`` raises.
    """
    value = os.environ.get(PASSCODE_ENV)
    if value:
        return value
    try:
        secret = st.secrets.get("leader_passcode") or st.secrets.get(PASSCODE_ENV)
    except Exception:  # no secrets file: Streamlit raises rather than returning None
        return None
    return str(secret) if secret else None


def passcode_matches(given: str, expected: str) -> bool:
    """Compare in constant time, so the answer's timing tells nothing."""
    return hmac.compare_digest(given.encode("utf-8"), expected.encode("utf-8"))


def panelist_token() -> str | None:
    token = st.query_params.get("t")
    return token or None


def require_leader() -> None:
    """Stop the page unless the visitor may see leader screens.

    A panelist link never opens a leader screen. With a passcode configured the visitor
    must give it once per browser session; without one the app is a single-user tool
    and says so.
    """
    if panelist_token():
        st.error("This link opens a tasting ballot only.")
        st.stop()
    expected = configured_passcode()
    if expected is None:
        st.caption(
            ":material/lock_open: Single-user mode: no leader passcode is set "
            f"(set {PASSCODE_ENV} to protect the leader screens)."
        )
        return
    if st.session_state.get("leader_ok"):
        return
    st.title("Kitchen Trials")
    with st.form("leader_gate"):
        given = st.text_input("Leader passcode", type="password")
        submitted = st.form_submit_button("Open")
    if submitted and passcode_matches(given, expected):
        st.session_state["leader_ok"] = True
        st.rerun()
    if submitted:
        st.error("That passcode does not open the leader screens.")
    st.stop()


def require_panelist():
    """The ballot that this page's token opens; stops the page for a bad token."""
    token = panelist_token()
    if not token:
        st.error("This screen opens from a panelist link. Ask the panel leader for yours.")
        st.stop()
    try:
        return service.ballot_for_token(store(), token)
    except Exception:
        st.error("This link does not open a ballot. Ask the panel leader for a new one.")
        st.stop()


def food_caution() -> None:
    """The standing caution on screens where food is prepared or served."""
    st.caption(
        ":material/warning: Samples are food served to people: check declared allergens "
        "against every sample, obtain informed consent, and prepare and hold samples as "
        "your local food code and licensed practice require."
    )
