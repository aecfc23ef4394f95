"""Use cases of the history: the trials on file, searched, and the control sample's
scores followed across trials, so that the next trial starts from the last. Each reads
a fixed number of queries, whatever the number of trials."""

from __future__ import annotations

from typing import Any

import pandas as pd

from trials.history import control_trend as trend
from trials.history import search_trials
from trials.methods import Family, method_names
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import trials as trial_rows


def history(store: Store, *, text: str = "", method: str | None = None,
            decision: str | None = None) -> list[dict[str, Any]]:
    """The trials on file matching a free text (name, objective, product, decision,
    rationale, a sample's name, a process setting), a method and a decision
    (:func:`trials.history.search_trials`); one plain row per trial, newest first."""
    with store.read() as tx:
        found = trial_rows.history_rows(tx)
        settings = trial_rows.settings_by_trial(tx)
    for row in found:
        shown = sorted({f"{n} {v} {u}".strip() for n, v, u in settings.get(row["id"], ())})
        row["settings"] = "; ".join(shown)
    return search_trials(found, text=text, method=method, decision=decision)


def control_names(store: Store) -> list[str]:
    """The control samples of the rated trials on file (the ones with scores to follow),
    the control of the most trials first, then by name."""
    with store.read() as tx:
        counts = trial_rows.control_counts(tx, method_names(Family.RATING))
    return sorted((n for n in counts if n), key=lambda name: (-counts[name], name))


def control_trend(store: Store, control: str, *, attribute: str | None = None):
    """The control sample's mean scores across the trials that rated it
    (:func:`trials.history.control_trend`): one point per trial and attribute."""
    with store.read() as tx:
        scores = answer_rows.scores_of_sample(tx, control)
        ids = sorted(set(scores["trial_id"]))
        trials = {r["id"]: r for r in trial_rows.history_rows(tx, ids)} if ids else {}
    if not ids:
        return ()
    frame = pd.DataFrame(scores)
    frame["score"] = pd.to_numeric(frame["value"], errors="coerce")
    frame = frame.dropna(subset=["score"])
    if frame.empty:
        return ()
    names = {i: t["name"] for i, t in trials.items()}
    dates = {i: str(t["created_on"] or "") for i, t in trials.items()}
    frame = frame.assign(study=frame["trial_id"].map(names), date=frame["trial_id"].map(dates),
                         sample=control)
    # newest trial first, as the list of trials shows them
    frame = frame.sort_values("trial_id", ascending=False, kind="stable")
    return trend(frame[["study", "date", "sample", "attribute", "score"]], control=control,
                 attribute=attribute)
