"""The catalogues the page fills its lists from: units, activity models, flow units, molar masses.

The core owns these lists; the page (site/catalogues.js, site/catalogue-view.js) asks for them
once at start-up through ``dispatch.handle("catalogues", "{}")`` and keeps no copy of its own.
Every number here is read from the module that uses it (``data.units`` for concentration
factors, ``operations.dosing.FLOW_UNITS`` for flows, the chemicals' catalogue for molar masses),
so the page and the core cannot disagree. The labels are the page's words for each choice.

Functions
---------
catalogues() -> dict     every catalogue, as plain JSON-ready lists and dicts
"""

from __future__ import annotations

import functools
from types import SimpleNamespace

from ..data import units
from ..operations.closure import ALK_UNITS
from ..operations.dosing import FLOW_UNITS, chemicals
from ..science.activity import MODELS, VALIDITY_I_M
from .batch import TEMPERATURE_UNITS

#: Concentration units of the species table: (value, label). "mg/L as basis" is the mass of each
#: system's "as" basis (N, P, Cl2...), a different unit per system, so it is not a units.py string.
DISPLAY_UNITS = (
    ("mol/L", "mol/L"),
    ("mmol/L", "mmol/L"),
    ("umol/L", "µmol/L"),
    ("mg/L", "mg/L of the species"),
    ("ug/L", "µg/L of the species"),
    ("mg/L as basis", "mg/L as N, P, Cl₂… (each system's basis)"),
)
#: The species table's unit before the user chooses one.
DEFAULT_DISPLAY_UNIT = "mmol/L"
#: Words for each activity model of :data:`acidscape.science.activity.MODELS`.
ACTIVITY_LABELS = {
    "ideal": "Ideal (all equal to 1)",
    "davies": "Davies equation",
    "extended-debye-huckel": "Extended Debye–Hückel",
}
#: The activity model a scenario without one uses (acidscape.boundary.scenario).
DEFAULT_ACTIVITY = "davies"
#: Words for each plant flow unit of :data:`acidscape.operations.dosing.FLOW_UNITS`.
FLOW_LABELS = {
    "m3/d": "m³/d",
    "m3/h": "m³/h",
    "L/s": "L/s",
    "L/min": "L/min",
    "MGD": "MGD (million US gal/d)",
    "gpm": "gpm (US gal/min)",
}
#: Words for each temperature unit of a batch sheet (acidscape.boundary.batch.TEMPERATURE_UNITS).
TEMPERATURE_LABELS = {"C": "°C", "F": "°F"}
#: Words for each alkalinity unit (acidscape.operations.closure.ALK_UNITS).
ALKALINITY_LABELS = {"mg/L as CaCO3": "mg/L as CaCO₃", "meq/L": "meq/L"}


def _display_unit(value: str, label: str) -> dict:
    """One unit of the species table with its factor, read from :mod:`acidscape.data.units`.

    ``mol_per_L``: mol/L in one unit (molar units). ``g_per_L``: grams per litre in one unit of
    mass (of the species, or of the system's basis), i.e. units.py's factor for a substance of
    1 g/mol.
    """
    if value == "mg/L as basis":
        one = SimpleNamespace(as_formula="X", as_g_per_mol=1.0, species=())
        return {"value": value, "label": label, "kind": "mass as basis",
                "g_per_L": units.factor_to_molar("mg/L as X", one)}
    probe = SimpleNamespace(mass_basis_g_per_mol=1.0, as_formula=None, as_g_per_mol=None, species=())
    if value in units.accepted_units(SimpleNamespace(species=())):
        return {"value": value, "label": label, "kind": "molar", "mol_per_L": units.factor_to_molar(value, probe)}
    return {"value": value, "label": label, "kind": "mass", "g_per_L": units.factor_to_molar(value, probe)}


@functools.cache
def _catalogues() -> dict:
    return {
        "display_units": [_display_unit(v, label) for v, label in DISPLAY_UNITS],
        "default_display_unit": DEFAULT_DISPLAY_UNIT,
        "activity_models": [{"value": m, "label": ACTIVITY_LABELS[m], "validity_I_M": VALIDITY_I_M[m]}
                            for m in MODELS],
        "default_activity": DEFAULT_ACTIVITY,
        "flow_units": [{"value": u, "label": FLOW_LABELS[u], "L_per_d": f} for u, f in FLOW_UNITS.items()],
        "temperature_units": [{"value": u, "label": TEMPERATURE_LABELS[u]} for u in TEMPERATURE_UNITS],
        "alkalinity_units": [{"value": u, "label": ALKALINITY_LABELS[u]} for u in ALK_UNITS],
        "molar_masses_g_per_mol": {c.id: c.molar_mass_g_per_mol for c in chemicals().values()},
    }


def catalogues() -> dict:
    """Every list the page offers, from the core's own tables.

    Returns
    -------
    dict
        ``display_units`` (``value``, ``label``, ``kind`` "molar" with ``mol_per_L`` [mol/L per
        unit], or "mass" / "mass as basis" with ``g_per_L`` [g/L per unit]),
        ``default_display_unit``, ``activity_models`` (``value``, ``label``, ``validity_I_M``
        [mol/L]), ``default_activity``, ``flow_units`` (``value``, ``label``, ``L_per_d`` [L/d per
        unit]), ``temperature_units`` and ``alkalinity_units`` (``value``, ``label``) and
        ``molar_masses_g_per_mol`` (each dosing chemical's molar mass [g/mol]).

    Examples
    --------
    One m³/h is 24 000 L/d (24 h of 1000 L; exact by definition):

    >>> cat = catalogues()
    >>> next(u["L_per_d"] for u in cat["flow_units"] if u["value"] == "m3/h")
    24000.0
    >>> [m["value"] for m in cat["activity_models"]]
    ['ideal', 'davies', 'extended-debye-huckel']
    >>> next(u["mol_per_L"] for u in cat["display_units"] if u["value"] == "umol/L")
    1e-06
    """
    import copy

    return copy.deepcopy(_catalogues())
