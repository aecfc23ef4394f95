"""The Streamlit entry script, started by ``trials app``.

It builds ``st.navigation`` over the screens in ``pages/`` (which sits at the project's
top level, not beside this file: a ``pages/`` folder beside the entry script would turn
on Streamlit's legacy page detection, where a deep link runs a page on its own and skips
this script). A panelist link (``/taste?t=<token>``) gets a navigation that holds the
tasting screen alone; every other visitor gets the leader's screens, each of which calls
its own access check as well.
"""

from __future__ import annotations

import streamlit as st

from trials import ui

st.set_page_config(page_title="Kitchen Trials", page_icon="🍽️", layout="wide")


def _page(name: str, title: str, icon: str, *, default: bool = False) -> st.Page:
    return st.Page(ui.PAGES_DIR / f"{name}.py", title=title, icon=icon, url_path=name,
                   default=default)


if ui.panelist_token():
    # A default page is served at the root address and its url_path is ignored, so the
    # tasting screen is not the default: a link to /taste opens it directly, and the
    # root address (with the token) hands over to it.
    taste = _page("taste", "Tasting", ":material/local_dining:")

    def _to_taste() -> None:
        st.switch_page(taste, query_params={"t": ui.panelist_token()})

    navigation = st.navigation(
        [st.Page(_to_taste, title="Tasting", url_path="start", default=True), taste],
        position="hidden",
    )
else:
    # Before the passcode the menu is hidden, so it does not even list the screens; a
    # deep link still opens its page, whose own check shows the gate.
    navigation = st.navigation(
        ui.leader_pages(_page), position="sidebar" if ui.leader_unlocked() else "hidden"
    )
navigation.run()
ui.release_key_downloads()  # the decoding key's download addresses die now
