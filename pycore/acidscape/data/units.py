"""Concentration units: what a practitioner types, to and from mol/L (one factor each way).

Accepted unit strings (spelling is exact; ``µ`` and ``u`` both mean micro):

========================  ===========================================================
``mol/L``                 moles of the system (or ion) per litre
``mmol/L``                1e-3 mol/L
``umol/L`` / ``µmol/L``   1e-6 mol/L
``mg/L``                  mg of the system's mass-basis formula (or of the ion) per litre
``mg/L as X``             mg of X per litre, X the system's "as" basis (N, P, C, Si, Cl2...)
``ug/L`` / ``µg/L``       1e-3 mg/L (metals such as lead and copper are reported so)
``meq/L``                 milliequivalents per litre: strong ions only, |z| eq per mol
========================  ===========================================================

Conversions are a single multiplication or division by a factor built from
molar masses, so a value converted there and back returns to itself within one
rounding (about 1e-16 relative).

Functions
---------
factor_to_molar(unit, item) -> float     mol/L per one unit of ``unit``
to_molar(value, unit, item) -> float      value in mol/L
from_molar(c, unit, item) -> float        value in ``unit``
accepted_units(item) -> list[str]          units that fit a system or ion

``item`` is an :class:`acidscape.data.library.AcidSystem`, a
:class:`acidscape.data.library.StrongIon`, or any object with the attributes
``mass_basis`` / ``mass_basis_g_per_mol`` (or ``molar_mass_g_per_mol``),
``as_formula``, ``as_g_per_mol`` and, for ions, ``charge``.
"""

from __future__ import annotations

import math

from ..checks import describe, fmt, shown
from ..errors import InputError, UnknownIdError, sentence

_SCALE = {"mol/L": 1.0, "mmol/L": 1e-3, "umol/L": 1e-6, "µmol/L": 1e-6, "μmol/L": 1e-6}


def _mass_g_per_mol(item) -> float | None:
    m = getattr(item, "mass_basis_g_per_mol", None)
    if m is None:
        m = getattr(item, "molar_mass_g_per_mol", None)
    return m


def _is_ion(item) -> bool:
    return hasattr(item, "charge") and not hasattr(item, "species")


def accepted_units(item) -> list[str]:
    """Units that fit ``item``.

    >>> from types import SimpleNamespace as NS
    >>> accepted_units(NS(mass_basis_g_per_mol=96.06, as_formula="S", as_g_per_mol=32.06, species=()))
    ['mol/L', 'mmol/L', 'umol/L', 'mg/L', 'ug/L', 'mg/L as S']
    """
    units = ["mol/L", "mmol/L", "umol/L"]
    if _mass_g_per_mol(item):
        units += ["mg/L", "ug/L"]
    if getattr(item, "as_formula", None) and getattr(item, "as_g_per_mol", None):
        units.append(f"mg/L as {item.as_formula}")
    if _is_ion(item) and getattr(item, "charge", 0):
        units.append("meq/L")
    return units


def factor_to_molar(unit: str, item, field: str = "unit") -> float:
    """Moles per litre in one ``unit`` of ``item``.

    Parameters
    ----------
    unit : str
        One of the unit strings of this module
    item : AcidSystem or StrongIon
        What is being measured
    field : str
        Scenario path named in errors

    Returns
    -------
    float
        Factor f with c [mol/L] = value x f [mol/L per unit]

    Examples
    --------
    Ammonium total given as 1 mg/L as N (14.007 g/mol N, IUPAC 2021):

    >>> from types import SimpleNamespace as NS
    >>> nh4 = NS(mass_basis_g_per_mol=18.039, as_formula="N", as_g_per_mol=14.007, species=())
    >>> round(factor_to_molar("mg/L as N", nh4) * 1e6, 3)
    71.393
    """
    if not isinstance(unit, str):
        raise InputError(f"Choose {describe(field)} from the list (for example mmol/L).", field=field)
    u = unit.strip()
    if u in _SCALE:
        return _SCALE[u]
    name = getattr(item, "name", getattr(item, "id", "this item"))
    if u in ("mg/L", "ug/L", "µg/L", "μg/L"):
        m = _mass_g_per_mol(item)
        if not m:
            raise InputError(
                f"The unit {u} needs a molar mass, and {name} has none; choose one of "
                + ", ".join(accepted_units(item)) + ".",
                field=field,
            )
        return (1e-3 if u == "mg/L" else 1e-6) / m
    if u.startswith("mg/L as "):
        basis = u[len("mg/L as "):].strip()
        as_formula = getattr(item, "as_formula", None)
        as_mass = getattr(item, "as_g_per_mol", None)
        if not as_formula or basis != as_formula or not as_mass:
            raise InputError(
                f"The unit {shown(unit)} does not fit {name}; choose one of " + ", ".join(accepted_units(item)) + ".",
                field=field,
            )
        return 1e-3 / as_mass
    if u == "meq/L":
        if not _is_ion(item) or not getattr(item, "charge", 0):
            raise InputError(
                f"The unit meq/L applies to strong ions only (the equivalents per mole of {name} depend on the "
                f"pH); choose one of " + ", ".join(accepted_units(item)) + ".",
                field=field,
            )
        return 1e-3 / abs(item.charge)
    raise UnknownIdError(
        f"The unit {shown(unit)} is not known; choose one of mol/L, mmol/L, umol/L, mg/L, ug/L, "
        "mg/L as the basis given in the list, meq/L.",
        field=field,
    )


def to_molar(value: float, unit: str, item, field: str = "total") -> float:
    """Convert a user value to mol/L, refusing negatives and non-numbers.

    >>> from types import SimpleNamespace as NS
    >>> to_molar(2.5, "mmol/L", NS(species=()))
    0.0025
    """
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(sentence(f"{describe(field)} must be a number (zero or more); {shown(value)} is not one."),
                         field=field)
    value = float(value)
    if not math.isfinite(value):
        raise InputError(sentence(f"{describe(field)} is too large to use; enter a number, zero or more."),
                         field=field)
    if value < 0:
        raise InputError(sentence(f"{describe(field)} must be zero or more (you entered {fmt(value)})."),
                         field=field)
    unit_field = field.rsplit(".", 1)[0] + ".unit" if "." in field else "unit"
    return value * factor_to_molar(unit, item, unit_field)


def from_molar(c: float, unit: str, item) -> float:
    """Convert mol/L to ``unit``: the exact inverse of :func:`to_molar`.

    >>> from types import SimpleNamespace as NS
    >>> na = NS(charge=1, molar_mass_g_per_mol=22.990, as_formula=None, as_g_per_mol=None)
    >>> round(from_molar(0.001, "mg/L", na), 3)
    22.99
    """
    return c / factor_to_molar(unit, item)
