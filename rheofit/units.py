"""The only place where unit text becomes numbers.

Everything inside rheofit is SI: shear rate [1/s], viscosity [Pa*s], stress
and pressure [Pa], length [m], flow rate [m^3/s], density [kg/m^3],
temperature [K].  This module turns what people type or what instruments
write (``"0.5 mm"``, ``"mPa·s"``, ``"cP"``, ``"s-1"``, ``"10 uL/min"``) into
SI floats.  The common units (the SI ones with their prefixes, litre, minute,
hour, bar, psi, poise, dyne, degC, degF, %) are read from a small table of
their own here, so reading a typical export or a CLI option loads no unit
library; anything else goes to one pint registry, created on first need.
The table agrees with pint (tests/test_units.py checks every entry against it).

>>> to_si(1.0, "cP", "viscosity")
0.001
>>> f"{parse_quantity('10 uL/min', 'flow_rate'):.4e}"
'1.6667e-10'
"""

from __future__ import annotations

import functools
import re
from fractions import Fraction

from rheofit.errors import UnitError

#: kind of quantity -> SI unit (pint spelling) it is converted to
SI_UNITS: dict[str, str] = {
    "shear_rate": "1/s",
    "viscosity": "Pa*s",
    "stress": "Pa",
    "pressure": "Pa",
    "length": "m",
    "flow_rate": "m**3/s",
    "density": "kg/m**3",
    "temperature": "K",
    "velocity": "m/s",
    "dimensionless": "",
}

#: how people and instruments write some units, rewritten to pint's spelling
_ALIASES: dict[str, str] = {
    "cp": "cP",
    "cps": "cP",
    "mpas": "mPa*s",
    "mpa.s": "mPa*s",
    "pas": "Pa*s",
    "pa.s": "Pa*s",
    "s-1": "1/s",
    "s^-1": "1/s",
    "s**-1": "1/s",
    "sec-1": "1/s",
    "1/sec": "1/s",
    "rpm": "",  # caught below: not a shear rate
    "°c": "degC",
    "ºc": "degC",
    "deg c": "degC",
    "c": "degC",
    "k": "K",
    "°f": "degF",
    "℃": "degC",
    "1/s": "1/s",  # also "1/S" from all-capital headers (S alone would be siemens)
    "/s": "1/s",
    "s^(-1)": "1/s",
    "pa-s": "Pa*s",
    "mpa-s": "mPa*s",
    "dyn/cm2": "dyn/cm**2",
    "dyne/cm2": "dyn/cm**2",
    "n/m2": "N/m**2",
}

#: rotational speeds and frequencies: pint reads them as 1/s, but they are no shear rate
_NOT_SHEAR_RATE = {"rpm", "rev/min", "rps", "rev/s", "rad/s", "hz"}


def _key(text: str) -> str:
    """Lower-case, bracket- and space-free spelling used to look units up."""
    return text.strip().strip("[]()").strip().lower().replace(" ", "")


def _normalise(text: str) -> str:
    """Rewrite typographic variants (·, ⁻¹, µ, superscripts) to pint syntax."""
    t = text.strip().strip("[]()").strip()
    key = t.lower().replace(" ", "")
    if key in _ALIASES and _ALIASES[key]:
        return _ALIASES[key]
    if t.lower() in _ALIASES and _ALIASES[t.lower()]:
        return _ALIASES[t.lower()]
    t = (
        t.replace("·", "*").replace("⋅", "*").replace("×", "*")
        .replace("µ", "u").replace("μ", "u")
        .replace("⁻¹", "^-1").replace("⁻²", "^-2").replace("⁻³", "^-3")
        .replace("²", "^2").replace("³", "^3")
        .replace("°C", "degC").replace("ºC", "degC")
    )
    t = re.sub(r"(?<=[A-Za-z])\.(?=[A-Za-z])", "*", t)  # Pa.s -> Pa*s
    t = re.sub(r"\bs-1\b", "1/s", t)
    t = re.sub(r"\bcps\b", "cP", t, flags=re.IGNORECASE)
    t = re.sub(r"\bmPas\b", "mPa*s", t)
    t = re.sub(r"\bPas\b", "Pa*s", t)
    return t


# --- the common units, without pint -----------------------------------------------

#: exponents of (length, mass, time, temperature) of each kind of quantity
_DIMENSIONS: dict[str, tuple[int, int, int, int]] = {
    "shear_rate": (0, 0, -1, 0),
    "viscosity": (-1, 1, -1, 0),
    "stress": (-1, 1, -2, 0),
    "pressure": (-1, 1, -2, 0),
    "length": (1, 0, 0, 0),
    "flow_rate": (3, 0, -1, 0),
    "density": (-3, 1, 0, 0),
    "temperature": (0, 0, 0, 1),
    "velocity": (1, 0, -1, 0),
    "dimensionless": (0, 0, 0, 0),
}

_PASCAL = (-1, 1, -2, 0)
_LBF = Fraction("0.45359237") * Fraction("9.80665")  # pound-force [N]
#: symbol -> (SI factor, dimensions).  SI Brochure, 9th ed. (2019), Tables 2, 8
#: (litre, minute, hour, bar, and 1 P = 0.1 Pa s, 1 dyn = 1e-5 N); NIST SP 811
#: (2008), appendix B (pound-force from the international pound and standard gravity).
_UNITS: dict[str, tuple[Fraction, tuple[int, int, int, int]]] = {
    "m": (Fraction(1), (1, 0, 0, 0)),
    "L": (Fraction(1, 1000), (3, 0, 0, 0)),
    "l": (Fraction(1, 1000), (3, 0, 0, 0)),
    "g": (Fraction(1, 1000), (0, 1, 0, 0)),
    "s": (Fraction(1), (0, 0, 1, 0)),
    "min": (Fraction(60), (0, 0, 1, 0)),
    "h": (Fraction(3600), (0, 0, 1, 0)),
    "Pa": (Fraction(1), _PASCAL),
    "bar": (Fraction(100_000), _PASCAL),
    "psi": (_LBF / Fraction("0.0254") ** 2, _PASCAL),
    "P": (Fraction(1, 10), (-1, 1, -1, 0)),
    "poise": (Fraction(1, 10), (-1, 1, -1, 0)),
    "N": (Fraction(1), (1, 1, -2, 0)),
    "dyn": (Fraction(1, 100_000), (1, 1, -2, 0)),
    "K": (Fraction(1), (0, 0, 0, 1)),
    "%": (Fraction(1, 100), (0, 0, 0, 0)),
}
#: symbols that take an SI prefix, and the prefixes (SI Brochure 2019, Table 7)
_PREFIXABLE = frozenset({"m", "L", "l", "g", "s", "Pa", "bar", "P", "N"})
_PREFIXES = {"p": Fraction(1, 10**12), "n": Fraction(1, 10**9), "u": Fraction(1, 10**6),
             "m": Fraction(1, 1000), "c": Fraction(1, 100), "d": Fraction(1, 10),
             "k": Fraction(1000), "M": Fraction(10**6), "G": Fraction(10**9)}
#: temperatures with a zero of their own: (scale, offset) with K = value * scale + offset
#: (SI Brochure 2019, sec. 2.3.1; NIST SP 811 (2008), appendix B for degF)
_OFFSET_UNITS = {"degC": (1.0, 273.15), "degF": (5.0 / 9.0, 459.67 * 5.0 / 9.0)}
_TOKEN = re.compile(r"\s*(?:(\*\*|\^)\s*([-+]?\d+)|([*/])|(\d+)|([A-Za-z%]+))")

#: words of headers and notes that are no unit at all (checked against pint in
#: the tests): text holding one is no unit, and pint is not loaded to say so
_PLAIN_WORDS = frozenset("""rate sweep shear high low steady to viscosity stress temperature
    sample file data curve flow step up down and of from mean apparent measured""".split())


def _symbol(word: str):
    """(factor, dimensions) of one unit symbol, with an SI prefix where it takes one."""
    if word in _UNITS:
        return _UNITS[word]
    prefix, rest = word[:1], word[1:]
    if prefix in _PREFIXES and rest in _PREFIXABLE:
        factor, dims = _UNITS[rest]
        return _PREFIXES[prefix] * factor, dims
    return None


def _table_unit(text: str):
    """(SI factor, dimensions, offset) of ``text`` in pint syntax, from the table; None if not there.

    Reads products and quotients of symbols with integer powers, left to
    right as pint does: "kg/m**3", "uL/min", "mPa*s", "Pa s" (a space
    multiplies), "1/s"; "a/b c" is (a/b) c.
    """
    if text in _OFFSET_UNITS:
        scale, offset = _OFFSET_UNITS[text]
        return scale, _DIMENSIONS["temperature"], offset
    factors, sign, operator, position = [], 1, None, 0  # factors: [sign, (factor, dims), power]
    while position < len(text):
        match = _TOKEN.match(text, position)
        if match is None:
            return None
        position = match.end()
        power, operator, number, word = match.group(2, 3, 4, 5)
        if power is not None:
            if not factors or factors[-1][2] is not None:
                return None
            factors[-1][2] = int(power)
        elif operator is not None:
            sign = -1 if operator == "/" else 1
        elif number is not None:
            if number != "1" or factors:  # only the 1 of "1/s"
                return None
        else:
            found = _symbol(word)
            if found is None:
                return None
            factors.append([sign, found, None])
            sign = 1
    if not factors or operator is not None:
        return None
    factor, dims = Fraction(1), (0, 0, 0, 0)
    for sign, (f, d), power in factors:
        exponent = sign * (1 if power is None else power)
        factor *= f ** exponent
        dims = tuple(a + exponent * b for a, b in zip(dims, d))
    return float(factor), dims, 0.0


def _plainly_no_unit(text: str) -> bool:
    """True for text that no unit library reads as a unit (punctuation, ordinary words)."""
    return bool(re.search(r"[;,:=]", text)) or any(
        w.lower() in _PLAIN_WORDS for w in re.findall(r"[A-Za-z]+", text))


@functools.lru_cache(maxsize=1)
def registry():
    """The application's single pint registry (created on first use)."""
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    return ureg


@functools.lru_cache(maxsize=256)
def _conversion(unit_text: str, kind: str) -> tuple[float, float]:
    """(scale, offset) with si = value * scale + offset, or raise UnitError."""
    if kind not in SI_UNITS:
        raise UnitError(f"Unknown quantity kind '{kind}'; known: {', '.join(SI_UNITS)}.")
    if kind == "shear_rate" and _key(unit_text) in _NOT_SHEAR_RATE:
        raise UnitError(
            f"Unit '{unit_text}' is a rotational speed or frequency, not a shear rate; "
            "convert it with the measuring geometry's shear-rate factor or give the shear rate in 1/s."
        )
    text = _normalise(unit_text)
    if not text and kind == "dimensionless":
        return 1.0, 0.0
    found = _table_unit(text)
    if found is None and _plainly_no_unit(text):
        raise UnitError(_unknown(unit_text, kind))
    scale, dims, offset = found if found is not None else _pint_conversion(text, unit_text, kind)
    if dims != _DIMENSIONS[kind]:
        raise UnitError(
            f"Unit '{unit_text}' is not a unit of {kind.replace('_', ' ')}; "
            f"expected something like '{_EXAMPLES[kind]}'."
        )
    return scale, offset


def _unknown(unit_text: str, kind: str) -> str:
    return (f"Unknown unit '{unit_text}' for {kind.replace('_', ' ')}; "
            f"expected something like '{_EXAMPLES[kind]}'.")


def _pint_conversion(text: str, unit_text: str, kind: str):
    """(scale, dimensions, offset) from pint, for units the table does not hold."""
    ureg = registry()
    try:
        unit = ureg.Unit(text) if text else None
    except Exception:
        unit = None
    if unit is None:
        raise UnitError(_unknown(unit_text, kind))
    target = ureg.Unit(SI_UNITS[kind]) if SI_UNITS[kind] else ureg.dimensionless
    if unit.dimensionality != target.dimensionality:
        return 1.0, None, 0.0  # reported as the wrong kind by the caller
    zero = ureg.Quantity(0.0, unit).to(target).magnitude
    one = ureg.Quantity(1.0, unit).to(target).magnitude
    return float(one - zero), _DIMENSIONS[kind], float(zero)


_EXAMPLES: dict[str, str] = {
    "shear_rate": "1/s",
    "viscosity": "Pa·s, mPa·s or cP",
    "stress": "Pa",
    "pressure": "kPa, bar or psi",
    "length": "mm or um",
    "flow_rate": "uL/min or mL/h",
    "density": "kg/m^3 or g/mL",
    "temperature": "°C or K",
    "velocity": "mm/s",
    "dimensionless": "(no unit)",
}


def to_si(value, unit_text: str, kind: str):
    """Convert ``value`` (scalar or array) given in ``unit_text`` to SI for ``kind``.

    Raises UnitError naming the unit when it is unknown or of the wrong kind.
    """
    scale, offset = _conversion(unit_text, kind)
    return value * scale + offset


def is_unit_of(unit_text: str, kind: str) -> bool:
    """True when ``unit_text`` parses as a unit of ``kind``."""
    try:
        _conversion(unit_text, kind)
    except UnitError:
        return False
    return True


_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def parse_quantity(text, kind: str) -> float:
    """Parse ``"0.5 mm"``-style text (or a bare number, taken as SI) to an SI float.

    >>> parse_quantity("25 kPa", "pressure")
    25000.0
    """
    if isinstance(text, (int, float)):
        return float(text)
    match = _NUMBER.match(str(text))
    if not match:
        if kind == "dimensionless":
            raise UnitError(f"Cannot read '{text}' as a number; write a plain number such as '0.1'.")
        raise UnitError(
            f"Cannot read '{text}' as a {kind.replace('_', ' ')}; "
            f"write a number and a unit, e.g. '{_first_example(kind)}'."
        )
    number, unit = float(match.group(1)), match.group(2)
    if not unit:
        return number
    return float(to_si(number, unit, kind))


def _first_example(kind: str) -> str:
    return "1 " + _EXAMPLES.get(kind, "").split(",")[0].split(" or ")[0]
