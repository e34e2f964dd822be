"""From a block's columns to curves in SI: units, dropped rows, checks, groups, flags.

Relations used (SI): apparent viscosity eta = tau / gamma_dot [Pa*s] from
shear stress tau [Pa] and shear rate gamma_dot [1/s], and tau = eta *
gamma_dot the other way round: the definition of the shear viscosity
(e.g. Macosko (1994), Rheology: Principles, Measurements and Applications,
ch. 2).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from rheofit.curve import Flag
from rheofit.errors import InputFileError, UnitError, spelled
from rheofit.ingest.columns import ROLES, UNIT_KINDS, Column, column_option
from rheofit.ingest.sweep import describe, hysteresis, segments
from rheofit.ingest.table import Cells
from rheofit.units import is_unit_of, to_si

#: stress and viscosity given together may differ from tau = eta * gamma_dot by this much [-]
CONSISTENCY_TOLERANCE = 0.02
#: temperatures further apart than this belong to different curves [K]
TEMPERATURE_GAP = 0.5
#: a curve whose temperatures span more than this is flagged [K]
TEMPERATURE_SPREAD = 2.0
#: unitless temperature columns below this are read as degrees Celsius, others as kelvin
CELSIUS_BELOW = 150.0

_SI_SHOWN = {"shear_rate": "1/s", "viscosity": "Pa·s", "stress": "Pa", "temperature": "K"}
_QUANTITY = {"shear_rate": "shear rate", "viscosity": "viscosity", "stress": "shear stress", "temperature": "temperature"}


@dataclass
class Draft:
    """A curve before its final name: SI arrays, flags, metadata, and what tells it apart."""

    shear_rate: np.ndarray
    viscosity: np.ndarray
    stress: np.ndarray
    temperature: float | None
    segment: np.ndarray
    flags: list[Flag]
    metadata: dict
    parts: dict = field(default_factory=dict)  # "block", "label", "temperature" -> text


@dataclass
class Context:
    """What a block's curves share: file name, block label and temperature, metadata, flags."""

    shown: str
    blocks: int  # how many blocks the file holds
    block_label: str
    temperature: float | None
    metadata: dict
    flags: list[Flag]
    unit_overrides: dict


def block_drafts(cells: Cells, roles: dict[str, Column], context: Context) -> list[Draft]:
    """Draft curves of one block: one per label and temperature found in its rows."""
    cells.plan([roles[role] for role in ROLES if role in roles], [roles["label"]] if "label" in roles else [])
    units, flags = _units(cells, roles, context)
    raw = {role: cells.numbers(roles[role]) for role in units}
    si = {role: _in_si(raw[role], units[role], role) for role in units}
    labels = _labels(cells, roles.get("label"))
    groups = _groups(labels, si.get("temperature"), len(cells))
    drafts = []
    for label, cluster, index in groups:
        parts = {"block": context.block_label, "label": label or "", "temperature": ""}
        if "temperature" in si and np.isfinite(si["temperature"][index]).any():
            parts["temperature"] = _celsius_label(np.nanmean(si["temperature"][index]))
        elif context.temperature is not None:
            parts["temperature"] = _celsius_label(context.temperature)
        drafts.append(_draft(index, raw, si, cells, roles, units, context, flags, parts))
    return drafts


def _in_si(values: np.ndarray, unit: str, role: str) -> np.ndarray:
    """``values`` converted to SI: the same array when ``unit`` is the SI unit.

    (x * 1 + 0 is x, but for the sign of a zero, and no zero is kept as a point.)
    """
    kind = UNIT_KINDS[role]
    if to_si(1.0, unit, kind) == 1.0 and to_si(0.0, unit, kind) == 0.0:
        return values
    return np.asarray(to_si(values, unit, kind), dtype=float)


def _units(cells: Cells, roles, context: Context) -> tuple[dict[str, str], list[Flag]]:
    """The unit of each numeric column: the caller's, the file's, or SI (flagged)."""
    units, flags = {}, []
    for role in ROLES:
        column = roles.get(role)
        if column is None:
            continue
        given = context.unit_overrides.get(role)
        unit = given or column.unit
        if unit is None:
            unit = _assumed(role, cells, column)
            flags.append(_assumed_flag(role, column, unit))
        _check_unit(unit, role, column, given, context.shown)
        if given and column.unit and _differ(given, column.unit, role):
            flags.append(Flag(
                "unit_override",
                f"Column {column.shown} states '{column.unit}', but {unit_option(role, given)} was used as asked.",
                {"role": role, "file_unit": column.unit, "unit": given},
            ))
        units[role] = unit
    return units, flags


def unit_option(role: str, unit: str) -> str:
    """How to name a role's unit: ``viscosity_unit='mPa*s'``, or ``--unit viscosity=mPa*s`` on the CLI."""
    return spelled(f"{role}_unit='{unit}'", f"--unit {role}={unit}")


def _assumed(role: str, cells: Cells, column: Column) -> str:
    if role != "temperature":
        return _SI_SHOWN[role]
    values = cells.numbers(column)
    return "degC" if not np.any(values >= CELSIUS_BELOW) else "K"


def _assumed_flag(role: str, column: Column, unit: str) -> Flag:
    if role == "viscosity":
        message = (
            f"Column {column.shown} gives no unit, so the viscosity was read in Pa·s (SI); if the "
            f"file is in mPa·s or cP every viscosity is 1000 times too high: pass {unit_option(role, 'mPa*s')} "
            "or the unit of the file."
        )
    else:
        shown = {"degC": "°C", "K": "K"}.get(unit, unit)
        message = (
            f"Column {column.shown} gives no unit, so the {_QUANTITY[role]} was read in {shown}; "
            f"pass {unit_option(role, 'UNIT')} if the file uses another unit."
        )
    return Flag("assumed_unit", message, {"role": role, "column": column.text, "unit": unit})


def _differ(given: str, written: str, role: str) -> bool:
    """True when the caller's unit converts differently from the file's (or the file's is unreadable)."""
    kind = UNIT_KINDS[role]
    if not is_unit_of(written, kind):
        return True
    return (to_si(1.0, given, kind), to_si(0.0, given, kind)) != (to_si(1.0, written, kind), to_si(0.0, written, kind))


def _check_unit(unit: str, role: str, column: Column, given, shown: str) -> None:
    try:
        to_si(1.0, unit, UNIT_KINDS[role])
    except UnitError as exc:
        problem = str(exc).rstrip(".")
        problem = problem[0].lower() + problem[1:]
        where = unit_option(role, given) if given else f"column {column.shown}"
        raise UnitError(
            f"File '{shown}', {where}: {problem}; name the right column or unit with "
            f"{column_option(role, 'NAME')} or {unit_option(role, 'UNIT')}."
        ) from None


def _labels(cells: Cells, column: Column | None) -> list[str] | None:
    """Labels per row (an empty cell repeats the label above), or None."""
    if column is None:
        return None
    labels, current = [], ""
    for text in cells.text(column):
        current = text or current
        labels.append(current)
    return labels


def _groups(labels, temperature, n: int) -> list[tuple[str | None, int, np.ndarray | slice]]:
    """(label, temperature cluster, row indices) per curve, in order of first appearance.

    A block that is one curve gets the slice of all its rows (no copies).
    """
    clusters = _clusters(temperature) if temperature is not None else np.zeros(n, dtype=np.int8)
    if labels is None and not clusters.any():
        return [(None, 0, slice(None))]
    if labels is None:
        label_codes, names = np.zeros(n, dtype=int), [None]
    else:
        names = list(dict.fromkeys(labels))
        lookup = {name: k for k, name in enumerate(names)}
        label_codes = np.fromiter((lookup[x] for x in labels), dtype=int, count=len(labels))
    width = int(clusters.max(initial=0)) + 1
    key = label_codes * width + clusters
    unique, first = np.unique(key, return_index=True)
    return [
        (names[k // width], k % width, np.flatnonzero(key == k))
        for k in unique[np.argsort(first)]
    ]


def _clusters(temperature: np.ndarray) -> np.ndarray:
    """Cluster number per row: temperatures more than TEMPERATURE_GAP apart split."""
    finite = np.isfinite(temperature)
    if not finite.any():
        return np.zeros(temperature.size, dtype=int)
    values = np.unique(temperature[finite])
    breaks = values[1:][np.diff(values) > TEMPERATURE_GAP]
    clusters = np.searchsorted(breaks, np.where(finite, temperature, 0.0), side="right")
    index = np.where(finite, np.arange(temperature.size), -1)
    index = np.maximum.accumulate(index)
    index[index < 0] = np.flatnonzero(finite)[0]
    return clusters[index]


def _celsius_label(kelvin: float) -> str:
    """``"25 °C"``: whole degrees when within 0.25 K of one, else one decimal."""
    celsius = float(kelvin) - 273.15
    nearest = round(celsius)
    return f"{nearest:g} °C" if abs(celsius - nearest) < 0.25 else f"{round(celsius, 1):g} °C"


def _draft(index, raw, si, cells: Cells, roles, units, context: Context, flags, parts) -> Draft:
    lines = cells.line_numbers[index]
    values = {role: si[role][index] for role in si}
    flags = list(context.flags) + list(flags)
    keep, dropped = _usable(values, lines)
    flags += dropped
    _check_positive(values, raw, index, keep, lines, roles, context.shown)
    described = ", ".join(p for k, p in parts.items() if p and (k != "block" or context.blocks > 1))
    if keep.sum() < 3:
        raise InputFileError(
            f"File '{context.shown}'{f' (curve {described})' if described else ''} has only "
            f"{int(keep.sum())} usable points out of {keep.size} rows; a flow curve needs at least 3 "
            "points with a positive shear rate and a viscosity or stress."
        )
    if not keep.all():
        values = {role: v[keep] for role, v in values.items()}
        lines = lines[keep]
    shear_rate = values["shear_rate"]
    if "viscosity" in values:
        viscosity = values["viscosity"]
    else:
        viscosity = values["stress"] / shear_rate
    stress = values["stress"] if "stress" in values else viscosity * shear_rate
    if "viscosity" in values and "stress" in values:
        flags += _consistency(shear_rate, viscosity, stress, lines)
    segment = segments(shear_rate)
    found = hysteresis(shear_rate, viscosity, segment, lines)
    flags += [found] if found else []
    temperature, spread = _temperature(values.get("temperature"), context.temperature)
    flags += spread
    metadata = dict(context.metadata)
    metadata["import"] = dict(metadata.get("import", {}), units=dict(units),
                              data_lines=[int(lines[0]), int(lines[-1])],
                              sweep=describe(shear_rate, segment))
    return Draft(shear_rate, viscosity, stress, temperature, segment, flags, metadata, parts)


def _usable(values: dict, lines) -> tuple[np.ndarray, list[Flag]]:
    """Rows with shear rate and viscosity/stress present and a positive shear rate; flags for the others."""
    missing = np.zeros(lines.size, dtype=bool)
    for role, v in values.items():
        if role != "temperature":  # a missing temperature does not spoil the point
            missing |= ~np.isfinite(v)
    flags = []
    if missing.any():
        flags.append(_dropped("missing_values", "with a missing value", missing, lines))
    nonpositive = ~missing & (values["shear_rate"] <= 0)
    if nonpositive.any():
        flags.append(_dropped("nonpositive_shear_rate", "with zero or negative shear rate", nonpositive, lines))
    return ~(missing | nonpositive), flags


def _dropped(code: str, why: str, mask: np.ndarray, lines) -> Flag:
    where = lines[mask]
    count = int(mask.sum())
    return Flag(
        code,
        f"{count} row{'s' if count > 1 else ''} {why} dropped (line{'s' if count > 1 else ''} "
        f"{_line_list(where)}).",
        {"count": count, "lines": [int(x) for x in where[:50]]},
    )


def _line_list(lines) -> str:
    shown = ", ".join(str(int(x)) for x in lines[:5])
    return shown + (f" and {len(lines) - 5} more" if len(lines) > 5 else "")


def _check_positive(values, raw, index, keep, lines, roles, shown: str) -> None:
    for role in ("viscosity", "stress"):
        if role not in values:
            continue
        bad = keep & (values[role] <= 0)
        if bad.any():
            first = int(np.flatnonzero(bad)[0])
            raise InputFileError(
                f"File '{shown}', line {lines[first]}, column {roles[role].shown}: {_QUANTITY[role]} "
                f"{raw[role][index][first]:g} is not positive ({int(bad.sum())} such row"
                f"{'s' if bad.sum() > 1 else ''}); a flow curve needs positive viscosity and stress, "
                "so correct or delete those rows."
            )


def _consistency(shear_rate, viscosity, stress, lines) -> list[Flag]:
    """Flag rows where tau differs from eta * gamma_dot by more than CONSISTENCY_TOLERANCE."""
    ratio = stress / (viscosity * shear_rate)
    gap = np.abs(ratio - 1.0)
    worst = int(np.argmax(gap))
    if gap[worst] <= CONSISTENCY_TOLERANCE:
        return []
    hint = ""
    power = np.log10(np.median(ratio))
    if round(power) != 0 and abs(power - round(power)) < 0.02:
        hint = (f" (the stress is 10^{round(power)} times viscosity × shear rate throughout, "
                "which points to a wrong viscosity or stress unit)")
    return [Flag(
        "stress_viscosity_mismatch",
        f"Stress and viscosity disagree with tau = eta * shear rate by up to {gap[worst] * 100:.1f} % "
        f"(line {lines[worst]}){hint}; both were used as given, so check their units and columns.",
        {"max_relative_difference": float(gap[worst]), "line": int(lines[worst]),
         "median_ratio": float(np.median(ratio))},
    )]


def _temperature(values, fallback) -> tuple[float | None, list[Flag]]:
    if values is None or not np.isfinite(values).any():
        return fallback, []
    spread = float(np.nanmax(values) - np.nanmin(values))
    flags = []
    if spread > TEMPERATURE_SPREAD:
        flags.append(Flag(
            "temperature_spread",
            f"The temperature varies by {spread:.1f} K within this curve; viscosity depends on "
            "temperature, so check that the sweep was held at one temperature.",
            {"spread": spread},
        ))
    return float(np.nanmean(values)), flags
