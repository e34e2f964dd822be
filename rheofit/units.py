"""The only place where unit text becomes numbers.

Everything inside rheofit is SI: shear rate [1/s], viscosity [Pa*s], stress
and pressure [Pa], length [m], flow rate [m^3/s], density [kg/m^3],
temperature [K].  This module turns what people type or what instruments
write (``"0.5 mm"``, ``"mPa·s"``, ``"cP"``, ``"s-1"``, ``"10 uL/min"``) into
SI floats with one pint registry, created lazily so that ``import rheofit``
stays light.

>>> to_si(1.0, "cP", "viscosity")
0.001
>>> f"{parse_quantity('10 uL/min', 'flow_rate'):.4e}"
'1.6667e-10'
"""

from __future__ import annotations

import functools
import math
import re

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
    ureg = registry()
    try:
        unit = ureg.Unit(text) if text else None
    except Exception:
        unit = None
    if unit is None:
        raise UnitError(
            f"Unknown unit '{unit_text}' for {kind.replace('_', ' ')}; "
            f"expected something like '{_EXAMPLES[kind]}'."
        )
    target = ureg.Unit(SI_UNITS[kind]) if SI_UNITS[kind] else ureg.dimensionless
    if unit.dimensionality != target.dimensionality:
        raise UnitError(
            f"Unit '{unit_text}' is not a unit of {kind.replace('_', ' ')}; "
            f"expected something like '{_EXAMPLES[kind]}'."
        )
    zero = ureg.Quantity(0.0, unit).to(target).magnitude
    one = ureg.Quantity(1.0, unit).to(target).magnitude
    return float(one - zero), float(zero)


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


def parse_tolerance(value, label: str = "tolerance") -> float:
    """A relative tolerance [-]: '10%', '10 %', '0.1' or a number -> 0.1.

    Raises ParameterError, quoting ``value`` after ``label`` (e.g. the option
    name), unless it is a positive finite fraction.

    >>> parse_tolerance("2.5 %")
    0.025
    """
    try:
        fraction = parse_quantity(value, "dimensionless") if isinstance(value, str) else float(value)
    except (TypeError, ValueError):  # UnitError is a ValueError
        fraction = math.nan
    if not (math.isfinite(fraction) and fraction > 0):
        raise ParameterError(
            f"{label} {value!r} is not a positive fraction or percentage; write e.g. '10%', "
            "'10 %' or 0.1."
        )
    return fraction


def _first_example(kind: str) -> str:
    return "1 " + _EXAMPLES.get(kind, "").split(",")[0].split(" or ")[0]
