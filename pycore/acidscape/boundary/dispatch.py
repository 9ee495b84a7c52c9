"""The page's single entry: one JSON method call in, one JSON string out.

:func:`handle` looks the method up in a table built once (the JSON methods of
:mod:`acidscape.boundary.api` and the batch chunks of :mod:`acidscape.boundary.batch`) and
never lets a traceback cross into JavaScript: errors come back as
``{"ok": false, "error": {"type", "message", "field"}}``. It sits above ``api`` and ``batch``
(batch calls api's methods per row), so neither imports the other in a circle.

Functions
---------
handle(method, params_json) -> str     JSON dispatcher used by the page's worker
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
