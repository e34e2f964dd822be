"""The report rendered by a real headless browser (Debian's chromium), offline.

Skipped, with the reason shown, where no chromium is installed; `.ci/run`
installs it from Debian's packages when it can.
"""

from __future__ import annotations

import re
import shutil
import subprocess
from importlib.resources import files

import pytest

from rheofit.flow import SAFETY_CAUTION, Tube
from rheofit.ingest import read_flow_curve
from rheofit.jobs.analysis import OperatingCase, analyse
from rheofit.report.html import write_report

BROWSER = shutil.which("chromium") or shutil.which("chromium-browser")
pytestmark = pytest.mark.skipif(BROWSER is None, reason="no chromium on this machine")

# no network, no profile, no background services: the page must render from the file alone
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
         "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"]


@pytest.fixture(scope="module")
def report_path(tmp_path_factory):
    folder = tmp_path_factory.mktemp("browser")
    curve = read_flow_curve(files("rheofit.sample_data") / "microgel_carrier.csv")
    case = OperatingCase("tube, 50 µL/min", Tube("0.8 mm", "30 cm"), flow_rate=50e-9 / 60)
    return write_report(folder / "report.html", analyse([curve], cases=[case]))


def _chromium(tmp_path, *args):
    profile = tmp_path / "profile"
    return subprocess.run([BROWSER, *FLAGS, f"--user-data-dir={profile}", *args],
                          capture_output=True, text=True, timeout=120)


def test_rendered_dom_holds_the_figures_and_the_caution(report_path, tmp_path):
    done = _chromium(tmp_path, "--dump-dom", report_path.as_uri())
    assert done.returncode == 0, done.stderr[-2000:]
    dom = done.stdout
    source = report_path.read_text(encoding="utf-8")
    assert dom.count("<svg") == source.count("<svg") >= 4  # every inline figure survived parsing
    assert SAFETY_CAUTION.split(";")[0][:60] in re.sub(r"\s+", " ", dom)
    assert "Herschel" in dom


def test_screenshot_is_not_blank(report_path, tmp_path):
    shot = tmp_path / "page.png"
    done = _chromium(tmp_path, f"--screenshot={shot}", "--window-size=1200,2000", report_path.as_uri())
    assert done.returncode == 0 and shot.exists(), done.stderr[-2000:]
    import matplotlib.image

    pixels = matplotlib.image.imread(shot)
    assert pixels.shape[:2] == (2000, 1200)
    assert pixels[..., :3].std() > 0.05  # text, tables and figures, not an empty page
