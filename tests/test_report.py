"""The HTML report (solver/report.py): self-contained, complete, and it renders in a browser.

The page is opened in headless Chromium (Debian package ``chromium``; ``make test`` installs
it through tools/system-packages.sh): its DOM must hold every section, every embedded image must decode in the browser
and in PIL and carry a picture, and a screenshot of the page must not be blank. The quick
validation is replaced by a fixed result so that the test stays fast; its caching is tested
with a stand-in for the validation run.
"""

from __future__ import annotations

import base64
import io
import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from solver import CAUTION, __version__

from test_plots import n_colours, small_embankment_run

HEADINGS = ("Caution", "Model summary", "Mesh", "Results", "Hand method and finite elements",
            "Validation of the installed version", "Run data")

VALIDATION = {
    "version": __version__, "level": "quick", "when_utc": "2026-01-01 00:00 UTC",
    "seconds": {"terzaghi": 1.0},
    "checks": [
        {"case": "terzaghi", "quantity": "U(Tv=0.2): |U - U_exact|", "error": 0.0008,
         "tolerance": 0.005, "source": "Terzaghi (1925)", "passed": True},
        {"case": "mandel", "quantity": "centre pressure: max |p - p_exact| / p0",
         "error": 0.007, "tolerance": 0.015, "source": "Mandel (1953)", "passed": True},
    ],
    "passed": 2, "failed": 0,
}


def browser() -> str:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    if os.environ.get("POROPLANE_SKIP_BROWSER") == "1":
        pytest.skip("POROPLANE_SKIP_BROWSER=1 and no Chromium installed")
    pytest.fail("the report test needs headless Chromium: apt-get install -y chromium "
                "(make test installs it; set POROPLANE_SKIP_BROWSER=1 to skip locally)")


def chromium(tmp: Path, *args: str, timeout: float = 120.0) -> subprocess.CompletedProcess:
    cmd = [browser(), "--headless", "--no-sandbox", "--disable-gpu",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--no-first-run", "--disable-dev-shm-usage", "--hide-scrollbars",
           f"--user-data-dir={tmp / 'chromium-profile'}", *args]
    r = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)
    assert r.returncode == 0, (cmd, r.returncode, r.stderr[-2000:])
    return r


def decoded_images(page: str) -> list[np.ndarray]:
    out = []
    for b64 in re.findall(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', page):
        with Image.open(io.BytesIO(base64.b64decode(b64))) as im:
            im.load()
            out.append(np.asarray(im.convert("RGB")))
    return out


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory) -> Path:
    return small_embankment_run(tmp_path_factory.mktemp("report") / "run")


@pytest.fixture(scope="module")
def report(run_dir) -> Path:
    from solver.report import write_report
    return write_report(run_dir, validation=VALIDATION, times=[910.0])


def test_report_is_one_self_contained_file(run_dir, report):
    page = report.read_text(encoding="utf-8")
    assert report == run_dir / "report.html"
    assert "<script" not in page.lower() and "<link" not in page.lower()
    assert not re.search(r'(src|href)\s*=\s*"(?!data:)', page), "only data: URIs may be used"
    assert "http://" not in page and "https://" not in page
    assert page.count(CAUTION) >= 2
    for h in HEADINGS:
        assert h in page


def test_report_holds_the_inputs_with_units(report):
    page = report.read_text(encoding="utf-8")
    for text in ("E&#x27; (kPa)", "k_x (m/day)", "thickness at the left edge (m)",
                 "duration, at most (days)", "water table depth below the ground surface (m)",
                 "crest width (m)", "lift 3", "upper_clay", "Cc (-)"):
        assert text in page, text


def test_every_embedded_image_decodes_and_is_a_picture(report):
    images = decoded_images(report.read_text(encoding="utf-8"))
    # the mesh, one pressure and one settlement picture, seven plots (the inclinometer too)
    assert len(images) == 10
    for rgb in images:
        assert rgb.std() > 8.0
        assert n_colours(rgb) > 40


def test_report_renders_in_headless_chromium(report, tmp_path):
    """Chromium loads the page, every image decodes there, and the page is drawn."""
    page = report.read_text(encoding="utf-8")
    probe = ("<script>window.addEventListener('load', function () {"
             "var im = Array.from(document.images);"
             "var ok = im.filter(function (i) { return i.complete && i.naturalWidth > 0; });"
             "document.body.setAttribute('data-images', ok.length + '/' + im.length);});"
             "</script>")
    probed = tmp_path / "probed.html"          # the report itself stays script-free
    probed.write_text(page.replace("</body>", probe + "</body>"), encoding="utf-8")
    r = chromium(tmp_path, "--virtual-time-budget=15000", "--dump-dom", probed.as_uri())
    dom = r.stdout
    heads = re.findall(r"<h2>\s*\d+\s+([^<]+)</h2>", dom)
    assert heads == list(HEADINGS)
    m = re.search(r'data-images="(\d+)/(\d+)"', dom)
    assert m, "the load event did not fire in the browser"
    assert m.group(1) == m.group(2) == "10"
    assert 'id="caution-box"' in dom

    shot = tmp_path / "page.png"
    chromium(tmp_path, "--window-size=1280,4000", f"--screenshot={shot}", report.as_uri())
    with Image.open(shot) as im:
        rgb = np.asarray(im.convert("RGB"))
    assert rgb.shape[:2] == (4000, 1280)
    assert rgb.std() > 20.0 and n_colours(rgb) > 50


def test_comparison_table_is_in_the_report(run_dir, report):
    page = report.read_text(encoding="utf-8")
    section = page[page.index('id="comparison"'):page.index('id="validation"')]
    if "No comparison with the hand method" in section:
        pytest.skip("the hand method is not available in this installation")
    for probe in ("centre_ground", "crest_edge_ground", "toe", "upper_clay_centre"):
        assert probe in section
    assert "ratio FE / hand (-)" in section
    # an embankment has no structure: no building limits, and it says which limits would apply
    assert "building limits apply to structures only" in section


def test_comparison_csv_in_the_folder_is_used(run_dir, tmp_path):
    from solver.report import _comparison_html
    from solver.plots import load_run
    (run_dir / "comparison.csv").write_text(
        "probe,fe_final_settlement_m,hand_final_settlement_m,hints\n"
        "centre_ground,0.25,0.5,settlement: a marker hint\n", encoding="utf-8")
    try:
        html = _comparison_html(load_run(run_dir, hand=False))
    finally:
        (run_dir / "comparison.csv").unlink()
    assert "a marker hint" in html and "from comparison.csv" in html and "0.25" in html


def test_validation_runs_once_and_is_read_back(tmp_path, monkeypatch):
    import solver.validation as validation
    from solver.report import VALIDATION_NAME, validation_status
    calls = []

    def fake_run_all(quick=True, out_dir=None, names=None):
        calls.append(quick)
        return [validation.Check("case", "a quantity", 0.001, 0.01, "a source")], {"case": 0.1}
    monkeypatch.setattr(validation, "run_all", fake_run_all)
    first = validation_status(tmp_path)
    second = validation_status(tmp_path)
    assert calls == [True]
    assert not first["cached"] and second["cached"]
    assert second["checks"][0]["passed"] and second["version"] == __version__
    saved = json.loads((tmp_path / VALIDATION_NAME).read_text())
    saved["version"] = "0.0.0-other"
    (tmp_path / VALIDATION_NAME).write_text(json.dumps(saved))
    validation_status(tmp_path)                # another version: run again
    assert calls == [True, True]


def test_a_failed_check_is_shown_as_failed():
    from solver.report import _validation_html
    v = dict(VALIDATION, checks=[dict(VALIDATION["checks"][0], passed=False, error=0.5)])
    html = _validation_html(v)
    assert "1 of 1 checks failed" in html and 'class="fail"' in html


def test_report_without_pictures_says_why(run_dir, tmp_path, monkeypatch):
    from solver import pictures
    from solver.report import write_report
    run_dir = Path(shutil.copytree(run_dir, tmp_path / "run"))
    monkeypatch.setattr(pictures, "rendering_available",
                        lambda *a, **k: (False, "no OpenGL here (test)"))
    monkeypatch.setattr("solver.plots.plots_of", lambda run, out, times=None: [])
    page = write_report(run_dir, validation=False).read_text(encoding="utf-8")
    assert "No mesh picture: no OpenGL here (test)" in page
    assert "The validation was not run" in page
