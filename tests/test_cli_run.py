"""The command line as a user meets it: subprocess calls of ``python -m solver.cli``.

Runs use the coarse embankment of ``make demo`` (a modified copy in a temporary folder) and,
for the runs compared number by number, the SuperLU backend on a nested-dissection order,
which is the default wherever the optional PARDISO is not installed (as in CI).
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from solver.geometry import read_mesh
from solver.results import LINE_COLUMNS, PROBE_COLUMNS, TEXT_COLUMNS, read_fields

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "examples"
SOLVER = ("--linear-solver", "superlu-nd")
N_PROBES = 4          # probes of the embankment example


def cli(*args, cwd=None, timeout=300) -> subprocess.CompletedProcess:
    env = dict(os.environ, MPLBACKEND="Agg")
    return subprocess.run([sys.executable, "-m", "solver.cli", *map(str, args)],
                          capture_output=True, text=True, cwd=cwd, timeout=timeout, env=env)


def start(*args, cwd=None) -> subprocess.Popen:
    env = dict(os.environ, MPLBACKEND="Agg")
    return subprocess.Popen([sys.executable, "-m", "solver.cli", *map(str, args)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=cwd,
                            env=env)


def replace_once(text: str, old: str, new: str, after: str = "") -> str:
    """``text`` with the first ``old`` after the first ``after`` replaced by ``new``."""
    i = text.index(after) if after else 0
    j = text.index(old, i)
    return text[:j] + new + text[j + len(old):]


def rows(path: Path) -> int:
    try:
        return path.read_bytes().count(b"\n")
    except FileNotFoundError:
        return 0


def wait_for_rows(path: Path, n: int, proc: subprocess.Popen, timeout: float = 120.0) -> None:
    t_end = time.monotonic() + timeout
    while rows(path) < n:
        if proc.poll() is not None:
            pytest.fail(f"the run ended (status {proc.returncode}) before {n} rows were written:"
                        f" {proc.stderr.read()[-2000:]}")
        if time.monotonic() > t_end:
            proc.kill()
            pytest.fail(f"no {n} rows in {path} after {timeout} s")
        time.sleep(0.002)


def table(path: Path, columns) -> dict[str, np.ndarray]:
    lines = path.read_text().splitlines()
    assert tuple(lines[0].split(",")) == tuple(columns)
    cells = [ln.split(",") for ln in lines[1:]]
    return {c: np.array([r[j] for r in cells], dtype=object if c in TEXT_COLUMNS else float)
            for j, c in enumerate(columns)}


def assert_same_table(a: Path, b: Path, columns) -> None:
    """Same rows, text equal, numbers equal to 1e-9 relative to each column's size."""
    ta, tb = table(a, columns), table(b, columns)
    assert len(ta[columns[0]]) == len(tb[columns[0]])
    for c in columns:
        if c in TEXT_COLUMNS:
            assert list(ta[c]) == list(tb[c]), c
        else:
            scale = max(np.abs(tb[c]).max(), 1e-300)
            np.testing.assert_allclose(ta[c], tb[c], rtol=1e-9, atol=1e-9 * scale, err_msg=c)


# --------------------------------------------------------------------------- fixtures
@pytest.fixture(scope="module")
def embankment(tmp_path_factory) -> Path:
    """The demo embankment on a coarse mesh, as a model file in a temporary folder (coarse on
    purpose, no grading toward the draining boundaries: these tests check files and
    messages)."""
    text = (EXAMPLES / "embankment.toml").read_text()
    text = replace_once(text, "mesh_size = 1.0",
                        "mesh_size = 3.0\ngrading = { enabled = false }")
    path = tmp_path_factory.mktemp("model") / "embankment.toml"
    path.write_text(text)
    return path


@pytest.fixture(scope="module")
def reference(embankment, tmp_path_factory):
    """An uninterrupted run of the coarse embankment: (folder, completed process)."""
    out = tmp_path_factory.mktemp("runs") / "reference"
    r = cli("run", embankment, "-o", out, "--quiet", *SOLVER)
    assert r.returncode == 0, r.stderr
    return out, r


# ------------------------------------------------------------------------- check, mesh
def test_check_prints_the_summary_and_exits_0():
    r = cli("check", EXAMPLES / "embankment.toml")
    assert r.returncode == 0, r.stderr
    out = r.stdout
    assert "Road embankment on soft clay (invented site)" in out
    for word in ("analysis", "mesh", "triangles", "unknowns", "stages", "lift 3", "probes",
                 "centre_ground", "lines", "warning:", "Model is valid; nothing was solved."):
        assert word in out, word
    assert "Traceback" not in r.stderr


def test_mesh_writes_a_mesh_that_reads_back(tmp_path):
    target = tmp_path / "section.msh"
    r = cli("mesh", EXAMPLES / "tank_footing.toml", "-o", target)
    assert r.returncode == 0, r.stderr
    mesh = read_mesh(target)
    assert f"{mesh.n_elements} triangles" in r.stdout
    assert mesh.region_names == ["crust", "soft_clay", "sand"]
    assert {"base", "symmetry", "right", "footing_tank", "ground_free"} <= set(mesh.edges)


# ------------------------------------------------------------------------------- run
def test_run_writes_every_output(embankment, reference):
    out, r = reference
    assert "results in" in r.stdout and "Caution" in r.stdout
    # field time series: the XDMF lists complete step files, which read back
    grids = [g for g in ET.parse(out / "results.xdmf").iter() if g.tag.endswith("Grid")]
    assert grids
    assert (out / "fields" / "mesh.h5").exists()
    # the default plots (settlement, dissipation, ...) as PNG files
    assert len(list((out / "plots").glob("*.png"))) >= 5
    series = read_fields(out)
    assert len(series.times) >= 6                     # at least the end of every stage
    assert "settlement_m" in series.fields and "excess_pore_pressure_kPa" in series.fields
    # probe and line tables, every numeric column with its unit in its name
    probes = table(out / "probes.csv", PROBE_COLUMNS)
    units = ("_m", "_kPa", "_days")
    assert all(c in TEXT_COLUMNS or c.endswith(units) for c in PROBE_COLUMNS + LINE_COLUMNS)
    summary = json.loads((out / "summary.json").read_text())
    run = summary["run"]
    assert len(probes["time_days"]) == N_PROBES * (run["steps"] + 1)   # and the state at t = 0
    assert list(probes["stage"][:N_PROBES]) == ["initial state"] * N_PROBES
    assert (probes["time_days"][:N_PROBES] == 0).all()
    assert (probes["settlement_m"][:N_PROBES] == 0).all()
    lines = table(out / "lines.csv", LINE_COLUMNS)
    assert set(lines["line"]) == {"ground_surface", "centre_line"}
    # summary: run data and, per probe, the final settlement, t50, t90, largest excess p
    for key in ("version", "elements", "dofs", "steps", "wall_seconds"):
        assert key in run, key
    assert run["elements"] > 0 and run["dofs"] > run["elements"] and run["wall_seconds"] > 0
    assert set(summary["probes"]) == {"centre_ground", "crest_edge_ground", "toe",
                                      "upper_clay_centre"}
    for name, p in summary["probes"].items():
        for key in ("final_settlement_m", "time_to_50_percent_settlement_days",
                    "time_to_90_percent_settlement_days", "largest_excess_pore_pressure_kPa"):
            assert key in p, (name, key)
    centre = summary["probes"]["centre_ground"]
    assert 0 < centre["time_to_50_percent_settlement_days"] \
        < centre["time_to_90_percent_settlement_days"]
    assert summary["probes"]["upper_clay_centre"]["largest_excess_pore_pressure_kPa"] > 0
    # the model as read: the copy reads back to the same model, and stands alone
    from solver.model import load_model
    copy, original = load_model(out / "model.toml"), load_model(embankment)
    copy.source = original.source = None
    assert copy == original


def interrupted_run(model: Path, out: Path, sig: int) -> tuple[int, str]:
    """Start a run, send ``sig`` once 15 steps are written: (exit status, stderr)."""
    proc = start("run", model, "-o", out, "--quiet", "--no-plots", *SOLVER)
    wait_for_rows(out / "probes.csv", 1 + N_PROBES * 15, proc)
    proc.send_signal(sig)
    _, err = proc.communicate(timeout=60)
    return proc.returncode, err


def resume_to_the_reference(model: Path, out: Path, ref: Path) -> None:
    """Resume the run in ``out``: it finishes, and its probes are those of ``ref``."""
    r = cli("run", model, "-o", out, "--quiet", "--resume", "--no-plots", *SOLVER)
    assert r.returncode == 0, r.stderr
    assert_same_table(out / "probes.csv", ref / "probes.csv", PROBE_COLUMNS)


def test_run_killed_with_sigkill_resumes_to_the_same_numbers(embankment, reference, tmp_path):
    ref, _ = reference
    out = tmp_path / "killed"
    status, _ = interrupted_run(embankment, out, signal.SIGKILL)
    assert status == -signal.SIGKILL
    assert (out / "checkpoint.npz").exists()
    assert not (out / "summary.json").exists()
    assert rows(out / "probes.csv") < rows(ref / "probes.csv")
    resume_to_the_reference(embankment, out, ref)
    assert_same_table(out / "lines.csv", ref / "lines.csv", LINE_COLUMNS)
    # With this backend the resumed run is byte for byte the uninterrupted one.
    assert (out / "probes.csv").read_bytes() == (ref / "probes.csv").read_bytes()
    assert (out / "lines.csv").read_bytes() == (ref / "lines.csv").read_bytes()
    assert len(read_fields(out).times) == len(read_fields(ref).times)


def test_ctrl_c_stops_cleanly_with_status_130_and_resumes(embankment, reference, tmp_path):
    ref, _ = reference
    out = tmp_path / "interrupted"
    status, err = interrupted_run(embankment, out, signal.SIGINT)
    assert status == 130, err
    assert "Traceback" not in err
    last = err.strip().splitlines()[-1]
    assert last.startswith("interrupted:") and "--resume" in last
    resume_to_the_reference(embankment, out, ref)


def test_mesh_study_prints_a_row_per_probe_and_a_verdict(tmp_path):
    text = (EXAMPLES / "tank_footing.toml").read_text()
    model = tmp_path / "tank.toml"
    model.write_text(replace_once(text, "mesh_size = 0.6",            # coarse on purpose
                                  "mesh_size = 1.5\ngrading = { enabled = false }"))
    r = cli("run", model, "-o", tmp_path / "out", "--quiet", "--mesh-study", "--no-plots")
    assert r.returncode == 0, r.stderr
    lines = r.stdout.splitlines()
    start_at = next(i for i, ln in enumerate(lines) if ln.startswith("Mesh study:"))
    study = lines[start_at:]
    for probe in ("centre", "edge", "clay_centre"):
        assert any(ln.split()[:1] == [probe] for ln in study), probe
    verdict = [ln for ln in study if ln.startswith("Verdict:")]
    assert len(verdict) == 1
    assert "fine enough" in verdict[0] or "REFINE THE MESH" in verdict[0]
    # the whole field and every line, at every output time, with where and when
    assert any("Excess pore pressure field" in ln for ln in study)
    assert any("Settlement along the lines" in ln for ln in study)
    assert any(ln.strip().startswith("Largest change of the excess pore pressure:")
               and " days (" in ln for ln in study)
    assert "excess pore pressure field by" in verdict[0]


# ------------------------------------------------------------------------- bad input
EMBANKMENT = (EXAMPLES / "embankment.toml").read_text()
IRREGULAR = (EXAMPLES / "irregular_section.toml").read_text().replace(
    "../meshes/ditch_and_fill.msh", str(ROOT / "meshes" / "ditch_and_fill.msh"))
HEIGHT_LINE = EMBANKMENT[:EMBANKMENT.index("height = 4.5")].count("\n") + 1

# id, model text (None: no file), words the one line must hold (besides the file's name)
BAD = [
    ("malformed TOML", replace_once(EMBANKMENT, "height = 4.5", "height = 4.5 m"),
     ["not valid TOML", f"line {HEIGHT_LINE}"]),
    ("unknown field", replace_once(EMBANKMENT, "youngs_modulus", "youngs_modulos",
                                   after="[materials.upper_clay]"),
     ["materials.upper_clay.youngs_modulos", "youngs_modulus"]),
    ("bad unit", replace_once(EMBANKMENT, '"16 kN/m3"', '"16 m"',
                              after="[materials.upper_clay]"),
     ["materials.upper_clay.unit_weight"]),
    ("poisson ratio 0.5", replace_once(EMBANKMENT, "poisson_ratio = 0.3", "poisson_ratio = 0.5",
                                       after="[materials.upper_clay]"),
     ["materials.upper_clay.poisson_ratio"]),
    ("negative permeability", replace_once(EMBANKMENT, '"1e-9 m/s"', '"-1e-9 m/s"',
                                           after="[materials.upper_clay]"),
     ["materials.upper_clay.permeability"]),
    ("unknown material", replace_once(EMBANKMENT, 'material = "upper_clay"',
                                      'material = "upper_cley"'),
     ["layers[2].material", "upper_clay"]),
    ("probe outside", replace_once(EMBANKMENT, "x = 15.0", "x = 150.0"), ["probes[3].x"]),
    ("stage places a missing lift", replace_once(EMBANKMENT, "lift = 3", "lift = 4"),
     ["stages[5].lift"]),
    ("unknown stage kind", replace_once(EMBANKMENT, 'kind = "consolidate"',
                                        'kind = "consolidat"'),
     ["stages[2].kind", "consolidate"]),
    ("time in metres", replace_once(EMBANKMENT, 'duration = "20 days"', 'duration = "20 m"'),
     ["stages[1].duration"]),
    ("unknown mesh edge", replace_once(IRREGULAR, '"ditch", "fill_top"', '"ditchh", "fill_top"'),
     ["drainage.drained_edges[2]", "ditch"]),
    ("missing file", None, ["does not exist"]),
]


@pytest.mark.parametrize("text, words", [b[1:] for b in BAD], ids=[b[0] for b in BAD])
def test_bad_input_is_one_line_naming_file_and_field_with_status_2(tmp_path, text, words):
    model = tmp_path / "site_model.toml"
    if text is not None:
        model.write_text(text)
    r = cli("check", model)
    assert r.returncode == 2, r.stdout + r.stderr
    assert "Traceback" not in r.stderr
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1, r.stderr
    assert lines[0].startswith("poroplane: error: ")
    assert "site_model.toml" in lines[0]
    for w in words:
        assert w in lines[0], (w, lines[0])


def test_bad_input_through_run_is_one_line_too(tmp_path):
    model = tmp_path / "site_model.toml"
    model.write_text(replace_once(EMBANKMENT, "x = 15.0", "x = 150.0"))
    r = cli("run", model, "-o", tmp_path / "out")
    assert r.returncode == 2
    assert r.stderr.strip().splitlines() == [r.stderr.strip()]
    assert "probes[3].x" in r.stderr and "Traceback" not in r.stderr
    assert not (tmp_path / "out").exists()


def test_debug_shows_the_traceback(tmp_path):
    model = tmp_path / "site_model.toml"
    model.write_text(replace_once(EMBANKMENT, "lift = 3", "lift = 4"))
    r = cli("--debug", "check", model)
    assert r.returncode != 0
    assert "Traceback" in r.stderr and "InputError" in r.stderr
    assert "stages[5].lift" in r.stderr
