"""Blending two or more waters by flow fraction, and the blend's equilibrium and indices.

Each water is the closed, electroneutral water of its scenario
(:class:`acidscape.operations.closure.Closed`, dissolved part). With flow fractions
:math:`f_i` (each in [0, 1], summing to 1 within :data:`FRACTION_SUM_TOL`):

- every component total mixes linearly, :math:`T_j = \\sum_i f_i T_{j,i}` [mol/L] (calcium,
  carbonate, each strong ion ...; a component absent from a water counts as 0 there). The
  waters are neutral and neutrality is linear in the totals, so the blend is neutral too and
  its pH follows from the equilibrium model (charge balance), not from mixing pH values;
- the temperature is the fraction-weighted mean :math:`T = \\sum_i f_i T_i`: a heat balance
  that takes the waters' densities and heat capacities per volume as equal (within about
  0.3 % between 0 and 40 °C, from memory), and ignores any heat of mixing and reaction;
- the acid-base constants of library systems are taken at the blend's temperature; a custom
  acid keeps the pKa given (two waters naming different custom acids keep them apart);
- the activity model and the ion-pair switch are the first water's when the waters differ
  (a warning says so); an ionic strength held fixed in every water mixes by fraction, held
  in only some it is computed from the blend's composition.

The blend is then solved by the equilibrium model (pH free), with the solids named in
``precipitate`` allowed to form (none by default; an oversaturated blend is reported).

Result JSON::

    {"fractions": [...], "names": [...], "temperature_C", "temperature_basis",
     "waters": [<water summary> per water], "blend": <water summary of the dissolved blend>,
     "components": [{"id", "name", "totals_M": [per water], "blend_M"}],
     "precipitation": {"allowed", "formed": [{"id", "name", "formula", "mol_per_L", "mg_per_L",
                       "kg_per_d"}], "total_mg_per_L", "total_kg_per_d"},
     "scenario": <ordinary scenario of the dissolved blend, totals in mol/L>,
     "flow": {...} | null, "warnings": [...], "method"}

(water summary: :mod:`acidscape.operations.treatment`.)

Functions
---------
check_fractions(fractions, n) -> list[float]
mix(waters, fractions) -> (Water, warnings)
blend(closed_waters, fractions, ...) -> dict
"""

from __future__ import annotations

import dataclasses
import math

from ..checks import number
from ..data import library
from ..errors import InputError, UnknownIdError
from ..science import purewater, temperature
from .probe import aqueous_totals
from .treatment import (Water, _flow, _flow_json, _formed_rows, _indexed_state, _named_state, _summary,
                        read_solids, summarize, water_from_closed, water_scenario)

#: The fractions must sum to 1 within this.
FRACTION_SUM_TOL = 1e-6
#: At most this many waters in one blend.
MAX_WATERS = 12

METHOD = ("component totals mixed by flow fraction (each water closed and electroneutral, dissolved part); "
          "temperature the fraction-weighted mean (equal density and heat capacity per volume, no heat of "
          "mixing); the blend solved by the equilibrium model with its pH from the charge balance; LSI and CCPP "
          "after Standard Methods 2330 (acidscape.operations.indices)")


def check_fractions(fractions, n: int) -> list[float]:
    """Flow fractions of ``n`` waters: numbers in [0, 1] summing to 1 within 1e-6.

    Parameters
    ----------
    fractions : list of float
        One fraction per water [-]
    n : int
        Number of waters [-]

    Returns
    -------
    list of float
        The fractions as given [-]

    Raises
    ------
    InputError
        Field ``fractions`` (wrong length, or a sum other than 1) or ``fractions[k]``

    Examples
    --------
    >>> check_fractions([0.25, 0.75], 2)
    [0.25, 0.75]
    >>> check_fractions([0.5, 0.6], 2)
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: The shares of the flow add up to 1.1, not 1 (0.5 + 0.6); give shares that add up to 1.
    """
    if not isinstance(fractions, (list, tuple)):
        raise InputError(f"Give the share of the flow of each of the {n} waters (shares that add up to 1).",
                         field="fractions")
    if len(fractions) != n:
        raise InputError(f"Give one share of the flow per water: {n} waters and {len(fractions)} shares were given.",
                         field="fractions")
    out = [number(f, f"fractions[{k}]", lo=0.0, hi=1.0, allow_text=True) for k, f in enumerate(fractions)]
    total = math.fsum(out)
    if abs(total - 1.0) > FRACTION_SUM_TOL:
        raise InputError(f"The shares of the flow add up to {total:.10g}, not 1 ("
                         + " + ".join(f"{f:g}" for f in out) + "); give shares that add up to 1.", field="fractions")
    return out


def _same_custom_system(a, b) -> bool:
    return (a.name, tuple(a.charges), tuple(round(p, 12) for p in a.pKa)) == \
        (b.name, tuple(b.charges), tuple(round(p, 12) for p in b.pKa))


def _same_custom_ion(a, b) -> bool:
    return (a.name, a.charge, a.ion_size_A) == (b.name, b.charge, b.ion_size_A)


def mix(waters: list[Water], fractions: list[float]) -> tuple[Water, list[str], list[dict]]:
    """The blend of waters by flow fraction (nothing solved).

    Returns the blended :class:`Water`, warnings, and one row per component
    ``{"id", "name", "totals_M": [per water], "blend_M"}``.

    Examples
    --------
    >>> from acidscape.science.tableau import IonInput
    >>> a = Water((), (IonInput("sodium", "Na+", 1, 0.0), IonInput("chloride", "Cl-", -1, 0.0)),
    ...           {"sodium": 2e-3, "chloride": 2e-3}, T=283.15, pKw=14.535)
    >>> b = Water((), (IonInput("sodium", "Na+", 1, 0.0), IonInput("chloride", "Cl-", -1, 0.0)),
    ...           {"sodium": 6e-3, "chloride": 6e-3}, T=303.15, pKw=13.833)
    >>> w, _, rows = mix([a, b], [0.75, 0.25])
    >>> round(w.temperature_C, 9), rows[0]["blend_M"]
    (15.0, 0.003)
    """
    warnings: list[str] = []
    T = math.fsum(f * w.T for f, w in zip(fractions, waters))
    models = {w.model for w in waters}
    model = waters[0].model
    if len(models) > 1:
        warnings.append(f"the waters use different activity models ({', '.join(sorted(models))}); the blend uses "
                        f"the first water's ({model})")
    pairs = {w.complexes for w in waters}
    complexes = waters[0].complexes
    if len(pairs) > 1:
        warnings.append(f"ion pairs are on in some waters and off in others; the blend has them "
                        f"{'on' if complexes else 'off'} (the first water's choice)")
    fixed = [w.I_fixed for w in waters]
    if all(x is not None for x in fixed):
        I_fixed = math.fsum(f * x for f, x in zip(fractions, fixed))
    else:
        I_fixed = None
        if any(x is not None for x in fixed):
            warnings.append("an ionic strength is held fixed in some waters only; the blend's is computed from its "
                            "composition")
    systems: dict[str, object] = {}
    ions: dict[str, object] = {}
    names: dict[str, str] = {}
    keymaps: list[dict[str, str]] = []
    known_systems = library.systems()
    for i, w in enumerate(waters):
        km: dict[str, str] = {}
        for s in w.systems:
            key = s.key
            if key in systems and key not in known_systems and not _same_custom_system(systems[key], s):
                key = f"{s.key}/{i + 1}"
            if key not in systems:
                systems[key] = dataclasses.replace(s, key=key)
                names[key] = s.name
            km[s.key] = key
        for ion in w.ions:
            key = ion.key
            if key in ions and not _is_library_ion(key) and not _same_custom_ion(ions[key], ion):
                key = f"{ion.key}/{i + 1}"
            if key not in ions:
                ions[key] = dataclasses.replace(ion, key=key)
                names[key] = ion.name
            km[ion.key] = key
        keymaps.append(km)
    # library systems at the blend's temperature; custom ones as given
    sys_out = []
    for key, s in systems.items():
        if key in known_systems:
            pKa, notes = temperature.pKa_at_with_notes(known_systems[key], T)
            warnings.extend(n for n in notes if n not in warnings)
            s = dataclasses.replace(s, pKa=tuple(pKa))
        sys_out.append(s)
    totals: dict[str, float] = {}
    per_water: dict[str, list[float]] = {k: [0.0] * len(waters) for k in list(systems) + list(ions)}
    for i, (f, w, km) in enumerate(zip(fractions, waters, keymaps)):
        for old, t in w.totals.items():
            key = km.get(old)
            if key is None:
                continue
            per_water[key][i] = t
    for key, vals in per_water.items():
        totals[key] = math.fsum(f * v for f, v in zip(fractions, vals))
    blend_water = Water(tuple(sys_out), tuple(ions.values()), totals, T, purewater.pKw(T), model, complexes, I_fixed)
    rows = [{"id": key, "name": names[key], "totals_M": per_water[key], "blend_M": totals[key]} for key in per_water]
    return blend_water, warnings, rows


def _is_library_ion(key: str) -> bool:
    try:
        return library.get_ion(key).id == key
    except UnknownIdError:
        return False


def blend(closed_waters: list, fractions, *, precipitate=None, flow=None, flow_unit=None, names=None) -> dict:
    """Blend of two or more waters by flow fraction, with its equilibrium and indices.

    Parameters
    ----------
    closed_waters : list of acidscape.operations.closure.Closed or treatment.Water
        The waters (the boundary reads and closes each scenario)
    fractions : list of float
        Each water's share of the flow, in [0, 1], summing to 1 within 1e-6 [-]
    precipitate : list of str, optional
        Solids allowed to form in the blend (default none) [-]
    flow, flow_unit : float, str, optional
        Flow of the blend and its unit, for kg/d of solids formed
    names : list of str, optional
        Labels of the waters (default: each scenario's ``name``, else "water 1" ...)

    Returns
    -------
    dict
        See the module notes

    Raises
    ------
    InputError
        Fewer than two waters (field ``waters``); fractions of the wrong length or not summing
        to 1 (field ``fractions``)

    Examples
    --------
    A water blended with itself is the same water:

    >>> from acidscape.operations.treatment import make_water
    >>> w = make_water({"carbonate": 2e-3}, {"calcium": 1e-3})
    >>> out = blend([w, w], [0.5, 0.5])
    >>> round(out["blend"]["pH"] - out["waters"][0]["pH"], 12)
    0.0
    """
    if not isinstance(closed_waters, (list, tuple)) or len(closed_waters) < 2:
        raise InputError("Give two or more waters to blend.", field="waters")
    if len(closed_waters) > MAX_WATERS:
        raise InputError(f"At most {MAX_WATERS} waters can be blended; {len(closed_waters)} were given.",
                         field="waters")
    fr = check_fractions(fractions, len(closed_waters))
    allow = read_solids(precipitate, "precipitate") or ()
    flow_Ld = _flow(flow, flow_unit)
    waters = [water_from_closed(c) for c in closed_waters]
    labels = list(names) if names else [
        (c.scenario.get("name") if isinstance(getattr(c, "scenario", None), dict)
         and isinstance(c.scenario.get("name"), str) else None) or f"water {k + 1}"
        for k, c in enumerate(closed_waters)]
    summaries = [summarize(w) for w in waters]
    mixed, warnings, rows = mix(waters, fr)
    # warm start from the water with the largest share
    mixed.guess = waters[max(range(len(fr)), key=lambda k: fr[k])].guess
    wm = mixed.build()
    present = tuple(sid for sid in allow if sid in wm.solid_index and
                    all(wm.totals[j] > 0 for j, _ in wm.tab.solids[wm.solid_index[sid]].stoich if j))
    missing = [sid for sid in allow if sid not in present]
    if missing:
        warnings.append("cannot form in this blend (a component is missing): " + ", ".join(missing))
    guess = _indexed_state(wm, mixed.guess)
    sol = wm.solve(allow_solids=present, guess=guess)
    formed = _formed_rows(wm, sol, flow_Ld)
    if sol.solids:
        dis = aqueous_totals(sol)
        after = wm.solve(totals=dis, guess=sol.state)
        mixed.totals = {c: max(dis[j], 0.0) for j, c in enumerate(wm.tab.components) if j}
    else:
        after = sol
    mixed.guess = _named_state(wm, after)
    summary = _summary(wm, after)
    for sid, si in summary["SI"].items():
        if si > 0.3 and sid in ("calcite", "brucite", "gypsum") and sid not in present:
            warnings.append(f"the blend is oversaturated with {sid} (SI {si:+.2f}); name it in precipitate to let "
                            "it form")
    for k, (label, c) in enumerate(zip(labels, closed_waters)):
        warnings.extend(f"{label}: {n}" for n in (getattr(c, "notes", None) or []))
    total_mg = sum(f["mg_per_L"] for f in formed)
    return {
        "fractions": fr,
        "names": labels,
        "temperature_C": mixed.temperature_C,
        "temperature_basis": "fraction-weighted mean of the waters' temperatures (a heat balance with equal density "
                             "and heat capacity per volume; no heat of mixing)",
        "waters": summaries,
        "blend": summary,
        "components": rows,
        "precipitation": {"allowed": list(allow), "formed": formed, "total_mg_per_L": total_mg,
                          "total_kg_per_d": total_mg * flow_Ld * 1e-6 if flow_Ld is not None else None},
        "scenario": water_scenario(mixed),
        "flow": _flow_json(flow, flow_unit, flow_Ld),
        "warnings": warnings,
        "method": METHOD,
    }
