"""Use cases of the history: the trials on file, searched, and the control sample's
scores followed across trials, so that the next trial starts from the last. Each reads
a fixed number of queries, whatever the number of trials."""

from __future__ import annotations

from collections import Counter
from typing import Any

import pandas as pd

from trials.methods import Family, method_names
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import trials as trial_rows


def history(store: Store, *, text: str = "", method: str | None = None,
            decision: str | None = None) -> list[dict[str, Any]]:
    """The trials on file matching a free text (name, objective, product, decision,
    rationale, a sample's name, a process setting), a method and a decision
    (:func:`trials.analysis.search_trials`); one plain row per trial, newest first."""
    from trials.analysis import search_trials

    with store.read() as tx:
        trials = trial_rows.all_trials(tx)
        settings = trial_rows.settings_by_trial(tx)
    found = []
    for study in trials:
        shown = sorted({f"{n} {v} {u}".strip() for n, v, u in settings.get(study.id, ())})
        found.append({
            "id": study.id, "name": study.name, "method": study.method,
            "status": study.status.value, "product": study.product,
            "created_on": study.created_on, "objective": study.objective,
            "decision": study.decision, "rationale": study.rationale,
            "samples": [x.name for x in study.samples],
            "control": next((x.name for x in study.samples if x.is_control), ""),
            "settings": "; ".join(shown),
        })
    return search_trials(found, text=text, method=method, decision=decision)


def control_names(store: Store) -> list[str]:
    """The control samples of the rated trials on file (the ones with scores to follow),
    the control of the most trials first, then by name."""
    rated = method_names(Family.RATING)
    counts = Counter(r["control"] for r in history(store) if r["method"] in rated
                     and r["control"])
    return sorted(counts, key=lambda name: (-counts[name], name))


def control_trend(store: Store, control: str, *, attribute: str | None = None):
    """The control sample's mean scores across the trials that rated it
    (:func:`trials.analysis.control_trend`): one point per trial and attribute."""
    from trials.analysis import control_trend as trend

    with store.read() as tx:
        trials = {t.id: t for t in trial_rows.all_trials(tx)}
        scores = answer_rows.scores_of_sample(tx, control)
    if not scores:
        return ()
    frame = pd.DataFrame(scores)
    frame["score"] = pd.to_numeric(frame["value"], errors="coerce")
    frame = frame.dropna(subset=["score"])
    if frame.empty:
        return ()
    frame = frame.assign(
        study=[trials[i].name for i in frame["trial_id"]],
        date=[str(trials[i].created_on or "") for i in frame["trial_id"]],
        sample=control,
    )
    # newest trial first, as the list of trials shows them
    frame = frame.sort_values("trial_id", ascending=False, kind="stable")
    return trend(frame[["study", "date", "sample", "attribute", "score"]], control=control,
                 attribute=attribute)
