"""Many samples at once: a CSV of lab results in, one row of results per sample out.

Reading the file
----------------
- **Delimiter**: ``,``, ``;`` or tab, whichever the header line holds most often outside
  quotes (``"auto"``, the default), or as the mapping's ``delimiter`` says.
- **Decimal sign**: with ``"auto"`` (the default) a semicolon- or tab-separated file may write
  decimal commas (``12,5`` is 12.5), as spreadsheets do in much of the world; a point is still
  read as a decimal point there. In a comma-separated file a decimal comma can only appear
  inside quotes and is read only when the mapping says ``"decimal": ","``. A cell with both a
  point and a comma (a thousands separator, ``1.234,5``) is never guessed at: it is an error.
- A byte-order mark, CRLF line ends and quoted fields (with the delimiter or a line break
  inside) are read as a spreadsheet writes them.

The column mapping
------------------
A *column mapping* says which column holds what (every key optional except as noted)::

    {"id": "Sample",                                   # sample ID column
     "pH": "pH",                                       # measured pH column
     "temperature": {"column": "Temp", "unit": "C",    # "C" or "F"
                     "default_C": 25},                 # blank cells (see below)
     "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"},   # or "meq/L"
     "systems": [{"id": "phosphate", "column": "PO4-P", "unit": "mg/L as P",
                  "blank": "omit"}],                   # "omit" (default), "zero" or "error"
     "ions": [{"id": "calcium", "column": "Ca", "unit": "mg/L"}],  # "Ca+2" is read too
     "conductivity": {"column": "EC", "unit": "uS/cm"},   # or "mS/cm"; 25 °C specific conductance
     "tds": {"column": "TDS", "unit": "mg/L"},
     "mode": "measured",           # "measured": speciate at the row's pH (default)
                                   # "equilibrium": solve the charge balance, pH column ignored
     "activity": "davies",         # activity model for every row
     "dose": {"chemical": "NaOH", "target_pH": 8.0},   # optional: dose to a target per row
     "delimiter": "auto",          # ",", ";", "\\t" or "auto"
     "decimal": "auto"}            # ".", "," or "auto" (see above)

Ion ids may be the ion's word (``"calcium"``, ``"sulfate"``: the library's ion names) or its
formula id (``"Ca+2"``, ``"SO4-2"``). Units are those of :mod:`acidscape.data.units`
(``mg/L``, ``mg/L as X``, ``mmol/L``, ``umol/L``, ``mol/L``, ``meq/L`` for strong ions) and
``ug/L`` (``ug/L as X``), read as 1/1000 of the mg/L unit when the core lists no ``ug/L``.
Each column's unit becomes one factor to mol/L when the mapping is read, not once per row.

Blank cells (a blank is an empty cell, a cell of spaces, or a line shorter than the header):

===========================  ===============================================================
column                       a blank cell means
===========================  ===============================================================
pH (mode "measured")         the row is an error: "pH is missing"
alkalinity (when mapped)     the row is an error: "Alkalinity is missing: ..." -- never a zero
temperature                  ``temperature.default_C`` when the mapping gives it, otherwise
                             the row is an error: "Temperature is missing"; with no
                             temperature column every row is at ``default_C`` (default 25)
system or ion total          not measured: left out of that row's water (``"blank": "omit"``,
                             the default); ``"zero"`` reads it as 0 (say so only when a
                             blank truly means none); ``"error"`` makes the row an error
conductivity, TDS            not measured: the ionic strength follows from the composition
===========================  ===============================================================

A row with a blank alkalinity cell is not calculated without it: its pH alone does not say
how much carbonate the water holds, and a water without carbonate (alkalinity 0) would give
wrong species and doses. Map no alkalinity column at all to speciate every row at its pH
with the totals given.

A cell that is not a number (``<0.01``, ``n.d.``) is always that row's error. With both a
conductivity and a TDS value in a row, the conductivity sets the ionic strength.

Each row becomes an ordinary scenario (see :mod:`acidscape.boundary.scenario`):

- pH and alkalinity given (mode "measured") -> ``measured`` (the carbonate total follows from
  them, :mod:`acidscape.operations.closure`);
- pH without an alkalinity column (mode "measured") -> ``pH``: speciation at the measured pH;
- mode "equilibrium" -> no pH: the charge balance of the given totals and ions sets it.

A bad row is reported with its row number as a spreadsheet shows it (the header is row 1,
the first sample row 2) and the reason; the other rows still compute.

Results
-------
Column names carry their unit in words: ``pH``, ``ionic_strength_M`` ...; a species column is
``<system>_<formula without charge>_mol_per_L``, e.g. ``carbonate_HCO3_mol_per_L``,
``carbonate_CO3_mol_per_L``, ``ammonium_NH4_mol_per_L`` (the formula loses its charge, ``*``
and brackets: ``boric_BOH4_mol_per_L`` is B(OH)4-). :func:`result_columns` gives each
column's name, the species formula it holds and its kind (how it is rounded).

A dose mapping adds ``dose_<chemical>_mg_per_L``, ``dose_<chemical>_mmol_per_L``,
``pH_after_dose``, ``dose_status`` and ``dose_cautions``. ``dose_status`` is ``dosed``,
``no dose needed`` (the water is already at or past the target on the side the chemical
moves the pH: a base, whose alkalinity per mole is positive, raises it; an acid, or a
chemical adding no alkalinity such as CO2, lowers it; the dose is then 0 and the row is no
error) or ``not reachable`` (the row's error says why). Every dosed row carries the cautions
(:data:`DOSE_CAUTION`; :data:`DOSE_CAUTIONS` in full).

Rounding of the CSV text (``digits``): ``None`` or 0 writes every float in full (``repr``);
an integer D writes quantities (concentrations, alkalinity, ionic strength, doses) to D
significant digits, pH values to 3 decimals and temperatures to 2 decimals; a dict
``{"quantity": D, "pH": n, "temperature": n}`` sets each kind. The page and the command line
use :data:`DEFAULT_DIGITS`. The ``rows`` of :func:`run_rows` always hold full floats.

Functions
---------
detect_dialect(text, delimiter="auto", decimal="auto") -> (str, str)
read_header(text, delimiter="auto", decimal="auto") -> dict   columns, count, guessed mapping
guess_mapping(columns) -> dict                        a mapping from column names
template_csv(delimiter=",") -> str                    header of accepted columns + an example row
result_columns(columns, mapping) -> list[dict]        the result columns a mapping gives
compute_records(columns, records, mapping, ...) -> dict   the row function (any cell values)
run_rows(text, mapping, start=0, stop=None, row_offset=0, digits=None) -> dict
batch_chunk(params) -> dict                           the same from a JSON request (api method)
batch_csv(text, mapping, digits=DEFAULT_DIGITS, jobs=1) -> str   whole result CSV, in processes
run_cli(args) -> int                                  ``python -m acidscape batch``

Dask (optional)
---------------
:func:`compute_records` takes any rows of cells (text, numbers, or NaN for blanks), so the
same row function maps over the partitions of a Dask dataframe (``pip install
acidscape[dask]``)::

    import dask.dataframe as dd, pandas as pd
    from acidscape.boundary.batch import compute_records, result_columns

    frame = pd.read_csv("samples.csv", dtype=str, keep_default_na=False)   # index 0..n-1
    ddf = dd.from_pandas(frame, npartitions=8)

    def results(part, mapping):
        out = compute_records(list(part.columns), part.itertuples(index=False, name=None),
                              mapping, row_numbers=[i + 2 for i in part.index])
        return pd.DataFrame(out["rows"], columns=out["columns"])

    names = [c["name"] for c in result_columns(list(frame.columns), mapping)]
    meta = pd.DataFrame({c: pd.Series(dtype=object) for c in names})
    table = ddf.map_partitions(results, mapping, meta=meta).compute()

Row numbers come from the frame's index (sample k, 0-based, is spreadsheet row k + 2);
``dd.from_pandas`` keeps the index of the whole frame. ``tests/test_batch_dask.py`` runs it.

Speed
-----
A row is computed by the functions :func:`acidscape.boundary.api.solve` and
:func:`acidscape.boundary.api.dose` use (the scenario read and, with pH and alkalinity,
closed; the tableau; one solve; the pH 4.5 end point; the dose), giving the same figures, but
only the ones a row reports: not the indices, buffer intensity, saturation table, trail and
equivalence points of a full description, nor the dose's descriptions of the water before
and after. Rows alike in make-up and temperature share one tableau (:func:`_row_model`).
``build_scripts/bench_batch.py`` prints rows per second by kind of sheet.

Data sources: none of its own; each row's figures are those of :func:`acidscape.boundary.api.solve`
and :func:`acidscape.boundary.api.dose` for the row's scenario.
"""

from __future__ import annotations

import csv
import io
import json
import math
import numbers
import re
import sys
import time

from ..checks import PH_RANGE
from ..constants import ATOMIC_WEIGHT
from ..errors import AcidscapeError, InputError
from ..operations.dosing import CAUTION_LINE, CAUTIONS

#: Largest CSV text accepted in one request [characters].
MAX_TEXT = 20_000_000
#: Most samples processed in one request.
MAX_ROWS_PER_CALL = 20_000
#: Most columns in a CSV.
MAX_COLUMNS = 200
#: Significant digits of quantities in the page's and the command line's CSV.
DEFAULT_DIGITS = 4
ALK_UNITS = ("mg/L as CaCO3", "meq/L")
TEMPERATURE_UNITS = ("C", "F")
MODES = ("measured", "equilibrium")
DELIMITERS = (",", ";", "\t")
DECIMALS = (".", ",")
BLANK_RULES = ("omit", "zero", "error")
#: Specific conductance units, in µS/cm per unit.
CONDUCTIVITY_UNITS = {"uS/cm": 1.0, "µS/cm": 1.0, "mS/cm": 1000.0}
#: Total dissolved solids units, in mg/L per unit.
TDS_UNITS = {"mg/L": 1.0}
MAPPING_KEYS = ("id", "pH", "temperature", "alkalinity", "systems", "ions", "conductivity", "tds", "mode",
                "activity", "dose", "delimiter", "decimal")

#: The cautions that travel with batch dose results: the dosing module's, in full and in one line.
DOSE_CAUTIONS = CAUTIONS
DOSE_CAUTION = CAUTION_LINE

_FIXED = [  # (name, kind)
    ("row", "count"), ("sample", "text"), ("pH_measured", "pH"), ("temperature_C", "temperature"),
    ("pH", "pH"), ("ionic_strength_M", "quantity"), ("alkalinity_mg_per_L_as_CaCO3", "quantity"),
    ("hydroxide_alk_mg_per_L_as_CaCO3", "quantity"), ("carbonate_alk_mg_per_L_as_CaCO3", "quantity"),
    ("bicarbonate_alk_mg_per_L_as_CaCO3", "quantity"), ("DIC_mg_per_L_as_C", "quantity"),
]
_PH_DECIMALS = 3
_CHARGE_RE = re.compile(r"[+-]\d*$")
_TEMPERATURE_DECIMALS = 2


# --------------------------------------------------------------------------------- reading


def _header_line(text: str) -> str:
    """The first line of the text (quotes respected), without a byte-order mark."""
    quoted = False
    for i, ch in enumerate(text):
        if ch == '"':
            quoted = not quoted
        elif not quoted and ch in "\r\n":
            return text[:i]
    return text


def _count_outside_quotes(line: str, ch: str) -> int:
    n, quoted = 0, False
    for c in line:
        if c == '"':
            quoted = not quoted
        elif c == ch and not quoted:
            n += 1
    return n


def detect_dialect(text: str, delimiter: str = "auto", decimal: str = "auto") -> tuple[str, str]:
    """Delimiter and decimal sign of a CSV (see the module notes for the rule).

    Parameters
    ----------
    text : str
        CSV text, first line the column names [-]
    delimiter : str
        ``","``, ``";"``, ``"\\t"`` or ``"auto"`` [-]
    decimal : str
        ``"."``, ``","`` or ``"auto"`` [-]

    Returns
    -------
    tuple of (str, str)
        The delimiter and the decimal sign [-]

    Examples
    --------
    >>> detect_dialect("Sample;pH;Alk\\nA;7,5;120\\n")
    (';', ',')
    >>> detect_dialect('"Site, east",pH\\nA,7.5\\n')
    (',', '.')
    """
    if delimiter in (None, "auto"):
        first = _header_line(text.lstrip("\ufeff")) if isinstance(text, str) else ""
        counts = {d: _count_outside_quotes(first, d) for d in ("\t", ";", ",")}
        best = max(counts, key=lambda d: counts[d])  # ties: tab, then semicolon, then comma
        delimiter = best if counts[best] else ","
    elif delimiter not in DELIMITERS:
        raise InputError(f"delimiter must be one of ',', ';', tab or 'auto', got {delimiter!r}",
                         field="mapping.delimiter")
    if decimal in (None, "auto"):
        decimal = "," if delimiter in (";", "\t") else "."
    elif decimal not in DECIMALS:
        raise InputError(f"decimal must be '.', ',' or 'auto', got {decimal!r}", field="mapping.decimal")
    return delimiter, decimal


def _records(text: str, delimiter: str, max_chars: int | None = MAX_TEXT) -> tuple[list[str], list[list[str]]]:
    if not isinstance(text, str):
        raise InputError(f"csv must be text, got {type(text).__name__}", field="csv")
    if max_chars is not None and len(text) > max_chars:
        raise InputError(f"csv holds {len(text):,} characters; at most {max_chars:,} are accepted", field="csv")
    text = text.lstrip("\ufeff")  # a byte-order mark from spreadsheet exports
    try:
        rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter))
    except csv.Error as exc:
        raise InputError(f"csv could not be read: {exc}", field="csv") from None
    if not rows or not any(cell.strip() for cell in rows[0]):
        raise InputError("csv is empty: the first line must name the columns", field="csv")
    header = [h.strip() for h in rows[0]]
    if len(header) > MAX_COLUMNS:
        raise InputError(f"csv has {len(header)} columns; at most {MAX_COLUMNS} are accepted", field="csv")
    return header, rows[1:]


def _dialect_of(text, mapping) -> tuple[str, str]:
    m = mapping if isinstance(mapping, dict) else {}
    return detect_dialect(text if isinstance(text, str) else "", m.get("delimiter", "auto"),
                          m.get("decimal", "auto"))


# ------------------------------------------------------------------------ guessing columns

# Unit spellings in column names (lower case, micro sign folded to "u"), most specific first.
_UNIT_RES = [
    (re.compile(r"meq\s*[/_ ]?\s*l(?![a-z])"), "meq/L"),
    (re.compile(r"mmol\s*[/_ ]?\s*l(?![a-z])"), "mmol/L"),
    (re.compile(r"umol\s*[/_ ]?\s*l(?![a-z])"), "umol/L"),
    (re.compile(r"(?<![a-z])mol\s*[/_ ]?\s*l(?![a-z])"), "mol/L"),
    (re.compile(r"(?<![a-z])ug\s*[/_ ]?\s*l(?![a-z])|(?<![a-z])ppb(?![a-z])"), "ug/L"),
    (re.compile(r"(?<![a-z])mg\s*[/_ ]?\s*l(?![a-z])|(?<![a-z])ppm(?![a-z])"), "mg/L"),
    (re.compile(r"(?<![a-z])us\s*[/_ ]?\s*cm(?![a-z])"), "uS/cm"),
    (re.compile(r"(?<![a-z])ms\s*[/_ ]?\s*cm(?![a-z])"), "mS/cm"),
]
_AS_RE = re.compile(r"(?<![a-z])as\s+([a-z][a-z0-9]*)")
_DASH_BASIS_RE = re.compile(r"(?<![a-z])(nh3|nh4|no3|no2|po4|ammonia|ammonium|nitrate|nitrite|phosphate|"
                            r"orthophosphate)\s*[-_ ]\s*(n|p)(?![a-z0-9])")
_FAHRENHEIT_RE = re.compile(r"°\s*f(?![a-z])|deg\s*f(?![a-z])|fahrenheit|(?<![a-z])f(?![a-z])|tempf(?![a-z])")
_BASIS = {"caco3": "CaCO3", "n": "N", "p": "P", "s": "S", "c": "C", "cl2": "Cl2", "si": "Si", "f": "F",
          "sio2": "SiO2", "b": "B", "no3": "NO3", "po4": "PO4", "nh4": "NH4", "nh3": "NH3", "so4": "SO4"}

# What a column may hold, tried in this order; each kind takes the first column that names it.
# (kind, words naming it, words that rule it out)
_KINDS = [
    ("id", {"sample", "id", "name", "station", "site", "location", "label"}, {"date", "time", "ph"}),
    ("pH", {"ph"}, set()),
    ("temperature", {"temp", "temperature", "t", "wt", "tempc", "tempf", "degc", "degf"}, set()),
    ("alkalinity", {"alk", "alkalinity", "talk", "ta"}, {"phenolphthalein", "p"}),
    ("conductivity", {"cond", "conductivity", "conductance", "ec", "sc", "spc", "spcond"}, set()),
    ("tds", {"tds"}, set()),
    ("chlorine", {"chlorine", "cl2", "fcl", "fac"}, {"total", "combined", "tcl"}),
    ("calcium", {"ca", "calcium"}, {"total"}),
    ("magnesium", {"mg", "magnesium"}, {"total"}),
    ("sodium", {"na", "sodium"}, set()),
    ("potassium", {"k", "potassium"}, set()),
    ("chloride", {"cl", "chloride"}, set()),
    ("sulfate", {"so4", "sulfate", "sulphate"}, set()),
    ("nitrate", {"no3", "nitrate"}, set()),
    ("phosphate", {"po4", "phosphate", "orthophosphate", "ortho"}, {"total"}),
    ("ammonia", {"nh3", "nh4", "ammonia", "ammonium"}, set()),
    ("fluoride", {"f", "fluoride"}, set()),
    ("silica", {"sio2", "silica"}, set()),
]
_PHRASES = {"tds": ("dissolved solids",), "chlorine": ("free chlorine", "free cl")}
# Totals: kind -> ("systems" or "ions", library system id or ion word, unit when the header names none
# (also what a plain "mg/L" means for free chlorine, reported as Cl2 by convention, and ammonia),
# note when that default is a guess)
_TOTALS = {
    "calcium": ("ions", "calcium", "mg/L", None),
    "magnesium": ("ions", "magnesium", "mg/L", None),
    "sodium": ("ions", "sodium", "mg/L", None),
    "potassium": ("ions", "potassium", "mg/L", None),
    "chloride": ("ions", "chloride", "mg/L", None),
    "sulfate": ("ions", "sulfate", "mg/L", None),
    "nitrate": ("ions", "nitrate", "mg/L", "read as mg/L of nitrate (NO3); write 'as N' in the column name "
                                         "for nitrate-nitrogen"),
    "phosphate": ("systems", "phosphate", "mg/L", "read as mg/L of phosphate (PO4); write 'as P' in the "
                                                "column name for phosphate-phosphorus"),
    "ammonia": ("systems", "ammonium", "mg/L as N", "read as mg/L as N (ammonia-nitrogen, the usual lab "
                                                  "basis); write the basis in the column name if it differs"),
    "chlorine": ("systems", "hypochlorous", "mg/L as Cl2", None),
    "fluoride": ("systems", "fluoride", "mg/L", None),
    "silica": ("systems", "silicic", "mg/L", "read as mg/L of SiO2"),
}


def _ion_aliases() -> dict:
    """Ion word (the library's ion name, lower case) and formula -> ion id, whichever the library
    uses as the id (``"calcium"`` and ``"Ca+2"`` name the same ion)."""
    from ..data import library

    out = {}
    for key, ion in library.ions().items():
        out[ion.name.lower()] = key
        out[getattr(ion, "formula", key)] = key
    return out


def _lookup_ion(key):
    """The library ion for an id, a word or a formula (``"calcium"``, ``"Ca+2"``)."""
    from ..data import library
    from ..errors import UnknownIdError

    try:
        return library.get_ion(key)
    except UnknownIdError:
        aliases = _ion_aliases() if isinstance(key, str) else {}
        alias = aliases.get(key, aliases.get(key.lower() if isinstance(key, str) else None))
        if alias is None:
            raise
        return library.get_ion(alias)


def _lookup_system(key):
    from ..data import library

    return library.get_system(key)


def _units_of(item) -> list[str]:
    """Units a column of this system or ion may be in: the core's, plus ug/L forms of its mg/L ones."""
    from ..data.units import accepted_units

    units = list(accepted_units(item))
    for u in list(units):
        if u.startswith("mg/L"):
            ug = "ug/L" + u[len("mg/L"):]
            if ug not in units:
                units.append(ug)
    return units


def _factor(unit, item, field: str) -> float:
    """mol/L per one unit of ``item`` (one multiplication per cell afterwards)."""
    from ..data.units import accepted_units, factor_to_molar

    core = accepted_units(item)
    if isinstance(unit, str) and unit.replace("µ", "u").replace("μ", "u") != unit:
        unit = unit.replace("µ", "u").replace("μ", "u")
    if unit in core or not (isinstance(unit, str) and unit.startswith("ug/L")):
        if unit not in core:
            raise InputError(f"{field}: {unit!r} does not fit {item.id}; use one of " + ", ".join(_units_of(item)),
                             field=field)
        return factor_to_molar(unit, item, field)
    mg = "mg/L" + unit[len("ug/L"):]
    if mg not in core:
        raise InputError(f"{field}: {unit!r} does not fit {item.id}; use one of " + ", ".join(_units_of(item)),
                         field=field)
    return 1e-3 * factor_to_molar(mg, item, field)


def _mass_basis(item) -> str | None:
    """The formula whose mass a plain mg/L of the item counts (a system's mass basis, an ion itself)."""
    basis = getattr(item, "mass_basis", None)
    if basis is None and hasattr(item, "formula"):
        basis = _CHARGE_RE.sub("", item.formula)
    return basis


def _header_parts(header: str) -> tuple[list[str], str | None, str | None]:
    """Words of a column name (units removed), the unit it names and the 'as' basis."""
    low = header.lower().replace("µ", "u").replace("μ", "u")
    unit = None
    for rx, name in _UNIT_RES:
        m = rx.search(low)
        if m:
            unit = name
            low = low[:m.start()] + " " + low[m.end():]
            break
    basis = None
    m = _AS_RE.search(low)
    if m and m.group(1) in _BASIS:
        basis = _BASIS[m.group(1)]
        low = low[:m.start()] + " " + low[m.end():]
    m = _DASH_BASIS_RE.search(low)
    if m:
        basis = basis or _BASIS[m.group(2)]
        low = low[:m.start()] + " " + m.group(1) + " " + low[m.end():]
    words = [w for w in re.split(r"[^a-z0-9]+", low) if w]
    if "caco3" in words and basis is None:
        basis = "CaCO3"
    words = [w for w in words if w != "caco3"]
    return words, unit, basis


def _kind_of(header: str, words: list[str]) -> str | None:
    low = " ".join(words)
    for kind, names, exclude in _KINDS:
        if exclude & set(words):
            continue
        if names & set(words) or any(p in low for p in _PHRASES.get(kind, ())):
            return kind
    return None


def guess_mapping(columns: list[str]) -> dict:
    """A starting mapping from the column names (English words, units in the names).

    Parameters
    ----------
    columns : list of str
        Column names of the header line [-]

    Returns
    -------
    dict
        A mapping (see the module notes) with only the columns recognised, plus ``notes``
        (list of str: guesses worth checking) and ``unmapped`` (column names left out) [-]

    Examples
    --------
    >>> g = guess_mapping(["Sample", "pH", "Temp (°F)", "Alk_mgL_CaCO3", "Ca (mg/L)", "NO3-N mg/L"])
    >>> g["temperature"], g["alkalinity"]
    ({'column': 'Temp (°F)', 'unit': 'F'}, {'column': 'Alk_mgL_CaCO3', 'unit': 'mg/L as CaCO3'})
    >>> [(e["column"], e["unit"]) for e in g["ions"]]
    [('Ca (mg/L)', 'mg/L'), ('NO3-N mg/L', 'mg/L as N')]
    """
    mapping: dict = {"mode": "measured", "activity": "davies", "systems": [], "ions": []}
    notes: list[str] = []
    unmapped: list[str] = []
    taken: set = set()
    for col in columns:
        words, unit, basis = _header_parts(col)
        kind = _kind_of(col, words)
        if kind is None or kind in taken:
            if col.strip():
                unmapped.append(col)
            continue
        if kind == "id":
            mapping["id"] = col
        elif kind == "pH":
            mapping["pH"] = col
        elif kind == "temperature":
            mapping["temperature"] = {"column": col, "unit": "F" if _FAHRENHEIT_RE.search(col.lower()) else "C"}
        elif kind == "alkalinity":
            if unit == "meq/L":
                mapping["alkalinity"] = {"column": col, "unit": "meq/L"}
            elif unit in (None, "mg/L") and basis in (None, "CaCO3"):
                mapping["alkalinity"] = {"column": col, "unit": "mg/L as CaCO3"}
                if unit is None:
                    notes.append(f"{col}: no unit in the name; read as mg/L as CaCO3")
            else:
                notes.append(f"{col}: an alkalinity in {unit}{f' as {basis}' if basis else ''} is not read; "
                             "use mg/L as CaCO3 or meq/L")
                unmapped.append(col)
                continue
        elif kind == "conductivity":
            mapping["conductivity"] = {"column": col, "unit": "mS/cm" if unit == "mS/cm" else "uS/cm"}
            if unit is None:
                notes.append(f"{col}: no unit in the name; read as uS/cm at 25 °C")
        elif kind == "tds":
            mapping["tds"] = {"column": col, "unit": "mg/L"}
        else:
            group, key, default_unit, default_note = _TOTALS[kind]
            try:
                item = _lookup_ion(key) if group == "ions" else _lookup_system(key)
            except AcidscapeError:
                unmapped.append(col)
                continue
            if unit is None and basis is None:
                chosen = default_unit
                notes.append(f"{col}: {default_note}" if default_note else f"{col}: no unit in the name; "
                             f"read as {default_unit}")
            else:
                base = unit or "mg/L"
                chosen = f"{base} as {basis}" if basis and base in ("mg/L", "ug/L") else base
                if basis and basis == _mass_basis(item):  # "as SiO2" for silica: plain mg/L of it
                    chosen = base
                if kind in ("ammonia", "chlorine") and basis is None and base in ("mg/L", "ug/L"):
                    chosen = base + default_unit[len("mg/L"):]
                    if default_note:
                        notes.append(f"{col}: {default_note}")
            if chosen not in _units_of(item):
                notes.append(f"{col}: {chosen!r} does not fit {item.name}; choose the unit by hand")
                unmapped.append(col)
                continue
            mapping[group].append({"id": item.id, "column": col, "unit": chosen})
        taken.add(kind)
    mapping["notes"] = notes
    mapping["unmapped"] = unmapped
    return mapping


def read_header(text: str, delimiter: str = "auto", decimal: str = "auto") -> dict:
    """Columns and sample count of a CSV, with a mapping guessed from the column names.

    Parameters
    ----------
    text : str
        CSV text, first line the column names [-]
    delimiter : str
        ``","``, ``";"``, ``"\\t"`` or ``"auto"`` [-]
    decimal : str
        ``"."``, ``","`` or ``"auto"`` [-]

    Returns
    -------
    dict
        ``columns`` (list of names), ``rows`` (number of sample lines), ``delimiter``,
        ``decimal``, ``guess`` (a starting mapping, see :func:`guess_mapping`, carrying the
        delimiter and decimal sign) [-]

    Examples
    --------
    >>> h = read_header("Sample;pH;Temp C;Alk mg/L\\nA;7,1;12;80\\n")
    >>> h["columns"], h["rows"], h["delimiter"], h["decimal"], h["guess"]["alkalinity"]["column"]
    (['Sample', 'pH', 'Temp C', 'Alk mg/L'], 1, ';', ',', 'Alk mg/L')
    """
    d, dec = detect_dialect(text if isinstance(text, str) else "", delimiter, decimal)
    header, rows = _records(text, d)
    guess = guess_mapping(header)
    guess["delimiter"], guess["decimal"] = d, dec
    return {"columns": header, "rows": len(rows), "delimiter": d, "decimal": dec, "guess": guess}


_TEMPLATE = [  # (column name, example value) -- the example row is invented
    ("Sample", "EXAMPLE invented values - replace this row with your samples"),
    ("pH", "7.6"), ("Temperature (°C)", "12.5"), ("Alkalinity (mg/L as CaCO3)", "120"),
    ("Calcium (mg/L)", "40"), ("Magnesium (mg/L)", "8"), ("Sodium (mg/L)", "15"), ("Potassium (mg/L)", "2"),
    ("Chloride (mg/L)", "20"), ("Sulfate (mg/L)", "25"), ("Nitrate (mg/L as N)", "2"),
    ("Phosphate (mg/L as P)", "0.05"), ("Ammonia (mg/L as N)", "0.1"), ("Free chlorine (mg/L as Cl2)", "0.5"),
    ("Conductivity (uS/cm)", "380"), ("TDS (mg/L)", "250"),
]


def template_csv(delimiter: str = ",") -> str:
    """A CSV to fill in: the accepted column names with units, and one invented example row.

    The example row's sample ID says it is invented; every column name is recognised by
    :func:`guess_mapping`. With ``delimiter=";"`` the example numbers use decimal commas.

    Parameters
    ----------
    delimiter : str
        ``","``, ``";"`` or ``"\\t"`` [-]

    Returns
    -------
    str
        Two lines of CSV text [-]

    Examples
    --------
    >>> template_csv().splitlines()[0].split(",")[:4]
    ['Sample', 'pH', 'Temperature (°C)', 'Alkalinity (mg/L as CaCO3)']
    """
    if delimiter not in DELIMITERS:
        raise InputError(f"delimiter must be one of ',', ';' or tab, got {delimiter!r}", field="delimiter")
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=delimiter, lineterminator="\n")
    w.writerow([name for name, _ in _TEMPLATE])
    comma = delimiter != ","
    w.writerow([v.replace(".", ",") if comma and k else v for k, (_, v) in enumerate(_TEMPLATE)])
    return buf.getvalue()


# ------------------------------------------------------------------------ the mapping, checked


def _column(header: list[str], name, what: str) -> int | None:
    if name is None or name == "":
        return None
    if not isinstance(name, str):
        raise InputError(f"mapping.{what} must be a column name, got {name!r}", field=f"mapping.{what}")
    try:
        return header.index(name.strip())
    except ValueError:
        raise InputError(
            f"mapping.{what}: the CSV has no column {name!r}; its columns are " + ", ".join(map(repr, header)),
            field=f"mapping.{what}",
        ) from None


def _finite(value, field: str, lo: float, hi: float) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    if not lo <= value <= hi:
        raise InputError(f"{field} = {value:g} is outside {lo:g}..{hi:g}", field=field)
    return float(value)


def _object(mapping: dict, key: str, shape: str) -> dict:
    value = mapping.get(key) or {}
    if not isinstance(value, dict):
        raise InputError(f"mapping.{key} must be {shape}", field=f"mapping.{key}")
    return value


def species_column(system_id: str, formula: str) -> str:
    """Result column name of one species: the system id, the formula without charge, the unit.

    Examples
    --------
    >>> species_column("carbonate", "CO3-2"), species_column("carbonate", "H2CO3*")
    ('carbonate_CO3_mol_per_L', 'carbonate_H2CO3_mol_per_L')
    >>> species_column("boric", "B(OH)4-")
    'boric_BOH4_mol_per_L'
    """
    bare = re.sub(r"[^A-Za-z0-9]", "", _CHARGE_RE.sub("", formula))
    return f"{system_id}_{bare}_mol_per_L"


class _Plan:
    """A mapping checked against the header and the library, ready to build scenarios."""

    def __init__(self, header: list[str], mapping: dict, decimal: str = "."):
        if not isinstance(mapping, dict):
            raise InputError("mapping must be an object naming the columns", field="mapping")
        unknown = sorted(k for k in mapping if k not in MAPPING_KEYS and k not in ("notes", "unmapped"))
        if unknown:
            raise InputError(f"mapping has unknown key(s) {', '.join(map(repr, unknown))}; known: "
                             + ", ".join(MAPPING_KEYS), field=f"mapping.{unknown[0]}")
        self.comma = decimal == ","
        self.id = _column(header, mapping.get("id"), "id")
        self.pH = _column(header, mapping.get("pH"), "pH")
        temp = _object(mapping, "temperature", "{column, unit, default_C}")
        self.temp = _column(header, temp.get("column"), "temperature.column")
        self.temp_unit = temp.get("unit", "C")
        if self.temp_unit not in TEMPERATURE_UNITS:
            raise InputError(f"mapping.temperature.unit must be 'C' or 'F', got {self.temp_unit!r}",
                             field="mapping.temperature.unit")
        given = temp.get("default_C")
        self.temp_default = None if given is None else _finite(given, "mapping.temperature.default_C", 0.0, 100.0)
        self.temp_fixed = 25.0 if self.temp_default is None else self.temp_default
        alk = _object(mapping, "alkalinity", "{column, unit}")
        self.alk = _column(header, alk.get("column"), "alkalinity.column")
        self.alk_unit = alk.get("unit", "mg/L as CaCO3")
        if self.alk_unit not in ALK_UNITS:
            raise InputError(f"mapping.alkalinity.unit must be one of {ALK_UNITS}, got {self.alk_unit!r}",
                             field="mapping.alkalinity.unit")
        cond = _object(mapping, "conductivity", "{column, unit}")
        self.cond = _column(header, cond.get("column"), "conductivity.column")
        unit = cond.get("unit", "uS/cm")
        if unit not in CONDUCTIVITY_UNITS:
            raise InputError(f"mapping.conductivity.unit must be one of {', '.join(CONDUCTIVITY_UNITS)}, "
                             f"got {unit!r}", field="mapping.conductivity.unit")
        self.cond_factor = CONDUCTIVITY_UNITS[unit]
        tds = _object(mapping, "tds", "{column, unit}")
        self.tds = _column(header, tds.get("column"), "tds.column")
        unit = tds.get("unit", "mg/L")
        if unit not in TDS_UNITS:
            raise InputError(f"mapping.tds.unit must be one of {', '.join(TDS_UNITS)}, got {unit!r}",
                             field="mapping.tds.unit")
        self.tds_factor = TDS_UNITS[unit]
        self.mode = mapping.get("mode", "measured")
        if self.mode not in MODES:
            raise InputError(f"mapping.mode must be one of {MODES}, got {self.mode!r}", field="mapping.mode")
        self.activity = mapping.get("activity", "davies")
        if not isinstance(self.activity, str):
            raise InputError(f"mapping.activity must be a model name, got {self.activity!r}", field="mapping.activity")
        if self.mode == "measured" and self.pH is None:
            raise InputError("mapping.pH: name the pH column, or choose mode 'equilibrium'", field="mapping.pH")
        self.systems, self.ions, self.species_columns = [], [], []
        for kind, getter, out in (("systems", _lookup_system, self.systems), ("ions", _lookup_ion, self.ions)):
            entries = mapping.get(kind) or []
            if not isinstance(entries, list):
                raise InputError(f"mapping.{kind} must be a list", field=f"mapping.{kind}")
            for i, e in enumerate(entries):
                path = f"mapping.{kind}[{i}]"
                if not isinstance(e, dict) or not isinstance(e.get("id"), str):
                    raise InputError(f"{path} must be {{id, column, unit}}", field=path)
                try:
                    item = getter(e["id"])
                except AcidscapeError:
                    raise InputError(f"{path}.id: {e['id']!r} is not in the library", field=f"{path}.id") from None
                blank = e.get("blank", "omit")
                if blank not in BLANK_RULES:
                    raise InputError(f"{path}.blank must be one of {BLANK_RULES}, got {blank!r}", field=f"{path}.blank")
                factor = _factor(e.get("unit", "mmol/L"), item, f"{path}.unit")
                col = _column(header, e.get("column"), f"{kind}[{i}].column")
                label = item.name.lower() if kind == "ions" else item.id
                out.append((item.id, col, factor, blank, label))
                if kind == "systems":
                    self.species_columns += [(item.id, sp.formula, species_column(item.id, sp.formula))
                                             for sp in item.species]
        dose = mapping.get("dose")
        if dose:
            if not isinstance(dose, dict) or not isinstance(dose.get("chemical"), str):
                raise InputError("mapping.dose must be {chemical, target_pH}", field="mapping.dose")
            from ..operations.dosing import get_chemical

            chem = get_chemical(dose["chemical"], field="mapping.dose.chemical")
            target = _finite(dose.get("target_pH"), "mapping.dose.target_pH", *PH_RANGE)  # the one pH range
            # a base (alkalinity added per mole > 0) raises the pH; anything else lowers it
            self.dose = (dose["chemical"], target, 1 if chem.alkalinity_eq_per_mol > 0 else -1)
        else:
            self.dose = None
        self.columns = [{"name": n, "kind": k} for n, k in _FIXED]
        seen = {c["name"] for c in self.columns}
        for sid, formula, name in self.species_columns:
            if name in seen:
                raise InputError(f"mapping.systems: {sid} is mapped twice", field="mapping.systems")
            seen.add(name)
            self.columns.append({"name": name, "kind": "quantity", "system": sid, "formula": formula,
                                 "unit": "mol/L"})
        if self.dose:
            chem = self.dose[0]
            self.columns += [{"name": f"dose_{chem}_mg_per_L", "kind": "quantity"},
                             {"name": f"dose_{chem}_mmol_per_L", "kind": "quantity"},
                             {"name": "pH_after_dose", "kind": "pH"}, {"name": "dose_status", "kind": "text"},
                             {"name": "dose_cautions", "kind": "text"}]
        self.columns.append({"name": "error", "kind": "text"})
        self.names = [c["name"] for c in self.columns]


def result_columns(columns: list[str], mapping: dict) -> list[dict]:
    """The result columns a mapping gives for a header: ``{"name", "kind", ...}`` in order.

    ``kind`` is how a value is rounded: ``pH``, ``temperature``, ``quantity``, ``count`` or
    ``text``; species columns also carry ``system``, ``formula`` (e.g. ``"HCO3-"``) and ``unit``.

    Examples
    --------
    >>> [c["name"] for c in result_columns(["pH", "CT"], {"pH": "pH", "systems": [
    ...     {"id": "carbonate", "column": "CT", "unit": "mmol/L"}]})][-4:]
    ['carbonate_H2CO3_mol_per_L', 'carbonate_HCO3_mol_per_L', 'carbonate_CO3_mol_per_L', 'error']
    """
    return [dict(c) for c in _Plan([str(c).strip() for c in columns], mapping).columns]


# ------------------------------------------------------------------------------ one row


class _Missing(Exception):
    """A blank cell where a value is needed."""


def _cell_number(cells, index: int | None, what: str, comma: bool) -> float | None:
    """The number in a cell, or None when the cell is blank (or the column is not mapped)."""
    if index is None or index >= len(cells):
        return None
    raw = cells[index]
    if raw is None:
        return None
    if not isinstance(raw, str):
        if type(raw).__name__ == "NAType":  # a dataframe's missing value
            return None
        if isinstance(raw, bool) or not isinstance(raw, numbers.Real):
            raise InputError(f"{_said(what)} {raw!r} is not a number")
        value = float(raw)  # numpy integers and floats are numbers.Real too
        if value != value:  # NaN: a blank cell as a dataframe holds it
            return None
        if not math.isfinite(value):
            raise InputError(f"{_said(what)} {raw!r} is not a finite number")
        return value
    text = raw.strip()
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        value = None
        if comma and text.count(",") == 1 and "." not in text:
            try:
                value = float(text.replace(",", "."))
            except ValueError:
                value = None
        if value is None:
            hint = ""
            if text[:1] in "<>":
                hint = " (a detection limit: give a number, or leave the cell blank if not measured)"
            elif "," in text and not comma:
                hint = " (a decimal comma: set the mapping's decimal sign to ',')"
            elif "," in text and "." in text:
                hint = " (thousands separators are not read)"
            raise InputError(f"{_said(what)} {text!r} is not a number{hint}") from None
    if "_" in text or not math.isfinite(value):
        raise InputError(f"{_said(what)} {text!r} is not a finite number")
    return value


def _said(word: str) -> str:
    """A word as a row's message starts with it (capitalised; ``pH`` keeps its case)."""
    return word if word.startswith("pH") else word[:1].upper() + word[1:]


#: What a row's message says for a blank cell that the row cannot do without.
_MISSING = {"alkalinity": "Alkalinity is missing: without it the carbonate cannot be worked out "
                          "(a blank cell is not read as 0)"}


def _required(cells, index, what, comma) -> float:
    v = _cell_number(cells, index, what, comma)
    if v is None:
        raise InputError(_MISSING.get(what, f"{_said(what)} is missing"))
    return v


def row_scenario(plan: _Plan, cells) -> tuple[dict, float | None]:
    """The scenario of one CSV row and its measured pH (None when not used)."""
    comma = plan.comma
    if plan.temp is None:
        t = plan.temp_fixed
    else:
        t = _cell_number(cells, plan.temp, "temperature", comma)
        if t is None:
            if plan.temp_default is None:
                raise InputError("Temperature is missing (or give mapping.temperature.default_C for blank cells)")
            t = plan.temp_default
        elif plan.temp_unit == "F":
            t = (t - 32.0) * 5.0 / 9.0
    sc: dict = {"temperature_C": t, "activity": plan.activity}
    for key, entries in (("systems", plan.systems), ("ions", plan.ions)):
        out = []
        for sid, col, factor, blank, label in entries:
            v = _cell_number(cells, col, label, comma)
            if v is None:
                if blank == "omit":
                    continue
                if blank == "error":
                    raise InputError(f"{_said(label)} is missing")
                v = 0.0
            out.append({"id": sid, "total": v * factor, "unit": "mol/L"})
        if out:
            sc[key] = out
    if plan.cond is not None:
        v = _cell_number(cells, plan.cond, "conductivity", comma)
        if v is not None:
            sc["conductance_uS_per_cm"] = v * plan.cond_factor
    if plan.tds is not None and "conductance_uS_per_cm" not in sc:
        v = _cell_number(cells, plan.tds, "TDS", comma)
        if v is not None:
            sc["tds_mg_per_L"] = v * plan.tds_factor
    pH = None
    if plan.mode == "measured":
        pH = _required(cells, plan.pH, "pH", comma)
        if plan.alk is not None:
            alk = _required(cells, plan.alk, "alkalinity", comma)
            sc["measured"] = {"pH": pH, "alkalinity": {"value": alk, "unit": plan.alk_unit}}
        else:
            sc["pH"] = pH
    return sc, pH


#: Tableaux of the row waters met so far, by make-up and temperature (see :func:`_row_model`).
_MODELS: dict = {}
#: Most tableaux kept (a sheet's rows at a few hundred distinct temperatures share them).
MAX_MODELS = 512


def _row_model(parsed):
    """The row's :class:`~acidscape.science.tableau.WaterModel`, sharing its tableau with earlier
    rows of the same make-up.

    A water's tableau (species, complexes and solids of the database written in its component
    basis, constants at its temperature) depends on which systems and ions it holds, its
    temperature and activity model, not on their amounts. Rows alike in those share one
    tableau (and the model's caches on it); each row gets its own totals, ionic strength
    rule and fixed species, set as :class:`WaterModel` sets them from its inputs, so the
    model answers exactly as for ``acidscape.boundary.api.water_model(parsed)``
    (``tests/test_batch.py`` checks this row by row).
    """
    from .api import water_model

    key = (tuple((s.key, s.name, s.species, s.charges, s.pKa, s.ion_sizes, s.fixed_first_M is None)
                 for s in parsed.components),
           tuple((i.key, i.name, i.charge, i.ion_size_A) for i in parsed.ions),
           parsed.T, parsed.pKw, parsed.model, parsed.complexes)
    base = _MODELS.get(key)
    if base is None:
        if len(_MODELS) >= MAX_MODELS:
            _MODELS.clear()
        base = _MODELS[key] = water_model(parsed)
    wm = object.__new__(type(base))  # a shallow copy: the tableau and the bookkeeping shared
    wm.__dict__.update(base.__dict__)
    wm.systems, wm.ions, wm.I_fixed = list(parsed.components), list(parsed.ions), parsed.I_fixed
    # as WaterModel.__init__ lays them out: H+ (set by the solve), each system, each ion
    wm.totals = [0.0] + [0.0 if s.fixed_first_M is not None else s.total_M for s in parsed.components] \
        + [i.conc_M for i in parsed.ions]
    wm.fixed_species = {wm.system_species[s.key][0]: s.fixed_first_M for s in parsed.components
                        if s.fixed_first_M is not None}
    return wm


def _row_water(sc: dict):
    """The row's water, closed and solved: ``(ordinary scenario, parsed, inferred, model, solution)``.

    The same steps as :func:`acidscape.boundary.api.solve` up to its solution (a measured pH and
    alkalinity closed to a carbonate total and a balancing ion, the tableau, one solve), without
    the rest of its description (indices, buffer intensity, saturation, trail, equivalence
    points), which a batch row does not report.
    """
    from ..operations.closure import warm_start
    from .api import ordinary_scenario

    scenario, parsed, inferred = ordinary_scenario(sc)
    wm = _row_model(parsed)
    sol = wm.solve(pH=parsed.pH, allow_solids=parsed.precipitate, guess=warm_start(wm, inferred))
    return scenario, parsed, inferred, wm, sol


def _result_row(plan: _Plan, row: int, sample: str, pH_measured, sc: dict) -> dict:
    """One row's results: the figures :func:`acidscape.boundary.api.solve` (and ``dose``) give
    for the row's scenario, computed by the same functions, and only those the row reports."""
    from ..operations.alkalinity import (MG_CACO3_PER_MEQ, TOTAL_END_POINT_PH, end_point_alkalinity,
                                         speciation_split)

    scenario, parsed, inferred, wm, sol = _row_water(sc)
    # total alkalinity to the fixed end point pH 4.5, 0 at or below it (as alkalinity_report gives it)
    a, _ = end_point_alkalinity(wm, sol, TOTAL_END_POINT_PH, guess=sol.state)
    total = a if sol.pH > TOTAL_END_POINT_PH else 0.0
    OH, CO3, HCO3 = speciation_split(wm, sol)

    def mg(eq_per_L):  # mg/L as CaCO3, in the order alkalinity_report multiplies
        return eq_per_L * 1e3 * MG_CACO3_PER_MEQ

    if inferred:
        dic = inferred.get("DIC_mg_per_L_as_C")
    else:
        jc = wm.comp_index.get("carbonate")
        # IUPAC standard atomic weight of C, mg/mmol
        dic = None if jc is None else sol.totals[jc] * ATOMIC_WEIGHT["C"] * 1e3
    values = {
        "row": row, "sample": sample, "pH_measured": pH_measured, "temperature_C": parsed.temperature_C,
        "pH": sol.pH, "ionic_strength_M": sol.I,
        "alkalinity_mg_per_L_as_CaCO3": mg(total),
        "hydroxide_alk_mg_per_L_as_CaCO3": mg(OH),
        "carbonate_alk_mg_per_L_as_CaCO3": mg(CO3),
        "bicarbonate_alk_mg_per_L_as_CaCO3": mg(HCO3),
        "DIC_mg_per_L_as_C": dic, "error": "",
    }
    if plan.species_columns:
        conc = {}
        for sid, idx in wm.system_species.items():
            for i in idx:
                conc[(sid, wm.tab.species[i].name)] = sol.conc[i]
        for sid, formula, name in plan.species_columns:
            values[name] = conc.get((sid, formula), 0.0)
    if plan.dose:
        from ..operations.closure import Closed, close_scenario
        from ..operations.dosing import dose_to_pH

        chem, target, direction = plan.dose
        mg_col, mmol_col = f"dose_{chem}_mg_per_L", f"dose_{chem}_mmol_per_L"
        pH_now = sol.pH
        # met within a millionth of a pH unit (a measured pH is solved back to about 1e-12)
        if (direction > 0 and pH_now >= target - 1e-6) or (direction < 0 and pH_now <= target + 1e-6):
            values.update({mg_col: 0.0, mmol_col: 0.0, "pH_after_dose": pH_now, "dose_status": "no dose needed",
                           "dose_cautions": ""})
        else:
            try:
                # as api.dose: the closed water of the row's scenario, without the two full
                # descriptions. A water with no given pH and no gas is closed as it stands: its
                # model and solution are the row's own (what close_scenario would build again).
                if parsed.pH is None and parsed.CO2_partial_pressure_atm is None:
                    closed = Closed(scenario=scenario, wm=wm, sol=sol, notes=list(parsed.warnings),
                                    precipitate=tuple(parsed.precipitate or ()))
                else:
                    closed = close_scenario(scenario, parsed)
                d = dose_to_pH(closed, chem, target)
                values.update({mg_col: d["dose_mg_per_L"], mmol_col: d["dose_mmol_per_L"],
                               "pH_after_dose": d["change"]["pH"]["after"], "dose_status": "dosed",
                               "dose_cautions": DOSE_CAUTION})
            except AcidscapeError as exc:
                values["dose_status"] = "not reachable"
                values["error"] = f"Dose: {exc.message}"
    return values


def _missing(value) -> bool:
    """A dataframe's blank: NaN or its missing-value marker."""
    return type(value).__name__ == "NAType" or (isinstance(value, float) and value != value)


def _compute(plan: _Plan, numbered, sample_of=None) -> tuple[list[dict], list[dict]]:
    """Rows and errors for ``(row number, cells)`` pairs; blank lines are skipped."""
    rows, errors = [], []
    id_col = plan.id
    for row, cells in numbered:
        if not any((c.strip() if isinstance(c, str) else (c is not None and not _missing(c))) for c in cells):
            continue
        sample = ""
        if id_col is not None and id_col < len(cells) and cells[id_col] is not None:
            raw = cells[id_col]
            sample = raw.strip() if isinstance(raw, str) else ("" if _missing(raw) else str(raw))
        try:
            sc, pH_measured = row_scenario(plan, cells)
            values = _result_row(plan, row, sample, pH_measured, sc)
        except AcidscapeError as exc:
            values = {"row": row, "sample": sample, "error": exc.message}
            if plan.dose:
                values["dose_status"] = ""
        if values["error"]:
            errors.append({"row": row, "sample": sample, "message": values["error"]})
        rows.append(values)
    return rows, errors


def compute_records(columns, records, mapping: dict, *, first_row: int = 2, row_numbers=None,
                    decimal: str = ".") -> dict:
    """The row function: results of rows of cells under a mapping (no CSV text involved).

    Parameters
    ----------
    columns : list of str
        Column names, in the order of the cells [-]
    records : iterable of sequences
        One sequence of cells per sample: text (as a CSV holds it), numbers, or None / NaN
        for a blank cell [-]
    mapping : dict
        Which column holds what (see the module notes) [-]
    first_row : int
        Spreadsheet row number of the first record (the header is row 1) [-]
    row_numbers : iterable of int, optional
        Row number of each record instead of counting from ``first_row`` [-]
    decimal : str
        ``"."`` or ``","``: the decimal sign of text cells [-]

    Returns
    -------
    dict
        ``columns`` (result column names), ``rows`` (one dict per sample; a bad row has only
        ``row``, ``sample`` and ``error``), ``errors`` (``{row, sample, message}``) [-]

    Examples
    --------
    >>> out = compute_records(["id", "pH"], [("a", 7.0), ("b", float("nan"))], {"id": "id", "pH": "pH"})
    >>> round(out["rows"][0]["pH"], 9), out["errors"]
    (7.0, [{'row': 3, 'sample': 'b', 'message': 'pH is missing'}])
    """
    if decimal not in DECIMALS:
        raise InputError(f"decimal must be '.' or ',', got {decimal!r}", field="decimal")
    plan = _Plan([str(c).strip() for c in columns], mapping, decimal)
    records = [list(r) for r in records]
    numbers = list(row_numbers) if row_numbers is not None else range(first_row, first_row + len(records))
    rows, errors = _compute(plan, zip(numbers, records))
    return {"columns": plan.names, "rows": rows, "errors": errors}


# ------------------------------------------------------------------------------- CSV out


def _digits_by_kind(digits) -> dict | None:
    if digits is None or digits == 0:
        return None
    if isinstance(digits, bool):
        raise InputError(f"digits must be a whole number 0..17 or an object, got {digits!r}", field="digits")
    if isinstance(digits, int):
        if not 1 <= digits <= 17:
            raise InputError(f"digits = {digits} is outside 0..17 (0 writes full precision)", field="digits")
        return {"quantity": digits, "pH": _PH_DECIMALS, "temperature": _TEMPERATURE_DECIMALS}
    if isinstance(digits, dict):
        out = {"quantity": None, "pH": None, "temperature": None}
        for k, v in digits.items():
            if k not in out:
                raise InputError(f"digits.{k}: kinds are quantity, pH and temperature", field=f"digits.{k}")
            if v is not None and (isinstance(v, bool) or not isinstance(v, int) or not 0 <= v <= 17):
                raise InputError(f"digits.{k} must be a whole number 0..17, got {v!r}", field=f"digits.{k}")
            out[k] = v or None
        return out
    raise InputError(f"digits must be a whole number 0..17 or an object, got {digits!r}", field="digits")


def _number_text(value: float, kind: str, rule: dict | None) -> str:
    n = rule.get(kind) if rule else None
    if n is None or not math.isfinite(value):
        return repr(value)
    v = float(f"{value:.{n}g}") if kind == "quantity" else round(value, n)
    if v == 0.0:
        v = 0.0  # no "-0.0"
    text = repr(v)
    return text[:-2] if text.endswith(".0") else text


def _csv_lines(plan: _Plan, rows: list[dict], header: bool, digits=None) -> str:
    rule = _digits_by_kind(digits)
    kinds = [(c["name"], c["kind"]) for c in plan.columns]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    if header:
        w.writerow(plan.names)
    for r in rows:
        line = []
        for name, kind in kinds:
            v = r.get(name)
            if v is None:
                line.append("")
            elif isinstance(v, float):
                line.append(_number_text(v, kind, rule))
            else:
                line.append(str(v))
        w.writerow(line)
    return buf.getvalue()


def _whole(v, name: str) -> int:
    if isinstance(v, bool) or not isinstance(v, int) or v < 0:
        raise InputError(f"{name} must be a whole number >= 0, got {v!r}", field=name)
    return v


def run_rows(text: str, mapping: dict, start: int = 0, stop: int | None = None, row_offset: int = 0,
             digits=None, max_rows: int | None = None) -> dict:
    """Results of samples ``start`` .. ``stop - 1`` of a CSV (0 = the first line after the header).

    Parameters
    ----------
    text : str
        CSV text, first line the column names [-]
    mapping : dict
        Which column holds what (see the module notes) [-]
    start, stop : int
        Sample range, Python slice convention; ``stop=None`` means to the end [-]
    row_offset : int
        Samples before this text in the user's whole file (when the page sends a slice), added
        to the row numbers [-]
    digits : int or dict, optional
        Rounding of the ``csv`` text (see the module notes); None writes full precision [-]
    max_rows : int, optional
        Return at most this many ``rows`` (the ``csv`` and ``errors`` still hold every
        sample), to keep a page's reply small [-]

    Returns
    -------
    dict
        ``columns`` (result column names), ``column_info`` (:func:`result_columns`), ``rows``
        (one dict per sample; a bad row has only ``row``, ``sample`` and ``error``),
        ``errors`` (``{row, sample, message}`` per bad row, including a dose that cannot be
        reached), ``csv`` (the rows as CSV lines, no header), ``total`` (samples in the
        text), ``start``, ``stop``, ``delimiter``, ``decimal``, and ``cautions`` (the dose
        cautions, with a dose) [-]

    Notes
    -----
    Row numbers are those a spreadsheet shows: the header is row 1, sample ``k`` (0-based,
    counting blank lines) is row ``row_offset + k + 2``. Blank lines are skipped.

    Examples
    --------
    >>> text = "id,pH,alk\\nA,7.5,100\\nB,x,100\\nC,7.5,\\n"
    >>> m = {"id": "id", "pH": "pH", "alkalinity": {"column": "alk", "unit": "mg/L as CaCO3"}}
    >>> out = run_rows(text, m)
    >>> [r["row"] for r in out["rows"]]
    [2, 3, 4]
    >>> [(e["row"], e["message"]) for e in out["errors"]]
    [(3, "pH 'x' is not a number"), (4, 'Alkalinity is missing: without it the carbonate cannot be worked out (a blank cell is not read as 0)')]
    """
    d, dec = _dialect_of(text, mapping)
    header, records = _records(text, d)
    plan = _Plan(header, mapping, dec)
    n = len(records)
    stop = n if stop is None else stop
    for name, v in (("start", start), ("stop", stop), ("row_offset", row_offset)):
        _whole(v, name)
    stop = min(stop, n)
    if stop - start > MAX_ROWS_PER_CALL:
        raise InputError(f"at most {MAX_ROWS_PER_CALL} samples per call; asked for {stop - start}", field="stop")
    rows, errors = _compute(plan, ((row_offset + k + 2, records[k]) for k in range(start, stop)))
    out = {"columns": plan.names, "column_info": plan.columns,
           "rows": rows if max_rows is None else rows[:_whole(max_rows, "max_rows")], "errors": errors,
           "csv": _csv_lines(plan, rows, header=False, digits=digits), "total": n, "start": start, "stop": stop,
           "delimiter": d, "decimal": dec}
    if plan.dose:
        out["cautions"] = list(DOSE_CAUTIONS)
    return out


def batch_chunk(params: dict) -> dict:
    """API method: :func:`run_rows` from ``{"csv", "mapping", "start", "stop", "row_offset",
    "digits", "max_rows"}``.

    With ``{"csv", "header_only": true}`` it returns :func:`read_header` instead, so the page
    can offer the columns for mapping; with ``{"template": true}`` it returns
    ``{"csv": template_csv(delimiter)}``.

    Examples
    --------
    >>> out = batch_chunk({"csv": "pH\\n7\\n8\\n9\\n", "mapping": {"pH": "pH"}, "start": 1, "stop": 2})
    >>> [r["row"] for r in out["rows"]], out["total"]
    ([3], 3)
    """
    if not isinstance(params, dict):
        raise InputError("parameters must be a JSON object", field=None)
    if params.get("template"):
        return {"csv": template_csv(params.get("delimiter", ","))}
    text = params.get("csv")
    if params.get("header_only"):
        return read_header(text, params.get("delimiter", "auto"), params.get("decimal", "auto"))
    return run_rows(text, params.get("mapping"), params.get("start", 0), params.get("stop"),
                    params.get("row_offset", 0), params.get("digits"), params.get("max_rows"))


# ------------------------------------------------------------------- whole files, processes

_PLAN_CACHE: dict = {}


def _chunk_csv(task) -> tuple[str, list[dict], int]:
    """Worker: CSV lines, errors and row count of one chunk (picklable for a process pool)."""
    header, records, mapping_json, decimal, offset, digits = task
    key = (tuple(header), mapping_json, decimal)
    plan = _PLAN_CACHE.get(key)
    if plan is None:
        plan = _PLAN_CACHE[key] = _Plan(header, json.loads(mapping_json), decimal)
    rows, errors = _compute(plan, ((offset + k + 2, cells) for k, cells in enumerate(records)))
    return _csv_lines(plan, rows, header=False, digits=digits), errors, len(rows)


def _chunks(n: int, jobs: int) -> list[tuple[int, int]]:
    size = max(50, min(2000, -(-n // max(1, jobs * 8))))
    return [(k, min(n, k + size)) for k in range(0, n, size)]


def batch_table(text: str, mapping: dict, digits=DEFAULT_DIGITS, jobs: int = 1, max_chars: int | None = MAX_TEXT):
    """Every sample's results: ``(csv text with header, errors, samples computed)``.

    ``jobs`` > 1 computes chunks of samples in that many processes (0: one per core); the
    text is the same as with ``jobs=1``, rows in input order.
    """
    d, dec = _dialect_of(text, mapping)
    header, records = _records(text, d, max_chars)
    plan = _Plan(header, mapping, dec)  # a bad mapping fails here, before any process starts
    _digits_by_kind(digits)
    jobs = _whole(jobs, "jobs")
    if jobs == 0:
        import os

        jobs = os.cpu_count() or 1
    mapping_json = json.dumps(mapping, sort_keys=True)
    tasks = [(header, records[a:b], mapping_json, dec, a, digits) for a, b in _chunks(len(records), jobs)]
    if jobs == 1 or len(tasks) < 2:
        results = [_chunk_csv(t) for t in tasks]
    else:
        from concurrent.futures import ProcessPoolExecutor

        with ProcessPoolExecutor(max_workers=min(jobs, len(tasks))) as pool:
            results = list(pool.map(_chunk_csv, tasks))
    head = _csv_lines(plan, [], header=True)
    errors = [e for _, errs, _ in results for e in errs]
    return head + "".join(r[0] for r in results), errors, sum(r[2] for r in results)


def batch_csv(text: str, mapping: dict, digits=DEFAULT_DIGITS, jobs: int = 1) -> str:
    """Every sample's results as CSV text (header line first), as the page's download holds.

    Parameters
    ----------
    text : str
        CSV text, first line the column names [-]
    mapping : dict
        Which column holds what (see the module notes) [-]
    digits : int, dict or None
        Rounding (see the module notes; None or 0: full precision) [-]
    jobs : int
        Processes (0: one per core); the text does not depend on it [-]

    Examples
    --------
    >>> print(batch_csv("pH\\n7\\n", {"pH": "pH"}).splitlines()[0][:26])
    row,sample,pH_measured,tem
    >>> batch_csv("pH\\n7.1234\\n", {"pH": "pH"}).splitlines()[1].split(",")[4]
    '7.123'
    """
    return batch_table(text, mapping, digits, jobs)[0]


def run_cli(args) -> int:
    """``python -m acidscape batch IN.csv --mapping MAP.json [--jobs N] [--out OUT.csv] [--digits D]``.

    Writes the result CSV to ``--out`` (default: standard output) and a summary with the row
    numbers of bad rows to standard error. ``--template`` writes the template CSV instead.
    Returns the exit status (0; bad input raises, which the CLI turns into status 2).
    """
    if getattr(args, "template", False):
        _write(getattr(args, "out", "-"), template_csv())
        return 0
    if not args.file:
        raise InputError("give the CSV file of samples (or --template)", field="IN.csv")
    if not args.mapping:
        raise InputError("give --mapping MAP.json (see acidscape.boundary.batch for its keys)", field="--mapping")
    text = _read_text(args.file, "IN.csv")
    mapping_text = _read_text(args.mapping, "--mapping")
    try:
        mapping = json.loads(mapping_text)
    except ValueError as exc:
        raise InputError(f"{args.mapping} is not valid JSON: {exc}", field="--mapping") from None
    digits = DEFAULT_DIGITS if args.digits is None else args.digits
    t0 = time.perf_counter()
    out, errors, n = batch_table(text, mapping, digits, args.jobs, max_chars=None)
    seconds = time.perf_counter() - t0
    _write(args.out, out)
    listed = ", ".join(str(e["row"]) for e in errors[:20]) + (" ..." if len(errors) > 20 else "")
    sys.stderr.write(f"acidscape batch: {n} samples in {seconds:.1f} s ({n / max(seconds, 1e-9):.0f} per second); "
                     + (f"{len(errors)} with errors (rows {listed})\n" if errors else "every row calculated\n"))
    for e in errors[:20]:
        sample = f" ({e['sample']})" if e["sample"] else ""
        sys.stderr.write(f"  row {e['row']}{sample}: {e['message']}\n")
    return 0


def _read_text(path: str, field: str) -> str:
    try:
        if path == "-":
            return sys.stdin.read()
        with open(path, encoding="utf-8-sig", newline="") as f:
            return f.read()
    except OSError as exc:
        raise InputError(f"cannot read {path!r}: {exc.strerror}", field=field) from None
    except UnicodeDecodeError:
        raise InputError(f"{path!r} is not UTF-8 text; save the CSV as UTF-8", field=field) from None


def _write(path: str, text: str) -> None:
    if path in (None, "-"):
        sys.stdout.write(text)
        return
    try:
        with open(path, "w", encoding="utf-8", newline="") as f:
            f.write(text)
    except OSError as exc:
        raise InputError(f"cannot write {path!r}: {exc.strerror}", field="--out") from None
