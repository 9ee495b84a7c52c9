"""Tests of acidscape.data.library: the data files' consistency, spot checks against
printed values, the published temperature fits, and the parsers' error reports.

Every printed value below is recalled from memory (no library access); the
source is named beside each check.
"""

from __future__ import annotations

import json
import math
import re
from importlib.resources import files

import pytest

from acidscape.data import library as L
from acidscape.constants import R
from acidscape.errors import UnknownIdError
from acidscape.data.formula import charge_of, molar_mass

SYSTEMS = L.systems()
IONS = L.ions()
SOURCES = L.sources()
LN10 = math.log(10.0)

REQUIRED_IDS = [
    "carbonate", "phosphate", "edta", "citrate", "nta", "sulfide", "ammonium", "hypochlorous",
    "hypobromous", "silicic", "boric", "sulfate", "fluoride", "nitrite", "sulfite", "acetic",
    "formic", "oxalic", "arsenate", "arsenite", "selenite", "chromate", "cyanide", "phenol",
    "hydrogen-peroxide",
]


# --------------------------------------------------------------------------- coverage


def test_at_least_27_systems_and_the_required_ones():
    assert len(SYSTEMS) >= 27
    missing = [s for s in REQUIRED_IDS if s not in SYSTEMS]
    assert not missing


REQUIRED_IONS = {
    # id: formula (the formula is also accepted as an alias: the ids of earlier versions)
    "sodium": "Na+", "potassium": "K+", "lithium": "Li+", "calcium": "Ca+2", "magnesium": "Mg+2",
    "strontium": "Sr+2", "barium": "Ba+2", "chloride": "Cl-", "bromide": "Br-", "iodide": "I-",
    "nitrate": "NO3-", "sulfate": "SO4-2", "perchlorate": "ClO4-", "chlorate": "ClO3-", "bromate": "BrO3-",
    "lead": "Pb+2", "copper": "Cu+2", "zinc": "Zn+2", "iron(III)": "Fe+3", "iron(II)": "Fe+2",
    "aluminium": "Al+3", "manganese": "Mn+2",
}


def test_required_ions_present_with_their_old_ids_as_aliases():
    for iid, formula in REQUIRED_IONS.items():
        assert iid in list(IONS)
        assert IONS[iid].formula == formula
        assert formula in IONS[iid].aliases and IONS[formula] is IONS[iid]
    assert L.get_ion("aluminum") is IONS["aluminium"]


def test_ids_are_lowercase_words_and_aliases_never_shadow_an_id():
    for sid in SYSTEMS:
        assert re.fullmatch(r"[a-z][a-z0-9]*(-[a-z0-9]+)*", sid)
    ids = list(IONS)
    for iid, ion in IONS.items():
        assert re.fullmatch(r"[a-z]+(-[a-z]+)*(\((II|III)\))?", iid), iid
        assert iid != ion.formula
        assert not set(ion.aliases) & set(ids)
    aliases = [a for ion in IONS.values() for a in ion.aliases]
    assert len(aliases) == len(set(aliases))
    # an ion id may equal a system id only when the ion is that system's base (sulfate)
    for shared in set(SYSTEMS) & set(ids):
        assert IONS[shared].system == shared
    assert IONS["sulfate"].system == "sulfate" == SYSTEMS["sulfate"].id
    assert SYSTEMS["sulfate"].species[-1].formula == IONS["sulfate"].formula


# --------------------------------------------------------------------------- structure


def test_every_source_key_resolves():
    used = set()
    for s in SYSTEMS.values():
        used.update(s.pKa_sources)
        used.update(k for k in s.dH_sources if k)
        used.update(sp.ion_size_source for sp in s.species if sp.ion_size_source)
    used.update(i.ion_size_source for i in IONS.values() if i.ion_size_source)
    for s in SYSTEMS.values():
        used.update(k for k in s.dCp_sources if k)
    for e in L.complexes() + L.solids():
        used.update(e.sources)
    assert used <= set(SOURCES)
    for src in SOURCES.values():
        assert src.text.startswith(src.authors) and str(src.year) in src.text
        assert "from memory" in src.provenance


@pytest.mark.parametrize("sid", list(SYSTEMS))
def test_system_shape(sid):
    s = SYSTEMS[sid]
    n = len(s.pKa_25C)
    assert n >= 1
    assert len(s.species) == n + 1
    assert len(s.dH_kJ_per_mol) == len(s.pKa_sources) == len(s.dH_sources) == n
    assert len(s.pKa_ionic_strength_M) == len(s.provenance) == n
    assert all(b > a for a, b in zip(s.pKa_25C, s.pKa_25C[1:])), "pKa must increase with step"
    charges = [sp.charge for sp in s.species]
    assert all(b == a - 1 for a, b in zip(charges, charges[1:])), "charge steps down by one"
    for dH, key in zip(s.dH_kJ_per_mol, s.dH_sources):
        assert (dH is None) == (key is None)
    for prov in s.provenance:
        assert prov.startswith("from memory")
    assert s.temperature_model in L.TEMPERATURE_MODELS


@pytest.mark.parametrize("sid", list(SYSTEMS))
def test_species_masses_and_charges_follow_their_formulas(sid):
    for sp in SYSTEMS[sid].species:
        assert charge_of(sp.formula) == sp.charge == charge_of(sp.elemental_formula)
        assert sp.molar_mass_g_per_mol == pytest.approx(molar_mass(sp.elemental_formula), rel=1e-12)
        if sp.formula.replace("*", "") == sp.elemental_formula:
            assert molar_mass(sp.formula) == sp.molar_mass_g_per_mol
    s = SYSTEMS[sid]
    assert s.mass_basis_g_per_mol == pytest.approx(molar_mass(s.mass_basis), rel=1e-12)
    if s.as_formula:
        assert s.as_g_per_mol == pytest.approx(molar_mass(s.as_formula), rel=1e-12)


def test_successive_species_differ_by_one_hydrogen():
    # The proton is the only thing a dissociation step removes (H = 1.008, IUPAC 2021),
    # except for boric acid, a Lewis acid: B(OH)3 + H2O = B(OH)4- + H+ (common practice).
    for s in SYSTEMS.values():
        lost = 1.008 - molar_mass("H2O") if s.id == "boric" else 1.008
        for a, b in zip(s.species, s.species[1:]):
            diff = a.molar_mass_g_per_mol - b.molar_mass_g_per_mol
            assert diff == pytest.approx(lost, abs=1e-9 * a.molar_mass_g_per_mol), s.id


def test_ions_masses_and_charges():
    for ion in IONS.values():
        assert ion.charge == charge_of(ion.formula) != 0
        assert ion.molar_mass_g_per_mol == pytest.approx(molar_mass(ion.formula), rel=1e-12)


def test_mandated_bases():
    # Brief of the library: "mg/L as X" bases per system.
    expect = {"carbonate": "C", "phosphate": "P", "ammonium": "N", "hypochlorous": "Cl2",
              "silicic": "Si", "boric": "B", "sulfate": "S", "arsenate": "As", "arsenite": "As",
              "selenite": "Se", "chromate": "Cr", "nitrite": "N", "fluoride": "F"}
    for sid, x in expect.items():
        assert SYSTEMS[sid].as_formula == x
    assert SYSTEMS["phosphate"].mass_basis == "PO4"
    assert SYSTEMS["hypochlorous"].mass_basis == "HOCl"
    assert SYSTEMS["carbonate"].temperature_model == "carbonate-PB82"
    assert SYSTEMS["ammonium"].temperature_model == "ammonium-BP49"
    assert SYSTEMS["hypochlorous"].temperature_model == "hypochlorous-M66"
    assert [sp.formula for sp in SYSTEMS["edta"].species][0::6] == ["H6Y+2", "Y-4"]
    assert len(SYSTEMS["sulfide"].pKa_25C) == 1 and "excluded" in SYSTEMS["sulfide"].note


# --------------------------------------------------------------------------- spot checks


@pytest.mark.parametrize(
    "sid,step,printed,tol,source",
    [
        ("carbonate", 0, 6.35, 0.005, "Stumm & Morgan (1996), from memory"),
        ("carbonate", 1, 10.33, 0.005, "Stumm & Morgan (1996), from memory"),
        ("ammonium", 0, 9.25, 0.006, "Stumm & Morgan (1996), from memory"),
        ("ammonium", 0, 9.245, 1e-9, "Bates & Pinching (1949), from memory"),
        ("hypochlorous", 0, 7.54, 0.005, "Morris (1966), from memory"),
        ("acetic", 0, 4.756, 1e-9, "Goldberg, Kishore & Lennen (2002), from memory"),
        ("phosphate", 0, 2.15, 0.005, "Stumm & Morgan (1996), from memory"),
        ("phosphate", 1, 7.20, 0.005, "Stumm & Morgan (1996), from memory"),
        ("phosphate", 2, 12.35, 0.005, "Stumm & Morgan (1996), from memory"),
        ("sulfide", 0, 7.0, 0.03, "Stumm & Morgan (1996) print 7.02, from memory"),
        ("silicic", 0, 9.86, 0.04, "Stumm & Morgan (1996), from memory"),
        ("boric", 0, 9.24, 0.005, "Stumm & Morgan (1996), from memory"),
        ("fluoride", 0, 3.2, 0.03, "CRC Handbook prints 3.20, from memory"),
        ("citrate", 1, 4.76, 0.005, "common practice (citrate buffer)"),
        ("tris", 0, 8.07, 0.005, "Goldberg, Kishore & Lennen (2002), from memory"),
        ("cyanide", 0, 9.2, 0.02, "Stumm & Morgan (1996), from memory"),
    ],
)
def test_spot_checks_against_printed_pKa(sid, step, printed, tol, source):
    assert SYSTEMS[sid].pKa_25C[step] == pytest.approx(printed, abs=tol), source


def test_kielland_spot_checks():
    # Kielland (1937) table, from memory: Mg+2 8, Ca+2 6, K+ 3, NH4+ 2.5, SO4-2 4 angstrom;
    # Al+3 and Fe+3 9 (with H+), Cu+2, Zn+2, Fe+2, Mn+2 6, Pb+2 4.5.
    assert IONS["magnesium"].ion_size_A == 8
    assert IONS["calcium"].ion_size_A == 6
    assert IONS["potassium"].ion_size_A == 3
    assert SYSTEMS["ammonium"].species[0].ion_size_A == 2.5
    assert IONS["sulfate"].ion_size_A == SYSTEMS["sulfate"].species[1].ion_size_A == 4
    assert IONS["aluminium"].ion_size_A == IONS["iron(III)"].ion_size_A == 9
    for metal in ("copper", "zinc", "iron(II)", "manganese"):
        assert IONS[metal].ion_size_A == 6
    assert IONS["lead"].ion_size_A == 4.5


def test_carbonate_agrees_with_plummer_busenberg_fit():
    # Plummer & Busenberg (1982) log K1, log K2 fits (T in K), coefficients from memory.
    T = 298.15
    logK1 = -356.3094 - 0.06091964 * T + 21834.37 / T + 126.8339 * math.log10(T) - 1684915 / T**2
    logK2 = -107.8871 - 0.03252849 * T + 5151.79 / T + 38.92561 * math.log10(T) - 563713.9 / T**2
    s = SYSTEMS["carbonate"]
    assert s.pKa_25C[0] == pytest.approx(-logK1, abs=5e-4)
    assert s.pKa_25C[1] == pytest.approx(-logK2, abs=5e-4)
    # The N90 enthalpies must agree with the fit's own van 't Hoff slope, dH = R ln10 T^2 dlogK/dT.
    d1 = -0.06091964 - 21834.37 / T**2 + 126.8339 / (T * LN10) + 2 * 1684915 / T**3
    d2 = -0.03252849 - 5151.79 / T**2 + 38.92561 / (T * LN10) + 2 * 563713.9 / T**3
    assert s.dH_kJ_per_mol[0] == pytest.approx(R * LN10 * T * T * d1 / 1000, abs=0.05)
    assert s.dH_kJ_per_mol[1] == pytest.approx(R * LN10 * T * T * d2 / 1000, abs=0.05)


def test_ammonium_agrees_with_bates_pinching_fit():
    # Bates & Pinching (1949): pKa = 2835.76/T - 0.6322 + 0.001225 T, from memory.
    T = 298.15
    s = SYSTEMS["ammonium"]
    assert s.pKa_25C[0] == pytest.approx(2835.76 / T - 0.6322 + 0.001225 * T, abs=2e-3)
    assert s.dH_kJ_per_mol[0] == pytest.approx(R * LN10 * (2835.76 - 0.001225 * T * T) / 1000, abs=0.05)


def test_ammonium_note_cites_the_fit_the_code_uses():
    # The temperature model evaluates Emerson et al. (1975): pKa = 0.09018 + 2729.92/T (from memory);
    # the note must name that expression and its source.
    from acidscape.science.temperature import ammonium_BP49

    note = SYSTEMS["ammonium"].note
    assert "0.09018 + 2729.92/T" in note and "Emerson" in note
    assert ammonium_BP49(298.15) == pytest.approx(0.09018 + 2729.92 / 298.15, abs=1e-12)
    # its constant enthalpy agrees with the stored N90 value (12.48 kcal/mol, from memory)
    assert R * LN10 * 2729.92 / 1000 == pytest.approx(SYSTEMS["ammonium"].dH_kJ_per_mol[0], abs=0.1)


def test_arsenate_pKa2_is_the_critically_evaluated_zero_ionic_strength_value():
    # Martell & Smith (1976) I = 0: 6.96; Nordstrom & Archer (2003) review: 6.99 (both from memory).
    # The CRC Handbook's 6.76 is 0.2 lower and is not used.
    s = SYSTEMS["arsenate"]
    assert s.pKa_ionic_strength_M[1] == 0
    assert s.pKa_25C[1] == pytest.approx(6.99, abs=0.04)
    assert "Nordstrom & Archer" in s.note and "6.76" in s.note


def test_values_printed_at_nonzero_ionic_strength_are_converted_once():
    # Davies (1962) at 25 °C with A = 0.5116 (CODATA/Malmberg & Maryott): for HA(z) = H+ + A(z-1)
    # pKa0 = pKa_I + 2 (1 - z) A (sqrt(I)/(1 + sqrt(I)) - 0.3 I).
    A = 0.5115585887446022
    for sid in ("edta", "nta"):
        s = SYSTEMS[sid]
        for k, (printed, I, pKa0) in enumerate(zip(s.pKa_25C_printed, s.pKa_ionic_strength_M, s.pKa_25C)):
            z = s.species[k].charge
            f = 0.0 if I == 0 else A * (math.sqrt(I) / (1 + math.sqrt(I)) - 0.3 * I)
            assert pKa0 == pytest.approx(printed + 2 * (1 - z) * f, abs=1e-12), (sid, k)
    # EDTA: NIST SRD 46 at I = 0.1 M, 25 °C: 0.0 (I = 1 M), 1.5, 2.00, 2.69, 6.13, 10.37 (from memory)
    assert SYSTEMS["edta"].pKa_25C_printed == (0.0, 1.5, 2.00, 2.69, 6.13, 10.37)
    assert [round(x, 2) for x in SYSTEMS["edta"].pKa_25C] == [-0.2, 1.5, 2.22, 3.12, 6.78, 11.23]
    # thermodynamic rows are untouched
    assert SYSTEMS["phosphate"].pKa_25C == SYSTEMS["phosphate"].pKa_25C_printed == (2.148, 7.198, 12.35)


def test_hypochlorous_agrees_with_morris_fit():
    # Morris (1966): pKa = 3000.00/T - 10.0686 + 0.0253 T, from memory.
    T = 298.15
    s = SYSTEMS["hypochlorous"]
    assert s.pKa_25C[0] == pytest.approx(3000.00 / T - 10.0686 + 0.0253 * T, abs=5e-4)
    assert s.dH_kJ_per_mol[0] == pytest.approx(R * LN10 * (3000.00 - 0.0253 * T * T) / 1000, abs=0.01)


def test_enthalpy_signs_known_from_the_trade():
    # Common practice: HSO4- and HF dissociation are exothermic (their pKa rise with T);
    # NH4+ and HCO3- dissociation are endothermic.
    assert SYSTEMS["sulfate"].dH_kJ_per_mol[0] < 0
    assert SYSTEMS["fluoride"].dH_kJ_per_mol[0] < 0
    assert SYSTEMS["ammonium"].dH_kJ_per_mol[0] > 40
    assert SYSTEMS["carbonate"].dH_kJ_per_mol[1] > 0


# --------------------------------------------------------------------------- API


def test_get_system_and_ion():
    assert L.get_system("carbonate") is SYSTEMS["carbonate"]
    assert L.get_ion("Na+") is IONS["Na+"] is L.get_ion("sodium") is IONS["sodium"]
    assert L.get_ion("Fe+3").id == "iron(III)" and L.get_ion("ferric").id == "iron(III)"


def test_unknown_ids_name_the_id_and_suggest():
    with pytest.raises(UnknownIdError) as exc:
        L.get_system("carbonat")
    msg = str(exc.value)
    assert "“carbonat”" in msg and "Did you mean carbonate" in msg and "phosphate" in msg
    assert exc.value.field is None
    with pytest.raises(UnknownIdError) as exc:
        L.get_ion("na+")
    assert "Did you mean sodium" in str(exc.value) and "Na+" not in str(exc.value)  # aliases are not shown
    with pytest.raises(UnknownIdError) as exc:
        L.get_ion("coper")
    assert "Did you mean copper" in str(exc.value)
    with pytest.raises(UnknownIdError):
        L.get_system(None)


def test_accepted_units():
    assert L.accepted_units("phosphate") == ["mol/L", "mmol/L", "umol/L", "mg/L", "ug/L", "mg/L as P"]
    assert L.accepted_units(SYSTEMS["acetic"]) == ["mol/L", "mmol/L", "umol/L", "mg/L", "ug/L"]
    assert "meq/L" in L.accepted_units("Cl-") and L.accepted_units("Cl-") == L.accepted_units("chloride")
    assert "mg/L as N" in L.accepted_units(IONS["NO3-"])
    with pytest.raises(UnknownIdError):
        L.accepted_units("no-such-thing")


def test_library_as_json_is_serialisable_and_cited():
    data = L.library_as_json()
    json.dumps(data)
    assert [d["id"] for d in data] == list(SYSTEMS)
    for d in data:
        assert len(d["citations"]["pKa"]) == len(d["pKa_25C"])
        assert all(c for c in d["citations"]["pKa"])
        for h, c in zip(d["dH_kJ_per_mol"], d["citations"]["dH"]):
            assert (h is None) == (c is None)
        assert "mg/L" in d["units"] and "meq/L" not in d["units"]
    ions = L.ions_as_json()
    json.dumps(ions)
    assert {d["id"] for d in ions} == set(IONS)
    assert all("meq/L" in d["units"] for d in ions)
    assert next(d for d in ions if d["id"] == "calcium")["aliases"] == ["Ca+2"]
    assert next(d for d in ions if d["id"] == "sulfate")["system"] == "sulfate"


def test_returned_tables_are_copies():
    t = L.systems()
    t.pop("carbonate")
    assert "carbonate" in L.systems()


# --------------------------------------------------------------------------- bad data


SPECIES_OK = """system_id,index,formula,charge,elemental_formula,ion_size_A,ion_size_source,note
acetic,0,CH3COOH,0,CH3COOH,,,
acetic,1,CH3COO-,-1,CH3COO-,4.5,K37,
"""
HEADER = ("system_id,system_name,step,acid_formula,base_formula,pKa_25C,pKa_I_M,pKa_source,"
          "dH_kJ_per_mol,dH_source,temperature_model,mass_basis,as_formula,provenance,note\n")
GOOD_ROW = "acetic,Acetic acid,1,CH3COOH,CH3COO-,4.756,0,GKL02,-0.41,GKL02,vant-hoff,CH3COO,,from memory,\n"


def _write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_parser_accepts_a_good_file(tmp_path):
    sp = _write(tmp_path, "species.csv", SPECIES_OK)
    sy = _write(tmp_path, "systems.csv", "# comment\n" + HEADER + GOOD_ROW)
    out = L.parse_systems(sy, sp, source_keys=SOURCES)
    assert out["acetic"].pKa_25C == (4.756,)


@pytest.mark.parametrize(
    "row,fragment",
    [
        (GOOD_ROW.replace("4.756", "four"), "'four' is not a number"),
        (GOOD_ROW.replace("GKL02,-0.41", "NOPE,-0.41"), "unknown source key 'NOPE'"),
        (GOOD_ROW.replace("vant-hoff", "arrhenius"), "temperature_model"),
        (GOOD_ROW.replace("CH3COOH,CH3COO-", "CH3COOH,CH3COO-2"), "base_formula"),
        (GOOD_ROW.replace(",CH3COO,", ",CH3Qx,"), "mass_basis"),
        (GOOD_ROW.replace("-0.41,GKL02", "-0.41,"), "both given or both empty"),
        (GOOD_ROW.replace(",from memory,", ","), "fields"),
    ],
)
def test_bad_system_row_names_file_and_line(tmp_path, row, fragment):
    sp = _write(tmp_path, "species.csv", SPECIES_OK)
    sy = _write(tmp_path, "broken_systems.csv", "# comment line\n\n" + HEADER + row)
    with pytest.raises(L.LibraryDataError) as exc:
        L.parse_systems(sy, sp, source_keys=SOURCES)
    msg = str(exc.value)
    assert "broken_systems.csv line 4" in msg
    assert fragment in msg


def test_decreasing_pKa_is_refused(tmp_path):
    species = SPECIES_OK + "acetic,2,CH3COO-2,-2,CH3COO-2,,,\n"
    sp = _write(tmp_path, "species.csv", species)
    row2 = "acetic,Acetic acid,2,CH3COO-,CH3COO-2,4.0,0,GKL02,,,vant-hoff,CH3COO,,from memory,\n"
    sy = _write(tmp_path, "systems.csv", HEADER + GOOD_ROW + row2)
    with pytest.raises(L.LibraryDataError, match=r"systems.csv line 3: pKa_25C = 4.0 must exceed"):
        L.parse_systems(sy, sp, source_keys=SOURCES)


def test_bad_species_row_names_file_and_line(tmp_path):
    sp = _write(tmp_path, "my_species.csv", SPECIES_OK.replace("CH3COO-,-1,CH3COO-", "CH3COO-,-2,CH3COO-"))
    sy = _write(tmp_path, "systems.csv", HEADER + GOOD_ROW)
    with pytest.raises(L.LibraryDataError, match=r"my_species.csv line 3: charge = -2"):
        L.parse_systems(sy, sp, source_keys=SOURCES)


def test_bad_ion_row_names_file_and_line(tmp_path):
    text = (files("acidscape") / "data" / "ions.csv").read_text(encoding="utf-8")
    lines = text.splitlines()
    i = next(k for k, line in enumerate(lines) if line.startswith("calcium,"))
    for bad, line, fragment in [
        (lines[i].replace("calcium,Calcium,Ca+2,2,", "calcium,Calcium,Ca+2,1,"), i + 1, "charge = 1"),
        (lines[i].replace("calcium,Calcium,", "Ca+2,Calcium,"), i + 1, "must be lower-case words"),
        # calcium takes magnesium's alias: the error names the later line (magnesium's)
        (lines[i].replace(",Ca+2,,ion size", ",Mg+2,,ion size"), i + 2,
         f"ion id or alias 'Mg+2' is already used on line {i + 1}"),
    ]:
        p = _write(tmp_path, "ions.csv", "\n".join(lines[:i] + [bad] + lines[i + 1:]) + "\n")
        with pytest.raises(L.LibraryDataError) as exc:
            L.parse_ions(p, source_keys=SOURCES)
        assert f"ions.csv line {line}: " in str(exc.value) and fragment in str(exc.value)


def test_bad_source_year(tmp_path):
    p = _write(tmp_path, "sources.csv",
               "key,authors,year,title,container,volume,pages,doi,provenance\n"
               "X,A. B.,19x2,T,J,1,1-2,,citation from memory\n")
    with pytest.raises(L.LibraryDataError, match="sources.csv line 2: column 'year'"):
        L.parse_sources(p)
