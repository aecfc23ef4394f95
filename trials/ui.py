"""Shared Streamlit helpers: the store, the access checks and the cautions.

With ``trials/app.py`` the only module under ``trials/`` that imports streamlit. Pages
call :func:`require_leader` or :func:`require_panelist` first thing, so that a page run
without the entry script still meets its gate.
"""

from __future__ import annotations

import hmac
import os
import re
from collections.abc import Callable
from pathlib import Path
from typing import Any, NamedTuple

import streamlit as st

from trials import figures, service
from trials.gate import COOKIE, SIGN_IN_SECONDS, read_sign_in, sign_in_token

PASSCODE_ENV = "TRIALS_PASSCODE"
SECRET_ENV = "TRIALS_SESSION_SECRET"
PAGES_DIR = Path(__file__).resolve().parent.parent / "pages"

# (file name in pages/, title, icon); the first is the home screen.
LEADER_PAGES: tuple[tuple[str, str, str], ...] = (
    ("home", "Trials", ":material/list_alt:"),
    ("trial", "Trial set-up", ":material/science:"),
    ("samples", "Samples and batches", ":material/bakery_dining:"),
    ("panel", "Panel", ":material/groups:"),
    ("plan", "Serving plan", ":material/grid_on:"),
    ("printing", "Printing", ":material/print:"),
    ("entry", "Paper entry", ":material/edit_note:"),
    ("results", "Results", ":material/monitoring:"),
    ("experiment", "Recipe experiments", ":material/experiment:"),
    ("decision", "Decision and report", ":material/gavel:"),
    ("history", "History", ":material/manage_search:"),
)


def leader_pages(make: Callable[..., Any]) -> list[Any]:
    """The leader's screens, in menu order, built with ``make(name, title, icon)``."""
    pages = []
    for i, (name, title, icon) in enumerate(LEADER_PAGES):
        if (PAGES_DIR / f"{name}.py").exists():
            pages.append(make(name, title, icon, default=(i == 0)))
    return pages


def serve() -> None:
    """Run the Streamlit server in this process (``trials app`` starts it so): the
    modules every screen needs (this one, the use cases, pandas, SQLAlchemy) are
    imported first, so that the server answers its health check with them loaded and
    the first visitor waits for the screen alone, not for the imports. The arguments
    are those of ``streamlit`` (``run ENTRY --flags``)."""
    import sys

    import pandas  # noqa: F401  (st.dataframe converts through it on every screen)
    from streamlit.web import cli

    sys.argv = ["streamlit", *sys.argv[1:]]
    cli.main(prog_name="streamlit")


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
    and says so. Past the gate, the sidebar asks for the leader's name for the audit log.
    """
    _leader_gate()
    leader_sidebar()


def _leader_gate() -> None:
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
    if _signed_in(expected):
        return
    if st.session_state.pop("_clear_cookie", False):
        _write_cookie(st, "", 0.0)
    st.title("Kitchen Trials")
    with st.form("leader_gate"):
        given = st.text_input("Leader passcode", type="password")
        submitted = st.form_submit_button("Open")
    if submitted:
        _try_passcode(given, expected)
    st.stop()


@st.cache_resource(show_spinner=False)
def _throttle():
    from trials.gate import Throttle

    return Throttle()


@st.cache_resource(show_spinner=False)
def _server_secret() -> bytes:
    """The secret mixed into sign-in tokens: ``TRIALS_SESSION_SECRET`` when set (tokens then
    outlive a restart), else random per server process (a restart signs leaders out)."""
    configured = os.environ.get(SECRET_ENV, "")
    return configured.encode("utf-8") if configured else os.urandom(32)


@st.cache_resource(show_spinner=False)
def _signed_out() -> set[str]:
    """Sign-in ids whose leader pressed "Sign out": their tokens open nothing any more."""
    return set()


def _cookie_token() -> str | None:
    try:
        return st.context.cookies.get(COOKIE) or None
    except Exception:  # a test run without a browser has no cookies
        return None


def _signed_in(expected: str) -> bool:
    """True once the passcode was given in this browser session, or a valid sign-in
    cookie came with it (made with this passcode, under 12 hours old, not signed out)."""
    if st.session_state.get("leader_ok"):
        return True
    if st.session_state.get("_leader_signed_out"):
        return False  # the browser may still send the cookie it had when the tab opened
    token = _cookie_token()
    if token is None:
        return False
    sign_in = read_sign_in(token, expected, _server_secret())
    if sign_in is None or sign_in in _signed_out():
        import logging

        logging.getLogger("trials.gate").warning("leader sign-in cookie refused: %s",
                                                 _client_keys())
        return False
    st.session_state["leader_ok"] = True
    st.session_state["_leader_sign_in"] = sign_in
    return True


def _write_cookie(where, token: str, expires: float) -> None:
    """Set (or with ``expires`` 0, clear) the sign-in cookie from the browser: Streamlit
    reads cookies but cannot set one. SameSite=Strict, the whole app's path, Secure under
    HTTPS; Max-Age counts down to ``expires`` (seconds since the epoch)."""
    import json

    where.html(
        "<script>(function () {"
        f" var age = Math.max(0, Math.floor({float(expires)!r} - Date.now() / 1000));"
        f" document.cookie = {json.dumps(COOKIE + '=')} + encodeURIComponent({json.dumps(token)})"
        " + '; Max-Age=' + age + '; Path=/; SameSite=Strict'"
        " + (location.protocol === 'https:' ? '; Secure' : '');"
        "})();</script>",
        unsafe_allow_javascript=True,
    )


def sign_out() -> None:
    """Forget this browser's sign-in: the session, the cookie and the token itself."""
    sign_in = st.session_state.pop("_leader_sign_in", None)
    if sign_in:
        _signed_out().add(sign_in)
    st.session_state.pop("_leader_cookie", None)
    st.session_state["leader_ok"] = False
    st.session_state["_leader_signed_out"] = True
    st.session_state["_clear_cookie"] = True


def _client_keys() -> tuple[str, ...]:
    """Throttle keys: this browser session, and the client's address where known."""
    session = st.session_state.setdefault("_gate_session", os.urandom(8).hex())
    try:
        address = st.context.ip_address or ""
    except Exception:  # a test run without a browser has no address
        address = ""
    return (f"session:{session}",) + ((f"address:{address}",) if address else ())


def _try_passcode(given: str, expected: str) -> None:
    """Check a passcode under the throttle (trials.gate); log each refusal."""
    import logging

    keys = _client_keys()
    throttle = _throttle()
    wait = throttle.wait(*keys)
    if wait > 0:
        logging.getLogger("trials.gate").warning("passcode try refused while waiting: %s", keys)
        st.error(f"Too many wrong passcodes. Try again in {int(wait) + 1} seconds.")
        return
    if passcode_matches(given, expected):
        import time

        throttle.passed(*keys)
        sign_in = os.urandom(16).hex()
        st.session_state["leader_ok"] = True
        st.session_state["_leader_sign_in"] = sign_in
        st.session_state.pop("_leader_signed_out", None)
        st.session_state["_leader_cookie"] = (
            sign_in_token(expected, _server_secret(), sign_in), time.time() + SIGN_IN_SECONDS)
        st.rerun()
    throttle.failed(*keys)
    logging.getLogger("trials.gate").warning(
        "wrong leader passcode (%d in a row) from %s", throttle.failures(keys[0]), keys)
    st.error("That passcode does not open the leader screens.")


def leader_unlocked() -> bool:
    """True where the leader screens may be listed: single-user mode, or the passcode
    given in this browser session."""
    expected = configured_passcode()
    return expected is None or _signed_in(expected)


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


def food_caution(trial_id: int | None = None) -> None:
    """The standing caution on screens where food is prepared or served.

    With a trial, also its open food-safety points: panelists whose declared allergens a
    sample holds, and batches not yet signed off.
    """
    if trial_id is not None:
        conflicts = service.allergen_conflicts(store(), trial_id)
        if conflicts:
            lines = "\n".join(
                f"- panelist **{literal(c.panelist_code)}**: {literal(c.sample_name)} holds "
                f"{literal(', '.join(c.allergens))}"
                for c in conflicts
            )
            st.warning("Allergen conflicts: these panelists declared an allergen that a "
                       f"sample holds and must not be served it.\n{lines}",
                       icon=":material/warning:")
        unsigned = [b for b in service.list_batches(store(), trial_id) if not b.signed_off]
        if unsigned:
            names = ", ".join(f"{literal(b.sample_name)} / {literal(b.label)}" for b in unsigned)
            st.warning(f"Batches not signed off for food safety yet (do not serve): {names}",
                       icon=":material/health_and_safety:")
    st.caption(
        ":material/warning: Samples are food served to people: check declared allergens "
        "against every sample, obtain informed consent, and prepare and hold samples as "
        "your local food code and licensed practice require."
    )


def served_safety(trial_id: int) -> None:
    """On the results and decision screens: batches the plan serves that are not signed
    off for food safety, and planned samples with no batch on file."""
    points = service.unsigned_served(store(), trial_id)
    if points["unsigned"]:
        names = ", ".join(literal(x) for x in points["unsigned"])
        st.warning(f"Served batches not signed off for food safety: {names}. Record the "
                   "sign-off on Samples and batches; a batch that was not prepared and held "
                   "as your food code requires should not have been served.",
                   icon=":material/health_and_safety:")
    if points["unrecorded"]:
        names = ", ".join(literal(x) for x in points["unrecorded"])
        st.warning(f"No batch is recorded for {names}: record each batch with its food-safety "
                   "sign-off on Samples and batches.", icon=":material/health_and_safety:")


def who() -> str:
    """The name written to the audit log for the leader's changes."""
    return (st.session_state.get("leader_name") or "").strip() or "leader"


def leader_sidebar() -> None:
    """The leader's name for the audit log, kept for the session; with a passcode set,
    "Sign out" (and, just after the passcode, the script that keeps the sign-in)."""
    st.sidebar.text_input("Your name (for the audit log)", key="leader_name",
                          placeholder="leader", persist_state="session")
    if configured_passcode() is None:
        return
    cookie = st.session_state.get("_leader_cookie")
    if cookie:
        _write_cookie(st.sidebar, *cookie)
    if st.sidebar.button("Sign out", icon=":material/logout:", key="sign_out"):
        sign_out()
        st.rerun()


# ---------------------------------------------------------------- text as typed

# Every ASCII punctuation mark may be backslash-escaped in CommonMark; escaping them all
# stops emphasis, links, images, headings, lists, tables, HTML, maths ($) and Streamlit's
# directives (:red[...]). Streamlit also turns bare URLs, e-mail addresses, :emoji: and
# :material/icon: codes found in the *parsed* text into links and icons, which no
# backslash prevents: a word joiner (U+2060, invisible) after ':' and '@' and inside
# "www." breaks those patterns.
_PUNCTUATION = re.compile(r"([!-/:-@\[-`{-~])")
WORD_JOINER = "\u2060"
_WWW = re.compile(r"(www)(?=\\\.)", re.IGNORECASE)


def literal(text: object, *, lines: bool = False) -> str:
    """``text`` as Markdown that Streamlit shows exactly as typed: no link, image,
    emphasis, heading, HTML, maths, colour directive, icon or emoji comes of it.

    For every user-entered name or note put into ``st.markdown``, titles, captions,
    alerts, and the labels and help of widgets (radio, pills, tabs, metrics, expanders,
    buttons). Line breaks become spaces, or with ``lines`` hard line breaks (comments,
    rationale, decision text). Select boxes and multiselects show their options as plain
    text: their ``format_func`` needs no escaping (checked on Streamlit 1.67).
    """
    value = "" if text is None else str(text)
    value = _PUNCTUATION.sub(r"\\\1", value)
    value = _WWW.sub(r"\1" + WORD_JOINER, value)
    value = value.replace(":", ":" + WORD_JOINER).replace("@", "@" + WORD_JOINER)
    parts = re.split(r"\r\n|\r|\n", value)
    return "  \n".join(parts) if lines else " ".join(parts)


chart_text = figures.chart_text


# ---------------------------------------------------------------- the trial in hand


STUDY_KEY = "study_id"


def _study_label(study) -> str:
    return f"#{study.id} {study.name} ({study.status})"


def pick_trial(*, required: bool = True):
    """The trial the leader works on: a picker in the sidebar, shared by every screen.

    The choice lives in the session and in the address (``?study=ID``), so that a
    reload or a copied link opens the same trial. Returns the study id, or None when
    ``required`` is false and none is on file (with ``required`` the page stops).
    """
    studies = list(service.list_trials(store()))
    if not studies:
        if required:
            st.info("No trials on file yet. Start one on the Trials screen.")
            st.stop()
        return None
    ids = [s.id for s in studies]
    wanted = st.session_state.get(STUDY_KEY)
    if wanted is None:
        try:
            wanted = int(st.query_params.get("study", ""))
        except ValueError:
            wanted = None
    index = ids.index(wanted) if wanted in ids else 0
    by_id = {s.id: s for s in studies}
    chosen = st.sidebar.selectbox(
        "Trial", ids, index=index, format_func=lambda i: _study_label(by_id[i]),
    )
    select_study(chosen)
    return chosen


class OpenTrial(NamedTuple):
    """The trial in hand on a leader screen, with what most screens read first."""

    store: Any
    trial_id: int
    study: Any  # trials.model.Trial
    spec: Any  # trials.methods.MethodSpec
    overview: Any  # trials.service.TrialOverview


def open_trial() -> OpenTrial:
    """The trial picked in the sidebar (:func:`pick_trial`), read once for the screen."""
    from trials.methods import get_method

    trial_id = pick_trial()
    s = store()
    study = service.get_trial(s, trial_id)
    return OpenTrial(s, trial_id, study, get_method(study.method),
                     service.trial_overview(s, trial_id))


def select_study(trial_id: int) -> None:
    """Make ``trial_id`` the trial in hand (the session and the address)."""
    st.session_state[STUDY_KEY] = trial_id
    if st.query_params.get("study") != str(trial_id):
        st.query_params["study"] = str(trial_id)


def changed() -> None:
    """Call after a write. Cached reads need nothing: they are keyed on the trial's change
    stamp (:func:`trials.service.change_stamp`), which every write moves; this counts the
    session's writes (``rev``), which screens may use to reset their widgets."""
    st.session_state["rev"] = st.session_state.get("rev", 0) + 1


KEY_MEDIA = "_key_download"


def key_download(where, label: str, data: bytes, *, file_name: str, mime: str,
                 key: str) -> None:
    """Offer a download that holds the decoding key for this run only.

    Streamlit serves a download at ``/media/<id>`` to anyone holding the address for as
    long as the button is on the screen (and one run more). So the bytes are made when the
    leader presses "Prepare", the button is drawn in that run alone, and
    :func:`release_key_downloads` makes the next run count twice: after the leader's next
    action in the app the address answers 404.
    """
    where.download_button(label, data, file_name=file_name, mime=mime, on_click="ignore",
                          type="primary", width="stretch", key=key,
                          icon=":material/download:")
    where.caption("Holds the decoding key: download it now. The link stops working at "
                  "your next action in the app; prepare it again when needed.")
    st.session_state[KEY_MEDIA] = "shown"


def release_key_downloads() -> None:
    """Call at the very end of a run (the entry script does). In the first run after a
    key download was offered, rerun once: Streamlit marks a download no run shows and
    deletes it at the end of the run after, so the address dies now rather than at some
    later click."""
    state = st.session_state.get(KEY_MEDIA)
    if state == "shown":
        st.session_state[KEY_MEDIA] = "pending"
    elif state == "pending":
        del st.session_state[KEY_MEDIA]
        st.rerun()


def no_none(frame, digits: int = 2):
    """A table for the screen with empty cells as an em dash, never "None" or "nan".
    Columns without an empty cell keep their type; a column with one becomes text
    (numbers to ``digits`` decimals, whole numbers as they are)."""
    def cell(v):
        if v is None or (isinstance(v, float) and v != v):
            return "\u2014"
        if isinstance(v, float):
            return f"{v:.{digits}f}"
        return str(v)

    out = frame.copy()
    for col in out.columns:
        if out[col].isna().any():
            out[col] = [cell(v) for v in out[col].astype(object)]
    return out


def show_problem(exc: Exception) -> None:
    """A bad input, said plainly (the message names the value and what was expected).
    A file or grid with many bad rows says how many and what was done, then lists the
    first 20 as bullets, each on its own line, and how many more."""
    from trials.errors import ImportRowsError, problem_lines

    if isinstance(exc, ImportRowsError):
        items = "\n".join(f"- {literal(p)}" for p in problem_lines(exc.problems))
        st.error(f"**{literal(exc.head)}:**\n\n{items}")
        return
    st.error(literal(str(exc), lines=True))


FLASH_KEY = "_flash"


def flash(text: str, slot: str = "top") -> None:
    """Say ``text`` (already made safe with :func:`literal`) in the next run, where the
    page calls :func:`show_flash` with the same ``slot`` (beside the button pressed, so
    a leader scrolled down sees it): for a success followed by ``st.rerun()``, so the
    screen shows what was saved and reads the store afresh."""
    st.session_state[f"{FLASH_KEY}_{slot}"] = text


def clear_fields(*keys: str) -> None:
    """Forget the typed values of the widgets keyed ``keys`` (call after a successful
    save, then ``st.rerun()``): a form that keeps its values on an error
    (``clear_on_submit=False``) starts empty again only when its work is done."""
    for key in keys:
        st.session_state.pop(key, None)


def show_flash(slot: str = "top") -> None:
    """Show (once) what :func:`flash` left for this run in ``slot``."""
    text = st.session_state.pop(f"{FLASH_KEY}_{slot}", None)
    if text:
        st.success(text, icon=":material/check:")


@st.cache_resource(show_spinner="Analysing...", max_entries=16)
def _analysis(url: str | None, trial_id: int, stamp: tuple):
    del stamp  # part of the cache key only: it changes whenever the trial changes
    s = _open_store(url)
    result = service.analyse_trial(s, trial_id)
    return result, service.trial_decision(s, trial_id, result)


@st.cache_resource(show_spinner="Reading the panel's performance...", max_entries=32)
def _panel_performance(url: str | None, trial_id: int, attribute: str, stamp: tuple):
    del stamp  # part of the cache key only
    return service.panel_performance_of(_open_store(url), trial_id, attribute)


def panel_performance(trial_id: int, attribute: str):
    """Per-panelist performance on one attribute, computed once per state of the trial."""
    stamp = service.change_stamp(store(), trial_id)
    return _panel_performance(os.environ.get("TRIALS_DB"), trial_id, attribute, stamp)


@st.cache_resource(show_spinner="Drawing the profile...", max_entries=16)
def _profile(url: str | None, trial_id: int, stamp: tuple):
    del stamp  # part of the cache key only
    return service.trial_profile(_open_store(url), trial_id)


def profile(trial_id: int):
    """The trial's descriptive profile (None under three intensity attributes), computed
    once per state of the trial."""
    stamp = service.change_stamp(store(), trial_id)
    return _profile(os.environ.get("TRIALS_DB"), trial_id, stamp)


@st.cache_resource(show_spinner="Reading the panelists' departures...", max_entries=32)
def _departures(url: str | None, trial_id: int, attribute: str, stamp: tuple):
    del stamp  # part of the cache key only
    return service.panelist_departures_of(_open_store(url), trial_id, attribute)


def departures(trial_id: int, attribute: str):
    """The sample x panelist interaction of one attribute, once per state of the trial."""
    stamp = service.change_stamp(store(), trial_id)
    return _departures(os.environ.get("TRIALS_DB"), trial_id, attribute, stamp)


@st.cache_resource(show_spinner="Reading earlier rating trials...", ttl=60, max_entries=8)
def _panel_errors(url: str | None, exclude: int):
    return service.panel_errors(_open_store(url), exclude=exclude)


def panel_errors(exclude: int):
    """The error sd of the attributes of earlier rating trials (re-read every minute)."""
    return _panel_errors(os.environ.get("TRIALS_DB"), exclude)


def analysis(trial_id: int):
    """The trial's analysis and decision text, computed once per state of the trial
    (the cache key is :func:`trials.service.change_stamp`: every write moves it)."""
    stamp = service.change_stamp(store(), trial_id)
    return _analysis(os.environ.get("TRIALS_DB"), trial_id, stamp)


# ---------------------------------------------------------------- looks


TABLET_CSS = """
<style>
html, body, [data-testid="stAppViewContainer"] { font-size: 1.25rem; }
[data-testid="stMarkdownContainer"] p { font-size: 1.35rem; line-height: 1.5; }
.stButton button, .stFormSubmitButton button {
    min-height: 4.25rem; font-size: 1.6rem; font-weight: 600; border-radius: 0.9rem;
}
.stButton button p, .stFormSubmitButton button p { font-size: 1.6rem; }
/* a dark primary: white text on it has a contrast of 8:1 (WCAG AA asks 4.5:1) */
.stButton button[kind="primary"], .stButton button[kind="primary"]:focus {
    background-color: #1d4a8f; border-color: #1d4a8f; color: #ffffff;
}
.stButton button[kind="primary"]:hover { background-color: #163a72; border-color: #163a72; }
.stButton button[kind="primary"]:disabled { background-color: #c9ced8; border-color: #c9ced8;
    color: #3b3f48; }
.stButton button[kind="secondary"] { border: 2px solid #5b6270; color: #1f2330; }
/* scale points: the number large, the scale's words below it, whole words only */
[class*="st-key-scale_"] .stButton button { min-height: 5.5rem; padding: 0.3rem 0.1rem; }
[class*="st-key-scale_"] .stButton button p {
    font-size: 0.76rem; font-weight: 500; line-height: 1.15; white-space: normal;
    word-break: normal; overflow-wrap: normal; letter-spacing: -0.01em;
}
[class*="st-key-scale_"] .stButton button p strong {
    display: block; font-size: 1.7rem; font-weight: 700;
}
@media (max-width: 640px) {  /* a phone stacks the points: number and words on one line */
    [class*="st-key-scale_"] .stButton button {
        min-height: 3.4rem; justify-content: flex-start; padding: 0.3rem 0.9rem;
    }
    [class*="st-key-scale_"] .stButton button p { font-size: 1.1rem; text-align: left; }
    [class*="st-key-scale_"] .stButton button p strong {
        display: inline-block; min-width: 2.4rem; font-size: 1.5rem;
    }
}
.stButton button:focus-visible { box-shadow: 0 0 0 0.2rem #7aa7e6; outline: none; }
[data-testid="stTextArea"] textarea { font-size: 1.25rem; }
[data-testid="stWidgetLabel"] p { font-size: 1.2rem; color: inherit; }
.kt-code {
    font-size: 3rem; font-weight: 700; letter-spacing: 0.08em; text-align: center;
    border: 3px solid currentColor; border-radius: 1rem; padding: 0.4rem 0; margin: 0.5rem auto;
    max-width: 14rem; font-variant-numeric: tabular-nums;
    margin-left: auto !important; margin-right: auto !important;
}
.kt-choice { font-size: 2rem; font-weight: 700; text-align: center; margin: 0.5rem 0; }
.kt-step, .kt-note { font-size: 1.1rem; margin: 0 0 0.4rem 0; }
[data-testid="stMainBlockContainer"] {
    padding: 1.5rem 0.6rem 3rem 0.6rem; max-width: 60rem;
}
[data-testid="stSidebar"], [data-testid="stSidebarCollapsedControl"] { display: none; }
header[data-testid="stHeader"] { display: none; }
</style>
"""


def tablet_look() -> None:
    """Large text and large touch targets for the tasting screen."""
    st.html(TABLET_CSS)


# ---------------------------------------------------------------- charts
# The figures are built in trials.figures; these helpers fetch what they need and show them.


def _show(fig) -> None:
    st.plotly_chart(fig, width="stretch")


def power_chart(method: str, *, pd: float, alpha: float, n_needed: int, beta: float) -> None:
    """Exact power of the difference test against the number of panelists."""
    top = max(20, int(n_needed * 1.6))
    curve = service.power_curve(method, pd=pd, alpha=alpha,
                                ns=range(5, top + 1, max(1, top // 120)))
    _show(figures.power_figure(curve, n_needed=n_needed, beta=beta))


def means_chart(means: dict, ci: dict, *, title: str, low: float, high: float,
                groups: dict | None = None) -> None:
    """Sample means with their confidence intervals (and letters) on the scale."""
    _show(figures.means_figure(means, ci, title=title, low=low, high=high, groups=groups))


def panel_chart(frame, *, title: str) -> None:
    """Panel performance: agreement against repeatability, flagged panelists marked."""
    _show(figures.panel_figure(frame, title=title))


def count_chart(correct: int, n: int, critical: int | None, *, guess: float, label: str) -> None:
    """The observed count against the count expected by chance and the critical value."""
    _show(figures.count_figure(correct, n, critical, guess=guess, label=label))


def biplot_chart(pca, *, title: str) -> None:
    """The profile map (:func:`trials.printing.profile.biplot_figure`, the report's)."""
    from trials.printing.profile import biplot_figure

    fig = biplot_figure(pca, title=title)
    fig.update_layout(margin={"l": 10, "r": 10, "t": 40, "b": 10})
    _show(fig)


def radar_chart(means, *, low: float, high: float, title: str) -> None:
    """The spider chart: each sample's mean on every attribute, one closed line each."""
    from trials.printing.profile import radar_figure

    fig = radar_figure(means, low=low, high=high, title=title)
    fig.update_layout(margin={"l": 40, "r": 40, "t": 50, "b": 10})
    _show(fig)


def departure_chart(at, *, title: str) -> None:
    """Each panelist's direction (r) against scale (slope) on one attribute."""
    _show(figures.departure_figure(at, title=title))


def rating_power_chart(delta: float, *, sd: float, samples: int, alpha: float, beta: float,
                       n_needed: int) -> None:
    """Power of the F test of samples against the number of panelists (ratings)."""
    top = max(12, int(n_needed * 1.8))
    curve = service.rating_power_curve(delta, sd=sd, samples=samples, alpha=alpha,
                                       ns=range(2, top + 1, max(1, top // 120)))
    _show(figures.power_figure(curve, n_needed=n_needed, beta=beta, step_line=False))


def ca_biplot(ca, *, title: str) -> None:
    """A symmetric biplot of a correspondence analysis (trials.stats.cata)."""
    _show(figures.ca_figure(ca, title=title))


def upload_path(upload) -> Path:
    """An uploaded file written to a private temporary folder under its own name (the
    service reads files by path and tells CSV from Excel by the extension)."""
    import tempfile

    folder = Path(tempfile.mkdtemp(prefix="trials-upload-"))
    path = folder / Path(upload.name).name
    path.write_bytes(upload.getvalue())
    return path


def app_address() -> str:
    """The app's address for tasting links: ``TRIALS_BASE_URL`` when set (the address
    tablets reach on the kitchen network), else the address this browser used; empty
    when unknown (then printed ballots carry no QR code)."""
    from urllib.parse import urlsplit

    configured = os.environ.get("TRIALS_BASE_URL", "").rstrip("/")
    if configured:
        return configured

    try:
        url = st.context.url or ""
    except Exception:  # older runtimes, or a test without a browser
        url = ""
    parts = urlsplit(url)
    return f"{parts.scheme}://{parts.netloc}" if parts.scheme and parts.netloc else ""
