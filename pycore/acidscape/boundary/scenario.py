"""Reading a scenario (the JSON a user, the page or the CLI gives) into solver inputs.

A scenario is a dict with these keys (all optional except as noted):

``temperature_C``        0..100, default 25
``activity``             "ideal", "davies" (default) or "extended-debye-huckel"
``ionic_strength_M``     hold the ionic strength fixed [mol/L]
``tds_mg_per_L``         estimate a fixed ionic strength from total dissolved solids
``conductance_uS_per_cm`` estimate a fixed ionic strength from specific conductance (25 °C)
``pH``                   speciate at this pH instead of solving the charge balance
``systems``              list of ``{"id", "total", "unit"}`` or ``{"custom": {...}, "total", "unit"}``
``ions``                 list of ``{"id", "total", "unit"}`` or ``{"custom": {...}, "total", "unit"}``
``gas``                  ``{"CO2_partial_pressure_atm": p}``: open to CO2 at that partial pressure
``complexes``            true (default) or false: ion pairs and metal complexes of the database on or off
``precipitate``          list of solid ids (``"calcite"``...) allowed to precipitate or dissolve to equilibrium
``ccpp_open_CO2_partial_pressure_atm``  also report the CCPP of the water open to CO2 at this partial pressure [atm]
``ccpp_temperatures_C``  list of up to 8 further temperatures [°C] for the calcium carbonate indices (heater, boiling)
``uncertainty``          true: also report how the calcium carbonate indices move with the usual measurement
                         uncertainties and the spread of the constants (costs about 30 more solves)

Ion ids are words (``"calcium"``, ``"lead"``, ``"iron(III)"``); the older formula spellings
(``"Ca+2"``) are accepted as aliases. An ion that is the base of an acid-base system
(``"sulfate"``) is read as that system. Each system or ion may be given once.

Functions
---------
read_scenario(scenario) -> Parsed    validated inputs for :class:`acidscape.science.tableau.WaterModel`
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

from ..science import activity
from ..data import library
from ..science import temperature
from ..science import purewater
from ..constants import T0
from ..checks import PH_RANGE, TEMPERATURE_RANGE_C, describe, fmt, number, sentence, shown
from ..checks import MAX_TOTAL_M as _MAX_TOTAL_M
from ..errors import InputError, UnknownIdError
from ..science.tableau import IonInput as Ion, SystemInput as Component
from ..science.speciation import MAX_STEPS, _check_pKa, generic_species_names
from ..data.units import to_molar

#: At most this many acid-base systems in one water.
MAX_SYSTEMS = 40
#: At most this many strong ions in one water.
MAX_IONS = 40
#: Largest total accepted for one system or ion [mol/L] (the one limit in acidscape.checks).
MAX_TOTAL_M = _MAX_TOTAL_M

KNOWN_KEYS = {
    "temperature_C", "activity", "ionic_strength_M", "tds_mg_per_L", "conductance_uS_per_cm",
    "pH", "systems", "ions", "gas", "measured", "name", "note", "version", "complexes", "precipitate",
    # calcium carbonate indices (acidscape.operations.indices)
    "ccpp_open_CO2_partial_pressure_atm", "ccpp_temperatures_C", "uncertainty",
}


@dataclass
class CustomSystem:
    """A user-defined acid (duck-types the unit-relevant parts of AcidSystem)."""

    id: str
    name: str
    mass_basis_g_per_mol: float | None
    as_formula: None = None
    as_g_per_mol: None = None
    species: tuple = ()


@dataclass
class CustomIon:
    """A user-defined strong ion."""

    id: str
    name: str
    charge: int
    molar_mass_g_per_mol: float | None
    as_formula: None = None
    as_g_per_mol: None = None


@dataclass
class Parsed:
    """Validated scenario."""

    T: float
    temperature_C: float
    model: str
    I_fixed: float | None
    I_source: str
    pH: float | None
    components: list[Component]
    ions: list[Ion]
    sources: list  # library objects (or Custom*) per component, same order
    ion_sources: list
    pKw: float
    CO2_partial_pressure_atm: float | None
    warnings: list[str] = field(default_factory=list)
    complexes: bool = True
    precipitate: tuple[str, ...] = ()
    ccpp_open_CO2_partial_pressure_atm: float | None = None
    ccpp_temperatures_C: tuple[float, ...] = ()
    uncertainty: bool = False


def _num(value, field_name: str, *, lo=None, hi=None) -> float:
    return number(value, field_name, lo=lo, hi=hi)


def _text(value, field_name: str, max_len: int = 80) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(sentence(f"Enter {describe(field_name)} as text."), field=field_name)
    return value.strip()[:max_len]


def _entry_list(scenario: dict, key: str, limit: int) -> list:
    entries = scenario.get(key, [])
    if entries is None:
        return []
    if not isinstance(entries, list):
        raise InputError(sentence(f"{describe(key)} must be a list of rows."), field=key)
    if len(entries) > limit:
        raise InputError(sentence(f"{describe(key)} holds {len(entries)} rows; at most {limit} are allowed. "
                                  "Remove some rows."), field=key)
    for i, e in enumerate(entries):
        if not isinstance(e, dict):
            raise InputError(sentence(f"{describe(f'{key}[{i}]')} must be a row with a choice and an amount."),
                             field=f"{key}[{i}]")
    return entries


def _total(entry: dict, unit, item, path: str) -> float:
    """The entry's total in mol/L: a number, not negative, within MAX_TOTAL_M."""
    raw = entry.get("total", 0.0)
    total = to_molar(raw, unit, item, f"{path}.total")
    if total > MAX_TOTAL_M:
        name = getattr(item, "name", None) or describe(path)
        in_unit = f"{fmt(MAX_TOTAL_M * float(raw) / total)} {unit} = " if isinstance(unit, str) and unit != "mol/L" else ""
        raise InputError(f"The amount of {name} must be at most {in_unit}{fmt(MAX_TOTAL_M)} mol/L "
                         f"(you entered {fmt(float(raw))} {unit}); no water holds more, and the activity models "
                         "end well below.", field=f"{path}.total")
    return total


def _lookup(getter, key, path: str, what: str, field: str | None = None):
    """A library entry by id, with errors naming ``field`` (default ``<path>.id``)."""
    field = field or f"{path}.id"
    if not isinstance(key, str):
        what = describe(path if field.endswith(".id") else field)
        raise InputError(f"Choose {what} from the list.", field=field)
    try:
        return getter(key)
    except UnknownIdError as exc:
        exc.field = field
        raise


def _custom(entry: dict, path: str, default_name: str) -> tuple[dict, str]:
    """The ``custom`` object of an entry and its name."""
    c = entry["custom"]
    if not isinstance(c, dict):
        raise InputError(sentence(f"{describe(path)} needs a name and its values."), field=f"{path}.custom")
    return c, _text(c.get("name", default_name), f"{path}.custom.name")


def _molar_mass(c: dict, path: str) -> float | None:
    """A custom entry's optional molar mass [g/mol]."""
    mm = c.get("molar_mass_g_per_mol")
    return None if mm is None else _num(mm, f"{path}.custom.molar_mass_g_per_mol", lo=0.5, hi=5000)


def _read_system(entry: dict, i: int, T: float, warnings: list[str]):
    path = f"systems[{i}]"
    unit = entry.get("unit", "mol/L")
    if "custom" in entry:
        c, name = _custom(entry, path, "custom acid")
        pKa_raw = c.get("pKa")
        if not isinstance(pKa_raw, list):
            raise InputError(f"Enter 1 to {MAX_STEPS} pKa values for {name}, such as 2.15; 7.20; 12.35.",
                             field=f"{path}.custom.pKa")
        pKa = _check_pKa(pKa_raw, f"{path}.custom.pKa")
        if any(b < a for a, b in zip(pKa, pKa[1:])):
            raise InputError(f"The pKa values of {name} must rise from step to step (list the first step first); "
                             f"you entered {'; '.join(fmt(v) for v in pKa)}.", field=f"{path}.custom.pKa")
        z0 = c.get("charge_most_protonated", 0)
        if isinstance(z0, bool) or not isinstance(z0, int) or not -10 <= z0 <= 10:
            raise InputError(f"The charge of the most protonated form of {name} must be a whole number from -10 "
                             f"to 10 (you entered {shown(z0)}).", field=f"{path}.custom.charge_most_protonated")
        mm = _molar_mass(c, path)
        src = CustomSystem(id=f"custom-{i}", name=name, mass_basis_g_per_mol=mm)
        names = tuple(generic_species_names(len(pKa), z0))
        total = _total(entry, unit, src, path)
        if abs(T - 298.15) > 0.5:
            warnings.append(f"{name}: custom pKa values are used as given (no temperature correction)")
        charges = tuple(z0 - k for k in range(len(pKa) + 1))
        comp = Component(key=src.id, name=name, species=names, charges=charges, pKa=pKa, total_M=total)
        return comp, src
    system = _lookup(library.get_system, entry.get("id"), path, "a library id")
    total = _total(entry, unit, system, path)
    pKa, notes = temperature.pKa_at_with_notes(system, T)
    warnings.extend(notes)
    return _library_component(system, pKa, total), system


def _library_component(system, pKa, total: float, fixed_first_M: float | None = None) -> Component:
    """Solver input for a library system with its pKa at the water's temperature."""
    return Component(
        key=system.id, name=system.name,
        species=tuple(s.formula for s in system.species),
        charges=tuple(s.charge for s in system.species),
        pKa=tuple(pKa), total_M=total,
        ion_sizes=tuple(s.ion_size_A for s in system.species),
        fixed_first_M=fixed_first_M,
    )


def _read_ion(entry: dict, i: int):
    path = f"ions[{i}]"
    unit = entry.get("unit", "mol/L")
    if "custom" in entry:
        c, name = _custom(entry, path, "custom ion")
        z = c.get("charge")
        if isinstance(z, bool) or not isinstance(z, int) or z == 0 or not -6 <= z <= 6:
            raise InputError(f"The charge of {name} must be a whole number from -6 to 6, not 0 (you entered "
                             f"{shown(z)}).", field=f"{path}.custom.charge")
        mm = _molar_mass(c, path)
        src = CustomIon(id=f"custom-ion-{i}", name=name, charge=z, molar_mass_g_per_mol=mm)
        conc = _total(entry, unit, src, path)
        return Ion(key=src.id, name=name, charge=z, conc_M=conc), src
    ion = _lookup(library.get_ion, entry.get("id"), path, "an ion id")
    linked = getattr(ion, "system", None)
    if linked:
        return None, (library.get_system(linked), _total(entry, unit, ion, path))
    conc = _total(entry, unit, ion, path)
    return Ion(key=ion.id, name=ion.formula, charge=ion.charge, conc_M=conc, ion_size_A=ion.ion_size_A), ion


def read_scenario(scenario: dict) -> Parsed:
    """Validate a scenario and turn it into solver inputs.

    Raises :class:`acidscape.errors.InputError` or :class:`UnknownIdError` naming the field.
    """
    if not isinstance(scenario, dict):
        raise InputError("The water could not be read: it must be a group of named values (a JSON object).",
                         field=None)
    warnings: list[str] = []
    unknown = sorted(set(scenario) - KNOWN_KEYS)
    if unknown:
        warnings.append("ignored unknown scenario keys: " + ", ".join(unknown))
    t_C = _num(scenario.get("temperature_C", 25.0), "temperature_C", lo=TEMPERATURE_RANGE_C[0], hi=TEMPERATURE_RANGE_C[1])
    T = t_C + T0
    model = scenario.get("activity", "davies")
    if model not in activity.MODELS:
        raise UnknownIdError(f"The activity model {shown(model)} is not offered; choose one of "
                             f"{', '.join(activity.MODELS)}.", field="activity")
    I_fixed = None
    I_source = "composition"
    given = [k for k in ("ionic_strength_M", "tds_mg_per_L", "conductance_uS_per_cm") if scenario.get(k) is not None]
    if len(given) > 1:
        raise InputError(f"Give only one of ionic strength, total dissolved solids or specific conductance; "
                         f"{' and '.join(describe(k).removeprefix('the ') for k in given)} were given.",
                         field=given[1])
    if given:
        key = given[0]
        if key == "ionic_strength_M":
            I_fixed = _num(scenario[key], key, lo=0.0, hi=6.0)
            I_source = "given"
        elif key == "tds_mg_per_L":
            I_fixed = activity.ionic_strength_from_tds(_num(scenario[key], key, lo=0.0, hi=300000.0))
            I_source = "estimated from TDS"
        else:
            I_fixed = activity.ionic_strength_from_conductance(_num(scenario[key], key, lo=0.0, hi=500000.0))
            I_source = "estimated from specific conductance"
    pH = scenario.get("pH")
    if pH is not None:
        pH = _num(pH, "pH", lo=PH_RANGE[0], hi=PH_RANGE[1])
    components, sources = [], []
    for i, entry in enumerate(_entry_list(scenario, "systems", MAX_SYSTEMS)):
        comp, src = _read_system(entry, i, T, warnings)
        components.append(comp)
        sources.append(src)
    ions, ion_sources = [], []
    seen = {c.key: f"systems[{k}]" for k, c in enumerate(components)}
    if len(seen) < len(components):
        key = next(c.key for k, c in enumerate(components) if seen[c.key] != f"systems[{k}]")
        name = next(c.name for c in components if c.key == key)
        raise InputError(f"{name} is listed twice among the acid-base systems; list it once (add the amounts).",
                         field=seen[key])
    for i, entry in enumerate(_entry_list(scenario, "ions", MAX_IONS)):
        ion, src = _read_ion(entry, i)
        if ion is None:  # an ion that is an acid-base system's base (sulfate)
            system, total = src
            if system.id in seen:
                raise InputError(f"{system.name} is listed twice ({describe(seen[system.id])} and "
                                 f"{describe(f'ions[{i}]')}); list it once (add the amounts).", field=f"ions[{i}].id")
            pKa, notes = temperature.pKa_at_with_notes(system, T)
            warnings.extend(notes)
            components.append(_library_component(system, pKa, total))
            sources.append(system)
            seen[system.id] = f"ions[{i}]"
            continue
        if ion.key in seen:
            raise InputError(f"{ion.name} is listed twice ({describe(seen[ion.key])} and {describe(f'ions[{i}]')}); "
                             "list it once (add the amounts).", field=f"ions[{i}].id")
        seen[ion.key] = f"ions[{i}]"
        ions.append(ion)
        ion_sources.append(src)
    pCO2 = None
    gas = scenario.get("gas")
    if gas is not None:
        if not isinstance(gas, dict):
            raise InputError("Enter the CO₂ partial pressure in atm (air holds about 0.00042 atm).", field="gas")
        if gas.get("CO2_partial_pressure_atm") is not None:
            pCO2 = _num(gas["CO2_partial_pressure_atm"], "gas.CO2_partial_pressure_atm", lo=0.0, hi=10.0)
            H2CO3 = 10.0 ** temperature.log10_KH_CO2(T) * pCO2
            idx = next((k for k, c in enumerate(components) if c.key == "carbonate"), None)
            if idx is None:
                system = library.get_system("carbonate")
                components.append(_library_component(system, temperature.pKa_at(system, T), 0.0, H2CO3))
                sources.append(system)
            else:
                c = components[idx]
                if c.total_M > 0:
                    warnings.append("The carbonate total is set by the CO₂ partial pressure (open system); "
                                    "the total given was not used.")
                components[idx] = dataclasses.replace(c, total_M=0.0, fixed_first_M=H2CO3)
    pKw = purewater.pKw(T)
    complexes = scenario.get("complexes", True)
    if not isinstance(complexes, bool):
        raise InputError("Ion pairs and complexes must be switched on or off (true or false).", field="complexes")
    return Parsed(T=T, temperature_C=t_C, model=model, I_fixed=I_fixed, I_source=I_source, pH=pH,
                  components=components, ions=ions, sources=sources, ion_sources=ion_sources, pKw=pKw,
                  CO2_partial_pressure_atm=pCO2, warnings=warnings, complexes=complexes,
                  precipitate=_read_precipitate(scenario), **_read_indices_options(scenario))


def _read_indices_options(scenario: dict) -> dict:
    """The options of the calcium carbonate indices (see acidscape.operations.indices)."""
    out: dict = {}
    p = scenario.get("ccpp_open_CO2_partial_pressure_atm")
    if p is not None:
        p = _num(p, "ccpp_open_CO2_partial_pressure_atm", lo=0.0, hi=10.0)
        if p <= 0.0:
            raise InputError("The CO₂ partial pressure for the open-system CCPP must be above 0 atm (air holds "
                             "about 0.00042 atm).", field="ccpp_open_CO2_partial_pressure_atm")
        out["ccpp_open_CO2_partial_pressure_atm"] = p
    temps = scenario.get("ccpp_temperatures_C")
    if temps is not None:
        if not isinstance(temps, list):
            temps = [temps]
        if len(temps) > 8:
            raise InputError(f"{len(temps)} further temperatures were given for the calcium carbonate indices; "
                             "at most 8 are allowed.", field="ccpp_temperatures_C")
        out["ccpp_temperatures_C"] = tuple(_num(t, f"ccpp_temperatures_C[{k}]", lo=TEMPERATURE_RANGE_C[0],
                                                hi=TEMPERATURE_RANGE_C[1])
                                           for k, t in enumerate(temps))
    unc = scenario.get("uncertainty", False)
    if not isinstance(unc, bool):
        raise InputError("The uncertainty switch must be on or off (true or false).", field="uncertainty")
    out["uncertainty"] = unc
    return out


def _read_precipitate(scenario: dict) -> tuple[str, ...]:
    """Solid ids allowed to precipitate, each checked against the database."""
    raw = scenario.get("precipitate")
    if raw is None:
        return ()
    if isinstance(raw, str):
        raw = [raw]
    if not isinstance(raw, list):
        raise InputError("Choose the solids allowed to form from the list (such as calcite).", field="precipitate")
    if len(raw) > 20:
        raise InputError(f"{len(raw)} solids were chosen to form; at most 20 are allowed.", field="precipitate")
    out = []
    for k, sid in enumerate(raw):
        solid = _lookup(library.get_solid, sid, "precipitate", "a solid id", field=f"precipitate[{k}]")
        if solid.id not in out:
            out.append(solid.id)
    return tuple(out)
