"""Acidscape: acid-base speciation and equilibrium of natural and treated waters.

A standard-library-only core: alpha fractions of polyprotic acids, the charge
balance of a water with many acid-base systems and strong ions, temperature and
activity corrections, alkalinity, buffer intensity, titration and dosing.
"""

__version__ = "0.1.0"

from .errors import (  # noqa: E402
    AcidscapeError,
    ConvergenceError,
    InputError,
    UnknownIdError,
    UnreachableError,
)
from .speciation import alpha_curve, alpha_fractions, log10_alpha_fractions  # noqa: E402

__all__ = [
    "AcidscapeError",
    "ConvergenceError",
    "InputError",
    "UnknownIdError",
    "UnreachableError",
    "__version__",
    "alpha_curve",
    "alpha_fractions",
    "log10_alpha_fractions",
]
