"""The report rendered by a real headless browser (Debian's chromium), offline.

Skipped, with the reason shown, where no chromium is installed; `.ci/run`
installs it from Debian's packages when it can.
"""

from __future__ import annotations

import html
import json
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


@pytest.fixture(scope="module")
def lot_report_path(tmp_path_factory):
    """Three lots compared in a tube: the widest table of any report (parameters, intervals,
    deviations, the 'within tolerance' column last)."""
    folder = tmp_path_factory.mktemp("lots")
    curves = [read_flow_curve(files("rheofit.sample_data") / f"medium_lot_{lot}.csv") for lot in "ABC"]
    case = OperatingCase("tube, 50 µL/min", Tube("0.8 mm", "30 cm"), flow_rate=50e-9 / 60)
    return write_report(folder / "lots.html", analyse(curves, cases=[case]))


#: appended to a copy of the report (never to the report itself, which carries no script): writes
#: each table's right edge and the right edge of the page's content box into the DOM
MEASURE = """<script>
(function () {
  var main = document.querySelector('main'), style = getComputedStyle(main);
  var edge = main.getBoundingClientRect().right - parseFloat(style.paddingRight);
  var tables = Array.prototype.map.call(document.querySelectorAll('table'), function (t) {
    var head = t.querySelectorAll('tr')[0].children;
    return {head: t.querySelectorAll('tr')[0].innerText, right: head[head.length - 1].getBoundingClientRect().right};
  });
  var pre = document.createElement('pre');
  pre.id = 'layout';
  pre.textContent = JSON.stringify({edge: edge, tables: tables});
  document.body.appendChild(pre);
})();
</script>"""


@pytest.mark.parametrize("width", [1024, 1280])
def test_every_table_fits_the_page_at_common_widths(lot_report_path, tmp_path, width):
    # common practice, no source: 1024 px and 1280 px are the narrowest laptop and projector widths
    page = tmp_path / "measured.html"
    page.write_text(lot_report_path.read_text(encoding="utf-8").replace("</body>", MEASURE + "</body>"),
                    encoding="utf-8")
    done = _chromium(tmp_path, f"--window-size={width},900", "--dump-dom", page.as_uri())
    assert done.returncode == 0, done.stderr[-2000:]
    layout = json.loads(html.unescape(re.search(r'<pre id="layout">(.*?)</pre>', done.stdout, re.S).group(1)))
    assert len(layout["tables"]) > 10
    cut = [t["head"][:60] for t in layout["tables"] if t["right"] > layout["edge"] + 0.5]
    assert not cut, f"cut off at {width} px: {cut}"
    assert any("within tolerance" in t["head"] for t in layout["tables"])
