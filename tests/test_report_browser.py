"""The HTML report in a real browser: headless Chromium renders it offline.

A probe script is put in a copy of the page (the report itself has no
script); it records page errors and, once the page has loaded, writes the
size of the first drawing and spectrum and the number of fetched resources
into the DOM, which Chromium prints with --dump-dom.  Chromium comes from
Debian's ``chromium`` package: `.ci/run` installs it in CI; elsewhere the
test is skipped with a message when it is absent.
"""

from __future__ import annotations

import json
import os
import re
import subprocess
from pathlib import Path

import pytest

from elucidate.report import render_html

from report_fixtures import ethyl_acetate_result, ethyl_benzoate_result

CHROMIUM = "/usr/bin/chromium"

_PROBE = """<script>
window.__errors = [];
window.addEventListener("error", function (e) { window.__errors.push(String(e.message || e.type)); }, true);
(function () {
  var original = console.error;
  console.error = function () { window.__errors.push(Array.prototype.join.call(arguments, " ")); original.apply(console, arguments); };
})();
window.addEventListener("load", function () {
  function size(el) { if (!el) return [0, 0]; var r = el.getBoundingClientRect(); return [r.width, r.height]; }
  var out = {
    drawing: size(document.querySelector("svg.mol")),
    spectrum: size(document.querySelector("svg.spectrum")),
    drawings: document.querySelectorAll("section.card svg.mol").length,
    cards: document.querySelectorAll("section.card").length,
    resources: performance.getEntriesByType("resource").length,
    errors: window.__errors
  };
  var pre = document.createElement("pre");
  pre.id = "probe";
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
});
</script>"""


def _chromium() -> str:
    if os.path.exists(CHROMIUM) and os.access(CHROMIUM, os.X_OK):
        return CHROMIUM
    if os.environ.get("CI") == "true":
        pytest.fail(f"{CHROMIUM} is missing in CI: .ci/run should have installed Debian's chromium package")
    pytest.skip(f"browser test skipped: {CHROMIUM} not found (apt-get install chromium to run it)")


def _run(args: list[str], tmp_path: Path) -> subprocess.CompletedProcess:
    profile = tmp_path / "profile"
    profile.mkdir(exist_ok=True)
    command = [
        _chromium(),
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--disable-dev-shm-usage",
        f"--user-data-dir={profile}",
        "--enable-logging=stderr",
        "--v=0",
        *args,
    ]
    return subprocess.run(command, capture_output=True, text=True, timeout=120, check=False)


def _solved_u014():
    """The solver's own result for the demo case (real drawings of real output)."""
    from pathlib import Path

    from elucidate.parse import load_problem
    from elucidate.solve import solve

    case = Path(__file__).resolve().parents[1] / "cases" / "u014.toml"
    return solve(load_problem(case), top=5)


@pytest.mark.parametrize("make", [ethyl_acetate_result, ethyl_benzoate_result, _solved_u014])
def test_report_renders_in_headless_chromium(make, tmp_path):
    _chromium()  # skip before any work when there is no browser
    result = make()
    html = render_html(result)
    probed = html.replace("<head>", "<head>\n" + _PROBE, 1)
    page = tmp_path / "report.html"
    page.write_text(probed, encoding="utf-8")
    done = _run(["--window-size=1280,1600", "--dump-dom", page.as_uri()], tmp_path)
    assert done.returncode == 0, done.stderr[-2000:]
    match = re.search(r'<pre id="probe">(.*?)</pre>', done.stdout, re.S)
    assert match, f"probe did not run; stderr: {done.stderr[-2000:]}"
    probe = json.loads(match.group(1).replace("&quot;", '"').replace("&amp;", "&"))
    assert probe["errors"] == []
    assert probe["resources"] == 0  # nothing fetched: the page is self-contained
    assert probe["cards"] == len(result.candidates)
    assert probe["drawings"] == len(result.candidates)
    width, height = probe["drawing"]
    assert width > 0 and height > 0
    width, height = probe["spectrum"]
    assert width > 0 and height > 0
    console = [line for line in done.stderr.splitlines() if "CONSOLE" in line]
    assert console == [], console


def test_screenshot_is_written(tmp_path):
    page = tmp_path / "report.html"
    page.write_text(render_html(ethyl_acetate_result()), encoding="utf-8")
    shot = tmp_path / "shot.png"
    done = _run(["--window-size=1280,1200", "--hide-scrollbars", f"--screenshot={shot}", page.as_uri()], tmp_path)
    assert done.returncode == 0, done.stderr[-2000:]
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert shot.stat().st_size > 20_000  # a drawn page, not a blank one
