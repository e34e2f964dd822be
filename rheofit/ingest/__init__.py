"""Reading shear-rate sweeps exported as text into FlowCurves (SI).

What is read
------------
* Delimiters: comma, semicolon, tab, pipe and whitespace-aligned columns,
  sniffed from the file; decimal commas (``1,5``) when the delimiter is not
  a bare comma (or cells are quoted); scientific notation; CRLF, CR or LF.
* Encodings: UTF-8 with or without BOM, UTF-16/32 with BOM, UTF-16 without
  BOM, cp1252 and Latin-1 (°, µ, ·).
* Lines before the header are kept in ``curve.metadata["lines"]``, and
  ``Key: value`` / ``Key;value`` / ``Key = value`` lines also as
  ``curve.metadata[Key]``; how the file was read is in ``metadata["import"]``.
* Columns, in any order, by header words or symbols (shear rate, γ̇, D,
  viscosity, η, eta, shear stress, τ, σ, temperature, T, sample/lot/step
  labels, point numbers, time); units after the name or in a row of their own.
  Without a unit the SI unit is assumed and flagged.
* Several curves per file: one per temperature, per label in a
  sample/lot/step column, or per block with its own header.
* Rows with missing values, and rows with zero or negative shear rate, are
  dropped and flagged; up-and-down sweeps keep both segments
  (``curve.segment``) unless ``segment="up"`` or ``"down"`` picks one, and a
  hysteresis between them is flagged.

Rows stay in the order measured; :func:`sorted_by_shear_rate` gives the
sorted view.  Large blocks are converted by pandas' C reader
(:mod:`rheofit.ingest.bulk`); what is read, and every message, is the
same as row by row.  Files are opened read-only.  Every problem ends in one
:class:`~rheofit.errors.InputFileError` (or :class:`~rheofit.errors.UnitError`)
sentence naming the file, the line (counted from 1, as an editor shows it)
and the column.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np

from rheofit.curve import FlowCurve
from rheofit.errors import InputFileError, spelled
from rheofit.ingest import preamble
from rheofit.ingest.build import Context, Draft, block_drafts
from rheofit.ingest.columns import ROLES, assign_roles, make_columns
from rheofit.ingest.dialect import Dialect, sniff
from rheofit.ingest.layout import Block, Layout, find_layout, no_table
from rheofit.ingest.lines import Lines
from rheofit.ingest.source import read_lines
from rheofit.units import counting_number
from rheofit.ingest.sweep import check_segment, keep_segment
from rheofit.ingest.table import Cells

__all__ = ["ROLES", "read_flow_curve", "read_flow_curves", "sorted_by_shear_rate"]


def read_flow_curves(
    path,
    *,
    shear_rate_column=None,
    viscosity_column=None,
    stress_column=None,
    temperature_column=None,
    shear_rate_unit=None,
    viscosity_unit=None,
    stress_unit=None,
    temperature_unit=None,
    name=None,
    segment="all",
) -> list[FlowCurve]:
    """Every flow curve in a text export, in SI, in the order they appear.

    Parameters
    ----------
    path : str or Path
        The exported file (opened read-only).
    shear_rate_column, viscosity_column, stress_column, temperature_column : str or int, optional
        A column's header text (or its name without the unit), or its number
        counted from 1, when the header words are not recognised.
    shear_rate_unit, viscosity_unit, stress_unit, temperature_unit : str, optional
        Units of those columns (e.g. ``"mPa*s"``, ``"cP"``, ``"s-1"``, ``"°C"``);
        they replace a unit given in the file (flagged).
    name : str, optional
        Sample name; default the file stem.  With several curves each name
        gets the curve's label (``"sweep 25 °C"``).
    segment : {"all", "up", "down"}
        Which points of an up-and-down sweep to keep: all of them, those of
        the segments where the shear rate rises, or those where it falls
        (flagged ``segment_kept``).

    Returns
    -------
    list of FlowCurve
        shear_rate [1/s], viscosity [Pa*s] (eta = tau / gamma_dot when only
        the stress tau [Pa] is given), stress [Pa] (tau = eta * gamma_dot when
        only the viscosity is given), temperature [K] or None, flags, metadata.
    """
    check_segment(segment)
    path = Path(path)
    shown = str(path)
    columns = dict(zip(ROLES, (shear_rate_column, viscosity_column, stress_column, temperature_column)))
    units = dict(zip(ROLES, (shear_rate_unit, viscosity_unit, stress_unit, temperature_unit)))
    lines, encoding = read_lines(path, shown)
    try:
        drafts = _file_drafts(lines, encoding, columns, units, shown)
    finally:
        lines.close()
    del lines  # its index of the file is as large as the numbers
    return [keep_segment(curve, segment, shown) for curve in _finish(drafts, name or path.stem, shown)]


def read_flow_curve(path, *, curve=None, **overrides) -> FlowCurve:
    """The one flow curve of a file.

    ``overrides`` are the column, unit, name and segment keywords of
    :func:`read_flow_curves`.  ``curve`` picks one when the file holds
    several: its number counted from 1, or its label (``"25 °C"``,
    ``"lot B"``).  Without it, a file with several curves raises
    InputFileError listing them.
    """
    curves = read_flow_curves(path, **overrides)
    shown = str(path)
    if curve is None:
        if len(curves) == 1:
            return curves[0]
        raise InputFileError(
            f"File '{shown}' holds {len(curves)} curves ({_listing(curves)}); pick one with "
            + spelled("curve=2 (number or label) or read them all with read_flow_curves().",
                      "--curve 2 (number or label).")
        )
    return _pick(curves, curve, shown)


def sorted_by_shear_rate(curve: FlowCurve) -> FlowCurve:
    """The same curve with its points in increasing shear rate (stable order; flags kept).

    Import keeps the measured order; fitting does not need sorted data, but
    plots and tables often do.
    """
    order = np.argsort(curve.shear_rate, kind="stable")
    segment = None if curve.segment is None else curve.segment[order]
    return replace(curve, shear_rate=curve.shear_rate[order], viscosity=curve.viscosity[order],
                   stress=curve.stress[order], segment=segment)


def _file_drafts(lines: Lines, encoding: str, columns: dict, units: dict, shown: str) -> list[Draft]:
    """Draft curves of every block of the file, in order."""
    dialect = sniff(lines)
    if dialect is None:
        raise no_table(lines, shown, columns)
    layout = find_layout(lines, dialect, columns, shown)
    drafts = []
    for number, block in enumerate(layout.blocks, start=1):
        details = {"encoding": encoding, "delimiter": dialect.name, "decimal": dialect.decimal}
        drafts += _block_drafts(lines, layout, block, number, dialect, columns, units, details, shown)
    return drafts


def _block_drafts(lines: Lines, layout: Layout, block: Block, number: int, dialect: Dialect,
                  columns, units, details, shown) -> list[Draft]:
    """Draft curves of one block, with the text around it as metadata."""
    cells = Cells(lines, block, dialect, shown)
    found = make_columns(block.header, block.units, block.width)
    roles = assign_roles(found, columns, shown)
    own_fields = preamble.fields(block.preamble, dialect)
    metadata, temperature, flags = _block_text(layout, block, number, dialect, own_fields)
    metadata["import"] = _import_details(details, block, roles, found)
    label = preamble.block_label(own_fields, block.preamble, number, dialect)
    context = Context(shown, len(layout.blocks), label, temperature, metadata, flags, units)
    return block_drafts(cells, roles, context)


def _block_text(layout: Layout, block: Block, number: int, dialect: Dialect, own_fields: dict):
    """(metadata, temperature [K] or None, flags) from the file's text and the block's own lines.

    The lines before the first block (and after the last) belong to every
    curve; a later block adds the lines just above its header.
    """
    file_lines = layout.blocks[0].preamble + layout.trailer
    lines = file_lines + (block.preamble if number > 1 else [])
    fields = {**preamble.fields(file_lines, dialect), **own_fields}
    temperature, flags = preamble.temperature(own_fields)
    if temperature is None:
        temperature, flags = preamble.temperature(fields)
    return {"lines": lines, **fields}, temperature, flags


def _import_details(details: dict, block: Block, roles: dict, found: list) -> dict:
    """How the block was read: encoding, delimiter, header line, columns used and ignored."""
    used = {column.position: role for role, column in roles.items() if role not in ("index", "time")}
    shown = {c.position: c.text or f"column {c.position + 1}" for c in found}
    return dict(
        details,
        header_line=None if block.header_line is None else block.header_line + 1,
        units_line=None if block.units_line is None else block.units_line + 1,
        columns={role: shown[position] for position, role in used.items()},
        ignored_columns=[shown[c.position] for c in found if c.position not in used],
    )


def _finish(drafts: list[Draft], base: str, shown: str) -> list[FlowCurve]:
    """FlowCurves with labels made of what tells the drafts apart."""
    labels = _labels(drafts)
    curves = []
    for draft, label in zip(drafts, labels):
        metadata = dict(draft.metadata, **{"import": dict(draft.metadata["import"], curve=label)})
        curves.append(FlowCurve(
            draft.shear_rate, draft.viscosity, draft.stress,
            name=f"{base} {label}" if label else base, source=shown,
            temperature=draft.temperature, flags=tuple(draft.flags), metadata=metadata,
            segment=draft.segment,
        ))
    return curves


def _labels(drafts: list[Draft]) -> list[str]:
    if len(drafts) == 1:
        return [""]
    keys = [k for k in ("block", "label", "temperature") if len({d.parts.get(k, "") for d in drafts}) > 1]
    labels = [", ".join(dict.fromkeys(d.parts[k] for k in keys if d.parts[k])) for d in drafts]
    seen = {}
    for i, label in enumerate(labels):
        seen[label] = seen.get(label, 0) + 1
        if seen[label] > 1 or not label:
            labels[i] = f"{label} #{seen[label]}".strip() if label else f"curve {i + 1}"
    return labels


def _listing(curves: list[FlowCurve], most: int = 8) -> str:
    shown = [f"{i}: {c.metadata['import']['curve'] or c.name}" for i, c in enumerate(curves[:most], start=1)]
    return ", ".join(shown) + (f", ... {len(curves) - most} more" if len(curves) > most else "")


def _pick(curves: list[FlowCurve], curve, shown: str) -> FlowCurve:
    if isinstance(curve, int) and not isinstance(curve, bool) and 1 <= curve <= len(curves):
        return curves[curve - 1]
    if isinstance(curve, str):
        wanted = _plain(curve)
        for c in curves:
            label = _plain(c.metadata["import"]["curve"])
            if wanted in (label, _plain(c.name)) or wanted + "c" == label:  # "25" for "25 °C"
                return c
        if counting_number(curve) is not None:
            return _pick(curves, counting_number(curve), shown)
    raise InputFileError(
        f"File '{shown}' has no curve {curve!r}: it holds {len(curves)} curve"
        f"{'s' if len(curves) > 1 else ''} ({_listing(curves)}), numbered from 1; pass one of those "
        f"numbers or labels as {spelled('curve=', '--curve')}."
    )


def _plain(text: str) -> str:
    return text.lower().replace(" ", "").replace("°", "")
