"""Small frozen dataclasses and enums shared by all layers.

The vocabulary (see DEVELOPERS.md): a *trial* (stored as ``study``) compares *samples*
(the variants); each sample is made in one or more test *batches*; *panelists* taste in
*sessions*; the serving plan gives each panelist, at each *position*, a cup marked with
a three-digit blinding *code*; a *response* is one answer (a chosen code, a score on an
*attribute*'s scale, or a rank).

Nothing here touches the database, the screen or a file.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from collections.abc import Mapping
from dataclasses import dataclass, field
from enum import StrEnum
from typing import Any


def as_plain(value: Any) -> Any:
    """Turn dataclasses, enums, tuples and dates into JSON-ready values."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: as_plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, StrEnum):
        return value.value
    if isinstance(value, dict):
        return {str(k): as_plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [as_plain(v) for v in value]
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    if hasattr(value, "item") and callable(value.item):  # numpy scalar
        return value.item()
    return value


class Record:
    """Mixin: ``to_dict()`` for every frozen record of the package."""

    __slots__ = ()

    def to_dict(self) -> dict[str, Any]:
        return as_plain(self)


class Status(StrEnum):
    """Where a trial stands."""

    PLANNING = "planning"
    READY = "ready"
    TASTING = "tasting"
    ANALYSED = "analysed"
    DECIDED = "decided"


class EntryMode(StrEnum):
    """How a response reached the store."""

    TABLET = "tablet"
    PAPER = "paper"
    IMPORT = "import"


class AttributeKind(StrEnum):
    """What a rated attribute measures."""

    HEDONIC = "hedonic"  # liking, e.g. the 9-point hedonic scale (Peryam and Pilgrim 1957)
    INTENSITY = "intensity"  # how much of a property, low to high
    JAR = "jar"  # just-about-right: too little .. just right .. too much
    CHECK = "check"  # a word of a check-all-that-apply list: 1 ticked, 0 not (scale 0..1)

    @property
    def label(self) -> str:
        """The kind in words for screens and documents ("just about right", not "jar")."""
        return "just about right" if self is AttributeKind.JAR else self.value


@dataclass(frozen=True, slots=True)
class Measurement(Record):
    """One named value with its unit: a process setting or a measured variable."""

    name: str
    value: float | str
    unit: str = ""


@dataclass(frozen=True, slots=True)
class Sample(Record):
    """A variant under test. ``allergens`` are lower-case names, e.g. ``("gluten", "egg")``."""

    name: str
    id: int | None = None
    is_control: bool = False
    allergens: tuple[str, ...] = ()
    description: str = ""


@dataclass(frozen=True, slots=True)
class Batch(Record):
    """One test batch of a sample, with how it was made and what was measured."""

    sample_name: str
    label: str
    id: int | None = None
    prepared_on: dt.date | None = None
    prepared_by: str = ""
    settings: tuple[Measurement, ...] = ()
    measures: tuple[Measurement, ...] = ()
    safety_signed_by: str = ""
    safety_signed_on: dt.date | None = None
    notes: str = ""

    @property
    def signed_off(self) -> bool:
        return bool(self.safety_signed_by)


@dataclass(frozen=True, slots=True)
class Panelist(Record):
    """A panelist known by a code; no personal data is required."""

    code: str
    id: int | None = None
    allergens: tuple[str, ...] = ()
    restrictions: str = ""
    consent_on: dt.date | None = None

    @property
    def consented(self) -> bool:
        return self.consent_on is not None


@dataclass(frozen=True, slots=True)
class Attribute(Record):
    """A rated attribute and its scale (integer points ``low``..``high``)."""

    name: str
    kind: AttributeKind = AttributeKind.HEDONIC
    low: int = 1
    high: int = 9
    anchors: tuple[str, ...] = ()  # labels of the points, low to high, or just the ends


@dataclass(frozen=True, slots=True)
class Trial(Record):
    """A trial: what is compared, by which method, at which risks."""

    name: str
    method: str
    id: int | None = None
    objective: str = ""
    alpha: float = 0.05
    beta: float = 0.20
    pd: float | None = None  # proportion of discriminators that matters (discrimination)
    delta: float | None = None  # smallest meaningful difference of means (ratings)
    # discrimination: "difference" or "similarity" (which test answers the objective);
    # "" = not stated, then an objective using "similar"/"same as" means similarity
    aim: str = ""
    # target-by-role methods (2-AFC, 3-AFC): the sample expected to be stronger in the
    # attribute, the one a correct answer picks; chosen at set-up ("" = not chosen)
    target_sample: str = ""
    status: Status = Status.PLANNING
    decision: str = ""
    rationale: str = ""
    product: str = ""  # what the samples are variants of, for the history search
    created_on: dt.date | None = None
    samples: tuple[Sample, ...] = ()
    attributes: tuple[Attribute, ...] = ()


@dataclass(frozen=True, slots=True)
class PlanEntry(Record):
    """One cup in the serving plan: who tastes which code, when.

    ``position`` is 1-based within the panelist's session. ``set_index`` numbers the
    panelist's sets (0 for the first; discrimination tests have one set per session).
    ``role`` is the cup's letter in a discrimination set (``"A"``, ``"B"``, or ``"R"``
    for a reference), empty for ratings. The sample fields are the decoding key: only
    leader views and the serving sheet may show them.
    """

    session: str
    panelist_code: str
    position: int
    code: str
    sample_name: str
    set_index: int = 0
    role: str = ""
    batch_label: str = ""


@dataclass(frozen=True, slots=True)
class Answer(Record):
    """One answer, as a row of the response CSV.

    - rating: ``code`` is the cup rated, ``attribute`` the attribute's name, ``value``
      the score as text;
    - ranking: ``code`` is the cup, ``attribute`` is ``"rank"``, ``value`` the rank
      (1 = most);
    - forced choice (discrimination, preference): ``attribute`` is ``"choice"``,
      ``code`` the chosen cup's code (tetrad: the two codes of the chosen group,
      separated by a space), ``value`` empty; for paired preference ``value`` may be
      ``"no preference"`` with ``code`` empty;
    - signal detection (A-not-A, same-different): ``attribute`` is ``"response"``,
      ``code`` the set's first code, ``value`` one of the method's two responses.
    """

    session: str
    panelist_code: str
    code: str
    attribute: str
    value: str
    comment: str = ""
    entered_by: str = ""
    entered_at: dt.datetime | None = None
    mode: EntryMode = EntryMode.TABLET


@dataclass(frozen=True, slots=True)
class AllergenConflict(Record):
    """A panelist who declared an allergen that a sample holds."""

    panelist_code: str
    sample_name: str
    allergens: tuple[str, ...] = field(default_factory=tuple)


# ---------------------------------------------------------------- use-case records


@dataclass(frozen=True, slots=True)
class TrialSummary(Record):
    """One line of the list of trials."""

    id: int
    name: str
    method: str
    status: Status
    product: str = ""
    created_on: dt.date | None = None
    decision: str = ""


@dataclass(frozen=True, slots=True)
class TrialOverview(Record):
    """A trial at a glance, for the leader (``links``: panelist code -> tasting path)."""

    id: int
    name: str
    method: str
    status: Status
    product: str
    objective: str
    samples: tuple[Sample, ...]
    attributes: tuple[Attribute, ...]
    batches: tuple[Batch, ...]
    panelists: int
    plan_size: int
    responses: int
    links: dict[str, str]
    sessions: tuple[str, ...] = ()
    decision: str = ""


@dataclass(frozen=True, slots=True)
class BallotSet(Record):
    """The codes of one set, in serving order."""

    session: str
    set_index: int
    codes: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class BallotAnswer(Record):
    """An answer this panelist has already given."""

    session: str
    code: str
    attribute: str
    value: str
    comment: str = ""


@dataclass(frozen=True, slots=True)
class PanelistBallot(Record):
    """What a panelist's screen may show: never a sample name, id or the key.

    ``attributes`` are the scales of a rating (with the anchors the paper ballot prints,
    every point or the two ends), the ranked attribute, or the attribute a forced choice
    names (2-AFC, 3-AFC); ``allergens`` (session -> names) are pooled over each
    session's samples, never tied to a code; ``finished`` are the sessions this
    panelist has finished on the tablet.
    """

    title: str
    method: str
    question: str
    instructions: str
    panelist_code: str
    sets: tuple[BallotSet, ...]
    attributes: tuple[Attribute, ...]
    answers: tuple[BallotAnswer, ...]
    remaining: int
    allergens: Mapping[str, tuple[str, ...]] = field(default_factory=dict)
    finished: tuple[str, ...] = ()

    @property
    def complete(self) -> bool:
        return self.remaining == 0


@dataclass(frozen=True, slots=True)
class AuditEntry(Record):
    """One change in the audit log."""

    at: dt.datetime
    who: str
    table: str
    row_id: int | None
    field: str
    old: str | None
    new: str | None


@dataclass(frozen=True, slots=True)
class PlanBook:
    """A trial's serving plan as the answer checks need it, loaded once by the store.

    ``entries`` are the plan's cups (all of the trial, or one panelist's);
    ``session_ids`` and ``panelist_ids`` map names and codes to the store's ids, in the
    trial's order (the store turns checked answers back into rows with them);
    ``existing`` maps (session, panelist code, question) to the (code, value) on file.
    """

    trial: Trial
    entries: tuple[PlanEntry, ...]
    session_ids: dict[str, int]
    panelist_ids: dict[str, int]
    existing: dict[tuple[str, str, str], tuple[str, str]] = field(default_factory=dict)


@dataclass(frozen=True, slots=True)
class PanelChoice(Record):
    """Who may be served in a trial's next plan: ``consented`` (codes with a consent
    date), ``conflicted`` (codes a sample's allergens rule out), ``planned`` (codes in
    the plan already) and ``suggested`` (the default choice: the planned panelists who
    are safe, else every safe consented panelist)."""

    consented: tuple[str, ...]
    conflicted: tuple[str, ...]
    planned: tuple[str, ...]
    suggested: tuple[str, ...]


# ---------------------------------------------------------------- recipe experiments


@dataclass(frozen=True, slots=True)
class ExperimentFactor(Record):
    """A process setting an experiment varies: ``low``/``high`` are coded -1/+1,
    ``levels`` the only settings the kitchen can make (empty: any), ``safe_low``..
    ``safe_high`` the range the kitchen declares safe to serve."""

    name: str
    unit: str
    low: float
    high: float
    safe_low: float
    safe_high: float
    levels: tuple[float, ...] = ()

    @property
    def centre(self) -> float:
        return (self.low + self.high) / 2

    @property
    def half_range(self) -> float:
        return (self.high - self.low) / 2

    def actual(self, coded: float) -> float:
        """The actual setting of a coded value (-1 = low, +1 = high)."""
        return self.centre + coded * self.half_range

    def coded(self, actual: float) -> float:
        return (actual - self.centre) / self.half_range


@dataclass(frozen=True, slots=True)
class ExperimentRun(Record):
    """One run of an experiment, made as the batch ``batch_label`` of the trial's sample
    ``sample_name``; ``settings`` are the actual settings in the factors' order."""

    run: int
    std_order: int
    block: int
    point: str
    coded: tuple[float, ...]
    settings: tuple[float, ...]
    sample_name: str
    batch_label: str


@dataclass(frozen=True, slots=True)
class Experiment(Record):
    """A recipe experiment: a design over factors, tasted as the rating trial
    ``trial_id`` whose samples are its runs."""

    id: int
    trial_id: int
    name: str
    kind: str
    seed: int | None
    center_points: int
    blocks: int
    resolution: int | None
    generators: str
    factors: tuple[ExperimentFactor, ...]
    runs: tuple[ExperimentRun, ...]
    created_on: dt.date | None = None
