"""Validation helpers shared by every layer, and the words a message uses for each input.

Every message a user can see names the input the way the page names it ("the measured pH",
"the temperature", "the density of the product"), gives the allowed range with its unit and
says what to do. The error's ``field`` keeps the input's scenario path (``measured.pH``,
``systems[2].total``) so the page can put the message beside that input; only the text is in
words.

Constants
---------
PH_RANGE          the one range of every pH a user types [-]
MAX_TOTAL_M       the largest total of one system or ion, titrant or chemical strength [mol/L]
MAX_SAMPLE_ML     the largest titration sample [mL]
MAX_FLOW_L_PER_D  the largest plant flow [L/d]
LIMITS            the limits above as plain JSON, for the page (in the ``systems`` catalogue)

Functions
---------
number(value, field, lo=None, hi=None, above=None, allow_text=False) -> float
whole(value, field, lo=None, hi=None) -> int
describe(field) -> str          the words for an input ("the measured pH")
sentence(text) -> str           first letter upper case, unless the text starts with a symbol (pH)
fmt(value) -> str               a number as a person writes it (no "e+06")
missing(field) / choice(field, value, options)   InputError for a missing or unknown value

``number`` and ``whole`` raise :class:`acidscape.errors.InputError` naming ``field``, the value
and what is allowed; neither ever returns NaN or clamps.
"""

from __future__ import annotations

import math
import re
from decimal import Decimal

from .errors import InputError, sentence

#: The one accepted range of every pH a user types: a water's measured or fixed pH, a target or
#: end-point pH, the pH range of a curve or a buffer capacity. 0 to 14 is the pH scale of dilute
#: water at 25 °C (pKw = 14.0 [Bandura & Lvov 2006, IAPWS R11-07]); natural and treated waters,
#: titrations to the usual end points and every dose a plant makes lie well inside it (common
#: practice). Values outside (strong acids above 1 mol/L, caustic above 1 mol/L) are beyond the
#: activity models the core uses anyway (Davies: I below about 0.5 mol/L).
PH_RANGE = (0.0, 14.0)
#: Accepted water temperature [°C]: liquid water at 1 atm, the range of the temperature corrections.
TEMPERATURE_RANGE_C = (0.0, 100.0)
#: Largest total of one system or ion, and largest titrant or product strength [mol/L]: 5 mol/L is
#: beyond any water, and beyond what the activity models describe (they hold to about 0.5 mol/L).
MAX_TOTAL_M = 5.0
#: Largest sample volume of a titration [mL]: 10 L, beyond any bench titration (50-250 mL is usual,
#: common practice).
MAX_SAMPLE_ML = 1e4
#: Largest plant flow [L/d]: 10^10 L/d (10 million m3/d, about 2,600 MGD) is above the largest
#: treatment plants in the world, which treat a few million m3/d (from memory).
MAX_FLOW_L_PER_D = 1e10

#: Limits for the page (the page reads them from the core instead of keeping copies).
LIMITS = {"pH": list(PH_RANGE), "total_M": MAX_TOTAL_M, "flow_L_per_d": MAX_FLOW_L_PER_D,
          "sample_mL": MAX_SAMPLE_ML, "temperature_C": list(TEMPERATURE_RANGE_C)}

# -- the words for each input -------------------------------------------------------------------
# Keys are scenario paths with list positions written "[]"; "{0}", "{1}" stand for the 1-based
# positions. Each entry: (words in the middle of a sentence, unit or "").
LABELS: dict[str, tuple[str, str]] = {
    # the water
    "scenario": ("the water", ""),
    "temperature_C": ("the temperature", "°C"),
    "activity": ("the activity model", ""),
    "ionic_strength_M": ("the ionic strength", "mol/L"),
    "tds_mg_per_L": ("the total dissolved solids", "mg/L"),
    "conductance_uS_per_cm": ("the specific conductance", "µS/cm"),
    "pH": ("the pH", ""),  # a water's fixed pH, or the one-acid explorer's pH: the same words fit both
    "systems": ("the list of acid-base systems", ""),
    "ions": ("the list of ions", ""),
    "systems[]": ("acid-base system {0}", ""),
    "ions[]": ("ion {0}", ""),
    "id": ("the choice from the list", ""),
    "total": ("the amount", ""),
    "unit": ("the unit", ""),
    "custom": ("the custom entry", ""),
    "custom.name": ("the name", ""),
    "custom.pKa": ("the pKa values", ""),
    "custom.pKa[]": ("pKa value {0}", ""),
    "custom.charge_most_protonated": ("the charge of the most protonated form", ""),
    "custom.charge": ("the charge", ""),
    "custom.molar_mass_g_per_mol": ("the molar mass", "g/mol"),
    "gas": ("the CO₂ partial pressure", ""),
    "gas.CO2_partial_pressure_atm": ("the CO₂ partial pressure", "atm"),
    "complexes": ("the ion pairs and complexes switch", ""),
    "precipitate": ("the list of solids allowed to form", ""),
    "precipitate[]": ("solid {0} allowed to form", ""),
    "ccpp_open_CO2_partial_pressure_atm": ("the CO₂ partial pressure for the open-system CCPP", "atm"),
    "ccpp_temperatures_C": ("the further temperatures for the calcium carbonate indices", "°C"),
    "ccpp_temperatures_C[]": ("further temperature {0}", "°C"),
    "uncertainty": ("the uncertainty switch", ""),
    "measured": ("the measurements", ""),
    "measured.pH": ("the measured pH", ""),
    "measured.alkalinity": ("the measured alkalinity", ""),
    "measured.alkalinity.value": ("the measured alkalinity", ""),
    "measured.alkalinity.unit": ("the alkalinity unit", ""),
    "measured.alkalinity.definition": ("the kind of alkalinity", ""),
    "measured.alkalinity.end_point_pH": ("the alkalinity end-point pH", ""),
    # one acid (the explorer)
    "system": ("the acid", ""),
    "pKa": ("the pKa values", ""),
    "pKa[]": ("pKa value {0}", ""),
    "name": ("the name", ""),
    "charge_most_protonated": ("the charge of the most protonated form", ""),
    "total_M": ("the total", "mol/L"),
    "pH_min": ("the lowest pH of the plot", ""),
    "pH_max": ("the highest pH of the plot", ""),
    "points": ("the number of points", ""),
    "curve": ("the curve settings", ""),
    "curve.pH_min": ("the lowest pH of the plot", ""),
    "curve.pH_max": ("the highest pH of the plot", ""),
    # titration, dose, buffer
    "titrant": ("the titrant", ""),
    "titrant_M": ("the titrant concentration", "mol/L"),
    "sample_mL": ("the sample volume", "mL"),
    "to_pH": ("the end pH", ""),
    "to_mL": ("the titrant volume", "mL"),
    "fixed_pH": ("the buffered pH", ""),
    "chemical": ("the chemical", ""),
    "target_pH": ("the target pH", ""),
    "target_LSI": ("the target LSI", ""),
    "target_CCPP": ("the target CCPP", "mg/L as CaCO3"),
    "dose_mg_per_L": ("the dose", "mg/L"),
    "strength_pct": ("the strength of the product", "%"),
    "density_kg_per_L": ("the density of the product", "kg/L"),
    "flow": ("the plant flow", ""),
    "flow_unit": ("the flow unit", ""),
    "capacity": ("the buffer capacity range", ""),
    "capacity.from_pH": ("the buffer capacity's start pH", ""),
    "capacity.to_pH": ("the buffer capacity's end pH", ""),
    # treatment, blends, softening
    "steps": ("the list of treatment steps", ""),
    "steps[]": ("treatment step {0}", ""),
    "note": ("the note", ""),
    "waters": ("the waters to blend", ""),
    "waters[]": ("water {0}", ""),
    "names": ("the names of the waters", ""),
    "fractions": ("the shares of the flow", ""),
    "fractions[]": ("the share of water {0}", ""),
    "softening_pH": ("the softening pH", ""),
    "first_stage_pH": ("the first-stage pH", ""),
    "lime_mg_per_L": ("the lime dose", "mg/L"),
    "soda_ash_mg_per_L": ("the soda ash dose", "mg/L"),
    "target_hardness_mg_per_L_as_CaCO3": ("the target hardness", "mg/L as CaCO3"),
    "excess_lime_meq_per_L": ("the excess lime", "meq/L"),
    "remove_magnesium": ("the magnesium removal switch", ""),
    "recarbonation": ("the recarbonation step", ""),
    # lead and copper, hardness
    "metal": ("the metal", ""),
    "metals": ("the metals", ""),
    "axis": ("the quantity along the axis", ""),
    "from": ("the start of the axis", ""),
    "to": ("the end of the axis", ""),
    "solids": ("the solids", ""),
    "pH_from": ("the lowest pH", ""),
    "pH_to": ("the highest pH", ""),
    "P": ("the phenolphthalein alkalinity", ""),
    "T": ("the total alkalinity", ""),
    "max_rows": ("the number of rows", ""),
    "jobs": ("the number of jobs", ""),
}

_INDEX = re.compile(r"\[(\d+)\]")
_LAST_ITEM = re.compile(r"^(.*\[\d+\])\.(.+)$")
_UNIT_SUFFIX = re.compile(r"_(C|K|M|mL|pct|atm|mg_per_L.*|meq_per_L|kg_per_L|g_per_mol|uS_per_cm|L_per_d)$")


def _words(key: str) -> str:
    """Words for a key that has no entry: its unit suffix dropped, underscores as spaces."""
    leaf = key.split(".")[-1].replace("[]", "")
    leaf = _UNIT_SUFFIX.sub("", leaf).replace("_", " ").strip() or "value"
    return "the " + leaf


def _label(field: str | None) -> tuple[str, str]:
    if not field:
        return "this value", ""
    positions = [int(k) + 1 for k in _INDEX.findall(field)]
    key = _INDEX.sub("[]", field)
    if key in LABELS:
        words, unit = LABELS[key]
        return words.format(*positions), unit
    # "steps[1].target_pH" -> "the target pH in treatment step 2" (split after the last list position)
    split = _LAST_ITEM.match(field)
    if split:
        words, unit = _label(split.group(2))
        return f"{words} in {_label(split.group(1))[0]}", unit
    if "." in key:  # a known block and a key inside it ("recarbonation.precipitate[0]")
        head, leaf = key.rsplit(".", 1)
        if leaf in LABELS:
            words, unit = LABELS[leaf]
            return words.format(*positions[-leaf.count("[]") or len(positions):]), unit
    return _words(key), ""


def describe(field: str | None) -> str:
    """The words a message uses for an input, in the middle of a sentence.

    >>> describe("measured.pH")
    'the measured pH'
    >>> describe("systems[2].total")
    'the amount in acid-base system 3'
    >>> describe("steps[1].density_kg_per_L")
    'the density of the product in treatment step 2'
    >>> describe("waters[0].measured.alkalinity.value")
    'the measured alkalinity in water 1'
    """
    return _label(field)[0]


def unit_of(field: str | None) -> str:
    """The unit of an input as a message writes it ("°C"), or "".

    >>> unit_of("temperature_C")
    '°C'
    """
    return _label(field)[1]


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def fmt(value: float) -> str:
    """A number as a person writes it: up to 6 significant digits, no exponent between 10⁻⁴
    and 10¹⁵, else "4.62 × 10²⁸⁶".

    >>> fmt(1e6), fmt(12.5), fmt(0.00042), fmt(1e20), fmt(-4.62e-286)
    ('1000000', '12.5', '0.00042', '1 × 10²⁰', '-4.62 × 10⁻²⁸⁶')
    """
    v = float(value)
    if not math.isfinite(v):
        return "an endless number"
    if v == 0.0:
        return "0"
    if 1e-4 <= abs(v) < 1e15:
        d = Decimal(f"{v:.6g}")
        s = format(d, "f")
        if "." in s:
            s = s.rstrip("0").rstrip(".")
        return s
    mant, exp = f"{v:.3g}".split("e")
    return f"{mant} × 10{str(int(exp)).translate(_SUPERSCRIPT)}"


def _with_unit(value: float, unit: str) -> str:
    if not unit:
        return fmt(value)
    return f"{fmt(value)}%" if unit == "%" else f"{fmt(value)} {unit}"


def range_words(lo: float | None, hi: float | None, unit: str = "", *, above: float | None = None) -> str:
    """The allowed range in words ("from 0 to 14", "above 0 and at most 100 %").

    >>> range_words(0, 100, "°C")
    'from 0 to 100 °C'
    >>> range_words(None, 100, "%", above=0)
    'above 0 and at most 100%'
    """
    if above is not None:
        return f"above {fmt(above)}" + (f" and at most {_with_unit(hi, unit)}" if hi is not None
                                          else (f" {unit}" if unit else ""))
    if lo is not None and hi is not None:
        return f"from {fmt(lo)} to {_with_unit(hi, unit)}"
    if lo is not None:
        return "zero or more" + (f" {unit}" if unit else "") if lo == 0 else f"at least {_with_unit(lo, unit)}"
    if hi is not None:
        return f"at most {_with_unit(hi, unit)}"
    return "a number"


def shown(value) -> str:
    """What the user gave, for quoting in a message (text in quotes, short; no Python reprs)."""
    if isinstance(value, str):
        text = value.strip()
        return f"“{text[:40]}{'…' if len(text) > 40 else ''}”"
    if isinstance(value, bool):
        return "a yes/no value"
    if value is None:
        return "nothing"
    if isinstance(value, (int, float)):
        return fmt(value)
    if isinstance(value, (list, tuple)):
        return "a list"
    if isinstance(value, dict):
        return "a group of values"
    return "a value of another kind"


def missing(field: str, hint: str = "") -> InputError:
    """The error for an input that was not given ("Enter the target pH (from 0 to 14).").

    >>> str(missing("target_pH", "from 0 to 14"))
    'Enter the target pH (from 0 to 14).'
    """
    return InputError(f"Enter {describe(field)}" + (f" ({hint})." if hint else "."), field=field)


def choice(field: str, value, options, error=InputError):
    """The error for a value that is not one of ``options`` (words, not Python reprs).

    >>> str(choice("flow_unit", "m3/s", ["m3/d", "L/s"]))
    'The flow unit “m3/s” is not offered; choose one of m3/d, L/s.'
    """
    options = list(options)
    got = f" {shown(value)}" if isinstance(value, str) and value.strip() else ""
    what = "is not offered" if got else "is missing"
    return error(sentence(f"{describe(field)}{got} {what}; choose one of {', '.join(map(str, options))}."),
                 field=field)


def _range_error(field: str, v: float, lo, hi, above=None) -> InputError:
    unit = unit_of(field)
    return InputError(sentence(f"{describe(field)} must be {range_words(lo, hi, unit, above=above)} "
                               f"(you entered {_with_unit(v, unit)})."), field=field)


def number(value, field: str, *, lo: float | None = None, hi: float | None = None,
           above: float | None = None, allow_text: bool = False) -> float:
    """A finite float within [lo, hi] (and above ``above``, when given).

    Parameters
    ----------
    value : object
        What was given
    field : str
        The input's scenario path (``"measured.pH"``); the message names it in words
    lo, hi : float, optional
        Inclusive limits [unit of the field]
    above : float, optional
        Exclusive lower limit [unit of the field]
    allow_text : bool
        Accept a number written as text (``" 7.5"``)

    >>> number(" 7.5", "pH", allow_text=True)
    7.5
    >>> number(True, "measured.pH")
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: The measured pH must be a number (from 0 to 14); a yes/no value is not one.
    >>> number(500, "temperature_C", lo=0, hi=100)
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: The temperature must be from 0 to 100 °C (you entered 500 °C).
    """
    # the hint in words is written only for a message (it costs more than the check itself)
    if isinstance(value, str) and allow_text:
        try:
            value = float(value.strip())
        except ValueError:
            raise InputError(sentence(f"{describe(field)} must be a number ({_hint(field, lo, hi, above)}); "
                                      f"{shown(value)} is not one."), field=field) from None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(sentence(f"{describe(field)} must be a number ({_hint(field, lo, hi, above)}); "
                                  f"{shown(value)} is not one."), field=field)
    v = float(value)
    if not math.isfinite(v):
        raise InputError(sentence(f"{describe(field)} is too large to use; enter a number "
                                  f"{_hint(field, lo, hi, above)}."), field=field)
    if (lo is not None and v < lo) or (hi is not None and v > hi) or (above is not None and not v > above):
        raise _range_error(field, v, lo, hi, above)
    return v


def _hint(field: str, lo, hi, above) -> str:
    if lo is None and hi is None and above is None:
        if "pH" in field.rsplit(".", 1)[-1]:
            lo, hi = PH_RANGE
        else:
            return "for example 7.5" if not unit_of(field) else f"in {unit_of(field)}"
    return range_words(lo, hi, unit_of(field), above=above)


def whole(value, field: str, *, lo: int | None = None, hi: int | None = None) -> int:
    """A whole number within [lo, hi] (a float with no fraction is accepted).

    >>> whole(3.0, "points")
    3
    >>> whole(2.5, "points", lo=2, hi=10)
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: The number of points must be a whole number from 2 to 10; 2.5 is not one.
    """
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, bool) or not isinstance(value, int):
        rng = f" {range_words(lo, hi)}" if lo is not None or hi is not None else ""
        raise InputError(sentence(f"{describe(field)} must be a whole number{rng}; {shown(value)} is not one."),
                         field=field)
    if (lo is not None and value < lo) or (hi is not None and value > hi):
        raise _range_error(field, value, lo, hi)
    return value
