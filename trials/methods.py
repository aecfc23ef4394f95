"""The one registry of test methods.

Each method is described once here: its name on the command line, its guessing
probability, how many cups a set holds, what the ballot and the tablet ask, how an
answer is shaped and scored, which cup is the target, the psychometric model, the
sentence of the decision and the paper-entry columns. Designs, ballots, screens,
answer checks and statistics read these fields; nothing re-lists the methods by hand
and no code outside this module branches on a method's name (a test walks the
package). :func:`register_method` adds a method (see DEVELOPERS.md, "Adding a test
method").
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

from trials.errors import TrialsError, UnknownMethodError
from trials.model import Record


class Scoring(StrEnum):
    """How one forced-choice answer is scored (see :func:`trials.analysis.score_choices`)."""

    # correct: the chosen cups are every cup of the sample served fewer times (triangle: the
    # one odd cup; 2-out-of-5: the two cups of the sample served twice)
    ODD_ONE_OUT = "odd-one-out"
    MATCH_REFERENCE = "match-reference"  # correct: the chosen cup holds the reference's sample
    TARGET_BY_ROLE = "target-by-role"  # correct: every chosen cup holds the target (target_role)
    PAIRS_GROUPED = "pairs-grouped"  # correct: the chosen cups hold one sample
    PREFERENCE_COUNT = "preference-count"  # no right answer: choices counted per sample
    # signal-detection methods: which sets are the signal (the others are noise)
    SIGNAL_ROLE_B = "signal-role-b"  # A-not-A: the set's cup is the "not A" sample (role B)
    SIGNAL_MIXED_PAIR = "signal-mixed-pair"  # same-different: the pair holds both samples
    NONE = ""  # ratings and rankings: no choice to score


# Psychometric model keys of trials.stats.thurstonian (its MODELS); a test checks that
# every key named here is one that module holds.
MODEL_2AFC = "pc-2afc"
MODEL_3AFC = "pc-3afc"
MODEL_DUO_TRIO = "pc-duo-trio"
MODEL_TRIANGLE = "pc-triangle"
MODEL_TETRAD = "pc-tetrad"
MODEL_SPECIFIED_TETRAD = "pc-specified-tetrad"
MODEL_YES_NO = "yes-no"  # trials.stats.signal: d' = z(H) - z(F)
MODEL_DIFFERENCING = "differencing"  # trials.stats.signal: the same-different tau model
SIGNAL_MODELS = (MODEL_YES_NO, MODEL_DIFFERENCING)
NO_MODEL = ""  # a forced-choice method without a Thurstonian model: pd only, no d'

FORCED_CHOICE_COLUMNS = ("panelist", "set", "cups", "chosen")
PER_CUP_COLUMNS = ("panelist", "position", "code")
RESPONSE_COLUMNS = ("panelist", "set", "cups", "response")


class Family(StrEnum):
    DISCRIMINATION = "discrimination"  # forced choice with a known chance of a correct guess
    PREFERENCE = "preference"  # paired preference, two-sided
    RATING = "rating"  # scores on attribute scales
    RANKING = "ranking"  # ranks of all samples
    SIGNAL = "signal-detection"  # one of two answers per set (A / not A, same / different)
    CATA = "check-all-that-apply"  # per cup: the words that apply ticked (0/1 per word)


@dataclass(frozen=True, slots=True)
class MethodSpec(Record):
    """A test method.

    ``guess`` is the probability of a correct answer when the samples cannot be told
    apart (None for ratings and rankings). ``set_size`` is the number of cups in one set
    (None: as many as the trial has samples). ``sides`` is 1 for the one-sided
    difference tests, 2 for paired preference. ``patterns`` are the balanced orders of a
    set as letters (A, B; R for a duo-trio reference), whose equal use balances the plan.

    Behaviour (every field has a default that suits a rating-like method, so a new
    forced-choice method states what it needs):

    - ``choose``: how many codes one answer names (1; 2 for the tetrad's group);
    - ``allows_no_preference``: whether "no preference" (with no code) is an answer;
    - ``scoring``: the rule that scores one answer (:class:`Scoring`);
    - ``target_role``: for :attr:`Scoring.TARGET_BY_ROLE`, the plan role (letter) the
      cups of the trial's target sample (``Trial.target_sample``, chosen at set-up)
      carry, whatever the samples' order (see :func:`trials.analysis.target_sample`);
    - ``correct_phrase``: the decision's words for a correct answer ("... of 24 picked
      the odd sample"); ``{target}`` is replaced by the target sample's name;
    - ``model``: the psychometric model key of :mod:`trials.stats.thurstonian`;
      :data:`NO_MODEL` for a method whose Thurstonian model is not built (the analysis
      then gives the proportion of discriminators and no d', and says so);
    - ``responses``: a signal-detection method's two answers, the noise answer first
      (``("A", "not A")``, ``("same", "different")``); ``scoring`` then says which sets
      are the signal (:attr:`Scoring.SIGNAL_ROLE_B`, :attr:`Scoring.SIGNAL_MIXED_PAIR`)
      and ``model`` is one of :data:`SIGNAL_MODELS`;
    - ``kitchen_note``: a line for the serving sheet (kitchen only), e.g. the A-not-A
      familiarisation cup of sample A;
    - ``group_label``: the tablet's label over the codes when ``choose`` > 1 ("The two
      cups that belong together");
    - ``tablet_instructions``: the instructions on the tasting screen ("tap", not
      "circle"); ``ballot_note``: a line printed under each set's code boxes;
    - ``asks_attribute``: the question names an attribute, so the ballot has a line to
      write it on;
    - ``set_design``: the source of the balanced set design (for design output);
    - ``reference_first``: the first cup of each set is the reference (role ``"R"``),
      served before the coded cups and never a valid choice;
    - ``paper_columns``: the paper-entry grid's columns (a rating grid adds one column
      per attribute after these).
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
    choose: int = 1
    allows_no_preference: bool = False
    scoring: Scoring = Scoring.NONE
    target_role: str = ""
    correct_phrase: str = ""
    model: str = ""
    tablet_instructions: str = ""
    ballot_note: str = ""
    asks_attribute: bool = False
    set_design: str = ""
    reference_first: bool = False
    paper_columns: tuple[str, ...] = PER_CUP_COLUMNS
    group_label: str = ""
    responses: tuple[str, ...] = ()
    kitchen_note: str = ""

    @property
    def scores_each_cup(self) -> bool:
        """Whether every cup gets one answer per attribute (ratings; CATA, whose words are
        attributes of kind ``check`` scored 0 or 1, beside any liking scale)."""
        return self.family in (Family.RATING, Family.CATA)

    @property
    def served_in_sets(self) -> bool:
        """Whether the method serves two samples in patterned sets (forced choice and
        signal detection), rather than every sample in a Williams or block order."""
        return self.is_forced_choice or self.family is Family.SIGNAL

    @property
    def has_dprime(self) -> bool:
        """Whether a Thurstonian d' is computed for this method (its ``model`` is set)."""
        return self.is_forced_choice and self.model != NO_MODEL

    @property
    def is_forced_choice(self) -> bool:
        return self.family in (Family.DISCRIMINATION, Family.PREFERENCE)


# The methods' names as the command line, files and the store write them; code elsewhere
# refers to a method through these or through the registry, never by a literal.
TRIANGLE = "triangle"
DUO_TRIO = "duo-trio"
TWO_AFC = "2afc"
THREE_AFC = "3afc"
TETRAD = "tetrad"
SPECIFIED_TETRAD = "tetrad-specified"
TWO_OUT_OF_FIVE = "2-out-of-5"
A_NOT_A = "a-not-a"
CATA = "cata"
SAME_DIFFERENT = "same-different"
PAIRED_PREFERENCE = "paired-preference"
RATING = "rating"
RANKING = "ranking"


METHODS: tuple[MethodSpec, ...] = (
    MethodSpec(
        name=TRIANGLE,
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
        scoring=Scoring.ODD_ONE_OUT,
        correct_phrase="picked the odd sample",
        model=MODEL_TRIANGLE,
        tablet_instructions=(
            "Two of these three samples are the same and one is different. Taste them "
            "in the order given, from left to right. Tap the code of the sample that is "
            "different. You must choose one, even if you are guessing."
        ),
        set_design="ISO 4120:2021, six orders AAB, ABA, BAA, BBA, BAB, ABB equally often",
        paper_columns=FORCED_CHOICE_COLUMNS,
    ),
    MethodSpec(
        name=DUO_TRIO,
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
        scoring=Scoring.MATCH_REFERENCE,
        correct_phrase="matched the reference",
        model=MODEL_DUO_TRIO,
        tablet_instructions=(
            "Taste the reference first, then the two coded samples in the order given. "
            "Tap the code of the sample that is the same as the reference. You must "
            "choose one, even if you are guessing."
        ),
        ballot_note="Circle one of the two coded samples (not the reference R).",
        set_design="ISO 10399:2017, balanced or constant reference",
        reference_first=True,
        paper_columns=FORCED_CHOICE_COLUMNS,
    ),
    MethodSpec(
        name=TWO_AFC,
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
        scoring=Scoring.TARGET_BY_ROLE,
        target_role="B",
        correct_phrase="picked {target} as having more of the attribute",
        model=MODEL_2AFC,
        tablet_instructions=(
            "Taste the two samples in the order given. Tap the code of the sample "
            "with more of the named attribute. You must choose one, even if you are "
            "guessing."
        ),
        asks_attribute=True,
        set_design="ISO 5495:2005, orders AB and BA equally often",
        paper_columns=FORCED_CHOICE_COLUMNS,
    ),
    MethodSpec(
        name=THREE_AFC,
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
        scoring=Scoring.TARGET_BY_ROLE,
        target_role="B",
        correct_phrase="picked {target} as having the most of the attribute",
        model=MODEL_3AFC,
        tablet_instructions=(
            "Taste the three samples in the order given. Tap the code of the sample "
            "with the most of the named attribute. You must choose one, even if you "
            "are guessing."
        ),
        asks_attribute=True,
        set_design="Frijters (1979); each position of the odd sample equally often",
        paper_columns=FORCED_CHOICE_COLUMNS,
    ),
    MethodSpec(
        name=TETRAD,
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
        choose=2,
        scoring=Scoring.PAIRS_GROUPED,
        correct_phrase="grouped the four cups into the right pairs",
        model=MODEL_TETRAD,
        tablet_instructions=(
            "These four samples form two pairs. Taste them in the order given and group "
            "them into two groups of two that are alike. Tap the codes of one group. "
            "You must choose, even if you are guessing."
        ),
        ballot_note="Circle two codes: the two codes you do not circle form the other group.",
        set_design="Ennis and Jesionka (2011); six orders of two A and two B",
        paper_columns=FORCED_CHOICE_COLUMNS,
        group_label="The two cups that belong together",
    ),
    MethodSpec(
        name=SPECIFIED_TETRAD,
        label="Tetrad test (specified)",
        family=Family.DISCRIMINATION,
        guess=1 / 6,  # one right pair of the six pairs of four cups
        set_size=4,
        sides=1,
        question="Which two samples have more of the attribute?",
        instructions=(
            "These four samples form two pairs: two have more of the named attribute "
            "than the other two. Taste them in the order given and circle the codes of "
            "the two with more of the attribute. You must choose two, even if you are "
            "guessing."
        ),
        patterns=("AABB", "ABAB", "ABBA", "BAAB", "BABA", "BBAA"),
        reference=("Ennis, Ennis, Yip and O'Mahony (1998), Br. J. Math. Stat. Psychol. "
                   "51:205-215 (specified tetrad)"),
        choose=2,
        scoring=Scoring.TARGET_BY_ROLE,
        target_role="B",
        correct_phrase="picked both cups of {target} as having more of the attribute",
        model=MODEL_SPECIFIED_TETRAD,
        tablet_instructions=(
            "These four samples form two pairs: two have more of the named attribute "
            "than the other two. Taste them in the order given and tap the codes of the "
            "two with more of the attribute. You must choose two, even if you are "
            "guessing."
        ),
        ballot_note="Circle two codes: the two with more of the attribute.",
        asks_attribute=True,
        set_design="six orders of two A and two B, as the unspecified tetrad (common practice)",
        paper_columns=FORCED_CHOICE_COLUMNS,
        group_label="The two cups with more of the attribute",
    ),
    MethodSpec(
        name=TWO_OUT_OF_FIVE,
        label="Two-out-of-five test",
        family=Family.DISCRIMINATION,
        guess=1 / 10,  # one right pair of the ten pairs of five cups
        set_size=5,
        sides=1,
        question="Which two samples are different from the other three?",
        instructions=(
            "Two of these five samples are the same and the other three are the same as "
            "each other. Taste them in the order given and circle the codes of the two "
            "that are different from the other three. You must choose two, even if you "
            "are guessing."
        ),
        # every place of the two cups (10) with either sample as the two: 20 orders
        patterns=tuple(
            "".join(two if i in pair else three for i in range(5))
            for two, three in (("A", "B"), ("B", "A"))
            for pair in ((0, 1), (0, 2), (0, 3), (0, 4), (1, 2), (1, 3), (1, 4),
                         (2, 3), (2, 4), (3, 4))
        ),
        reference=("Amerine, Pangborn and Roessler (1965), Principles of Sensory Evaluation "
                   "of Food, Academic Press (two-out-of-five test)"),
        choose=2,
        scoring=Scoring.ODD_ONE_OUT,
        correct_phrase="picked the two cups that differ from the other three",
        model=NO_MODEL,
        tablet_instructions=(
            "Two of these five samples are the same and the other three are the same as "
            "each other. Taste them in the order given and tap the codes of the two that "
            "are different from the other three. You must choose two, even if you are "
            "guessing."
        ),
        ballot_note="Circle two codes: the two that differ from the other three.",
        set_design="the 20 orders of two cups of one sample and three of the other, each "
                   "sample as the pair equally often (common practice)",
        paper_columns=FORCED_CHOICE_COLUMNS,
        group_label="The two cups that differ from the other three",
    ),
    MethodSpec(
        name=A_NOT_A,
        label="A-not-A test",
        family=Family.SIGNAL,
        guess=None,
        set_size=1,
        sides=1,
        question="Is this sample A, or not A?",
        instructions=(
            "Before the test the panel leader gave you sample A to learn. Taste the coded "
            "sample and tick A if it is the same as the sample you learned, or not A if "
            "it is different. You must answer, even if you are unsure."
        ),
        patterns=("A", "B"),  # A: the control (the learned sample); B: the "not A" sample
        reference=("Bi (2006), Sensory Discrimination Tests and Measurements, Blackwell "
                   "(A-not-A); Macmillan and Creelman (2005), Detection Theory, 2nd ed."),
        scoring=Scoring.SIGNAL_ROLE_B,
        correct_phrase="answered \"not A\" to the not-A sample",
        model=MODEL_YES_NO,
        tablet_instructions=(
            "Before the test the panel leader gave you sample A to learn. Taste the coded "
            "sample and tap A if it is the same as the sample you learned, or not A if it "
            "is different. You must answer, even if you are unsure."
        ),
        ballot_note="Tick one box only.",
        set_design=("one coded cup per panelist, half the panel served A and half not A "
                    "(monadic; common practice)"),
        paper_columns=RESPONSE_COLUMNS,
        responses=("A", "not A"),
        kitchen_note=("Before the coded cup, give every panelist an uncoded cup of sample A "
                      "(role A, the control), said to be \"A\", to learn; then serve the "
                      "coded cup (common practice)."),
    ),
    MethodSpec(
        name=SAME_DIFFERENT,
        label="Same-different test",
        family=Family.SIGNAL,
        guess=None,
        set_size=2,
        sides=1,
        question="Are these two samples the same or different?",
        instructions=(
            "Taste the two samples in the order given. Tick same if you find them the "
            "same, or different if you find them different. You must answer, even if "
            "you are unsure."
        ),
        patterns=("AA", "BB", "AB", "BA"),  # matched pairs AA, BB; unmatched AB, BA
        reference=("Macmillan and Creelman (2005), Detection Theory, 2nd ed., ch. 9; "
                   "O'Mahony and Rousseau (2002), Food Qual. Prefer. 14:157-164"),
        scoring=Scoring.SIGNAL_MIXED_PAIR,
        correct_phrase="answered \"different\" to a pair of two samples",
        model=MODEL_DIFFERENCING,
        tablet_instructions=(
            "Taste the two samples in the order given. Tap same if you find them the same, "
            "or different if you find them different. You must answer, even if you are "
            "unsure."
        ),
        ballot_note="Tick one box only.",
        set_design=("one pair per panelist: AA, BB, AB and BA equally often (half matched, "
                    "half unmatched; common practice)"),
        paper_columns=RESPONSE_COLUMNS,
        responses=("same", "different"),
    ),
    MethodSpec(
        name=PAIRED_PREFERENCE,
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
        allows_no_preference=True,
        scoring=Scoring.PREFERENCE_COUNT,
        model=MODEL_2AFC,  # Thurstonian model of preference (trials.stats.thurstonian)
        tablet_instructions=(
            "Taste the two samples in the order given. Tap the code of the sample "
            "you prefer."
        ),
        set_design="ISO 5495:2005 (two-sided); orders AB and BA equally often",
        paper_columns=(*FORCED_CHOICE_COLUMNS, "no_preference"),
    ),
    MethodSpec(
        name=RATING,
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
        tablet_instructions=(
            "Taste the samples in the order given, one at a time. Rinse your mouth "
            "between samples. Tap one box on each scale."
        ),
    ),
    MethodSpec(
        name=CATA,
        label="Check-all-that-apply (CATA)",
        family=Family.CATA,
        guess=None,
        set_size=None,
        sides=2,
        question="Tick every word that applies to this sample.",
        instructions=(
            "Taste the samples in the order given, one at a time. Rinse your mouth between "
            "samples. For each sample, tick every word that describes it; leave the others "
            "blank. Then mark one box on any scale below the words."
        ),
        patterns=(),
        reference=("Adams, Williams, Lancaster and Foley (2007), 7th Pangborn Sensory "
                   "Science Symposium (CATA); Meyners, Castura and Carr (2013), Food Qual. "
                   "Prefer. 30:309-319"),
        tablet_instructions=(
            "Taste the samples in the order given, one at a time. Rinse your mouth between "
            "samples. For each sample, tap every word that describes it, then save; tap one "
            "box on any scale below the words."
        ),
        set_design="Williams design of the serving order, as for ratings (common practice)",
    ),
    MethodSpec(
        name=RANKING,
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
        tablet_instructions=(
            "Taste the samples in the order given. Tap rank 1 for the sample with the "
            "most of the attribute (or the one you like most), rank 2 for the next, and "
            "so on. Use each rank once."
        ),
        paper_columns=(*PER_CUP_COLUMNS, "rank"),
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


def all_methods() -> tuple[MethodSpec, ...]:
    """Every method: the built-in :data:`METHODS`, then those added by
    :func:`register_method`, in the order they were added."""
    return tuple(_BY_NAME.values())


def method_names(*families: Family) -> tuple[str, ...]:
    """Names of the methods of the given families (all when none is given)."""
    return tuple(m.name for m in _BY_NAME.values() if not families or m.family in families)


def check_method(spec: MethodSpec) -> None:
    """Raise :class:`~trials.errors.TrialsError` naming the first field of ``spec`` that
    cannot work with the rest of the package (designs, answer checks, scoring)."""
    where = f"method {spec.name!r}"
    if not spec.name or spec.name != spec.name.strip():
        raise TrialsError(f"a method needs a name without surrounding spaces, got {spec.name!r}")
    if spec.family is Family.SIGNAL:
        _check_signal(spec, where)
        return
    if not spec.is_forced_choice:
        return
    if not spec.patterns or not spec.set_size:
        raise TrialsError(f"{where}: a forced-choice method needs set patterns and a set size")
    bad = [x for x in spec.patterns if len(x) != spec.set_size or not set(x) <= {"A", "B"}]
    if bad:
        raise TrialsError(f"{where}: patterns {bad!r} are not {spec.set_size} letters A and B")
    if spec.scoring is Scoring.NONE:
        raise TrialsError(f"{where}: a forced-choice method needs a scoring rule")
    if not 1 <= spec.choose < spec.set_size:
        raise TrialsError(f"{where}: choose={spec.choose} codes from sets of {spec.set_size}")
    if spec.scoring is Scoring.TARGET_BY_ROLE and spec.target_role not in ("A", "B"):
        raise TrialsError(f"{where}: a target-by-role rule needs target_role 'A' or 'B', "
                          f"got {spec.target_role!r}")
    if spec.guess is None or not 0 < spec.guess < 1:
        raise TrialsError(f"{where}: a forced-choice method needs a guessing probability "
                          f"between 0 and 1, got {spec.guess!r}")
    if not spec.model and spec.family is not Family.DISCRIMINATION:
        raise TrialsError(f"{where}: a preference method needs a psychometric model key")
    if spec.choose > 1 and not spec.group_label:
        raise TrialsError(f"{where}: choose={spec.choose} needs a group_label for the tablet")
    if tuple(spec.paper_columns[:4]) != FORCED_CHOICE_COLUMNS:
        raise TrialsError(f"{where}: forced-choice paper columns start with "
                          f"{FORCED_CHOICE_COLUMNS!r}, got {spec.paper_columns!r}")


def _check_signal(spec: MethodSpec, where: str) -> None:
    if not spec.patterns or not spec.set_size:
        raise TrialsError(f"{where}: a signal-detection method needs set patterns and a set size")
    bad = [x for x in spec.patterns if len(x) != spec.set_size or not set(x) <= {"A", "B"}]
    if bad:
        raise TrialsError(f"{where}: patterns {bad!r} are not {spec.set_size} letters A and B")
    if len(spec.responses) != 2 or len({r.lower() for r in spec.responses}) != 2:
        raise TrialsError(f"{where}: responses must be two different answers, got "
                          f"{spec.responses!r}")
    if spec.scoring not in (Scoring.SIGNAL_ROLE_B, Scoring.SIGNAL_MIXED_PAIR):
        raise TrialsError(f"{where}: a signal-detection method needs a signal scoring rule, "
                          f"got {spec.scoring!r}")
    if spec.model not in SIGNAL_MODELS:
        raise TrialsError(f"{where}: model must be one of {SIGNAL_MODELS!r}, got {spec.model!r}")
    if tuple(spec.paper_columns) != RESPONSE_COLUMNS:
        raise TrialsError(f"{where}: paper columns must be {RESPONSE_COLUMNS!r}")


def register_method(spec: MethodSpec) -> MethodSpec:
    """Add a method to the registry, after :func:`check_method`; returns it.

    Everything that looks methods up by name (:func:`get_method`) then knows it. The
    name must be new. :data:`METHODS` stays the tuple of built-in methods;
    :func:`all_methods` lists the registered ones too.
    """
    if spec.name in _BY_NAME:
        raise TrialsError(f"method {spec.name!r} is already registered")
    check_method(spec)
    _BY_NAME[spec.name] = spec
    return spec


def unregister_method(name: str) -> None:
    """Remove a method added by :func:`register_method` (built-in methods stay)."""
    if name in {m.name for m in METHODS}:
        raise TrialsError(f"method {name!r} is built in and cannot be removed")
    get_method(name)
    del _BY_NAME[name]


FORCED_CHOICE = method_names(Family.DISCRIMINATION, Family.PREFERENCE)
DISCRIMINATION = method_names(Family.DISCRIMINATION)
SIGNAL_DETECTION = method_names(Family.SIGNAL)
