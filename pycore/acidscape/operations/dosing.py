"""Dose of a chemical that brings a water to a target pH, and the product feed at a plant.

A dose of d mol/L of a chemical adds fixed amounts of strong ions and of acid-base system
totals (``data/chemicals.csv``). The water after dosing is solved by the one equilibrium
model at the target pH (ion pairs and complexes included), and the dose is the root of its
charge, R(d) = 0 (:class:`acidscape.operations.mixture.Mixture`, without dilution: a plant
dose is per litre of water treated). Without complexes R is linear in d at fixed ionic
strength, so one Newton step gives the explicit dose

.. math::

    d = -\\frac{N(\\mathrm{pH})}{M(\\mathrm{pH})}, \\qquad
    N = [H^+] - [OH^-] + S + \\sum C_T \\bar z, \\qquad M = \\sum_j n_j z_j + \\sum_s n_s \\bar z_s,

(the same relation as the titration curves of :mod:`acidscape.operations.titration`); with
complexes, or as the ionic strength the dose adds changes the activity coefficients, a few
more steps follow. Solids named in ``precipitate`` (calcite after lime or soda ash) may
form as the dose is added: the water after is then at equilibrium with them, the dose
includes what they take up, and the result reports them. The target cannot be reached when

* the chemical moves the pH the other way (an acid to raise pH);
* the target lies beyond the pH the chemical approaches however much is dosed, where one
  more mole brings no charge (NaHCO3 near (pKa1 + pKa2)/2 = 8.3; a library acid near its
  own pH);
* the dose exceeds 5 mol/L (beyond any treatment and the activity models), or grows without
  bound because the salt it adds moves the pH back (activity corrections);
* for CO2, the dissolved H2CO3* after dosing would exceed its solubility under
  1 atm of pure CO2, K_H(T) x 1 atm (Plummer & Busenberg 1982 via
  :func:`acidscape.science.temperature.log10_KH_CO2`): more cannot stay dissolved.

Product feed: product dose = pure dose / (w/w strength); feed [kg/d] = product
dose [mg/L] x flow [L/d] x 1e-6; volume = mass / density. 1 US gallon =
3.785411784 L exactly (by definition, NIST Handbook 44 / SP 811, from memory);
MGD = 10^6 US gallons per day.

Gas exchange after dosing and temperature change are not modelled; a jar or bench test
confirms any dose. Every dose result carries :data:`CAUTIONS`.

Functions
---------
chemicals() -> dict[str, Chemical]         dosing chemicals and titrants (data/chemicals.csv)
get_chemical(id) -> Chemical               a chemical, or a library system's neutral species
flow_L_per_d(value, unit) -> float         plant flow in L/d
dose_amount(closed, chemical, target_pH, precipitate=()) -> (d, I)
dose_to_pH(closed, chemical, target_pH, ...) -> dict
"""

from __future__ import annotations

import copy
import functools
import math
from dataclasses import dataclass
from importlib.resources import files

from ..checks import MAX_FLOW_L_PER_D, choice, describe, fmt, number, sentence, shown
from ..constants import ATOMIC_WEIGHT
from ..data import library
from ..data.formula import molar_mass
from ..errors import InputError, UnknownIdError, UnreachableError
from ..science import temperature
from ..science.activity import VALIDITY_I_M
from ..science.tableau import SystemInput
from .alkalinity import (MG_CACO3_PER_MEQ, TOTAL_END_POINT_PH, end_point_alkalinity, equivalence_alkalinity,
                         reference_index, reference_levels)
from .closure import Closed
from .mixture import MAX_AMOUNT_M, PH_RANGE, Mixture, limit_pH_trace
from .probe import aqueous_totals, ionic_strength

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
#: The cautions that travel with every dose result (page, CLI, batch); common practice of
#: chemical handling in water treatment, worded here.
CAUTIONS = (
    "These doses are estimates from a chemical model of each water as described, not measurements.",
    "Caustics and acids burn skin and eyes: wear the protective equipment your site requires.",
    "Confirm a dose with a jar or bench test on the water itself before changing a chemical feed; "
    "change a feed in small steps.",
    "Guard against overfeed: keep pH alarms and monitoring working and limit the feed pumps.",
    "Local regulations, your permits and licensed operators decide what is dosed.",
)
#: The same in one line, for a table row.
CAUTION_LINE = ("Estimate only: PPE for caustics and acids; confirm by jar or bench test; guard against "
                "overfeed; local codes and licensed operators decide.")


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
        out = {}
        for key, _ in self.systems:
            s = library.get_system(key)
            out[key] = SystemInput(
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
    >>> list(chemicals())[:7]
    ['NaOH', 'HCl', 'H2SO4', 'Ca(OH)2', 'Na2CO3', 'NaHCO3', 'CO2']
    >>> chemicals()["Na2CO3"].alkalinity_eq_per_mol
    2.0
    """
    name, rows = library._rows(files("acidscape") / "data" / "chemicals.csv",
                               ("id", "name", "molar_mass_g_per_mol", "strong_ions", "systems"))
    out = {}
    for lineno, r in rows:
        where = f"{name} line {lineno}"
        mm = float(r["molar_mass_g_per_mol"])
        if abs(mm - molar_mass(r["id"])) > 0.01:
            raise library.LibraryDataError(f"{where}: molar mass {mm} disagrees with the formula "
                                           f"({molar_mass(r['id']):.3f})")
        ions = tuple((library.get_ion(i).id, n) for i, n in _pairs(r["strong_ions"], where))  # word ids
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
    table = chemicals()
    if isinstance(id, str) and id in table:
        return table[id]
    if isinstance(id, str) and id in library.systems():
        s = library.get_system(id)
        k = next((i for i, sp in enumerate(s.species) if sp.charge == 0), None)
        if k is None:
            raise InputError(f"{s.name} has no neutral form to add as a chemical; choose one of "
                             f"{', '.join(table)}.", field=field)
        sp = s.species[k]
        pairs = ((s.id, 1.0),)
        return Chemical(id=s.id, name=f"{sp.formula} ({s.name})", molar_mass_g_per_mol=sp.molar_mass_g_per_mol,
                        ions=(), ion_charges=(), systems=pairs,
                        alkalinity_eq_per_mol=_alkalinity_per_mol((), pairs), note="library system, neutral form")
    raise UnknownIdError(sentence(f"{describe(field)} {shown(id)} is not offered; choose one of "
                                  f"{', '.join(table)}, or an acid-base system of the library."), field=field)


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
        raise InputError("Choose the flow unit: " + ", ".join(FLOW_UNITS) + ".", field="flow_unit")
    if unit not in FLOW_UNITS:
        raise choice("flow_unit", unit, FLOW_UNITS, UnknownIdError)
    value = number(value, "flow")
    top = MAX_FLOW_L_PER_D / FLOW_UNITS[unit]
    if not 0.0 <= value <= top:
        raise InputError(f"The plant flow must be from 0 to {fmt(top)} {unit} (you entered {fmt(value)} {unit}); "
                         "no plant treats more.", field="flow")
    return float(value) * FLOW_UNITS[unit]


def _opt_number(value, field, lo, hi):
    """None, or a number in the half-open range (lo, hi]."""
    if value is None:
        return None
    return number(value, field, above=lo, hi=hi)


def _solids(precipitate) -> tuple[str, ...]:
    """Validate ``precipitate``: a list of solid ids of the database."""
    if precipitate is None:
        return ()
    if isinstance(precipitate, str) or not isinstance(precipitate, (list, tuple)):
        raise InputError("Choose the solids allowed to form from the list (such as calcite).", field="precipitate")
    known = {s.id for s in library.solids()}
    out = []
    for k, sid in enumerate(precipitate):
        if sid not in known:
            raise UnknownIdError(f"There is no solid {shown(sid)} in the library; choose the solids allowed to "
                                 "form from the list.", field="precipitate")
        if sid not in out:
            out.append(sid)
    return tuple(out)


@dataclass
class _Dose:
    d: float          # [mol/L]
    sol: object       # the water after, at the target pH
    mix: Mixture
    allow: tuple
    I: float          # ionic strength after [mol/L]


def _dose(closed: Closed, chem, target_pH: float, allow: tuple = ()) -> _Dose:
    """The dose and the water after (see :func:`dose_amount`)."""
    mix = Mixture(closed, chem, titrant_M=None, allow=allow)
    pH0, I0 = closed.sol.pH, closed.sol.I
    if abs(target_pH - pH0) < 1e-9:
        return _Dose(0.0, mix.solve(pH0, 0.0, I=I0, guess=closed.sol.state), mix, allow, I0)
    sol0 = mix.solve(pH0, 0.0, I=I0, guess=closed.sol.state)
    g0 = mix.charge_per_mol(sol0, 0.0)
    upward = g0 > 0
    role = "an acid" if g0 < 0 else ("a base" if g0 > 0 else "neutral")
    wrong_side = g0 == 0.0 or (target_pH > pH0) != upward
    if not wrong_side:
        sign = 1.0 if upward else -1.0
        ok = False
        if not allow:
            # Newton on (dose, I) at the target pH; trusted where the activity model holds (beyond
            # it the Davies equation turns upward and can invent a second crossing)
            d, sol, ok, I_after = mix.amount(target_pH, 0.0, I0=I0, guess=sol0.state, sign=sign,
                                             d_max=MAX_AMOUNT_M, exact=True)
            ok = ok and (mix.wm.model != "davies" or I_after <= VALIDITY_I_M["davies"])
        if not ok:
            limit = limit_pH_trace(mix, pH0, upward, target_pH, I0)
            if limit is not None:
                raise UnreachableError(
                    f"{chem.id} cannot bring this water to pH {target_pH:g}: however much is dosed, the pH only "
                    f"approaches {limit:.2f}. Choose a target pH short of {limit:.2f}.", field="target_pH")
            d, sol, ok, I_after = mix.amount(target_pH, 0.0, I0=I0, guess=sol0.state, sign=sign,
                                             d_max=MAX_AMOUNT_M, exact=True, robust=True)
    else:
        # Where the salt a dose adds moves the meter pH against the chemical's acid-base action
        # (activity corrections), a target on the "wrong" side can still be reached at some dose:
        # scan the dose for the first change of sign of the charge, then refine.
        d, sol, ok, I_after = _scan(mix, target_pH, I0, sol0.state)
        if not ok:
            raise UnreachableError(
                f"{chem.id} acts as {role} on this water (pH {pH0:.2f}): it "
                f"{'lowers' if g0 < 0 else 'raises' if g0 > 0 else 'does not change'} the pH and cannot bring "
                f"it to {target_pH:g}. Choose {'an acid' if target_pH < pH0 else 'a base'} for this target, or "
                "another target pH.", field="target_pH")
    if not ok:
        # no root up to the cap: either the root lies beyond it, or the dose grows without bound
        dR = None if sol.solids else mix.charge_per_mol(sol, d)
        beyond = -sol.charge_residual / dR + d if dR else math.inf
        if mix.stopped == "cap" and dR and (dR > 0) == upward and math.isfinite(beyond) and beyond > MAX_AMOUNT_M:
            raise UnreachableError(
                f"A target pH of {target_pH:g} needs {fmt(beyond)} mol/L of {chem.id}, more than the {fmt(MAX_AMOUNT_M)} mol/L "
                "this calculator accepts (beyond water treatment). Choose a target pH closer to the "
                "water's own.", field="target_pH")
        raise UnreachableError(
            f"{chem.id} cannot bring this water to pH {target_pH:g}: the more is dosed, the more salt it adds, "
            f"and the salt holds the pH back. Choose a target pH closer to the water's own.", field="target_pH")
    if chem.is_gas and "carbonate" in mix.wm.system_species:
        h2co3 = sol.conc[mix.wm.system_species["carbonate"][0]]
        sat = 10.0 ** temperature.log10_KH_CO2(mix.wm.T)
        if h2co3 > sat:
            raise UnreachableError(
                f"CO₂ cannot take this water down to pH {target_pH:g}: that needs {fmt(d * 1e3)} mmol/L, more "
                f"than dissolves under 1 atm of pure CO₂ ({fmt(sat * 1e3)} mmol/L at "
                f"{mix.wm.T - 273.15:.4g} °C). Choose a higher target pH, or an acid.", field="target_pH")
    return _Dose(d, sol, mix, allow, I_after)


def _scan(mix: Mixture, pH: float, I0: float, guess):
    """Smallest dose in (0, 5 mol/L] at which the charge at ``pH`` changes sign, refined; or not found.

    The charge is evaluated on a logarithmic grid (8 per decade from 1e-10 mol/L); the first
    change of sign brackets the root. Where the charge comes close to zero and turns back
    between grid points (a double root of a pH that passes through an extreme), the extreme is
    located by golden-section search and checked.
    """
    R0, _, sol = mix.charge_at(pH, 0.0, guess)
    s = 1.0 if R0 < 0.0 else -1.0           # orient so that the charge must rise to zero
    pts = [(0.0, s * R0)]
    for k in range(1, 81):
        d = MAX_AMOUNT_M * 10.0 ** ((k - 80) / 8.0)   # 1e-10 .. 5 mol/L
        R, _, sol = mix.charge_at(pH, d, sol.state)
        g = s * R
        if g > 0.0:
            dd, sol, ok = mix.root_between(pH, pts[-1][0], pts[-1][1], d, g, s, sol.state)
            return dd, sol, ok, sol.I
        if len(pts) >= 2 and pts[-1][1] > pts[-2][1] and pts[-1][1] > g:
            peak, gp, sol_p = mix._peak(pH, pts[-2][0], d, s, sol.state)
            if gp >= 0.0:
                dd, sol, ok = mix.root_between(pH, pts[-2][0], pts[-2][1], peak, gp, s, sol_p.state)
                return dd, sol, ok, sol.I
        pts.append((d, g))
    return 0.0, sol, False, I0


def dose_amount(closed, chem, target_pH: float, precipitate=()) -> tuple[float, float]:
    """Dose [mol/L] of ``chem`` that takes a closed water to ``target_pH``, and the ionic strength after.

    Parameters
    ----------
    closed : acidscape.operations.closure.Closed
        The closed water
    chem : Chemical
        What is dosed
    target_pH : float
        Target meter pH [-]
    precipitate : tuple of str
        Solids allowed to form as the dose is added

    Returns
    -------
    tuple of (float, float)
        Dose [mol/L] and ionic strength after [mol/L]

    Raises
    ------
    UnreachableError
        The target cannot be reached (see module notes)
    """
    allow = tuple(dict.fromkeys(tuple(getattr(closed, "precipitate", ())) + _solids(precipitate)))
    res = _dose(closed, chem, target_pH, allow)
    return res.d, res.I


def _key_of_ion(iid):
    try:
        ion = library.get_ion(iid)
    except Exception:  # a custom ion: no library key
        return None
    return ion.id


def _after_scenario(closed: Closed, chem, d: float, allow: tuple) -> dict:
    """The closed scenario with the dose added (totals of the entries it changes in mol/L)."""
    sc = copy.deepcopy(closed.scenario)
    wm = closed.wm
    systems = list(sc.get("systems") or [])
    ions = list(sc.get("ions") or [])

    def total_of(key):
        return wm.totals[wm.comp_index[key]] if key in wm.comp_index else 0.0

    for key, n in chem.systems:
        k = next((i for i, e in enumerate(systems) if isinstance(e, dict) and e.get("id") == key), None)
        if k is not None:
            systems[k] = dict(systems[k], total=total_of(key) + n * d, unit="mol/L")
            continue
        k = next((i for i, e in enumerate(ions) if isinstance(e, dict) and "id" in e
                  and getattr(_lib_ion(e["id"]), "system", None) == key), None)
        if k is not None:  # the system's base given as an ion ("sulfate")
            ions[k] = dict(ions[k], total=total_of(key) + n * d, unit="mol/L")
        else:
            systems.append({"id": key, "total": n * d, "unit": "mol/L"})
    for iid, n in chem.ions:
        key = _key_of_ion(iid)
        k = next((i for i, e in enumerate(ions) if isinstance(e, dict) and "id" in e
                  and _key_of_ion(e["id"]) == key), None)
        if k is not None:
            wm_key = key if key in wm.comp_index else ions[k]["id"]
            ions[k] = dict(ions[k], total=total_of(wm_key) + n * d, unit="mol/L")
        else:
            ions.append({"id": iid, "total": n * d, "unit": "mol/L"})
    sc["systems"] = systems
    sc["ions"] = ions
    if allow:
        sc["precipitate"] = list(allow)
    return sc


def _lib_ion(iid):
    try:
        return library.get_ion(iid)
    except Exception:
        return None


def _summary(wm, sol) -> dict:
    """pH, total alkalinity (to pH 4.5), DIC, CO2 and ionic strength of a solved water (dissolved part)."""
    T = aqueous_totals(sol)
    jc = wm.comp_index.get("carbonate")
    # total alkalinity as everywhere in the results: strong acid to the fixed end point pH 4.5;
    # the equivalence-point value beside it is the conservative one (it changes by exactly the
    # equivalents dosed)
    alk, _ = end_point_alkalinity(wm, sol, TOTAL_END_POINT_PH)
    eqp = equivalence_alkalinity(sol, reference_levels(wm, TOTAL_END_POINT_PH))
    h2co3 = sol.conc[wm.system_species["carbonate"][0]] if jc is not None else 0.0
    return {
        "pH": sol.pH,
        "total_alkalinity_meq_per_L": alk * 1e3,
        "total_alkalinity_mg_per_L_as_CaCO3": alk * 1e3 * MG_CACO3_PER_MEQ,
        "equivalence_alkalinity_meq_per_L": eqp * 1e3,
        "DIC_mmol_per_L": T[jc] * 1e3 if jc is not None else 0.0,
        "CO2_mg_per_L": h2co3 * (ATOMIC_WEIGHT["C"] + 2 * ATOMIC_WEIGHT["O"]) * 1e3,
        "ionic_strength_M": sol.I if wm.I_fixed is not None else ionic_strength(sol),
    }


def _calcite_warning(wm, sol, allow) -> list[str]:
    """A warning when the dosed water is oversaturated with calcite and calcite may not form.

    (Other solids are named in the description of the water after, ``water_after``.)
    """
    for s, si in sol.SI.items():
        sid = wm.tab.solids[s].id
        if sid == "calcite" and sid not in allow and si > 0.0:
            name = getattr(wm.solid_info[s], "name", sid)
            return [f"the dosed water is oversaturated with {name} (SI {si:+.2f}); it may precipitate and "
                    "take up more of the dose: add \"calcite\" to precipitate to include it"]
    return []


def product_feed(mg_per_L: float, strength: float | None, density: float | None, flow_Ld: float | None,
                 warnings: list[str]) -> dict | None:
    """The commercial product behind a dose of pure chemical, and its feed at a plant flow.

    Parameters
    ----------
    mg_per_L : float
        Dose of the pure chemical [mg/L]
    strength : float or None
        Product strength [% w/w]; None: no product (returns None)
    density : float or None
        Product density [kg/L]
    flow_Ld : float or None
        Plant flow [L/d]
    warnings : list of str
        Appended to when a feed cannot be given (no flow, or no density for a volume)

    Returns
    -------
    dict or None
        ``{"strength_pct", "density_kg_per_L", "product_mg_per_L", "feed_kg_per_d",
        "feed_L_per_h", "feed_gal_per_d"}`` (None where not known)

    Examples
    --------
    10 mg/L NaOH as 50 % liquor (1.525 kg/L) at 1,000 m3/d: 20 kg/d of product.

    >>> round(product_feed(10.0, 50.0, 1.525, 1e6, [])["feed_kg_per_d"], 6)
    20.0
    """
    if strength is None:
        return None
    prod = {"strength_pct": strength, "density_kg_per_L": density, "product_mg_per_L": mg_per_L / (strength / 100.0),
            "feed_kg_per_d": None, "feed_L_per_h": None, "feed_gal_per_d": None}
    if flow_Ld is None:
        warnings.append("give flow and flow_unit for the product feed in kg/d")
        return prod
    kg = prod["product_mg_per_L"] * flow_Ld * 1e-6
    prod["feed_kg_per_d"] = kg
    if density is not None:
        prod["feed_L_per_h"] = kg / density / 24.0
        prod["feed_gal_per_d"] = kg / density / L_PER_US_GALLON
    else:
        warnings.append("give density_kg_per_L for the product feed as a volume (L/h, gal/d)")
    return prod


def dose_to_pH(water, chemical: str, target_pH, *, strength_pct=None, density_kg_per_L=None,
               flow=None, flow_unit=None, precipitate=None, describe=None) -> dict:
    """Dose of a chemical that brings a water to a target pH, with the plant feed and the water after.

    Parameters
    ----------
    water : acidscape.operations.closure.Closed
        The closed water (:func:`acidscape.operations.closure.close_scenario` of the parsed
        scenario; ``measured``, ``pH`` and ``gas`` closed)
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
    precipitate : list of str, optional
        Solids (ids of the database, e.g. ``["calcite"]``) allowed to form as the dose is
        added, besides those the water's scenario allows
    describe : callable, optional
        ``describe(scenario) -> dict``: the boundary's full description of a water (its
        ``solve``), used for ``water_before`` and ``water_after``; without it those two keys
        are left out

    Returns
    -------
    dict
        ``dose_mmol_per_L``, ``dose_mg_per_L`` (pure chemical), ``dose_meq_per_L`` (alkalinity
        added), ``chemical``, ``initial_pH``, ``target_pH``, ``product`` (when strength is given:
        ``product_mg_per_L`` and, with flow, ``feed_kg_per_d``, ``feed_L_per_h``, ``feed_gal_per_d``
        (the last two need the density)), ``pure_chemical_kg_per_d`` (with flow), ``change``
        (before / after / change of pH, alkalinity, DIC, CO2, ionic strength of the dissolved
        water), ``precipitated`` (solids formed by the dose: ``id``, ``name``, ``mol_per_L``,
        ``mg_per_L``), ``precipitation`` (solids allowed, and the dose that would reach the
        target if none formed), ``scenario_after``, ``water_before``, ``water_after``
        (``describe`` results), ``cautions``, ``warnings``

    Raises
    ------
    UnreachableError
        The chemical cannot bring the water to the target
    InputError
        Strength outside (0, 100] %, density outside (0, 5] kg/L, negative flow, flow without unit

    Examples
    --------
    NaOH to neutralise 1 mmol/L HCl to pH 7 (ideal; stoichiometry: 1 mmol/L, common practice):

    >>> from types import SimpleNamespace
    >>> from acidscape.science.tableau import IonInput
    >>> from acidscape.operations.closure import close_scenario
    >>> parsed = SimpleNamespace(components=[], ions=[IonInput("Cl-", "Cl-", -1, 1e-3)], T=298.15,
    ...                          pKw=13.995, model="ideal", I_fixed=None, complexes=False, pH=3.0,
    ...                          CO2_partial_pressure_atm=None, precipitate=(), warnings=[])
    >>> out = dose_to_pH(close_scenario({"pH": 3.0, "ions": [{"id": "Cl-", "total": 1e-3}]}, parsed),
    ...                  "NaOH", 7.0)
    >>> round(out["dose_mmol_per_L"], 4)
    1.0
    >>> len(out["cautions"]) > 0
    True
    """
    chem = get_chemical(chemical, field="chemical")
    target_pH = number(target_pH, "target_pH", lo=PH_RANGE[0], hi=PH_RANGE[1])
    strength = _opt_number(strength_pct, "strength_pct", 0.0, 100.0)
    density = _opt_number(density_kg_per_L, "density_kg_per_L", 0.0, 5.0)
    flow_Ld = None
    if flow is not None or flow_unit is not None:
        if flow is None:
            raise InputError("Enter the plant flow, or clear the flow unit.", field="flow")
        flow_Ld = flow_L_per_d(flow, flow_unit)
    asked = _solids(precipitate)
    if not isinstance(water, Closed):
        raise InputError("The water could not be read.", field="scenario")
    closed = water
    allow = tuple(dict.fromkeys(tuple(closed.precipitate) + asked))
    res = _dose(closed, chem, target_pH, allow)
    d = res.d
    warnings = list(closed.notes)
    mg = d * chem.molar_mass_g_per_mol * 1e3
    out = {
        "chemical": chem.as_json(),
        "initial_pH": closed.sol.pH,
        "target_pH": target_pH,
        "dose_mmol_per_L": d * 1e3,
        "dose_mg_per_L": mg,
        "dose_meq_per_L": d * chem.alkalinity_eq_per_mol * 1e3,
    }
    if flow_Ld is not None:
        out["flow"] = {"value": float(flow), "unit": flow_unit, "L_per_d": flow_Ld, "m3_per_d": flow_Ld / 1e3}
        out["pure_chemical_kg_per_d"] = mg * flow_Ld * 1e-6
    if strength is not None:
        out["product"] = product_feed(mg, strength, density, flow_Ld, warnings)
    b, a = _summary(closed.wm, closed.sol), _summary(res.mix.wm, res.sol)
    out["change"] = {k: {"before": b[k], "after": a[k], "change": a[k] - b[k]} for k in b}
    # solids formed by the dose (beyond what the water held before)
    before = {closed.wm.tab.solids[s].id: n for s, n in closed.sol.solids.items()}
    formed = []
    for s, n in sorted(res.sol.solids.items()):
        info = res.mix.wm.solid_info[s]
        dn = n - before.get(info.id, 0.0)
        mm = getattr(info, "molar_mass_g_per_mol", None)
        formed.append({"id": info.id, "name": getattr(info, "name", info.id), "mol_per_L": dn,
                       "mg_per_L": dn * mm * 1e3 if mm else None})
    out["precipitated"] = formed
    without = None
    if formed:
        try:
            without = _dose(closed, chem, target_pH, ()).d * 1e3
        except UnreachableError:
            without = None
        warnings.append("the dose includes what the solids formed take up: "
                        + ", ".join(f"{f['name']} {f['mol_per_L'] * 1e3:.4g} mmol/L" for f in formed))
    out["precipitation"] = {
        "allowed": list(allow),
        "dose_without_precipitation_mmol_per_L": without,
        "note": "solids allowed to form reach equilibrium (SI 0) in the water after; a formed solid is "
                "assumed to stay in contact with the water" if allow else "no solid was allowed to form",
    }
    calcite = _calcite_warning(res.mix.wm, res.sol, allow)
    warnings.extend(calcite)
    warnings.extend(w for w in res.sol.warnings if w not in warnings)
    out["scenario_after"] = _after_scenario(closed, chem, d, allow)
    if describe is not None:
        before_desc = describe(closed.scenario)
        after_desc = describe(out["scenario_after"])
        out["water_before"] = before_desc
        out["water_after"] = after_desc
        warnings.extend(w for w in after_desc.get("warnings", [])
                        if w not in warnings and not (calcite and "alcite" in w))
    out["cautions"] = list(CAUTIONS)
    out["warnings"] = warnings
    return out
