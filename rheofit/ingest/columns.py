"""What each column holds, from its header text, and the unit written with it.

Header words and symbols are matched as whole words, case-insensitively
(``"Shear rate"``, ``"γ̇"``, ``"eta"``, ``"Viscosity η"``); the lone letters
``T`` (temperature) and ``t`` (time) are told apart by case.  A unit may
follow the name in brackets or parentheses (``Viscosity [mPa·s]``), after a
slash or comma (``η / Pa s``), or as the last word(s) (``Viscosity mPas``);
it may also stand in a row of its own under the header.  A column with an
unknown name but a telling unit (``[1/s]``) is recognised by that unit.
"""

from __future__ import annotations

import functools
import re
import unicodedata
from dataclasses import dataclass

from rheofit.errors import InputFileError, spelled
from rheofit.ingest.dialect import is_number
from rheofit.units import is_unit_of

#: the roles whose values are read as numbers; a caller may name the column or unit of each
ROLES = ("shear_rate", "viscosity", "stress", "temperature")
#: each role's unit kind in rheofit.units (the same words)
UNIT_KINDS = {role: role for role in ROLES}
FLOW_ROLES = ("shear_rate", "viscosity", "stress")


def column_option(role: str, value) -> str:
    """How to name a role's column: ``viscosity_column=2``, or ``--column viscosity=2`` on the CLI."""
    return spelled(f"{role}_column={value}", f"--column {role}={value}")


@dataclass(frozen=True)
class RoleWords:
    """Header words of one role: strong (score 3) and weak (2) whole-word phrases."""

    role: str
    strong: tuple[str, ...]
    weak: tuple[str, ...] = ()
    letters: tuple[str, ...] = ()  # whole names matched case-sensitively (score 2)
    exclude: tuple[str, ...] = ()  # whole words that rule the role out
    exclude_chars: str = ""  # characters that rule the role out


ROLE_WORDS = (
    RoleWords(
        "shear_rate",
        strong=("shear rate", "strain rate", "gamma dot", "gammadot", "γ̇", "γdot", "ẏ"),
        weak=("rate", "γ", "gamma", "sr", "gd"),
        letters=("D", "d"),
        exclude=("heating", "cooling", "flow", "sampling", "data", "frequency", "speed",
                 "angular", "ω", "omega", "amplitude"),
    ),
    RoleWords(
        "viscosity",
        strong=("viscosity", "η", "eta", "μ", "mu"),
        weak=("visc",),
        exclude=("complex", "kinematic", "relative", "specific", "intrinsic", "inherent", "reduced"),
        exclude_chars="*",
    ),
    RoleWords(
        "stress",
        strong=("shear stress", "τ", "tau"),
        weak=("stress", "σ", "sigma"),
        exclude=("normal", "yield", "first", "second", "n1", "n2"),
    ),
    RoleWords("temperature", strong=("temperature",), weak=("temp",), letters=("T",)),
    RoleWords(
        "label",
        strong=("sample", "lot", "batch", "label", "series", "specimen"),
        weak=("step", "run", "curve", "group", "block", "name"),
        exclude=("time", "temperature", "rate", "viscosity", "stress", "point"),
    ),
    RoleWords("index", strong=("index", "idx", "point", "points", "pt", "no", "nr", "#", "row", "number", "meas pts")),
    RoleWords("time", strong=("time", "elapsed time", "duration"), letters=("t",)),
)

#: words marking a set point rather than the measured value: such a column loses ties
_SET_POINT = ("set", "setpoint", "target", "nominal", "preset", "requested")
_DESCRIPTIVE = {"set", "meas", "avg", "mean", "app", "calc", "raw", "corr", "true", "max", "min", "abs",
                "apparent", "measured", "calculated", "corrected", "average", "nominal", "target",
                "actual", "setpoint", "fitted", "smoothed", "filtered", "up", "down", "sample"}
_BRACKETED = re.compile(r"^(?P<name>.*?)\s*(?P<open>[\[({])\s*(?P<unit>[^\[\](){}]*?)\s*[\])}]\s*$")
_UNITISH = re.compile(r"[\d/·⋅*^⁻°µμ%.]")
_SEPARATORS = (" / ", ", ", " in ")
_PUNCTUATION = re.compile(r"[._\-/\\,:;()\[\]{}'\"]+")


@dataclass(frozen=True)
class Column:
    """A column of the table: its place, its header text, name and unit."""

    position: int  # 0-based
    text: str  # the header cell as written, "" without a header
    name: str  # the header without its unit
    unit: str | None  # unit text as written, or None

    @property
    def shown(self) -> str:
        """How the column is named to the user: its header, or its number counted from 1."""
        return f"'{self.text}'" if self.text else f"{self.position + 1}"


def make_columns(header: list[str] | None, units: list[str] | None, width: int) -> list[Column]:
    """Columns from the header cells and an optional row of units."""
    columns = []
    for position in range(width):
        text = header[position] if header and position < len(header) else ""
        name, unit = split_name_unit(text)
        if units and position < len(units) and unit_cell(units[position]):
            unit = unit_cell(units[position])
        columns.append(Column(position, text, name, unit))
    return columns


@functools.lru_cache(maxsize=1024)
def split_name_unit(text: str) -> tuple[str, str | None]:
    """``"Viscosity [mPa·s]"`` -> ``("Viscosity", "mPa·s")``; no unit -> ``(text, None)``."""
    text = text.strip()
    match = _BRACKETED.match(text)
    if match and _looks_like_unit(match.group("unit"), match.group("open")):
        return match.group("name").strip(), match.group("unit").strip() or None
    for separator in _SEPARATORS:
        head, found, tail = text.partition(separator)
        if found and head.strip() and is_any_unit(tail):
            return head.strip(), tail.strip()
    words = text.split()
    for size in (2, 1):
        if len(words) > size and is_any_unit(" ".join(words[-size:])):
            return " ".join(words[:-size]), " ".join(words[-size:])
    return text, None


def _looks_like_unit(inside: str, bracket: str) -> bool:
    """Square and curly brackets always hold a unit; parentheses when it looks like one."""
    if bracket != "(" or is_any_unit(inside) or _UNITISH.search(inside):
        return True
    # a single word that is no known description is taken as a unit, so that an
    # unknown unit is reported rather than silently read as SI
    return inside.isalpha() and len(inside) <= 12 and inside.lower() not in _DESCRIPTIVE


def unit_cell(cell: str) -> str | None:
    """The unit in a cell of a units row (``"[1/s]"`` -> ``"1/s"``), or None when blank."""
    text = cell.strip().strip("[](){}").strip()
    return None if text in ("", "-", "--") else text


def is_any_unit(text: str) -> bool:
    """True when ``text`` is a unit of shear rate, viscosity, stress or temperature."""
    text = text.strip()
    return bool(text) and any(is_unit_of(text, kind) for kind in UNIT_KINDS.values())


def is_units_row(cells: list[str]) -> bool:
    """A row of units under the header: some cells are units, none is a number."""
    if any(is_number(c) for c in cells):
        return False
    units = [unit_cell(c) for c in cells]
    return any(u and (is_any_unit(u) or c.strip()[:1] in "[({") for u, c in zip(units, cells))


def _normalised(name: str) -> str:
    text = unicodedata.normalize("NFKC", name).replace("\u02d9", "\u0307").lower()
    return " " + " ".join(_PUNCTUATION.sub(" ", text).split()) + " "


def _has(padded: str, phrases: tuple[str, ...]) -> bool:
    return any(f" {phrase} " in padded for phrase in phrases)


@functools.lru_cache(maxsize=1024)
def name_role(name: str) -> tuple[str | None, int]:
    """The role a column name points to and how strongly (3 strong, 2 weak, 0 none).

    A name marking a set point (``"Shear rate (set)"``) scores one less.
    """
    padded = _normalised(name)
    best, best_score = None, 0
    for words in ROLE_WORDS:
        if _has(padded, words.exclude) or any(c in name for c in words.exclude_chars):
            continue
        score = 3 if _has(padded, words.strong) else 2 if _has(padded, words.weak) else 0
        if name.strip() in words.letters:
            score = max(score, 2)
        if score > best_score:
            best, best_score = words.role, score
    if best and _has(padded, _SET_POINT):
        best_score -= 1
    return best, best_score


def column_role(column: Column) -> tuple[str | None, int]:
    """Role and score of a column: by name, else (score 1) by its unit."""
    role, score = name_role(column.name)
    if score > 0 or not column.unit:
        return role, score
    padded = _normalised(column.name)
    for words in ROLE_WORDS:
        kind = UNIT_KINDS.get(words.role)
        if kind and not _has(padded, words.exclude) and is_unit_of(column.unit, kind):
            return words.role, 1
    return None, 0


def flow_roles_in(cells: list[str], overrides: dict) -> int:
    """How many of shear rate / viscosity / stress a header line names (header detection)."""
    found = set()
    wanted = {str(v).strip().lower(): role for role, v in overrides.items() if isinstance(v, str)}
    for cell in cells:
        if is_number(cell) or not cell:
            continue
        name, unit = split_name_unit(cell)
        role = wanted.get(cell.strip().lower()) or wanted.get(name.strip().lower())
        if role is None:
            role, _ = column_role(Column(0, cell, name, unit))
        if role in FLOW_ROLES:
            found.add(role)
    return len(found)


def assign_roles(columns: list[Column], overrides: dict, shown: str) -> dict[str, Column]:
    """Map each role to its column; overrides (name or number from 1) win.

    Raises InputFileError when an override names no column, when two columns
    tie for a role, or when shear rate, or both viscosity and stress, are missing.
    """
    chosen: dict[str, Column] = {}
    for role, wanted in overrides.items():
        if wanted is not None:
            chosen[role] = _find(columns, wanted, role, shown)
    taken = {c.position for c in chosen.values()}
    by_role: dict[str, list[tuple[int, Column]]] = {}
    for column in columns:
        if column.position not in taken:
            role, score = column_role(column)
            if role and score > 0:
                by_role.setdefault(role, []).append((score, column))
    for role, scored in by_role.items():
        if role not in chosen:
            chosen[role] = _best(role, scored, shown)
    if "shear_rate" not in chosen or not ({"viscosity", "stress"} & chosen.keys()):
        raise _unrecognised(columns, chosen, shown)
    return chosen


def _find(columns: list[Column], wanted, role: str, shown: str) -> Column:
    if isinstance(wanted, int) and not isinstance(wanted, bool):
        if 1 <= wanted <= len(columns):
            return columns[wanted - 1]
        raise InputFileError(
            f"File '{shown}' has {len(columns)} columns, so {column_option(role, wanted)} does not exist; "
            f"columns are counted from 1 ({_listing(columns)})."
        )
    key = str(wanted).strip().lower()
    for column in columns:
        if key in (column.text.strip().lower(), column.name.strip().lower()):
            return column
    raise InputFileError(
        f"File '{shown}' has no column named '{wanted}' (asked for with {column_option(role, wanted)}); "
        f"its columns are {_listing(columns)}."
    )


def _best(role: str, scored: list[tuple[int, Column]], shown: str) -> Column:
    top = max(score for score, _ in scored)
    best = [c for score, c in scored if score == top]
    kind = UNIT_KINDS.get(role)
    if len(best) > 1 and kind:
        fitting = [c for c in best if c.unit and is_unit_of(c.unit, kind)]
        best = fitting if len(fitting) == 1 else best
    if len(best) > 1 and role in UNIT_KINDS:
        names = ", ".join(c.shown for c in best[:-1]) + " and " + best[-1].shown
        raise InputFileError(
            f"File '{shown}': columns {names} all look like {role.replace('_', ' ')}; "
            f"pick one with {column_option(role, best[0].shown)}."
        )
    return best[0]


def _listing(columns: list[Column]) -> str:
    if all(not c.text for c in columns):
        return f"{len(columns)} unnamed columns, numbered 1 to {len(columns)}"
    return ", ".join(c.shown for c in columns)


def _unrecognised(columns: list[Column], chosen: dict, shown: str) -> InputFileError:
    missing = "shear rate" if "shear_rate" not in chosen else "viscosity or shear stress"
    return InputFileError(
        f"File '{shown}' has no recognisable {missing} column among {_listing(columns)}"
        + spelled(
            "; name the columns with shear_rate_column=, viscosity_column=, stress_column= or "
            "temperature_column= (a header text or a column number from 1), and their units with "
            "shear_rate_unit=, viscosity_unit=, stress_unit=.",
            "; name the columns with --column ROLE=NAME or ROLE=NUMBER (counted from 1) and their "
            "units with --unit ROLE=UNIT, roles being shear_rate, viscosity, stress, temperature.",
        )
    )
