"""Domain exceptions and warnings, shared by every layer.

Input errors are :class:`TrialsError` (a ``ValueError``) whose message quotes the bad
value; the command line maps them to exit status 2. Warnings are
:class:`TrialsWarning` subclasses so that callers can filter them as a family.
"""

from __future__ import annotations


class TrialsError(ValueError):
    """Bad input: the message says which value was wrong and what was expected."""


class UnknownMethodError(TrialsError):
    """A method name that the registry does not hold."""


class IncompleteBlocksError(TrialsError):
    """A test for complete blocks given panelists who each ranked only some samples."""


class NotFoundError(TrialsError):
    """A trial, sample, panelist or code that is not in the store."""


SHOWN_PROBLEMS = 20  # a message lists this many problems, then says how many more


def problem_lines(problems: list[str], shown: int = SHOWN_PROBLEMS) -> list[str]:
    """The first ``shown`` problems, each its own line, then "and N more" if any."""
    lines = list(problems[:shown])
    if len(problems) > shown:
        lines.append(f"and {len(problems) - shown} more")
    return lines


class ImportRowsError(TrialsError):
    """An import (or a paper grid) with bad rows; ``problems`` lists one message per bad
    row, ``head`` says how many and what was done (nothing). The message is the head,
    then the first 20 problems one to a line and "and N more" (:func:`problem_lines`)."""

    def __init__(self, problems: list[str], *, bad: str = "bad row(s)",
                 outcome: str = "nothing imported"):
        self.problems = list(problems)
        self.head = f"{len(self.problems)} {bad}; {outcome}"
        super().__init__(self.head + ":\n" + "\n".join(problem_lines(self.problems)))


class AccessDenied(TrialsError):
    """A passcode or panelist token that does not open what was asked."""


class NotBuiltError(TrialsError):
    """A command of the contract whose capability is not built yet."""


class TrialsWarning(UserWarning):
    """Base class of the package's warnings."""


class SmallPanelWarning(TrialsWarning):
    """Too few panelists for the method's usual minimum (common practice)."""


class UnbalancedPlanWarning(TrialsWarning):
    """The serving plan is not a whole number of balanced blocks."""


class OverdispersionWarning(TrialsWarning):
    """Replicated answers vary more than a binomial allows."""


class AnswerError(TrialsError):
    """One answer that does not fit the plan or the scales.

    ``column`` names the field at fault (``session``, ``panelist``, ``code``,
    ``attribute``, ``value``; an import adds ``mode`` and ``entered_at``) and ``text``
    says what was expected; the message is ``"column: text"``.
    """

    def __init__(self, column: str, text: str):
        super().__init__(f"{column}: {text}")
        self.column = column
        self.text = text
