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
import math
import numbers
import re
from fractions import Fraction

from rheofit.errors import ParameterError, UnitError

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


#: units of each kind as people write them, the one most used at the bench first (shown in messages)
_EXAMPLES: dict[str, str] = {
    "shear_rate": "1/s",
    "viscosity": "mPa·s, Pa·s or cP",
    "stress": "Pa",
    "pressure": "kPa, bar or psi",
    "length": "mm or um",
    "flow_rate": "uL/min or mL/h",
    "density": "g/mL or kg/m^3",
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


#: a typed quantity: a number (digits with '.' or ',', an exponent; or nan/inf) and the rest
_TYPED = re.compile(
    r"^\s*(?P<number>[-+]?(?:nan|inf(?:inity)?)(?![a-z])|[-+]?[\d.,]*\d[\d.,]*(?:[eE][-+]?\d+)?)"
    r"\s*(?P<unit>.*?)\s*$",
    re.IGNORECASE,
)


def read_number(token: str) -> float:
    """A number as people type it: '0.5', '0,5' (a decimal comma), '1e-3', 'nan', 'inf'.

    Raises ValueError with the reason when the number is ambiguous ('1,500':
    a decimal comma or a thousands separator?) or unreadable ('1,000.5').

    >>> read_number("0,5"), read_number("2.5e3")
    (0.5, 2500.0)
    """
    if "," in token:
        whole, _, fraction = token.partition(",")
        if "," in fraction or "." in token:
            raise ValueError("has a thousands separator or several decimal marks; write the number "
                             "with one decimal point and no separators")
        if len(fraction.partition("e")[0].partition("E")[0]) == 3 and whole.lstrip("+-") not in ("", "0"):
            raise ValueError(f"could be {whole}.{fraction} (a decimal comma) or {whole}{fraction} "
                             "(a thousands separator); write it with a decimal point")
        token = f"{whole}.{fraction}"
    return float(token)  # ValueError for '1.2.3'


def parse_typed(text, kind: str, option: str, *, positive: bool = True) -> float:
    """A quantity typed by a user (``"0.5 mm"``, ``"10 uL/min"``, ``"0,5 mm"``) -> SI float.

    The unit is required: a bare number is refused with an example, since
    ``0.5`` for a diameter could mean metres as easily as millimetres.  Also
    refused, each in one sentence naming ``option``: an unreadable or ambiguous
    number, nan and inf, a value that overflows ('1e400 mm'), an unknown unit
    or one of another kind, and (``positive``) zero or a negative value.

    >>> parse_typed("0,5 mm", "length", "--diameter")
    0.0005
    >>> parse_typed("0.5", "length", "--diameter")
    Traceback (most recent call last):
    ...
    rheofit.errors.UnitError: --diameter '0.5' has no unit; give a number and a unit of length (mm or um), e.g. '0.5 mm'.
    """
    words = kind.replace("_", " ")
    match = _TYPED.match(str(text))
    if not match:
        raise UnitError(f"Cannot read {option} '{text}' as a {words}; write a number and a unit, "
                        f"e.g. '{_first_example(kind)}'.")
    number_text, unit = match.group("number"), match.group("unit")
    try:
        number = read_number(number_text)
    except ValueError as exc:
        reason = str(exc) if "write" in str(exc) else "cannot be read; write a number such as '0.5'"
        raise UnitError(f"{option} '{text}': the number '{number_text}' {reason}.") from None
    if math.isnan(number) or (math.isinf(number) and number_text.lstrip("+-")[:1].isalpha()):
        raise UnitError(f"{option} '{text}' is not a finite number; give a {words} such as "
                        f"'{_first_example(kind)}'.")
    if not unit and kind != "dimensionless":
        example = f"{number_text} {_example_unit(kind)}" if number > 0 else _first_example(kind)
        raise UnitError(f"{option} '{text}' has no unit; give a number and a unit of {words} "
                        f"({_EXAMPLES[kind]}), e.g. '{example}'.")
    try:
        value = float(to_si(number, unit, kind))
    except UnitError as exc:
        problem = str(exc)
        raise UnitError(f"{option} '{text}': {problem[0].lower()}{problem[1:]}") from None
    if not math.isfinite(value):
        raise UnitError(f"{option} '{text}' is too large to compute with (it overflows); "
                        f"give a {words} such as '{_first_example(kind)}'.")
    if positive and value <= 0:
        sign = "zero" if value == 0 else "negative"
        raise UnitError(f"{option} '{text}' is {sign}; a {words} must be positive, "
                        f"e.g. '{_first_example(kind)}'.")
    return value


def parse_quantity(value, kind: str, name: str | None = None) -> float:
    """A number (taken as SI) or text with a unit (``"0.5 mm"``) -> SI float.

    Text is what a person typed, so it must carry its unit (see
    :func:`parse_typed`; ``name`` is how its messages call the value); only
    a number, not a string, is taken as SI.  The sign is left to the caller.

    >>> parse_quantity("25 kPa", "pressure"), parse_quantity(0.001, "length")
    (25000.0, 0.001)
    """
    if isinstance(value, numbers.Real):
        return float(value)
    return parse_typed(value, kind, name or kind.replace("_", " "), positive=False)


def counting_number(text) -> int | None:
    """A whole number written in ASCII digits ('3', ' 12 ') -> int, else None.

    ``str.isdigit`` is also true for '²', '①' or '¹', which ``int`` refuses;
    only 0-9 count here.

    >>> counting_number(" 12 "), counting_number("²"), counting_number("①"), counting_number("-1")
    (12, None, None, None)
    """
    text = str(text).strip()
    return int(text) if text and text.isascii() and text.isdigit() else None


def parse_tolerance(value, label: str = "tolerance") -> float:
    """A relative tolerance [-]: '10%', '10 %', or a fraction below 1 ('0.1', 0.1) -> 0.1.

    A bare number of 1 or more is refused: it could be a percentage as well
    as a fraction (``10`` is not 1000 %, ``1`` not 100 %), so a percentage
    carries its ``%``.  Raises ParameterError, quoting ``value`` after
    ``label`` (e.g. the option name), unless it is a positive finite fraction.

    >>> parse_tolerance("2.5 %"), parse_tolerance("0,1")
    (0.025, 0.1)
    """
    percent, number = False, math.nan
    if isinstance(value, numbers.Real):
        number = float(value)
    elif isinstance(value, str):
        text = value.strip()
        percent = text.endswith("%")
        try:
            number = read_number(text[:-1].strip() if percent else text)
        except ValueError:
            pass
    fraction = number / 100 if percent else number
    if not (math.isfinite(fraction) and fraction > 0):
        raise ParameterError(
            f"{label} {value!r} is not a positive fraction or percentage; write e.g. '10%', "
            "'10 %' or 0.1."
        )
    if not percent and number >= 1:
        raise ParameterError(
            f"{label} {value!r} is ambiguous (as a fraction it means {number * 100:g} %); write "
            f"'{number:g}%' for {number:g} percent, or a fraction below 1 such as 0.1."
        )
    return fraction


def _example_unit(kind: str) -> str:
    """The first unit of a kind's examples ('mm' for length)."""
    return _EXAMPLES.get(kind, "").split(",")[0].split(" or ")[0]


def _first_example(kind: str) -> str:
    return "1 " + _example_unit(kind)
