"""Units of batch settings and measured variables, read by pint.

A batch value carries the unit its recorder typed ("°C", "degC", "K", "g", "kg", "%",
"min" ...). This module says whether a unit is one the tool understands, whether two
units measure the same kind of quantity, and converts a value from one to the other,
so that a variable recorded as "degC" on one batch and "°C" on another is one variable.
A variable's unit is the first one recorded for it (:func:`first_units`); the analysis
converts every later value to it.

Kitchen scales that are not physical units (pH, degrees Brix, water activity) are
labels of their own: they compare only with the same label. An empty unit means no
unit was stated; the value is read in the variable's unit.

Pure: no store, no screen. pint's registry is built once, on first use.
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from trials.errors import TrialsError
from trials.model import Batch, Record

# Scales of the trade that are not physical units; pint would read "pH" as picohenry.
# Key: the lower-case spelling; value: the label they are shown under. (Common practice,
# no source: pH, degrees Brix and water activity are written this way on kitchen sheets.)
SCALES = {"ph": "pH", "°bx": "°Bx", "bx": "°Bx", "brix": "°Bx", "°brix": "°Bx",
          "aw": "aw", "a_w": "aw"}
# Kitchen spellings pint reads otherwise ("C" is the coulomb, "F" the farad).
ALIASES = {"c": "degC", "°c": "degC", "ºc": "degC", "deg c": "degC", "° c": "degC",
           "f": "degF", "°f": "degF", "ºf": "degF", "deg f": "degF", "° f": "degF",
           "celsius": "degC", "fahrenheit": "degF"}
EXAMPLES = "g, kg, °C, K, min, s, %, ml, cm, kPa, pH"

DIMENSIONS = {
    "dimensionless": "a proportion or count",
    "[temperature]": "a temperature",
    "[mass]": "a mass",
    "[length]": "a length",
    "[time]": "a time",
    "[length] ** 3": "a volume",
    "[mass] / [length] ** 3": "a density",
    "[mass] / [length] / [time] ** 2": "a pressure",
    "[length] ** 2 * [mass] / [time] ** 2": "an energy",
    "[length] ** 2 * [mass] / [time] ** 3": "a power",
    "1 / [time]": "a rate",
    "[length] / [time]": "a speed",
}


class UnitError(TrialsError):
    """A unit the tool cannot read, or two units that cannot be converted."""


_PER_AMOUNT = re.compile(r"/\s*(\d+(?:\.\d+)?)\s*([^\W\d]+)")


def _spelled(text: str) -> str:
    """The text pint is given: kitchen aliases, and "g/100 g" read as g per (100 g)."""
    text = ALIASES.get(text.lower(), text)
    return _PER_AMOUNT.sub(r"/(\1 \2)", text)


@functools.cache
def _registry() -> Any:
    import pint

    return pint.UnitRegistry()


@dataclass(frozen=True, slots=True)
class Unit(Record):
    """A unit as typed (``text``), what pint made of it (``canonical``) and the kind
    of quantity it measures in words (``dimension``); a kitchen scale has
    ``scale=True`` and its label as ``canonical``."""

    text: str
    canonical: str
    dimension: str
    scale: bool = False


@functools.cache
def parse_unit(text: str) -> Unit:
    """Read a unit string; :class:`UnitError` names it when pint does not know it.

    ``""`` (no unit stated) gives a unit whose ``canonical`` is empty.
    """
    raw = str(text or "").strip()
    if not raw:
        return Unit("", "", "")
    low = raw.lower()
    if low in SCALES:
        label = SCALES[low]
        return Unit(raw, label, f"the {label} scale", scale=True)
    spelled = _spelled(raw)
    try:
        quantity = _registry().parse_expression(spelled)
    except Exception:  # noqa: BLE001 - pint's parser fails on odd text in many ways
        raise UnitError(f"unit {raw!r} is not a unit this tool knows "
                        f"(write one such as {EXAMPLES})") from None
    if (not isinstance(quantity, _registry().Quantity)
            or not math.isfinite(float(quantity.magnitude))
            or float(quantity.magnitude) <= 0
            or (float(quantity.magnitude) != 1.0 and not _PER_AMOUNT.search(raw))):
        raise UnitError(f"unit {raw!r} is not a unit this tool knows "
                        f"(write one such as {EXAMPLES})")
    dims = str(quantity.dimensionality)
    return Unit(raw, str(quantity.units) if quantity.magnitude == 1 else str(quantity),
                DIMENSIONS.get(dims, dims))


def _split(unit: Unit) -> tuple[float, Any]:
    """The scale factor and the pint units of a readable unit ("g/100 g" -> 0.01, g/g)."""
    parsed = _registry().parse_expression(_spelled(unit.text))
    return float(parsed.magnitude), parsed.units


def convertible(a: str, b: str) -> bool:
    """Whether a value in unit ``a`` can be stated in unit ``b`` (both readable).

    An empty unit is convertible with any (the value is read in the other unit).
    """
    ua, ub = parse_unit(a), parse_unit(b)
    if not ua.canonical or not ub.canonical:
        return True
    if ua.scale or ub.scale:
        return ua.canonical == ub.canonical
    return ua.dimension == ub.dimension


def convert(value: float, from_unit: str, to_unit: str) -> float:
    """``value`` in ``from_unit`` stated in ``to_unit``.

    Temperatures convert as absolute temperatures (20 °C is 293.15 K), not as
    differences. An empty unit on either side leaves the value as it is.
    :class:`UnitError` when the units measure different kinds of quantity.
    """
    ua, ub = parse_unit(from_unit), parse_unit(to_unit)
    if not ua.canonical or not ub.canonical or ua.text == ub.text:
        return float(value)
    if not convertible(from_unit, to_unit):
        raise UnitError(f"{from_unit!r} ({ua.dimension}) cannot be converted to "
                        f"{to_unit!r} ({ub.dimension})")
    if ua.scale:
        return float(value)
    f_mag, f_units = _split(ua)
    t_mag, t_units = _split(ub)
    moved = _registry().Quantity(float(value) * f_mag, f_units).to(t_units)
    return float(moved.magnitude) / t_mag


def first_units(batches: Iterable[Batch]) -> dict[tuple[str, str], str]:
    """Each variable's unit, ``(kind, name) -> unit``: the first non-empty unit
    recorded for it, batches in the order given (kind: ``setting`` or ``measure``)."""
    out: dict[tuple[str, str], str] = {}
    for b in batches:
        for kind, items in (("setting", b.settings), ("measure", b.measures)):
            for m in items:
                key = (kind, m.name)
                if m.unit and key not in out:
                    out[key] = m.unit
    return out


def unit_problem(name: str, unit: str, declared: str | None) -> str | None:
    """Why ``unit`` cannot be recorded for variable ``name`` whose unit is ``declared``
    (None when it has none yet), or None when it can."""
    try:
        new = parse_unit(unit)
    except UnitError as exc:
        return str(exc)
    if not declared or not new.canonical:
        return None
    try:
        old = parse_unit(declared)
    except UnitError:
        return None  # an old unit the tool cannot read: the analysis leaves it out
    if convertible(unit, declared):
        return None
    return (f"{name!r} is recorded in {declared!r} ({old.dimension}); {unit!r} "
            f"({new.dimension}) cannot be converted to it")
