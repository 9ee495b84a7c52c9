"""Properties of liquid water between 0 and 100 °C at one standard atmosphere.

Functions
---------
check_temperature_K(T, field="temperature_C")
    Validate a temperature against the 0–100 °C range of the core; returns ``float(T)``.
density_water(T)
    Density of air-free liquid water at 0.101325 MPa [g/cm3] (Kell 1975).
pKw_from_density(rho, T)
    -log10 of the ionization constant of water from density and temperature
    (IAPWS R11-07, Bandura & Lvov 2006).
pKw(T)
    -log10 Kw of liquid water at 0.101325 MPa [on the molal scale] from the two above.

Data sources
------------
* G. S. Kell, "Density, thermal expansivity, and compressibility of liquid water from
  0 ° to 150 °C: correlations and tables for atmospheric pressure and saturation reviewed
  and expressed on 1968 temperature scale", J. Chem. Eng. Data 20 (1975) 97–105,
  doi:10.1021/je60064a005. Equation (16) coefficients quoted from memory.
* A. V. Bandura, S. N. Lvov, "The ionization constant of water over wide ranges of
  temperature and density", J. Phys. Chem. Ref. Data 35 (2006) 15–30,
  doi:10.1063/1.1928231; adopted as IAPWS R11-07 "Release on the Ionization Constant
  of H2O" (2007). Constants quoted from memory; they reproduce the release's check
  value pKw = 13.906565 at 300 K and 1.0 g/cm3.
"""

from __future__ import annotations

import math

from ..errors import InputError

__all__ = ["T_MIN_K", "T_MAX_K", "check_temperature_K", "density_water", "pKw_from_density", "pKw"]

#: Lower end of the temperature range of the core [K] (0 °C).
T_MIN_K = 273.15
#: Upper end of the temperature range of the core [K] (100 °C).
T_MAX_K = 373.15
#: Slack allowed at both ends of the range [K], so that 100 °C converted from °F or
#: through floating point (373.15000000000003) is still accepted. Values within the
#: slack are used as given, not moved onto the bound.
T_SLACK_K = 1e-6


def _real(value, field: str, what: str) -> float:
    """Return ``value`` as a finite float or raise :class:`InputError` naming ``field``."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{what} must be a number, got {value!r}", field=field)
    x = float(value)
    if not math.isfinite(x):
        raise InputError(f"{what} must be a finite number, got {value!r}", field=field)
    return x


def check_temperature_K(T, field: str = "temperature_C") -> float:
    """Validate a temperature against the liquid-water range of the core.

    Parameters
    ----------
    T : float
        Temperature [K].
    field : str
        Scenario field to name in the error [-].

    Returns
    -------
    float
        ``T`` as a float [K].

    Raises
    ------
    InputError
        If ``T`` is not a finite number or lies outside 273.15–373.15 K (0–100 °C),
        with a slack of ``T_SLACK_K``.

    Examples
    --------
    >>> check_temperature_K(298.15)
    298.15
    """
    x = _real(T, field, "temperature")
    if x < T_MIN_K - T_SLACK_K or x > T_MAX_K + T_SLACK_K:
        raise InputError(
            f"temperature {x:g} K ({x - T_MIN_K:.2f} °C) is outside the allowed range "
            f"0–100 °C (273.15–373.15 K) for liquid water at 1 atm",
            field=field,
        )
    return x


# Kell (1975), eq. 16: density of air-free water at 1 atm, t in °C (IPTS-68), result in
# kg/m3. Coefficients from memory.
_KELL_NUM = (999.83952, 16.945176, -7.9870401e-3, -46.170461e-6, 105.56302e-9, -280.54253e-12)
_KELL_DEN = 16.879850e-3


def density_water(T) -> float:
    r"""Density of liquid water at 0.101325 MPa (Kell 1975 correlation).

    .. math::

        \rho = \frac{\sum_{i=0}^{5} a_i t^i}{1 + b t}\;\mathrm{kg\,m^{-3}},
        \qquad t = T - 273.15

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        Density [g/cm3].

    Notes
    -----
    Kell fitted air-free water at 1 atm on the IPTS-68 scale; the ITS-90 to IPTS-68
    difference (below 0.03 K here) changes the density by under 1e-5 relative and is
    ignored. Against IAPWS-95 the correlation agrees within 2e-5 relative over 0–100 °C
    (checked in ``tests/test_water.py``).

    At 0.101325 MPa water boils at 99.974 °C (ITS-90), so between that temperature and
    100 °C the value is that of slightly superheated (metastable) liquid, which equals
    the saturated-liquid density at 100 °C to within 2e-5 relative. The value is the
    correct input for solutions held at or just under the boiling point.

    Examples
    --------
    >>> round(density_water(298.15), 5)
    0.99704

    References
    ----------
    G. S. Kell, J. Chem. Eng. Data 20 (1975) 97–105, doi:10.1021/je60064a005
    (coefficients from memory).
    """
    T = check_temperature_K(T)
    t = T - T_MIN_K
    num = 0.0
    for coef in reversed(_KELL_NUM):
        num = num * t + coef
    return num / (1.0 + _KELL_DEN * t) / 1000.0


# Bandura & Lvov (2006) / IAPWS R11-07 constants (from memory).
_BL_N = 6
_BL_ALPHA = (-0.864671, 8659.19, -22786.2)
_BL_BETA = (0.642044, -56.8534, -0.375754)
_BL_GAMMA = (0.61415, 48251.33, -67707.93, 10102100.0)
#: Molar mass of water used by the release [g/mol].
_BL_MW = 18.015268


def pKw_from_density(rho, T) -> float:
    r"""-log10 of the ionization constant of water from density (IAPWS R11-07).

    .. math::

        pK_w = -2n\left[\log_{10}(1+Q) - \frac{Q}{Q+1}\,\rho\,
               (\beta_0 + \beta_1 T^{-1} + \beta_2 \rho)\right]
               + pK_w^{G} + 2\log_{10}\frac{M_w}{1000}

        Q = \rho\,\exp(\alpha_0 + \alpha_1 T^{-1} + \alpha_2 T^{-2}\rho^{2/3}),
        \qquad pK_w^{G} = \sum_{i=0}^{3}\gamma_i T^{-i}

    Parameters
    ----------
    rho : float
        Density of water, 0–1.25 [g/cm3].
    T : float
        Temperature, 273.15–1273.15 K [K].

    Returns
    -------
    float
        pKw on the molal scale, Kw in (mol/kg)^2 [-].

    Notes
    -----
    ``n = 6``, ``alpha = (-0.864671, 8659.19, -22786.2)``,
    ``beta = (0.642044, -56.8534, -0.375754)``,
    ``gamma = (0.61415, 48251.33, -67707.93, 10102100)``, ``M_w = 18.015268 g/mol``,
    from memory. The range limits are those of the release. IAPWS revised the release
    in 2019 with refitted alpha and beta; the values differ from these by under 0.002
    in pKw between 0 and 100 °C at 1 atm (see ``tests/test_water.py``).

    Examples
    --------
    >>> round(pKw_from_density(1.0, 300.0), 6)
    13.906565

    References
    ----------
    A. V. Bandura, S. N. Lvov, J. Phys. Chem. Ref. Data 35 (2006) 15–30,
    doi:10.1063/1.1928231; IAPWS R11-07, Release on the Ionization Constant of H2O
    (2007) (from memory).
    """
    rho = _real(rho, "density_g_per_cm3", "density")
    T = _real(T, "temperature_C", "temperature")
    if not 0.0 <= rho <= 1.25:
        raise InputError(
            f"density {rho:g} g/cm3 is outside 0–1.25 g/cm3, the range of IAPWS R11-07",
            field="density_g_per_cm3",
        )
    if not T_MIN_K - T_SLACK_K <= T <= 1273.15:
        raise InputError(
            f"temperature {T:g} K is outside 273.15–1273.15 K, the range of IAPWS R11-07",
            field="temperature_C",
        )
    a0, a1, a2 = _BL_ALPHA
    b0, b1, b2 = _BL_BETA
    pK_gas = sum(g / T**i for i, g in enumerate(_BL_GAMMA))
    Q = rho * math.exp(a0 + a1 / T + a2 / T**2 * rho ** (2.0 / 3.0))
    bracket = math.log10(1.0 + Q) - Q / (Q + 1.0) * rho * (b0 + b1 / T + b2 * rho)
    return -2.0 * _BL_N * bracket + pK_gas + 2.0 * math.log10(_BL_MW / 1000.0)


def pKw(T) -> float:
    r"""-log10 Kw of liquid water at 0.101325 MPa, 0–100 °C (IAPWS R11-07).

    .. math::

        pK_w(T) = pK_w\big(\rho_{\mathrm{Kell}}(T),\,T\big)

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        pKw on the molal scale [-].

    Notes
    -----
    Density comes from :func:`density_water`. The release gives Kw in (mol/kg)^2; in
    dilute water the molal and molar (mol/L) scales differ by 2 log10(rho), 0.003 at
    25 °C and 0.04 at 100 °C; the core uses the molal value as is, as is common
    practice for dilute natural waters.

    Raises
    ------
    InputError
        Outside 0–100 °C (``field="temperature_C"``).

    Examples
    --------
    >>> round(pKw(298.15), 3)
    13.995

    References
    ----------
    A. V. Bandura, S. N. Lvov, J. Phys. Chem. Ref. Data 35 (2006) 15–30,
    doi:10.1063/1.1928231 (from memory).
    """
    T = check_temperature_K(T)
    return pKw_from_density(density_water(T), T)
