"""Temperature dependence of acid dissociation constants and of CO2 solubility.

Functions
---------
vant_hoff_pKa(pKa_ref, dH_kJ_per_mol, T, T_ref=298.15)
    Integrated van 't Hoff equation with a constant reaction enthalpy.
carbonate_PB82(T)
    (pK1, pK2) of the carbonate system, Plummer & Busenberg (1982).
log10_KH_CO2(T)
    log10 of Henry's constant of CO2, Plummer & Busenberg (1982).
ammonium_BP49(T)
    pKa of NH4+, Bates & Pinching (1949).
hypochlorous_M66(T)
    pKa of HOCl, Morris (1966).
pKa_at(system, T), pKa_at_with_notes(system, T)
    Thermodynamic pKa of a library system at T, chosen by ``system.temperature_model``.

Data
----
TEMPERATURE_MODELS
    Names accepted in ``AcidSystem.temperature_model``.
FIT_RANGE_K
    Temperature range over which each published fit was measured [K].

Data sources
------------
* L. N. Plummer, E. Busenberg, "The solubilities of calcite, aragonite and vaterite in
  CO2-H2O solutions between 0 and 90 °C, and an evaluation of the aqueous model for the
  system CaCO3-CO2-H2O", Geochim. Cosmochim. Acta 46 (1982) 1011–1040,
  doi:10.1016/0016-7037(82)90056-4 (coefficients from memory).
* R. G. Bates, G. D. Pinching, "Acidic dissociation constant of ammonium ion at 0 to
  50 °C, and the base strength of ammonia", J. Res. Natl. Bur. Stand. 42 (1949)
  419–430, doi:10.6028/jres.042.037 (from memory).
* J. C. Morris, "The acid ionization constant of HOCl from 5 to 35°", J. Phys. Chem. 70
  (1966) 3798–3805, doi:10.1021/j100884a007 (from memory).
* Van 't Hoff equation: e.g. P. Atkins, J. de Paula, Physical Chemistry, Oxford
  University Press (any edition), section on the temperature dependence of equilibrium.

All constants are on the molal scale at infinite dilution. The core uses them with
molar concentrations, the usual dilute-water approximation (log10 of the water density
is -0.0013 at 25 °C, -0.018 at 100 °C).
"""

from __future__ import annotations

import math

from ..constants import LN10, R
from ..errors import InputError, UnknownIdError
from .purewater import check_temperature_K

__all__ = [
    "TEMPERATURE_MODELS", "FIT_RANGE_K", "T_REF_K", "vant_hoff_pKa", "carbonate_PB82",
    "log10_KH_CO2", "ammonium_BP49", "hypochlorous_M66", "pKa_at", "pKa_at_with_notes",
]

#: Reference temperature of tabulated pKa values [K].
T_REF_K = 298.15

#: Values accepted in ``AcidSystem.temperature_model``.
TEMPERATURE_MODELS = ("vant-hoff", "carbonate-PB82", "ammonium-BP49", "hypochlorous-M66")

#: Temperature range of the measurements behind each published fit [K] (from memory).
#: Plummer & Busenberg (1982) fitted K1, K2 and KH over 0–250 °C; Bates & Pinching
#: measured 0–50 °C; Morris (1966) 0–35 °C. Outside these ranges the fits are
#: extrapolated and :func:`pKa_at_with_notes` says so.
FIT_RANGE_K = {
    "carbonate-PB82": (273.15, 523.15),
    "ammonium-BP49": (273.15, 323.15),
    "hypochlorous-M66": (273.15, 308.15),
}

#: Number of dissociation steps each fitted model provides.
_STEPS = {"carbonate-PB82": 2, "ammonium-BP49": 1, "hypochlorous-M66": 1}


def _finite(value, field: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{what} must be a finite number, got {value!r}", field=field)
    return float(value)


def vant_hoff_pKa(pKa_ref, dH_kJ_per_mol, T, T_ref=T_REF_K) -> float:
    r"""pKa at T from its value at T_ref and a constant standard reaction enthalpy.

    .. math::

        pK_a(T) = pK_a(T_\mathrm{ref}) + \frac{\Delta H^\circ}{R \ln 10}
                  \left(\frac{1}{T} - \frac{1}{T_\mathrm{ref}}\right)

    Parameters
    ----------
    pKa_ref : float
        pKa at ``T_ref`` [-].
    dH_kJ_per_mol : float
        Standard enthalpy of the dissociation, assumed independent of T [kJ/mol].
    T : float
        Temperature, 273.15–373.15 K [K].
    T_ref : float
        Reference temperature, > 0 [K].

    Returns
    -------
    float
        pKa at ``T`` [-].

    Notes
    -----
    Integrates :math:`d\ln K/dT = \Delta H^\circ/(R T^2)` with constant
    :math:`\Delta H^\circ` (heat capacity of reaction neglected). The kJ to J
    conversion is a factor 1000; R is the CODATA 2018 gas constant. Over 0–100 °C the
    neglected heat capacity term typically shifts pKa by a few hundredths for
    carboxylic acids, more for steps with large :math:`\Delta C_p`.

    Examples
    --------
    >>> round(vant_hoff_pKa(4.756, -0.41, 310.15), 4)
    4.7588

    References
    ----------
    J. H. van 't Hoff, Études de dynamique chimique, Muller, Amsterdam (1884);
    P. Atkins, J. de Paula, Physical Chemistry, Oxford University Press.
    """
    pKa_ref = _finite(pKa_ref, "pKa", "pKa_ref")
    dH = _finite(dH_kJ_per_mol, "dH_kJ_per_mol", "dH_kJ_per_mol")
    T = check_temperature_K(T)
    T_ref = _finite(T_ref, "T_ref", "reference temperature T_ref [K]")
    if T_ref <= 0.0:
        raise InputError(f"reference temperature T_ref must be > 0 K, got {T_ref!r}", field="T_ref")
    return pKa_ref + dH * 1000.0 / (R * LN10) * (1.0 / T - 1.0 / T_ref)


def carbonate_PB82(T) -> tuple[float, float]:
    r"""pK1 and pK2 of the carbonate system (Plummer & Busenberg 1982).

    .. math::

        \log_{10} K_1 = -356.3094 - 0.06091964\,T + 21834.37/T
                        + 126.8339\log_{10}T - 1684915/T^2

        \log_{10} K_2 = -107.8871 - 0.03252849\,T + 5151.79/T
                        + 38.92561\log_{10}T - 563713.9/T^2

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    tuple of float
        (pK1, pK2) for H2CO3* = H+ + HCO3- and HCO3- = H+ + CO3-2 [-].

    Notes
    -----
    K1 refers to H2CO3* (dissolved CO2 plus true carbonic acid). Gives 6.352 and
    10.329 at 25 °C.

    Examples
    --------
    >>> [round(p, 3) for p in carbonate_PB82(298.15)]
    [6.352, 10.329]

    References
    ----------
    L. N. Plummer, E. Busenberg, Geochim. Cosmochim. Acta 46 (1982) 1011–1040,
    doi:10.1016/0016-7037(82)90056-4, Table 2 (from memory).
    """
    T = check_temperature_K(T)
    lgT = math.log10(T)
    log_K1 = -356.3094 - 0.06091964 * T + 21834.37 / T + 126.8339 * lgT - 1684915.0 / T**2
    log_K2 = -107.8871 - 0.03252849 * T + 5151.79 / T + 38.92561 * lgT - 563713.9 / T**2
    return -log_K1, -log_K2


def log10_KH_CO2(T) -> float:
    r"""log10 of Henry's constant of CO2 (Plummer & Busenberg 1982).

    .. math::

        \log_{10} K_H = 108.3865 + 0.01985076\,T - 6919.53/T
                        - 40.45154\log_{10}T + 669365/T^2

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        log10 K_H with K_H = [H2CO3*]/p(CO2) [log10 of mol/(L atm)].

    Notes
    -----
    Published on the molal scale, mol/(kg atm); used as mol/(L atm), the dilute
    approximation of the core (offset -0.0013 at 25 °C). Fugacity is taken equal to
    partial pressure. Gives -1.468 at 25 °C.

    Examples
    --------
    >>> round(log10_KH_CO2(298.15), 3)
    -1.468

    References
    ----------
    L. N. Plummer, E. Busenberg, Geochim. Cosmochim. Acta 46 (1982) 1011–1040,
    doi:10.1016/0016-7037(82)90056-4, Table 2 (from memory).
    """
    T = check_temperature_K(T)
    return 108.3865 + 0.01985076 * T - 6919.53 / T - 40.45154 * math.log10(T) + 669365.0 / T**2


def ammonium_BP49(T) -> float:
    r"""pKa of the ammonium ion (Bates & Pinching 1949).

    .. math::

        pK_a = 0.09018 + 2729.92/T

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        pKa of NH4+ = H+ + NH3 [-].

    Notes
    -----
    Measured from 0 to 50 °C; above 50 °C it is an extrapolation. The same expression
    is used by Emerson et al. (1975) for un-ionised ammonia tables.

    Examples
    --------
    >>> round(ammonium_BP49(298.15), 3)
    9.246

    References
    ----------
    R. G. Bates, G. D. Pinching, J. Res. Natl. Bur. Stand. 42 (1949) 419–430,
    doi:10.6028/jres.042.037 (from memory); K. Emerson, R. C. Russo, R. E. Lund,
    R. V. Thurston, J. Fish. Res. Board Can. 32 (1975) 2379–2383,
    doi:10.1139/f75-274 (from memory).
    """
    T = check_temperature_K(T)
    return 0.09018 + 2729.92 / T


def hypochlorous_M66(T) -> float:
    r"""pKa of hypochlorous acid (Morris 1966).

    .. math::

        pK_a = 3000.00/T - 10.0686 + 0.0253\,T

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        pKa of HOCl = H+ + OCl- [-].

    Notes
    -----
    Fitted to measurements from 0 to 35 °C; above 35 °C it is an extrapolation.

    Examples
    --------
    >>> round(hypochlorous_M66(298.15), 3)
    7.537

    References
    ----------
    J. C. Morris, J. Phys. Chem. 70 (1966) 3798–3805, doi:10.1021/j100884a007
    (from memory).
    """
    T = check_temperature_K(T)
    return 3000.00 / T - 10.0686 + 0.0253 * T


def _system_id(system) -> str:
    return str(getattr(system, "id", "?"))


def pKa_at_with_notes(system, T) -> tuple[tuple[float, ...], list[str]]:
    r"""Thermodynamic pKa values of a system at T, with notes on approximations.

    .. math::

        pK_{a,i}(T) = f_{\mathrm{model}}(T)\quad\text{or}\quad
        pK_{a,i}(298.15) + \frac{\Delta H_i^\circ}{R\ln 10}
        \left(\frac1T - \frac1{298.15}\right)

    Parameters
    ----------
    system : AcidSystem
        Needs ``id``, ``pKa_25C``, ``dH_kJ_per_mol`` and ``temperature_model`` [-].
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    tuple of float
        pKa of each step at ``T``, most protonated first [-].
    list of str
        One note per approximation used: each van 't Hoff step without an enthalpy
        (kept at its 25 °C value) when T is more than 0.5 K away from 25 °C, and use of
        a published fit outside its measured range [-].

    Raises
    ------
    UnknownIdError
        ``temperature_model`` is not in :data:`TEMPERATURE_MODELS`
        (``field="temperature_model"``).
    InputError
        T outside 0–100 °C (``field="temperature_C"``), or the system's data do not
        fit the model (step counts).

    Notes
    -----
    The fitted models return the published fit itself, not the fit shifted onto
    ``pKa_25C``; at 25 °C the two agree to the digits printed in the sources.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> acetic = SimpleNamespace(id="acetic", pKa_25C=(4.756,), dH_kJ_per_mol=(None,),
    ...                          temperature_model="vant-hoff")
    >>> pKa_at_with_notes(acetic, 298.15)
    ((4.756,), [])
    """
    model = getattr(system, "temperature_model", None)
    sid = _system_id(system)
    if model not in TEMPERATURE_MODELS:
        raise UnknownIdError(
            f"temperature model {model!r} of system {sid!r} is not known; allowed: "
            f"{', '.join(TEMPERATURE_MODELS)}",
            field="temperature_model",
        )
    T = check_temperature_K(T)
    t_C = T - 273.15
    pKa_25 = tuple(system.pKa_25C)
    notes: list[str] = []

    if model == "vant-hoff":
        dH = tuple(system.dH_kJ_per_mol)
        if len(dH) != len(pKa_25):
            raise InputError(
                f"system {sid!r} has {len(pKa_25)} pKa values but {len(dH)} enthalpies",
                field=None,
            )
        out = []
        for i, (pk, h) in enumerate(zip(pKa_25, dH)):
            if h is None:
                out.append(float(pk))
                if abs(T - T_REF_K) > 0.5:
                    notes.append(
                        f"{sid}: no reaction enthalpy is known for step {i + 1} (pKa {pk:g} at 25 °C); "
                        f"its 25 °C value is used at {t_C:.1f} °C"
                    )
            else:
                out.append(vant_hoff_pKa(pk, h, T))
        return tuple(out), notes

    if len(pKa_25) != _STEPS[model]:
        raise InputError(
            f"system {sid!r} has {len(pKa_25)} pKa values but temperature model {model!r} "
            f"gives {_STEPS[model]}",
            field=None,
        )
    if model == "carbonate-PB82":
        values: tuple[float, ...] = carbonate_PB82(T)
    elif model == "ammonium-BP49":
        values = (ammonium_BP49(T),)
    else:
        values = (hypochlorous_M66(T),)
    lo, hi = FIT_RANGE_K[model]
    if not lo <= T <= hi:
        notes.append(
            f"{sid}: the {model} fit was measured from {lo - 273.15:.0f} to {hi - 273.15:.0f} °C; "
            f"at {t_C:.1f} °C its pKa is extrapolated"
        )
    return values, notes


def pKa_at(system, T) -> tuple[float, ...]:
    r"""Thermodynamic pKa values of a library system at T.

    .. math::

        pK_{a,i}(T) = f_{\mathrm{model}}(T)

    Parameters
    ----------
    system : AcidSystem
        Needs ``id``, ``pKa_25C``, ``dH_kJ_per_mol`` and ``temperature_model`` [-].
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    tuple of float
        pKa of each step at ``T``, most protonated first [-].

    Notes
    -----
    Dispatches on ``system.temperature_model``: ``"carbonate-PB82"``
    (:func:`carbonate_PB82`), ``"ammonium-BP49"`` (:func:`ammonium_BP49`),
    ``"hypochlorous-M66"`` (:func:`hypochlorous_M66`) or ``"vant-hoff"``
    (:func:`vant_hoff_pKa` per step; steps with ``dH`` None keep their 25 °C value,
    a documented approximation reported by :func:`pKa_at_with_notes`).

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> nh4 = SimpleNamespace(id="ammonium", pKa_25C=(9.245,), dH_kJ_per_mol=(52.2,),
    ...                       temperature_model="ammonium-BP49")
    >>> [round(p, 3) for p in pKa_at(nh4, 283.15)]
    [9.731]
    """
    return pKa_at_with_notes(system, T)[0]
