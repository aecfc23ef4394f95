"""The method registry: one entry per method of DESIGN.md's command-line contract."""

import dataclasses
from fractions import Fraction

import pytest

from trials.errors import TrialsError, UnknownMethodError
from trials.methods import (
    METHODS,
    Family,
    Scoring,
    all_methods,
    check_method,
    get_method,
    register_method,
    unregister_method,
)

# Guessing probabilities: ISO 4120 (triangle 1/3), ISO 10399 (duo-trio 1/2),
# ISO 5495 (paired comparison 1/2), Frijters 1979 (3-AFC 1/3),
# Ennis and Jesionka 2011 (unspecified tetrad 1/3); specified tetrad 1/6 (one right pair
# of the C(4,2) = 6 pairs; Ennis et al. 1998, from memory); two-out-of-five 1/10 (one
# right pair of the C(5,2) = 10; Amerine, Pangborn and Roessler 1965, from memory).
GUESS = {"triangle": Fraction(1, 3), "duo-trio": Fraction(1, 2), "2afc": Fraction(1, 2),
         "3afc": Fraction(1, 3), "tetrad": Fraction(1, 3), "paired-preference": Fraction(1, 2),
         "tetrad-specified": Fraction(1, 6), "2-out-of-5": Fraction(1, 10)}


@pytest.mark.parametrize("name, guess", GUESS.items())
def test_guessing_probability_is_the_published_one(name, guess):
    assert get_method(name).guess == pytest.approx(float(guess))


def test_the_contract_names_every_method_once():
    names = [m.name for m in METHODS]
    assert names == ["triangle", "duo-trio", "2afc", "3afc", "tetrad", "tetrad-specified",
                     "2-out-of-5", "a-not-a", "same-different", "paired-preference", "rating",
                     "cata", "ranking"]


def test_only_paired_preference_is_two_sided_among_forced_choice():
    two = [m.name for m in METHODS if m.is_forced_choice and m.sides == 2]
    assert two == ["paired-preference"]


@pytest.mark.parametrize("spec", [m for m in METHODS if m.patterns], ids=lambda m: m.name)
def test_every_pattern_fills_one_set(spec):
    for pattern in spec.patterns:
        assert len(pattern) == spec.set_size, pattern
        # a forced-choice set holds both samples; a signal-detection set may hold one
        # (A-not-A: one cup; same-different: matched pairs AA, BB)
        want = {"A", "B"} if spec.is_forced_choice else set(pattern)
        assert set(pattern) == want and set(pattern) <= {"A", "B"}, pattern
    assert set("".join(spec.patterns)) == {"A", "B"}


def test_an_unknown_method_names_the_known_ones():
    with pytest.raises(UnknownMethodError, match="'pentad'.*triangle") as info:
        get_method("pentad")
    assert isinstance(info.value, TrialsError)


def test_families_are_assigned():
    assert get_method("rating").family is Family.RATING
    assert get_method("ranking").family is Family.RANKING


@pytest.mark.parametrize("spec", [m for m in METHODS if m.has_dprime], ids=lambda m: m.name)
def test_every_forced_choice_method_names_a_model_whose_chance_is_its_guess(spec):
    from trials.stats import thurstonian

    assert spec.model in thurstonian.MODELS
    assert thurstonian.CHANCE[spec.model] == pytest.approx(spec.guess)
    check_method(spec)


def test_tablet_wording_taps_and_never_circles():
    for spec in METHODS:
        assert spec.tablet_instructions, spec.name
        assert "circle" not in spec.tablet_instructions.lower(), spec.name
        assert "Tap" in spec.tablet_instructions or "tap" in spec.tablet_instructions, spec.name


def test_a_method_is_registered_once_and_removed_again():
    spec = dataclasses.replace(get_method("3afc"), name="3afc-least", target_role="A")
    register_method(spec)
    try:
        assert get_method("3afc-least") is spec
        assert spec in all_methods() and spec not in METHODS
        with pytest.raises(TrialsError, match="already registered"):
            register_method(spec)
    finally:
        unregister_method("3afc-least")
    with pytest.raises(UnknownMethodError):
        get_method("3afc-least")
    with pytest.raises(TrialsError, match="built in"):
        unregister_method("triangle")


@pytest.mark.parametrize("change, message", [
    ({"scoring": Scoring.NONE}, "scoring rule"),
    ({"choose": 3}, "choose=3"),
    ({"target_role": "R"}, "target_role"),
    ({"model": "", "family": Family.PREFERENCE}, "model key"),
    ({"choose": 2}, "group_label"),
    ({"patterns": ("AB",)}, "patterns"),
], ids=["no-scoring", "choose-all", "bad-target", "no-model", "no-group-label",
        "short-pattern"])
def test_a_method_that_cannot_work_is_refused_naming_the_field(change, message):
    spec = dataclasses.replace(get_method("3afc"), name="broken", **change)
    with pytest.raises(TrialsError, match=message):
        register_method(spec)
    with pytest.raises(UnknownMethodError):
        get_method("broken")
