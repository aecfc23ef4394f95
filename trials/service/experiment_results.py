"""Use cases of a recipe experiment's results: every response analysed over the
factors (effects and Lenth's PSE for two-level designs, the fitted surface with lack of
fit, the stationary point), contour grids, and the joint optimum by desirability
inside the declared safe ranges with a suggested confirmation run."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from trials.design import experiment as design
from trials.errors import TrialsError
from trials.model import Experiment, Record
from trials.service.experiments import experiment_file, responses_in, table_of
from trials.stats import response_surface as rsm
from trials.store import Store

GOALS, MAXIMIZE = rsm.GOALS, rsm.MAXIMIZE


@dataclass(frozen=True, slots=True)
class ResponseAnalysis(Record):
    """One response over the factors. ``source``: ``attribute`` (run means from the
    panel model) or ``measure``; ``effects`` for two-level designs; ``fit`` the
    surface (``model`` says which); ``stationary`` the stationary point in actual
    settings (second-order fits); ``note`` why something did not run."""

    response: str
    source: str
    unit: str
    runs: int
    model: str
    effects: rsm.FactorialEffects | None
    fit: rsm.SurfaceFit | None
    stationary: dict[str, float] | None
    note: str = ""


@dataclass(frozen=True, slots=True)
class ExperimentAnalysis(Record):
    """Every response of an experiment, and the joint optimum where goals were given.

    ``table`` holds the run table's rows (:func:`trials.service.run_table`);
    ``confirmation`` the suggested confirmation run's actual settings (on declared
    levels, inside the safe ranges), ``bounds`` the coded box searched.
    """

    experiment: Experiment
    table: tuple[dict[str, Any], ...]
    responses: tuple[ResponseAnalysis, ...]
    goals: tuple[rsm.Goal, ...]
    optimum: rsm.DesirabilityOptimum | None
    confirmation: dict[str, float] | None
    bounds: tuple[tuple[float, float], ...]
    note: str = ""

    def frame(self) -> pd.DataFrame:
        return pd.DataFrame(list(self.table))

    def response(self, name: str) -> ResponseAnalysis:
        for r in self.responses:
            if r.response == name:
                return r
        raise KeyError(name)


def coded_columns(exp: Experiment) -> list[str]:
    return [f"coded_{i}" for i in range(len(exp.factors))]


def _model_for(kind: str) -> str:
    return rsm.QUADRATIC if kind in design.SECOND_ORDER else rsm.INTERACTION


def analyse_frame(exp: Experiment, table: pd.DataFrame,
                  responses: Sequence[tuple[str, str, str]]) -> list[ResponseAnalysis]:
    """Each response of the run table analysed (pure: no store)."""
    cols = coded_columns(exp)
    names = [f.name for f in exp.factors]
    renamed = table.rename(columns=dict(zip(cols, [f"x{i}" for i in range(len(cols))])))
    xcols = [f"x{i}" for i in range(len(cols))]
    bound = max((abs(c) for r in exp.runs for c in r.coded), default=1.0)
    out = []
    for name, source, unit in responses:
        if name not in renamed or renamed[name].notna().sum() == 0:
            out.append(ResponseAnalysis(name, source, unit, 0, "", None, None, None,
                                        "no values yet"))
            continue
        frame = renamed.rename(columns={name: "y"})[[*xcols, "y", "block"]]
        frame = frame.dropna(subset=["y"])
        notes = []
        effects = None
        if exp.kind in design.TWO_LEVEL:
            try:
                effects = rsm.factorial_effects(frame, xcols, "y")
                effects = _renamed_effects(effects, names, name)
            except TrialsError as exc:
                notes.append(f"effects not estimated: {exc}")
        fit, model = None, _model_for(exp.kind)
        block = "block" if exp.blocks > 1 else None
        for candidate in ([model, rsm.LINEAR] if model == rsm.INTERACTION else [model]):
            try:
                fit = rsm.response_surface_fit(frame, xcols, "y", model=candidate,
                                               block=block, bound=bound)
                model = candidate
                break
            except TrialsError as exc:
                notes.append(f"{candidate} model not fitted: {exc}")
        stationary = None
        if fit is not None:
            fit = _renamed_fit(fit, names, name)
            if fit.canonical is not None:
                stationary = {f.name: f.actual(c)
                              for f, c in zip(exp.factors, fit.canonical.stationary)}
        out.append(ResponseAnalysis(name, source, unit, len(frame), model if fit else "",
                                    effects, fit, stationary, "; ".join(notes)))
    return out


def _swap(label: str, names: Sequence[str]) -> str:
    """``x0*x1`` -> ``proof*salt``; ``x0^2`` -> ``proof^2``."""
    out = label
    for i in range(len(names) - 1, -1, -1):
        out = out.replace(f"x{i}", names[i])
    return out


def _renamed_effects(e: rsm.FactorialEffects, names, response) -> rsm.FactorialEffects:
    from dataclasses import replace

    effects = tuple(replace(x, term=_swap(x.term, names)) for x in e.effects)
    lenth = replace(e.lenth, active=tuple(_swap(a, names) for a in e.lenth.active))
    return replace(e, response=response, factors=tuple(names), effects=effects, lenth=lenth,
                   skipped=tuple(_swap(s, names) for s in e.skipped))


def _renamed_fit(fit: rsm.SurfaceFit, names, response) -> rsm.SurfaceFit:
    from dataclasses import replace

    coefs = tuple(replace(c, term=_swap(c.term, names)) for c in fit.coefficients)
    return replace(fit, response=response, factors=tuple(names), coefficients=coefs)


def safe_bounds(exp: Experiment) -> list[tuple[float, float]]:
    """The coded box an optimum may lie in: the design's cube (-1..+1, the factorial
    points, so the fit is not extrapolated to untested corners) cut to each factor's
    declared safe range."""
    out = []
    for f in exp.factors:
        fac = f
        lo, hi = fac.coded(f.safe_low), fac.coded(f.safe_high)
        out.append((max(-1.0, lo), min(1.0, hi)))
    return out


def confirmation_settings(exp: Experiment, coded: Sequence[float]) -> dict[str, float]:
    """Actual settings of a coded point, moved to the nearest declared level and rounded
    to 4 significant figures, checked against the safe ranges."""
    out = {}
    for f, c in zip(exp.factors, coded):
        fac = f
        value = fac.actual(float(c))
        if f.levels:
            value = min(f.levels, key=lambda lv: abs(lv - value))
        else:
            value = float(f"{value:.4g}")
        value = min(max(value, f.safe_low), f.safe_high)
        design.check_safe(fac, value, "the confirmation run")
        out[f.name] = value
    return out


def analyse_experiment(store: Store, experiment_id: int, *,
                       goals: Sequence[rsm.Goal | dict] = ()) -> ExperimentAnalysis:
    """Analyse every response of an experiment and, with ``goals``, find the joint
    optimum (Derringer and Suich desirability) inside the declared safe ranges.

    ``goals`` are :class:`trials.stats.response_surface.Goal` or dicts of its fields,
    e.g. ``{"response": "overall liking", "kind": "maximize", "low": 7, "high": 9}`` for
    "liking at least 7".
    """
    from trials.service.results import analyse_file

    exp, f = experiment_file(store, experiment_id)
    table = table_of(exp, f, analyse_file(f))
    responses = responses_in(exp, f)
    analysed = analyse_frame(exp, table, responses)
    try:
        clean = [rsm.check_goal(g if isinstance(g, rsm.Goal) else rsm.Goal(**g)) for g in goals]
    except TypeError as exc:
        raise TrialsError(f"a goal names response, kind, low, high (and target): {exc}") from None
    known = {name for name, _, _ in responses}
    unknown = [g.response for g in clean if g.response not in known]
    if unknown:
        raise TrialsError(f"no response {', '.join(map(repr, unknown))} in this experiment; "
                          f"its responses: {', '.join(map(repr, sorted(known))) or 'none yet'}")
    bounds = safe_bounds(exp)
    optimum = confirmation = None
    note = ""
    if clean:
        fits = {r.response: r.fit for r in analysed if r.fit is not None}
        missing = [g.response for g in clean if g.response not in fits]
        if missing:
            note = "no fitted model yet for " + ", ".join(map(repr, missing))
        else:
            optimum = rsm.desirability_optimum(fits, clean, bounds)
            confirmation = confirmation_settings(exp, optimum.coded)
    return ExperimentAnalysis(
        experiment=exp, table=tuple(table.to_dict("records")), responses=tuple(analysed),
        goals=tuple(clean), optimum=optimum, confirmation=confirmation,
        bounds=tuple(bounds), note=note)


def contour(analysis: ExperimentAnalysis, response: str, x_factor: str, y_factor: str, *,
            n: int = 200, fixed: dict[str, float] | None = None
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The fitted surface of ``response`` over two factors in actual units (``n x n``
    grid over low..high), the other factors held at ``fixed`` (actual; default: the
    optimum where one was found, else the centre). Returns ``(xs, ys, z)``."""
    exp = analysis.experiment
    fit = analysis.response(response).fit
    if fit is None:
        raise TrialsError(f"no fitted model for {response!r}")
    names = [f.name for f in exp.factors]
    try:
        i, j = names.index(x_factor), names.index(y_factor)
    except ValueError:
        raise TrialsError(f"factors are {', '.join(map(repr, names))}") from None
    if i == j:
        raise TrialsError("choose two different factors")
    base = np.zeros(len(names))
    if analysis.optimum is not None:
        base = np.asarray(analysis.optimum.coded)
    for name, value in (fixed or {}).items():
        k = names.index(name)
        base[k] = exp.factors[k].coded(float(value))
    xs, ys, z = rsm.contour_grid(fit, i, j, fixed=base, n=n)
    fx, fy = exp.factors[i], exp.factors[j]
    return np.array([fx.actual(v) for v in xs]), np.array([fy.actual(v) for v in ys]), z


def report_part(exp: Experiment, f, trial_analysis) -> dict[str, Any]:
    """For the report of an experiment's trial (pure, from the report's snapshot): the
    experiment's analysis, design label, aliases and a contour grid (first two factors,
    60 x 60) per fitted response."""
    from trials.service.experiments import experiment_design_of

    table = table_of(exp, f, trial_analysis)
    analysis = ExperimentAnalysis(
        experiment=exp, table=tuple(table.to_dict("records")),
        responses=tuple(analyse_frame(exp, table, responses_in(exp, f))), goals=(),
        optimum=None, confirmation=None, bounds=tuple(safe_bounds(exp)))
    names = [f.name for f in exp.factors]
    contours = {}
    for r in analysis.responses:
        if r.fit is not None:
            xs, ys, z = contour(analysis, r.response, names[0], names[1], n=60)
            contours[r.response] = (xs, ys, z, names[0], names[1])
    plan = experiment_design_of(exp)
    return {"analysis": analysis, "label": plan.label, "aliases": plan.aliases,
            "contours": contours}
