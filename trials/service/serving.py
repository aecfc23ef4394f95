"""Use cases of the serving plan: draw a session's blind plan (codes, balanced orders
or sets, the batch of each cup), read it with the key (leader views only), the
allergen conflicts it would serve, how balanced it is, and the panelists' tasting
links."""

from __future__ import annotations

import warnings
from collections import Counter, defaultdict
from collections.abc import Iterable, Sequence
from typing import Any

import pandas as pd

from trials.errors import NotFoundError, TrialsError
from trials.methods import MethodSpec, Scoring, get_method
from trials.model import AllergenConflict, PanelChoice, Panelist, PlanEntry, Sample
from trials.service import _input
from trials.store import Store
from trials.store import panel as panel_rows
from trials.store import plans as plan_rows
from trials.store import trials as trial_rows


def _plan_entries(
    spec: MethodSpec,
    samples: Sequence[Sample],
    panelist_codes: list[str],
    session: str,
    seed: int | None,
    session_index: int,
    exclude_codes: Iterable[str],
    per_panelist: int | None,
    target: str = "",
) -> list[PlanEntry]:
    """The serving plan from trials.design.plan.serving_plan, the control first; for a
    target-by-role method the target sample takes the method's target role."""
    from trials.design.plan import serving_plan

    ordered = sorted(samples, key=lambda x: not x.is_control)
    with warnings.catch_warnings():
        # an unbalanced panel is reported by the plan screen, not as a warning here
        warnings.simplefilter("ignore")
        return list(serving_plan(
            spec.name, [x.name for x in ordered], panelist_codes, session=session, rng=seed,
            exclude_codes=exclude_codes, per_panelist=per_panelist,
            session_index=session_index, target=target or None,
        ))


def served_conflicts(entries: Sequence[PlanEntry], samples: Sequence[Sample],
                     panelists: Sequence[Panelist]) -> list[AllergenConflict]:
    """Conflicts between the samples each panelist is served and their allergens."""
    from trials.design.allergens import allergen_conflicts as design_conflicts

    served: dict[str, set[str]] = defaultdict(set)
    for e in entries:
        served[e.panelist_code].add(e.sample_name)
    out = []
    for p in panelists:
        mine = [x for x in samples if x.name in served.get(p.code, ())]
        out += design_conflicts(mine, [p])
    return out


def _check_samples(spec: MethodSpec, trial_id: int, samples: Sequence[Sample],
                   n_attributes: int) -> None:
    if spec.served_in_sets and len(samples) != 2:
        raise TrialsError(
            f"a {spec.name} trial compares exactly 2 samples; trial {trial_id} has {len(samples)}"
        )
    if not spec.served_in_sets and len(samples) < 2:
        raise TrialsError(f"a {spec.name} trial needs 2 or more samples; it has {len(samples)}")
    if spec.scores_each_cup and not n_attributes:
        raise TrialsError(
            f"a rating trial needs at least one attribute; trial {trial_id} has none")


def _check_target(spec: MethodSpec, trial_id: int, samples: Sequence[Sample],
                  target: str) -> None:
    """A target-by-role method (2-AFC, 3-AFC) needs its target sample chosen first."""
    if spec.scoring is not Scoring.TARGET_BY_ROLE:
        return
    names = [x.name for x in samples]
    if not target:
        raise TrialsError(
            f"a {spec.label} trial needs its target sample (the one expected to have more "
            f"of the attribute) before a plan is drawn; choose one of "
            f"{', '.join(map(repr, names))} on the set-up screen (trial {trial_id})")
    if target not in names:
        raise TrialsError(f"the target sample {target!r} of trial {trial_id} is not one of "
                          f"its samples {', '.join(map(repr, names))}")


def _check_roster(codes: Sequence[str], roster: dict[str, Panelist]) -> None:
    missing = [c for c in codes if c not in roster]
    if missing:
        raise NotFoundError(f"not on the roster: {', '.join(map(repr, missing))}")
    unconsented = [c for c in codes if roster[c].consent_on is None]
    if unconsented:
        raise TrialsError(
            "no consent recorded for: " + ", ".join(map(repr, unconsented))
            + "; record each panelist's informed consent first"
        )


def draw_plan(
    store: Store,
    trial_id: int,
    *,
    panelist_codes: Sequence[str],
    session: str = "1",
    seed: int | None = None,
    per_panelist: int | None = None,
    by: str = "leader",
) -> list[PlanEntry]:
    """Draw (or redraw) the blind serving plan of one session.

    The plan comes from :func:`trials.design.plan.serving_plan` (balanced sets for
    forced choice, Williams orders or incomplete blocks with ``per_panelist`` for
    ratings and rankings); codes already used in the trial's other sessions are not
    drawn again. Every panelist must be on the roster with a consent date, and no
    panelist may be served a sample holding an allergen they declared (the plan is
    refused, naming each conflict). A session that already has answers cannot be
    redrawn. A target-by-role method (2-AFC, 3-AFC) needs the trial's target sample
    chosen first; its cups then carry the method's target role. Each cup gets the
    sample's latest signed-off batch (else its latest batch). Each panelist gets an
    access token for the tasting link.
    """
    session = _input.name(session, "the session's name")
    codes = [str(c).strip() for c in panelist_codes]
    if not codes:
        raise TrialsError("a plan needs at least one panelist; got none")
    dupes = sorted(c for c, k in Counter(codes).items() if k > 1)
    if dupes:
        raise TrialsError(f"panelists listed twice: {', '.join(map(repr, dupes))}")

    def work(tx) -> list[PlanEntry]:
        trial = trial_rows.get_trial(tx, trial_id)
        spec = get_method(trial.method)
        _check_samples(spec, trial.id, trial.samples, len(trial.attributes))
        _check_target(spec, trial.id, trial.samples, trial.target_sample)
        roster = plan_rows.roster_of(tx, codes)
        _check_roster(codes, roster)
        index, used = plan_rows.open_session(tx, trial.id, session, by)
        entries = _plan_entries(spec, trial.samples, codes, session, seed, index, used,
                                per_panelist, trial.target_sample)
        conflicts = served_conflicts(entries, trial.samples, [roster[c] for c in codes])
        if conflicts:
            raise TrialsError(
                "the plan would serve declared allergens: " + "; ".join(
                    f"panelist {c.panelist_code!r} declared {', '.join(c.allergens)}, held by "
                    f"sample {c.sample_name!r}" for c in conflicts
                ) + ". Leave these panelists out of this trial"
            )
        return plan_rows.store_plan(tx, trial.id, session, entries, codes, seed=seed, by=by)

    return store.write(work)


def plan(store: Store, trial_id: int, session: str | None = None) -> list[PlanEntry]:
    """The serving plan with the decoding key (leader views and the serving sheet only)."""
    with store.read() as tx:
        return plan_rows.plan_entries(tx, trial_id, session)


def conflicts_of(samples: Sequence[Sample], entries: Sequence[PlanEntry],
                 roster: Sequence[Panelist]) -> list[AllergenConflict]:
    """With a plan drawn, the samples each panelist is served; before, every sample of
    the trial for every panelist on the roster."""
    from trials.design.allergens import allergen_conflicts as design_conflicts

    if not entries:
        return list(design_conflicts(samples, roster))
    return served_conflicts(entries, samples, roster)


def allergen_conflicts(store: Store, trial_id: int) -> list[AllergenConflict]:
    """Panelists whose declared allergens a sample of the trial holds
    (:func:`trials.design.allergens.allergen_conflicts`).

    With a plan drawn, only the samples each panelist is served count; before, every
    sample of the trial counts for every panelist on the roster.
    """
    with store.read() as tx:
        trial = trial_rows.get_trial(tx, trial_id)
        entries = plan_rows.plan_entries(tx, trial_id)
        roster = panel_rows.list_panelists(tx)
    return conflicts_of(trial.samples, entries, roster)


def panel_choice(store: Store, trial_id: int) -> PanelChoice:
    """Who may be served in the trial's next plan (one snapshot): panelists without a
    consent date cannot be; those with an allergen conflict are left out of the
    suggestion (drawing with them is refused)."""
    with store.read() as tx:
        trial = trial_rows.get_trial(tx, trial_id)
        roster = panel_rows.list_panelists(tx)
        planned = {p.code for p in panel_rows.list_panelists(tx, trial_id)}
        entries = plan_rows.plan_entries(tx, trial_id)
    clash = {c.panelist_code for c in conflicts_of(trial.samples, entries, roster)}
    consented = [p.code for p in roster if p.consented]
    safe = [c for c in consented if c not in clash]
    return PanelChoice(
        consented=tuple(consented), conflicted=tuple(sorted(clash)),
        planned=tuple(sorted(planned)),
        suggested=tuple(sorted(planned & set(safe)) or safe),
    )


def plan_balance(store: Store, trial_id: int) -> dict[str, Any]:
    """How balanced the drawn plan is: cups of each sample at each position, and (forced
    choice) how often each set pattern is served (DataFrames, empty without a plan);
    ``statements``: the balance reached, one sentence per session
    (:func:`trials.design.balance.plan_balance`); ``letters``: which sample is A and
    which B in the patterns."""
    from trials.design.balance import plan_balance as balance_of

    with store.read() as tx:
        method = trial_rows.get_trial(tx, trial_id).method
        entries = plan_rows.plan_entries(tx, trial_id)
    if not entries:
        return {"positions": pd.DataFrame(), "patterns": pd.DataFrame(), "statements": [],
                "letters": {}}
    frame = pd.DataFrame([e.to_dict() for e in entries])
    positions = pd.crosstab(frame["sample_name"], frame["position"])
    positions.index.name, positions.columns.name = "sample", "position"
    sessions = balance_of(method, entries)
    many = len(sessions) > 1
    out: dict[str, Any] = {
        "positions": positions, "patterns": pd.DataFrame(),
        "statements": [(f"Session {b.session}: " if many else "") + b.statement
                       for b in sessions],
        "letters": {e.role: e.sample_name for e in entries if e.role in ("A", "B")},
    }
    if frame["role"].astype(str).str.len().gt(0).any():
        pats = (frame.sort_values("position").groupby(["session", "panelist_code", "set_index"])
                ["role"].agg("".join))
        counts = pats.value_counts().rename_axis("pattern").reset_index(name="sets")
        out["patterns"] = counts.sort_values("pattern").reset_index(drop=True)
    return out


KEY_COLUMNS = {"session": "Session", "panelist_code": "Panelist", "position": "Position",
               "code": "Code", "sample_name": "Sample", "set_index": "Set", "role": "Role",
               "batch_label": "Batch"}


def plan_table(store: Store, trial_id: int) -> pd.DataFrame:
    """The plan with the decoding key as the leader reads it: headed as on the serving
    sheet (Session, Panelist, Position, Code, Sample, Set, Role, Batch), sets numbered
    from 1 as printed."""
    entries = plan(store, trial_id)
    frame = pd.DataFrame([e.to_dict() for e in entries], columns=list(KEY_COLUMNS))
    frame["set_index"] = frame["set_index"] + 1
    return frame.rename(columns=KEY_COLUMNS)


def panelist_token(store: Store, trial_id: int, panelist_code: str) -> str:
    """The unguessable token of a panelist's tasting link for a trial (made on first use)."""
    return store.write(lambda tx: plan_rows.token_of(tx, trial_id, panelist_code))


def panelist_links(store: Store, trial_id: int) -> dict[str, str]:
    """Panelist code -> path of the tasting screen, relative to the app's address."""
    with store.read() as tx:
        return plan_rows.links(tx, trial_id)
