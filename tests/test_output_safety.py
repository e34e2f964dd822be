"""--force never destroys what is not an output; temp files are named, cleaned, checked early (issue 11, items 9, 10)."""

import os
import shutil
from pathlib import Path

import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.errors import OutputExistsError, OutputPathError
from rheofit.output import PARTIAL, check_target, staged, write_atomic

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
LOT_A, LOT_B = SAMPLES / "medium_lot_A.csv", SAMPLES / "medium_lot_B.csv"
FLOW = ["--diameter", "0.5 mm", "--length", "30 cm", "--flow-rate", "10 uL/min"]


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


def copy(tmp_path, source=LOT_A, name="a.csv") -> Path:
    target = tmp_path / name
    shutil.copyfile(source, target)
    return target


def refused(result, path):
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    assert str(path) in result.output


@pytest.mark.parametrize("command", [
    lambda a, b, out: ["fit", a, "--out", out, "--force"],
    lambda a, b, out: ["compare", a, b, "--out", out, "--force"],
    lambda a, b, out: ["report", a, b, "--out", out, "--force"],
])
@pytest.mark.parametrize("which", [0, 1])
def test_an_input_is_never_the_output_even_with_force(tmp_path, command, which):
    a, b = copy(tmp_path), copy(tmp_path, LOT_B, "b.csv")
    before = (a.read_bytes(), b.read_bytes())
    out = [a, b][which]
    if command(a, b, out)[0] == "fit" and which == 1:
        out = tmp_path / "." / "a.csv"  # another spelling of the same file
    refused(run(*command(a, b, out)), "is also an input")
    assert (a.read_bytes(), b.read_bytes()) == before


def test_an_input_reached_through_a_hard_link_is_refused(tmp_path):
    a = copy(tmp_path)
    link = tmp_path / "same.csv"
    os.link(a, link)
    before = a.read_bytes()
    refused(run("fit", a, "--out", link, "--force"), "is also an input")
    assert a.read_bytes() == before


def test_a_fifo_is_never_replaced(tmp_path):
    if not hasattr(os, "mkfifo"):
        pytest.skip("no FIFOs on this system")
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    refused(run("fit", LOT_A, "--json", "--out", fifo, "--force"), "not a regular file")
    assert fifo.exists() and not fifo.is_file()


def test_a_device_is_never_replaced():
    # checked without writing: the refusal comes before any work
    if not Path("/dev/null").exists():
        pytest.skip("no /dev/null")
    with pytest.raises(OutputExistsError, match="not a regular file"):
        check_target("/dev/null", force=True)


@pytest.mark.parametrize("force", [False, True])
def test_a_symlink_is_refused_dangling_or_not(tmp_path, force):
    dangling = tmp_path / "gone.json"
    dangling.symlink_to(tmp_path / "nowhere.json")
    to_null = tmp_path / "null.json"
    to_null.symlink_to("/dev/null")
    flags = ["--force"] if force else []
    for link in (dangling, to_null):
        refused(run("fit", LOT_A, "--json", "--out", link, *flags), "symbolic link")
        assert link.is_symlink()
    assert not (tmp_path / "nowhere.json").exists()


def test_temp_file_has_a_recognisable_name_and_is_cleaned_on_ctrl_c(tmp_path, monkeypatch):
    seen = []

    def interrupted(src, dst):
        seen.append(Path(src).name)
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "replace", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_atomic(tmp_path / "fits.json", "{}")
    assert seen == [f"fits.json{PARTIAL}{os.getpid()}"]
    assert list(tmp_path.iterdir()) == []


def test_staged_writes_appear_together_or_not_at_all(tmp_path):
    with pytest.raises(KeyboardInterrupt):
        with staged():
            write_atomic(tmp_path / "one.svg", "<svg")
            assert [p.name for p in tmp_path.iterdir()] == [f"one.svg{PARTIAL}{os.getpid()}"]
            raise KeyboardInterrupt
    assert list(tmp_path.iterdir()) == []  # nothing left to block a plain rerun
    with staged():
        write_atomic(tmp_path / "one.svg", "<svg/>")
        write_atomic(tmp_path / "two.json", "{}")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["one.svg", "two.json"]


def test_a_stopped_report_leaves_no_figure_behind(tmp_path, monkeypatch):
    from rheofit.report import html

    def stopped(*args, **kwargs):
        raise KeyboardInterrupt

    figures = tmp_path / "figs"
    monkeypatch.setattr(html, "build_report", lambda analysis, steps=None, keep=None: (
        keep("x", *_a_figure()), stopped()))
    result = run("report", LOT_A, "--out", tmp_path / "r.html", "--figures", figures)
    assert result.exit_code != 0
    assert list(figures.iterdir()) == [] and not (tmp_path / "r.html").exists()


def _a_figure():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig = plt.figure()
    return fig, None


@pytest.mark.parametrize("figures", [False, True])
def test_a_read_only_folder_is_named_before_the_work(tmp_path, monkeypatch, figures):
    from rheofit.jobs import analysis

    locked = tmp_path / "locked"
    locked.mkdir()
    real_access = os.access  # root may write anywhere, so the folder reads as locked to os.access
    monkeypatch.setattr(os, "access", lambda p, mode, **kw: real_access(p, mode, **kw)
                        and not (Path(p) == locked and mode & os.W_OK))
    monkeypatch.setattr(analysis, "analyse", lambda *a, **k: pytest.fail("the work ran first"))
    if figures:
        args = ["report", LOT_A, "--out", tmp_path / "r.html", "--figures", locked]
    else:
        args = ["report", LOT_A, "--out", locked / "r.html"]
    result = run(*args)
    refused(result, f"the folder '{locked}' is not writable")
    assert PARTIAL not in result.output
    with pytest.raises(OutputPathError, match="not writable"):
        check_target(locked / "fits.json", force=True)
    assert list(locked.iterdir()) == []
