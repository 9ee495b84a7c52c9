"""A water as a component-species tableau, ready for :mod:`acidscape.science.model`.

:class:`WaterModel` takes the water's acid-base systems and ions (their constants already
at the water's temperature) and, when complexes are on, every complex and solid of the
cited database whose components the water holds. It writes each as a species or solid of
the tableau in the component basis:

- components: H+, the fully deprotonated base of each acid-base system, each free ion;
- the species H_pA of a system with p protons above its base: log10 K = the sum of its
  last p pKa (so the tableau and the alpha fractions of :mod:`acidscape.science.speciation`
  agree by construction);
- a complex printed as ``sum(coef * ref) = complex`` with constant K: in the component
  basis log10 K + sum(coef * log10 K_ref), where K_ref forms the reference species from the
  components (H+ and free ions: 1; OH-: Kw; an acid species: its cumulative constant);
- a solid printed as ``solid = sum(coef * ref)``: log10 Ksp - sum(coef * log10 K_ref).

Classes
-------
SystemInput, IonInput     the water's systems and ions (constants at the water's temperature)
WaterModel                the tableau, totals and bookkeeping; ``solve(...)`` -> model.Solution
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..data import library
from . import temperature
from .activity import gamma_function
from .model import Solid, Species, Tableau, equilibrium

#: Kielland ion sizes of H+ and OH- [Å] (Kielland 1937, J. Am. Chem. Soc. 59, 1675; from memory).
ION_SIZE_H = 9.0
ION_SIZE_OH = 3.5


@dataclass(frozen=True)
class SystemInput:
    """An acid-base system in a water.

    ``pKa`` are thermodynamic (I = 0) values at the water's temperature, ``species`` and
    ``charges`` run from the most protonated species to the base. If ``fixed_first_M`` is set
    the most protonated species is held at that concentration [mol/L] (open system) and
    ``total_M`` is ignored.
    """

    key: str
    name: str
    species: tuple[str, ...]
    charges: tuple[int, ...]
    pKa: tuple[float, ...]
    total_M: float
    ion_sizes: tuple[float | None, ...] = ()
    fixed_first_M: float | None = None


@dataclass(frozen=True)
class IonInput:
    """A free ion (a metal, or an ion that forms no acid-base pair)."""

    key: str
    name: str
    charge: int
    conc_M: float
    ion_size_A: float | None = None


#: reactant name -> (its library key, the key of the system whose base it is, or None); the
#: library is read once and never changes, so each name is resolved once per process.
_RESOLVED: dict[str, tuple] = {}


def _resolved(ref: str) -> tuple:
    """(key, alternative key) of a reactant name of complexes.csv / solids.csv (see
    :func:`acidscape.data.library.resolve_ref`): the alternative is the acid-base system an ion
    is the base of, used when the water holds that system rather than the ion."""
    hit = _RESOLVED.get(ref)
    if hit is None:
        key = library.resolve_ref(ref)
        alt = None
        if key[0] == "ion":
            ion = library.get_ion(key[1])
            if getattr(ion, "system", None):
                alt = ("system", ion.system, 0)
        hit = _RESOLVED[ref] = (key, alt)
    return hit


def _cumulative(pKa: tuple[float, ...], p: int) -> float:
    """log10 K forming the species with p protons from the base: the sum of the last p pKa."""
    return sum(pKa[len(pKa) - p:]) if p else 0.0


def _make_up(systems, ions, T: float, pKw: float, model: str, complexes: bool) -> tuple:
    """Everything a water's tableau depends on besides the amounts: each system's and ion's
    identity, names, charges, constants and ion sizes, which systems are open to a gas, the
    temperature, pKw, the activity model and the choice of complexes (the database is read
    once and never changes)."""
    return (tuple((s.key, s.name, s.species, s.charges, s.pKa, s.ion_sizes, s.fixed_first_M is None)
                  for s in systems),
            tuple((i.key, i.name, i.charge, i.ion_size_A) for i in ions),
            T, pKw, model, bool(complexes))


#: Tableau and bookkeeping of the make-ups met so far (see :class:`WaterModel`), oldest first.
_SHARED: dict = {}
#: Most make-ups kept.
MAX_SHARED = 32
#: The WaterModel attributes that depend on the make-up alone (shared; read only).
_SHARED_FIELDS = frozenset(("gamma_of", "species_notes", "solid_notes", "comp_index", "system_species",
                            "ion_species", "_ref_logK", "solid_info", "solid_log10_K", "complex_info", "tab",
                            "solid_index"))


class WaterModel:
    """The tableau of one water at one temperature.

    Waters of the same make-up (the same systems and ions with the same constants, temperature,
    activity model and choice of complexes: :func:`_make_up`), whatever their amounts, share
    one tableau and its bookkeeping, built once (the last :data:`MAX_SHARED` make-ups are
    kept): the model's caches on the tableau (structures, constraint patterns, compiled
    evaluations) then serve every edit of a water's amounts. The shared attributes are read
    only; ``totals``, ``fixed_species``, ``systems``, ``ions`` and ``I_fixed`` are each
    water's own.

    Attributes
    ----------
    tab : model.Tableau
    totals : list of float
        Total of each component [mol/L] (H+ entry 0: set by the charge balance or the pH)
    system_species : dict
        System key -> species indices, most protonated first
    ion_species : dict
        Ion key -> index of its free species
    solid_info : list
        Library solid object (or None) per tableau solid
    species_notes, solid_notes : dict
        Temperature notes of each complex (species index) and solid (solid index) used; see
        :meth:`notes_that_matter`
    """

    def __init__(self, systems: list[SystemInput], ions: list[IonInput], *, T: float, pKw: float,
                 model: str = "davies", complexes: bool = True, I_fixed: float | None = None):
        self.T, self.pKw, self.model, self.I_fixed = T, pKw, model, I_fixed
        self.systems, self.ions = list(systems), list(ions)
        self.complexes = complexes
        key = _make_up(self.systems, self.ions, T, pKw, model, complexes)
        try:
            shared = _SHARED.get(key)
        except TypeError:  # inputs given as lists, not tuples: built afresh, not shared
            key = shared = None
        if shared is not None:
            # the same make-up met before: its tableau and bookkeeping (and the model's caches on
            # the tableau) are shared; the amounts are this water's own, laid out as below
            self.__dict__.update(shared)
            self.totals = [0.0] + [0.0 if s.fixed_first_M is not None else s.total_M for s in self.systems] \
                + [ion.conc_M for ion in self.ions]
            self.fixed_species = {self.system_species[s.key][0]: s.fixed_first_M for s in self.systems
                                  if s.fixed_first_M is not None}
            return
        self._build(T, pKw, model, complexes)
        if key is None:
            return
        if len(_SHARED) >= MAX_SHARED:
            _SHARED.pop(next(iter(_SHARED)))  # the oldest make-up goes first
        _SHARED[key] = {k: v for k, v in self.__dict__.items() if k in _SHARED_FIELDS}

    def _build(self, T: float, pKw: float, model: str, complexes: bool):
        """The tableau and bookkeeping of this water's make-up, and its totals."""
        self.gamma_of = gamma_function(T, model)
        self.species_notes: dict[int, list[str]] = {}
        self.solid_notes: dict[int, list[str]] = {}
        names = ["H+"]
        charges = [1]
        sizes: list[float | None] = [ION_SIZE_H]
        totals = [0.0]
        species = [Species("H+", ((0, 1),), 0.0, 1, ION_SIZE_H, "water"),
                   Species("OH-", ((0, -1),), -pKw, -1, ION_SIZE_OH, "water")]
        self.comp_index: dict[str, int] = {}
        self.system_species: dict[str, list[int]] = {}
        self.ion_species: dict[str, int] = {}
        self.fixed_species: dict[int, float] = {}
        # log10 K forming each reference species from the components, for complexes and solids
        self._ref_logK: dict[tuple, tuple[tuple[tuple[int, int], ...], float]] = {
            ("H+",): (((0, 1),), 0.0), ("OH-",): (((0, -1),), -pKw)}
        for s in self.systems:
            j = len(names)
            self.comp_index[s.key] = j
            n = len(s.pKa)
            names.append(s.key)
            charges.append(s.charges[-1])
            sz = s.ion_sizes or (None,) * (n + 1)
            sizes.append(sz[-1])
            totals.append(0.0 if s.fixed_first_M is not None else s.total_M)
            idx = []
            for k in range(n + 1):
                p = n - k
                logK = _cumulative(s.pKa, p)
                stoich = ((j, 1), (0, p)) if p else ((j, 1),)
                idx.append(len(species))
                species.append(Species(s.species[k], stoich, logK, s.charges[k], sz[k], "acid-base", s.key))
                self._ref_logK[("system", s.key, p)] = (stoich, logK)
            self.system_species[s.key] = idx
            if s.fixed_first_M is not None:
                self.fixed_species[idx[0]] = s.fixed_first_M
        for ion in self.ions:
            j = len(names)
            self.comp_index[ion.key] = j
            names.append(ion.key)
            charges.append(ion.charge)
            sizes.append(ion.ion_size_A)
            totals.append(ion.conc_M)
            self.ion_species[ion.key] = len(species)
            species.append(Species(ion.name, ((j, 1),), 0.0, ion.charge, ion.ion_size_A, "free ion"))
            self._ref_logK[("ion", ion.key)] = (((j, 1),), 0.0)
        solids: list[Solid] = []
        self.solid_info: list = []
        self.solid_log10_K: list[float] = []  # as printed (dissolution into the reference species), at T
        self.complex_info: dict[int, object] = {}
        if complexes:
            for cx in library.complexes():
                built = self._component_basis(cx.reactants, +1)
                if built is None:
                    continue
                stoich, shift = built
                logK, notes = temperature.log10_K_at(cx, T)
                if notes:
                    self.species_notes[len(species)] = notes
                self.complex_info[len(species)] = cx
                species.append(Species(cx.formula, stoich, logK + shift, cx.charge, cx.ion_size_A, "complex"))
        for sd in library.solids():
            built = self._component_basis(sd.reactants, -1)
            if built is None:
                continue
            stoich, shift = built
            logK, notes = temperature.log10_K_at(sd, T)
            if notes:
                self.solid_notes[len(solids)] = notes
            solids.append(Solid(sd.id, stoich, logK + shift))
            self.solid_info.append(sd)
            self.solid_log10_K.append(logK)
        self.tab = Tableau(tuple(names), tuple(charges), tuple(sizes), tuple(species), tuple(solids))
        self.totals = totals
        self.solid_index = {s.id: k for k, s in enumerate(solids)}

    def _component_basis(self, reactants, sign: int):
        """(stoich, log10 K shift) of a reaction over reference species, or None if a component is absent.

        ``sign`` +1 for a formation (complex), -1 for a dissolution (solid).
        """
        acc: dict[int, int] = {}
        shift = 0.0
        ref_logK = self._ref_logK
        for ref, coef in reactants:
            key, alt = _resolved(ref)
            found = ref_logK.get(key)
            if found is None and alt is not None:
                # an ion that is an acid-base system's base (sulfate) is that system's component
                found = ref_logK.get(alt)
            if found is None:
                return None
            stoich, logK = found
            for j, a in stoich:
                acc[j] = acc.get(j, 0) + coef * a
            shift += sign * coef * logK
        return tuple((j, a) for j, a in sorted(acc.items()) if a), shift

    @property
    def notes(self) -> list[str]:
        """Every temperature note of the complexes and solids in the tableau."""
        return [n for d in (self.species_notes, self.solid_notes) for notes in d.values() for n in notes]

    def notes_that_matter(self, sol, share: float = 0.01, si_window: float = 1.0) -> list[str]:
        """Temperature notes of the constants that shape this answer.

        A complex's note counts when the complex holds at least ``share`` of a component's
        total; a solid's when it is present or its saturation index is within ``si_window`` of 0.
        """
        out: list[str] = []
        for i, notes in self.species_notes.items():
            sp = self.tab.species[i]
            if any(sol.totals[j] > 0 and abs(a) * sol.conc[i] >= share * sol.totals[j] for j, a in sp.stoich if j):
                out.extend(notes)
        for s, notes in self.solid_notes.items():
            if s in sol.solids or abs(sol.SI.get(s, -math.inf)) <= si_window:
                out.extend(notes)
        return out

    def solve(self, *, pH: float | None = None, totals: list[float] | None = None,
              allow_solids: tuple[str, ...] = (), guess: dict | None = None):
        """Equilibrium of this water (see :func:`acidscape.science.model.equilibrium`).

        ``totals`` overrides the component totals [mol/L] (a dose or a titrant added);
        ``allow_solids`` names solids (ids) that may precipitate or dissolve.
        """
        idx = tuple(self.solid_index[s] for s in allow_solids)
        return equilibrium(self.tab, list(totals if totals is not None else self.totals), T=self.T,
                           gamma_of=self.gamma_of, pH=pH, fixed_species=self.fixed_species,
                           allow_solids=idx, I_fixed=self.I_fixed, guess=guess)
