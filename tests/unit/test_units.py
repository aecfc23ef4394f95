"""Units of batch values: read by pint, compared and converted, odd text refused.

Expected values are exact definitions, not outputs of the code: the kelvin and the
degree Celsius (T/°C = T/K - 273.15), the kilogram's decimal multiples, and the
percent (1 % = 0.01): BIPM, The International System of Units (SI brochure, 9th ed.,
2019), sections 2.3.1 and 5.4.7 and table 7; the degree Fahrenheit
(T/°F = 1.8 T/°C + 32) and the pound (0.45359237 kg exactly): NIST Special
Publication 811 (2008), appendix B.8 and B.9. Each is backed by the plain arithmetic
written beside it.
"""

from __future__ import annotations

import pytest

from trials.errors import TrialsError
from trials.model import Batch, Measurement
from trials.units import UnitError, convert, convertible, first_units, parse_unit, unit_problem


@pytest.mark.parametrize(("value", "src", "dst", "expected"), [
    (20.0, "degC", "K", 20.0 + 273.15),  # SI brochure 2.3.1
    (20.0, "°C", "K", 20.0 + 273.15),
    (293.15, "K", "°C", 293.15 - 273.15),
    (180.0, "degC", "°C", 180.0),  # two spellings of one unit
    (180.0, "C", "degC", 180.0),  # a kitchen's "C" is Celsius, not the coulomb
    (350.0, "degF", "°C", (350.0 - 32.0) / 1.8),  # NIST SP 811 B.9
    (1.2, "kg", "g", 1200.0),  # SI prefix kilo = 10^3
    (750.0, "g", "kg", 0.75),
    (1.0, "lb", "g", 453.59237),  # NIST SP 811 B.8
    (12.5, "%", "g/100 g", 12.5),  # a percent by mass is grams per 100 g
    (0.5, "g/100 g", "%", 0.5),
    (7.0, "pH", "pH", 7.0),  # a scale of its own: same label, same value
    (35.0, "min", "s", 35.0 * 60.0),
], ids=lambda v: str(v))
def test_values_convert_between_units_of_one_kind(value, src, dst, expected):
    assert convert(value, src, dst) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(("a", "b"), [("g", "degC"), ("%", "g"), ("min", "cm"),
                                      ("pH", "%"), ("°Bx", "pH"), ("K", "kg")])
def test_units_of_different_kinds_are_not_convertible(a, b):
    assert not convertible(a, b)
    with pytest.raises(UnitError, match="cannot be converted"):
        convert(1.0, a, b)


@pytest.mark.parametrize("text", ["xyz", "g/", "(((", "1/0", "2 g", "-1 g", "nan", "inf",
                                  "1e400 g", "oven"])
def test_text_that_is_no_unit_is_refused_naming_it(text):
    with pytest.raises(UnitError, match="is not a unit this tool knows") as caught:
        parse_unit(text)
    assert repr(text) in str(caught.value)
    assert isinstance(caught.value, TrialsError)  # shown as a plain message, never a traceback


def test_ph_is_a_scale_not_the_picohenry():
    unit = parse_unit("pH")
    assert unit.scale and unit.canonical == "pH"
    assert convertible("pH", "PH") and not convertible("pH", "H")


def test_an_empty_unit_reads_as_the_variables_unit():
    assert convertible("", "g") and convert(3.0, "", "g") == 3.0
    assert unit_problem("salt", "", "g") is None


def test_unit_problem_names_the_variable_both_units_and_their_kinds():
    msg = unit_problem("oven temperature", "g", "°C")
    assert msg == ("'oven temperature' is recorded in '°C' (a temperature); 'g' (a mass) "
                   "cannot be converted to it")
    assert unit_problem("oven temperature", "K", "°C") is None
    assert unit_problem("new", "kg", None) is None
    assert "not a unit this tool knows" in unit_problem("x", "splodges", "g")


def test_first_units_take_the_first_stated_unit_of_each_variable():
    batches = [Batch("A", "1", measures=(Measurement("weight", 1.0, ""),)),
               Batch("A", "2", measures=(Measurement("weight", 900.0, "g"),),
                     settings=(Measurement("oven", 180.0, "°C"),)),
               Batch("B", "3", measures=(Measurement("weight", 1.0, "kg"),))]
    assert first_units(batches) == {("measure", "weight"): "g", ("setting", "oven"): "°C"}
