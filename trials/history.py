"""The history's pure helpers: the trials on file searched by words, method and decision,
and the control sample's mean scores followed across trials. Plain records in, no store
and no statistics library: the history screen imports this alone, not the analysis.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

import pandas as pd

from trials.errors import TrialsError
from trials.model import Record


def _field(record: Any, name: str, default: Any = "") -> Any:
    if isinstance(record, Mapping):
        return record.get(name, default)
    return getattr(record, name, default)


def search_trials(summaries: Iterable[Any], *, text: str = "", method: str | None = None,
                  decision: str | None = None) -> list[Any]:
    """The trials on file that match a free text, a method and a decision.

    Parameters
    ----------
    summaries : iterable of mappings or records
        Each with some of ``name objective product method decision rationale
        settings samples`` (``samples``: names, or records with ``name``;
        ``settings``: the batches' process settings as text).
    text : str
        Every word must appear (case-insensitive) in the name, objective, product,
        decision, rationale, settings or a sample's name. Empty matches all.
    method : str or None
        Keep only this method (a registry name).
    decision : str or None
        Keep only trials whose decision text contains this (case-insensitive).

    Returns
    -------
    list
        The matching summaries, in the given order.
    """
    words = [w.lower() for w in text.split()]
    out = []
    for s in summaries:
        if method and _field(s, "method") != method:
            continue
        if decision and decision.lower() not in str(_field(s, "decision") or "").lower():
            continue
        samples = _field(s, "samples", ()) or ()
        names = [x if isinstance(x, str) else str(_field(x, "name")) for x in samples]
        hay = " ".join(str(_field(s, f) or "") for f in
                       ("name", "objective", "product", "decision", "rationale",
                        "settings"))
        hay = (hay + " " + " ".join(names)).lower()
        if all(w in hay for w in words):
            out.append(s)
    return out


@dataclass(frozen=True, slots=True)
class TrendPoint(Record):
    """The control sample's mean score on one attribute in one trial."""

    study: str
    date: str
    control: str
    attribute: str
    n: int
    mean: float
    sd: float | None


def control_trend(scores: pd.DataFrame | Iterable[Mapping[str, Any]], *, control: str,
                  attribute: str | None = None) -> tuple[TrendPoint, ...]:
    """The control sample's mean score across the trials that share it, by date.

    Parameters
    ----------
    scores : DataFrame or iterable of mappings
        One row per score, columns ``study date sample attribute score`` (``date`` may
        be empty; ``study`` is a name or id).
    control : str
        The control sample's name; rows of other samples are ignored.
    attribute : str or None
        Keep only this attribute (all when None).

    Returns
    -------
    tuple of TrendPoint
        One per trial and attribute, ordered by date then trial; ``sd`` with divisor
        n - 1 (None for one score). Descriptive only: panels and sessions differ
        between trials.
    """
    frame = scores if isinstance(scores, pd.DataFrame) else pd.DataFrame(list(scores))
    need = {"study", "sample", "attribute", "score"}
    if frame.empty:
        return ()
    missing = need - set(frame.columns)
    if missing:
        raise TrialsError(f"control trend needs columns {sorted(missing)!r}")
    sub = frame[frame["sample"] == control]
    if attribute is not None:
        sub = sub[sub["attribute"] == attribute]
    if sub.empty:
        return ()
    sub = sub.assign(date=(sub["date"] if "date" in sub.columns else "").astype(str)
                     .replace({"None": "", "nan": "", "NaT": ""}),
                     score=pd.to_numeric(sub["score"], errors="coerce"),
                     study=sub["study"].astype(str))
    sub = sub.dropna(subset=["score"])
    # one pass of grouped sums, not a loop over the groups: a long record has thousands
    stats = (sub.groupby(["study", "date", "attribute"], sort=False)["score"]
             .agg(["size", "mean", "std"]))
    points = [
        TrendPoint(str(study), str(date), control, str(attr), int(n), float(mean),
                   float(sd) if n > 1 else None)
        for (study, date, attr), n, mean, sd in zip(
            stats.index, stats["size"], stats["mean"], stats["std"], strict=True)
    ]
    points.sort(key=lambda p: (p.date, p.study, p.attribute))
    return tuple(points)
