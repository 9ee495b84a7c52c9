"""Curves of a whole water against pH: alpha fractions and log concentrations.

Both are drawn at the water's temperature and at the ionic strength of its
equilibrium (held fixed along the curve), with the conditional constants the
solver used, so the curves pass exactly through the solved state at the
equilibrium pH.

.. math::

    \\log_{10} C_i(\\mathrm{pH}) = \\log_{10} C_T + \\log_{10} \\alpha_i(\\mathrm{pH}),
    \\quad \\log_{10}[H^+] = -\\mathrm{pH} - \\log_{10}\\gamma_{H^+},
    \\quad \\log_{10}[OH^-] = \\mathrm{pH} - \\mathrm{p}K_w - \\log_{10}\\gamma_{OH^-}

For a system open to a gas, the most protonated species is fixed and
:math:`\\log_{10} C_i = \\log_{10} C_0 + \\log_{10}(\\alpha_i/\\alpha_0)`.

Functions
---------
pH_grid(pH_min, pH_max, points) -> list[float]
water_curves(eq, grid) -> dict
"""

from __future__ import annotations

import math

from ..errors import InputError
from ..science.solver import Equilibrium
from ..science.speciation import cumulative_pKa, log10_alpha_from_cumulative

_LN10 = math.log(10.0)


def pH_grid(pH_min: float = 0.0, pH_max: float = 14.0, points: int = 281) -> list[float]:
    """Evenly spaced pH values, both ends included.

    >>> pH_grid(2, 4, 3)
    [2.0, 3.0, 4.0]
    """
    if not (isinstance(points, int) and 2 <= points <= 5001):
        raise InputError(f"points = {points!r} must be a whole number 2..5001", field="points")
    if not pH_max > pH_min:
        raise InputError(f"pH_max ({pH_max:g}) must be above pH_min ({pH_min:g})", field="pH_max")
    step = (pH_max - pH_min) / (points - 1)
    grid = [pH_min + k * step for k in range(points)]
    grid[-1] = float(pH_max)
    return [float(v) for v in grid]


def water_curves(eq: Equilibrium, grid: list[float]) -> dict:
    """Fractions and log10 concentrations [log10 mol/L] of every species over ``grid``.

    Parameters
    ----------
    eq : Equilibrium
        A solved water (its I, T and conditional constants are used)
    grid : list of float
        pH values [-]

    Returns
    -------
    dict
        ``{"pH": grid, "equilibrium_pH", "ionic_strength_M", "systems": [{"id", "name",
        "species": [...], "charges": [...], "fractions": [[...] per species]}],
        "log_concentration": [{"name", "system", "values": [...]}]}``; the water's own
        H+ and OH- lines come first in ``log_concentration``.
    """
    systems = []
    logc = [
        {"name": "H+", "system": "water", "values": [-p - eq.log10_gamma_H for p in grid]},
        {"name": "OH-", "system": "water", "values": [p - eq.pKw - eq.log10_gamma_OH for p in grid]},
    ]
    for st in eq.systems:
        comp = st.component
        cum = cumulative_pKa(st.pKa_mixed)
        n1 = len(cum)
        fr = [[0.0] * len(grid) for _ in range(n1)]
        lc = [[0.0] * len(grid) for _ in range(n1)]
        fixed = comp.fixed_first_M
        log_total = math.log10(st.total_M) if fixed is None and st.total_M > 0 else None
        for k, p in enumerate(grid):
            la = log10_alpha_from_cumulative(p, cum)
            for i in range(n1):
                fr[i][k] = 10.0 ** la[i]
                if fixed is not None:
                    lc[i][k] = math.log10(fixed) + la[i] - la[0] if fixed > 0 else None
                else:
                    lc[i][k] = log_total + la[i] if log_total is not None else None
        systems.append({"id": comp.key, "name": comp.name, "species": list(comp.species),
                        "charges": list(comp.charges), "fractions": fr})
        for i, name in enumerate(comp.species):
            logc.append({"name": name, "system": comp.key, "values": lc[i]})
    return {"pH": list(grid), "equilibrium_pH": eq.pH, "ionic_strength_M": eq.I, "systems": systems,
            "log_concentration": logc}
