"""Use cases of recipe experiments: design runs over process settings, make each run a
test batch of a rating trial, plan its tasting (incomplete blocks when a panelist
cannot taste every run), record measured variables per run, and analyse every
response (each attribute's panelist-adjusted run means, each measured variable).

The designs are :mod:`trials.design.experiment` (pyDOE3), the statistics
:mod:`trials.stats.response_surface`; the rating trial is an ordinary trial, so its
ballots, serving sheet, labels, tasting links and sign-offs work as for any other.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd

from trials.design import experiment as design
from trials.errors import NotFoundError, TrialsError
from trials.methods import RATING, get_method
from trials.model import Attribute, AttributeKind, Experiment, ExperimentFactor, ExperimentRun
from trials.model import Sample as SampleRecord
from trials.service import _input
from trials.service.trials import check_attribute
from trials.store import Store
from trials.store import batches as batch_rows
from trials.store import experiments as experiment_rows
from trials.store import trials as trial_rows

KINDS, KIND_LABELS, TWO_LEVEL = design.KINDS, design.KIND_LABELS, design.TWO_LEVEL
FOOD_CODE_CAUTION = (
    "Every run is food served to people. Before tasting, each run must meet your local "
    "food code (cooking temperatures, holding times, preservation) whatever its settings; "
    "settings outside the kitchen's declared safe ranges are refused; and each run's batch "
    "needs its food-safety sign-off before it is served. Check declared allergens and "
    "obtain informed consent as for any tasting.")
DEFAULT_ATTRIBUTE = Attribute(name="overall liking", kind=AttributeKind.HEDONIC, low=1, high=9,
                              anchors=("dislike extremely", "like extremely"))


def _factor(item: Any) -> design.Factor:
    """A checked factor from a :class:`design.Factor`, an ``ExperimentFactor`` or a dict
    (``name unit low high levels safe_low safe_high``)."""
    if isinstance(item, ExperimentFactor):
        return item
    if not isinstance(item, Mapping):
        raise TrialsError(f"a factor is a mapping of name, unit, low, high, safe range; "
                          f"got {item!r}")
    try:
        return design.make_factor(
            item.get("name", ""), item.get("unit", ""), low=item.get("low"),
            high=item.get("high"), levels=tuple(item.get("levels") or ()),
            safe_low=item.get("safe_low"), safe_high=item.get("safe_high"))
    except (TypeError, ValueError) as exc:
        if isinstance(exc, TrialsError):
            raise
        raise TrialsError(f"factor {item.get('name')!r}: {exc}") from None


def design_experiment(kind: str, factors: Sequence[Any], *, center_points: int = 0,
                      blocks: int = 1, resolution: int | None = None,
                      generators: str | None = None,
                      seed: int | None = None) -> design.ExperimentDesign:
    """The design, not stored (a preview): see :func:`trials.design.experiment.
    experiment_design`. Runs outside a declared safe range are refused."""
    if seed is not None and not 0 <= int(seed) <= 2**31 - 1:
        raise TrialsError(f"the seed is a whole number from 0 to {2**31 - 1}, got {seed}")
    return design.experiment_design(
        kind, [_factor(f) for f in factors], center_points=center_points, blocks=blocks,
        resolution=resolution, generators=generators or None, rng=seed)


def run_name(run: int, total: int) -> str:
    return f"Run {run:0{len(str(total))}d}"


def run_label(run: int, total: int) -> str:
    return f"R{run:0{len(str(total))}d}"


def settings_text(factors: Sequence[Any], settings: Sequence[float]) -> str:
    return ", ".join(f"{f.name} {v:g} {f.unit}".rstrip() for f, v in zip(factors, settings))


def create_experiment(
    store: Store,
    *,
    name: str,
    kind: str,
    factors: Sequence[Any],
    center_points: int = 0,
    blocks: int = 1,
    resolution: int | None = None,
    generators: str | None = None,
    seed: int | None = None,
    attributes: Sequence[Attribute] = (),
    product: str = "",
    allergens: Iterable[str] | str = (),
    objective: str = "",
    created_on: dt.date | None = None,
    by: str = "leader",
) -> Experiment:
    """Design an experiment and store it with its rating trial, in one transaction.

    Each run becomes a sample of the trial (``Run 01`` ...) with one test batch
    (``R01`` ...) whose process settings are the run's settings; every sample carries
    the product's ``allergens``. ``attributes`` are rated for every run (default:
    overall liking on the 9-point hedonic scale). Runs outside a declared safe range
    are refused before anything is stored.
    """
    plan = design_experiment(kind, factors, center_points=center_points, blocks=blocks,
                             resolution=resolution, generators=generators, seed=seed)
    title = _input.name(name, "the experiment's name")
    total = len(plan.runs)
    allergen_list = _input.allergens(allergens)
    attrs = [check_attribute(a) for a in (attributes or (DEFAULT_ATTRIBUTE,))]
    samples = [SampleRecord(name=run_name(r.run, total), allergens=allergen_list,
                            description=settings_text(plan.factors, r.settings))
               for r in plan.runs]
    fields = {
        "name": title, "method": get_method(RATING).name, "product": product or "",
        "objective": objective or f"Recipe experiment ({plan.label}) over "
                                  + ", ".join(f.name for f in plan.factors),
        "aim": "", "alpha": 0.05, "beta": 0.20, "pd": None, "delta": None,
        "created_on": created_on or _input.today(), "target_sample": "",
    }
    factor_records = list(plan.factors)
    runs = [ExperimentRun(run=r.run, std_order=r.std_order, block=r.block, point=r.point,
                          coded=r.coded, settings=r.settings,
                          sample_name=run_name(r.run, total), batch_label=run_label(r.run, total))
            for r in plan.runs]

    def work(tx) -> int:
        trial_id = trial_rows.insert_trial(tx, fields, samples, attrs, by)
        for r in runs:
            settings = [_input.measurements([(f.name, v, f.unit)], "process setting")[0]
                        for f, v in zip(plan.factors, r.settings)]
            batch_rows.add_batch(tx, trial_id, r.sample_name, r.batch_label, prepared_on=None,
                                 prepared_by="", notes=f"block {r.block}, {r.point} point",
                                 settings=settings, measures=(), by=by)
        return experiment_rows.insert_experiment(tx, trial_id, {
            "name": title, "kind": plan.kind, "seed": seed, "center_points": plan.center_points,
            "blocks": plan.blocks, "resolution": resolution, "generators": generators or "",
            "created_on": fields["created_on"]}, factor_records, runs, by)

    experiment_id = store.write(work)
    return get_experiment(store, experiment_id)


def get_experiment(store: Store, experiment_id: int) -> Experiment:
    """The experiment with its factors and runs (in run order)."""
    with store.read() as tx:
        return experiment_rows.get_experiment(tx, experiment_id)


def experiment_of_trial(store: Store, trial_id: int) -> Experiment | None:
    """The experiment a trial tastes, or None for an ordinary trial."""
    with store.read() as tx:
        return experiment_rows.experiment_of_trial(tx, trial_id)


def list_experiments(store: Store) -> list[Experiment]:
    """Every experiment on file, newest first."""
    with store.read() as tx:
        return experiment_rows.list_experiments(tx)


def experiment_design_of(exp: Experiment) -> design.ExperimentDesign:
    """The stored experiment's design again (same seed, same runs), for its aliases."""
    return design.experiment_design(
        exp.kind, list(exp.factors), center_points=exp.center_points,
        blocks=exp.blocks, resolution=exp.resolution, generators=exp.generators or None,
        rng=exp.seed)


def unsigned_runs(store: Store, experiment_id: int) -> list[str]:
    """Run batches without their food-safety sign-off (they must not be served)."""
    exp = get_experiment(store, experiment_id)
    with store.read() as tx:
        batches = batch_rows.list_batches(tx, exp.trial_id)
    signed = {(b.sample_name, b.label) for b in batches if b.signed_off}
    return [r.sample_name for r in exp.runs if (r.sample_name, r.batch_label) not in signed]


def plan_experiment_tasting(
    store: Store,
    experiment_id: int,
    *,
    panelist_codes: Sequence[str],
    per_panelist: int | None = None,
    session: str = "1",
    seed: int | None = None,
    by: str = "leader",
):
    """Draw the blind serving plan of the runs as a rating trial.

    ``per_panelist``: how many runs one panelist can taste in a sitting; fewer than the
    runs gives balanced (or near-balanced) incomplete blocks
    (:func:`trials.design.blocks.incomplete_blocks`), every run otherwise (Williams
    orders). Refused while a run's batch has no food-safety sign-off.
    """
    from trials.service.serving import draw_plan

    exp = get_experiment(store, experiment_id)
    missing = unsigned_runs(store, experiment_id)
    if missing:
        raise TrialsError("these runs have no food-safety sign-off yet and cannot be served: "
                          + ", ".join(missing) + "; sign off each run's batch first")
    if per_panelist is not None and not 2 <= int(per_panelist) <= len(exp.runs):
        raise TrialsError(f"runs per panelist: 2 to {len(exp.runs)}, got {per_panelist}")
    k = None if per_panelist is None or int(per_panelist) >= len(exp.runs) else int(per_panelist)
    return draw_plan(store, exp.trial_id, panelist_codes=panelist_codes, session=session,
                     seed=seed, per_panelist=k, by=by)


def record_run_measures(store: Store, experiment_id: int, run: int,
                        measures: Mapping[str, Any] | Iterable[Any], *,
                        by: str = "leader") -> int:
    """Record measured variables of one run on its batch (``{name: (value, unit)}`` or
    ``(name, value, unit)`` items); a value on file is replaced (audited)."""
    exp = get_experiment(store, experiment_id)
    found = next((r for r in exp.runs if r.run == int(run)), None)
    if found is None:
        raise NotFoundError(f"experiment {experiment_id} has no run {run!r}")
    items = _input.measurements(measures, "measured variable")
    parsed = [(found.sample_name, found.batch_label, "measure", m.name, m.value, m.unit, None,
               "") for m in items]
    return store.write(lambda tx: batch_rows.store_values(tx, exp.trial_id, parsed, by))


def sign_off_runs(store: Store, experiment_id: int, *, by: str,
                  on: dt.date | str | None = None) -> int:
    """Record the food-safety sign-off of every run's batch (each still checked by the
    person signing, per the local food code); returns how many were signed."""
    from trials.service.batches import sign_off_batch

    exp = get_experiment(store, experiment_id)
    for r in exp.runs:
        sign_off_batch(store, exp.trial_id, r.sample_name, r.batch_label, by=by, on=on)
    return len(exp.runs)


def run_sheet(store: Store, experiment_id: int):
    """The experiment's run sheet (:func:`trials.printing.run_sheet_pdf`) with the
    food-code caution and the sign-offs on file, as a ``PrintResult``."""
    from trials.printing import run_sheet_pdf

    exp = get_experiment(store, experiment_id)
    with store.read() as tx:
        batches = batch_rows.list_batches(tx, exp.trial_id)
    return run_sheet_pdf(exp, batches=batches, label=design.KIND_LABELS[exp.kind],
                         caution=FOOD_CODE_CAUTION)


def experiment_file(store: Store, experiment_id: int):
    """The experiment and its trial's :class:`~trials.service.results.TrialFile`, read in
    one transaction (one snapshot while tablets write)."""
    from trials.service.results import file_in

    with store.read() as tx:
        exp = experiment_rows.get_experiment(tx, experiment_id)
        return exp, file_in(tx, exp.trial_id)


def trial_file_and_experiment(store: Store, trial_id: int):
    """A trial's file and its experiment (None for an ordinary trial), in one snapshot."""
    from trials.service.results import file_in

    with store.read() as tx:
        return file_in(tx, trial_id), experiment_rows.experiment_of_trial(tx, trial_id)


def table_of(exp: Experiment, f, analysis) -> pd.DataFrame:
    """The run table (see :func:`run_table`) of a snapshot and its trial analysis."""
    rows = []
    batches = {(b.sample_name, b.label): b for b in f.batches}
    for r in exp.runs:
        row: dict[str, Any] = {"run": r.run, "std_order": r.std_order, "block": r.block,
                               "point": r.point, "sample": r.sample_name, "batch": r.batch_label}
        for i, (fac, v, c) in enumerate(zip(exp.factors, r.settings, r.coded)):
            row[fac.name] = v
            row[f"coded_{i}"] = c
        b = batches.get((r.sample_name, r.batch_label))
        for m in (b.measures if b else ()):
            row[m.name] = m.value if isinstance(m.value, float) else np.nan
        for a in analysis.attributes:
            means = a.anova.means if a.anova is not None else a.means
            row[a.attribute] = means.get(r.sample_name, np.nan)
        row["signed_off"] = bool(b and b.signed_off)
        rows.append(row)
    return pd.DataFrame(rows)


def responses_in(exp: Experiment, f) -> list[tuple[str, str, str]]:
    """``(name, source, unit)`` of every response: the trial's attributes, then every
    numeric measured variable recorded on a run."""
    out = [(a.name, "attribute", f"{a.low}-{a.high}") for a in f.study.attributes]
    seen = {n for n, _, _ in out} | {x.name for x in exp.factors}
    for b in f.batches:
        for m in b.measures:
            if m.name not in seen and isinstance(m.value, float):
                seen.add(m.name)
                out.append((m.name, "measure", m.unit))
    return out


def run_table(store: Store, experiment_id: int) -> pd.DataFrame:
    """One row per run in run order: run, block, point, sample, batch, each factor's
    actual setting (column = factor name), its coded value (``coded_<i>``), each
    measured variable and each attribute's run mean (adjusted for panelists by the
    rating model where it ran), and ``signed_off``."""
    from trials.service.results import analyse_file

    exp, f = experiment_file(store, experiment_id)
    return table_of(exp, f, analyse_file(f))


def responses_of(store: Store, experiment_id: int) -> list[tuple[str, str, str]]:
    """``(name, source, unit)`` of every response (:func:`responses_in`)."""
    return responses_in(*experiment_file(store, experiment_id))
