"""Temperature dependence of equilibrium constants (acid-base steps, complexes, solids) and of CO2 solubility.

Functions
---------
vant_hoff_pKa(pKa_ref, dH_kJ_per_mol, T, T_ref=298.15, dCp_J_per_mol_K=None)
    Integrated van 't Hoff equation with a constant reaction enthalpy, or with a
    constant heat capacity of reaction when ``dCp_J_per_mol_K`` is given.
vant_hoff_log10_K(log10_K_ref, dH_kJ_per_mol, T, dCp_J_per_mol_K=None, T_ref=298.15)
    The same for log10 K of any reaction written in either direction.
log10_K_at(entry, T)
    log10 K of a complex or solid of the library at T, with notes: the analytic fit,
    else van 't Hoff with dH (and dCp), else the 25 °C value.
carbonate_PB82(T)
    (pK1, pK2) of the carbonate system, Plummer & Busenberg (1982).
log10_KH_CO2(T)
    log10 of Henry's constant of CO2, Plummer & Busenberg (1982).
ammonium_BP49(T)
    pKa of NH4+, the fit of Emerson et al. (1975) to Bates & Pinching (1949).
hypochlorous_M66(T)
    pKa of HOCl, Morris (1966) fit (raw; :func:`hypochlorous_pKa` limits it to its range).
hypochlorous_pKa(T)
    pKa of HOCl: the Morris fit to 35 °C, van 't Hoff from its 35 °C enthalpy above.
pKa_at(system, T), pKa_at_with_notes(system, T)
    Thermodynamic pKa of a library system at T, chosen by ``system.temperature_model``.
molal_to_molar_offsets(T), molal_to_molar_note(T)
    The error of using the molal Kw and CO2 Henry constant as molar, and a warning text
    for results above 50 °C.

Data
----
TEMPERATURE_MODELS
    Names accepted in ``AcidSystem.temperature_model``.
FIT_RANGE_K
    Temperature range over which each published fit was measured [K].
NO_DCP_WINDOW_K
    Temperatures within which a step with an enthalpy but no heat capacity is used without
    a note [K].

Data sources
------------
* L. N. Plummer, E. Busenberg, "The solubilities of calcite, aragonite and vaterite in
  CO2-H2O solutions between 0 and 90 °C, and an evaluation of the aqueous model for the
  system CaCO3-CO2-H2O", Geochim. Cosmochim. Acta 46 (1982) 1011–1040,
  doi:10.1016/0016-7037(82)90056-4 (coefficients from memory).
* R. G. Bates, G. D. Pinching, "Acidic dissociation constant of ammonium ion at 0 to
  50 °C, and the base strength of ammonia", J. Res. Natl. Bur. Stand. 42 (1949)
  419–430, doi:10.6028/jres.042.037 (from memory); K. Emerson, R. C. Russo, R. E. Lund,
  R. V. Thurston, J. Fish. Res. Board Can. 32 (1975) 2379–2383, doi:10.1139/f75-274
  (the two-term fit used here; from memory).
* J. C. Morris, "The acid ionization constant of HOCl from 5 to 35°", J. Phys. Chem. 70
  (1966) 3798–3805, doi:10.1021/j100884a007 (from memory).
* Van 't Hoff equation with a constant heat capacity of reaction: W. Stumm, J. J. Morgan,
  Aquatic Chemistry, 3rd ed., Wiley (1996), §2.6 (from memory); P. Atkins, J. de Paula,
  Physical Chemistry, Oxford University Press (any edition).

Molal and molar scales
----------------------
All constants here, Kw (:func:`acidscape.science.purewater.pKw`, IAPWS R11-07) and the
CO2 Henry constant included, are on the molal scale (mol per kg of water) at infinite
dilution. The core uses them with molar concentrations (mol per litre), the usual
dilute-water approximation. For a dilute solution c = m rho, so Kw(molar) = Kw(molal)
rho^2 and K_H(molar) = K_H(molal) rho (rho in kg/L): the error is 2 log10(rho) in pKw and
log10(rho) in log K_H, 0.003 and 0.001 at 25 °C, 0.037 and 0.018 at 100 °C, i.e. about
0.02 in the pH of neutral water at 100 °C. :func:`molal_to_molar_note` words it for a
result above 50 °C.
"""

from __future__ import annotations

import math

from ..constants import LN10, R
from ..errors import InputError, UnknownIdError
from .purewater import check_temperature_K, density_water

__all__ = [
    "TEMPERATURE_MODELS", "FIT_RANGE_K", "T_REF_K", "NO_DCP_WINDOW_K", "vant_hoff_pKa",
    "vant_hoff_log10_K", "log10_K_at", "carbonate_PB82", "log10_KH_CO2", "ammonium_BP49",
    "hypochlorous_M66", "hypochlorous_pKa", "pKa_at", "pKa_at_with_notes",
    "molal_to_molar_offsets", "molal_to_molar_note",
]

#: Reference temperature of tabulated pKa values [K].
T_REF_K = 298.15

#: Values accepted in ``AcidSystem.temperature_model``.
TEMPERATURE_MODELS = ("vant-hoff", "carbonate-PB82", "ammonium-BP49", "hypochlorous-M66")

#: Temperature range of the measurements behind each published fit [K] (from memory).
#: Plummer & Busenberg (1982) fitted K1, K2 and KH over 0–250 °C; Bates & Pinching
#: measured 0–50 °C; Morris (1966) 5–35 °C (the title of the paper). Outside these ranges
#: :func:`pKa_at_with_notes` says that the value is extrapolated; above 35 °C the HOCl fit
#: is not used at all (see :func:`hypochlorous_pKa`).
FIT_RANGE_K = {
    "carbonate-PB82": (273.15, 523.15),
    "ammonium-BP49": (273.15, 323.15),
    "hypochlorous-M66": (278.15, 308.15),
}

#: A van 't Hoff step with an enthalpy but no heat capacity of reaction is used without a
#: note between 15 and 35 °C [K]: there a heat capacity of up to 300 J/(mol K), typical of
#: acid dissociation, would move pKa by less than 0.01 (the term
#: dCp/(R ln10) (ln(T/T0) + T0/T - 1) is 0.009 at 15 °C and 0.008 at 35 °C).
NO_DCP_WINDOW_K = (288.15, 308.15)

#: Heat capacity used for that bound [J/(mol K)] (a round upper value for carboxylic and
#: phosphoric acid steps, e.g. -142 acetic, -230 H2PO4-; Goldberg et al. 2002, from memory).
_TYPICAL_DCP = 300.0

#: Number of dissociation steps each fitted model provides.
_STEPS = {"carbonate-PB82": 2, "ammonium-BP49": 1, "hypochlorous-M66": 1}


def _finite(value, field: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{what} must be a finite number, got {value!r}", field=field)
    return float(value)


def _dcp_term(T: float, T_ref: float) -> float:
    """ln(T/T_ref) + T_ref/T - 1 (>= 0), the heat-capacity factor of the integrated van 't Hoff equation."""
    return math.log(T / T_ref) + T_ref / T - 1.0


def vant_hoff_log10_K(log10_K_ref, dH_kJ_per_mol, T, dCp_J_per_mol_K=None, T_ref=T_REF_K) -> float:
    r"""log10 K at T from its value at T_ref, the reaction enthalpy and (optionally) heat capacity.

    .. math::

        \ln K(T) = \ln K(T_0) - \frac{\Delta H^\circ}{R}\left(\frac1T - \frac1{T_0}\right)
                   + \frac{\Delta C_p^\circ}{R}\left(\ln\frac{T}{T_0} + \frac{T_0}{T} - 1\right)

    Parameters
    ----------
    log10_K_ref : float
        log10 K at ``T_ref`` [-].
    dH_kJ_per_mol : float
        Standard enthalpy of the reaction as written, at ``T_ref`` [kJ/mol].
    T : float
        Temperature, 273.15–373.15 K [K].
    dCp_J_per_mol_K : float or None
        Standard heat capacity of the reaction, taken constant; None for 0 [J/(mol K)].
    T_ref : float
        Reference temperature, > 0 [K].

    Returns
    -------
    float
        log10 K at ``T`` [-].

    Notes
    -----
    With a constant heat capacity the enthalpy varies as dH(T) = dH(T0) + dCp (T - T0);
    integrating d ln K/dT = dH(T)/(R T^2) gives the equation above. R is the CODATA 2018
    gas constant.

    Examples
    --------
    >>> round(vant_hoff_log10_K(-4.756, -0.41, 273.15, -142.0), 4)   # acetic acid, 0 °C
    -4.7787

    References
    ----------
    W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley (1996), §2.6 (from memory).
    """
    logK = _finite(log10_K_ref, "log10_K", "log10_K_ref")
    dH = _finite(dH_kJ_per_mol, "dH_kJ_per_mol", "dH_kJ_per_mol")
    T = check_temperature_K(T)
    T_ref = _finite(T_ref, "T_ref", "reference temperature T_ref [K]")
    if T_ref <= 0.0:
        raise InputError(f"reference temperature T_ref must be > 0 K, got {T_ref!r}", field="T_ref")
    out = logK - dH * 1000.0 / (R * LN10) * (1.0 / T - 1.0 / T_ref)
    if dCp_J_per_mol_K is not None:
        dCp = _finite(dCp_J_per_mol_K, "dCp_J_per_mol_K", "dCp_J_per_mol_K")
        out += dCp / (R * LN10) * _dcp_term(T, T_ref)
    return out


def vant_hoff_pKa(pKa_ref, dH_kJ_per_mol, T, T_ref=T_REF_K, dCp_J_per_mol_K=None) -> float:
    r"""pKa at T from its value at T_ref, the dissociation enthalpy and (optionally) heat capacity.

    .. math::

        pK_a(T) = pK_a(T_\mathrm{ref}) + \frac{\Delta H^\circ}{R \ln 10}
                  \left(\frac{1}{T} - \frac{1}{T_\mathrm{ref}}\right)
                  - \frac{\Delta C_p^\circ}{R\ln 10}\left(\ln\frac{T}{T_\mathrm{ref}}
                  + \frac{T_\mathrm{ref}}{T} - 1\right)

    Parameters
    ----------
    pKa_ref : float
        pKa at ``T_ref`` [-].
    dH_kJ_per_mol : float
        Standard enthalpy of the dissociation at ``T_ref`` [kJ/mol].
    T : float
        Temperature, 273.15–373.15 K [K].
    T_ref : float
        Reference temperature, > 0 [K].
    dCp_J_per_mol_K : float or None
        Standard heat capacity of the dissociation, taken constant; None neglects it
        [J/(mol K)].

    Returns
    -------
    float
        pKa at ``T`` [-].

    Notes
    -----
    Integrates :math:`d\ln K/dT = \Delta H^\circ(T)/(R T^2)` with
    :math:`\Delta H^\circ(T) = \Delta H^\circ(T_\mathrm{ref}) + \Delta C_p^\circ (T - T_\mathrm{ref})`.
    Without a heat capacity the enthalpy is constant; over 0–100 °C the neglected term
    shifts pKa by a few hundredths for carboxylic acids (acetic acid, dCp = -142 J/(mol K):
    0.029 at 0 °C), more for steps with larger :math:`\Delta C_p`.

    Examples
    --------
    >>> round(vant_hoff_pKa(4.756, -0.41, 310.15), 4)
    4.7588
    >>> round(vant_hoff_pKa(4.756, -0.41, 273.15, dCp_J_per_mol_K=-142.0), 3)
    4.779

    References
    ----------
    J. H. van 't Hoff, Études de dynamique chimique, Muller, Amsterdam (1884);
    W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley (1996), §2.6.
    """
    pKa_ref = _finite(pKa_ref, "pKa", "pKa_ref")
    return -vant_hoff_log10_K(-pKa_ref, dH_kJ_per_mol, T, dCp_J_per_mol_K, T_ref)


def log10_K_at(entry, T) -> tuple[float, list[str]]:
    r"""log10 K of a library complex or solid at T, with notes on approximations.

    .. math::

        \log_{10}K(T) = A + BT + C/T + D\log_{10}T + E/T^2
        \quad\text{or}\quad \text{van 't Hoff with } \Delta H^\circ, \Delta C_p^\circ

    Parameters
    ----------
    entry : Complex or Solid
        Needs ``id``, ``log10_K_25C`` (I = 0), ``dH_kJ_per_mol``, ``dCp_J_per_mol_K``,
        ``analytic`` and ``T_range_C`` [-].
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        log10 K at ``T`` for the reaction as the entry writes it (formation of a
        complex, dissolution of a solid) [-].
    list of str
        Notes: the analytic fit used outside its range (extrapolated), or no enthalpy
        known (the 25 °C value used) when T is more than 0.5 K from 25 °C [-].

    Notes
    -----
    Order of preference: the published analytic fit (the fit itself, which reproduces
    ``log10_K_25C`` within 0.05, a check made on load); else the integrated van 't Hoff
    equation with dH and, when known, a constant dCp (:func:`vant_hoff_log10_K`); else
    the 25 °C value.

    Examples
    --------
    >>> from acidscape.data.library import get_solid, get_complex
    >>> k, notes = log10_K_at(get_solid("calcite"), 273.15)
    >>> round(k, 3), notes
    (-8.381, [])
    >>> k, notes = log10_K_at(get_complex("CuCO3"), 283.15)
    >>> k, len(notes)
    (6.75, 1)
    """
    T = check_temperature_K(T)
    eid = str(getattr(entry, "id", "?"))
    logK = float(entry.log10_K_25C)
    t_C = T - 273.15
    coef = getattr(entry, "analytic", None)
    if coef:
        A, B, C, D, E = coef
        value = A + B * T + C / T + D * math.log10(T) + E / (T * T)
        rng = getattr(entry, "T_range_C", None)
        notes = []
        if rng and not rng[0] - 1e-9 <= t_C <= rng[1] + 1e-9:
            notes.append(f"{eid}: its log K fit was measured from {rng[0]:g} to {rng[1]:g} °C; "
                         f"at {t_C:.1f} °C it is extrapolated")
        return value, notes
    dH = getattr(entry, "dH_kJ_per_mol", None)
    if dH is not None:
        return vant_hoff_log10_K(logK, dH, T, getattr(entry, "dCp_J_per_mol_K", None)), []
    if abs(T - T_REF_K) > 0.5:
        return logK, [f"{eid}: no reaction enthalpy is known; its 25 °C log K ({logK:.2f}) is used at {t_C:.1f} °C"]
    return logK, []


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
    r"""pKa of the ammonium ion: the Emerson et al. (1975) fit to Bates & Pinching (1949).

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
    This two-term expression is the one printed by Emerson et al. (1975) for their
    un-ionised ammonia tables, fitted to the emf measurements of Bates & Pinching (1949)
    from 0 to 50 °C; above 50 °C it is an extrapolation. It implies a constant enthalpy,
    R ln10 x 2729.92 = 52.27 kJ/mol. Bates & Pinching's own three-term equation,
    pKa = 2835.76/T - 0.6322 + 0.001225 T, differs from it by less than 0.003 between
    0 and 50 °C (``tests/test_temperature.py``).

    Examples
    --------
    >>> round(ammonium_BP49(298.15), 3)
    9.246

    References
    ----------
    K. Emerson, R. C. Russo, R. E. Lund, R. V. Thurston, J. Fish. Res. Board Can. 32
    (1975) 2379–2383, doi:10.1139/f75-274 (from memory); R. G. Bates, G. D. Pinching,
    J. Res. Natl. Bur. Stand. 42 (1949) 419–430, doi:10.6028/jres.042.037 (from memory).
    """
    T = check_temperature_K(T)
    return 0.09018 + 2729.92 / T


def hypochlorous_M66(T) -> float:
    r"""pKa of hypochlorous acid: the Morris (1966) fit itself.

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
    Fitted to measurements from 5 to 35 °C (Morris tabulated 0 °C from it). The function
    evaluates the fit anywhere in 0–100 °C; the library uses :func:`hypochlorous_pKa`,
    which does not extrapolate the fit above 35 °C.

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


def _hypochlorous_dH_kJ(T: float) -> float:
    """Enthalpy implied by the Morris fit at T: R ln10 (3000.00 - 0.0253 T^2) [kJ/mol]."""
    return R * LN10 * (3000.00 - 0.0253 * T * T) / 1000.0


def hypochlorous_pKa(T) -> float:
    r"""pKa of HOCl: the Morris (1966) fit up to 35 °C, van 't Hoff from its 35 °C enthalpy above.

    .. math::

        pK_a(T) = \begin{cases} f_\mathrm{M66}(T) & T \le 308.15\,\mathrm K \\
        f_\mathrm{M66}(T_e) + \dfrac{\Delta H(T_e)}{R\ln 10}\left(\dfrac1T - \dfrac1{T_e}\right)
        & T > T_e = 308.15\,\mathrm K \end{cases}

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
    Morris measured from 5 to 35 °C. A quadratic-in-T fit over 30 K fixes a curvature
    (a heat capacity of reaction, -300 J/(mol K) at 35 °C) that is not safe to carry
    to 100 °C, so above 35 °C the value is carried on from the fit's 35 °C value by the
    van 't Hoff equation with the fit's own enthalpy there, 11.44 kJ/mol, held constant.
    The two ways differ by 0.29 at 100 °C (7.12 here, 7.41 from the fit): that is the
    uncertainty of HOCl/OCl- above 35 °C, and :func:`pKa_at_with_notes` says so. Below
    5 °C the fit itself is used (with a note).

    Examples
    --------
    >>> hypochlorous_pKa(298.15) == hypochlorous_M66(298.15)
    True
    >>> round(hypochlorous_pKa(373.15), 3)
    7.125

    References
    ----------
    J. C. Morris, J. Phys. Chem. 70 (1966) 3798–3805, doi:10.1021/j100884a007
    (from memory).
    """
    T = check_temperature_K(T)
    edge = FIT_RANGE_K["hypochlorous-M66"][1]
    if T <= edge:
        return hypochlorous_M66(T)
    return vant_hoff_pKa(hypochlorous_M66(edge), _hypochlorous_dH_kJ(edge), T, T_ref=edge)


def _system_id(system) -> str:
    return str(getattr(system, "id", "?"))


def pKa_at_with_notes(system, T) -> tuple[tuple[float, ...], list[str]]:
    r"""Thermodynamic pKa values of a system at T, with notes on approximations.

    .. math::

        pK_{a,i}(T) = f_{\mathrm{model}}(T)\quad\text{or}\quad
        pK_{a,i}(298.15) + \frac{\Delta H_i^\circ}{R\ln 10}
        \left(\frac1T - \frac1{298.15}\right)
        - \frac{\Delta C_{p,i}^\circ}{R\ln 10}\left(\ln\frac{T}{298.15} + \frac{298.15}{T} - 1\right)

    Parameters
    ----------
    system : AcidSystem
        Needs ``id``, ``pKa_25C`` (I = 0), ``dH_kJ_per_mol`` and ``temperature_model``;
        ``dCp_J_per_mol_K`` is used when present [-].
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    tuple of float
        pKa of each step at ``T``, most protonated first [-].
    list of str
        One note per approximation used: each van 't Hoff step without an enthalpy
        (kept at its 25 °C value) when T is more than 0.5 K away from 25 °C; each step
        with an enthalpy but no heat capacity outside 15–35 °C (:data:`NO_DCP_WINDOW_K`),
        with the size of the possible error; a published fit used outside its measured
        range; HOCl above 35 °C (see :func:`hypochlorous_pKa`) [-].

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
        dCp = tuple(getattr(system, "dCp_J_per_mol_K", None) or (None,) * len(pKa_25))
        if len(dCp) != len(pKa_25):
            raise InputError(
                f"system {sid!r} has {len(pKa_25)} pKa values but {len(dCp)} heat capacities",
                field=None,
            )
        lo, hi = NO_DCP_WINDOW_K
        out = []
        for i, (pk, h, cp) in enumerate(zip(pKa_25, dH, dCp)):
            if h is None:
                out.append(float(pk))
                if abs(T - T_REF_K) > 0.5:
                    notes.append(
                        f"{sid}: no reaction enthalpy is known for step {i + 1} (pKa {pk:g} at 25 °C); "
                        f"its 25 °C value is used at {t_C:.1f} °C"
                    )
                continue
            out.append(vant_hoff_pKa(pk, h, T, dCp_J_per_mol_K=cp))
            if cp is None and not lo <= T <= hi:
                bound = _TYPICAL_DCP / (R * LN10) * _dcp_term(T, T_REF_K)
                notes.append(
                    f"{sid}: no heat capacity of reaction is known for step {i + 1}; its pKa at "
                    f"{t_C:.1f} °C assumes a constant enthalpy and may be off by up to about {bound:.2f}"
                )
        return tuple(out), notes

    if len(pKa_25) != _STEPS[model]:
        raise InputError(
            f"system {sid!r} has {len(pKa_25)} pKa values but temperature model {model!r} "
            f"gives {_STEPS[model]}",
            field=None,
        )
    lo, hi = FIT_RANGE_K[model]
    if model == "carbonate-PB82":
        values: tuple[float, ...] = carbonate_PB82(T)
    elif model == "ammonium-BP49":
        values = (ammonium_BP49(T),)
    else:
        values = (hypochlorous_pKa(T),)
        if T > hi:
            dev = hypochlorous_M66(T) - values[0]
            notes.append(
                f"{sid}: the HOCl fit (Morris 1966) was measured from 5 to 35 °C; at {t_C:.1f} °C its pKa "
                f"is carried on from 35 °C with a constant enthalpy ({values[0]:.2f}); the fit's own "
                f"curvature would give {dev:+.2f} more, so the HOCl/OCl- split is uncertain by that much"
            )
            return values, notes
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
    ``"hypochlorous-M66"`` (:func:`hypochlorous_pKa`) or ``"vant-hoff"``
    (:func:`vant_hoff_pKa` per step with its dH and dCp; steps with ``dH`` None keep
    their 25 °C value, a documented approximation reported by :func:`pKa_at_with_notes`).

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> nh4 = SimpleNamespace(id="ammonium", pKa_25C=(9.245,), dH_kJ_per_mol=(52.2,),
    ...                       temperature_model="ammonium-BP49")
    >>> [round(p, 3) for p in pKa_at(nh4, 283.15)]
    [9.731]
    """
    return pKa_at_with_notes(system, T)[0]


def molal_to_molar_offsets(T) -> tuple[float, float]:
    r"""Error of using the molal Kw and CO2 Henry constant as molar values.

    .. math::

        \Delta pK_w = -2\log_{10}\rho, \qquad \Delta\log_{10}K_H = \log_{10}\rho

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    tuple of float
        (pKw on the molar scale minus the molal pKw used, log10 K_H molar minus molal)
        [-], with rho the density of water in kg/L (Kell 1975,
        :func:`acidscape.science.purewater.density_water`).

    Notes
    -----
    For a dilute solution c [mol/L] = m [mol/kg] x rho [kg/L], so
    Kw(molar) = Kw(molal) rho^2 and K_H(molar) = K_H(molal) rho. The pH of neutral
    water moves by half the pKw offset.

    Examples
    --------
    >>> [round(x, 4) for x in molal_to_molar_offsets(298.15)]
    [0.0026, -0.0013]
    >>> [round(x, 3) for x in molal_to_molar_offsets(373.15)]
    [0.037, -0.018]
    """
    T = check_temperature_K(T)
    lg = math.log10(density_water(T))
    return -2.0 * lg, lg


def molal_to_molar_note(T) -> str | None:
    r"""A warning for results above 50 °C: Kw and the CO2 Henry constant are molal but used as molar.

    .. math::

        \Delta\mathrm{pH}_\mathrm{neutral} = -\log_{10}\rho

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    str or None
        The warning text above 50 °C (323.15 K), None at or below [-].

    Notes
    -----
    Below 50 °C the error is under 0.005 in pH and is not worth a warning; at 100 °C it
    is about 0.02 (:func:`molal_to_molar_offsets`).

    Examples
    --------
    >>> molal_to_molar_note(298.15) is None
    True
    >>> molal_to_molar_note(373.15)[:37]
    'at 100.0 °C the water constant Kw and'
    """
    T = check_temperature_K(T)
    if T <= 323.15:
        return None
    dpKw, dKH = molal_to_molar_offsets(T)
    return (f"at {T - 273.15:.1f} °C the water constant Kw and the CO2 solubility constant are used per litre "
            f"although published per kg of water: pKw is {dpKw:.3f} and log10 K_H {-dKH:.3f} off, so a "
            f"near-neutral pH may be off by about {dpKw / 2:.3f}")
