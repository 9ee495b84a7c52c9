"""Unit conversions at the boundary: published atomic weights and exact round trips."""

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from acidscape.data import library
from acidscape.errors import InputError, UnknownIdError
from acidscape.data.units import accepted_units, factor_to_molar, from_molar, to_molar

# Standard atomic weights (IUPAC CIAAW 2021 conventional values; from memory):
# N 14.007, P 30.974, C 12.011, Cl2 = 2 x 35.45.


def test_ammonium_as_nitrogen():
    nh4 = library.get_system("ammonium")
    assert to_molar(14.007, "mg/L as N", nh4) == pytest.approx(1e-3, rel=1e-12)


def test_phosphate_as_phosphorus():
    po4 = library.get_system("phosphate")
    assert to_molar(30.974, "mg/L as P", po4) == pytest.approx(1e-3, rel=1e-12)


def test_free_chlorine_as_cl2():
    # Free chlorine (HOCl + OCl-) is reported as mg/L Cl2 (common practice; Standard Methods 4500-Cl).
    hocl = library.get_system("hypochlorous")
    assert to_molar(70.90, "mg/L as Cl2", hocl) == pytest.approx(1e-3, rel=1e-12)


def test_carbonate_as_carbon():
    assert to_molar(12.011, "mg/L as C", library.get_system("carbonate")) == pytest.approx(1e-3, rel=1e-12)


def test_meq_of_calcium():
    # 1 meq/L of Ca2+ is 0.5 mmol/L (definition of the equivalent; common practice).
    ca = next(i for i in library.ions().values() if i.charge == 2 and i.formula.startswith("Ca"))
    assert to_molar(1.0, "meq/L", ca) == pytest.approx(0.5e-3, rel=1e-15)


ITEMS = list(library.systems().values()) + list(library.ions().values())


@settings(max_examples=300, deadline=None)
@given(item=st.sampled_from(ITEMS), value=st.floats(1e-12, 1e6), pick=st.integers(0, 10))
def test_round_trip_is_exact(item, value, pick):
    units = accepted_units(item)
    unit = units[pick % len(units)]
    c = to_molar(value, unit, item)
    back = from_molar(c, unit, item)
    assert back == pytest.approx(value, rel=4e-16, abs=0)


def test_unknown_unit_and_misfit():
    with pytest.raises(UnknownIdError, match="The unit “ppm” is not known"):
        factor_to_molar("ppm", library.get_system("acetic"))
    with pytest.raises(InputError, match="does not fit"):
        factor_to_molar("mg/L as P", library.get_system("ammonium"))
    with pytest.raises(InputError, match="must be zero or more"):
        to_molar(-1.0, "mol/L", library.get_system("acetic"))
