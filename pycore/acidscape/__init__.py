"""Acidscape: acid-base speciation and equilibrium of natural and treated waters.

A standard-library-only core in four layers, each importing only the ones before it:

- :mod:`acidscape.data`: the cited constants and their loader;
- :mod:`acidscape.science`: pure water, activity, temperature, speciation, the equilibrium model;
- :mod:`acidscape.operations`: alkalinity, buffer, titration, dosing and the other jobs on a water;
- :mod:`acidscape.boundary`: scenario reading, result shaping, the JSON api, CLI and batch.

``errors``, ``checks``, ``constants`` and ``_version`` sit below all four.
"""

from ._version import __version__

from .errors import (  # noqa: E402
    AcidscapeError,
    ConvergenceError,
    InputError,
    UnknownIdError,
    UnreachableError,
)
from .science.speciation import alpha_curve, alpha_fractions, log10_alpha_fractions  # noqa: E402
from .boundary.api import solve  # noqa: E402

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
    "solve",
]
