"""Activity coefficients of ions in dilute water (Debye-Hückel family) and ionic strength.

Functions
---------
permittivity_water(T)
    Relative permittivity of water at 1 atm, 0–100 °C (Malmberg & Maryott 1956).
debye_huckel_A(T), debye_huckel_B(T)
    Debye-Hückel constants for ionic strength on the molar scale (mol/L), log10 basis.
debye_huckel_A_molal(T), debye_huckel_B_molal(T)
    The same for ionic strength on the molal scale (mol/kg).
log10_gamma(z, I, T, model, ion_size_A=None)
    log10 of the activity coefficient of an ion of charge ``z``.
gamma_function(T, model)
    The same equations as a closure lg(z, ion_size_A, I), A and B computed once.
ionic_strength(concentrations_and_charges)
    I = 1/2 sum c z^2.
ionic_strength_from_tds(tds_mg_per_L), ionic_strength_from_conductance(sc_uS_per_cm)
    Empirical estimates of I for natural waters.

Data
----
MODELS
    Names of the activity models.
VALIDITY_I_M
    Usual upper ionic strength of each model [mol/L].
DEFAULT_ION_SIZE_A
    Ion-size parameter used by the extended Debye-Hückel equation when none is given.

Data sources
------------
* C. G. Malmberg, A. A. Maryott, "Dielectric constant of water from 0° to 100 °C",
  J. Res. Natl. Bur. Stand. 56 (1956) 1–8, doi:10.6028/jres.056.001 (coefficients from
  memory).
* CODATA 2018 constants (:mod:`acidscape.constants`) for the Debye-Hückel prefactors.
* C. W. Davies, Ion Association, Butterworths, London (1962) (Davies equation with 0.3).
* J. Kielland, "Individual activity coefficients of ions in aqueous solutions",
  J. Am. Chem. Soc. 59 (1937) 1675–1678, doi:10.1021/ja01288a032 (ion sizes).
* W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley (1996), Table 3.3
  (ranges of validity; from memory).
* W. F. Langelier, J. Am. Water Works Assoc. 28 (1936) 1500–1521 (I from TDS; from memory).
* L. L. Russell, "Chemical aspects of groundwater recharge with wastewaters", PhD thesis,
  Univ. of California, Berkeley (1976); quoted in Snoeyink & Jenkins, Water Chemistry,
  Wiley (1980) (I from specific conductance; from memory).
"""

from __future__ import annotations

import math

from ..constants import LN10, N_A, e, epsilon_0, k_B
from ..errors import InputError, UnknownIdError
from .purewater import check_temperature_K, density_water

__all__ = [
    "MODELS", "VALIDITY_I_M", "DEFAULT_ION_SIZE_A", "DH_A_PREFACTOR", "DH_B_PREFACTOR",
    "permittivity_water", "debye_huckel_A", "debye_huckel_B", "debye_huckel_A_molal",
    "debye_huckel_B_molal", "gamma_function", "log10_gamma", "ionic_strength", "ionic_strength_from_tds",
    "ionic_strength_from_conductance",
]

#: Activity models understood by :func:`log10_gamma`.
MODELS = ("ideal", "davies", "extended-debye-huckel")

#: Usual upper limit of ionic strength for each model [mol/L].
#: Davies 0.5 and extended Debye-Hückel 0.1: Stumm & Morgan (1996) Table 3.3 (from
#: memory). "ideal" (gamma = 1): 0.001, the ionic strength at which the Debye-Hückel
#: limiting law puts a monovalent ion's gamma at 0.964 (log10 gamma = -0.016 at 25 °C),
#: i.e. ignoring activity moves a pH by less than about 0.02; a threshold chosen here
#: (common practice to neglect activity in this range), not a literature value.
VALIDITY_I_M = {"ideal": 0.001, "davies": 0.5, "extended-debye-huckel": 0.1}

#: Ion-size parameter a [Å] used by the extended Debye-Hückel equation when the caller
#: gives none, keyed by |z|. Rounded central values of Kielland (1937) Table 1 for ions
#: of that charge (from memory: most monovalent inorganic ions 3–4.5 Å, divalent 4–8 Å,
#: trivalent 4–9 Å). A chosen default, not a property of any ion: give ``ion_size_A``
#: for real work. Charges above 3 use the |z| = 3 value.
DEFAULT_ION_SIZE_A = {1: 4.0, 2: 5.0, 3: 6.0}

#: Molar-scale Debye-Hückel A prefactor [(L/mol)^0.5 K^1.5]:
#: e^3 sqrt(2000 N_A) / (ln10 * 8 pi (epsilon_0 k_B)^1.5), from CODATA 2018.
DH_A_PREFACTOR = e**3 * math.sqrt(2000.0 * N_A) / (LN10 * 8.0 * math.pi * (epsilon_0 * k_B) ** 1.5)
#: Molar-scale Debye-Hückel B prefactor [1/(Å (mol/L)^0.5) K^0.5]:
#: sqrt(2000 N_A e^2 / (epsilon_0 k_B)) * 1e-10 m/Å, from CODATA 2018.
DH_B_PREFACTOR = math.sqrt(2000.0 * N_A * e**2 / (epsilon_0 * k_B)) * 1e-10

# Malmberg & Maryott (1956) eq. for 0–100 °C at 1 atm, t in °C (from memory).
_MM56 = (87.740, -0.40008, 9.398e-4, -1.410e-6)


def permittivity_water(T) -> float:
    r"""Relative permittivity (dielectric constant) of water at 1 atm.

    .. math::

        \varepsilon_r = 87.740 - 0.40008\,t + 9.398\times10^{-4}\,t^2
                        - 1.410\times10^{-6}\,t^3,\qquad t = T - 273.15

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        Relative permittivity [-].

    Notes
    -----
    Measured by Malmberg & Maryott at 0–100 °C. The IAPWS 1997 formulation (Fernández
    et al., J. Phys. Chem. Ref. Data 26 (1997) 1125, doi:10.1063/1.555997) gives values
    0.19 % higher at 0 °C, 0.13 % higher at 25 °C and 0.35 % lower at 100 °C (see
    ``tests/test_activity.py``).

    Examples
    --------
    >>> round(permittivity_water(298.15), 2)
    78.3

    References
    ----------
    C. G. Malmberg, A. A. Maryott, J. Res. Natl. Bur. Stand. 56 (1956) 1–8,
    doi:10.6028/jres.056.001 (from memory).
    """
    t = check_temperature_K(T) - 273.15
    c0, c1, c2, c3 = _MM56
    return c0 + t * (c1 + t * (c2 + t * c3))


def debye_huckel_A(T) -> float:
    r"""Debye-Hückel A constant for ionic strength in mol/L, log10 basis.

    .. math::

        A = \frac{e^3 \sqrt{2000 N_A}}{\ln 10\; 8\pi\,(\varepsilon_0 k_B)^{3/2}}
            (\varepsilon_r T)^{-3/2} = 1.82481\times10^{6}\,(\varepsilon_r T)^{-3/2}

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        A [(L/mol)^0.5].

    Notes
    -----
    Derivation: the inverse Debye length is
    :math:`\kappa^2 = 2000 N_A e^2 I / (\varepsilon_0 \varepsilon_r k_B T)` with I in
    mol/L (2000 = 2 x 1000 L/m3), and the limiting law is
    :math:`\ln\gamma = -z^2 e^2 \kappa / (8\pi\varepsilon_0\varepsilon_r k_B T)`.
    Dividing by ln 10 gives the prefactor above; with CODATA 2018 it is
    1.824812e6, against 1.82483e6 computed from older constants (Helgeson & Kirkham,
    Am. J. Sci. 274 (1974) 1089, from memory), a 1e-5 relative difference.

    When I is on the molal scale (mol/kg), c = rho m for dilute solutions and A gains a
    factor sqrt(rho / (g/cm3)): see :func:`debye_huckel_A_molal`. The core works in
    mol/L, so this function has no density factor.

    Permittivity from :func:`permittivity_water`.

    Examples
    --------
    >>> round(debye_huckel_A(298.15), 4)
    0.5116

    References
    ----------
    P. Debye, E. Hückel, Phys. Z. 24 (1923) 185–206; R. A. Robinson, R. H. Stokes,
    Electrolyte Solutions, 2nd ed., Butterworths (1959), Appendix 7.1 (from memory).
    """
    T = check_temperature_K(T)
    return DH_A_PREFACTOR / (permittivity_water(T) * T) ** 1.5


def debye_huckel_B(T) -> float:
    r"""Debye-Hückel B constant for ionic strength in mol/L and ion size in Å.

    .. math::

        B = 10^{-10}\sqrt{\frac{2000 N_A e^2}{\varepsilon_0 k_B}}\,
            (\varepsilon_r T)^{-1/2} = 50.2904\,(\varepsilon_r T)^{-1/2}

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        B [1/(Å (mol/L)^0.5)].

    Notes
    -----
    :math:`B\sqrt{I}` is the inverse Debye length in 1/Å. The CODATA 2018 prefactor
    is 50.2904, against 50.2916 from older constants (Helgeson & Kirkham 1974, from
    memory). Molal form: :func:`debye_huckel_B_molal`.

    Examples
    --------
    >>> round(debye_huckel_B(298.15), 4)
    0.3291

    References
    ----------
    P. Debye, E. Hückel, Phys. Z. 24 (1923) 185–206; R. A. Robinson, R. H. Stokes,
    Electrolyte Solutions, 2nd ed., Butterworths (1959), Appendix 7.1 (from memory).
    """
    T = check_temperature_K(T)
    return DH_B_PREFACTOR / math.sqrt(permittivity_water(T) * T)


def debye_huckel_A_molal(T) -> float:
    r"""Debye-Hückel A constant for ionic strength in mol/kg (molal), log10 basis.

    .. math::

        A_m = A \sqrt{\rho / (\mathrm{g\,cm^{-3}})}

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        A [(kg/mol)^0.5].

    Notes
    -----
    Density from :func:`acidscape.science.purewater.density_water`.

    Examples
    --------
    >>> round(debye_huckel_A_molal(298.15), 4)
    0.5108
    """
    T = check_temperature_K(T)
    return debye_huckel_A(T) * math.sqrt(density_water(T))


def debye_huckel_B_molal(T) -> float:
    r"""Debye-Hückel B constant for ionic strength in mol/kg and ion size in Å.

    .. math::

        B_m = B \sqrt{\rho / (\mathrm{g\,cm^{-3}})}

    Parameters
    ----------
    T : float
        Temperature, 273.15–373.15 K [K].

    Returns
    -------
    float
        B [1/(Å (mol/kg)^0.5)].

    Examples
    --------
    >>> round(debye_huckel_B_molal(298.15), 4)
    0.3287
    """
    T = check_temperature_K(T)
    return debye_huckel_B(T) * math.sqrt(density_water(T))


def _nonneg(value, field: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{what} must be a number, got {value!r}", field=field)
    x = float(value)
    if not math.isfinite(x) or x < 0.0:
        raise InputError(f"{what} must be a finite number >= 0, got {value!r}", field=field)
    return x


def _charge(z) -> int:
    if isinstance(z, bool) or not isinstance(z, (int, float)) or not math.isfinite(z) or z != int(z):
        raise InputError(f"charge z must be a whole number, got {z!r}", field="charge")
    return int(z)


def log10_gamma(z, I, T, model, ion_size_A=None) -> float:
    r"""log10 of the activity coefficient of an ion.

    .. math::

        \text{ideal:}\quad \log_{10}\gamma = 0

        \text{davies:}\quad \log_{10}\gamma = -A z^2\left(\frac{\sqrt I}{1+\sqrt I}
            - 0.3\,I\right)

        \text{extended-debye-huckel:}\quad \log_{10}\gamma
            = -\frac{A z^2 \sqrt I}{1 + B a \sqrt I}

    Parameters
    ----------
    z : int
        Charge of the ion [-].
    I : float
        Ionic strength [mol/L].
    T : float
        Temperature, 273.15–373.15 K [K].
    model : str
        One of :data:`MODELS` [-].
    ion_size_A : float or None
        Ion-size parameter a for the extended Debye-Hückel equation; ``None`` uses
        :data:`DEFAULT_ION_SIZE_A` for |z| [Å].

    Returns
    -------
    float
        log10 gamma [-].

    Raises
    ------
    UnknownIdError
        ``model`` is not in :data:`MODELS` (``field="activity"``).
    InputError
        ``I`` negative or not finite, ``z`` not a whole number, ``ion_size_A`` not
        positive, ``T`` outside 0–100 °C.

    Notes
    -----
    Neutral species (z = 0) get log10 gamma = 0 in every model: the salting-out term
    (about 0.1 I for dissolved gases) is not applied. Above :data:`VALIDITY_I_M` the
    result is still returned; callers are expected to warn. ``ion_size_A`` is ignored
    by the ideal and Davies models.

    Examples
    --------
    >>> round(10 ** log10_gamma(1, 0.1, 298.15, "davies"), 3)
    0.781
    >>> log10_gamma(0, 0.1, 298.15, "davies")
    0.0

    References
    ----------
    C. W. Davies, Ion Association, Butterworths (1962); P. Debye, E. Hückel, Phys. Z. 24
    (1923) 185–206; J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675,
    doi:10.1021/ja01288a032 (from memory).
    """
    if model not in MODELS:
        raise UnknownIdError(
            f"activity model {model!r} is not known; allowed: {', '.join(MODELS)}", field="activity"
        )
    z = _charge(z)
    I = _nonneg(I, "ionic_strength_M", "ionic strength I [mol/L]")
    T = check_temperature_K(T)
    if ion_size_A is not None:
        a = _nonneg(ion_size_A, "ion_size_A", "ion size a [Å]")
        if a == 0.0:
            raise InputError(f"ion size a [Å] must be > 0, got {ion_size_A!r}", field="ion_size_A")
    return gamma_function(T, model)(z, ion_size_A, I)


def gamma_function(T: float, model: str):
    """log10 activity coefficient as a closure ``lg(z, ion_size_A, I)`` at one T and model.

    The equations of :func:`log10_gamma` (which validates its inputs and calls this),
    with the Debye-Hückel A(T) and B(T) computed once, for the inner loops of the
    solver, titration curves and dosing. The closure does not validate its inputs:
    callers pass checked values.

    Parameters
    ----------
    T : float
        Temperature [K]
    model : str
        One of :data:`MODELS` [-]

    Returns
    -------
    callable
        ``lg(z, ion_size_A, I) -> log10 gamma`` with z [-], ion_size_A [Å] or None
        (:data:`DEFAULT_ION_SIZE_A` by |z|) and I [mol/L]

    Examples
    --------
    >>> lg = gamma_function(298.15, "davies")
    >>> round(10 ** lg(1, None, 0.1), 3)
    0.781
    """
    if model == "ideal":
        return lambda z, a, I: 0.0
    if model not in MODELS:
        raise UnknownIdError(
            f"activity model {model!r} is not known; allowed: {', '.join(MODELS)}", field="activity"
        )
    A = debye_huckel_A(T)
    if model == "davies":
        def lg(z, a, I):
            if z == 0 or I <= 0.0:
                return 0.0
            s = math.sqrt(I)
            return -A * z * z * (s / (1.0 + s) - 0.3 * I)
        return lg
    B = debye_huckel_B(T)

    def lg(z, a, I):
        if z == 0 or I <= 0.0:
            return 0.0
        if a is None:
            a = DEFAULT_ION_SIZE_A[min(abs(z), 3)]
        s = math.sqrt(I)
        return -A * z * z * s / (1.0 + B * a * s)
    return lg


def ionic_strength(concentrations_and_charges) -> float:
    r"""Ionic strength from concentrations and charges.

    .. math::

        I = \tfrac12 \sum_i c_i z_i^2

    Parameters
    ----------
    concentrations_and_charges : iterable of (float, int)
        Pairs of concentration [mol/L] and charge [-].

    Returns
    -------
    float
        Ionic strength [mol/L].

    Examples
    --------
    >>> round(ionic_strength([(0.01, 2), (0.01, -2)]), 6)
    0.04
    """
    total = 0.0
    for k, pair in enumerate(concentrations_and_charges):
        try:
            c, z = pair
        except (TypeError, ValueError):
            raise InputError(
                f"item {k} must be a (concentration [mol/L], charge) pair, got {pair!r}",
                field="concentrations_and_charges",
            ) from None
        c = _nonneg(c, "concentrations_and_charges", f"concentration of item {k} [mol/L]")
        z = _charge(z)
        total += c * z * z
    return 0.5 * total


#: I per mg/L of total dissolved solids [(mol/L)/(mg/L)], Langelier (1936), from memory.
TDS_FACTOR = 2.5e-5
#: I per µS/cm of specific conductance at 25 °C [(mol/L)/(µS/cm)], Russell (1976), from memory.
CONDUCTANCE_FACTOR = 1.6e-5


def ionic_strength_from_tds(tds_mg_per_L) -> float:
    r"""Estimate the ionic strength of a natural water from its total dissolved solids.

    .. math::

        I \approx 2.5\times10^{-5}\,\mathrm{TDS}

    Parameters
    ----------
    tds_mg_per_L : float
        Total dissolved solids [mg/L].

    Returns
    -------
    float
        Ionic strength [mol/L].

    Notes
    -----
    Empirical (Langelier 1936) for fresh waters where calcium, magnesium, sodium,
    bicarbonate, sulfate and chloride dominate; typically good to about 20 %.

    Examples
    --------
    >>> round(ionic_strength_from_tds(400.0), 6)
    0.01

    References
    ----------
    W. F. Langelier, "The analytical control of anti-corrosion water treatment",
    J. Am. Water Works Assoc. 28 (1936) 1500–1521 (from memory).
    """
    return TDS_FACTOR * _nonneg(tds_mg_per_L, "tds_mg_per_L", "total dissolved solids [mg/L]")


def ionic_strength_from_conductance(sc_uS_per_cm) -> float:
    r"""Estimate the ionic strength of a natural water from its specific conductance.

    .. math::

        I \approx 1.6\times10^{-5}\,\kappa_{25}

    Parameters
    ----------
    sc_uS_per_cm : float
        Specific conductance at 25 °C [µS/cm].

    Returns
    -------
    float
        Ionic strength [mol/L].

    Notes
    -----
    Empirical (Russell 1976) for fresh waters; the conductance must be referred to
    25 °C as meters usually report it.

    Examples
    --------
    >>> round(ionic_strength_from_conductance(500.0), 6)
    0.008

    References
    ----------
    L. L. Russell (1976), as quoted in V. L. Snoeyink, D. Jenkins, Water Chemistry,
    Wiley (1980) (from memory).
    """
    return CONDUCTANCE_FACTOR * _nonneg(sc_uS_per_cm, "conductance_uS_per_cm", "specific conductance [µS/cm]")
