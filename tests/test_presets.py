"""Worked examples (site/presets.json) and the link format (site/share.js).

The presets are invented waters; these tests only check that each one is a well-formed page
state (the section shapes of the front-end contract) and that the core accepts every part of
it. No chemistry result of an invented water is checked against a number here.

The link checks run site/share.js under Node (the module has no DOM), so a broken codec shows
up without a browser; tests/e2e/test_share.py covers the page itself.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from acidscape.boundary import api

from acidscape.boundary import dispatch
SITE = Path(__file__).resolve().parents[1] / "site"
PRESETS = json.loads((SITE / "presets.json").read_text(encoding="utf-8"))["presets"]
IDS = [p["id"] for p in PRESETS]
# Strong ions are keyed by words from state format 2 on (site/share.js ION_WORDS maps the
# formula ids of format 1); the core reads the words and keeps the formulas as aliases.
ION_WORDS = {
    "Na+": "sodium", "K+": "potassium", "Li+": "lithium", "Ca+2": "calcium", "Mg+2": "magnesium",
    "Sr+2": "strontium", "Ba+2": "barium", "Cl-": "chloride", "Br-": "bromide", "I-": "iodide",
    "NO3-": "nitrate", "SO4-2": "sulfate", "ClO4-": "perchlorate", "ClO3-": "chlorate", "BrO3-": "bromate",
}


def core_scenario(scenario: dict) -> dict:
    """The scenario with each ion id as the core's library knows it: the word, or (for a core
    that still keys ions by formula) the formula the page's alias table maps it from."""
    known = {i["id"] for i in json.loads(dispatch.handle("systems", "{}"))["result"]["ions"]}
    back = {w: f for f, w in ION_WORDS.items()}
    ions = [dict(e, id=back.get(e["id"], e["id"])) if "id" in e and e["id"] not in known else e
            for e in scenario.get("ions", [])]
    return {**scenario, "ions": ions}

# The state shapes of the front-end contract (site/state.js users).
WATER_KEYS = {"scenario", "display"}
TITRATION_KEYS = {"titrant", "titrant_M", "sample_mL", "to_pH", "axis"}
DOSE_KEYS = {"chemical", "target_pH", "strength_pct", "density_kg_per_L", "flow", "flow_unit"}
DISTRIBUTION_KEYS = {"acid", "pKa", "charge", "total_M", "pH"}


def test_at_least_six_labelled_examples_with_distinct_ids():
    assert len(PRESETS) >= 6
    assert len(set(IDS)) == len(IDS)
    for p in PRESETS:
        assert re.fullmatch(r"[a-z0-9-]{1,60}", p["id"])
        assert p["label"] == "Example — invented"
        assert "invented" in p["title"]
        assert p["description"].strip()


# Names that are, or read like, real places (the examples once used them).
PLACE_LIKE = re.compile(r"(ford|fen|mere|beck|moy|cross|ton|ham|by|wick|field|bury|STW)\b", re.I)


@pytest.mark.parametrize("preset", PRESETS, ids=IDS)
def test_titles_name_no_place(preset):
    # An invented example is named by a site code ("plant K-7", "well W-3") or by what the water
    # is; apart from the first word, the only capitalised words allowed are site codes and
    # formulas, so no title can carry a real (or real-sounding) place name.
    words = re.findall(r"[\w₀-₉'-]+", preset["title"])
    for word in words[1:]:
        if word[0].isupper():
            assert re.fullmatch(r"[A-Z]{1,2}-\d{1,3}|CO₂", word), (preset["title"], word)
    for text in (preset["title"], preset["description"]):
        for word in re.findall(r"[A-Z][a-z]+\w*", text)[1:]:
            assert not PLACE_LIKE.search(word), (text, word)


@pytest.mark.parametrize("preset", PRESETS, ids=IDS)
def test_ions_are_keyed_by_words(preset):
    for entry in preset["state"]["water"]["scenario"].get("ions", []):
        if "id" in entry:
            assert entry["id"] in ION_WORDS.values(), entry


@pytest.mark.parametrize("preset", PRESETS, ids=IDS)
def test_state_has_the_contract_shape(preset):
    state = preset["state"]
    assert state["v"] == 2
    assert set(state) <= {"v", "distribution", "water", "treatment"}
    assert set(state["water"]) == WATER_KEYS
    assert state["water"]["display"]["unit"] in ("mol/L", "mmol/L", "umol/L", "mg/L", "ug/L", "mg/L as basis")
    assert {"titration", "dose"} <= set(state["treatment"]) <= {"titration", "dose", "buffer"}
    assert set(state["treatment"]["titration"]) == TITRATION_KEYS
    assert state["treatment"]["titration"]["axis"] in ("volume", "dose")
    assert set(state["treatment"]["dose"]) == DOSE_KEYS
    if "distribution" in state:
        assert set(state["distribution"]) == DISTRIBUTION_KEYS


@pytest.mark.parametrize("preset", PRESETS, ids=IDS)
def test_core_accepts_every_part(preset):
    state = preset["state"]
    scenario = core_scenario(state["water"]["scenario"])
    out = api.solve(scenario)
    assert out["warnings"] == []
    titration = state["treatment"]["titration"]
    api.titrate({"scenario": scenario, **{k: v for k, v in titration.items() if k != "axis"}, "points": 50})
    dose = {k: v for k, v in state["treatment"]["dose"].items() if v is not None}
    api.dose({"scenario": scenario, **dose})
    d = state.get("distribution")
    if d:
        out = api.distribution({"system": d["acid"], "total_M": d["total_M"], "pH": d["pH"], "points": 5})
        assert out["pKa"] == d["pKa"]  # the species section fills pKa from the library


NODE = shutil.which("node")
node_only = pytest.mark.skipif(NODE is None, reason="node is not installed")


def run_node(script: str) -> object:
    done = subprocess.run([NODE, "--input-type=module", "-e", script], capture_output=True, text=True,
                          cwd=SITE, timeout=60)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


@node_only
def test_each_preset_opens_as_a_link_without_notes():
    script = f"""
      import {{ encodeState, readFragment }} from "{(SITE / 'share.js').as_uri()}";
      const presets = {json.dumps(PRESETS)};
      const out = presets.map((p) => {{
        const r = readFragment("#" + encodeState(p.state), ["distribution", "water", "treatment"]);
        return {{kind: r.kind, notes: r.notes, same: JSON.stringify(r.state) === JSON.stringify(p.state)}};
      }});
      console.log(JSON.stringify(out));
    """
    for preset, r in zip(PRESETS, run_node(script)):
        assert r == {"kind": "state", "notes": [], "same": True}, preset["id"]


@node_only
def test_a_format_0_link_is_migrated():
    # An invented format-0 link: the flat single-section object the first format held.
    old = {"version": 0, "acid": "custom", "pka": "4.76", "z": 0, "c": 0.01, "ph": 5}
    script = f"""
      import {{ readFragment, toBase64Url }} from "{(SITE / 'share.js').as_uri()}";
      const bytes = new TextEncoder().encode({json.dumps(json.dumps(old))});
      console.log(JSON.stringify(readFragment("#s=0." + toBase64Url(bytes), ["distribution"])));
    """
    r = run_node(script)
    assert r["kind"] == "state"
    assert r["state"] == {"v": 2, "distribution": {"acid": "custom", "pKa": [4.76], "charge": 0,
                                                   "total_M": 0.01, "pH": 5}}
    assert r["notes"] == ["an older link (format 0) was brought up to date"]


@node_only
def test_broken_links_give_reasons():
    script = f"""
      import {{ readFragment, encodeState, toBase64Url }} from "{(SITE / 'share.js').as_uri()}";
      const good = encodeState({{v: 1, distribution: {{acid: "custom"}}}});
      const cases = {{
        truncated: "#" + good.slice(0, good.length - 7),
        badchars: "#s=1.<script>",
        newer: "#" + encodeState({{v: 9}}).replace("s=9.", "s=9."),
        mismatch: "#" + good.replace("s=1.", "s=0."),
        long: "#s=1." + "A".repeat(20000),
        array: "#s=1." + toBase64Url(new TextEncoder().encode("[1,2]")),
        proto: "#" + encodeState(JSON.parse('{{"v":1,"__proto__":{{"x":1}},"distribution":{{"constructor":1}}}}')),
      }};
      const out = {{}};
      for (const [k, v] of Object.entries(cases)) out[k] = readFragment(v, ["distribution"]);
      out.polluted = ({{}}).x === undefined && ({{}}).constructor === Object;
      console.log(JSON.stringify(out));
    """
    r = run_node(script)
    assert r["truncated"]["kind"] == "error" and "cut short" in r["truncated"]["reason"]
    assert r["badchars"]["kind"] == "error" and "characters" in r["badchars"]["reason"]
    assert r["newer"]["kind"] == "error" and "newer Acidscape (format 9)" in r["newer"]["reason"]
    assert r["mismatch"]["kind"] == "error" and "disagree" in r["mismatch"]["reason"]
    assert r["long"]["kind"] == "error" and "too long" in r["long"]["reason"]
    assert r["array"] == {"kind": "error", "reason": "it does not hold a scenario (found a list)"}
    assert r["proto"]["kind"] == "state"
    assert r["proto"]["state"] == {"v": 2, "distribution": {}}
    assert any('"__proto__"' in n for n in r["proto"]["notes"])
    assert any('"constructor"' in n for n in r["proto"]["notes"])
    assert r["polluted"] is True
