"""The JSON methods: plain dicts in, plain dicts out (the page reaches them through
:func:`acidscape.boundary.dispatch.handle`).

Functions
---------
solve(scenario) -> dict                 a water's equilibrium, indices and every table
water(params), titrate(params), dose(params), buffer(params), treat(params), blend(params),
soften(params), solubility(params), conditional_constants(params), distribution(params), scale_curves(params)
version_info() -> dict                  package version
read_water(scenario), ordinary_scenario(scenario), water_request(params)    readers shared with batch and dispatch

Every function validates its input and raises :mod:`acidscape.errors` classes, which
:func:`acidscape.boundary.dispatch.handle` turns into ``{"ok": false, "error": {...}}``.
"""

from __future__ import annotations

import functools
import math

from .._version import __version__
from ..checks import MAX_SAMPLE_ML, MAX_TOTAL_M, PH_RANGE, choice, fmt, missing, number, range_words, shown, whole
from ..errors import AcidscapeError, InputError, UnknownIdError
from ..science import temperature
from ..science.speciation import MAX_STEPS, _check_pKa, alpha_curve, alpha_fractions, generic_species_names

#: Largest pH grid a curve request may ask for.
MAX_POINTS = 5001


def version_info() -> dict:
    """Package version, for the page footer and reports (the page adds the version of its
    worker protocol, which is written once, in site/py.js)."""
    return {"acidscape": __version__}


def _number(params: dict, key: str, default=None, *, lo=None, hi=None, field=None) -> float:
    field = field or key
    value = params.get(key, default)
    if value is None:
        raise missing(field, range_words(lo, hi) if lo is not None or hi is not None else "")
    return number(value, field, lo=lo, hi=hi, allow_text=True)


def _integer(params: dict, key: str, default=None, *, lo=None, hi=None) -> int:
    return whole(params.get(key, default), key, lo=lo, hi=hi)


def _acid_from_params(params: dict) -> tuple[str, list[str], list[int], tuple[float, ...]]:
    """Resolve ``{"system": id}`` or ``{"pKa": [...], "charge_most_protonated": z}``."""
    if params.get("system"):
        from ..data.library import get_system

        system_id = params["system"]
        if not isinstance(system_id, str):
            raise InputError("Choose the acid from the list.", field="system")
        try:
            system = get_system(system_id)
        except UnknownIdError as exc:
            exc.field = "system"
            raise
        names = [s.formula for s in system.species]
        charges = [s.charge for s in system.species]
        return system.name, names, charges, tuple(system.pKa_25C)
    pKa = params.get("pKa")
    if pKa is None:
        raise InputError(f"Enter 1 to {MAX_STEPS} pKa values, such as 4.76 or 2.15; 7.20; 12.35.", field="pKa")
    if not isinstance(pKa, (list, tuple)):
        raise InputError("The pKa values must be numbers, such as 4.76 or 2.15; 7.20; 12.35.", field="pKa")
    pKa = _check_pKa(pKa)
    if any(b < a for a, b in zip(pKa, pKa[1:])):
        raise InputError(
            "The pKa values must rise from step to step (list the first step first); you entered "
            + "; ".join(fmt(v) for v in pKa) + ".",
            field="pKa",
        )
    z0 = _integer(params, "charge_most_protonated", 0, lo=-10, hi=10)
    name = params.get("name") or "custom acid"
    if not isinstance(name, str):
        raise InputError("Enter the name of the acid as text.", field="name")
    names = generic_species_names(len(pKa), z0)
    charges = [z0 - i for i in range(len(pKa) + 1)]
    return name[:80], names, charges, pKa


def distribution(params: dict) -> dict:
    """Alpha-fraction curves of one acid and a species table at one pH (25 °C, I = 0).

    Parameters (keys of ``params``)
    -------------------------------
    system : str, optional
        Library id; otherwise ``pKa`` [-] and ``charge_most_protonated`` [-] describe the acid.
    total_M : float
        Total concentration of the acid [mol/L] (default 1e-3)
    pH : float
        pH of the species table [-] (default 7)
    pH_min, pH_max : float
        Range of the curve [-] (default 0..14)
    points : int
        Number of pH values in the curve (default 561)

    Returns
    -------
    dict
        ``{"name", "pKa", "species": [{"name", "charge"}], "curve": {"pH": [...],
        "fractions": [[...] per species]}, "table": {"pH", "rows": [{"name", "charge",
        "fraction", "concentration_M", "log10_concentration_M"}]}}``

    Examples
    --------
    >>> out = distribution({"pKa": [2.148, 7.198, 12.35], "total_M": 1e-3, "pH": 7.198, "points": 3})
    >>> [r["name"] for r in out["table"]["rows"]]
    ['H3A', 'H2A-', 'HA-2', 'A-3']
    >>> round(out["table"]["rows"][1]["fraction"], 3)
    0.5
    """
    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    name, names, charges, pKa = _acid_from_params(params)
    total = _number(params, "total_M", 1e-3, lo=0.0, hi=MAX_TOTAL_M)
    pH = _number(params, "pH", 7.0, lo=PH_RANGE[0], hi=PH_RANGE[1])
    pH_min = _number(params, "pH_min", 0.0, lo=PH_RANGE[0], hi=PH_RANGE[1])
    pH_max = _number(params, "pH_max", 14.0, lo=PH_RANGE[0], hi=PH_RANGE[1])
    if pH_max <= pH_min:
        raise InputError(f"The highest pH of the plot ({pH_max:g}) must be above the lowest ({pH_min:g}).",
                         field="pH_max")
    points = _integer(params, "points", 561, lo=2, hi=MAX_POINTS)
    step = (pH_max - pH_min) / (points - 1)
    grid = [pH_min + k * step for k in range(points)]
    grid[-1] = pH_max
    fractions = alpha_curve(grid, pKa)
    alphas = alpha_fractions(pH, pKa)
    rows = []
    for nm, z, a in zip(names, charges, alphas):
        c = total * a
        rows.append(
            {
                "name": nm,
                "charge": z,
                "fraction": a,
                "concentration_M": c,
                "log10_concentration_M": math.log10(c) if c > 0 else None,
            }
        )
    return {
        "name": name,
        "pKa": list(pKa),
        "total_M": total,
        "species": [{"name": nm, "charge": z} for nm, z in zip(names, charges)],
        "curve": {"pH": grid, "fractions": fractions},
        "table": {"pH": pH, "rows": rows},
    }


def ordinary_scenario(scenario: dict):
    """A scenario read, a measured pH and alkalinity closed into an ordinary scenario first.

    Parameters
    ----------
    scenario : dict
        A scenario (:mod:`acidscape.boundary.scenario`), with or without ``measured``

    Returns
    -------
    (dict, acidscape.boundary.scenario.Parsed, dict or None)
        The ordinary scenario (the one given when it has no ``measured``; else one with the
        carbonate total and balancing ion the measurements give), its parsed water, and what
        the measurements gave (None for an ordinary scenario).

    Examples
    --------
    A lab report of pH 7.9 and 150 mg/L as CaCO3 alkalinity becomes a carbonate total:

    >>> sc, parsed, inferred = ordinary_scenario({
    ...     "measured": {"pH": 7.9, "alkalinity": {"value": 150, "unit": "mg/L as CaCO3"}},
    ...     "ions": [{"id": "calcium", "total": 60, "unit": "mg/L"}]})
    >>> [s["id"] for s in sc["systems"]], round(inferred["DIC_M"] * 1e3, 2)
    (['carbonate'], 3.05)
    """
    from ..operations.closure import read_measured, resolve_measured
    from .scenario import read_scenario

    inferred = None
    if isinstance(scenario, dict) and scenario.get("measured") is not None:
        base, measured = read_measured(scenario)
        scenario, inferred = resolve_measured(base, read_scenario(base), measured)
    return scenario, read_scenario(scenario), inferred


def read_water(scenario: dict):
    """A scenario read and, when it gives a measured pH and alkalinity, closed first.

    Returns ``(parsed, inferred)``: the parsed ordinary water and what was inferred from the
    measurements (None for an ordinary scenario).
    """
    _, parsed, inferred = ordinary_scenario(scenario)
    return parsed, inferred


def _closed_water(scenario: dict):
    """The closed, electroneutral water of a scenario (for titration and dosing)."""
    from ..operations.closure import close_scenario

    scenario, parsed, inferred = ordinary_scenario(scenario)
    closed = close_scenario(scenario, parsed, inferred)
    if inferred is not None:
        closed.inferred = inferred
    return closed


#: Solids whose oversaturation is named in a warning: the scales and sludges that form in
#: water treatment and distribution within hours to days (common practice). Others, such as
#: dolomite, are often oversaturated in natural waters without forming; they stay in the
#: saturation table.
SCALE_SOLIDS = ("calcite", "brucite", "gypsum", "barite", "cerussite", "hydrocerussite", "hydroxypyromorphite",
                "malachite", "tenorite", "copper-hydroxide", "siderite", "rhodochrosite",
                "ferrihydrite", "amorphous-aluminium-hydroxide")

#: Saturation index above which a warning names the solid (a margin for the constants' spread).
SI_WARNING = 0.3


def _oversaturation_notes(saturation: list[dict], allowed: tuple[str, ...]) -> list[str]:
    """A warning for each scale-forming solid that is oversaturated but not allowed to form."""
    notes = []
    for row in saturation:
        if row["id"] in SCALE_SOLIDS and row["SI"] > SI_WARNING and row["id"] not in allowed:
            notes.append(f"{row['name']} is oversaturated (saturation index {row['SI']:+.2f}) and may "
                         f"precipitate; name it in precipitate to let it form")
    return notes


def water_model(parsed):
    """The tableau of a parsed scenario (:class:`acidscape.science.tableau.WaterModel`)."""
    from ..science.tableau import WaterModel

    return WaterModel(parsed.components, parsed.ions, T=parsed.T, pKw=parsed.pKw, model=parsed.model,
                      complexes=parsed.complexes, I_fixed=parsed.I_fixed)


def solve(scenario: dict, _state: dict | None = None, *, headline: bool = False) -> dict:
    """Equilibrium (or fixed-pH speciation) of a water described by a scenario.

    See :mod:`acidscape.boundary.scenario` for the keys. The result holds ``pH``,
    ``temperature_C``, ``ionic_strength_M``, ``pKw``, ``species`` (every aqueous species:
    each system's species from most to least protonated, free ions, complexes; with
    ``name``, ``system``, ``kind``, ``charge``, ``concentration_M``, ``activity_M``,
    ``activity_coefficient``, ``fraction``, ``holds``), ``components`` (total, free,
    complexed and precipitated of each), ``saturation``, ``precipitated``, ``residuals``,
    ``charge_balance_residual_eq_per_L``, ``warnings``, plus ``systems``, ``ions``,
    ``water_ions`` and ``trail`` (each charge-balance term). ``headline=True`` leaves out the
    two equivalence-point pH values of the alkalinity report (None; the page's first answer,
    see :func:`acidscape.boundary.dispatch.stages`).

    Examples
    --------
    A 1 mmol/L acetic acid solution, ideal activities (Goldberg et al. 2002 pKa 4.756):
    the textbook quadratic gives pH 3.91 (Harris, Quantitative Chemical Analysis, ch. 9).

    >>> out = solve({"activity": "ideal", "systems": [{"id": "acetic", "total": 1, "unit": "mmol/L"}]})
    >>> round(out["pH"], 2)
    3.91
    """
    from ..operations.closure import warm_start
    from . import results

    parsed, inferred = read_water(scenario)
    wm = water_model(parsed)
    sol = wm.solve(pH=parsed.pH, allow_solids=parsed.precipitate, guess=warm_start(wm, inferred))
    if _state is not None:  # callers inside the package may want the solved state too
        _state["parsed"], _state["model"], _state["solution"] = parsed, wm, sol
    warnings = list(parsed.warnings) + results.condense_notes(wm.notes_that_matter(sol)) + sol.warnings
    molal = temperature.molal_to_molar_note(parsed.T)
    if molal:
        warnings.append(molal)
    from ..science.activity import VALIDITY_I_M

    limit = VALIDITY_I_M.get(parsed.model)
    if limit is not None and sol.I > limit:
        warnings.append(
            f"ionic strength {sol.I:.3g} mol/L exceeds the {parsed.model} model's usual validity "
            f"(about {limit:g} mol/L); activities are less reliable"
        )
    if parsed.pH is not None:
        charges = sum(abs(sp.charge) * c for sp, c in zip(wm.tab.species, sol.conc))
        if charges > 0 and abs(sol.charge_residual) > 0.05 * 0.5 * charges:
            warnings.append(
                f"at the given pH the water's charges do not balance: {sol.charge_residual * 1e3:+.3g} meq/L, "
                f"{abs(sol.charge_residual) / (0.5 * charges):.0%} of its ions; a measured water usually holds "
                "ions that were not entered"
            )
    warnings.extend(_oversaturation_notes(results.saturation_rows(wm, sol), parsed.precipitate))
    systems_out = []
    for comp in parsed.components:
        lg = [sol.log10_gamma[i] for i in wm.system_species[comp.key]]
        systems_out.append({
            "id": comp.key,
            "name": comp.name,
            "total_M": sol.totals[wm.comp_index[comp.key]],
            "pKa": list(comp.pKa),
            "pKa_conditional": [pk + lg[k + 1] - lg[k] for k, pk in enumerate(comp.pKa)],
            "open_to_gas": comp.fixed_first_M is not None,
        })
    ions_out = []
    for ion in parsed.ions:
        i = wm.ion_species[ion.key]
        c = sol.conc[i]
        g = 10.0 ** sol.log10_gamma[i]
        ions_out.append({"name": ion.name, "id": ion.key, "charge": ion.charge, "concentration_M": c,
                         "total_M": ion.conc_M, "activity_M": g * c, "activity_coefficient": g})
    gH, gOH = 10.0 ** sol.log10_gamma[0], 10.0 ** sol.log10_gamma[1]
    names = {c.key: c.name for c in parsed.components}
    names.update({src.id: getattr(src, "name", src.id) for src in parsed.ion_sources})
    masses = results.component_masses(wm, parsed.sources, parsed.ion_sources)
    result = {
        "pH": sol.pH,
        "pH_was_given": parsed.pH is not None,
        "temperature_C": parsed.temperature_C,
        "activity": parsed.model,
        "complexes": parsed.complexes,
        "ionic_strength_M": sol.I,
        "ionic_strength_source": parsed.I_source,
        "pKw": parsed.pKw,
        "species": results.species_rows(wm, sol, masses),
        "components": results.component_rows(wm, sol, names),
        "systems": systems_out,
        "ions": ions_out,
        "water_ions": [
            {"name": "H+", "charge": 1, "concentration_M": sol.conc[0], "activity_M": gH * sol.conc[0],
             "activity_coefficient": gH},
            {"name": "OH-", "charge": -1, "concentration_M": sol.conc[1], "activity_M": gOH * sol.conc[1],
             "activity_coefficient": gOH},
        ],
        "saturation": results.saturation_rows(wm, sol),
        "precipitated": results.precipitated_rows(wm, sol),
        "residuals": results.residual_report(wm, sol),
        "charge_balance_residual_eq_per_L": sol.charge_residual,
        "trail": results.trail_rows(wm, sol),
        "iterations": sol.iterations,
        "warnings": warnings,
    }
    if parsed.CO2_partial_pressure_atm is not None:
        result["CO2_partial_pressure_atm"] = parsed.CO2_partial_pressure_atm
    from ..operations.alkalinity import alkalinity_report
    from ..operations.buffer import buffer_intensity

    result["alkalinity"] = alkalinity_report(wm, sol, equivalence_pH_too=not headline)
    result["buffer_intensity_eq_per_L_per_pH"] = buffer_intensity(wm, sol)
    result["buffer_intensity_basis"] = "closed water at its ionic strength, per unit of meter pH"
    if inferred is not None:
        result["inferred_from_measurements"] = inferred
    # calcium carbonate indices: pHs, LSI, RSI, CCPP (Standard Methods 2330); null without Ca or carbonate
    from ..operations.indices import calcium_carbonate

    result["calcium_carbonate"], cc_warnings = calcium_carbonate(
        wm, sol, pH_given=parsed.pH, allow_solids=parsed.precipitate,
        open_CO2_partial_pressure_atm=parsed.ccpp_open_CO2_partial_pressure_atm,
        temperatures_C=parsed.ccpp_temperatures_C, uncertainty=parsed.uncertainty)
    warnings.extend(cc_warnings)
    return result


def water_request(params: dict) -> tuple[dict, list[float]]:
    """The water and the pH grid of its curves, read from a request of :func:`water` (and of
    the page's staged ``water_view``, :func:`acidscape.boundary.dispatch.stages`).

    Parameters
    ----------
    params : dict
        A scenario plus optional ``curve`` ``{"pH_min", "pH_max", "points"}`` (default 0 to
        14, 281 points; both ends within :data:`acidscape.checks.PH_RANGE`)

    Returns
    -------
    (dict, list of float)
        The scenario (``params`` without ``curve``) and the pH values of the curves [-]

    Raises
    ------
    InputError
        In words, beside the curve setting that is wrong.

    Examples
    --------
    >>> scenario, grid = water_request({"systems": [{"id": "acetic", "total": 1}], "curve": {"points": 3}})
    >>> scenario, grid
    ({'systems': [{'id': 'acetic', 'total': 1}]}, [0.0, 7.0, 14.0])
    >>> water_request({"curve": {"pH_min": -1}})
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: The lowest pH of the plot must be from 0 to 14 (you entered -1).
    """
    from ..operations.curves import pH_grid

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    curve = params.get("curve") or {}
    if not isinstance(curve, dict):
        raise InputError("The curve settings must give the lowest and highest pH and the number of points.",
                         field="curve")
    scenario = {k: v for k, v in params.items() if k != "curve"}
    grid = pH_grid(
        _number(curve, "pH_min", 0.0, lo=PH_RANGE[0], hi=PH_RANGE[1], field="curve.pH_min"),
        _number(curve, "pH_max", 14.0, lo=PH_RANGE[0], hi=PH_RANGE[1], field="curve.pH_max"),
        _integer(curve, "points", 281, lo=2, hi=MAX_POINTS),
    )
    return scenario, grid


def water(params: dict) -> dict:
    """A water's equilibrium plus its curves against pH (for the page's plots).

    ``params`` is a scenario plus optional ``curve`` ``{"pH_min", "pH_max", "points"}``.
    Returns ``{"result": <solve result>, "curves": <acidscape.operations.curves.water_curves>}``.

    Examples
    --------
    >>> out = water({"systems": [{"id": "ammonium", "total": 1, "unit": "mmol/L"}], "curve": {"points": 5}})
    >>> out["curves"]["pH"]
    [0.0, 3.5, 7.0, 10.5, 14.0]
    """
    from ..operations.curves import water_curves

    scenario, grid = water_request(params)
    state: dict = {}
    result = solve(scenario, state)
    return {"result": result, "curves": water_curves(state["model"], state["solution"], grid)}


def _scenario_param(params: dict) -> dict:
    sc = params.get("scenario")
    if not isinstance(sc, dict):
        raise InputError("The water could not be read: it must be a group of named values (a JSON object).",
                         field="scenario")
    return sc


def titrate(params: dict) -> dict:
    """Titration curve of a water (see :func:`acidscape.operations.titration.titration_curve`).

    ``params``: ``scenario`` (object), ``titrant`` (id), optional ``titrant_M`` [mol/L]
    (default 0.1), ``sample_mL`` [mL] (default 100), ``to_pH`` [-], ``points`` (default 400).
    Titrant ``"EDTA"`` or a ``fixed_pH`` gives the hardness titration at a buffered pH instead
    (:func:`acidscape.operations.hardness.edta_titration`; ``fixed_pH`` default 10, ``to_mL``).

    Examples
    --------
    >>> out = titrate({"scenario": {"activity": "ideal", "ions": [{"id": "Cl-", "total": 1e-3}], "pH": 3},
    ...                "titrant": "NaOH", "titrant_M": 0.01, "sample_mL": 100, "to_pH": 10, "points": 101})
    >>> round(out["equivalence_points"][0]["titrant_mL"], 2)
    10.0
    """
    from ..operations.titration import DEFAULT_POINTS, titration_curve

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    titrant = params.get("titrant")
    if not isinstance(titrant, str):
        raise InputError("Choose the titrant from the list (such as NaOH or HCl).", field="titrant")
    if titrant.strip().upper() == "EDTA" or params.get("fixed_pH") is not None:
        return _edta_titration(params, titrant)
    to_pH = params.get("to_pH")
    out = titration_curve(
        _closed_water(_scenario_param(params)), titrant,
        titrant_M=_number(params, "titrant_M", 0.1, lo=1e-9, hi=MAX_TOTAL_M),
        sample_mL=_number(params, "sample_mL", 100.0, lo=1e-6, hi=MAX_SAMPLE_ML),
        to_pH=None if to_pH is None else _number(params, "to_pH", lo=PH_RANGE[0], hi=PH_RANGE[1]),
        points=_integer(params, "points", DEFAULT_POINTS, lo=3, hi=MAX_POINTS),
    )
    _end_point_alkalinity(out)
    return out


def _end_point_alkalinity(out: dict) -> None:
    """Add to each end point of a titration what it measures, in mg/L as CaCO3.

    Standard Methods 2320 B: alkalinity [mg/L as CaCO3] = A x N x 50 000 / mL of sample,
    i.e. the equivalents of acid added per litre of sample times 50.04 mg CaCO3/meq. Titrated
    with an acid that is the alkalinity to that pH; with a base it is the acidity. Each point
    gets ``measures`` ("alkalinity" or "acidity") and ``as_CaCO3_mg_per_L``; nothing is added
    for a titrant that brings no equivalents (``alkalinity_eq_per_mol`` = 0).

    Examples
    --------
    >>> out = {"titrant": {"alkalinity_eq_per_mol": -1.0}, "fixed_end_points": [{"dose_mmol_per_L": 1.0}],
    ...        "equivalence_points": [], "half_equivalence_points": []}
    >>> _end_point_alkalinity(out); round(out["fixed_end_points"][0]["as_CaCO3_mg_per_L"], 2)
    50.04
    """
    from ..operations.alkalinity import meq_to_mg_as_CaCO3

    eq_per_mol = out.get("titrant", {}).get("alkalinity_eq_per_mol") or 0.0
    if not eq_per_mol:
        return
    measures = "alkalinity" if eq_per_mol < 0 else "acidity"
    for key in ("fixed_end_points", "equivalence_points", "half_equivalence_points"):
        for point in out.get(key, []):
            point["measures"] = measures
            point["as_CaCO3_mg_per_L"] = meq_to_mg_as_CaCO3(abs(point["dose_mmol_per_L"] * eq_per_mol))


#: Product presets (data/products.csv): the columns every row has.
_PRODUCT_COLUMNS = ("id", "chemical", "name", "strength_pct", "density_kg_per_L", "temperature_C", "source",
                    "provenance")


def products(params: dict | None = None) -> dict:
    """Commercial products of the dosing chemicals, for presets of strength and density.

    Read from ``data/products.csv``; each row names its chemical (``chemicals.csv``) and its
    source (``sources.csv``), whose full reference is returned with it.

    Returns
    -------
    dict
        ``{"products": [{"id", "chemical", "name", "strength_pct" [% w/w],
        "density_kg_per_L" [kg/L], "temperature_C" [°C], "source" (full reference),
        "source_key", "provenance", "note"}]}``

    Examples
    --------
    >>> p = {r["id"]: r for r in products()["products"]}
    >>> p["naoh-50"]["chemical"], p["naoh-50"]["strength_pct"], p["naoh-50"]["density_kg_per_L"]
    ('NaOH', 50.0, 1.525)
    """
    return {"products": [dict(r) for r in _product_rows()]}


@functools.cache
def _product_rows() -> tuple:
    """The rows of data/products.csv, checked (chemical and source ids resolve), parsed once."""
    from importlib.resources import files

    from ..data import library
    from ..operations.dosing import chemicals

    name, rows = library._rows(files("acidscape") / "data" / "products.csv", _PRODUCT_COLUMNS)
    known, refs = chemicals(), library.sources()
    out = []
    for lineno, r in rows:
        where = f"{name} line {lineno}"
        if r["chemical"] not in known:
            raise library.LibraryDataError(f"{where}: chemical {r['chemical']!r} is not in chemicals.csv")
        if r["source"] not in refs:
            raise library.LibraryDataError(f"{where}: source {r['source']!r} is not in sources.csv")
        try:
            strength, density, temp = (float(r[k]) for k in ("strength_pct", "density_kg_per_L", "temperature_C"))
        except ValueError:
            raise library.LibraryDataError(f"{where}: strength, density and temperature must be numbers") from None
        if not (0 < strength <= 100 and 0.8 < density < 2.5):
            raise library.LibraryDataError(f"{where}: strength {strength} % or density {density} kg/L is impossible")
        out.append({"id": r["id"], "chemical": r["chemical"], "name": r["name"], "strength_pct": strength,
                    "density_kg_per_L": density, "temperature_C": temp, "source": refs[r["source"]].text,
                    "source_key": r["source"], "provenance": r["provenance"], "note": r.get("note", "")})
    return tuple(out)


def dose(params: dict) -> dict:
    """Dose to a target pH (see :func:`acidscape.operations.dosing.dose_to_pH`).

    ``params``: ``scenario``, ``chemical`` (id), ``target_pH``, optional ``strength_pct`` [% w/w],
    ``density_kg_per_L`` [kg/L], ``flow`` and ``flow_unit`` (m3/d, m3/h, L/s, L/min, MGD, gpm).
    ``target_LSI`` or ``target_CCPP`` [mg/L as CaCO3] instead of ``target_pH`` dose to a
    calcium carbonate index (:func:`acidscape.operations.treatment.dose_to_target`; its result
    shape is described there); ``precipitate`` names the solids that may form.
    """
    from ..operations.dosing import dose_to_pH

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    chem = params.get("chemical")
    if not isinstance(chem, str):
        raise InputError("Choose the chemical from the list (such as NaOH).", field="chemical")
    opt = {k: (None if params.get(k) is None else _number(params, k)) for k in
           ("strength_pct", "density_kg_per_L", "flow")}
    targets = [k for k in ("target_pH", "target_LSI", "target_CCPP") if params.get(k) is not None]
    if len(targets) > 1:
        raise InputError("Give one target: a pH, an LSI or a CCPP, not several.", field=targets[1])
    if targets and targets[0] != "target_pH":
        from ..operations.treatment import dose_to_target

        return dose_to_target(_closed_water(_scenario_param(params)), chem, targets[0], params[targets[0]],
                              strength_pct=opt["strength_pct"], density_kg_per_L=opt["density_kg_per_L"],
                              flow=opt["flow"], flow_unit=params.get("flow_unit"),
                              precipitate=params.get("precipitate"))
    return dose_to_pH(_closed_water(_scenario_param(params)), chem, _number(params, "target_pH"),
                      strength_pct=opt["strength_pct"], density_kg_per_L=opt["density_kg_per_L"],
                      flow=opt["flow"], flow_unit=params.get("flow_unit"), precipitate=params.get("precipitate"),
                      describe=solve)


def treat(params: dict) -> dict:
    """Several chemicals in sequence (:func:`acidscape.operations.treatment.treat`; result shape there).

    ``params`` (also the file the CLI's ``treat FILE`` reads): ``scenario`` (the raw water),
    ``steps`` (list of ``{chemical, target_pH | target_LSI | target_CCPP | dose_mg_per_L,
    strength_pct?, density_kg_per_L?, precipitate?}``, applied in order), optional ``flow``
    and ``flow_unit``.
    """
    from ..operations import treatment

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    steps = treatment.read_steps(params.get("steps"))
    flow = None if params.get("flow") is None else _number(params, "flow")
    return treatment.treat(_closed_water(_scenario_param(params)), steps, flow=flow,
                           flow_unit=params.get("flow_unit"))


def blend(params: dict) -> dict:
    """Two or more waters blended by flow fraction (:func:`acidscape.operations.blend.blend`).

    ``params``: ``waters`` (list of scenarios), ``fractions`` (one per water, summing to 1),
    optional ``names``, ``precipitate`` (solids allowed to form in the blend), ``flow``,
    ``flow_unit``. Errors inside a water name it: ``waters[1].systems[0].total``.
    """
    from ..operations import blend as blending

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    waters = params.get("waters")
    if not isinstance(waters, list) or len(waters) < 2:
        raise InputError("Give two or more waters to blend.", field="waters")
    blending.check_fractions(params.get("fractions"), len(waters))
    closed = []
    for k, sc in enumerate(waters):
        try:
            closed.append(_closed_water(sc))
        except AcidscapeError as exc:
            exc.field = f"waters[{k}]" + (f".{exc.field}" if exc.field and exc.field != "scenario" else "")
            raise
    names = params.get("names")
    if names is not None and (not isinstance(names, list) or len(names) != len(waters)
                              or not all(isinstance(n, str) for n in names)):
        raise InputError("Give one name per water.", field="names")
    flow = None if params.get("flow") is None else _number(params, "flow")
    return blending.blend(closed, params.get("fractions"), precipitate=params.get("precipitate"), flow=flow,
                          flow_unit=params.get("flow_unit"), names=names)


def soften(params: dict) -> dict:
    """Lime (and soda ash) softening to equilibrium and recarbonation
    (:func:`acidscape.operations.softening.soften`; result shape there).

    ``params``: ``scenario``; optional ``softening_pH`` or ``lime_mg_per_L`` (as Ca(OH)2),
    ``soda_ash_mg_per_L`` or ``target_hardness_mg_per_L_as_CaCO3``, ``remove_magnesium``
    (bool), ``excess_lime_meq_per_L`` (stoichiometric estimate), ``first_stage_pH`` (null: no
    first stage; absent: the default), ``recarbonation`` (``{"target_LSI": 0}`` by default;
    ``{"target_CCPP": x}``, ``{"target_pH": x}``; null or false: none), ``flow``, ``flow_unit``.
    """
    from ..operations import softening

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    opt = {k: (None if params.get(k) is None else _number(params, k)) for k in
           ("softening_pH", "lime_mg_per_L", "soda_ash_mg_per_L", "target_hardness_mg_per_L_as_CaCO3",
            "excess_lime_meq_per_L", "flow")}
    kw = {}
    if "first_stage_pH" in params:
        kw["first_stage_pH"] = None if params["first_stage_pH"] is None else _number(params, "first_stage_pH")
    if "recarbonation" in params:
        kw["recarbonation"] = params["recarbonation"]
    return softening.soften(_closed_water(_scenario_param(params)), softening_pH=opt["softening_pH"],
                            lime_mg_per_L=opt["lime_mg_per_L"], soda_ash_mg_per_L=opt["soda_ash_mg_per_L"],
                            target_hardness_mg_per_L_as_CaCO3=opt["target_hardness_mg_per_L_as_CaCO3"],
                            remove_magnesium=params.get("remove_magnesium", False),
                            excess_lime_meq_per_L=opt["excess_lime_meq_per_L"], flow=opt["flow"],
                            flow_unit=params.get("flow_unit"), **kw)


def _parsed_water(params: dict):
    """The ``scenario`` of ``params`` read (a measured pH and alkalinity closed first)."""
    return read_water(_scenario_param(params))[0]


def _edta_titration(params: dict, titrant: str) -> dict:
    """Hardness by EDTA at a fixed pH (:func:`acidscape.operations.hardness.edta_titration`).

    ``params``: ``scenario``, ``titrant`` ("EDTA"), ``titrant_M`` [mol/L] (default 0.01),
    ``sample_mL`` [mL] (default 50), ``fixed_pH`` (default 10), ``points``, ``to_mL`` [mL].
    """
    from ..operations import hardness

    if titrant.strip().upper() != "EDTA":
        raise InputError(f"A titration at a buffered pH is an EDTA titration: choose EDTA as the titrant "
                         f"(not {titrant.strip()[:40]}), or clear the buffered pH.", field="titrant")
    to_mL = params.get("to_mL")
    out = hardness.edta_titration(
        _parsed_water(params),
        titrant_M=_number(params, "titrant_M", 0.01, lo=1e-9, hi=MAX_TOTAL_M),
        sample_mL=_number(params, "sample_mL", 50.0, lo=1e-6, hi=MAX_SAMPLE_ML),
        fixed_pH=_number(params, "fixed_pH", hardness.STANDARD_PH, lo=PH_RANGE[0], hi=PH_RANGE[1]),
        points=_integer(params, "points", hardness.DEFAULT_POINTS, lo=3, hi=MAX_POINTS),
        to_mL=None if to_mL is None else _number(params, "to_mL", lo=1e-9, hi=MAX_SAMPLE_ML),
    )
    if params.get("fixed_pH") is None:
        out["warnings"].append(f"pH {hardness.STANDARD_PH:g} assumed: the standard method's buffer (common practice)")
    if params.get("to_pH") is not None:
        out["warnings"].append("to_pH does not apply at a fixed pH and was ignored")
    return out


def conditional_constants(params: dict) -> dict:
    """Conditional metal-EDTA formation constants against pH
    (:func:`acidscape.operations.hardness.conditional_constants`).

    ``params``: ``scenario`` (optional, default pure water at I = 0.1 mol/L), ``metals`` (ion ids,
    default calcium and magnesium), ``pH_from``, ``pH_to`` [-], ``points``.
    """
    from ..operations import hardness

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    if params.get("scenario") is None:
        params = dict(params, scenario={"ionic_strength_M": 0.1})
    metals = params.get("metals", list(hardness.HARDNESS_METALS))
    if not isinstance(metals, list) or not metals or not all(isinstance(m, str) for m in metals):
        raise InputError("Choose the metals from the list (such as calcium and magnesium).", field="metals")
    return hardness.conditional_constants(
        _parsed_water(params), metals,
        pH_from=_number(params, "pH_from", 6.0, lo=PH_RANGE[0], hi=PH_RANGE[1]),
        pH_to=_number(params, "pH_to", 13.0, lo=PH_RANGE[0], hi=PH_RANGE[1]),
        points=_integer(params, "points", 71, lo=1, hi=MAX_POINTS),
    )


#: Default grid of each solubility axis and the unit of its ends.
SOLUBILITY_AXES = {"pH": (6.5, 10.5, None), "DIC": (1.0, 100.0, "mg/L as C"),
                   "orthophosphate": (0.0, 3.0, "mg/L")}


def solubility(params: dict) -> dict:
    """Dissolved lead or copper against pH, DIC or orthophosphate
    (:func:`acidscape.operations.solubility.solubility_curve`).

    ``params``: ``scenario``, ``metal`` ("lead" | "copper"), ``axis`` ("pH" | "DIC" |
    "orthophosphate"), ``from``, ``to`` (pH, or in ``unit``: default "mg/L as C" for DIC and
    "mg/L" (as PO4) for orthophosphate), ``points`` (default 81), ``fixed_pH`` (DIC and
    orthophosphate axes; default the water's pH), ``solids`` (candidate solid ids),
    ``orthophosphate_dose`` (added to the water's phosphate; ``orthophosphate_dose_unit``,
    default "mg/L as P"). Each point gains ``x``, the axis value in the axis unit; the result
    gains ``cautions`` (dosing, pH adjustment and orthophosphate).

    Examples
    --------
    >>> out = solubility({"scenario": {"systems": [{"id": "carbonate", "total": 10, "unit": "mg/L as C"}]},
    ...                   "metal": "lead", "axis": "pH", "from": 8, "to": 8, "points": 1})
    >>> out["points"][0]["controlling_solid"]
    'hydrocerussite'
    """
    from ..data import library
    from ..operations import solubility as sol
    from ..operations.dosing import CAUTIONS as DOSE_CAUTIONS
    from ..operations.treatment import PHOSPHATE_CAUTION
    from ..data.units import from_molar, to_molar

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    metal = params.get("metal", "lead")
    if not isinstance(metal, str) or metal not in sol.METALS:
        raise choice("metal", metal, sol.METALS)
    axis = params.get("axis", "pH")
    if not isinstance(axis, str) or axis not in SOLUBILITY_AXES:
        raise choice("axis", axis, SOLUBILITY_AXES)
    lo, hi, unit = SOLUBILITY_AXES[axis]
    start = _number(params, "from", lo, lo=0.0, hi=PH_RANGE[1] if axis == "pH" else 1e6)
    stop = _number(params, "to", hi, lo=0.0, hi=PH_RANGE[1] if axis == "pH" else 1e6)
    solids = params.get("solids")
    if solids is not None:
        if not isinstance(solids, list) or not all(isinstance(x, str) for x in solids):
            raise InputError("Choose the solids from the list (such as cerussite).", field="solids")
        solids = [library.get_solid(x).id for x in solids]
    system = None
    if unit is not None:
        unit = params.get("unit", unit)
        system = library.get_system(sol.AXIS_COMPONENT[axis])
        start, stop = to_molar(start, unit, system, field="from"), to_molar(stop, unit, system, field="to")
    fixed = params.get("fixed_pH")
    water = _parsed_water(params)
    dose_notes: list[str] = []
    dose = params.get("orthophosphate_dose")
    if dose is not None:
        # an orthophosphate dose added to the water's own phosphate (default unit mg/L as P)
        dose_value = _number(params, "orthophosphate_dose", lo=0.0, hi=1e4)
        dose_M = to_molar(dose_value, params.get("orthophosphate_dose_unit", "mg/L as P"),
                          library.get_system("phosphate"), field="orthophosphate_dose")
        water, dose_notes = sol.with_orthophosphate(water, dose_M)
    out = sol.solubility_curve(
        water, metal, axis, start, stop,
        _integer(params, "points", 81, lo=1, hi=sol.MAX_POINTS),
        fixed_pH=None if fixed is None else _number(params, "fixed_pH", lo=PH_RANGE[0], hi=PH_RANGE[1]),
        solids=solids,
    )
    out["axis_unit"] = unit if unit is not None else "pH"
    out["warnings"].extend(dose_notes)
    # a curve is read to choose a pH and an orthophosphate dose: the dosing cautions travel with it
    out["cautions"] = list(DOSE_CAUTIONS) + [PHOSPHATE_CAUTION]
    for p in out["points"]:
        p["x"] = p["pH"] if system is None else from_molar(p["axis_M"], unit, system)
    return out


#: Default pH range and number of points of the curve.
BUFFER_RANGE = (2.0, 12.0)
BUFFER_POINTS = 241


def buffer(params: dict) -> dict:
    """Buffer intensity of a water over a pH range, and optionally its capacity between two pH values.

    .. math::

        \\Delta C_B = P(\\mathrm{pH}_2) - P(\\mathrm{pH}_1), \\qquad
        P = [OH^-] - [H^+] + \\sum C_T\\,\\bar{\\imath}

    Parameters
    ----------
    params : dict
        ``scenario`` : the water (as :func:`acidscape.boundary.api.solve` accepts it) [-];
        ``pH_min``, ``pH_max`` : range of the curve, default 2..12 [-];
        ``points`` : number of pH values, 2..5001, default 241 [-];
        ``capacity`` : optional ``{"from_pH", "to_pH"}`` [-]

    Returns
    -------
    dict
        ``pH`` (list) [-], ``beta_eq_per_L_per_pH`` (list) [eq/(L pH)],
        ``beta_mmol_per_L_per_pH`` (list) [mmol/(L pH)], ``water_pH`` [-],
        ``beta_at_water_pH_eq_per_L_per_pH`` [eq/(L pH)], ``ionic_strength_M`` [mol/L],
        ``basis`` (text), ``capacity`` (with ``from_pH``, ``to_pH``, ``base_eq_per_L``
        [eq/L], positive for base and negative for acid, ``base_meq_per_L`` [meq/L],
        ``as_CaCO3_mg_per_L`` [mg/L as CaCO3]) or None

    Notes
    -----
    A water open to CO2 is treated as the closed sample at its current carbonate total,
    as in a lab beaker (see :func:`acidscape.operations.buffer.buffer_intensity`). mg/L as CaCO3 =
    meq/L x 50.04 (:func:`acidscape.operations.alkalinity.meq_to_mg_as_CaCO3`).

    Examples
    --------
    1 mmol/L acetic acid, ideal activities, at pH = pKa (Goldberg et al. 2002, 4.756):
    beta = (ln 10 / 4) C (Van Slyke 1922), plus water's small share.

    >>> out = buffer({"scenario": {"activity": "ideal", "pH": 4.756,
    ...     "systems": [{"id": "acetic", "total": 1, "unit": "mmol/L"}]}, "points": 3})
    >>> round(out["beta_at_water_pH_eq_per_L_per_pH"] * 1e3, 3)
    0.616
    >>> out["pH"]
    [2.0, 7.0, 12.0]
    """
    from ..operations.alkalinity import meq_to_mg_as_CaCO3
    from ..operations.buffer import buffer_capacity, buffer_curve, buffer_intensity
    from ..operations.curves import pH_grid

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    grid = pH_grid(
        _number(params, "pH_min", BUFFER_RANGE[0], lo=PH_RANGE[0], hi=PH_RANGE[1]),
        _number(params, "pH_max", BUFFER_RANGE[1], lo=PH_RANGE[0], hi=PH_RANGE[1]),
        _integer(params, "points", BUFFER_POINTS, lo=2, hi=5001),
    )
    state: dict = {}
    result = solve(_scenario_param(params), state)
    wm, sol = state["model"], state["solution"]
    beta = buffer_curve(wm, sol, grid)
    capacity = None
    cap = params.get("capacity")
    if cap is not None:
        if not isinstance(cap, dict):
            raise InputError("Enter the start and end pH of the buffer capacity.", field="capacity")
        p1 = _number(cap, "from_pH", lo=PH_RANGE[0], hi=PH_RANGE[1], field="capacity.from_pH")
        p2 = _number(cap, "to_pH", lo=PH_RANGE[0], hi=PH_RANGE[1], field="capacity.to_pH")
        base = buffer_capacity(wm, sol, p1, p2)
        capacity = {
            "from_pH": p1,
            "to_pH": p2,
            "base_eq_per_L": base,
            "base_meq_per_L": base * 1e3,
            "as_CaCO3_mg_per_L": meq_to_mg_as_CaCO3(base * 1e3),
        }
    return {
        "pH": grid,
        "beta_eq_per_L_per_pH": beta,
        "beta_mmol_per_L_per_pH": [b * 1e3 for b in beta],
        "water_pH": sol.pH,
        "beta_at_water_pH_eq_per_L_per_pH": buffer_intensity(wm, sol),
        "ionic_strength_M": sol.I,
        "basis": result["buffer_intensity_basis"],
        "capacity": capacity,
    }


def scale_curves(params: dict) -> dict:
    """The calcium carbonate curves of a water for the page's plots
    (:mod:`acidscape.operations.scale_curves`): the saturation index against pH and the CCPP
    against temperature, each with its uncertainty band.

    ``params``: ``scenario``; optional ``pH`` ``{"from", "to", "points"}`` (default 6 to 10.5,
    31 points), ``temperature`` ``{"from_C", "to_C", "points"}`` (default 5 to 100 °C, 20
    points), ``band`` (default true). A water without calcium or carbonate is refused with a
    message naming what is missing (field ``scenario``).

    Examples
    --------
    >>> out = scale_curves({"scenario": {"systems": [{"id": "carbonate", "total": 4, "unit": "mmol/L"}],
    ...                                  "ions": [{"id": "calcium", "total": 2, "unit": "mmol/L"}]},
    ...                     "pH": {"from": 7, "to": 9, "points": 3}, "temperature": {"points": 2}, "band": False})
    >>> [round(x, 1) for x in out["saturation_against_pH"]["pH"]], out["ccpp_against_temperature"]["temperature_C"]
    ([7.0, 8.0, 9.0], [5.0, 100.0])
    """
    from ..operations import scale_curves as curves

    if not isinstance(params, dict):
        raise InputError("The request could not be read: its values must be a group of named values.",
                         field=None)
    ph = params.get("pH") or {}
    tc = params.get("temperature") or {}
    if not isinstance(ph, dict):
        raise InputError("pH must be an object {from, to, points}", field="pH")
    if not isinstance(tc, dict):
        raise InputError("temperature must be an object {from_C, to_C, points}", field="temperature")
    lo, hi, n = curves.DEFAULT_PH
    pH_from = _number(ph, "from", lo, lo=0.0, hi=14.0, field="pH.from")
    pH_to = _number(ph, "to", hi, lo=0.0, hi=14.0, field="pH.to")
    pH_points = whole(ph.get("points", n), "pH.points", lo=2, hi=curves.MAX_POINTS)
    lo, hi, n = curves.DEFAULT_TEMPERATURE_C
    t_from = _number(tc, "from_C", lo, lo=0.0, hi=100.0, field="temperature.from_C")
    t_to = _number(tc, "to_C", hi, lo=0.0, hi=100.0, field="temperature.to_C")
    t_points = whole(tc.get("points", n), "temperature.points", lo=2, hi=curves.MAX_POINTS)
    for a, b, field in ((pH_from, pH_to, "pH.to"), (t_from, t_to, "temperature.to_C")):
        if b <= a:
            raise InputError(f"{field} must be above the start of the range ({a:g})", field=field)
    band = params.get("band", True)
    if not isinstance(band, bool):
        raise InputError(f"band must be true or false, got {band!r}", field="band")
    parsed, _ = read_water(_scenario_param(params))
    wm = water_model(parsed)
    sol = wm.solve(pH=parsed.pH, allow_solids=parsed.precipitate)
    common = {"pH_given": parsed.pH, "allow_solids": parsed.precipitate, "band": band}
    return {
        "saturation_against_pH": curves.saturation_against_pH(wm, sol, pH_from=pH_from, pH_to=pH_to,
                                                              points=pH_points, **common),
        "ccpp_against_temperature": curves.ccpp_against_temperature(wm, sol, t_from_C=t_from, t_to_C=t_to,
                                                                    points=t_points, **common),
    }
