"""Validation helpers shared by the boundary modules (api, scenario, dosing...).

Functions
---------
number(value, field, lo=None, hi=None, allow_text=False) -> float
whole(value, field, lo=None, hi=None) -> int

Both raise :class:`acidscape.errors.InputError` naming ``field``, the value and
what is allowed; neither ever returns NaN or clamps.
"""

from __future__ import annotations

import math

from .errors import InputError


def number(value, field: str, *, lo: float | None = None, hi: float | None = None,
           allow_text: bool = False) -> float:
    """A finite float within [lo, hi].

    >>> number(" 7.5", "pH", allow_text=True)
    7.5
    >>> number(True, "pH")
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: pH must be a number, got True
    """
    if isinstance(value, str) and allow_text:
        try:
            value = float(value.strip())
        except ValueError:
            raise InputError(f"{field} must be a number, got {value!r}", field=field) from None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{field} must be a number, got {value!r}", field=field)
    v = float(value)
    if not math.isfinite(v):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    if lo is not None and v < lo:
        raise InputError(f"{field} = {v:g} is below the allowed minimum {lo:g}", field=field)
    if hi is not None and v > hi:
        raise InputError(f"{field} = {v:g} is above the allowed maximum {hi:g}", field=field)
    return v


def whole(value, field: str, *, lo: int | None = None, hi: int | None = None) -> int:
    """A whole number within [lo, hi] (a float with no fraction is accepted).

    >>> whole(3.0, "points")
    3
    """
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, bool) or not isinstance(value, int):
        raise InputError(f"{field} must be a whole number, got {value!r}", field=field)
    if lo is not None and value < lo:
        raise InputError(f"{field} = {value} is below the allowed minimum {lo}", field=field)
    if hi is not None and value > hi:
        raise InputError(f"{field} = {value} is above the allowed maximum {hi}", field=field)
    return value
