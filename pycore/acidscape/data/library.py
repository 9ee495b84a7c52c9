"""The cited library: acid-base systems, ions, aqueous complexes and solids.

The data live in proofreadable CSV files in ``acidscape/data`` (lines starting
with ``#`` are comments and explain the columns):

``systems.csv``    one row per dissociation step ``acid = base + H+``: pKa at
                   25 °C as printed with the ionic strength it refers to, the
                   standard dissociation enthalpy and heat capacity, the
                   temperature model, the mass basis of "mg/L" and of "mg/L as
                   X", source keys, provenance and notes.
``species.csv``    the species of each system, most protonated first: display
                   formula, charge, the elemental formula weighed for the molar
                   mass, Kielland (1937) ion size.
``ions.csv``       ions given by their totals (sodium, calcium, chloride, lead,
                   iron(III) ...): formula, charge, ion size, "as" basis, the
                   older spellings accepted as aliases ("Ca+2"), and the
                   acid-base system an ion is the base of (sulfate).
``complexes.csv``  aqueous complexes and ion pairs, one FORMATION reaction each
                   (``sum coef * ref = complex``) with log K at 25 °C.
``solids.csv``     minerals and precipitates, one DISSOLUTION reaction each
                   (``solid = sum coef * ref``) with log K at 25 °C.
``sources.csv``    source key -> full reference.

Every file is parsed once (cached) and checked: a malformed row raises
:class:`LibraryDataError` naming the file and the line number. The checks are
that each source key resolves, steps run 1..n, pKa increase strictly with the
step, the acid of each step is the base of the one before, the charge drops by
one per step, each charge agrees with its formula, every formula can be
weighed, ids and aliases are unique, every reactant of a complex or a solid
resolves (:func:`resolve_ref`), each reaction balances charge and elements
(water is the only species left implicit), and an analytic temperature fit
reproduces its row's 25 °C value.

Ionic strength of printed constants
-----------------------------------
A constant printed at an ionic strength I != 0 (``pKa_I_M``, ``log_K_I_M``) is
a concentration quotient at that I. The loader converts it ONCE to I = 0 with
the Davies (1962) equation at 25 °C,

    log10 gamma_z = -A z^2 (sqrt(I) / (1 + sqrt(I)) - 0.3 I),
    log10 K0 = log10 K_I + sum(nu z^2, products) * lg1 - sum(nu z^2, reactants) * lg1,

with lg1 = log10 gamma of a singly charged ion at I and A = :data:`DAVIES_A_25C`
(water activity 1, neutral species gamma 1), and exposes only the I = 0 value
(``AcidSystem.pKa_25C``, ``Complex.log10_K_25C``, ``Solid.log10_K_25C``). The
printed value and its I stay visible (``pKa_25C_printed``, ``log10_K_printed``)
for proofreading. The activity model of the solver converts back at the water's
own ionic strength, so nothing is corrected twice.

Functions
---------
systems() -> dict[str, AcidSystem]          all systems, in file order
ions() -> IonTable                          all ions by id (lookups also accept aliases)
complexes() -> tuple[Complex, ...]          all complexes, in file order
solids() -> tuple[Solid, ...]               all solids, in file order
sources() -> dict[str, Source]              source key -> reference
get_system(id) -> AcidSystem                raises UnknownIdError
get_ion(id_or_alias) -> Ion                 raises UnknownIdError
get_complex(id) -> Complex, get_solid(id) -> Solid
                                            raise UnknownIdError with close matches
resolve_ref(ref) -> tuple                   what a reactant names (see the function)
reaction_text(entry) -> str                 "CaCO3 = Ca+2 + CO3-2", water included
to_ionic_strength_zero(log10_K, I, dz2)     the one-time Davies conversion
accepted_units(system_or_ion) -> list[str]  concentration units that fit
library_as_json(), ions_as_json(), complexes_as_json(), solids_as_json()
                                            JSON-ready views with citations
parse_sources, parse_ions, parse_systems, parse_complexes, parse_solids
                                            the parsers, for checking a data file

Fields added to the contract of DEVELOPERS.md (all with defaults):
``Species.elemental_formula``, ``Species.ion_size_source``,
``AcidSystem.pKa_ionic_strength_M``, ``AcidSystem.provenance``,
``AcidSystem.pKa_25C_printed``, ``AcidSystem.dCp_J_per_mol_K``,
``AcidSystem.dCp_sources``, ``StrongIon.ion_size_source``, ``StrongIon.note``,
``StrongIon.aliases``, ``StrongIon.system``, ``StrongIon.provenance``
(``Ion`` is the same class); ``Complex``/``Solid`` also carry ``K_source``,
``dH_source`` and ``log10_K_spread``.

Data sources
------------
Cited per value in the data files; the keys resolve in ``sources.csv``. Main
ones (all citations from memory): Plummer & Busenberg (1982) Geochim.
Cosmochim. Acta 46, 1011; Nordstrom et al. (1990) ACS Symp. Ser. 416, 398;
Siebert & Hostetler (1977) Am. J. Sci. 277, 697 and 716; Nordstrom & May
(1989); Baes & Mesmer (1976); Powell et al. (2007, 2009, 2013) Pure Appl.
Chem. 79, 895; 81, 2425; 85, 2249; Martell & Smith, Critical Stability
Constants (Plenum, 1974-1977) and NIST SRD 46; Schock, Wagner & Oliphant
(1996); Bates & Pinching (1949); Morris (1966); Goldberg, Kishore & Lennen
(2002) J. Phys. Chem. Ref. Data 31, 231; Kielland (1937) J. Am. Chem. Soc. 59,
1675; C. W. Davies, Ion Association, Butterworths (1962). Every numerical
value was recalled from memory, not read off a printed table; the
``provenance`` column gives our confidence.
"""

from __future__ import annotations

import csv
import difflib
import functools
import math
import os
import re
from dataclasses import dataclass
from importlib.resources import files
from pathlib import Path

from ..constants import R
from ..errors import AcidscapeError, InputError, UnknownIdError
from .formula import charge_of, composition, molar_mass

__all__ = [
    "Source", "Species", "AcidSystem", "StrongIon", "Ion", "IonTable", "Complex", "Solid",
    "LibraryDataError", "TEMPERATURE_MODELS", "DAVIES_A_25C",
    "systems", "ions", "complexes", "solids", "sources", "get_system", "get_ion", "get_complex",
    "get_solid", "resolve_ref", "ref_charge", "reaction_text", "to_ionic_strength_zero",
    "davies_log10_gamma_25C", "accepted_units", "library_as_json", "ions_as_json",
    "complexes_as_json", "solids_as_json", "parse_sources", "parse_ions", "parse_systems",
    "parse_complexes", "parse_solids",
]

#: Temperature models a system may name (implemented in :mod:`acidscape.science.temperature`).
TEMPERATURE_MODELS = ("vant-hoff", "carbonate-PB82", "ammonium-BP49", "hypochlorous-M66")

#: Debye-Hückel A at 25 °C on the molar scale [(L/mol)^0.5] for the one-time conversion of
#: printed constants to I = 0 (Davies equation). It is the value of
#: :func:`acidscape.science.activity.debye_huckel_A` at 298.15 K (CODATA 2018 constants,
#: Malmberg & Maryott 1956 permittivity, Kell 1975 density), written out here because the
#: data layer does not import the science layer; ``tests/test_database.py`` keeps the two equal.
DAVIES_A_25C = 0.5115585887446022

_SYSTEM_ID_RE = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
#: Ion ids: lower-case words, optionally an oxidation state in Roman numerals: "iron(III)".
_ION_ID_RE = re.compile(r"^[a-z]+(-[a-z]+)*(\((I|II|III|IV|V|VI)\))?$")
#: Solid ids: lower-case words joined by hyphens ("amorphous-aluminium-hydroxide").
_SOLID_ID_RE = _SYSTEM_ID_RE


class LibraryDataError(AcidscapeError, ValueError):
    """A library data file is malformed; the message names the file and line."""


# --------------------------------------------------------------------------- dataclasses


@dataclass(frozen=True)
class Source:
    """A published source: ``text`` is the full reference."""

    key: str
    authors: str
    year: int
    title: str
    container: str               # journal, or publisher of a book
    volume: str
    pages: str
    doi: str | None
    provenance: str              # "citation from memory", ...

    @property
    def text(self) -> str:
        """Full reference: authors (year). Title. Container volume, pages. doi."""
        ref = f"{self.authors} ({self.year}). {self.title}. {self.container}"
        if self.volume:
            ref += f" {self.volume}"
        if self.pages:
            ref += f", {self.pages}"
        ref += "."
        if self.doi:
            ref += f" doi:{self.doi}"
        return ref


@dataclass(frozen=True)
class Species:
    """One species of an acid-base system."""

    formula: str                 # display formula, e.g. "H2CO3*", "HCO3-", "H6Y+2"
    charge: int
    molar_mass_g_per_mol: float
    ion_size_A: float | None     # Kielland (1937) ion-size parameter [angstrom]
    elemental_formula: str = ""  # formula weighed for the molar mass, e.g. "C10H18N2O8+2"
    ion_size_source: str | None = None


@dataclass(frozen=True)
class AcidSystem:
    """A polyprotic acid-base system with n dissociation steps."""

    id: str
    name: str
    species: tuple[Species, ...]             # n + 1, most protonated first
    pKa_25C: tuple[float, ...]               # n, 25 °C, I = 0 (printed values at I != 0 converted once)
    dH_kJ_per_mol: tuple[float | None, ...]  # n, standard dissociation enthalpy [kJ/mol]
    temperature_model: str
    mass_basis: str
    mass_basis_g_per_mol: float
    as_formula: str | None
    as_g_per_mol: float | None
    pKa_sources: tuple[str, ...]
    dH_sources: tuple[str | None, ...]
    note: str
    #: Ionic strength [mol/L] the printed pKa refers to: 0 = thermodynamic.
    pKa_ionic_strength_M: tuple[float, ...] = ()
    #: Provenance and confidence of each step's values ("from memory (confidence: high)").
    provenance: tuple[str, ...] = ()
    #: pKa at 25 °C as printed, at ``pKa_ionic_strength_M`` (``pKa_25C`` is the I = 0 value).
    pKa_25C_printed: tuple[float, ...] = ()
    #: Standard heat capacity of each dissociation step [J/(mol K)], None where unknown.
    dCp_J_per_mol_K: tuple[float | None, ...] = ()
    dCp_sources: tuple[str | None, ...] = ()


@dataclass(frozen=True)
class StrongIon:
    """An ion given by its total: a strong ion, or a metal or ligand that forms complexes.

    ``id`` is a word ("calcium", "iron(III)"); ``aliases`` are other spellings
    accepted as input (the formula ids of earlier versions, "Ca+2"); ``system``
    names the acid-base system whose fully deprotonated species this ion is
    ("sulfate"), or is None.
    """

    id: str
    name: str
    formula: str
    charge: int
    molar_mass_g_per_mol: float
    ion_size_A: float | None
    as_formula: str | None
    as_g_per_mol: float | None
    ion_size_source: str | None = None
    note: str = ""
    aliases: tuple[str, ...] = ()
    system: str | None = None
    provenance: str = ""


#: The contract's name for an ion of ``ions.csv``.
Ion = StrongIon


class IonTable(dict):
    """Ions by id, in file order; lookups (``[]``, ``get``, ``in``) also accept aliases.

    Iteration, ``keys()`` and ``items()`` give the ids only, so an alias is
    never shown. A fresh table is returned by :func:`ions`; the ions are frozen.

    Examples
    --------
    >>> t = ions()
    >>> t["Ca+2"] is t["calcium"], "Na+" in t, "Na+" in list(t)
    (True, True, False)
    """

    __slots__ = ("_aliases",)

    def __init__(self, items=(), aliases=None):
        super().__init__(items)
        self._aliases = dict(aliases or {})

    def _key(self, key):
        if isinstance(key, str) and not dict.__contains__(self, key):
            return self._aliases.get(key, key)
        return key

    def __getitem__(self, key):
        return dict.__getitem__(self, self._key(key))

    def __contains__(self, key):
        try:
            return dict.__contains__(self, self._key(key))
        except TypeError:
            return False

    def get(self, key, default=None):
        try:
            return dict.get(self, self._key(key), default)
        except TypeError:
            return default


@dataclass(frozen=True)
class Complex:
    """An aqueous complex or ion pair: FORMATION reaction ``sum(coef * ref) = complex``.

    ``log10_K_25C`` is the thermodynamic (I = 0) value at 25 °C,
    K = a(complex) / prod a(ref)^coef, water implicit; ``log10_K_printed`` and
    ``log10_K_I_M`` are the value and ionic strength [mol/L] as printed.
    ``analytic`` is (A, B, C, D, E) of log10 K = A + B T + C/T + D log10 T + E/T^2
    (T in K), valid over ``T_range_C``; ``log10_K_spread`` is (lo, hi) of the
    values printed by different sources when they differ by more than 0.3.
    """

    id: str
    formula: str
    charge: int
    reactants: tuple[tuple[str, int], ...]
    log10_K_25C: float
    log10_K_printed: float
    log10_K_I_M: float
    dH_kJ_per_mol: float | None
    dCp_J_per_mol_K: float | None
    analytic: tuple[float, float, float, float, float] | None
    T_range_C: tuple[float, float] | None
    ion_size_A: float | None
    sources: tuple[str, ...]
    provenance: str
    note: str
    K_source: str = ""
    dH_source: str | None = None
    log10_K_spread: tuple[float, float] | None = None


@dataclass(frozen=True)
class Solid:
    """A solid phase: DISSOLUTION reaction ``solid = sum(coef * ref)``.

    ``log10_K_25C`` is the thermodynamic (I = 0) value at 25 °C,
    K = prod a(ref)^coef with solid and water activity 1. Other fields as in
    :class:`Complex`; ``weighed_formula`` gives ``molar_mass_g_per_mol``.
    """

    id: str
    name: str
    formula: str
    weighed_formula: str
    molar_mass_g_per_mol: float
    reactants: tuple[tuple[str, int], ...]
    log10_K_25C: float
    log10_K_printed: float
    log10_K_I_M: float
    dH_kJ_per_mol: float | None
    dCp_J_per_mol_K: float | None
    analytic: tuple[float, float, float, float, float] | None
    T_range_C: tuple[float, float] | None
    sources: tuple[str, ...]
    provenance: str
    note: str
    K_source: str = ""
    dH_source: str | None = None
    log10_K_spread: tuple[float, float] | None = None
    charge: int = 0
    ion_size_A: float | None = None


# --------------------------------------------------------------------------- CSV reading


def _open(path) -> tuple[str, str]:
    """Return (display name, text) of a path, Traversable or os.PathLike."""
    if isinstance(path, (str, os.PathLike)):
        path = Path(path)
    name = getattr(path, "name", str(path))
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise LibraryDataError(f"{name}: cannot be read ({exc})") from exc
    return name, text


def _rows(path, required: tuple[str, ...]):
    """Read a commented CSV file.

    Returns ``(name, [(line_number, row_dict), ...])``; comment (``#``) and
    blank lines are skipped but counted, so line numbers are those of the file.
    """
    name, text = _open(path)
    header = None
    rows = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        if not line.strip() or line.lstrip().startswith("#"):
            continue
        try:
            cells = next(csv.reader([line], strict=True))
        except csv.Error as exc:
            raise LibraryDataError(f"{name} line {lineno}: not valid CSV ({exc})") from exc
        cells = [c.strip() for c in cells]
        if header is None:
            missing = [c for c in required if c not in cells]
            if missing:
                raise LibraryDataError(
                    f"{name} line {lineno}: header lacks column(s) {', '.join(missing)}; "
                    f"required: {', '.join(required)}"
                )
            header = cells
            continue
        if len(cells) != len(header):
            raise LibraryDataError(
                f"{name} line {lineno}: {len(cells)} fields, the header has {len(header)}"
            )
        rows.append((lineno, dict(zip(header, cells))))
    if header is None:
        raise LibraryDataError(f"{name}: no header line")
    return name, rows


def _fail(name: str, lineno: int, msg: str):
    raise LibraryDataError(f"{name} line {lineno}: {msg}")


def _text(row, col, name, lineno) -> str:
    value = row[col]
    if not value:
        _fail(name, lineno, f"column {col!r} is empty")
    return value


def _float(row, col, name, lineno, optional=False) -> float | None:
    value = row[col]
    if value == "":
        if optional:
            return None
        _fail(name, lineno, f"column {col!r} is empty; a number is required")
    try:
        x = float(value)
    except ValueError:
        _fail(name, lineno, f"column {col!r} = {value!r} is not a number")
    if not math.isfinite(x):
        _fail(name, lineno, f"column {col!r} = {value!r} is not a finite number")
    return x


def _int(row, col, name, lineno) -> int:
    value = row[col]
    try:
        return int(value)
    except ValueError:
        _fail(name, lineno, f"column {col!r} = {value!r} is not a whole number")


def _mass(formula, col, name, lineno) -> float:
    try:
        return molar_mass(formula)
    except InputError as exc:
        _fail(name, lineno, f"column {col!r}: {exc.message}")


def _charge(formula, col, name, lineno) -> int:
    try:
        return charge_of(formula)
    except InputError as exc:
        _fail(name, lineno, f"column {col!r}: {exc.message}")


def _source_key(row, col, name, lineno, keys, optional=False) -> str | None:
    value = row[col]
    if not value:
        if optional:
            return None
        _fail(name, lineno, f"column {col!r} is empty; a source key is required")
    if keys is not None and value not in keys:
        _fail(name, lineno, f"column {col!r}: unknown source key {value!r} (not in sources.csv)")
    return value


def _ion_size(row, name, lineno, keys) -> tuple[float | None, str | None]:
    size = _float(row, "ion_size_A", name, lineno, optional=True)
    src = _source_key(row, "ion_size_source", name, lineno, keys, optional=True)
    if size is not None and size <= 0:
        _fail(name, lineno, f"ion_size_A = {size} must be positive")
    if (size is None) != (src is None):
        _fail(name, lineno, "ion_size_A and ion_size_source must be both given or both empty")
    return size, src


# --------------------------------------------------------------------------- ionic strength


def davies_log10_gamma_25C(z, I) -> float:
    r"""log10 activity coefficient by the Davies equation at 25 °C.

    .. math::

        \log_{10}\gamma_z = -A z^2\left(\frac{\sqrt I}{1+\sqrt I} - 0.3 I\right)

    Parameters
    ----------
    z : int
        Charge number [-]
    I : float
        Ionic strength, >= 0 [mol/L]

    Returns
    -------
    float
        log10 gamma (0 for a neutral species) [-]

    Notes
    -----
    A = :data:`DAVIES_A_25C`. Used only to bring printed constants to I = 0
    once; the solver has its own activity model (:mod:`acidscape.science.activity`).

    Examples
    --------
    >>> round(davies_log10_gamma_25C(2, 0.1), 4)
    -0.4302

    References
    ----------
    C. W. Davies, Ion Association, Butterworths, London (1962).
    """
    if z == 0 or I == 0:
        return 0.0
    s = math.sqrt(I)
    return -DAVIES_A_25C * z * z * (s / (1.0 + s) - 0.3 * I)


def to_ionic_strength_zero(log10_K_I, I_M, delta_z2) -> float:
    r"""Bring a constant printed at ionic strength I to I = 0 (Davies equation, 25 °C).

    .. math::

        \log_{10} K^0 = \log_{10} K_I + \Delta(z^2)\,\log_{10}\gamma_1(I),
        \qquad \Delta(z^2) = \sum_\mathrm{products}\nu z^2 - \sum_\mathrm{reactants}\nu z^2

    Parameters
    ----------
    log10_K_I : float
        log10 of the concentration quotient at ``I_M`` [-]
    I_M : float
        Ionic strength the printed value refers to, >= 0 [mol/L]
    delta_z2 : int
        Sum of nu z^2 over the products minus that over the reactants [-]

    Returns
    -------
    float
        log10 K at I = 0 [-]

    Notes
    -----
    gamma(z) = gamma_1^(z^2) in the Davies equation, hence one factor
    lg1 = log10 gamma_1. For an acid HA(z) = H+ + A(z-1):
    Delta(z^2) = 1 + (z-1)^2 - z^2 = 2 (1 - z); for Ca+2 + Y-4 = CaY-2:
    4 - 4 - 16 = -16. ``I_M = 0`` returns the value unchanged.

    Examples
    --------
    >>> round(to_ionic_strength_zero(10.65, 0.1, -16), 3)   # CaY-2 printed at I = 0.1 M
    12.371
    >>> round(-to_ionic_strength_zero(-6.13, 0.1, 2 * (1 - (-2))), 3)   # EDTA pKa5
    6.775

    References
    ----------
    C. W. Davies, Ion Association, Butterworths, London (1962); W. Stumm,
    J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley (1996), ch. 3.
    """
    if I_M == 0:
        return float(log10_K_I)
    return float(log10_K_I) + delta_z2 * davies_log10_gamma_25C(1, I_M)


# --------------------------------------------------------------------------- parsers


def parse_sources(path) -> dict[str, Source]:
    """Parse a sources file.

    Parameters
    ----------
    path : str, os.PathLike or importlib Traversable
        The CSV file [-]

    Returns
    -------
    dict of str to Source
        Key -> reference, in file order [-]
    """
    cols = ("key", "authors", "year", "title", "container", "volume", "pages", "doi", "provenance")
    out: dict[str, Source] = {}
    name, rows = _rows(path, cols)
    for ln, row in rows:
        key = _text(row, "key", name, ln)
        if key in out:
            _fail(name, ln, f"duplicate source key {key!r}")
        year = _int(row, "year", name, ln)
        if not 1800 <= year <= 2100:
            _fail(name, ln, f"year = {year} is not a plausible publication year")
        out[key] = Source(
            key=key, authors=_text(row, "authors", name, ln), year=year,
            title=_text(row, "title", name, ln), container=_text(row, "container", name, ln),
            volume=row["volume"], pages=row["pages"], doi=row["doi"] or None,
            provenance=_text(row, "provenance", name, ln),
        )
    return out


def parse_ions(path, source_keys=None) -> dict[str, StrongIon]:
    """Parse an ion file.

    Parameters
    ----------
    path : str, os.PathLike or importlib Traversable
        The CSV file [-]
    source_keys : collection of str, optional
        Known source keys; ``None`` skips the check [-]

    Returns
    -------
    dict of str to StrongIon
        Id -> ion, in file order [-]

    Notes
    -----
    Checks: ids are lower-case words (an oxidation state in Roman numerals may
    follow, "iron(III)"), ids and aliases are unique across the file, the charge
    agrees with the formula and is not zero. The columns ``aliases`` and
    ``system`` may be absent (read as empty). Whether a ``system`` exists is
    checked when the library is assembled (:func:`ions`).
    """
    cols = ("id", "name", "formula", "charge", "ion_size_A", "ion_size_source", "as_formula",
            "provenance", "note")
    out: dict[str, StrongIon] = {}
    names: dict[str, int] = {}
    name, rows = _rows(path, cols)
    for ln, row in rows:
        ion_id = _text(row, "id", name, ln)
        formula = _text(row, "formula", name, ln)
        if not _ION_ID_RE.match(ion_id):
            _fail(name, ln, f"ion id {ion_id!r} must be lower-case words such as 'calcium' or 'iron(III)' "
                            f"(the formula {formula!r} goes in the column formula, older spellings in aliases)")
        aliases = tuple(a.strip() for a in row.get("aliases", "").split(";") if a.strip())
        for key in (ion_id,) + aliases:
            if key in names:
                _fail(name, ln, f"ion id or alias {key!r} is already used on line {names[key]}")
            names[key] = ln
        charge = _int(row, "charge", name, ln)
        if charge != _charge(formula, "formula", name, ln) or charge == 0:
            _fail(name, ln, f"charge = {charge} disagrees with formula {formula!r} or is zero")
        size, size_src = _ion_size(row, name, ln, source_keys)
        as_formula = row["as_formula"] or None
        system = row.get("system", "") or None
        if system is not None and not _SYSTEM_ID_RE.match(system):
            _fail(name, ln, f"system {system!r} is not a system id")
        out[ion_id] = StrongIon(
            id=ion_id, name=_text(row, "name", name, ln), formula=formula, charge=charge,
            molar_mass_g_per_mol=_mass(formula, "formula", name, ln), ion_size_A=size,
            as_formula=as_formula,
            as_g_per_mol=_mass(as_formula, "as_formula", name, ln) if as_formula else None,
            ion_size_source=size_src, note=row["note"], aliases=aliases, system=system,
            provenance=_text(row, "provenance", name, ln),
        )
    return out


def _parse_species(path, source_keys):
    cols = ("system_id", "index", "formula", "charge", "elemental_formula", "ion_size_A",
            "ion_size_source")
    out: dict[str, list[Species]] = {}
    name, rows = _rows(path, cols)
    for ln, row in rows:
        sid = _text(row, "system_id", name, ln)
        index = _int(row, "index", name, ln)
        lst = out.setdefault(sid, [])
        if index != len(lst):
            _fail(name, ln, f"species index {index} of {sid!r} should be {len(lst)} "
                            "(rows of a system are contiguous and numbered from 0)")
        formula = _text(row, "formula", name, ln)
        elemental = _text(row, "elemental_formula", name, ln)
        charge = _int(row, "charge", name, ln)
        for col, f in (("formula", formula), ("elemental_formula", elemental)):
            if _charge(f, col, name, ln) != charge:
                _fail(name, ln, f"charge = {charge} disagrees with {col} {f!r}")
        size, size_src = _ion_size(row, name, ln, source_keys)
        if charge == 0 and size is not None:
            _fail(name, ln, "a neutral species takes no ion size")
        lst.append(Species(formula=formula, charge=charge,
                           molar_mass_g_per_mol=_mass(elemental, "elemental_formula", name, ln),
                           ion_size_A=size, elemental_formula=elemental,
                           ion_size_source=size_src))
    return name, out


def parse_systems(path, species_path, source_keys=None) -> dict[str, AcidSystem]:
    """Parse a systems file and its species file.

    Parameters
    ----------
    path : str, os.PathLike or importlib Traversable
        The systems CSV file [-]
    species_path : str, os.PathLike or importlib Traversable
        The species CSV file [-]
    source_keys : collection of str, optional
        Known source keys; ``None`` skips the check [-]

    Returns
    -------
    dict of str to AcidSystem
        Id -> system, in file order [-]

    Notes
    -----
    Raises :class:`LibraryDataError` naming file and line for any malformed row.
    A pKa printed at ``pKa_I_M`` != 0 is converted once to I = 0 with
    :func:`to_ionic_strength_zero` (Delta(z^2) = 2 (1 - z_acid)); ``pKa_25C``
    holds the I = 0 values, ``pKa_25C_printed`` the printed ones. Both must
    rise with the step. The columns ``dCp_J_per_mol_K`` and ``dCp_source`` may
    be absent.
    """
    species_name, species = _parse_species(species_path, source_keys)
    cols = ("system_id", "system_name", "step", "acid_formula", "base_formula", "pKa_25C",
            "pKa_I_M", "pKa_source", "dH_kJ_per_mol", "dH_source", "temperature_model",
            "mass_basis", "as_formula", "provenance", "note")
    steps: dict[str, list] = {}
    first: dict[str, tuple] = {}
    name, rows = _rows(path, cols)
    for ln, row in rows:
        sid = _text(row, "system_id", name, ln)
        if not _SYSTEM_ID_RE.match(sid):
            _fail(name, ln, f"system id {sid!r} must be lowercase words joined by hyphens")
        if sid in steps and list(steps)[-1] != sid:
            _fail(name, ln, f"rows of system {sid!r} must be contiguous")
        lst = steps.setdefault(sid, [])
        step = _int(row, "step", name, ln)
        if step != len(lst) + 1:
            _fail(name, ln, f"step {step} of {sid!r} should be {len(lst) + 1}")
        shared = tuple(row[c] for c in ("system_name", "temperature_model", "mass_basis", "as_formula"))
        if sid not in first:
            first[sid] = (ln, shared)
            _text(row, "system_name", name, ln)
            model = _text(row, "temperature_model", name, ln)
            if model not in TEMPERATURE_MODELS:
                _fail(name, ln, f"temperature_model {model!r} is not one of {', '.join(TEMPERATURE_MODELS)}")
            _mass(_text(row, "mass_basis", name, ln), "mass_basis", name, ln)
            if row["as_formula"]:
                _mass(row["as_formula"], "as_formula", name, ln)
        elif shared != first[sid][1]:
            _fail(name, ln, "system_name, temperature_model, mass_basis and as_formula must repeat "
                            f"those of line {first[sid][0]} for system {sid!r}")
        sp = species.get(sid)
        if sp is None:
            _fail(name, ln, f"system {sid!r} has no species in {species_name}")
        if step >= len(sp):
            _fail(name, ln, f"step {step} of {sid!r} needs species {step}, but {species_name} "
                            f"lists only {len(sp)}")
        for col, s in (("acid_formula", sp[step - 1]), ("base_formula", sp[step])):
            if row[col] != s.formula:
                _fail(name, ln, f"{col} {row[col]!r} is not species {s.formula!r} of {species_name}")
        if sp[step].charge != sp[step - 1].charge - 1:
            _fail(name, ln, f"charge must drop by one from {sp[step - 1].formula!r} to {sp[step].formula!r}")
        pKa = _float(row, "pKa_25C", name, ln)
        if lst and pKa <= lst[-1]["pKa"]:
            _fail(name, ln, f"pKa_25C = {pKa} must exceed step {step - 1}'s {lst[-1]['pKa']}")
        I = _float(row, "pKa_I_M", name, ln)
        if I < 0:
            _fail(name, ln, f"pKa_I_M = {I} must be >= 0")
        dH = _float(row, "dH_kJ_per_mol", name, ln, optional=True)
        dH_src = _source_key(row, "dH_source", name, ln, source_keys, optional=True)
        if (dH is None) != (dH_src is None):
            _fail(name, ln, "dH_kJ_per_mol and dH_source must be both given or both empty")
        row.setdefault("dCp_J_per_mol_K", "")
        row.setdefault("dCp_source", "")
        dCp = _float(row, "dCp_J_per_mol_K", name, ln, optional=True)
        dCp_src = _source_key(row, "dCp_source", name, ln, source_keys, optional=True)
        if (dCp is None) != (dCp_src is None):
            _fail(name, ln, "dCp_J_per_mol_K and dCp_source must be both given or both empty")
        if dCp is not None and dH is None:
            _fail(name, ln, "dCp_J_per_mol_K needs dH_kJ_per_mol")
        z_acid = sp[step - 1].charge
        pKa0 = -to_ionic_strength_zero(-pKa, I, 2 * (1 - z_acid))
        if lst and pKa0 <= lst[-1]["pKa0"]:
            _fail(name, ln, f"pKa_25C = {pKa} at I = {I:g} M is {pKa0:.3f} at I = 0, which must exceed "
                            f"step {step - 1}'s {lst[-1]['pKa0']:.3f}")
        lst.append({
            "pKa": pKa, "pKa0": pKa0, "I": I,
            "pKa_src": _source_key(row, "pKa_source", name, ln, source_keys),
            "dH": dH, "dH_src": dH_src, "dCp": dCp, "dCp_src": dCp_src,
            "prov": _text(row, "provenance", name, ln), "note": row["note"], "row": row,
        })
    out: dict[str, AcidSystem] = {}
    for sid, lst in steps.items():
        sp = species[sid]
        if len(sp) != len(lst) + 1:
            _fail(name, first[sid][0], f"system {sid!r} has {len(lst)} step(s) but {len(sp)} "
                                       f"species in {species_name} (expected {len(lst) + 1})")
        row0 = lst[0]["row"]
        as_formula = row0["as_formula"] or None
        out[sid] = AcidSystem(
            id=sid, name=row0["system_name"], species=tuple(sp),
            pKa_25C=tuple(s["pKa0"] for s in lst), dH_kJ_per_mol=tuple(s["dH"] for s in lst),
            temperature_model=row0["temperature_model"], mass_basis=row0["mass_basis"],
            mass_basis_g_per_mol=molar_mass(row0["mass_basis"]), as_formula=as_formula,
            as_g_per_mol=molar_mass(as_formula) if as_formula else None,
            pKa_sources=tuple(s["pKa_src"] for s in lst), dH_sources=tuple(s["dH_src"] for s in lst),
            note=" ".join(s["note"] if i == 0 else f"[step {i + 1}: {s['note']}]"
                          for i, s in enumerate(lst) if s["note"]),
            pKa_ionic_strength_M=tuple(s["I"] for s in lst),
            provenance=tuple(s["prov"] for s in lst),
            pKa_25C_printed=tuple(s["pKa"] for s in lst),
            dCp_J_per_mol_K=tuple(s["dCp"] for s in lst),
            dCp_sources=tuple(s["dCp_src"] for s in lst),
        )
    for sid in species:
        if sid not in out:
            raise LibraryDataError(f"{species_name}: species of {sid!r}, which has no row in {name}")
    return out


# --------------------------------------------------------------------------- reactions (complexes, solids)


@dataclass(frozen=True)
class _Ref:
    """What a reactant name stands for (see :func:`resolve_ref`)."""

    resolved: tuple
    charge: int
    elements: dict | None      # element counts, None if the formula cannot be weighed
    display: str               # formula shown in reaction text


def _elements(formula: str) -> dict | None:
    try:
        return composition(formula)
    except InputError:
        return None


def _build_refs(system_table: dict, ion_table: dict) -> dict[str, _Ref]:
    """Reactant name -> :class:`_Ref` for "H+", "OH-", species formulas, ion ids and aliases."""
    refs = {"H+": _Ref(("H+",), 1, {"H": 1}, "H+"), "OH-": _Ref(("OH-",), -1, {"O": 1, "H": 1}, "OH-")}
    what = {"H+": "the proton", "OH-": "hydroxide"}
    for sid, s in system_table.items():
        top = len(s.species) - 1
        for k, sp in enumerate(s.species):
            if sp.formula in refs:
                raise LibraryDataError(f"species.csv: formula {sp.formula!r} of system {sid!r} is also "
                                       f"{what[sp.formula]}; a reactant name must mean one thing")
            refs[sp.formula] = _Ref(("system", sid, top - k), sp.charge, _elements(sp.elemental_formula),
                                    sp.formula)
            what[sp.formula] = f"species {sp.formula!r} of system {sid!r}"
    for iid, ion in ion_table.items():
        resolved = ("system", ion.system, 0) if ion.system else ("ion", iid)
        for key in (iid,) + tuple(ion.aliases):
            known = refs.get(key)
            if known is not None:
                if known.resolved != resolved:
                    raise LibraryDataError(f"ions.csv: {key!r} of ion {iid!r} is also {what[key]}; "
                                           "a reactant name must mean one thing")
                continue
            refs[key] = _Ref(resolved, ion.charge, _elements(ion.formula), ion.formula)
            what[key] = f"ion {iid!r}"
    return refs


_TRANGE_RE = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*-\s*(\d+(?:\.\d+)?)\s*$")


def _reactants(row, name, ln, refs) -> tuple[tuple[str, int], ...]:
    text = _text(row, "reactants", name, ln)
    out: list[tuple[str, int]] = []
    for part in text.split(";"):
        part = part.strip()
        ref, sep, coef = part.rpartition(":")
        ref = ref.strip()
        if not sep or not ref:
            _fail(name, ln, f"reactant {part!r} is not 'ref:coef' (e.g. 'calcium:1;CO3-2:1')")
        try:
            n = int(coef)
        except ValueError:
            _fail(name, ln, f"reactant {part!r}: coefficient {coef!r} is not a whole number")
        if n == 0:
            _fail(name, ln, f"reactant {part!r}: coefficient 0")
        if ref not in refs:
            close = difflib.get_close_matches(ref, list(refs), n=3, cutoff=0.6)
            hint = f"; did you mean {', '.join(repr(c) for c in close)}?" if close else ""
            _fail(name, ln, f"reactant {ref!r} is not 'H+', 'OH-', an ion id of ions.csv or a species "
                            f"formula of species.csv{hint}")
        if any(r == ref for r, _ in out):
            _fail(name, ln, f"reactant {ref!r} appears twice")
        out.append((ref, n))
    return tuple(out)


def _water_count(elements: dict | None, reactants, refs) -> int | None:
    """w with elements(entity) - sum coef * elements(ref) = w H2O, None if not weighable.

    Raises ValueError when the remainder is not a whole number of water molecules.
    """
    if elements is None:
        return None
    rest = dict(elements)
    for ref, n in reactants:
        el = refs[ref].elements
        if el is None:
            return None
        for k, v in el.items():
            rest[k] = rest.get(k, 0) - n * v
    w = rest.pop("O", 0)
    h = rest.pop("H", 0)
    left = {k: v for k, v in rest.items() if v}
    if left or h != 2 * w:
        diff = ", ".join(f"{k} {v:+d}" for k, v in sorted({**left, "H": h - 2 * w}.items()) if v)
        raise ValueError(f"elements do not balance (apart from water the entity has {diff})")
    return w


def _stoichiometry(reactants, refs) -> tuple:
    """The reaction in components: sorted ((component, coef), ...), H+ carrying OH- and n_H."""
    acc: dict = {}
    for ref, n in reactants:
        r = refs[ref].resolved
        if r[0] == "H+":
            acc["H+"] = acc.get("H+", 0) + n
        elif r[0] == "OH-":
            acc["H+"] = acc.get("H+", 0) - n
        elif r[0] == "ion":
            acc[r[1]] = acc.get(r[1], 0) + n
        else:
            acc[r[1]] = acc.get(r[1], 0) + n
            if r[2]:
                acc["H+"] = acc.get("H+", 0) + n * r[2]
    return tuple(sorted((k, v) for k, v in acc.items() if v))


def _analytic_log10_K(coef, T: float) -> float:
    A, B, C, D, E = coef
    return A + B * T + C / T + D * math.log10(T) + E / (T * T)


def _analytic_dH_kJ(coef, T: float) -> float:
    _, B, C, D, E = coef
    slope = B - C / (T * T) + D / (T * math.log(10.0)) - 2.0 * E / T**3
    return R * math.log(10.0) * T * T * slope / 1000.0


def _reaction_row(row, name, ln, refs, source_keys) -> dict:
    """Columns shared by complexes.csv and solids.csv, parsed and checked."""
    reactants = _reactants(row, name, ln, refs)
    logK = _float(row, "log_K_25C", name, ln)
    I = _float(row, "log_K_I_M", name, ln)
    if I < 0 or I > 5:
        _fail(name, ln, f"log_K_I_M = {I} must lie in 0..5 mol/L")
    dH = _float(row, "dH_kJ_per_mol", name, ln, optional=True)
    dCp = _float(row, "dCp_J_per_mol_K", name, ln, optional=True)
    K_src = _source_key(row, "K_source", name, ln, source_keys)
    dH_src = _source_key(row, "dH_source", name, ln, source_keys, optional=True)
    if (dH is None) != (dH_src is None):
        _fail(name, ln, "dH_kJ_per_mol and dH_source must be both given or both empty")
    if dCp is not None and dH is None:
        _fail(name, ln, "dCp_J_per_mol_K needs dH_kJ_per_mol")
    T_range = None
    if row["T_range_C"]:
        m = _TRANGE_RE.match(row["T_range_C"])
        if not m or float(m.group(1)) >= float(m.group(2)):
            _fail(name, ln, f"T_range_C {row['T_range_C']!r} is not 'lo-hi' in °C with lo < hi, e.g. '0-90'")
        T_range = (float(m.group(1)), float(m.group(2)))
    analytic = None
    if row["analytic"]:
        parts = row["analytic"].split(";")
        try:
            analytic = tuple(float(x) for x in parts)
        except ValueError:
            analytic = ()
        if len(analytic) != 5 or not all(math.isfinite(x) for x in analytic):
            _fail(name, ln, f"analytic {row['analytic']!r} is not five numbers 'A;B;C;D;E'")
        if T_range is None:
            _fail(name, ln, "an analytic fit needs its T_range_C")
        if I != 0:
            _fail(name, ln, "an analytic fit must be a thermodynamic (I = 0) expression")
        at25 = _analytic_log10_K(analytic, 298.15)
        if abs(at25 - logK) > 0.05:
            _fail(name, ln, f"the analytic fit gives {at25:.3f} at 25 °C but log_K_25C is {logK}")
        if dH is not None and abs(_analytic_dH_kJ(analytic, 298.15) - dH) > 1.5:
            _fail(name, ln, f"the analytic fit implies dH = {_analytic_dH_kJ(analytic, 298.15):.2f} kJ/mol "
                            f"at 25 °C but dH_kJ_per_mol is {dH}")
    elif T_range is not None:
        _fail(name, ln, "T_range_C is given without an analytic fit")
    spread = None
    if row.get("log_K_spread"):
        try:
            lo, hi = (float(x) for x in row["log_K_spread"].split(";"))
        except ValueError:
            _fail(name, ln, f"log_K_spread {row['log_K_spread']!r} is not 'lo;hi'")
        if not lo < hi or not lo - 1e-9 <= logK <= hi + 1e-9:
            _fail(name, ln, f"log_K_spread {row['log_K_spread']!r} must be lo < hi around log_K_25C = {logK}")
        spread = (lo, hi)
    sources_ = (K_src,) + ((dH_src,) if dH_src and dH_src != K_src else ())
    return {
        "reactants": reactants, "log10_K_printed": logK, "log10_K_I_M": I,
        "dH_kJ_per_mol": dH, "dCp_J_per_mol_K": dCp, "analytic": analytic, "T_range_C": T_range,
        "sources": sources_, "K_source": K_src, "dH_source": dH_src,
        "provenance": _text(row, "provenance", name, ln), "note": row["note"], "log10_K_spread": spread,
    }


_REACTION_COLS = ("id", "formula", "reactants", "log_K_25C", "log_K_I_M", "dH_kJ_per_mol",
                  "dCp_J_per_mol_K", "analytic", "T_range_C", "K_source", "dH_source", "provenance", "note")


def parse_complexes(path, source_keys=None, refs=None) -> tuple[Complex, ...]:
    """Parse a complexes file (FORMATION reactions).

    Parameters
    ----------
    path : str, os.PathLike or importlib Traversable
        The CSV file [-]
    source_keys : collection of str, optional
        Known source keys; ``None`` skips the check [-]
    refs : dict, optional
        Reactant table; default: that of the library's systems and ions [-]

    Returns
    -------
    tuple of Complex
        In file order [-]

    Notes
    -----
    Checks per row (errors name the file and line): unique id that is not also
    a reactant name; every reactant resolves; the charge column agrees with the
    formula and with sum(coef * charge(ref)); elements balance up to water
    where the formula can be weighed; no two complexes have the same reaction
    in components; dH/dH_source both or neither; an analytic fit is an I = 0
    expression with a T range that gives log_K_25C within 0.05 at 25 °C (and
    dH within 1.5 kJ/mol); log_K_spread brackets log_K_25C. A value printed at
    I != 0 is converted once to I = 0 (:func:`to_ionic_strength_zero`).
    """
    refs = _refs() if refs is None else refs
    name, rows = _rows(path, _REACTION_COLS + ("charge", "ion_size_A"))
    out: list[Complex] = []
    seen: dict[str, int] = {}
    reactions: dict[tuple, str] = {}
    for ln, row in rows:
        cid = _text(row, "id", name, ln)
        if cid in seen:
            _fail(name, ln, f"duplicate complex id {cid!r} (line {seen[cid]})")
        if cid in refs:
            _fail(name, ln, f"complex id {cid!r} is also a reactant name (an ion, species, H+ or OH-)")
        seen[cid] = ln
        formula = _text(row, "formula", name, ln)
        charge = _int(row, "charge", name, ln)
        if charge != _charge(formula, "formula", name, ln):
            _fail(name, ln, f"charge = {charge} disagrees with formula {formula!r}")
        r = _reaction_row(row, name, ln, refs, source_keys)
        total = sum(n * refs[ref].charge for ref, n in r["reactants"])
        if total != charge:
            _fail(name, ln, f"charge does not balance: the reactants carry {total:+d}, the complex {charge:+d}")
        try:
            _water_count(_elements(formula), r["reactants"], refs)
        except ValueError as exc:
            _fail(name, ln, f"{exc}")
        key = _stoichiometry(r["reactants"], refs)
        if key in reactions:
            _fail(name, ln, f"complex {cid!r} has the same reaction as {reactions[key]!r}")
        reactions[key] = cid
        size = _float(row, "ion_size_A", name, ln, optional=True)
        if size is not None and (size <= 0 or charge == 0):
            _fail(name, ln, "ion_size_A must be positive and only for a charged complex")
        dz2 = charge * charge - sum(n * refs[ref].charge ** 2 for ref, n in r["reactants"])
        out.append(Complex(
            id=cid, formula=formula, charge=charge, ion_size_A=size,
            log10_K_25C=to_ionic_strength_zero(r["log10_K_printed"], r["log10_K_I_M"], dz2),
            **r,
        ))
    return tuple(out)


def parse_solids(path, source_keys=None, refs=None) -> tuple[Solid, ...]:
    """Parse a solids file (DISSOLUTION reactions).

    Parameters
    ----------
    path : str, os.PathLike or importlib Traversable
        The CSV file [-]
    source_keys : collection of str, optional
        Known source keys; ``None`` skips the check [-]
    refs : dict, optional
        Reactant table; default: that of the library's systems and ions [-]

    Returns
    -------
    tuple of Solid
        In file order [-]

    Notes
    -----
    Checks as :func:`parse_complexes`, with: ids are lower-case words joined by
    hyphens; the weighed formula is neutral and can be weighed; the charges of
    the dissolved species sum to zero; elements balance up to water.
    """
    refs = _refs() if refs is None else refs
    name, rows = _rows(path, _REACTION_COLS + ("name", "weighed_formula"))
    out: list[Solid] = []
    seen: dict[str, int] = {}
    for ln, row in rows:
        sid = _text(row, "id", name, ln)
        if not _SOLID_ID_RE.match(sid):
            _fail(name, ln, f"solid id {sid!r} must be lower-case words joined by hyphens")
        if sid in seen:
            _fail(name, ln, f"duplicate solid id {sid!r} (line {seen[sid]})")
        seen[sid] = ln
        weighed = _text(row, "weighed_formula", name, ln)
        if _charge(weighed, "weighed_formula", name, ln) != 0:
            _fail(name, ln, f"weighed_formula {weighed!r} of a solid must be neutral")
        mass = _mass(weighed, "weighed_formula", name, ln)
        r = _reaction_row(row, name, ln, refs, source_keys)
        total = sum(n * refs[ref].charge for ref, n in r["reactants"])
        if total != 0:
            _fail(name, ln, f"charge does not balance: the dissolved species carry {total:+d}")
        try:
            _water_count(composition(weighed), r["reactants"], refs)
        except ValueError as exc:
            _fail(name, ln, f"{exc}")
        dz2 = sum(n * refs[ref].charge ** 2 for ref, n in r["reactants"])
        out.append(Solid(
            id=sid, name=_text(row, "name", name, ln), formula=_text(row, "formula", name, ln),
            weighed_formula=weighed, molar_mass_g_per_mol=mass,
            log10_K_25C=to_ionic_strength_zero(r["log10_K_printed"], r["log10_K_I_M"], dz2),
            **r,
        ))
    return tuple(out)


# --------------------------------------------------------------------------- cached library


def _data(name: str):
    return files("acidscape") / "data" / name


@functools.cache
def _sources() -> dict[str, Source]:
    return parse_sources(_data("sources.csv"))


@functools.cache
def _systems() -> dict[str, AcidSystem]:
    return parse_systems(_data("systems.csv"), _data("species.csv"), source_keys=_sources())


@functools.cache
def _ions() -> IonTable:
    out = parse_ions(_data("ions.csv"), source_keys=_sources())
    table = _systems()
    for ion in out.values():
        if ion.system is None:
            continue
        s = table.get(ion.system)
        if s is None:
            raise LibraryDataError(f"ions.csv: ion {ion.id!r} names system {ion.system!r}, which is not in systems.csv")
        base = s.species[-1]
        if (base.formula, base.charge) != (ion.formula, ion.charge):
            raise LibraryDataError(f"ions.csv: ion {ion.id!r} ({ion.formula}) is not the base "
                                   f"{base.formula} of system {ion.system!r}")
    clash = sorted(i for i in set(out) & set(table) if out[i].system != i)
    if clash:
        raise LibraryDataError(f"ions.csv: id(s) {', '.join(clash)} also name a system")
    aliases = {a: ion.id for ion in out.values() for a in ion.aliases}
    return IonTable(out, aliases)


@functools.cache
def _refs() -> dict[str, _Ref]:
    return _build_refs(_systems(), _ions())


@functools.cache
def _complexes() -> tuple[Complex, ...]:
    out = parse_complexes(_data("complexes.csv"), source_keys=_sources(), refs=_refs())
    return out


@functools.cache
def _solids() -> tuple[Solid, ...]:
    return parse_solids(_data("solids.csv"), source_keys=_sources(), refs=_refs())


def sources() -> dict[str, Source]:
    """All sources, key -> :class:`Source` (a fresh dict; the entries are frozen).

    Examples
    --------
    >>> sources()["GKL02"].doi
    '10.1063/1.1416902'
    """
    return dict(_sources())


def systems() -> dict[str, AcidSystem]:
    """All acid-base systems, id -> :class:`AcidSystem`, in file order.

    Examples
    --------
    >>> list(systems())[:3]
    ['carbonate', 'phosphate', 'edta']
    """
    return dict(_systems())


def ions() -> IonTable:
    """All ions, id -> :class:`Ion`, in file order; lookups also accept aliases.

    Examples
    --------
    >>> t = ions()
    >>> t["calcium"].charge, t["Ca+2"].id, list(t)[:2]
    (2, 'calcium', ['sodium', 'potassium'])
    """
    t = _ions()
    return IonTable(t, t._aliases)


def complexes() -> tuple[Complex, ...]:
    """All aqueous complexes (formation reactions), in file order.

    Examples
    --------
    >>> c = get_complex("CaCO3")
    >>> c.reactants, c.log10_K_25C
    ((('calcium', 1), ('CO3-2', 1)), 3.224)
    """
    return _complexes()


def solids() -> tuple[Solid, ...]:
    """All solids (dissolution reactions), in file order.

    Examples
    --------
    >>> [s.id for s in solids()][:2]
    ['calcite', 'aragonite']
    """
    return _solids()


def _unknown(kind: str, key, known, aliases=None) -> UnknownIdError:
    """UnknownIdError listing ``known`` ids; close matches are sought among ids and aliases
    (an alias suggests the id it stands for)."""
    known = list(known)
    target = dict(aliases or {})
    target.update({k: k for k in known})
    by_lower: dict[str, str] = {}
    for k in target:
        by_lower.setdefault(k.lower(), k)
    close = difflib.get_close_matches(str(key).lower(), list(by_lower), n=5, cutoff=0.6)
    ids = list(dict.fromkeys(target[by_lower[c]] for c in close))[:3]
    hint = f" Did you mean {' or '.join(ids)}?" if ids else ""
    text = str(key).strip()[:40] if isinstance(key, str) else ""
    kind = {"system": "acid-base system"}.get(kind, kind)
    return UnknownIdError(f"There is no {kind} “{text}” in the library.{hint} Choose one of: {', '.join(known)}.",
                          field=None)


def get_system(id: str) -> AcidSystem:
    """The acid-base system with this id.

    Parameters
    ----------
    id : str
        System id, e.g. ``"carbonate"`` [-]

    Returns
    -------
    AcidSystem
        The system [-]

    Raises
    ------
    UnknownIdError
        If the id is not known; the message lists close and all known ids.

    Examples
    --------
    >>> get_system("ammonium").pKa_25C
    (9.245,)
    """
    table = _systems()
    if isinstance(id, str) and id in table:
        return table[id]
    raise _unknown("system", id, table)


def get_ion(id: str) -> StrongIon:
    """The ion with this id or alias (``"sodium"``, or the older ``"Na+"``).

    Parameters
    ----------
    id : str
        Ion id or alias [-]

    Returns
    -------
    Ion
        The ion; its ``id`` is always the word [-]

    Raises
    ------
    UnknownIdError
        If neither an id nor an alias; the message lists close and all known ids.

    Examples
    --------
    >>> get_ion("Na+").id, get_ion("aluminum").id
    ('sodium', 'aluminium')
    >>> round(get_ion("nitrate").as_g_per_mol, 3)
    14.007
    """
    table = _ions()
    if isinstance(id, str) and id in table:
        return table[id]
    raise _unknown("ion", id, list(table), table._aliases)


def get_complex(id: str) -> Complex:
    """The complex with this id (``"CaHCO3+"``), UnknownIdError with close matches otherwise.

    Examples
    --------
    >>> get_complex("FeOH+2").reactants
    (('iron(III)', 1), ('H+', -1))
    """
    for c in _complexes():
        if c.id == id:
            return c
    raise _unknown("complex", id, [c.id for c in _complexes()])


def get_solid(id: str) -> Solid:
    """The solid with this id (``"calcite"``).

    Parameters
    ----------
    id : str
        Solid id [-]

    Returns
    -------
    Solid
        The solid [-]

    Raises
    ------
    UnknownIdError
        If the id is not known; the message suggests close matches and lists all ids.

    Examples
    --------
    >>> get_solid("gypsum").reactants
    (('calcium', 1), ('SO4-2', 1))
    >>> try:
    ...     get_solid("calcit")
    ... except UnknownIdError as exc:
    ...     print(exc.message[:77])
    There is no solid “calcit” in the library. Did you mean calcite or malachite?
    """
    for s in _solids():
        if s.id == id:
            return s
    raise _unknown("solid", id, [s.id for s in _solids()])


def resolve_ref(ref: str) -> tuple:
    """What a reactant name of complexes.csv / solids.csv stands for.

    Parameters
    ----------
    ref : str
        ``"H+"``, ``"OH-"``, an ion id or alias, or a species formula of species.csv [-]

    Returns
    -------
    tuple
        ``("H+",)``, ``("OH-",)``, ``("ion", ion_id)``, or ``("system", system_id, n_H)``
        with n_H the protons the species carries above the system's fully
        deprotonated base. An ion that is a system's base (sulfate) resolves to
        that system with n_H = 0 [-]

    Raises
    ------
    UnknownIdError
        For an unknown name, with close matches.

    Examples
    --------
    >>> resolve_ref("HCO3-"), resolve_ref("Ca+2"), resolve_ref("sulfate"), resolve_ref("OH-")
    (('system', 'carbonate', 1), ('ion', 'calcium'), ('system', 'sulfate', 0), ('OH-',))
    """
    table = _refs()
    if isinstance(ref, str) and ref in table:
        return table[ref].resolved
    raise _unknown("reactant", ref, table)


def ref_charge(ref: str) -> int:
    """Charge number of a reactant name (see :func:`resolve_ref`).

    Examples
    --------
    >>> ref_charge("iron(III)"), ref_charge("H2PO4-"), ref_charge("Y-4")
    (3, -1, -4)
    """
    resolve_ref(ref)
    return _refs()[ref].charge


def reaction_text(entry) -> str:
    """The reaction of a complex or a solid written out, water included where it can be counted.

    Parameters
    ----------
    entry : Complex or Solid
        A library entry [-]

    Returns
    -------
    str
        e.g. ``"Fe+3 + 2 H2O = Fe(OH)2+ + 2 H+"`` or ``"CaCO3 = Ca+2 + CO3-2"`` [-]

    Examples
    --------
    >>> reaction_text(get_complex("Fe(OH)2+"))
    'Fe+3 + 2 H2O = Fe(OH)2+ + 2 H+'
    >>> reaction_text(get_solid("brucite"))
    'Mg(OH)2 + 2 H+ = Mg+2 + 2 H2O'
    """
    refs = _refs()
    is_solid = isinstance(entry, Solid)
    elements = _elements(entry.weighed_formula if is_solid else entry.formula)
    try:
        w = _water_count(elements, entry.reactants, refs) or 0
    except ValueError:
        w = 0

    def term(n, f):
        return f"{n} {f}" if n != 1 else f

    pos = [term(n, refs[r].display) for r, n in entry.reactants if n > 0]
    neg = [term(-n, refs[r].display) for r, n in entry.reactants if n < 0]
    if is_solid:
        left = [entry.formula] + neg + ([term(-w, "H2O")] if w < 0 else [])
        right = pos + ([term(w, "H2O")] if w > 0 else [])
    else:
        left = pos + ([term(w, "H2O")] if w > 0 else [])
        right = [entry.formula] + neg + ([term(-w, "H2O")] if w < 0 else [])
    return " + ".join(left) + " = " + " + ".join(right)


def accepted_units(system_or_ion) -> list[str]:
    """Concentration units that fit a system or a strong ion.

    Parameters
    ----------
    system_or_ion : AcidSystem, StrongIon or str
        The item, or its id (system ids are tried first) [-]

    Returns
    -------
    list of str
        ``mol/L``, ``mmol/L``, ``umol/L``, then ``mg/L`` (when a mass basis
        exists), ``mg/L as X`` (when an "as" basis exists) and ``meq/L`` (strong
        ions only) [-]

    Notes
    -----
    The rule is that of :func:`acidscape.data.units.accepted_units`, which this
    function calls so that both always agree.

    Examples
    --------
    >>> u = accepted_units("phosphate")
    >>> u[:3], "mg/L as P" in u, "meq/L" in u
    (['mol/L', 'mmol/L', 'umol/L'], True, False)
    >>> accepted_units("Ca+2") == accepted_units("calcium")
    True
    >>> "mg/L as CaCO3" in accepted_units("calcium")
    True
    """
    from . import units

    item = system_or_ion
    if isinstance(item, str):
        item = _systems()[item] if item in _systems() else get_ion(item)
    if not isinstance(item, (AcidSystem, StrongIon)):
        raise InputError(
            f"system_or_ion must be an AcidSystem, a StrongIon or an id, got {system_or_ion!r}",
            field=None,
        )
    return list(units.accepted_units(item))


def _cite(key: str | None) -> str | None:
    return _sources()[key].text if key else None


def _r(x: float | None, nd: int = 4) -> float | None:
    return None if x is None else round(x, nd)


def library_as_json() -> list[dict]:
    """Every system as a JSON-ready dict, with the full reference of each value.

    Returns
    -------
    list of dict
        One dict per system with keys ``id``, ``name``, ``species`` (formula,
        charge, molar_mass_g_per_mol, ion_size_A, elemental_formula),
        ``pKa_25C`` (I = 0, 4 decimals), ``pKa_25C_printed``,
        ``pKa_ionic_strength_M``, ``dH_kJ_per_mol``, ``dCp_J_per_mol_K``,
        ``temperature_model``, ``mass_basis``, ``mass_basis_g_per_mol``,
        ``as_formula``, ``as_g_per_mol``, ``units``, ``sources`` (keys),
        ``citations`` (reference text per value: ``pKa``, ``dH``, ``dCp``, ``ion_size``),
        ``provenance`` and ``note`` [-]

    Notes
    -----
    Molar masses are rounded to 4 decimals (the atomic weights carry 3).

    Examples
    --------
    >>> d = library_as_json()[0]
    >>> d["id"], d["pKa_25C"], d["citations"]["pKa"][0][:27]
    ('carbonate', [6.352, 10.329], 'Plummer, L. N.; Busenberg, ')
    """
    out = []
    for s in _systems().values():
        out.append({
            "id": s.id,
            "name": s.name,
            "species": [
                {"formula": sp.formula, "charge": sp.charge,
                 "molar_mass_g_per_mol": _r(sp.molar_mass_g_per_mol), "ion_size_A": sp.ion_size_A,
                 "elemental_formula": sp.elemental_formula}
                for sp in s.species
            ],
            "pKa_25C": [_r(x, 4) for x in s.pKa_25C],
            "pKa_25C_printed": list(s.pKa_25C_printed),
            "pKa_ionic_strength_M": list(s.pKa_ionic_strength_M),
            "dH_kJ_per_mol": list(s.dH_kJ_per_mol),
            "dCp_J_per_mol_K": list(s.dCp_J_per_mol_K),
            "temperature_model": s.temperature_model,
            "mass_basis": s.mass_basis,
            "mass_basis_g_per_mol": _r(s.mass_basis_g_per_mol),
            "as_formula": s.as_formula,
            "as_g_per_mol": _r(s.as_g_per_mol),
            "units": accepted_units(s),
            "sources": {"pKa": list(s.pKa_sources), "dH": list(s.dH_sources),
                        "dCp": list(s.dCp_sources),
                        "ion_size": [sp.ion_size_source for sp in s.species]},
            "citations": {
                "pKa": [_cite(k) for k in s.pKa_sources],
                "dH": [_cite(k) for k in s.dH_sources],
                "dCp": [_cite(k) for k in s.dCp_sources],
                "ion_size": [_cite(sp.ion_size_source) for sp in s.species],
            },
            "provenance": list(s.provenance),
            "note": s.note,
        })
    return out


def ions_as_json() -> list[dict]:
    """Every ion as a JSON-ready dict, with the full reference of its ion size.

    Returns
    -------
    list of dict
        One dict per ion with keys ``id``, ``name``, ``formula``, ``charge``,
        ``molar_mass_g_per_mol``, ``ion_size_A``, ``as_formula``,
        ``as_g_per_mol``, ``aliases`` (older spellings accepted as input),
        ``system`` (the acid-base system the ion is the base of, or None),
        ``units``, ``sources``, ``citations`` (``ion_size``) and ``note`` [-]

    Examples
    --------
    >>> [d["id"] for d in ions_as_json()][:3]
    ['sodium', 'potassium', 'lithium']
    """
    return [
        {
            "id": i.id, "name": i.name, "formula": i.formula, "charge": i.charge,
            "molar_mass_g_per_mol": _r(i.molar_mass_g_per_mol), "ion_size_A": i.ion_size_A,
            "as_formula": i.as_formula, "as_g_per_mol": _r(i.as_g_per_mol),
            "aliases": list(i.aliases), "system": i.system,
            "units": accepted_units(i),
            "sources": {"ion_size": i.ion_size_source},
            "citations": {"ion_size": _cite(i.ion_size_source)},
            "note": i.note,
        }
        for i in _ions().values()
    ]


def _reaction_json(e) -> dict:
    return {
        "id": e.id,
        "formula": e.formula,
        "reaction": reaction_text(e),
        "reactants": [{"ref": r, "coef": n} for r, n in e.reactants],
        "log10_K_25C": _r(e.log10_K_25C, 4),
        "log10_K_printed": e.log10_K_printed,
        "log10_K_I_M": e.log10_K_I_M,
        "log10_K_spread": list(e.log10_K_spread) if e.log10_K_spread else None,
        "dH_kJ_per_mol": e.dH_kJ_per_mol,
        "dCp_J_per_mol_K": e.dCp_J_per_mol_K,
        "analytic": list(e.analytic) if e.analytic else None,
        "T_range_C": list(e.T_range_C) if e.T_range_C else None,
        "sources": {"K": e.K_source, "dH": e.dH_source},
        "citations": {"K": _cite(e.K_source), "dH": _cite(e.dH_source)},
        "provenance": e.provenance,
        "note": e.note,
    }


def complexes_as_json() -> list[dict]:
    """Every complex as a JSON-ready dict with its reaction, constants and citations.

    Returns
    -------
    list of dict
        Keys ``id``, ``formula``, ``charge``, ``ion_size_A``, ``reaction`` (text),
        ``reactants`` (``ref``, ``coef``), ``log10_K_25C`` (I = 0),
        ``log10_K_printed``, ``log10_K_I_M``, ``log10_K_spread``,
        ``dH_kJ_per_mol``, ``dCp_J_per_mol_K``, ``analytic``, ``T_range_C``,
        ``sources``, ``citations``, ``provenance``, ``note`` [-]

    Examples
    --------
    >>> d = complexes_as_json()[0]
    >>> d["id"], d["reaction"]
    ('CaHCO3+', 'Ca+2 + HCO3- = CaHCO3+')
    """
    return [dict(_reaction_json(c), charge=c.charge, ion_size_A=c.ion_size_A) for c in _complexes()]


def solids_as_json() -> list[dict]:
    """Every solid as a JSON-ready dict with its reaction, constants and citations.

    Returns
    -------
    list of dict
        Keys ``id``, ``name``, ``formula``, ``weighed_formula``,
        ``molar_mass_g_per_mol``, ``reaction`` (text, dissolution),
        ``reactants`` (``ref``, ``coef``), ``log10_K_25C`` (I = 0),
        ``log10_K_printed``, ``log10_K_I_M``, ``log10_K_spread`` (lo, hi of the
        printed values where sources differ by more than 0.3, else None),
        ``dH_kJ_per_mol``, ``dCp_J_per_mol_K``, ``analytic``, ``T_range_C``,
        ``sources``, ``citations``, ``provenance``, ``note`` [-]

    Examples
    --------
    >>> d = solids_as_json()[0]
    >>> d["id"], d["reaction"], d["log10_K_25C"]
    ('calcite', 'CaCO3 = Ca+2 + CO3-2', -8.48)
    """
    return [dict(_reaction_json(s), name=s.name, weighed_formula=s.weighed_formula,
                 molar_mass_g_per_mol=_r(s.molar_mass_g_per_mol)) for s in _solids()]
