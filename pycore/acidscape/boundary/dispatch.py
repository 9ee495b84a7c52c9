"""The page's single entry: one JSON method call in, one JSON string out.

:func:`handle` looks the method up in a table built once (the JSON methods of
:mod:`acidscape.boundary.api` and the batch chunks of :mod:`acidscape.boundary.batch`) and
never lets a traceback cross into JavaScript: errors come back as
``{"ok": false, "error": {"type", "message", "field"}}``. It sits above ``api`` and ``batch``
(batch calls api's methods per row), so neither imports the other in a circle.

The water section asks for its answer in parts (:func:`stages`): the solved water first (pH,
alkalinity, indices, species: the headline the page draws at once), then its curves, computed in
chunks of :data:`CURVE_CHUNK` pH values. Between chunks the generator pauses, so the worker can
drop the rest when a newer request for the same water has arrived (site/worker.js): one request
per edit, and curves nobody will see are never finished.

Functions
---------
handle(method, params_json) -> str     JSON dispatcher used by the page's worker
stages(method, params_json) -> iterator of str or None     the same, answered in parts
keep_answer(method, params_json) -> int     answer now and keep it (the page's build)
"""

from __future__ import annotations

import functools
import json
from collections.abc import Callable

from ..checks import LABELS, LIMITS
from ..data import library
from ..errors import AcidscapeError, InputError, UnknownIdError
from ..operations.dosing import chemicals
from . import api
from .batch import batch_chunk
from .catalogues import catalogues

@functools.cache
def _methods() -> dict[str, Callable[[dict], dict]]:
    """The methods :func:`handle` dispatches to, built once on the first request."""
    return {
        "version": lambda params: api.version_info(),
        "distribution": api.distribution,
        "solve": api.solve,
        "water": api.water,
        "titrate": api.titrate,
        "dose": api.dose,
        # treatment jobs: chemicals in sequence, blends, lime softening (operations/treatment, blend, softening)
        "treat": api.treat,
        "blend": api.blend,
        "soften": api.soften,
        # saturation index against pH and CCPP against temperature, with bands (operations/scale_curves)
        "scale_curves": api.scale_curves,
        # lead and copper solubility; conditional metal-EDTA constants (operations/solubility, hardness)
        "solubility": api.solubility,
        "conditional_constants": api.conditional_constants,
        # many samples from a CSV, streamed in chunks by the page (site/batch.js)
        "batch_chunk": batch_chunk,
        # buffer-intensity curve of a water for the page's treatment section
        "buffer": api.buffer,
        "chemicals": lambda params: {"chemicals": [c.as_json() for c in chemicals().values()]},
        "products": api.products,  # product presets of strength and density (data/products.csv)
        # the catalogues of the library; the input limits and the words of each input (acidscape.checks)
        "systems": lambda params: {"systems": library.library_as_json(), "ions": library.ions_as_json(),
                                   "limits": LIMITS, "labels": LABELS},
        "solids": lambda params: {"solids": library.solids_as_json()},
        # the page's lists: units with their factors, activity models, flow units, molar masses
        "catalogues": lambda params: catalogues(),
    }


def handle(method: str, params_json: str) -> str:
    """Dispatch one request from the page; always returns a JSON string.

    Parameters
    ----------
    method : str
        Name of the call (``"distribution"``, ``"solve"``, ``"systems"``, ``"version"``...)
    params_json : str
        Its parameters as a JSON object

    Returns
    -------
    str
        ``{"ok": true, "result": ...}`` or ``{"ok": false, "error": {"type", "message", "field"}}``

    Examples
    --------
    >>> json.loads(handle("distribution", '{"pKa": []}'))["error"]["field"]
    'pKa'
    >>> json.loads(handle("nope", "{}"))["error"]["type"]
    'UnknownIdError'
    """
    try:
        try:
            params = json.loads(params_json) if params_json else {}
        except (TypeError, ValueError) as exc:
            raise InputError(f"request parameters are not valid JSON: {exc}", field=None) from None
        if not isinstance(params, dict):
            raise InputError("request parameters must be a JSON object", field=None)
        methods = _methods()
        fn = methods.get(method)
        if fn is None:
            raise UnknownIdError(
                f"unknown method {method!r}; known: {', '.join(sorted(methods))}", field=None
            )
        result = fn(params)
        return json.dumps({"ok": True, "result": result}, allow_nan=False)
    except AcidscapeError as exc:
        return json.dumps({"ok": False, "error": exc.to_dict()})
    except (ValueError, OverflowError, ZeroDivisionError, TypeError, KeyError) as exc:
        # A bug or an unforeseen input: report it plainly rather than crash the worker.
        return json.dumps(
            {"ok": False, "error": {"type": type(exc).__name__, "message": str(exc), "field": None}}
        )


#: pH values of a curve computed between two pauses of :func:`stages` (a newer request waits at
#: most this long for the worker; about 1.5 ms a value for a six-system water with complexes in
#: Chromium here, see build_scripts/bench.py).
CURVE_CHUNK = 16


def _chunked_curves(wm, sol, grid: list[float], size: int = CURVE_CHUNK):
    """:func:`acidscape.operations.curves.water_curves` over ``grid`` in chunks of ``size`` values.

    A generator: yields None after each chunk (a point where the caller may stop) and returns
    the curves of the whole grid, shaped as ``water_curves`` shapes them. Each chunk starts
    from the solved water (the warm start of the one-call version carries over from the
    previous pH value instead), so values agree with it to the solver's tolerance.
    A complex that is absent from every value of a chunk is None there, as ``water_curves``
    reports an absent species; the lines keep ``water_curves``' order (complexes by their
    place in the tableau).

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's tableau
    sol : acidscape.science.model.Solution
        Its solution
    grid : list of float
        pH values [-]
    size : int
        pH values per chunk [-]

    Examples
    --------
    >>> from acidscape.operations.curves import water_curves
    >>> from acidscape.science.tableau import SystemInput, WaterModel
    >>> wm = WaterModel([SystemInput("a", "acid", ("HA", "A-"), (0, -1), (7.0,), 1e-3)], [], T=298.15,
    ...                 pKw=14.0, model="ideal", complexes=False)
    >>> sol = wm.solve()
    >>> run = _chunked_curves(wm, sol, [5.0, 6.0, 7.0, 8.0, 9.0], size=2)
    >>> pauses = 0
    >>> while True:
    ...     try:
    ...         next(run)
    ...         pauses += 1
    ...     except StopIteration as done:
    ...         curves = done.value
    ...         break
    >>> pauses, curves["pH"]
    (3, [5.0, 6.0, 7.0, 8.0, 9.0])
    >>> whole = water_curves(wm, sol, [5.0, 6.0, 7.0, 8.0, 9.0])
    >>> all(abs(a - b) < 1e-12 for a, b in zip(curves["systems"][0]["fractions"][1], whole["systems"][0]["fractions"][1]))
    True
    """
    from ..operations.curves import water_curves

    parts = []
    for start in range(0, len(grid), size):
        parts.append((len(grid[start:start + size]), water_curves(wm, sol, grid[start:start + size])))
        yield None
    out = dict(parts[0][1])
    out["pH"] = list(grid)
    for key in ("systems", "ions"):
        out[key] = [dict(group, fractions=[[f for _, part in parts for f in part[key][g]["fractions"][s]]
                                           for s in range(len(group["fractions"]))])
                    for g, group in enumerate(parts[0][1][key])]
    place = {}  # a line's key -> its species' place in the tableau (complexes are ordered by it)
    for i, sp in enumerate(wm.tab.species):
        place.setdefault((sp.name, "water" if sp.kind == "water" else sp.system, sp.kind), i)
    lines: dict = {}
    for n, part in parts:
        for line in part["log_concentration"]:
            lines.setdefault((line["name"], line["system"], line["kind"]), dict(line, values=[]))
    for n, part in parts:
        seen = {(line["name"], line["system"], line["kind"]): line["values"] for line in part["log_concentration"]}
        for key, line in lines.items():
            line["values"].extend(seen.get(key, [None] * n))
    fixed = [(line["name"], line["system"], line["kind"]) for line in parts[0][1]["log_concentration"]
             if line["kind"] != "complex"]
    complexes = sorted((key for key in lines if key[2] == "complex"), key=lambda key: place.get(key, len(place)))
    out["log_concentration"] = [lines[key] for key in fixed + complexes]
    return out


def _water_view(params: dict):
    """The water section's request in parts: ``{"result": <solve result>}`` first (without the
    equivalence-point pH values of its alkalinity, see ``api.solve(headline=True)``), then
    ``{"curves": <water_curves>, "alkalinity_equivalence_pH": {"total_equivalence_pH",
    "phenolphthalein_equivalence_pH"}}`` (same parameters as :func:`acidscape.boundary.api.water`, read
    by :func:`acidscape.boundary.api.water_request`).
    Yields dicts for parts and None at pauses."""
    from ..operations.alkalinity import PHENOLPHTHALEIN_END_POINT_PH, TOTAL_END_POINT_PH, equivalence_pH

    scenario, grid = api.water_request(params)
    state: dict = {}
    yield {"result": api.solve(scenario, state, headline=True)}
    yield None  # the headline is out: a newer request may take over here
    wm, sol = state["model"], state["solution"]
    curves = yield from _chunked_curves(wm, sol, grid)
    yield {"curves": curves,
           "alkalinity_equivalence_pH": {f"{label}_equivalence_pH": equivalence_pH(wm, sol, ref) for label, ref in
                                         (("total", TOTAL_END_POINT_PH),
                                          ("phenolphthalein", PHENOLPHTHALEIN_END_POINT_PH))}}


#: Methods answered in parts by :func:`stages` (every other method is one part).
_STAGED = {"water_view": _water_view}


#: Answers kept by :func:`keep_answer`: (method, canonical parameters) -> the parts as
#: :func:`stages` gave them (JSON strings, None at pauses). Empty unless a build filled it.
_KEPT: dict[tuple[str, str], tuple[str | None, ...]] = {}


def _canonical(params) -> str:
    """One text per request, whatever the key order or spacing of the JSON it came in."""
    return json.dumps(params, sort_keys=True, separators=(",", ":"), allow_nan=False)


def keep_answer(method: str, params_json: str) -> int:
    """Answer a request of the page's first view now and keep its parts, so that the same request
    (same method and parameters, in any key order) is answered later by :func:`stages` from what
    was kept instead of being computed again.

    The page's build calls this for the starting water and each worked example before it saves
    the Python heap (build_scripts/snapshot.mjs): the first view's figures are then in the image,
    computed by this core from these very parameters, and a page opened on them draws them as
    soon as Python is up. Only methods answered in parts are kept, only on success, and the table
    only grows here (never while the page runs), so it cannot hold an answer to anything else.
    e2e tests check that a page booted from the image shows what an ordinary boot computes.

    Parameters
    ----------
    method : str
        A method answered in parts (``"water_view"``) [-]
    params_json : str
        Its parameters as a JSON object [-]

    Returns
    -------
    int
        Characters of JSON kept for this request [-]

    Examples
    --------
    >>> request = json.dumps({"systems": [{"id": "acetic", "total": 1}], "curve": {"points": 3}})
    >>> computed = list(stages("water_view", request))
    >>> keep_answer("water_view", request) > 0
    True
    >>> reordered = json.dumps({"curve": {"points": 3}, "systems": [{"total": 1, "id": "acetic"}]})
    >>> list(stages("water_view", reordered)) == computed
    True
    >>> _KEPT.clear()
    """
    if method not in _STAGED:
        raise InputError(f"only answers in parts are kept, not {method!r}", field=None)
    parts = tuple(stages(method, params_json))
    replies = [json.loads(p) for p in parts if p is not None]
    if not replies or not all(reply.get("ok") for reply in replies):
        raise InputError(f"{method} failed, so nothing is kept: {replies[-1:]}", field=None)
    _KEPT[(method, _canonical(json.loads(params_json) if params_json else {}))] = parts
    return sum(len(p) for p in parts if p is not None)


def _failure(exc: Exception) -> str:
    if isinstance(exc, AcidscapeError):
        return json.dumps({"ok": False, "error": exc.to_dict()})
    return json.dumps({"ok": False, "error": {"type": type(exc).__name__, "message": str(exc), "field": None}})


def stages(method: str, params_json: str):
    """Answer one request in parts: a generator of JSON strings (one per part, shaped as
    :func:`handle` answers) and None (a pause where the caller may stop asking for more).

    ``"water_view"`` (a scenario plus optional ``curve``, as ``"water"``) answers
    ``{"result": <solve result>}`` (the headline: its equivalence-point pH values come later) and
    then ``{"curves": ..., "alkalinity_equivalence_pH": ...}``, pausing after the first part
    and after every :data:`CURVE_CHUNK` pH values of the curves. Any other method is answered
    in one part by :func:`handle`. After a part that is an error nothing more comes.

    Parameters
    ----------
    method : str
        Name of the call [-]
    params_json : str
        Its parameters as a JSON object [-]

    Examples
    --------
    >>> parts = [p for p in stages("water_view", json.dumps({"systems": [{"id": "acetic", "total": 1}],
    ...                                                   "curve": {"points": 3}})) if p is not None]
    >>> [sorted(json.loads(p)["result"]) for p in parts]
    [['result'], ['alkalinity_equivalence_pH', 'curves']]
    >>> whole = api.solve({"systems": [{"id": "acetic", "total": 1}]})["alkalinity"]["equivalence_point"]
    >>> json.loads(parts[1])["result"]["alkalinity_equivalence_pH"]["total_equivalence_pH"] == whole["total_equivalence_pH"]
    True
    >>> json.loads(parts[1])["result"]["curves"]["pH"]
    [0.0, 7.0, 14.0]
    >>> [json.loads(p)["ok"] for p in stages("water_view", '{"systems": 3}') if p is not None]
    [False]
    >>> [json.loads(p)["result"]["pKa"] for p in stages("distribution", '{"pKa": [4.756], "points": 3}')]
    [[4.756]]
    """
    staged = _STAGED.get(method)
    if staged is None:
        yield handle(method, params_json)
        return
    try:
        try:
            params = json.loads(params_json) if params_json else {}
        except (TypeError, ValueError) as exc:
            raise InputError(f"request parameters are not valid JSON: {exc}", field=None) from None
        if _KEPT:
            kept = _KEPT.get((method, _canonical(params)))
            if kept is not None:
                yield from kept
                return
        for part in staged(params):
            yield None if part is None else json.dumps({"ok": True, "result": part}, allow_nan=False)
    except (AcidscapeError, ValueError, OverflowError, ZeroDivisionError, TypeError, KeyError) as exc:
        yield _failure(exc)
