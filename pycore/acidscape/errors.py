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


class AcidscapeError(Exception):
    """Base class; ``field`` names the offending input, if any."""

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
    """A numerical method failed to meet its tolerance."""
