"""Names read from files print literally: no rich markup, no terminal escapes (issue 11, item 4).

Rich reads ``[...]`` as markup (rich docs, "Console Markup": escape with rich.markup.escape);
ECMA-48 (1991) control sequences start with ESC (0x1b), e.g. ``ESC [2J`` erases the display.
"""

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.report.display import literal, markup_safe, visible

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
ESCAPES = "\x1b[2J\x1b[31m"


def two_lots(tmp_path, first, second="other") -> Path:
    """One file, two blocks labelled ``first`` and ``second`` (the bundled invented lots A and B)."""
    a, b = ((SAMPLES / n).read_text(encoding="utf-8").splitlines()[2:] for n in ("medium_lot_A.csv", "medium_lot_B.csv"))
    path = tmp_path / "lots.csv"
    path.write_text("\n".join([f"sample: {first}", *a, "", f"sample: {second}", *b]) + "\n", encoding="utf-8")
    return path


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


def test_helpers():
    assert visible("a\x1b[2Jb\rc") == "a\\x1b[2Jb\\x0dc"
    assert markup_safe("[/]") == "\\[/]"
    assert literal("[bold]x[/]").plain == "[bold]x[/]"


@pytest.mark.parametrize("label", ["[/]", "[bold red]lot[/]", "A" + ESCAPES])
def test_fit_prints_a_label_literally(tmp_path, label):
    path = two_lots(tmp_path, label)
    before = path.read_bytes()
    result = run("fit", path, "--model", "power_law")
    assert result.exit_code == 0, result.output
    assert visible(label) in result.output and "\x1b" not in result.output
    result = run("fit", path, "--model", "power_law", "--json")
    assert result.exit_code == 0, result.output
    assert json.loads(result.output)["curves"][0]["name"].endswith(label)  # JSON keeps the name as it is
    assert path.read_bytes() == before


@pytest.mark.parametrize("label", ["[/]", "B" + ESCAPES])
def test_compare_prints_a_lot_label_literally(tmp_path, label):
    path = two_lots(tmp_path, label)
    before = path.read_bytes()
    result = run("compare", path)
    assert result.exit_code == 0, result.output
    assert visible(label) in result.output and "\x1b" not in result.output
    assert path.read_bytes() == before


def test_report_prints_a_label_literally(tmp_path):
    path = two_lots(tmp_path, "[/]" + ESCAPES)
    result = run("report", path, "--out", tmp_path / "r.html")
    assert result.exit_code == 0 and result.exception is None, result.output
    assert "\x1b" not in result.output and (tmp_path / "r.html").exists()
