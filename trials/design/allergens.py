"""Allergen checks: which panelist must not be served which sample.

Samples are food served to people. Each sample declares its allergens and each
panelist the allergens they must avoid; a plan must not serve a panelist a sample
that holds one of them. This is a cross-check of what was declared, not a substitute
for the allergen control, informed consent and food safety practice that local food
codes and licensed practice require.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from trials.errors import TrialsError
from trials.model import AllergenConflict, Panelist, PlanEntry, Record, Sample

MODES = ("omit", "flag", "raise")


def _norm(names: Iterable[str]) -> set[str]:
    return {str(n).strip().casefold() for n in names if str(n).strip()}


def allergen_conflicts(
    samples: Sequence[Sample], panelists: Sequence[Panelist]
) -> list[AllergenConflict]:
    """Every (panelist, sample) pair where the sample holds an allergen the panelist declared.

    Parameters
    ----------
    samples : sequence of Sample
        The samples with their ``allergens``.
    panelists : sequence of Panelist
        The panelists with their declared ``allergens``.

    Returns
    -------
    list of AllergenConflict
        In panelist order, then sample order; ``allergens`` are the shared names
        (stripped, lower case, sorted).

    Notes
    -----
    Names match case-insensitively after stripping spaces ("Gluten " matches
    "gluten"); no synonyms are guessed ("wheat" does not match "gluten"), so declare
    allergens with one vocabulary.
    """
    out = []
    sample_sets = [(s, _norm(s.allergens)) for s in samples]
    for p in panelists:
        avoid = _norm(p.allergens)
        if not avoid:
            continue
        for s, held in sample_sets:
            common = avoid & held
            if common:
                out.append(AllergenConflict(p.code, s.name, tuple(sorted(common))))
    return out


@dataclass(frozen=True, slots=True)
class AllergenScreen(Record):
    """A plan after the allergen check.

    Attributes
    ----------
    mode : str
        ``"omit"`` (conflicting cups, or whole forced-choice sets, taken out) or
        ``"flag"`` (plan unchanged, conflicts listed for the leader).
    entries : list of PlanEntry
        The plan; with ``omit``, positions are renumbered 1, 2, ... per panelist.
    conflicts : list of AllergenConflict
        Every conflict found.
    omitted : int
        Cups taken out (0 with ``flag``).
    """

    mode: str
    entries: list[PlanEntry]
    conflicts: list[AllergenConflict]
    omitted: int


def _check_mode(mode: str) -> None:
    if mode not in MODES:
        raise TrialsError(f"mode must be one of {', '.join(MODES)}; got {mode!r}")


def screen_plan(
    entries: Sequence[PlanEntry],
    samples: Sequence[Sample],
    panelists: Sequence[Panelist],
    *,
    mode: str = "omit",
) -> AllergenScreen:
    """Apply the allergen check to a serving plan.

    Parameters
    ----------
    entries : sequence of PlanEntry
        The serving plan.
    samples, panelists : sequences of Sample and Panelist
        As declared.
    mode : {"omit", "flag", "raise"}
        ``"omit"`` leaves the conflicting panelist out of those samples: for ratings
        and rankings only the cups of that sample are removed and the remaining
        positions renumbered; for a forced-choice set (entries with a ``role``) the
        panelist's whole set is removed, since a set missing one sample is no test.
        ``"flag"`` keeps the plan as is and lists the conflicts, for the leader to
        decide. ``"raise"`` raises a TrialsError naming every conflict.

    Returns
    -------
    AllergenScreen
    """
    _check_mode(mode)
    in_plan = {(e.panelist_code, e.sample_name) for e in entries}
    conflicts = [
        c for c in allergen_conflicts(samples, panelists)
        if (c.panelist_code, c.sample_name) in in_plan
    ]
    if mode == "raise" and conflicts:
        lines = "; ".join(
            f"panelist {c.panelist_code!r} and sample {c.sample_name!r} ({', '.join(c.allergens)})"
            for c in conflicts
        )
        raise TrialsError(f"allergen conflicts in the plan: {lines}")
    if mode != "omit" or not conflicts:
        return AllergenScreen(mode, list(entries), conflicts, 0)
    bad = {(c.panelist_code, c.sample_name) for c in conflicts}
    bad_sets = {
        (e.session, e.panelist_code, e.set_index)
        for e in entries
        if e.role and (e.panelist_code, e.sample_name) in bad
    }
    kept: list[PlanEntry] = []
    next_pos: dict[tuple[str, str], int] = {}
    for e in sorted(entries, key=lambda e: (e.session, e.panelist_code, e.set_index, e.position)):
        if (e.session, e.panelist_code, e.set_index) in bad_sets:
            continue
        if (e.panelist_code, e.sample_name) in bad:
            continue
        key = (e.session, e.panelist_code)
        next_pos[key] = next_pos.get(key, 0) + 1
        kept.append(PlanEntry(
            session=e.session, panelist_code=e.panelist_code, position=next_pos[key],
            code=e.code, sample_name=e.sample_name, set_index=e.set_index, role=e.role,
            batch_label=e.batch_label,
        ))
    # keep the caller's order of panelists and sessions
    rank: dict[tuple[str, str], int] = {}
    for e in entries:
        rank.setdefault((e.session, e.panelist_code), len(rank))
    kept.sort(key=lambda e: (rank[(e.session, e.panelist_code)], e.set_index, e.position))
    return AllergenScreen(mode, kept, conflicts, len(entries) - len(kept))


@dataclass(frozen=True, slots=True)
class OrdersScreen(Record):
    """Index orders after the allergen check (see :func:`screen_orders`)."""

    mode: str
    orders: list[list[int]]
    conflicts: list[AllergenConflict]
    omitted: int


def screen_orders(
    orders: Sequence[Sequence[int]],
    samples: Sequence[Sample],
    panelists: Sequence[Panelist],
    *,
    mode: str = "omit",
) -> OrdersScreen:
    """Apply the allergen check to serving orders given as 0-based sample indices.

    ``orders[i]`` is the order of ``panelists[i]``; indices refer to ``samples``.
    ``mode`` as in :func:`screen_plan` (``"omit"`` drops the conflicting samples from
    that panelist's order, keeping the order of the rest).
    """
    _check_mode(mode)
    if len(orders) != len(panelists):
        raise TrialsError(
            f"one order per panelist is needed: got {len(orders)} orders for "
            f"{len(panelists)} panelists"
        )
    for order in orders:
        for s in order:
            if not 0 <= s < len(samples):
                raise TrialsError(f"sample index {s!r} is outside 0..{len(samples) - 1}")
    index = {s.name: i for i, s in enumerate(samples)}
    conflicts = [
        c for c in allergen_conflicts(samples, panelists)
        if any(
            p.code == c.panelist_code and index[c.sample_name] in order
            for p, order in zip(panelists, orders)
        )
    ]
    if mode == "raise" and conflicts:
        raise TrialsError(
            "allergen conflicts in the plan: "
            + "; ".join(f"{c.panelist_code!r} with {c.sample_name!r}" for c in conflicts)
        )
    if mode != "omit":
        return OrdersScreen(mode, [list(o) for o in orders], conflicts, 0)
    bad = {(c.panelist_code, index[c.sample_name]) for c in conflicts}
    out = [[s for s in order if (p.code, s) not in bad] for p, order in zip(panelists, orders)]
    omitted = sum(len(o) for o in orders) - sum(len(o) for o in out)
    return OrdersScreen(mode, out, conflicts, omitted)
