"""Dose of a chemical that brings a water to a target pH, and the product feed at a plant.

A dose of d mol/L of a chemical adds fixed amounts of strong ions and of
acid-base system totals (``data/chemicals.csv``). At the target pH every alpha
fraction is fixed, so the charge balance after dosing is linear in d:

.. math::

    \\underbrace{[H^+] - [OH^-] + S + \\sum C_T \\bar z}_{N(\\mathrm{pH})}
    + d\\,\\underbrace{\\Big(\\sum_j n_j z_j + \\sum_s n_s \\bar z_s\\Big)}_{M(\\mathrm{pH})} = 0
    \\quad\\Rightarrow\\quad d = -N/M,

solved explicitly (the same relation as the titration curves of
:mod:`acidscape.operations.titration`, without dilution: a plant dose is per litre of water
treated). With activity corrections the ionic strength after dosing depends on
d, so (d, I) is iterated to a fixed point. The target cannot be reached when

* d < 0: the chemical moves the pH the other way (an acid to raise pH);
* M vanishes between the water's pH and the target: the chemical cannot take
  the pH past the pH where it stops acting as an acid or base (NaHCO3 near
  (pKa1 + pKa2)/2 = 8.3; a library acid near its own pH);
* the dose exceeds 5 mol/L (beyond any treatment and the activity models);
* for CO2, the dissolved H2CO3* after dosing would exceed its solubility under
  1 atm of pure CO2, K_H(T) x 1 atm (Plummer & Busenberg 1982 via
  :func:`acidscape.science.temperature.log10_KH_CO2`): more cannot stay dissolved.

Product feed: product dose = pure dose / (w/w strength); feed [kg/d] = product
dose [mg/L] x flow [L/d] x 1e-6; volume = mass / density. 1 US gallon =
3.785411784 L exactly (by definition, NIST Handbook 44 / SP 811, from memory);
MGD = 10^6 US gallons per day.

Precipitation (CaCO3 after lime or soda ash), gas exchange after dosing and
temperature change are not modelled; a jar or bench test confirms any dose.

Functions
---------
chemicals() -> dict[str, Chemical]         dosing chemicals and titrants (data/chemicals.csv)
get_chemical(id) -> Chemical               a chemical, or a library system's neutral species
flow_L_per_d(value, unit) -> float         plant flow in L/d
dose_to_pH(scenario, chemical, target_pH, ...) -> dict
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

from ..errors import InputError, UnknownIdError, UnreachableError
from .titration import MAX_AMOUNT_M, PH_RANGE, Engine
from ..science.speciation import alpha_from_cumulative

#: Litres per US gallon, exact by definition (NIST SP 811, from memory).
L_PER_US_GALLON = 3.785411784
#: Plant flow units accepted, with litres per day per unit.
FLOW_UNITS = {
    "m3/d": 1000.0,
    "m3/h": 24000.0,
    "L/s": 86400.0,
    "L/min": 1440.0,
    "MGD": 1e6 * L_PER_US_GALLON,
    "gpm": 1440.0 * L_PER_US_GALLON,
}


@dataclass(frozen=True)
class Chemical:
    """A dosing chemical or titrant: what one mole of it adds to a water."""

    id: str
    name: str
    molar_mass_g_per_mol: float
    ions: tuple           # ((ion id, moles per mole), ...)
    ion_charges: tuple    # ((charge, moles per mole), ...)
    systems: tuple        # ((system id, moles per mole), ...)
    alkalinity_eq_per_mol: float   # change of total (equivalence-point) alkalinity per mole
    is_gas: bool = False
    example_strength_pct: float | None = None
    example_density_kg_per_L: float | None = None
    example_source: str | None = None
    note: str = ""

    def components_at(self, T: float) -> dict:
        """Solver components of the systems this chemical adds, with pKa at T [K]."""
        from ..data import library
        from ..science import temperature
        from ..science.solver import Component

        out = {}
        for key, _ in self.systems:
            s = library.get_system(key)
            out[key] = Component(
                key=s.id, name=s.name, species=tuple(sp.formula for sp in s.species),
                charges=tuple(sp.charge for sp in s.species), pKa=tuple(temperature.pKa_at(s, T)),
                total_M=0.0, ion_sizes=tuple(sp.ion_size_A for sp in s.species))
        return out

    def as_json(self) -> dict:
        return {"id": self.id, "name": self.name, "molar_mass_g_per_mol": self.molar_mass_g_per_mol,
                "adds_ions": [{"id": i, "mol_per_mol": n} for i, n in self.ions],
                "adds_systems": [{"id": s, "mol_per_mol": n} for s, n in self.systems],
                "alkalinity_eq_per_mol": self.alkalinity_eq_per_mol,
                "example_strength_pct": self.example_strength_pct,
                "example_density_kg_per_L": self.example_density_kg_per_L,
                "example_source": self.example_source, "note": self.note}


def _pairs(text: str, where: str) -> tuple:
    out = []
    for part in filter(None, (p.strip() for p in text.split(";"))):
        key, _, n = part.rpartition(":")
        try:
            out.append((key.strip(), float(n)))
        except ValueError:
            raise ValueError(f"{where}: {part!r} is not 'id:moles'") from None
    return tuple(out)


def _alkalinity_per_mol(ion_pairs, system_pairs) -> float:
    from ..data import library
    from .alkalinity import TOTAL_END_POINT_PH, reference_index

    a = sum(z * n for z, n in ion_pairs)
    for key, n in system_pairs:
        s = library.get_system(key)
        a += n * s.species[reference_index(s.pKa_25C, TOTAL_END_POINT_PH)].charge
    return a


@functools.cache
def chemicals() -> dict:
    """Dosing chemicals and titrants from ``data/chemicals.csv``, checked on load.

    Returns
    -------
    dict of str to Chemical
        By id (the plain formula) [-]

    Examples
    --------
    >>> [c for c in chemicals()]
    ['NaOH', 'HCl', 'H2SO4', 'Ca(OH)2', 'Na2CO3', 'NaHCO3', 'CO2']
    >>> chemicals()["Na2CO3"].alkalinity_eq_per_mol
    2.0
    """
    from importlib.resources import files

    from ..data import library
    from ..data.formula import molar_mass

    name, rows = library._rows(files("acidscape") / "data" / "chemicals.csv",
                               ("id", "name", "molar_mass_g_per_mol", "strong_ions", "systems"))
    out = {}
    for lineno, r in rows:
        where = f"{name} line {lineno}"
        mm = float(r["molar_mass_g_per_mol"])
        if abs(mm - molar_mass(r["id"])) > 0.01:
            raise library.LibraryDataError(f"{where}: molar mass {mm} disagrees with the formula "
                                           f"({molar_mass(r['id']):.3f})")
        ions = _pairs(r["strong_ions"], where)
        charges = tuple((library.get_ion(i).charge, n) for i, n in ions)
        systems = _pairs(r["systems"], where)
        for key, _ in systems:
            library.get_system(key)
        opt = lambda col: float(r[col]) if r.get(col) else None  # noqa: E731
        out[r["id"]] = Chemical(
            id=r["id"], name=r["name"], molar_mass_g_per_mol=mm, ions=ions, ion_charges=charges,
            systems=systems, alkalinity_eq_per_mol=_alkalinity_per_mol(charges, systems),
            is_gas=r["id"] == "CO2", example_strength_pct=opt("example_strength_pct"),
            example_density_kg_per_L=opt("example_density_kg_per_L"),
            example_source=r.get("example_source") or None, note=r.get("note", ""))
    return out


def get_chemical(id: str, field: str = "chemical") -> Chemical:
    """A chemical by id, or a library acid-base system added as its neutral species.

    Parameters
    ----------
    id : str
        ``NaOH``, ``HCl``, ``H2SO4``, ``Ca(OH)2``, ``Na2CO3``, ``NaHCO3``, ``CO2``, or a system id
        of :mod:`acidscape.data.library` (``acetic`` adds CH3COOH, ``ammonium`` adds NH3) [-]
    field : str
        Input named in errors

    Returns
    -------
    Chemical
        What one mole adds [-]

    Examples
    --------
    >>> c = get_chemical("ammonium")
    >>> c.name, c.alkalinity_eq_per_mol
    ('NH3 (Ammonium (NH4+/NH3))', 1.0)
    """
    from ..data import library

    table = chemicals()
    if isinstance(id, str) and id in table:
        return table[id]
    if isinstance(id, str) and id in library.systems():
        s = library.get_system(id)
        k = next((i for i, sp in enumerate(s.species) if sp.charge == 0), None)
        if k is None:
            raise InputError(f"{field} = {id!r}: the system has no neutral species to add as a chemical; "
                             f"use one of {', '.join(table)}", field=field)
        sp = s.species[k]
        pairs = ((s.id, 1.0),)
        return Chemical(id=s.id, name=f"{sp.formula} ({s.name})", molar_mass_g_per_mol=sp.molar_mass_g_per_mol,
                        ions=(), ion_charges=(), systems=pairs,
                        alkalinity_eq_per_mol=_alkalinity_per_mol((), pairs), note="library system, neutral form")
    raise UnknownIdError(f"{field} = {id!r} is not a known chemical; use one of {', '.join(table)} "
                         "or a library system id", field=field)


def flow_L_per_d(value, unit) -> float:
    """Plant flow in litres per day.

    Parameters
    ----------
    value : float
        Flow, >= 0 [unit]
    unit : str
        One of :data:`FLOW_UNITS`: ``m3/d``, ``m3/h``, ``L/s``, ``L/min``, ``MGD`` (US), ``gpm`` (US)

    Returns
    -------
    float
        Flow [L/d]

    Examples
    --------
    >>> flow_L_per_d(1, "MGD")
    3785411.784
    >>> flow_L_per_d(10, "L/s")
    864000.0
    """
    if unit is None:
        raise InputError("flow_unit is required with flow; use one of " + ", ".join(FLOW_UNITS), field="flow_unit")
    if unit not in FLOW_UNITS:
        raise UnknownIdError(f"flow_unit = {unit!r} is not known; use one of " + ", ".join(FLOW_UNITS),
                             field="flow_unit")
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"flow must be a finite number, got {value!r}", field="flow")
    if value < 0:
        raise InputError(f"flow = {value:g} {unit} is negative; a flow is zero or more", field="flow")
    return float(value) * FLOW_UNITS[unit]


def _opt_number(value, field, lo, hi, lo_open=True):
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    v = float(value)
    if (v <= lo if lo_open else v < lo) or v > hi:
        raise InputError(f"{field} = {v:g} is outside the allowed range ({lo:g}, {hi:g}]", field=field)
    return v


def dose_amount(closed, chem, target_pH: float) -> tuple[float, float]:
    """Dose [mol/L] of ``chem`` that takes a closed water to ``target_pH``, and the ionic strength after.

    Raises :class:`UnreachableError` when the target cannot be reached (see module notes).
    """
    from ..science.temperature import log10_KH_CO2

    p = closed.parsed
    engine = Engine(p.components, p.ions, T=p.T, pKw=p.pKw, model=p.model, I_fixed=p.I_fixed, chemical=chem,
                    added_components=chem.components_at(p.T), titrant_M=None)
    pH0, I0 = closed.eq.pH, closed.eq.I
    if abs(target_pH - pH0) < 1e-9:
        return 0.0, I0
    g0 = engine.direction_term(pH0, I0)
    upward = g0 > 0
    role = "an acid" if g0 < 0 else ("a base" if g0 > 0 else "neutral")
    wrong_side = g0 == 0.0 or (target_pH > pH0) != upward
    if not wrong_side:
        limit = engine.limit_pH(pH0, I0, upward, end=target_pH)
        if limit is not None:
            raise UnreachableError(
                f"pH {target_pH:g} is beyond what {chem.id} can give this water: however much is dosed the "
                f"pH only approaches {limit:.2f}", field="target_pH")
    # The amount comes from the self-consistent (dose, I) pair. Where the salt a dose adds moves
    # the meter pH against the chemical's acid-base action (activity corrections), a target on the
    # "wrong" side can still be reached; it is accepted when the amount is finite and positive.
    d, I, _ = engine.amount(target_pH, I0, scan=wrong_side)
    if not d >= 0.0 or not math.isfinite(d):
        if wrong_side:
            raise UnreachableError(
                f"{chem.id} acts as {role} on this water (pH {pH0:.2f}); it "
                f"{'lowers' if g0 < 0 else 'raises' if g0 > 0 else 'does not change'} the pH and cannot bring "
                f"it to {target_pH:g}", field="target_pH")
        raise UnreachableError(
            f"pH {target_pH:g} is beyond what {chem.id} can give this water: the dose needed grows without "
            f"bound, because the ionic strength it adds lowers the pH {chem.id} can reach (activity "
            "corrections)", field="target_pH")
    if d > MAX_AMOUNT_M:
        raise UnreachableError(
            f"pH {target_pH:g} needs {d:.3g} mol/L of {chem.id}, more than the {MAX_AMOUNT_M:g} mol/L "
            "accepted (beyond water treatment and the activity models)", field="target_pH")
    if chem.is_gas:
        C = sum(c.total_M for c in p.components if c.key == "carbonate") + d
        a0 = _a0_carbonate(engine, target_pH, I)
        sat = 10.0 ** log10_KH_CO2(p.T)
        if C * a0 > sat:
            raise UnreachableError(
                f"pH {target_pH:g} needs {d * 1e3:.4g} mmol/L CO2, leaving {C * a0 * 1e3:.4g} mmol/L dissolved "
                f"H2CO3*, more than dissolves under 1 atm of pure CO2 ({sat * 1e3:.4g} mmol/L at "
                f"{p.T - 273.15:.4g} °C): CO2 cannot take this water that low", field="target_pH")
    return d, I


def _a0_carbonate(engine, pH, I):
    _, _, cums = engine._at(I)
    for s, cum in zip(engine.systems, cums):
        if s.key == "carbonate":
            return alpha_from_cumulative(pH, cum)[0]
    return 0.0


def _after_scenario(closed, chem, d) -> dict:
    import copy

    sc = copy.deepcopy(closed.scenario)
    p = closed.parsed
    entries = list(sc.get("systems") or [])
    for k, comp in enumerate(p.components):
        entries[k] = dict(entries[k], total=comp.total_M, unit="mol/L")
    for key, n in chem.systems:
        k = next((i for i, c in enumerate(p.components) if c.key == key), None)
        if k is None:
            entries.append({"id": key, "total": n * d, "unit": "mol/L"})
        else:
            entries[k]["total"] += n * d
    sc["systems"] = entries
    ions = list(sc.get("ions") or [])
    for k, ion in enumerate(p.ions):
        ions[k] = dict(ions[k], total=ion.conc_M, unit="mol/L")
    for iid, n in chem.ions:
        k = next((i for i, e in enumerate(ions) if e.get("id") == iid), None)
        if k is None:
            ions.append({"id": iid, "total": n * d, "unit": "mol/L"})
        else:
            ions[k]["total"] += n * d
    sc["ions"] = ions
    return sc


def _summary(res: dict) -> dict:
    carb = next((s for s in res["systems"] if s["id"] == "carbonate"), None)
    h2co3 = next((r for r in res["species"] if r["system"] == "carbonate" and r["charge"] == 0), None)
    from ..constants import ATOMIC_WEIGHT as W

    return {
        "pH": res["pH"],
        "total_alkalinity_meq_per_L": res["alkalinity"]["equivalence_point"]["total_meq_per_L"],
        "total_alkalinity_mg_per_L_as_CaCO3": res["alkalinity"]["equivalence_point"]["total_mg_per_L_as_CaCO3"],
        "DIC_mmol_per_L": carb["total_M"] * 1e3 if carb else 0.0,
        "CO2_mg_per_L": (h2co3["concentration_M"] * (W["C"] + 2 * W["O"]) * 1e3) if h2co3 else 0.0,
        "ionic_strength_M": res["ionic_strength_M"],
    }


def dose_to_pH(scenario: dict, chemical: str, target_pH, *, strength_pct=None, density_kg_per_L=None,
               flow=None, flow_unit=None) -> dict:
    """Dose of a chemical that brings a water to a target pH, with the plant feed and the water after.

    Parameters
    ----------
    scenario : dict
        The water (``measured``, ``pH`` and ``gas`` are closed as in
        :func:`acidscape.operations.closure.close_scenario`)
    chemical : str
        Chemical id (see :func:`get_chemical`) [-]
    target_pH : float
        Target meter pH [-]
    strength_pct : float, optional
        Product strength, 0 < S <= 100 [% w/w]
    density_kg_per_L : float, optional
        Product density, 0 < rho <= 5 [kg/L]
    flow : float, optional
        Plant flow, >= 0 [flow_unit]
    flow_unit : str, optional
        One of :data:`FLOW_UNITS`

    Returns
    -------
    dict
        ``dose_mmol_per_L``, ``dose_mg_per_L`` (pure chemical), ``dose_meq_per_L`` (alkalinity
        added), ``chemical``, ``initial_pH``, ``target_pH``, ``product`` (when strength is given:
        ``product_mg_per_L`` and, with flow, ``feed_kg_per_d``, ``feed_L_per_h``, ``feed_gal_per_d``
        (the last two need the density)), ``pure_chemical_kg_per_d`` (with flow), ``change``
        (before / after / change of pH, alkalinity, DIC, CO2, ionic strength), ``water_before``,
        ``water_after`` (``solve`` results), ``warnings``

    Raises
    ------
    UnreachableError
        The chemical cannot bring the water to the target
    InputError
        Strength outside (0, 100] %, density outside (0, 5] kg/L, negative flow, flow without unit

    Examples
    --------
    NaOH to neutralise 1 mmol/L HCl to pH 7 (ideal; stoichiometry: 1 mmol/L, common practice):

    >>> out = dose_to_pH({"activity": "ideal", "ions": [{"id": "Cl-", "total": 1e-3}],
    ...                   "pH": 3.0}, "NaOH", 7.0)
    >>> round(out["dose_mmol_per_L"], 4)
    1.0
    """
    from ..boundary.api import solve
    from .closure import close_scenario

    chem = get_chemical(chemical, field="chemical")
    if isinstance(target_pH, bool) or not isinstance(target_pH, (int, float)) or not math.isfinite(target_pH):
        raise InputError(f"target_pH must be a finite number, got {target_pH!r}", field="target_pH")
    target_pH = float(target_pH)
    if not PH_RANGE[0] <= target_pH <= PH_RANGE[1]:
        raise InputError(f"target_pH = {target_pH:g} is outside {PH_RANGE[0]:g}..{PH_RANGE[1]:g}", field="target_pH")
    strength = _opt_number(strength_pct, "strength_pct", 0.0, 100.0)
    density = _opt_number(density_kg_per_L, "density_kg_per_L", 0.0, 5.0)
    flow_Ld = None
    if flow is not None or flow_unit is not None:
        if flow is None:
            raise InputError("flow_unit given without flow", field="flow")
        flow_Ld = flow_L_per_d(flow, flow_unit)
    closed = close_scenario(scenario)
    d, _ = dose_amount(closed, chem, target_pH)
    warnings = list(closed.notes)
    before = solve(closed.scenario)
    after = solve(_after_scenario(closed, chem, d))
    mg = d * chem.molar_mass_g_per_mol * 1e3
    out = {
        "chemical": chem.as_json(),
        "initial_pH": before["pH"],
        "target_pH": target_pH,
        "dose_mmol_per_L": d * 1e3,
        "dose_mg_per_L": mg,
        "dose_meq_per_L": d * chem.alkalinity_eq_per_mol * 1e3,
    }
    if flow_Ld is not None:
        out["flow"] = {"value": float(flow), "unit": flow_unit, "L_per_d": flow_Ld, "m3_per_d": flow_Ld / 1e3}
        out["pure_chemical_kg_per_d"] = mg * flow_Ld * 1e-6
    if strength is not None:
        prod = {"strength_pct": strength, "density_kg_per_L": density, "product_mg_per_L": mg / (strength / 100.0)}
        if flow_Ld is not None:
            kg = prod["product_mg_per_L"] * flow_Ld * 1e-6
            prod["feed_kg_per_d"] = kg
            if density is not None:
                prod["feed_L_per_h"] = kg / density / 24.0
                prod["feed_gal_per_d"] = kg / density / L_PER_US_GALLON
            else:
                warnings.append("give density_kg_per_L for the feed as a volume (L/h, gal/d)")
        else:
            warnings.append("give flow and flow_unit for the product feed in kg/d")
        out["product"] = prod
    b, a = _summary(before), _summary(after)
    out["change"] = {k: {"before": b[k], "after": a[k], "change": a[k] - b[k]} for k in b}
    if chem.id in ("Ca(OH)2", "Na2CO3"):
        warnings.append("CaCO3 and other precipitation are not modelled; check the calcium carbonate "
                        "saturation of the water after dosing")
    warnings.extend(w for w in after.get("warnings", []) if w not in warnings)
    out["water_before"] = before
    out["water_after"] = after
    out["warnings"] = warnings
    return out
