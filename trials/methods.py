"""The one registry of test methods.

Each method is described once here: its name on the command line, its guessing
probability, how many cups a set holds, what the ballot asks, and which analysis
applies. Designs, ballots, screens and statistics read this registry; nothing re-lists
the methods by hand.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

from trials.errors import UnknownMethodError
from trials.model import Record


class Family(StrEnum):
    DISCRIMINATION = "discrimination"  # forced choice with a known chance of a correct guess
    PREFERENCE = "preference"  # paired preference, two-sided
    RATING = "rating"  # scores on attribute scales
    RANKING = "ranking"  # ranks of all samples


@dataclass(frozen=True, slots=True)
class MethodSpec(Record):
    """A test method.

    ``guess`` is the probability of a correct answer when the samples cannot be told
    apart (None for ratings and rankings). ``set_size`` is the number of cups in one set
    (None: as many as the trial has samples). ``sides`` is 1 for the one-sided
    difference tests, 2 for paired preference. ``patterns`` are the balanced orders of a
    set as letters (A, B; R for a duo-trio reference), whose equal use balances the plan.
    """

    name: str
    label: str
    family: Family
    guess: float | None
    set_size: int | None
    sides: int
    question: str
    instructions: str
    patterns: tuple[str, ...]
    reference: str

    @property
    def is_forced_choice(self) -> bool:
        return self.family in (Family.DISCRIMINATION, Family.PREFERENCE)


METHODS: tuple[MethodSpec, ...] = (
    MethodSpec(
        name="triangle",
        label="Triangle test",
        family=Family.DISCRIMINATION,
        guess=1 / 3,
        set_size=3,
        sides=1,
        question="Which sample is different from the other two?",
        instructions=(
            "Two of these three samples are the same and one is different. Taste them "
            "in the order given, from left to right. Circle the code of the sample that "
            "is different. You must choose one, even if you are guessing."
        ),
        patterns=("AAB", "ABA", "BAA", "BBA", "BAB", "ABB"),
        reference="ISO 4120:2021, Sensory analysis - Methodology - Triangle test",
    ),
    MethodSpec(
        name="duo-trio",
        label="Duo-trio test",
        family=Family.DISCRIMINATION,
        guess=1 / 2,
        set_size=3,
        sides=1,
        question="Which sample matches the reference?",
        instructions=(
            "Taste the reference first, then the two coded samples in the order given. "
            "Circle the code of the sample that is the same as the reference. You must "
            "choose one, even if you are guessing."
        ),
        patterns=("AAB", "ABA", "BAB", "BBA"),  # first letter: the reference; balanced
        reference="ISO 10399:2017, Sensory analysis - Methodology - Duo-trio test",
    ),
    MethodSpec(
        name="2afc",
        label="2-AFC (paired comparison, directional)",
        family=Family.DISCRIMINATION,
        guess=1 / 2,
        set_size=2,
        sides=1,
        question="Which sample has more of the attribute?",
        instructions=(
            "Taste the two samples in the order given. Circle the code of the sample "
            "with more of the named attribute. You must choose one, even if you are "
            "guessing."
        ),
        patterns=("AB", "BA"),
        reference="ISO 5495:2005, Sensory analysis - Methodology - Paired comparison test",
    ),
    MethodSpec(
        name="3afc",
        label="3-AFC",
        family=Family.DISCRIMINATION,
        guess=1 / 3,
        set_size=3,
        sides=1,
        question="Which sample has the most of the attribute?",
        instructions=(
            "Taste the three samples in the order given. Circle the code of the sample "
            "with the most of the named attribute. You must choose one, even if you "
            "are guessing."
        ),
        patterns=("AAB", "ABA", "BAA"),
        reference="Frijters (1979), Br. J. Math. Stat. Psychol. 32:229-241",
    ),
    MethodSpec(
        name="tetrad",
        label="Tetrad test (unspecified)",
        family=Family.DISCRIMINATION,
        guess=1 / 3,
        set_size=4,
        sides=1,
        question="Which two samples belong together?",
        instructions=(
            "These four samples form two pairs. Taste them in the order given and group "
            "them into two groups of two that are alike. Circle the codes of one group. "
            "You must choose, even if you are guessing."
        ),
        patterns=("AABB", "ABAB", "ABBA", "BAAB", "BABA", "BBAA"),
        reference="Ennis and Jesionka (2011), J. Sensory Stud. 26:347-352",
    ),
    MethodSpec(
        name="paired-preference",
        label="Paired preference",
        family=Family.PREFERENCE,
        guess=1 / 2,
        set_size=2,
        sides=2,
        question="Which sample do you prefer?",
        instructions=(
            "Taste the two samples in the order given. Circle the code of the sample "
            "you prefer. You must choose one."
        ),
        patterns=("AB", "BA"),
        reference="ISO 5495:2005 (two-sided paired comparison); ASTM E2263",
    ),
    MethodSpec(
        name="rating",
        label="Rating (hedonic, intensity and just-about-right scales)",
        family=Family.RATING,
        guess=None,
        set_size=None,
        sides=2,
        question="Rate each sample on each scale.",
        instructions=(
            "Taste the samples in the order given, one at a time. Rinse your mouth "
            "between samples. Mark one box on each scale."
        ),
        patterns=(),
        reference="Peryam and Pilgrim (1957), Food Technol. 11(9):9-14 (9-point hedonic scale)",
    ),
    MethodSpec(
        name="ranking",
        label="Ranking",
        family=Family.RANKING,
        guess=None,
        set_size=None,
        sides=2,
        question="Rank the samples from most to least.",
        instructions=(
            "Taste the samples in the order given. Give rank 1 to the sample with the "
            "most of the attribute (or the one you like most), rank 2 to the next, and "
            "so on. Use each rank once."
        ),
        patterns=(),
        reference="ISO 8587:2006, Sensory analysis - Methodology - Ranking",
    ),
)

_BY_NAME = {m.name: m for m in METHODS}


def get_method(name: str) -> MethodSpec:
    """The registry entry for ``name``; a clear error names the known methods."""
    try:
        return _BY_NAME[name]
    except KeyError:
        known = ", ".join(_BY_NAME)
        raise UnknownMethodError(f"unknown method {name!r}; expected one of: {known}") from None


def method_names(*families: Family) -> tuple[str, ...]:
    """Names of the methods of the given families (all when none is given)."""
    return tuple(m.name for m in METHODS if not families or m.family in families)


FORCED_CHOICE = method_names(Family.DISCRIMINATION, Family.PREFERENCE)
DISCRIMINATION = method_names(Family.DISCRIMINATION)
