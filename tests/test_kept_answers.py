"""Answers the page's build keeps (acidscape.boundary.dispatch.keep_answer): a request the build
answered before saving the Python heap is answered later from what was kept, and nothing else is.

The reference is the core itself computing the same request afresh (the kept parts must be the
very strings :func:`dispatch.stages` gives); the waters are invented.
"""

from __future__ import annotations

import json

import pytest

from acidscape.boundary import dispatch
from acidscape.errors import InputError

WATER = {"temperature_C": 25, "activity": "davies",
         "systems": [{"id": "carbonate", "total": 2.5, "unit": "mmol/L"}],
         "ions": [{"id": "calcium", "total": 1, "unit": "mmol/L"}, {"id": "chloride", "total": 2, "unit": "mmol/L"}],
         "curve": {"pH_min": 0, "pH_max": 14, "points": 57}}


@pytest.fixture(autouse=True)
def _empty_table():
    dispatch._KEPT.clear()
    yield
    dispatch._KEPT.clear()


def test_a_kept_request_is_answered_with_the_same_parts_and_pauses():
    request = json.dumps(WATER)
    fresh = list(dispatch.stages("water_view", request))
    assert dispatch.keep_answer("water_view", request) == sum(len(p) for p in fresh if p is not None)
    calls = []
    original = dispatch._STAGED["water_view"]
    dispatch._STAGED["water_view"] = lambda params: calls.append(params) or original(params)
    try:
        # the page's JSON.stringify has no spaces and its own key order
        again = list(dispatch.stages("water_view", json.dumps(dict(reversed(WATER.items())), separators=(",", ":"))))
    finally:
        dispatch._STAGED["water_view"] = original
    assert again == fresh
    assert calls == []  # answered from what was kept, not computed
    assert None in again  # the pauses are kept too (the worker drops a stale request there)


def test_any_other_request_is_computed():
    dispatch.keep_answer("water_view", json.dumps(WATER))
    other = dict(WATER, temperature_C=25.5)
    parts = [json.loads(p) for p in dispatch.stages("water_view", json.dumps(other)) if p is not None]
    assert parts[0]["result"]["result"]["temperature_C"] == 25.5
    kept = [json.loads(p) for p in dispatch.stages("water_view", json.dumps(WATER)) if p is not None]
    assert kept[0]["result"]["result"]["pH"] != parts[0]["result"]["result"]["pH"]


def test_failures_and_single_answer_methods_are_not_kept():
    with pytest.raises(InputError):
        dispatch.keep_answer("water_view", json.dumps(dict(WATER, temperature_C=500)))
    with pytest.raises(InputError):
        dispatch.keep_answer("solve", json.dumps(WATER))
    assert dispatch._KEPT == {}
