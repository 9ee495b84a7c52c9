"""The batch row function mapped over the partitions of a Dask dataframe (optional extra).

``acidscape.boundary.batch.compute_records`` is the row function of the page, the command line
and ``batch_csv``; here it runs on each partition of a Dask dataframe, as the module docstring
shows, and must give the same rows (same numbers, row numbers, IDs and messages) as
``run_rows`` on the CSV text. Sample values are generated, not taken from any real plant.
Skipped when dask is not installed (``pip install -e ".[dask]"``; the dev extra has it).
"""

from __future__ import annotations

import io
import math
import random

import pytest

dd = pytest.importorskip("dask.dataframe", reason="dask[dataframe] is not installed: pip install -e '.[dask]'")
pd = pytest.importorskip("pandas", reason="pandas is not installed: pip install -e '.[dask]'")

from acidscape.boundary.batch import compute_records, result_columns, run_rows  # noqa: E402

MAPPING = {
    "id": "Sample", "pH": "pH", "temperature": {"column": "Temp C", "unit": "C"},
    "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"},
    "systems": [{"id": "phosphate", "column": "PO4-P", "unit": "mg/L as P"}],
    "ions": [{"id": "calcium", "column": "Ca", "unit": "mg/L"}],
    "dose": {"chemical": "NaOH", "target_pH": 8.5},
}


def generated(n: int) -> str:
    rnd = random.Random(99)
    lines = ["Sample,pH,Temp C,Alk,PO4-P,Ca"]
    for i in range(n):
        pH = "" if i == 5 else f"{rnd.uniform(6.5, 9.2):.2f}"
        alk = "<5" if i == 17 else f"{rnd.uniform(10, 250):.1f}"
        lines.append(f"D{i:03d},{pH},{rnd.uniform(4, 25):.1f},{alk},{rnd.uniform(0, 1):.3f},{rnd.randint(5, 90)}")
    return "\n".join(lines) + "\n"


def results(part, mapping):
    """One partition's results: the row function on its cells, row numbers from the index."""
    out = compute_records(list(part.columns), part.itertuples(index=False, name=None), mapping,
                          row_numbers=[i + 2 for i in part.index])
    return pd.DataFrame(out["rows"], columns=out["columns"])


def same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return a == b or (math.isnan(a) and math.isnan(b))
    return a == b


@pytest.mark.parametrize("as_text", [True, False], ids=["text cells", "numeric cells"])
def test_map_partitions_equals_run_rows(as_text):
    text = generated(60)
    want = run_rows(text, MAPPING)
    if as_text:
        frame = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False)
    else:  # numbers (whole-number Ca as integers) and NaN for blanks, as pandas reads a CSV by default
        frame = pd.read_csv(io.StringIO(text))
        assert frame["Ca"].dtype.kind == "i"
    ddf = dd.from_pandas(frame, npartitions=4)
    assert ddf.npartitions == 4
    names = [c["name"] for c in result_columns(list(frame.columns), MAPPING)]
    meta = pd.DataFrame({c: pd.Series(dtype=object) for c in names})
    table = ddf.map_partitions(results, MAPPING, meta=meta).compute(scheduler="threads")
    assert list(table.columns) == names and len(table) == len(want["rows"]) == 60
    got = table.to_dict("records")
    for g, w in zip(got, want["rows"]):
        for name in names:
            gv, wv = g.get(name), w.get(name)
            if wv is None:
                assert gv is None or (isinstance(gv, float) and math.isnan(gv)), (name, gv)
            else:
                assert same(gv, wv), (w["row"], name, gv, wv)
    bad = {int(r["row"]): r["error"] for r in got if r["error"]}
    assert bad == {e["row"]: e["message"] for e in want["errors"]}
    assert bad[7] == "pH is missing" and "'<5' is not a number" in bad[19]
