"""Many samples at once: a CSV of lab results in, one row of results per sample out.

A *column mapping* says which column holds what (every key optional except as noted)::

    {"id": "Sample",                                   # sample ID column
     "pH": "pH",                                       # measured pH column
     "temperature": {"column": "Temp", "unit": "C",    # "C" or "F"; blank cells -> default_C
                     "default_C": 25},
     "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"},   # or "meq/L"
     "systems": [{"id": "phosphate", "column": "PO4-P", "unit": "mg/L as P"}],
     "ions": [{"id": "Ca+2", "column": "Ca", "unit": "mg/L"}],
     "mode": "measured",           # "measured": speciate at the row's pH (default)
                                   # "equilibrium": solve the charge balance, pH column ignored
     "activity": "davies",         # activity model for every row
     "dose": {"chemical": "NaOH", "target_pH": 8.0},   # optional: dose to a target per row
     "delimiter": "auto"}          # ",", ";", "\\t" or "auto" (whichever the header holds most)

Each row becomes an ordinary scenario (see :mod:`acidscape.boundary.scenario`):

- pH and alkalinity given (mode "measured") -> ``measured`` (the carbonate total follows from
  them, :mod:`acidscape.operations.closure`);
- pH without alkalinity (mode "measured") -> ``pH``: speciation at the measured pH;
- mode "equilibrium" -> no pH: the charge balance of the given totals and ions sets it.

A blank cell of a system or ion means "not measured" (left out); a blank pH, or a cell that is
not a number (e.g. "<0.01"), makes the row an error. A bad row is reported with its row number
as a spreadsheet shows it (the header is row 1, the first sample row 2) and the reason; the
other rows still compute.

Functions
---------
read_header(text, delimiter="auto") -> dict          columns, sample count, a guessed mapping
run_rows(text, mapping, start=0, stop=None, row_offset=0) -> dict   results of samples start..stop
batch_chunk(params) -> dict                          the same from a JSON request (api method)
batch_csv(text, mapping) -> str                      every sample's results as CSV text

Data sources: none of its own; each row is computed by :func:`acidscape.boundary.api.solve` and
:func:`acidscape.boundary.api.dose`.
"""

from __future__ import annotations

import csv
import io
import math

from ..errors import AcidscapeError, InputError

#: Largest CSV text accepted in one request [characters].
MAX_TEXT = 20_000_000
#: Most samples processed in one request.
MAX_ROWS_PER_CALL = 20_000
#: Most columns in a CSV.
MAX_COLUMNS = 200
ALK_UNITS = ("mg/L as CaCO3", "meq/L")
TEMPERATURE_UNITS = ("C", "F")
MODES = ("measured", "equilibrium")
DELIMITERS = (",", ";", "\t")

_FIXED_COLUMNS = [
    "row", "sample", "pH_measured", "temperature_C", "pH", "ionic_strength_M",
    "alkalinity_mg_per_L_as_CaCO3", "hydroxide_alk_mg_per_L_as_CaCO3",
    "carbonate_alk_mg_per_L_as_CaCO3", "bicarbonate_alk_mg_per_L_as_CaCO3", "DIC_mg_per_L_as_C",
]


def _delimiter(text: str, wanted: str) -> str:
    if wanted in DELIMITERS:
        return wanted
    if wanted not in (None, "auto"):
        raise InputError(f"delimiter must be one of ',', ';', tab or 'auto', got {wanted!r}", field="delimiter")
    first = text.split("\n", 1)[0]
    counts = {d: first.count(d) for d in DELIMITERS}
    best = max(DELIMITERS, key=lambda d: counts[d])
    return best if counts[best] else ","


def _records(text: str, delimiter: str) -> tuple[list[str], list[list[str]]]:
    if not isinstance(text, str):
        raise InputError(f"csv must be text, got {type(text).__name__}", field="csv")
    if len(text) > MAX_TEXT:
        raise InputError(f"csv holds {len(text):,} characters; at most {MAX_TEXT:,} are accepted", field="csv")
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


def _guess(header: list[str]) -> dict:
    low = [h.lower() for h in header]

    def find(*keys):
        for key in keys:
            for h, lh in zip(header, low):
                if lh == key or lh.startswith(key):
                    return h
        return None

    mapping: dict = {"mode": "measured", "activity": "davies"}
    if (c := find("sample", "id", "name")) is not None:
        mapping["id"] = c
    if (c := find("ph")) is not None:
        mapping["pH"] = c
    if (c := find("temp", "t_c", "t (")) is not None:
        mapping["temperature"] = {"column": c, "unit": "F" if "f" in c.lower().split("temp")[-1] else "C"}
    if (c := find("alk")) is not None:
        mapping["alkalinity"] = {"column": c, "unit": "meq/L" if "meq" in c.lower() else "mg/L as CaCO3"}
    return mapping


def read_header(text: str, delimiter: str = "auto") -> dict:
    """Columns and sample count of a CSV, with a mapping guessed from the column names.

    Parameters
    ----------
    text : str
        CSV text, first line the column names [-]
    delimiter : str
        ``","``, ``";"``, ``"\\t"`` or ``"auto"`` [-]

    Returns
    -------
    dict
        ``columns`` (list of names), ``rows`` (number of sample lines), ``delimiter``,
        ``guess`` (a starting mapping: ID, pH, temperature, alkalinity by name) [-]

    Examples
    --------
    >>> h = read_header("Sample;pH;Temp C;Alk mg/L\\nA;7.1;12;80\\n")
    >>> h["columns"], h["rows"], h["delimiter"], h["guess"]["alkalinity"]["column"]
    (['Sample', 'pH', 'Temp C', 'Alk mg/L'], 1, ';', 'Alk mg/L')
    """
    d = _delimiter(text if isinstance(text, str) else "", delimiter)
    header, rows = _records(text, d)
    return {"columns": header, "rows": len(rows), "delimiter": d, "guess": _guess(header)}


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


class _Plan:
    """A mapping checked against the header and the library, ready to build scenarios."""

    def __init__(self, header: list[str], mapping: dict):
        from ..data import library
        from ..boundary.units import accepted_units

        if not isinstance(mapping, dict):
            raise InputError("mapping must be an object naming the columns", field="mapping")
        self.id = _column(header, mapping.get("id"), "id")
        self.pH = _column(header, mapping.get("pH"), "pH")
        temp = mapping.get("temperature") or {}
        if not isinstance(temp, dict):
            raise InputError("mapping.temperature must be {column, unit, default_C}", field="mapping.temperature")
        self.temp = _column(header, temp.get("column"), "temperature.column")
        self.temp_unit = temp.get("unit", "C")
        if self.temp_unit not in TEMPERATURE_UNITS:
            raise InputError(f"mapping.temperature.unit must be 'C' or 'F', got {self.temp_unit!r}",
                             field="mapping.temperature.unit")
        self.temp_default = _finite(temp.get("default_C", 25.0), "mapping.temperature.default_C", 0.0, 100.0)
        alk = mapping.get("alkalinity") or {}
        if not isinstance(alk, dict):
            raise InputError("mapping.alkalinity must be {column, unit}", field="mapping.alkalinity")
        self.alk = _column(header, alk.get("column"), "alkalinity.column")
        self.alk_unit = alk.get("unit", "mg/L as CaCO3")
        if self.alk_unit not in ALK_UNITS:
            raise InputError(f"mapping.alkalinity.unit must be one of {ALK_UNITS}, got {self.alk_unit!r}",
                             field="mapping.alkalinity.unit")
        self.mode = mapping.get("mode", "measured")
        if self.mode not in MODES:
            raise InputError(f"mapping.mode must be one of {MODES}, got {self.mode!r}", field="mapping.mode")
        self.activity = mapping.get("activity", "davies")
        if not isinstance(self.activity, str):
            raise InputError(f"mapping.activity must be a model name, got {self.activity!r}", field="mapping.activity")
        if self.mode == "measured" and self.pH is None:
            raise InputError("mapping.pH: name the pH column, or choose mode 'equilibrium'", field="mapping.pH")
        self.systems, self.ions, self.species_columns = [], [], []
        for kind, table, out in (("systems", library.systems(), self.systems), ("ions", library.ions(), self.ions)):
            entries = mapping.get(kind) or []
            if not isinstance(entries, list):
                raise InputError(f"mapping.{kind} must be a list", field=f"mapping.{kind}")
            for i, e in enumerate(entries):
                path = f"mapping.{kind}[{i}]"
                if not isinstance(e, dict) or not isinstance(e.get("id"), str):
                    raise InputError(f"{path} must be {{id, column, unit}}", field=path)
                item = table.get(e["id"])
                if item is None:
                    raise InputError(f"{path}.id: {e['id']!r} is not in the library", field=f"{path}.id")
                unit = e.get("unit", "mmol/L")
                if unit not in accepted_units(item):
                    raise InputError(f"{path}.unit: {unit!r} does not fit {e['id']}; use one of "
                                     + ", ".join(accepted_units(item)), field=f"{path}.unit")
                out.append((e["id"], _column(header, e.get("column"), f"{kind}[{i}].column"), unit))
                if kind == "systems":
                    self.species_columns += [(e["id"], sp.formula) for sp in item.species]
        dose = mapping.get("dose")
        if dose:
            if not isinstance(dose, dict) or not isinstance(dose.get("chemical"), str):
                raise InputError("mapping.dose must be {chemical, target_pH}", field="mapping.dose")
            from ..operations.dosing import get_chemical

            get_chemical(dose["chemical"])
            self.dose = (dose["chemical"], _finite(dose.get("target_pH"), "mapping.dose.target_pH", 0.0, 14.0))
        else:
            self.dose = None
        self.columns = list(_FIXED_COLUMNS) + [f"{sid}:{f}_M" for sid, f in self.species_columns]
        if self.dose:
            self.columns += [f"dose_{self.dose[0]}_mg_per_L", f"dose_{self.dose[0]}_mmol_per_L", "pH_after_dose"]
        self.columns.append("error")


def _finite(value, field: str, lo: float, hi: float) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    if not lo <= value <= hi:
        raise InputError(f"{field} = {value:g} is outside {lo:g}..{hi:g}", field=field)
    return float(value)


def _cell_number(cells: list[str], index: int | None, what: str) -> float | None:
    if index is None or index >= len(cells):
        return None
    text = cells[index].strip()
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        raise InputError(f"{what} {text!r} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{what} {text!r} is not a finite number")
    return value


def row_scenario(plan: _Plan, cells: list[str]) -> tuple[dict, float | None]:
    """The scenario of one CSV row and its measured pH (None when not used)."""
    t = _cell_number(cells, plan.temp, "temperature")
    if t is None:
        t = plan.temp_default
    elif plan.temp_unit == "F":
        t = (t - 32.0) * 5.0 / 9.0
    sc: dict = {"temperature_C": t, "activity": plan.activity}
    systems = []
    for sid, col, unit in plan.systems:
        v = _cell_number(cells, col, sid)
        if v is not None:
            systems.append({"id": sid, "total": v, "unit": unit})
    ions = []
    for iid, col, unit in plan.ions:
        v = _cell_number(cells, col, iid)
        if v is not None:
            ions.append({"id": iid, "total": v, "unit": unit})
    if systems:
        sc["systems"] = systems
    if ions:
        sc["ions"] = ions
    pH = None
    if plan.mode == "measured":
        pH = _cell_number(cells, plan.pH, "pH")
        if pH is None:
            raise InputError("pH is empty")
        alk = _cell_number(cells, plan.alk, "alkalinity")
        if alk is not None:
            sc["measured"] = {"pH": pH, "alkalinity": {"value": alk, "unit": plan.alk_unit}}
        else:
            sc["pH"] = pH
    return sc, pH


def _result_row(plan: _Plan, row: int, sample: str, pH_measured, sc: dict) -> dict:
    from ..boundary.api import dose, solve

    out = solve(sc)
    alk = out["alkalinity"]
    split = alk.get("split_from_speciation", {})
    dic = None
    inferred = out.get("inferred_from_measurements")
    if inferred:
        dic = inferred.get("DIC_mg_per_L_as_C")
    else:
        for s in out["systems"]:
            if s["id"] == "carbonate":
                dic = s["total_M"] * 12.011e3  # standard atomic weight of C (IUPAC), mg/mol
    values = {
        "row": row, "sample": sample, "pH_measured": pH_measured, "temperature_C": out["temperature_C"],
        "pH": out["pH"], "ionic_strength_M": out["ionic_strength_M"],
        "alkalinity_mg_per_L_as_CaCO3": alk.get("total_mg_per_L_as_CaCO3"),
        "hydroxide_alk_mg_per_L_as_CaCO3": split.get("hydroxide_mg_per_L_as_CaCO3"),
        "carbonate_alk_mg_per_L_as_CaCO3": split.get("carbonate_mg_per_L_as_CaCO3"),
        "bicarbonate_alk_mg_per_L_as_CaCO3": split.get("bicarbonate_mg_per_L_as_CaCO3"),
        "DIC_mg_per_L_as_C": dic, "error": "",
    }
    conc = {(s["system"], s["name"]): s["concentration_M"] for s in out["species"]}
    for sid, formula in plan.species_columns:
        values[f"{sid}:{formula}_M"] = conc.get((sid, formula), 0.0)
    if plan.dose:
        chem, target = plan.dose
        try:
            d = dose({"scenario": sc, "chemical": chem, "target_pH": target})
            values[f"dose_{chem}_mg_per_L"] = d["dose_mg_per_L"]
            values[f"dose_{chem}_mmol_per_L"] = d["dose_mmol_per_L"]
            values["pH_after_dose"] = d["change"]["pH"]["after"]
        except AcidscapeError as exc:
            values["error"] = f"dose: {exc.message}"
    return values


def _cell_text(value) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return repr(value)
    return str(value)


def _csv_lines(columns: list[str], rows: list[dict], header: bool) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    if header:
        w.writerow(columns)
    for r in rows:
        w.writerow([_cell_text(r.get(c)) for c in columns])
    return buf.getvalue()


def run_rows(text: str, mapping: dict, start: int = 0, stop: int | None = None, row_offset: int = 0) -> dict:
    """Results of samples ``start`` .. ``stop - 1`` of a CSV (0 = the first line after the header).

    Parameters
    ----------
    text : str
        CSV text, first line the column names [-]
    mapping : dict
        Which column holds what (see the module docstring) [-]
    start, stop : int
        Sample range, Python slice convention; ``stop=None`` means to the end [-]
    row_offset : int
        Samples before this text in the user's whole file (when the page sends a slice), added
        to the row numbers [-]

    Returns
    -------
    dict
        ``columns`` (result column names), ``rows`` (one dict per sample, keyed by column;
        a bad row has only ``row``, ``sample`` and ``error``), ``errors`` (``{row, sample,
        message}`` per bad row, including a dose that failed), ``csv`` (the rows as CSV lines,
        no header), ``total`` (samples in the text), ``start``, ``stop`` [-]

    Notes
    -----
    Row numbers are those a spreadsheet shows: the header is row 1, sample ``k`` (0-based,
    counting blank lines) is row ``row_offset + k + 2``. Blank lines are skipped.

    Examples
    --------
    >>> text = "id,pH,alk\\nA,7.5,100\\nB,x,100\\n"
    >>> m = {"id": "id", "pH": "pH", "alkalinity": {"column": "alk", "unit": "mg/L as CaCO3"}}
    >>> out = run_rows(text, m)
    >>> [r["row"] for r in out["rows"]], out["errors"]
    ([2, 3], [{'row': 3, 'sample': 'B', 'message': "pH 'x' is not a number"}])
    """
    d = _delimiter(text if isinstance(text, str) else "", (mapping or {}).get("delimiter", "auto")
                   if isinstance(mapping, dict) else "auto")
    header, records = _records(text, d)
    plan = _Plan(header, mapping)
    n = len(records)
    stop = n if stop is None else stop
    for name, v in (("start", start), ("stop", stop), ("row_offset", row_offset)):
        if isinstance(v, bool) or not isinstance(v, int) or v < 0:
            raise InputError(f"{name} must be a whole number >= 0, got {v!r}", field=name)
    stop = min(stop, n)
    if stop - start > MAX_ROWS_PER_CALL:
        raise InputError(f"at most {MAX_ROWS_PER_CALL} samples per call; asked for {stop - start}", field="stop")
    rows, errors = [], []
    for k in range(start, stop):
        cells = records[k]
        if not any(c.strip() for c in cells):
            continue
        row = row_offset + k + 2
        sample = cells[plan.id].strip() if plan.id is not None and plan.id < len(cells) else ""
        try:
            sc, pH_measured = row_scenario(plan, cells)
            values = _result_row(plan, row, sample, pH_measured, sc)
        except AcidscapeError as exc:
            values = {"row": row, "sample": sample, "error": exc.message}
        if values["error"]:
            errors.append({"row": row, "sample": sample, "message": values["error"]})
        rows.append(values)
    return {"columns": plan.columns, "rows": rows, "errors": errors,
            "csv": _csv_lines(plan.columns, rows, header=False), "total": n, "start": start, "stop": stop}


def batch_chunk(params: dict) -> dict:
    """API method: :func:`run_rows` from ``{"csv", "mapping", "start", "stop", "row_offset"}``.

    With ``{"csv", "header_only": true}`` it returns :func:`read_header` instead, so the page
    can offer the columns for mapping.

    Examples
    --------
    >>> out = batch_chunk({"csv": "pH\\n7\\n8\\n9\\n", "mapping": {"pH": "pH"}, "start": 1, "stop": 2})
    >>> [r["row"] for r in out["rows"]], out["total"]
    ([3], 3)
    """
    if not isinstance(params, dict):
        raise InputError("parameters must be a JSON object", field=None)
    text = params.get("csv")
    if params.get("header_only"):
        return read_header(text, params.get("delimiter", "auto"))
    return run_rows(text, params.get("mapping"), params.get("start", 0), params.get("stop"),
                    params.get("row_offset", 0))


def batch_csv(text: str, mapping: dict) -> str:
    """Every sample's results as CSV text (header line first), as the page's download holds.

    Examples
    --------
    >>> print(batch_csv("pH\\n7\\n", {"pH": "pH"}).splitlines()[0][:26])
    row,sample,pH_measured,tem
    """
    out = run_rows(text, mapping)
    return _csv_lines(out["columns"], [], header=True) + out["csv"]
