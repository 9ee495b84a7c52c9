"""Exceptions raised by the Acidscape core.

Every exception carries ``field``: the scenario path of the input it concerns
(``"systems[2].total"``, ``"temperature_C"``), or ``None`` when no single input
is to blame. The boundary (:mod:`acidscape.boundary.api`) turns them into
``{"error": {"type", "message", "field"}}``.

Classes
-------
AcidscapeError   base class
InputError       a value is malformed or out of range (``ValueError``)
UnknownIdError   a system, ion, chemical or unit id is not known (``LookupError``)
UnreachableError a target (pH, dose) cannot be reached (``ValueError``)
ConvergenceError a numerical method failed to meet its tolerance (``ArithmeticError``)
"""

from __future__ import annotations

#: Words a sentence may start with as they are (a unit or symbol keeps its case: pH, not PH).
SYMBOL_STARTS = ("pH", "pKa", "pCO2", "pKw", "mg/L", "mmol/L", "mol/L", "µ", "m3")


def sentence(text: str) -> str:
    """The text with its first letter in upper case, unless it starts with a unit or symbol.

    >>> sentence("the measured pH must be from 0 to 14.")
    'The measured pH must be from 0 to 14.'
    >>> sentence("pH 20 is outside the pH scale.")
    'pH 20 is outside the pH scale.'
    """
    if not text or text.startswith(SYMBOL_STARTS) or not text[0].islower():
        return text
    return text[0].upper() + text[1:]


class AcidscapeError(Exception):
    """Base class; ``field`` names the offending input, if any. The message is what a user reads:
    a sentence in words (see :mod:`acidscape.checks` for the words of each input)."""

    def __init__(self, message: str, field: str | None = None):
        super().__init__(message)
        self.message = message
        self.field = field

    def to_dict(self) -> dict:
        return {"type": type(self).__name__, "message": self.message, "field": self.field}


class InputError(AcidscapeError, ValueError):
    """A value is malformed, of the wrong type or out of its allowed range."""


class UnknownIdError(AcidscapeError, LookupError):
    """An id (system, ion, chemical, unit, activity model) is not known."""


class UnreachableError(AcidscapeError, ValueError):
    """A requested target cannot be reached (e.g. a pH above what a CO2 dose gives)."""


class ConvergenceError(AcidscapeError, ArithmeticError):
    """A numerical method failed to meet its tolerance.

    The message a user reads says what happened and what to check, in words; the numerical
    method's own account (which search, at which pH) is kept in ``detail`` for developers.

    >>> e = ConvergenceError("the equilibrium search did not converge")
    >>> str(e).startswith("The calculation did not settle"), e.detail
    (True, 'the equilibrium search did not converge')
    """

    #: What a user reads whatever the method was.
    USER_MESSAGE = ("The calculation did not settle for this water. Check the amounts, their units and the pH; "
                    "if they are right, save the water to a file and report it.")

    def __init__(self, message: str, field: str | None = None):
        super().__init__(self.USER_MESSAGE, field=field)
        self.detail = str(message)
