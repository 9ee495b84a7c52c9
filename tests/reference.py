"""An independent equilibrium solver for tests, built on numpy and scipy's brentq.

It shares only *data* with the core (pKa at T, pKw, the Debye-Hückel A and B
constants, ion sizes); the speciation formula, activity equations, ionic-strength
root and pH root are written here again, differently: the alpha
fractions come straight from the textbook product form in numpy (no log-sum-exp),
ionic strength is iterated *inside* each charge-balance evaluation, and the pH is
found by scipy.optimize.brentq (Brent 1973) on that nested function.
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from acidscape.science.activity import DEFAULT_ION_SIZE_A, debye_huckel_A, debye_huckel_B


def log10_gamma_ref(z, I, T, model, size):
    """Davies (Davies 1962) or extended Debye-Hückel, evaluated independently."""
    if model == "ideal" or z == 0:
        return 0.0
    A = debye_huckel_A(T)
    s = np.sqrt(I)
    if model == "davies":
        return -A * z * z * (s / (1.0 + s) - 0.3 * I)
    B = debye_huckel_B(T)
    if size is None:
        size = DEFAULT_ION_SIZE_A[min(abs(z), 3)]
    return -A * z * z * s / (1.0 + B * size * s)


def alphas_ref(pH, pKa):
    """Fractions from the product form K1..Ki [H+]^(n-i) / D, in numpy long double."""
    h = np.longdouble(10.0) ** (-np.longdouble(pH))
    K = [np.longdouble(10.0) ** (-np.longdouble(p)) for p in pKa]
    n = len(K)
    terms = []
    prod = np.longdouble(1.0)
    for i in range(n + 1):
        if i:
            prod = prod * K[i - 1]
        terms.append(prod * h ** (n - i))
    d = sum(terms)
    return [float(t / d) for t in terms]


def solve_ref(systems, ions, T, pKw, model, sizes_H=9.0, sizes_OH=3.5, I_fixed=None):
    """pH of a water by brentq.

    systems: list of (total_M, pKa tuple (thermodynamic at T), charges tuple, sizes tuple)
    ions: list of (conc_M, charge, size)
    Returns (pH, I).
    """

    def species_at(pH, I):
        lgH = log10_gamma_ref(1, I, T, model, sizes_H)
        lgOH = log10_gamma_ref(-1, I, T, model, sizes_OH)
        H = 10.0 ** (-pH - lgH)
        OH = 10.0 ** (pH - pKw - lgOH)
        charge = H - OH
        ionic = H + OH
        for c, z, size in ions:
            charge += z * c
            ionic += z * z * c
        for total, pKa, charges, sizes in systems:
            lg = [log10_gamma_ref(z, I, T, model, s) for z, s in zip(charges, sizes)]
            mixed = [pk + lg[j + 1] - lg[j] for j, pk in enumerate(pKa)]
            a = alphas_ref(pH, mixed)
            charge += total * sum(z * ai for z, ai in zip(charges, a))
            ionic += total * sum(z * z * ai for z, ai in zip(charges, a))
        return charge, 0.5 * ionic

    def consistent_I(pH):
        if I_fixed is not None:
            return I_fixed
        # I is the root of g(I) = I_from_species(pH, I) - I, found by brentq too.
        def g(I):
            return species_at(pH, I)[1] - I

        hi = 1.0
        while g(hi) > 0:
            hi *= 2.0
        if g(0.0) == 0.0:
            return 0.0
        return brentq(g, 0.0, hi, xtol=1e-16, rtol=1e-14, maxiter=500)

    def f(pH):
        return species_at(pH, consistent_I(pH))[0]

    pH = brentq(f, 0.0, 14.5, xtol=1e-13, rtol=1e-15, maxiter=500)
    return pH, consistent_I(pH)
