"""Fundamental constants, frozen to the CODATA 2018 recommended values.

Source: E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended
values of the fundamental physical constants: 2018", Rev. Mod. Phys. 93, 025010
(2021), doi:10.1103/RevModPhys.93.025010. The SI 2019 defining constants are exact.

Standard atomic weights: IUPAC CIAAW, "Standard atomic weights of the elements 2021",
Pure Appl. Chem. 95 (2023) 1–? (conventional values, Table 3 of Prohaska et al. 2022,
doi:10.1515/pac-2019-0603). Abridged conventional values are used.
"""

from __future__ import annotations

import math

#: Molar gas constant R [J/(mol K)] (exact since SI 2019: N_A * k).
R = 8.314462618
#: Avogadro constant [1/mol] (exact).
N_A = 6.02214076e23
#: Boltzmann constant [J/K] (exact).
k_B = 1.380649e-23
#: Elementary charge [C] (exact).
e = 1.602176634e-19
#: Vacuum electric permittivity [F/m] (CODATA 2018).
epsilon_0 = 8.8541878128e-12
#: 0 °C in kelvin [K] (exact by definition).
T0 = 273.15
#: Standard atmosphere [Pa] (exact by definition).
atm = 101325.0
#: ln(10), used throughout for conversions between log10 and ln.
LN10 = math.log(10.0)

#: Conventional standard atomic weights [g/mol] (IUPAC CIAAW 2021, abridged/conventional).
ATOMIC_WEIGHT = {
    "H": 1.008, "B": 10.81, "C": 12.011, "N": 14.007, "O": 15.999, "F": 18.998,
    "Na": 22.990, "Mg": 24.305, "Si": 28.085, "P": 30.974, "S": 32.06, "Cl": 35.45,
    "K": 39.098, "Ca": 40.078, "Cr": 51.996, "Mn": 54.938, "Fe": 55.845, "As": 74.922,
    "Se": 78.971, "Br": 79.904, "Li": 6.94, "Sr": 87.62, "Ba": 137.33, "I": 126.90,
    "Al": 26.982, "Zn": 65.38, "Cu": 63.546, "Pb": 207.2,
}

#: Molar mass of CaCO3 [g/mol] from the atomic weights above; its half,
#: 50.04 g per equivalent, is the "as CaCO3" factor of Standard Methods 2320.
M_CaCO3 = ATOMIC_WEIGHT["Ca"] + ATOMIC_WEIGHT["C"] + 3 * ATOMIC_WEIGHT["O"]
