"""Use cases of a trial itself: create it with its samples and attributes, read it,
change it, move its status on, record the decision, and see it at a glance."""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

from trials.answers import CHOICE, RANK, RESPONSE
from trials.errors import TrialsError
from trials.methods import Family, get_method
from trials.model import (
    Attribute,
    AttributeKind,
    Record,
    Sample,
    Status,
    Trial,
    TrialOverview,
    TrialSummary,
)
from trials.service import _input
from trials.store import Store
from trials.store import plans as plan_rows
from trials.store import trials as trial_rows

EDITABLE = ("name", "product", "aim", "objective", "alpha", "beta", "pd", "delta", "method",
            "target_sample")
RESERVED_ATTRIBUTES = (CHOICE, RANK, RESPONSE)  # attribute names of choices, ranks, responses


def list_trials(store: Store) -> list[TrialSummary]:
    """Every trial on file, newest first."""
    with store.read() as tx:
        return trial_rows.list_trials(tx)


def _sample(item: Sample | str) -> Sample:
    sample = item if isinstance(item, Sample) else Sample(name=str(item))
    return Sample(name=_input.name(sample.name, "a sample's name"),
                  is_control=bool(sample.is_control),
                  allergens=_input.allergens(sample.allergens),
                  description=sample.description or "")


def check_attribute(attr: Attribute) -> Attribute:
    """An attribute with a whole-number scale ``low < high`` and 2 anchors (the ends) or
    one per point; names ``choice`` and ``rank`` are reserved."""
    attr_name = _input.name(attr.name, "an attribute's name")
    if attr_name in RESERVED_ATTRIBUTES:
        raise TrialsError(f"{attr_name!r} is reserved for forced choices, ranks and responses")
    try:
        kind = AttributeKind(attr.kind)
    except ValueError:
        known = ", ".join(k.value for k in AttributeKind)
        raise TrialsError(f"unknown attribute kind {attr.kind!r}; expected: {known}") from None
    low, high = attr.low, attr.high
    if kind is AttributeKind.CHECK and (low, high) != (0, 1):
        raise TrialsError(f"attribute {attr_name!r}: a check-all-that-apply word is scored 0 "
                          f"(not ticked) or 1 (ticked); give low=0, high=1, got {low!r}..{high!r}")
    if not (isinstance(low, int) and isinstance(high, int)) or low >= high:
        raise TrialsError(
            f"a scale runs over whole numbers from low to high, low < high; got {low!r}..{high!r}"
        )
    anchors = tuple(str(a) for a in attr.anchors)
    if anchors and len(anchors) not in (2, high - low + 1):
        raise TrialsError(
            f"attribute {attr_name!r}: give 2 anchors (the ends) or {high - low + 1} "
            f"(every point), got {len(anchors)}"
        )
    return Attribute(name=attr_name, kind=kind, low=low, high=high, anchors=anchors)


def _delta(value: Any) -> float | None:
    if value is None:
        return None
    try:
        delta = float(value)
    except (TypeError, ValueError):
        raise TrialsError(f"delta must be a number, got {value!r}") from None
    if delta <= 0:
        raise TrialsError(f"delta must be positive, got {value!r}")
    return delta


def create_trial(
    store: Store,
    *,
    name: str,
    method: str,
    objective: str = "",
    product: str = "",
    aim: str = "",
    alpha: float = 0.05,
    beta: float = 0.20,
    pd: float | None = None,
    delta: float | None = None,
    samples: Sequence[Sample | str] = (),
    attributes: Sequence[Attribute] = (),
    created_on: dt.date | None = None,
    target_sample: str = "",
    by: str = "leader",
) -> Trial:
    """Create a trial with its samples and attributes; returns it with its id.

    ``target_sample`` (2-AFC, 3-AFC: the methods whose registry scoring is
    target-by-role) names the sample expected to be stronger in the attribute, the one
    a correct answer picks; it must be one of ``samples``, and a plan is drawn only once
    it is chosen (here or with :func:`update_trial`).
    """
    fields = {
        "name": _input.name(name, "the trial's name"), "method": get_method(method).name,
        "objective": objective or "", "product": product or "", "aim": _input.aim(aim),
        "alpha": _input.fraction(alpha, "alpha"), "beta": _input.fraction(beta, "beta"),
        "pd": _input.fraction(pd, "pd", allow_none=True), "delta": _delta(delta),
        "created_on": created_on or _input.today(),
        "target_sample": (target_sample or "").strip(),
    }
    clean_samples = [_sample(x) for x in samples]
    clean_attributes = [check_attribute(a) for a in attributes]
    trial_id = store.write(lambda tx: trial_rows.insert_trial(
        tx, fields, clean_samples, clean_attributes, by))
    return get_trial(store, trial_id)


def get_trial(store: Store, trial_id: int) -> Trial:
    """The trial with its samples and attributes."""
    with store.read() as tx:
        return trial_rows.get_trial(tx, trial_id)


def update_trial(store: Store, trial_id: int, *, by: str, **changes: Any) -> Trial:
    """Change fields of a trial (``name product aim objective alpha beta pd delta method
    target_sample``).

    Each changed field is audited. The method and the target sample can change only
    while no plan is drawn; the target sample must be one of the trial's samples.
    """
    unknown = sorted(set(changes) - set(EDITABLE))
    if unknown:
        raise TrialsError(
            f"cannot change {', '.join(map(repr, unknown))}; editable: {', '.join(EDITABLE)}"
        )
    clean: dict[str, Any] = {}
    for key, value in changes.items():
        if key == "name":
            clean[key] = _input.name(value, "the trial's name")
        elif key in ("alpha", "beta"):
            clean[key] = _input.fraction(value, key)
        elif key == "pd":
            clean[key] = _input.fraction(value, key, allow_none=True)
        elif key == "delta":
            clean[key] = None if value is None else float(value)
        elif key == "method":
            clean[key] = get_method(value).name
        elif key == "aim":
            clean[key] = _input.aim(value)
        elif key == "target_sample":
            clean[key] = str(value or "").strip()
        else:
            clean[key] = str(value or "")
    store.write(lambda tx: trial_rows.update_fields(tx, trial_id, clean, by))
    return get_trial(store, trial_id)


def set_status(store: Store, trial_id: int, status: Status | str, *, by: str) -> Trial:
    """Move a trial to ``status`` (planning, ready, tasting, analysed, decided)."""
    try:
        status = Status(status)
    except ValueError:
        known = ", ".join(s.value for s in Status)
        raise TrialsError(f"unknown status {status!r}; expected one of: {known}") from None
    store.write(lambda tx: trial_rows.update_fields(tx, trial_id, {"status": status.value}, by))
    return get_trial(store, trial_id)


def record_decision(
    store: Store, trial_id: int, decision: str, rationale: str, *, by: str
) -> Trial:
    """Record the leader's decision and its rationale; the trial becomes ``decided``."""
    changes = {"decision": _input.name(decision, "the decision"),
               "rationale": rationale or "", "status": Status.DECIDED.value}
    store.write(lambda tx: trial_rows.update_fields(tx, trial_id, changes, by))
    return get_trial(store, trial_id)


def add_sample(
    store: Store,
    trial_id: int,
    name: str,
    *,
    is_control: bool = False,
    allergens: Iterable[str] | str = (),
    description: str = "",
    by: str = "leader",
) -> Sample:
    """Add a sample (a variant) to a trial whose plan is not drawn yet."""
    sample = _sample(Sample(name=name, is_control=is_control,
                            allergens=_input.allergens(allergens), description=description))
    return store.write(lambda tx: trial_rows.add_sample_to(tx, trial_id, sample, by))


def add_attribute(
    store: Store,
    trial_id: int,
    name: str,
    *,
    kind: AttributeKind | str = AttributeKind.HEDONIC,
    low: int = 1,
    high: int = 9,
    anchors: Sequence[str] = (),
    by: str = "leader",
) -> Attribute:
    """Add a rated attribute with its scale (whole points ``low``..``high``)."""
    attr = Attribute(name=name, kind=kind, low=low, high=high, anchors=tuple(anchors))
    return store.write(lambda tx: trial_rows.add_attribute_to(
        tx, trial_id, check_attribute(attr), by))


def trial_overview(store: Store, trial_id: int) -> TrialOverview:
    """The trial at a glance for the leader, with each panelist's tasting link
    (one snapshot)."""
    with store.read() as tx:
        study = trial_rows.get_trial(tx, trial_id)
        counts = trial_rows.overview_counts(tx, trial_id)
        links = plan_rows.links(tx, trial_id)
    return TrialOverview(
        id=study.id, name=study.name, method=study.method, status=study.status,
        product=study.product, objective=study.objective, samples=study.samples,
        attributes=study.attributes, links=links, decision=study.decision, **counts,
    )


def change_stamp(store: Store, trial_id: int) -> tuple[int, int]:
    """A value that changes whenever the trial changes: (last audit id, answers).

    Every write is audited, so a cached read keyed on this stays right.
    """
    with store.read() as tx:
        return trial_rows.change_stamp(tx, trial_id)


@dataclass(frozen=True, slots=True)
class NextStep(Record):
    """What the leader does next with a trial: ``step`` a short key (``samples``,
    ``attributes``, ``plan``, ``ballots``, ``answers``, ``results``, ``report``),
    ``screen`` the menu entry that does it, ``text`` the advice in one sentence."""

    step: str
    screen: str
    text: str


def next_step(store: Store, trial_id: int) -> NextStep:
    """The next thing to do for a trial, read from what is on file: samples, attributes
    (ratings), the serving plan, the answers against those expected, the decision."""
    from trials.service.tasting import answer_progress

    view = trial_overview(store, trial_id)
    spec = get_method(view.method)
    if len(view.samples) < 2:
        return NextStep("samples", "Samples and batches",
                        f"Add the samples: a {spec.label.lower()} compares "
                        f"{'two' if spec.is_forced_choice else 'two or more'}; "
                        f"{len(view.samples)} on file.")
    if spec.family == Family.RATING and not view.attributes:
        return NextStep("attributes", "Samples and batches",
                        "Add the rated attributes (what the panelists score, on which scale).")
    if not view.plan_size:
        return NextStep("plan", "Serving plan",
                        "Draw the serving plan: choose the panelists and a seed.")
    if view.status == Status.DECIDED:
        return NextStep("report", "Decision and report",
                        f"Decision on file ({view.decision}): download the report for the file.")
    progress = answer_progress(store, trial_id)
    expected = int(progress["expected"].sum()) if not progress.empty else 0
    answered = int(progress["answered"].clip(upper=progress["expected"]).sum()
                   ) if not progress.empty else 0
    if not view.responses:
        return NextStep("ballots", "Printing",
                        "Open the ballots: hand out the tasting links (Serving plan) or print "
                        "the ballots, then type the paper ones in (Paper entry).")
    if answered < expected:
        return NextStep("answers", "Paper entry",
                        f"{answered} of {expected} answers are in: panelists answer on their "
                        "own tasting links (Serving plan lists them; open one to try the "
                        "tablet screen), paper ballots are typed in here; the results so far "
                        "are on Results.")
    return NextStep("results", "Results",
                    "Every expected answer is in: read the results, then record the decision "
                    "(Decision and report).")
