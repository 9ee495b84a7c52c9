"""Checks of acidscape.science.purewater against IAPWS releases (through the ``iapws`` package) and
published check values.

Reference library: iapws 1.5.5 (J. J. Peñas). Its ``iapws._iapws._Kw(rho, T)`` is
labelled in ``iapws/__init__.py`` as IAPWS R11-19 (the 2019 revision of the release on
the ionization constant of H2O). Its alpha and beta constants differ from those of
Bandura & Lvov (2006) / R11-07 that acidscape implements (gamma, n and M_w are the
same); across 0–100 °C at 1 atm the two give pKw within 0.002 of each other. The
tolerance below is therefore 0.004: twice that spread, yet ten times smaller than the
shift caused by a wrong digit in any of the leading constants (e.g. alpha1 off by 10 K
moves pKw at 25 °C by about 0.04).
"""

from __future__ import annotations

import math
import warnings

import pytest

iapws = pytest.importorskip("iapws")
from iapws import IAPWS95  # noqa: E402
from iapws._iapws import _Kw  # noqa: E402

from acidscape.errors import InputError  # noqa: E402
from acidscape.science.purewater import check_temperature_K, density_water, pKw, pKw_from_density  # noqa: E402

P_ATM_MPA = 0.101325


def iapws95_liquid_density(T):
    """Liquid density [kg/m3] from IAPWS-95 at 1 atm; at 100 °C, where 1 atm is just
    below the saturation pressure (0.101418 MPa) and IAPWS95 returns vapour, use the
    saturated liquid instead (differs from metastable 1-atm liquid by ~1e-5 relative)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if T >= 373.124:
            state = IAPWS95(T=T, x=0.0)
        else:
            state = IAPWS95(T=T, P=P_ATM_MPA)
    assert state.phase != "Vapour" or T >= 373.124
    return state.rho


TEMPS_C = [0.0, 10.0, 25.0, 50.0, 75.0, 100.0]


@pytest.mark.parametrize("t_c", TEMPS_C)
def test_density_matches_iapws95(t_c):
    # Kell (1975) vs IAPWS-95 (W. Wagner, A. Pruß 2002, via iapws): agreement within
    # 2e-5 relative expected (IPTS-68 vs ITS-90 and fit residuals).
    T = t_c + 273.15
    ours = density_water(T) * 1000.0
    ref = iapws95_liquid_density(T)
    assert ours == pytest.approx(ref, rel=2e-5)


def test_density_handbook_values():
    # CRC Handbook of Chemistry and Physics, "Properties of water in the range 0–100 °C"
    # (from memory): 0.99984 g/cm3 at 0 °C, 0.99705 at 25 °C, 0.95835 at 100 °C.
    assert density_water(273.15) == pytest.approx(0.99984, abs=1e-5)
    assert density_water(298.15) == pytest.approx(0.99705, abs=1e-5)
    assert density_water(373.15) == pytest.approx(0.95835, abs=2e-5)


@pytest.mark.parametrize("t_c", TEMPS_C)
def test_pKw_matches_iapws_R11(t_c):
    T = t_c + 273.15
    rho = iapws95_liquid_density(T)
    ref = _Kw(rho, T)  # iapws: R11-19 constants, pKw on the molal scale
    assert pKw(T) == pytest.approx(ref, abs=0.004)
    # the density-based form evaluated at exactly iapws' density, same tolerance
    assert pKw_from_density(rho / 1000.0, T) == pytest.approx(ref, abs=0.004)


def test_pKw_R11_07_check_values():
    # IAPWS R11-07, table of values for program verification (from memory):
    # T = 300 K, rho = 1.0 g/cm3 -> pKw = 13.906565 (the same number is printed in
    # the docstring example of iapws._iapws._Kw); T = 600 K, rho = 0.7 -> 11.203153.
    assert pKw_from_density(1.0, 300.0) == pytest.approx(13.906565, abs=2e-6)
    assert pKw_from_density(0.7, 600.0) == pytest.approx(11.203153, abs=2e-6)


def test_pKw_25C_Bandura_Lvov_table():
    # Bandura & Lvov (2006), table of pKw at 0.1 MPa (from memory): 13.995 at 25 °C,
    # 14.946 at 0 °C, 12.252 at 100 °C. Printed to 3 decimals.
    assert pKw(298.15) == pytest.approx(13.995, abs=0.0006)
    assert pKw(273.15) == pytest.approx(14.946, abs=0.0006)
    assert pKw(373.15) == pytest.approx(12.252, abs=0.0011)


def test_pKw_decreases_with_temperature():
    # Water ionization is endothermic (dH ~ +56 kJ/mol at 25 °C, common practice):
    # pKw falls monotonically from 0 to 100 °C.
    values = [pKw(273.15 + t) for t in range(0, 101, 5)]
    assert all(a > b for a, b in zip(values, values[1:]))


def test_pKw_enthalpy_by_van_t_Hoff():
    # Standard enthalpy of ionization of water at 25 °C: 55.8 kJ/mol (CODATA key values,
    # Cox, Wagman & Medvedev 1989, from memory). Central difference of pKw. The release
    # fits K, not its slope: its derivative (ours and iapws' R11-19 alike) gives 56.4
    # kJ/mol, 1 % above calorimetry, hence the 1 kJ/mol tolerance.
    R, h, T = 8.314462618, 0.01, 298.15
    dpdT = (pKw(T + h) - pKw(T - h)) / (2 * h)
    dH = -dpdT * R * math.log(10) * T * T / 1000.0
    assert dH == pytest.approx(55.8, abs=1.0)


@pytest.mark.parametrize("bad", [273.15 - 0.01, 373.15 + 0.01, -5.0, 500.0])
def test_out_of_range_raises(bad):
    with pytest.raises(InputError) as info:
        pKw(bad)
    assert info.value.field == "temperature_C"
    assert f"{bad:g}" in info.value.message
    with pytest.raises(InputError):
        density_water(bad)


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), "25", None, True])
def test_non_numbers_raise(bad):
    with pytest.raises(InputError) as info:
        pKw(bad)
    assert info.value.field == "temperature_C"


def test_range_ends_inclusive_with_slack():
    assert check_temperature_K(273.15) == 273.15
    assert check_temperature_K(100 + 273.15) == pytest.approx(373.15)
    # floating-point overshoot at 100 °C is accepted and not moved onto the bound
    assert check_temperature_K(373.15 + 1e-9) == 373.15 + 1e-9
    assert math.isfinite(pKw(373.15 + 1e-9))


def test_pKw_from_density_validates():
    with pytest.raises(InputError):
        pKw_from_density(-0.1, 300.0)
    with pytest.raises(InputError):
        pKw_from_density(1.0, 200.0)
