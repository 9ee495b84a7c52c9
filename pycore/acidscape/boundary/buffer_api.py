"""Buffer intensity of a whole water against pH, and its buffer capacity between two pH values.

The page's buffer plot needs beta over a pH range for the user's water; this
module wraps :mod:`acidscape.operations.buffer` for the JSON boundary. The water is
solved first (:func:`acidscape.boundary.api.solve`), then treated as a closed sample at
its equilibrium ionic strength with the mixed (conditional) constants the
solver used, so that the curve passes exactly through the value ``solve``
reports at the water's own pH:

.. math::

    \\beta(\\mathrm{pH}) = \\ln 10 \\Big( [H^+] + [OH^-] + \\sum_{systems} C_T\\,
    \\mathrm{var}_i(\\mathrm{pH}) \\Big)

(Van Slyke [1]_; Stumm & Morgan [2]_ §3.6, from memory). The buffer capacity
between pH_1 and pH_2 is the strong base (positive) or strong acid (negative)
that takes the closed water from one to the other at fixed totals and ionic
strength, dilution neglected:
:math:`\\Delta C_B = \\int_{pH_1}^{pH_2} \\beta\\, d\\mathrm{pH}`.

Functions
---------
buffer_curve_of_water(params) -> dict      the ``buffer`` method of :func:`acidscape.boundary.api.handle`

References
----------
.. [1] D. D. Van Slyke, "On the measurement of buffer values and on the relationship of buffer
   value to the dissociation constant of the buffer and the concentration and reaction of the
   buffer solution", J. Biol. Chem. 52 (1922) 525-570 (from memory).
.. [2] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, New York, 1996 (from memory).
"""

from __future__ import annotations

from ..errors import InputError

#: Default pH range and number of points of the curve.
DEFAULT_RANGE = (2.0, 12.0)
DEFAULT_POINTS = 241


def buffer_curve_of_water(params: dict) -> dict:
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

    >>> out = buffer_curve_of_water({"scenario": {"activity": "ideal", "pH": 4.756,
    ...     "systems": [{"id": "acetic", "total": 1, "unit": "mmol/L"}]}, "points": 3})
    >>> round(out["beta_at_water_pH_eq_per_L_per_pH"] * 1e3, 3)
    0.616
    >>> out["pH"]
    [2.0, 7.0, 12.0]
    """
    from ..operations.alkalinity import meq_to_mg_as_CaCO3
    from .api import _integer, _number, _scenario_param, solve
    from ..operations.buffer import buffer_capacity, buffer_curve, buffer_intensity
    from ..operations.curves import pH_grid

    if not isinstance(params, dict):
        raise InputError("parameters must be a JSON object", field=None)
    grid = pH_grid(
        _number(params, "pH_min", DEFAULT_RANGE[0], lo=-1.0, hi=15.0),
        _number(params, "pH_max", DEFAULT_RANGE[1], lo=-1.0, hi=15.0),
        _integer(params, "points", DEFAULT_POINTS, lo=2, hi=5001),
    )
    state: dict = {}
    result = solve(_scenario_param(params), state)
    eq = state["eq"]
    beta = buffer_curve(eq, grid)
    capacity = None
    cap = params.get("capacity")
    if cap is not None:
        if not isinstance(cap, dict):
            raise InputError("capacity must be an object {from_pH, to_pH}", field="capacity")
        p1 = _number(cap, "from_pH", lo=-1.0, hi=15.0, field="capacity.from_pH")
        p2 = _number(cap, "to_pH", lo=-1.0, hi=15.0, field="capacity.to_pH")
        base = buffer_capacity(eq, p1, p2)
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
        "water_pH": eq.pH,
        "beta_at_water_pH_eq_per_L_per_pH": buffer_intensity(eq),
        "ionic_strength_M": eq.I,
        "basis": result["buffer_intensity_basis"],
        "capacity": capacity,
    }
