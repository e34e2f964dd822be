"""The text lines around a table: ``Key: value`` pairs, a block's label and temperature."""

from __future__ import annotations

import re

from rheofit.curve import Flag
from rheofit.ingest.columns import name_role
from rheofit.ingest.dialect import Dialect, clean, is_number
from rheofit.units import is_unit_of, to_si

#: metadata keys rheofit itself uses; a file's own key of that name gets " (file)" appended
RESERVED = ("lines", "import")
#: unitless temperatures below this are taken as degrees Celsius, others as kelvin [-]
CELSIUS_BELOW = 150.0

_PAIR = re.compile(r"^\s*(?:#+\s*)?([^:=]{1,60}?)\s*[:=]\s*(.*)$")
_QUANTITY = re.compile(r"^\s*([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def fields(lines: list[str], dialect: Dialect) -> dict[str, str]:
    """``Key: value``, ``Key = value`` and ``Key;value`` pairs of some text lines."""
    found = {}
    for line in lines:
        pair = key_value(line, dialect)
        if pair:
            key = pair[0] + " (file)" if pair[0] in RESERVED else pair[0]
            found[key] = pair[1]
    return found


def key_value(line: str, dialect: Dialect) -> tuple[str, str] | None:
    """(key, value) of one line, or None when it is not a pair."""
    delimiter = dialect.delimiter
    text = line.strip().strip(delimiter or "").strip()
    match = _PAIR.match(text)
    if match and (delimiter is None or delimiter not in match.group(1)):
        key, value = match.group(1).strip(), match.group(2)
    elif delimiter is not None:
        cells = [c for c in (clean(c) for c in text.lstrip("#").split(delimiter)) if c]
        if len(cells) < 2:
            return None
        key, value = cells[0].rstrip(":"), "; ".join(cells[1:])
    else:
        return None
    value = clean(value.strip().rstrip(delimiter or "").strip())
    if not key or is_number(key) or not value:
        return None
    return key, value


def block_label(own_fields: dict[str, str], own_lines: list[str], number: int, dialect: Dialect) -> str:
    """A block's label: its sample/lot/step entry, its temperature, the line above its header, or 'block N'."""
    for wanted in ("label", "temperature"):
        for key, value in own_fields.items():
            if name_role(key)[0] == wanted:
                return value
    if own_lines and key_value(own_lines[-1], dialect) is None:
        text = own_lines[-1].strip().strip(dialect.delimiter or "").strip(" #[]")
        if 0 < len(text) <= 60:
            return text
    return f"block {number}"


def temperature(fields_: dict[str, str]) -> tuple[float | None, list[Flag]]:
    """The temperature [K] a block's text gives (``Temperature: 25 °C``), or None.

    Text after the unit is ignored (``37 C; steady sweep``); a number without
    a unit is read in °C below 150 and in K above (flagged).
    """
    for key, value in fields_.items():
        if name_role(key)[0] != "temperature":
            continue
        match = _QUANTITY.match(value)
        if not match:
            continue
        number, rest = float(match.group(1).replace(",", ".")), match.group(2)
        for unit in dict.fromkeys((rest, re.split(r"[;,(]", rest)[0].strip(), (rest.split() or [""])[0])):
            if unit and is_unit_of(unit, "temperature"):
                return float(to_si(number, unit, "temperature")), []
        if not rest:
            unit = "degC" if number < CELSIUS_BELOW else "K"
            return float(to_si(number, unit, "temperature")), [Flag(
                "assumed_unit",
                f"'{key}: {value}' gives no unit, so {'°C' if unit == 'degC' else 'K'} was assumed.",
                {"role": "temperature", "unit": unit},
            )]
    return None, []
