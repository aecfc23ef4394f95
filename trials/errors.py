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


class ImportRowsError(TrialsError):
    """An import with bad rows; ``problems`` lists one message per bad row."""

    def __init__(self, problems: list[str]):
        self.problems = list(problems)
        head = f"{len(self.problems)} bad row(s); nothing imported"
        super().__init__(head + ":\n" + "\n".join(self.problems))


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
