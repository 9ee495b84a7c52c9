"""Chemical formulas: element counts, molar mass and charge.

Notation (the one used in every Acidscape data file)
----------------------------------------------------
A formula is a *body*, an optional ``*`` marker, then an optional *charge*:

* body: element symbols (capital letter, then lower-case letters) each followed
  by an optional whole-number count; groups in ``( )`` or ``[ ]`` followed by an
  optional count, nested to any depth: ``H2O``, ``CaCO3``, ``B(OH)4``,
  ``N(CH2COOH)3``.
* ``*`` marks a composite (analytical) species, e.g. ``H2CO3*`` for
  CO2(aq) + H2CO3 and ``H2SO3*`` for SO2(aq) + H2SO3; it does not change the
  mass.
* charge: a sign then the magnitude, the magnitude written only when it is 2 or
  more: ``NH4+``, ``HCO3-``, ``CO3-2``, ``Ca+2``, ``PO4-3``, ``H6Y+2``.
  ``+1``/``-1``, ``++`` and ``^2-`` are refused, so that each species has
  exactly one spelling. Beware the textbook superscript order: ``Ca2+`` is read
  as two calcium atoms with charge +1 (it cannot be told apart from ``NH4+``);
  write ``Ca+2``.

Charged formulas are weighed without correcting for the electron mass
(5.5e-4 g/mol per charge), as is common practice.

Functions
---------
composition(formula) -> dict[str, int]   element counts
molar_mass(formula) -> float             molar mass [g/mol]
charge_of(formula) -> int                charge number
split_formula(formula) -> (str, bool, int)   body, composite marker, charge

Data sources
------------
Atomic weights: :data:`acidscape.constants.ATOMIC_WEIGHT` (IUPAC CIAAW 2021
conventional / abridged values; see that module for the citation).
"""

from __future__ import annotations

import re

from ..constants import ATOMIC_WEIGHT
from ..errors import InputError

__all__ = ["composition", "molar_mass", "charge_of", "split_formula"]

_CHARGE_RE = re.compile(r"([+-])(\d*)$")
_TOKEN_RE = re.compile(r"[A-Z][a-z]*|\d+|[()\[\]]|.", re.DOTALL)
_CLOSE = {"(": ")", "[": "]"}


def split_formula(formula: str) -> tuple[str, bool, int]:
    """Split a formula into body, composite marker and charge.

    Parameters
    ----------
    formula : str
        Formula in the notation of this module, e.g. ``"CO3-2"`` [-]

    Returns
    -------
    tuple of (str, bool, int)
        Body without marker and charge, whether ``*`` was present, and the
        charge number [-]

    Examples
    --------
    >>> split_formula("CO3-2")
    ('CO3', False, -2)
    >>> split_formula("H2CO3*")
    ('H2CO3', True, 0)
    >>> split_formula("NH4+")
    ('NH4', False, 1)
    """
    if not isinstance(formula, str):
        raise InputError(f"formula must be text, got {formula!r}", field=None)
    text = formula.strip()
    if not text:
        raise InputError("formula is empty; give e.g. 'HCO3-' or 'CaCO3'", field=None)
    charge = 0
    m = _CHARGE_RE.search(text)
    if m:
        sign, digits = m.groups()
        if digits:
            magnitude = int(digits)
            if magnitude < 2:
                raise InputError(
                    f"formula {formula!r}: write a single charge as {sign!r} alone, not "
                    f"{sign + digits!r} (notation: 'NH4+', 'HCO3-', 'CO3-2')",
                    field=None,
                )
        else:
            magnitude = 1
        charge = magnitude if sign == "+" else -magnitude
        text = text[: m.start()]
    composite = text.endswith("*")
    if composite:
        text = text[:-1]
    if not text:
        raise InputError(f"formula {formula!r} has no elements", field=None)
    if any(ch in "+-*^ " for ch in text):
        raise InputError(
            f"formula {formula!r} is not in the notation body['*'][sign[magnitude>=2]], "
            "e.g. 'H2CO3*', 'HCO3-', 'CO3-2', 'Ca+2'",
            field=None,
        )
    return text, composite, charge


def composition(formula: str) -> dict[str, int]:
    """Count the atoms of each element in a formula.

    Parameters
    ----------
    formula : str
        Formula in the notation of this module [-]

    Returns
    -------
    dict of str to int
        Element symbol -> number of atoms, in order of first appearance [-]

    Examples
    --------
    >>> composition("B(OH)4-")
    {'B': 1, 'O': 4, 'H': 4}
    >>> composition("N(CH2COOH)3")
    {'N': 1, 'C': 6, 'H': 9, 'O': 6}
    """
    body, _, _ = split_formula(formula)
    tokens = _TOKEN_RE.findall(body)
    # Stack of partial counts; a group is multiplied into its parent when closed.
    stack: list[tuple[str | None, dict[str, int]]] = [(None, {})]
    i = 0
    while i < len(tokens):
        tok = tokens[i]
        count = 1
        if i + 1 < len(tokens) and tokens[i + 1].isdigit():
            count = int(tokens[i + 1])
            if count == 0:
                raise InputError(f"formula {formula!r}: a count of 0 is not allowed", field=None)
        if tok in _CLOSE:
            stack.append((tok, {}))
            i += 1
            continue
        if tok in (")", "]"):
            opener, group = stack.pop() if len(stack) > 1 else (None, None)
            if group is None or _CLOSE[opener] != tok:
                raise InputError(f"formula {formula!r}: unbalanced {tok!r}", field=None)
            parent = stack[-1][1]
            for el, n in group.items():
                parent[el] = parent.get(el, 0) + n * count
            i += 2 if (i + 1 < len(tokens) and tokens[i + 1].isdigit()) else 1
            continue
        if tok[0].isupper():
            if tok not in ATOMIC_WEIGHT:
                known = ", ".join(sorted(ATOMIC_WEIGHT))
                raise InputError(
                    f"formula {formula!r}: unknown element {tok!r}; known: {known}", field=None
                )
            counts = stack[-1][1]
            counts[tok] = counts.get(tok, 0) + count
            i += 2 if (i + 1 < len(tokens) and tokens[i + 1].isdigit()) else 1
            continue
        raise InputError(
            f"formula {formula!r}: unexpected {tok!r}; write element symbols with counts, "
            "e.g. 'CaCO3', 'B(OH)4-'",
            field=None,
        )
    if len(stack) != 1:
        raise InputError(f"formula {formula!r}: unclosed {stack[-1][0]!r}", field=None)
    if not stack[0][1]:
        raise InputError(f"formula {formula!r} has no elements", field=None)
    return stack[0][1]


def molar_mass(formula: str) -> float:
    """Molar mass of a formula from the standard atomic weights.

    .. math::

        M = \\sum_i n_i A_{r,i} \\; \\mathrm{g\\,mol^{-1}}

    Parameters
    ----------
    formula : str
        Formula in the notation of this module, e.g. ``"HCO3-"`` [-]

    Returns
    -------
    float
        Molar mass [g/mol]

    Notes
    -----
    The ``*`` marker and the charge do not change the mass; electron mass is
    neglected (common practice). Accuracy is that of the abridged atomic weights,
    about 1e-3 g/mol per atom.

    Examples
    --------
    >>> round(molar_mass("H2O"), 3)
    18.015
    >>> round(molar_mass("CaCO3"), 2)
    100.09
    >>> round(molar_mass("SO4-2"), 2)
    96.06

    References
    ----------
    IUPAC CIAAW, standard atomic weights 2021 (see :mod:`acidscape.constants`).
    """
    return float(sum(ATOMIC_WEIGHT[el] * n for el, n in composition(formula).items()))


def charge_of(formula: str) -> int:
    """Charge number written at the end of a formula.

    Parameters
    ----------
    formula : str
        Formula in the notation of this module [-]

    Returns
    -------
    int
        Charge number, 0 for a neutral formula [-]

    Notes
    -----
    Only the charge suffix is read, so ligand abbreviations (``H6Y+2`` for
    EDTA) are accepted here although :func:`molar_mass` refuses them.

    Examples
    --------
    >>> charge_of("CO3-2"), charge_of("NH4+"), charge_of("H2CO3*"), charge_of("H6Y+2")
    (-2, 1, 0, 2)
    """
    return split_formula(formula)[2]
