"""Lead and copper solubility (acidscape.operations.solubility) against an independent computation.

The reference below is written here from the equations, with numpy and scipy: the water's
tableau comes from tests/reference_model.py (its own CSV parser of the data files, so the
*same constants* but none of the core's code), and at each pH and candidate solid s the
unknown log free concentrations u_j of every component but H+ and the metal solve

    sum_i A_ij c_i = T_j,   ln c_i = ln beta'_i + sum_j A_ij u_j,
    u_M = (ln Ksp'_s - sum_{j != M} B_sj u_j) / B_sM

(Morel & Hering, Principles and Applications of Aquatic Chemistry, Wiley 1993, ch. 5: a solid
in equilibrium fixes the free metal through its mass-action law), with scipy.optimize.root
(MINPACK hybrd, Powell's hybrid method) started from the metal-free water (the minimum of the
tableau's convex dual function, scipy.optimize.minimize trust-exact). The dissolved metal is sum_i A_iM c_i (polynuclear
species counted with their metal content), and the controlling solid is the candidate that
gives the smallest dissolved metal (with the ligands held, dissolved metal rises with the free
metal activity). The waters are test inputs chosen to exercise every ligand, not reference data.
"""

from __future__ import annotations

import copy
import json
import math

import numpy as np
import pytest
from scipy.optimize import minimize, root

import reference_model as rm

from acidscape.boundary import api, cli
from acidscape.boundary import dispatch
from acidscape.boundary.scenario import read_scenario
from acidscape.errors import InputError, UnknownIdError
from acidscape.operations import solubility as S
from acidscape.science.model import equilibrium

LN10 = math.log(10.0)

#: Test water (mol/L): every ligand of the lead and copper complexes and solids, calcium and sodium pairs.
WATER = {
    "systems": [{"id": "carbonate", "total": 1.0e-3, "unit": "mol/L"},
                {"id": "phosphate", "total": 2.0e-5, "unit": "mol/L"},
                {"id": "sulfate", "total": 2.0e-4, "unit": "mol/L"}],
    "ions": [{"id": "calcium", "total": 5.0e-4, "unit": "mol/L"},
             {"id": "sodium", "total": 1.2e-3, "unit": "mol/L"},
             {"id": "chloride", "total": 6.0e-4, "unit": "mol/L"}],
}


def reference_solubility(scenario, metal, pH, candidates, I_iterate=False):
    """(dissolved metal [mol/L], controlling solid, {solid: dissolved}) by the equations above."""
    sc = copy.deepcopy(scenario)
    sc["ions"] = list(sc.get("ions", [])) + [{"id": metal, "total": 1e-12, "unit": "mol/L"}]
    sc["pH"] = pH
    prob = rm.build(sc)
    comps = prob.comps
    jM = comps.index(metal)
    U = [j for j in range(1, len(comps)) if j != jM]
    T = prob.totals[U]
    A = prob.A
    I = prob.I_fixed if prob.I_fixed is not None else 0.5 * float(np.dot(prob.comp_z[1:] ** 2, prob.totals[1:]))
    result = {}
    for _ in range(200 if I_iterate else 1):
        if prob.model == "ideal":
            lg_s = np.zeros(len(prob.z))
        else:
            lg_s = rm.davies_lg(prob.z, I, prob.T)
        lg_c = lg_s[prob.free_row]
        lnb = LN10 * (prob.logb + A @ lg_c - lg_s)
        uH = LN10 * (-pH - lg_c[0])
        # the water without the metal: minimise the convex F(v) = sum c_i - T.v (its gradient is
        # the mass balances; Smith & Missen, Chemical Reaction Equilibrium Analysis, 1982)
        free = A[:, jM] == 0
        Af, lnbf = A[free][:, U], lnb[free] + A[free][:, 0] * uH

        def F(v):
            c = np.exp(lnbf + Af @ v)
            return c.sum() - T @ v, Af.T @ c - T, (Af.T * c) @ Af

        v0 = minimize(lambda v: F(v)[0], np.log(T) - 1.0, jac=lambda v: F(v)[1], hess=lambda v: F(v)[2],
                      method="trust-exact", options={"gtol": 1e-13 * T.min()}).x
        result = {}
        for sid in candidates:
            k = prob.solids.index(sid)
            b = prob.B[k]
            lnKs = LN10 * (prob.logKs[k] - b @ lg_c)

            def conc(v, b=b, lnKs=lnKs):
                u = np.zeros(len(comps))
                u[0] = uH
                u[U] = v
                u[jM] = (lnKs - b[0] * uH - b[U] @ v) / b[jM]
                return np.exp(lnb + A @ u)

            result[sid] = (float(A[:, jM] @ conc(v0)), None, conc)
        # the metal's hold on the ligands moves a dissolved value by far less than a factor 10 in
        # these waters, so a candidate 10 times above the least soluble one cannot control
        least = min(v[0] for v in result.values())
        for sid in list(result):
            if result[sid][0] > 10 * least:
                del result[sid]
                continue
            conc = result[sid][2]

            def resid(v, conc=conc):
                return (A[:, U].T @ conc(v) - T) / T

            sol = root(resid, v0, method="hybr", options={"xtol": 1e-14})
            assert np.max(np.abs(resid(sol.x))) < 1e-10, (sid, sol.message)
            c = conc(sol.x)
            result[sid] = (float(A[:, jM] @ c), c)
        best = min(result, key=lambda s: result[s][0])
        I_new = 0.5 * float(np.dot(prob.z ** 2, result[best][1]))
        if not I_iterate or abs(I_new - I) <= 1e-13 * I_new:
            break
        I = I_new
    best = min(result, key=lambda s: result[s][0])
    return result[best][0], best, {s: v[0] for s, v in result.items()}


def curve(scenario, **params):
    return api.solubility(dict({"scenario": scenario}, **params))


@pytest.mark.parametrize("activity", ["ideal", "fixed-I"])
@pytest.mark.parametrize("metal", ["lead", "copper"])
def test_dissolved_metal_against_the_equations(metal, activity):
    sc = copy.deepcopy(WATER)
    if activity == "ideal":
        sc["activity"] = "ideal"
    else:
        sc["ionic_strength_M"] = 0.005
    out = curve(sc, metal=metal, axis="pH", **{"from": 6.5, "to": 10.0, "points": 8})
    cand = out["candidate_solids"]
    assert len(out["points"]) == 8
    for p in out["points"]:
        ref, solid, _ = reference_solubility(sc, metal, p["pH"], cand)
        assert p["controlling_solid"] == solid
        assert p["dissolved_M"] == pytest.approx(ref, rel=1e-7)


def test_lead_with_ionic_strength_from_the_composition_against_the_equations():
    # Davies activities at the ionic strength of the species themselves (the reference iterates it)
    sc = copy.deepcopy(WATER)
    out = curve(sc, metal="lead", axis="pH", **{"from": 7.0, "to": 9.0, "points": 3})
    for p in out["points"]:
        ref, solid, _ = reference_solubility(sc, "lead", p["pH"], out["candidate_solids"], I_iterate=True)
        assert p["controlling_solid"] == solid
        assert p["dissolved_M"] == pytest.approx(ref, rel=1e-6)


def test_dic_and_orthophosphate_axes_against_the_equations():
    sc = copy.deepcopy(WATER)
    sc["activity"] = "ideal"
    # DIC axis (mg/L as C) at pH 8: the carbonate total of each point replaces the water's
    out = curve(sc, metal="lead", axis="DIC", fixed_pH=8.0, unit="mg/L as C", **{"from": 2, "to": 50, "points": 4})
    assert out["axis_unit"] == "mg/L as C" and out["fixed_pH"] == 8.0
    for p, x in zip(out["points"], [2, 18, 34, 50]):
        assert p["x"] == pytest.approx(x, rel=1e-12)
        assert p["DIC_M"] == pytest.approx(x * 1e-3 / 12.011, rel=1e-12)  # C 12.011 g/mol (IUPAC 2021)
        w = copy.deepcopy(sc)
        w["systems"][0]["total"] = p["DIC_M"]
        ref, solid, _ = reference_solubility(w, "lead", 8.0, out["candidate_solids"])
        assert p["controlling_solid"] == solid and p["dissolved_M"] == pytest.approx(ref, rel=1e-7)
    # orthophosphate axis (mg/L as P) at pH 7.5: more phosphate, less lead, under a lead phosphate
    out = curve(sc, metal="lead", axis="orthophosphate", fixed_pH=7.5, unit="mg/L as P",
                solids=["cerussite", "hydrocerussite", "hydroxypyromorphite"], **{"from": 0.1, "to": 1.0, "points": 3})
    vals = [p["dissolved_M"] for p in out["points"]]
    assert vals[0] > vals[1] > vals[2]
    for p in out["points"]:
        w = copy.deepcopy(sc)
        w["systems"][1]["total"] = p["orthophosphate_M"]
        ref, solid, _ = reference_solubility(w, "lead", 7.5, out["candidate_solids"])
        assert solid == "hydroxypyromorphite" == p["controlling_solid"]
        assert p["dissolved_M"] == pytest.approx(ref, rel=1e-7)


def test_every_other_candidate_is_undersaturated_and_the_model_agrees():
    # The phase at equilibrium when all candidates may form is the least soluble one: SI 0 for
    # it, SI < 0 for every other (Stumm & Morgan, Aquatic Chemistry, 3rd ed. 1996, ch. 7).
    out = curve(copy.deepcopy(WATER), metal="lead", axis="pH", **{"from": 6.5, "to": 10.5, "points": 41})
    for p in out["points"]:
        assert p["SI"][p["controlling_solid"]] == pytest.approx(0.0, abs=1e-9)
        assert all(v <= 1e-9 for v in p["SI"].values())
    chk = out["model_check"]
    # acidscape.science.model.equilibrium with the dissolved lead as the total: the same answer
    assert chk["SI"][chk["controlling_solid"]] == pytest.approx(0.0, abs=1e-8)
    assert max(chk["SI"].values()) <= 1e-8
    assert chk["dissolved_relative_difference"] < 1e-9
    assert chk["ionic_strength_relative_difference"] < 1e-9


def test_band_brackets_the_value_and_follows_the_recorded_spread():
    out = curve(copy.deepcopy(WATER), metal="lead", axis="pH", solids=["cerussite", "hydrocerussite"],
                **{"from": 7.0, "to": 10.0, "points": 7})
    for p in out["points"]:
        lo, hi = p["band_ug_per_L"]["low"], p["band_ug_per_L"]["high"]
        assert lo <= p["dissolved_ug_per_L"] * (1 + 1e-9) and hi >= p["dissolved_ug_per_L"] * (1 - 1e-9)
        assert hi > 1.5 * lo  # PbCO3, Pb(CO3)2-2 and hydrocerussite are recorded with spreads of 0.7-1.3 log
    spreads = {r["id"]: r["log10_K_spread"] for r in out["constants"]}
    assert spreads["hydrocerussite"] is not None and spreads["PbCO3"] is not None
    assert all(r["source"] for r in out["constants"])
    # copper-hydroxide and tenorite carry no spread, but CuOH+ and Cu(OH)2 do: the band still opens
    cu = curve(copy.deepcopy(WATER), metal="copper", solids=["tenorite"], **{"from": 9.0, "to": 9.0, "points": 1})
    p = cu["points"][0]
    assert p["band_ug_per_L"]["high"] > p["dissolved_ug_per_L"] >= p["band_ug_per_L"]["low"]


def test_band_low_end_equals_a_curve_computed_with_the_low_constants(monkeypatch):
    # The low end of the band is the trace-metal value with every spread constant at its low end:
    # compare with the reference where the constants are replaced by those low ends.
    sc = copy.deepcopy(WATER)
    sc["activity"] = "ideal"
    out = curve(sc, metal="lead", solids=["cerussite", "hydrocerussite", "litharge"], **{"from": 8.5, "to": 8.5, "points": 1})
    p = out["points"][0]
    lib = rm.load_library()
    low = copy.deepcopy(lib)
    for rx in low.complexes:
        if rx.id in {r["id"] for r in out["constants"] if r["log10_K_spread"]}:
            rx.logK_25 = {r["id"]: r["log10_K_spread"] for r in out["constants"]}[rx.id][0]
    for sid, rx in low.solids.items():
        sp = {r["id"]: r["log10_K_spread"] for r in out["constants"]}.get(sid)
        if sp:
            rx.logK_25 = sp[0]
    build = rm.build
    monkeypatch.setattr(rm, "build", lambda scenario, library=None: build(scenario, low))
    ref, solid, _ = reference_solubility(sc, "lead", 8.5, out["candidate_solids"])
    # trace approximation of the band: the lead's own hold on carbonate is not re-solved (<1e-3 here)
    assert p["band_ug_per_L"]["low"] == pytest.approx(ref * 207.2e6, rel=2e-3)
    assert p["band_controlling_solid"]["low"] == solid


def test_fixed_pH_solver_matches_the_general_model():
    # Without a metal, FixedPHSolver solves the same tableau as acidscape.science.model.equilibrium.
    parsed = read_scenario(dict(WATER, ions=WATER["ions"] + [{"id": "magnesium", "total": 3e-4, "unit": "mol/L"}]))
    wm, _ = S.metal_water(parsed, "copper")
    solver = S.FixedPHSolver(wm)
    totals = list(wm.totals)
    for pH in (4.0, 6.3, 8.0, 10.2, 12.0):
        st = solver.solve(pH, totals)
        sol = equilibrium(wm.tab, totals, T=wm.T, gamma_of=wm.gamma_of, pH=pH, fixed_species={}, I_fixed=None)
        assert st.I == pytest.approx(sol.I, rel=1e-9)
        for a, b in zip(st.conc, sol.conc):
            assert a == pytest.approx(b, rel=1e-8, abs=1e-25)


def test_axis_points_where_a_ligand_is_absent():
    # DIC 0: cerussite and hydrocerussite cannot form; litharge (PbO) or a phosphate solid controls.
    out = curve(copy.deepcopy(WATER), metal="lead", axis="DIC", fixed_pH=8.0, **{"from": 0, "to": 10, "points": 3})
    first = out["points"][0]
    assert first["DIC_M"] == 0.0
    assert first["controlling_solid"] not in ("cerussite", "hydrocerussite")
    assert "cerussite" not in first["SI"]
    # only carbonate solids named, and no carbonate at the first point: no solubility there
    out = curve(copy.deepcopy(WATER), metal="lead", axis="DIC", fixed_pH=8.0, solids=["cerussite"],
                **{"from": 0, "to": 10, "points": 2})
    assert out["points"][0]["dissolved_M"] is None and out["points"][0]["controlling_solid"] is None
    assert out["points"][1]["controlling_solid"] == "cerussite"
    assert any("no candidate solid" in w for w in out["warnings"])


def test_basis_states_an_equilibrium_estimate_not_tap_water():
    out = curve(copy.deepcopy(WATER), metal="lead", **{"from": 7, "to": 8, "points": 2})
    assert "not a prediction of lead at a tap" in out["basis"]
    assert "Equilibrium solubility estimate" in out["basis"]
    assert out["band_basis"] and out["method"].startswith("minimum over the candidate solids")
    # chloride and orthophosphate: chloropyromorphite controls, with a note on the usual choice
    assert {p["controlling_solid"] for p in out["points"]} == {"chloropyromorphite"}
    assert any("hydroxypyromorphite" in w for w in out["warnings"])


def test_water_open_to_co2_is_closed_at_its_equilibrium_dic():
    sc = {"gas": {"CO2_partial_pressure_atm": 10 ** -3.4}, "ions": [{"id": "calcium", "total": 1e-3},
                                                                    {"id": "chloride", "total": 2e-3}]}
    out = curve(sc, metal="lead", **{"from": 7.5, "to": 7.5, "points": 1})
    assert any("open to CO2" in w for w in out["warnings"])
    assert out["points"][0]["DIC_M"] > 0


def test_errors_name_the_field():
    sc = copy.deepcopy(WATER)
    with pytest.raises(InputError) as e:
        curve(sc, metal="zinc")
    assert e.value.field == "metal"
    with pytest.raises(InputError) as e:
        curve(sc, axis="alkalinity")
    assert e.value.field == "axis"
    with pytest.raises(InputError) as e:
        curve(sc, metal="copper", solids=["cerussite"])
    assert e.value.field == "solids"
    with pytest.raises(UnknownIdError):
        curve(sc, solids=["unobtainium"])
    with pytest.raises(InputError) as e:
        curve(sc, axis="DIC", unit="mg/L as N", **{"from": 1, "to": 2})
    assert e.value.field == "unit"
    reply = json.loads(dispatch.handle("solubility", json.dumps({"scenario": sc, "metal": "lead", "points": 0})))
    assert reply["ok"] is False and reply["error"]["field"] == "points"


def test_cli_solubility(tmp_path, capsys):
    path = tmp_path / "water.json"
    path.write_text(json.dumps(WATER))
    rc = cli.run(["solubility", str(path), "--metal", "lead", "--axis", "pH", "--from", "6.5", "--to", "10.5",
                  "--points", "81"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert len(out["points"]) == 81 and out["points"][0]["pH"] == 6.5 and out["points"][-1]["pH"] == 10.5
    assert all(p["controlling_solid"] for p in out["points"])
    rc = cli.run(["solubility", str(path), "--metal", "copper", "--axis", "orthophosphate", "--from", "0",
                  "--to", "3", "--points", "4", "--fixed-pH", "7.2", "--solids", "copper-hydroxide,tenorite"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert out["candidate_solids"] == ["copper-hydroxide", "tenorite"]
    assert {p["controlling_solid"] for p in out["points"]} == {"tenorite"}
    rc = cli.run(["solubility", str(path), "--metal", "lead", "--solids", "tenorite"])
    assert rc == 2
    assert "solids" in capsys.readouterr().err


def test_points_far_above_dilute_water_are_reported_without_a_value():
    # Copper(II) oxide at pH 4: log[Cu+2] = 7.64 - 8 = -0.36 (database constant), far above 0.01 mol/L
    out = curve(copy.deepcopy(WATER), metal="copper", **{"from": 4.0, "to": 7.0, "points": 4})
    first = out["points"][0]
    assert first["above_limit"] and first["dissolved_M"] is None and first["band_ug_per_L"]["low"] is None
    assert not out["points"][-1]["above_limit"] and out["points"][-1]["dissolved_M"] < S.MAX_DISSOLVED_M
    assert any("would exceed" in w for w in out["warnings"])


def _random_curves(n, seed):
    import random

    rnd = random.Random(seed)
    for _ in range(n):
        sc = {"systems": [{"id": "carbonate", "total": 10 ** rnd.uniform(-5, -2)}],
              "ions": [{"id": "calcium", "total": 10 ** rnd.uniform(-5, -2)},
                       {"id": "chloride", "total": 10 ** rnd.uniform(-5, -2)},
                       {"id": "sodium", "total": 10 ** rnd.uniform(-5, -2)}],
              "temperature_C": rnd.uniform(5, 60), "activity": rnd.choice(["davies", "ideal", "extended-debye-huckel"])}
        if rnd.random() < 0.7:
            sc["systems"].append({"id": "phosphate", "total": 10 ** rnd.uniform(-7, -4)})
        if rnd.random() < 0.5:
            sc["systems"].append({"id": "sulfate", "total": 10 ** rnd.uniform(-5, -2)})
        if rnd.random() < 0.3:
            sc["ions"].append({"id": "magnesium", "total": 10 ** rnd.uniform(-5, -2.5)})
        metal, axis = rnd.choice(["lead", "copper"]), rnd.choice(["pH", "DIC", "orthophosphate"])
        params = {"scenario": sc, "metal": metal, "axis": axis, "points": 41}
        if axis == "pH":
            params.update({"from": rnd.uniform(4, 7), "to": rnd.uniform(9, 12.5)})
        else:
            params.update({"from": 0, "to": rnd.uniform(0.1, 100), "fixed_pH": rnd.uniform(5, 11)})
        yield params


def _check_random(params):
    out = api.solubility(params)
    for p in out["points"]:
        if p["dissolved_M"] is None:
            continue
        assert p["SI"][p["controlling_solid"]] == pytest.approx(0.0, abs=1e-9)
        assert max(p["SI"].values()) <= 1e-9
        assert p["band_ug_per_L"]["low"] <= p["dissolved_ug_per_L"] * (1 + 1e-9) <= p["band_ug_per_L"]["high"] * (1 + 2e-9)
    chk = out["model_check"]
    if chk is not None:
        assert max(chk["SI"].values()) <= 1e-8 and chk["dissolved_relative_difference"] < 1e-8


@pytest.mark.parametrize("params", list(_random_curves(10, 3)))
def test_random_waters_least_soluble_solid_and_model_check(params):
    _check_random(params)


@pytest.mark.sweep
@pytest.mark.parametrize("params", list(_random_curves(200, 11)))
def test_random_waters_wide_sweep(params, request):
    """200 more random curves; they run only when selected with ``-m sweep``."""
    expr = request.config.getoption("markexpr") or ""
    if "sweep" not in expr or "not sweep" in expr:
        pytest.skip("part of the wide sweep: run with -m sweep")
    _check_random(params)


def test_orthophosphate_dose_equals_a_water_holding_the_dosed_total():
    """A dose through the page's entry = the same water with its phosphate total raised (mass
    balance: P 30.973762 g/mol, IUPAC 2021 standard atomic weight), checked against the
    independent reference solve; the result carries the dosing and orthophosphate cautions."""
    sc = copy.deepcopy(WATER)
    sc["activity"] = "ideal"
    base_P = sc["systems"][1]
    assert base_P["id"] == "phosphate"
    reply = json.loads(dispatch.handle("solubility", json.dumps(
        {"scenario": sc, "metal": "lead", "axis": "pH", "from": 7.5, "to": 7.5, "points": 1,
         "orthophosphate_dose": 0.5, "solids": ["cerussite", "hydrocerussite", "hydroxypyromorphite"]})))
    assert reply["ok"], reply
    out = reply["result"]
    w = read_scenario(sc)
    own = next(c.total_M for c in w.components if c.key == "phosphate")
    p = out["points"][0]
    assert p["orthophosphate_M"] == pytest.approx(own + 0.5e-3 / 30.973762, rel=1e-5)
    ref_water = copy.deepcopy(sc)
    ref_water["systems"][1] = {"id": "phosphate", "total": p["orthophosphate_M"], "unit": "mol/L"}
    ref, solid, _ = reference_solubility(ref_water, "lead", 7.5, out["candidate_solids"])
    assert p["controlling_solid"] == solid and p["dissolved_M"] == pytest.approx(ref, rel=1e-7)
    assert any("jar" in c for c in out["cautions"]) and any("Orthophosphate overfeed" in c for c in out["cautions"])
    # a water without phosphate gains the dose as its whole orthophosphate
    bare = {k: v for k, v in sc.items() if k != "systems"}
    bare["systems"] = [sc["systems"][0]]
    out = json.loads(dispatch.handle("solubility", json.dumps(
        {"scenario": bare, "metal": "lead", "from": 8, "to": 8, "points": 1, "orthophosphate_dose": 1.0,
         "orthophosphate_dose_unit": "mg/L"})))["result"]
    assert out["points"][0]["orthophosphate_M"] == pytest.approx(1e-3 / 94.971, rel=1e-4)  # PO4 94.971 g/mol
    bad = json.loads(dispatch.handle("solubility", json.dumps({"scenario": sc, "orthophosphate_dose": -1})))
    assert not bad["ok"] and bad["error"]["field"] == "orthophosphate_dose"
