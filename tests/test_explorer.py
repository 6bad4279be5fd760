"""The front explorer in a real headless browser: the page loads without script errors, a filter
changes the number of designs shown, and a design's details show its build-sheet command.

Skipped, with the reason, where Chromium is not installed (CI installs Debian's package).
"""
import re
import shutil
import subprocess

import pytest

from fluxfront.cli.main import main
from fluxfront.design.spec import demo_spec_path

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--virtual-time-budget=8000", "--dump-dom"]


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    folder = tmp_path_factory.mktemp("explore")
    spec = folder / "spec.toml"
    spec.write_text(demo_spec_path().read_text().replace('materials = ["all"]',
                                                         'materials = ["mnzn_ferrite_300k", "fesial_powder_60"]'))
    assert main(["run", str(spec), "--out", str(folder / "run"), "--population", "20", "--generations", "10",
                 "--jobs", "1", "--quiet"]) == 0
    assert main(["explore", str(folder / "run")]) == 0
    return folder / "run" / "explore.html"


def _dom(page, fragment, tmp_path):
    if CHROMIUM is None:
        pytest.skip("Chromium is not installed (apt-get install chromium); the browser test needs it")
    out = subprocess.run([CHROMIUM, *FLAGS, f"--user-data-dir={tmp_path / 'profile'}", page.as_uri() + fragment],
                         capture_output=True, text=True, timeout=120)
    return out.stdout


def test_page_is_self_contained(page):
    text = page.read_text()
    assert "http://" not in text.split("<script id='front-data'")[0].split("</script>", 1)[1]   # page body
    assert not re.search(r"<script[^>]+src=", text)          # plotly embedded, nothing fetched


def test_page_loads_without_errors_and_filters_change_the_count(page, tmp_path):
    every = _dom(page, "", tmp_path)
    assert re.search(r'<pre id="errors"></pre>', every), "script errors on the page"
    total = int(re.search(r'<b id="count">(\d+)</b>', every).group(1))
    assert total > 0
    few = int(re.search(r'<b id="count">(\d+)</b>', _dom(page, "#lmax=0.0001", tmp_path)).group(1))
    assert few < total
    details = _dom(page, "#row=0", tmp_path)
    assert "fluxfront pick" in details and "--row 0" in details
