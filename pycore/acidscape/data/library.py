"""The cited library of acid-base systems and strong (non-reacting) ions.

The data live in four proofreadable CSV files in ``acidscape/data`` (lines
starting with ``#`` are comments and explain the columns):

``systems.csv``  one row per dissociation step ``acid = base + H+``: pKa at
                 25 °C as printed with the ionic strength it refers to, the
                 standard dissociation enthalpy, the temperature model, the
                 mass basis of "mg/L" and of "mg/L as X", source keys,
                 provenance and notes.
``species.csv``  the species of each system, most protonated first: display
                 formula, charge, the elemental formula weighed for the molar
                 mass, Kielland (1937) ion size.
``ions.csv``     strong ions (Na+, Ca+2, Cl-, NO3-, SO4-2 ...): charge, ion
                 size, "as" basis. The id of an ion is its formula.
``sources.csv``  source key -> full reference.

Every file is parsed once (cached) and checked: a malformed row raises
:class:`LibraryDataError` naming the file and the line number. The checks are
that each source key resolves, steps run 1..n, pKa increase strictly with the
step, the acid of each step is the base of the one before, the charge drops
by one per step, each charge agrees with its formula, and every formula can
be weighed.

Functions
---------
systems() -> dict[str, AcidSystem]          all systems, in file order
ions() -> dict[str, StrongIon]              all strong ions, in file order
sources() -> dict[str, Source]              source key -> reference
get_system(id) -> AcidSystem                raises UnknownIdError
get_ion(id) -> StrongIon                    raises UnknownIdError
accepted_units(system_or_ion) -> list[str]  concentration units that fit
library_as_json() -> list[dict]             systems, JSON-ready, with citations
ions_as_json() -> list[dict]                strong ions, JSON-ready, with citations
parse_sources(path), parse_ions(path, ...), parse_systems(path, species_path, ...)
                                            the parsers, for checking a data file

Fields added to the contract of DEVELOPERS.md (all at the end, with defaults):
``Species.elemental_formula``, ``Species.ion_size_source``,
``AcidSystem.pKa_ionic_strength_M``, ``AcidSystem.provenance``,
``StrongIon.ion_size_source``, ``StrongIon.note``.

Data sources
------------
Cited per value in the data files; the keys resolve in ``sources.csv``. Main
ones (all citations from memory): Plummer & Busenberg (1982) Geochim.
Cosmochim. Acta 46, 1011; Nordstrom et al. (1990) ACS Symp. Ser. 416, 398;
Bates & Pinching (1949) J. Res. NBS 42, 419; Morris (1966) J. Phys. Chem. 70,
3798; Goldberg, Kishore & Lennen (2002) J. Phys. Chem. Ref. Data 31, 231;
Martell & Smith, Critical Stability Constants (Plenum, 1974-1977); NIST SRD 46;
CRC Handbook, 97th ed.; Kielland (1937) J. Am. Chem. Soc. 59, 1675. Every
numerical value was recalled from memory, not read off a printed table; the
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

from ..errors import AcidscapeError, InputError, UnknownIdError
from ..data.formula import charge_of, molar_mass

__all__ = [
    "Source", "Species", "AcidSystem", "StrongIon", "LibraryDataError", "TEMPERATURE_MODELS",
    "systems", "ions", "sources", "get_system", "get_ion", "accepted_units",
    "library_as_json", "ions_as_json", "parse_sources", "parse_ions", "parse_systems",
]

#: Temperature models a system may name (implemented in :mod:`acidscape.science.temperature`).
TEMPERATURE_MODELS = ("vant-hoff", "carbonate-PB82", "ammonium-BP49", "hypochlorous-M66")

_SYSTEM_ID_RE = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")


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
    pKa_25C: tuple[float, ...]               # n, 25 °C, as printed (see pKa_ionic_strength_M)
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


@dataclass(frozen=True)
class StrongIon:
    """A non-reacting ion, counted in the charge balance at its full charge."""

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
    """Parse a strong-ion file.

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
    """
    cols = ("id", "name", "formula", "charge", "ion_size_A", "ion_size_source", "as_formula",
            "provenance", "note")
    out: dict[str, StrongIon] = {}
    name, rows = _rows(path, cols)
    for ln, row in rows:
        ion_id = _text(row, "id", name, ln)
        formula = _text(row, "formula", name, ln)
        if ion_id in out:
            _fail(name, ln, f"duplicate ion id {ion_id!r}")
        if ion_id != formula:
            _fail(name, ln, f"ion id {ion_id!r} must be its formula {formula!r}")
        charge = _int(row, "charge", name, ln)
        if charge != _charge(formula, "formula", name, ln) or charge == 0:
            _fail(name, ln, f"charge = {charge} disagrees with formula {formula!r} or is zero")
        size, size_src = _ion_size(row, name, ln, source_keys)
        as_formula = row["as_formula"] or None
        _text(row, "provenance", name, ln)
        out[ion_id] = StrongIon(
            id=ion_id, name=_text(row, "name", name, ln), formula=formula, charge=charge,
            molar_mass_g_per_mol=_mass(formula, "formula", name, ln), ion_size_A=size,
            as_formula=as_formula,
            as_g_per_mol=_mass(as_formula, "as_formula", name, ln) if as_formula else None,
            ion_size_source=size_src, note=row["note"],
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
        lst.append({
            "pKa": pKa, "I": I, "pKa_src": _source_key(row, "pKa_source", name, ln, source_keys),
            "dH": dH, "dH_src": dH_src, "prov": _text(row, "provenance", name, ln),
            "note": row["note"], "row": row,
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
            pKa_25C=tuple(s["pKa"] for s in lst), dH_kJ_per_mol=tuple(s["dH"] for s in lst),
            temperature_model=row0["temperature_model"], mass_basis=row0["mass_basis"],
            mass_basis_g_per_mol=molar_mass(row0["mass_basis"]), as_formula=as_formula,
            as_g_per_mol=molar_mass(as_formula) if as_formula else None,
            pKa_sources=tuple(s["pKa_src"] for s in lst), dH_sources=tuple(s["dH_src"] for s in lst),
            note=" ".join(s["note"] if i == 0 else f"[step {i + 1}: {s['note']}]"
                          for i, s in enumerate(lst) if s["note"]),
            pKa_ionic_strength_M=tuple(s["I"] for s in lst),
            provenance=tuple(s["prov"] for s in lst),
        )
    for sid in species:
        if sid not in out:
            raise LibraryDataError(f"{species_name}: species of {sid!r}, which has no row in {name}")
    return out


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
def _ions() -> dict[str, StrongIon]:
    out = parse_ions(_data("ions.csv"), source_keys=_sources())
    clash = sorted(set(out) & set(_systems()))
    if clash:
        raise LibraryDataError(f"ions.csv: id(s) {', '.join(clash)} also name a system")
    return out


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


def ions() -> dict[str, StrongIon]:
    """All strong ions, id -> :class:`StrongIon`, in file order.

    Examples
    --------
    >>> ions()["Ca+2"].charge
    2
    """
    return dict(_ions())


def _unknown(kind: str, key, known) -> UnknownIdError:
    known = list(known)
    by_lower = {k.lower(): k for k in known}
    close = difflib.get_close_matches(str(key).lower(), list(by_lower), n=3, cutoff=0.6)
    hint = f"; did you mean {', '.join(repr(by_lower[c]) for c in close)}?" if close else ""
    return UnknownIdError(f"unknown {kind} id {key!r}{hint}; known: {', '.join(known)}", field=None)


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
    """The strong ion with this id (its formula, e.g. ``"Na+"``, ``"SO4-2"``).

    Parameters
    ----------
    id : str
        Ion id [-]

    Returns
    -------
    StrongIon
        The ion [-]

    Raises
    ------
    UnknownIdError
        If the id is not known; the message lists close and all known ids.

    Examples
    --------
    >>> round(get_ion("NO3-").as_g_per_mol, 3)
    14.007
    """
    table = _ions()
    if isinstance(id, str) and id in table:
        return table[id]
    raise _unknown("ion", id, table)


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
    The rule is that of :func:`acidscape.boundary.units.accepted_units`, which this
    function calls so that both always agree.

    Examples
    --------
    >>> accepted_units("phosphate")
    ['mol/L', 'mmol/L', 'umol/L', 'mg/L', 'mg/L as P']
    >>> accepted_units("Ca+2")
    ['mol/L', 'mmol/L', 'umol/L', 'mg/L', 'mg/L as CaCO3', 'meq/L']
    """
    from ..boundary import units

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
        ``pKa_25C``, ``pKa_ionic_strength_M``, ``dH_kJ_per_mol``,
        ``temperature_model``, ``mass_basis``, ``mass_basis_g_per_mol``,
        ``as_formula``, ``as_g_per_mol``, ``units``, ``sources`` (keys),
        ``citations`` (reference text per value: ``pKa``, ``dH``, ``ion_size``),
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
            "pKa_25C": list(s.pKa_25C),
            "pKa_ionic_strength_M": list(s.pKa_ionic_strength_M),
            "dH_kJ_per_mol": list(s.dH_kJ_per_mol),
            "temperature_model": s.temperature_model,
            "mass_basis": s.mass_basis,
            "mass_basis_g_per_mol": _r(s.mass_basis_g_per_mol),
            "as_formula": s.as_formula,
            "as_g_per_mol": _r(s.as_g_per_mol),
            "units": accepted_units(s),
            "sources": {"pKa": list(s.pKa_sources), "dH": list(s.dH_sources),
                        "ion_size": [sp.ion_size_source for sp in s.species]},
            "citations": {
                "pKa": [_cite(k) for k in s.pKa_sources],
                "dH": [_cite(k) for k in s.dH_sources],
                "ion_size": [_cite(sp.ion_size_source) for sp in s.species],
            },
            "provenance": list(s.provenance),
            "note": s.note,
        })
    return out


def ions_as_json() -> list[dict]:
    """Every strong ion as a JSON-ready dict, with the full reference of its ion size.

    Returns
    -------
    list of dict
        One dict per ion with keys ``id``, ``name``, ``formula``, ``charge``,
        ``molar_mass_g_per_mol``, ``ion_size_A``, ``as_formula``,
        ``as_g_per_mol``, ``units``, ``citations`` (``ion_size``) and ``note`` [-]

    Examples
    --------
    >>> [d["id"] for d in ions_as_json()][:3]
    ['Na+', 'K+', 'Li+']
    """
    return [
        {
            "id": i.id, "name": i.name, "formula": i.formula, "charge": i.charge,
            "molar_mass_g_per_mol": _r(i.molar_mass_g_per_mol), "ion_size_A": i.ion_size_A,
            "as_formula": i.as_formula, "as_g_per_mol": _r(i.as_g_per_mol),
            "units": accepted_units(i),
            "sources": {"ion_size": i.ion_size_source},
            "citations": {"ion_size": _cite(i.ion_size_source)},
            "note": i.note,
        }
        for i in _ions().values()
    ]
