"""Models that load but cannot be meshed or solved end in one message, never a raw traceback
or an exhausted machine.

The first four cases are the fuzzed model files that once ended in a MemoryError (a 12.9 GiB
array), numpy's "Maximum allowed size exceeded" and gmsh's "Could not create line": each now
ends in the package's message naming the file and the field, exit status 2, run under an
address-space limit so a regression cannot take the machine.
"""

from __future__ import annotations

import copy
import resource
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from solver.boundary import StepFailed, describe_written, library_of, run_step, step
from solver.cli import main
from solver.model import load_model, toml_dumps

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "examples"
MEMORY_LIMIT = 3 * 2 ** 30      # bytes of address space for a CLI run under test


def _limit():
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT, MEMORY_LIMIT))


def cli(*args, cwd=None) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "solver.cli", *map(str, args)],
                          capture_output=True, text=True, preexec_fn=_limit, cwd=cwd,
                          timeout=300)


def mutated(tmp_path: Path, example: str, path: tuple, value) -> Path:
    data = tomllib.loads((EXAMPLES / example).read_text())
    node = data
    for k in path[:-1]:
        node = node[k]
    node[path[-1]] = value
    out = tmp_path / f"mutated_{path[-1]}.toml"
    out.write_text(toml_dumps(data))
    return out


ISSUE_CASES = [
    # (example, path in the TOML tables, value, the field the message must name)
    ("embankment.toml", ("section", "embankment", "side_slope"), 2e12,
     "section.embankment.side_slope"),
    ("embankment.toml", ("lines", 0, "points"), 1e30, "lines[1].points"),
    ("two_footings.toml", ("layers", 0, "thickness"), 6e-12, "layers[1].thickness"),
    ("embankment.toml", ("section", "embankment", "crest_width"), 1e300,
     "section.embankment.crest_width"),
]


@pytest.mark.parametrize("example, path, value, field", ISSUE_CASES,
                         ids=[c[3] for c in ISSUE_CASES])
def test_fuzzed_model_ends_in_a_message_naming_the_field(tmp_path, example, path, value,
                                                         field):
    model_file = mutated(tmp_path, example, path, value)
    r = cli("check", model_file)
    assert r.returncode == 2, r.stderr
    assert "Traceback" not in r.stderr
    assert r.stderr.startswith("poroplane: error: ") and r.stderr.count("\n") == 1
    assert str(model_file) in r.stderr and field in r.stderr
    assert "Fix:" in r.stderr


def test_max_elements_refuses_a_larger_mesh_before_meshing(capsys, monkeypatch):
    from solver.sections import gmsh_section

    def no_gmsh(*a, **k):
        raise AssertionError("gmsh was started")

    monkeypatch.setattr(gmsh_section, "gmsh_session", no_gmsh)     # meshing must not start
    f = str(EXAMPLES / "tank_footing.toml")
    for command in (["check", f], ["mesh", f, "-o", "never.msh"]):
        assert main(command + ["--max-elements", "100"]) == 2
        err = capsys.readouterr().err
        assert "more than the limit of 100" in err and "section.footings[1].width" in err
    with pytest.raises(SystemExit):
        main(["check", f, "--max-elements", "0"])
    assert "expected a positive whole number" in capsys.readouterr().err


def test_mesh_to_a_picture_names_the_accepted_extensions(tmp_path, capsys):
    for name in ("section.png", "section"):
        assert main(["mesh", str(EXAMPLES / "tank_footing.toml"), "-o",
                     str(tmp_path / name)]) == 2
        err = capsys.readouterr().err
        assert "--output" in err and ".msh" in err and ".vtu" in err
        assert not (tmp_path / name).exists()


def test_mesh_writes_each_accepted_format_with_its_quadratic_triangles(tmp_path):
    import meshio
    from solver.cli import MESH_FORMATS
    from solver.sections import build_mesh
    n = build_mesh(load_model(EXAMPLES / "tank_footing.toml")).n_elements
    for ext in MESH_FORMATS:
        target = tmp_path / f"s{ext}"
        assert main(["mesh", str(EXAMPLES / "tank_footing.toml"), "-o", str(target)]) == 0
        back = meshio.read(target)
        assert sum(len(c.data) for c in back.cells if c.type == "triangle6") == n, ext


# ----------------------------------------------------------------------------- the boundary

def _raise_in_numpy():
    import numpy as np
    np.linspace(0.0, 1.0, int(1e30))


def test_step_names_the_step_the_file_and_the_library():
    with pytest.raises(StepFailed) as info:
        with step("set-up", "site.toml"):
            _raise_in_numpy()
    text = str(info.value)
    assert text.startswith("site.toml: set-up failed in numpy (ValueError: ")
    assert "--debug" in text and "Fix:" in text
    assert isinstance(info.value.__cause__, ValueError)    # --debug shows the original
    assert library_of(info.value.__cause__) == "numpy"


def test_step_lets_the_package_messages_and_interrupts_through():
    from solver.errors import InputError
    with pytest.raises(InputError):
        with step("meshing", "site.toml"):
            raise InputError("bad", field="layers[1].thickness", fix="fix it.")
    with pytest.raises(KeyboardInterrupt):
        with step("stepping", "site.toml"):
            raise KeyboardInterrupt


def test_a_memory_error_says_the_step_ran_out_of_memory():
    with pytest.raises(StepFailed, match="meshing ran out of memory"):
        with step("meshing", "site.toml"):
            raise MemoryError("Unable to allocate 12.9 GiB")


def test_writing_is_told_from_stepping_by_where_it_failed():
    assert run_step(OSError(28, "No space left on device")) == "writing the results"
    assert run_step(FloatingPointError("overflow")) == "stepping"


def test_debug_shows_the_traceback_of_the_original(tmp_path, monkeypatch):
    from solver import sections

    def broken(model, **options):
        raise RuntimeError("Could not create line")

    monkeypatch.setattr(sections, "build_mesh", broken)
    f = EXAMPLES / "tank_footing.toml"
    assert main(["check", str(f)]) == 2
    with pytest.raises(StepFailed) as info:
        main(["check", str(f), "--debug"])
    assert isinstance(info.value.__cause__, RuntimeError)


SMALL = {
    "title": "A strip load on one clay layer (invented)",
    "materials": {"clay": {"youngs_modulus": "2 MPa", "permeability": "1e-8 m/s",
                           "unit_weight": 18.0}},
    "layers": [{"material": "clay", "thickness": 6.0}],
    "section": {"kind": "ground", "half": True, "mesh_size": 1.0},
    "loads": [{"name": "fill", "x_left": 0.0, "x_right": 3.0, "pressure": 40.0}],
    "stages": [{"kind": "load", "loads": ["fill"], "duration": 5.0},
               {"kind": "consolidate", "duration": 200.0}],
    "probes": [{"name": "centre", "x": 0.0, "y": 0.0}],
}


def _small(tmp_path) -> Path:
    f = tmp_path / "small.toml"
    f.write_text(toml_dumps(copy.deepcopy(SMALL)))
    return f


def test_a_failure_in_stepping_keeps_the_finished_steps(tmp_path, monkeypatch, capsys):
    from solver.fem import biot
    real, calls = biot.StepSolver.step, []

    def failing(self, state, t):
        calls.append(t)
        if len(calls) > 3:
            raise FloatingPointError("overflow encountered in multiply")
        return real(self, state, t)

    monkeypatch.setattr(biot.StepSolver, "step", failing)
    out = tmp_path / "run"
    status = main(["run", str(_small(tmp_path)), "-o", str(out), "--quiet", "--no-plots"])
    err = capsys.readouterr().err
    assert status == 2
    assert "stepping failed (FloatingPointError: overflow" in err and "small.toml" in err
    assert f"kept in {out}/" in err and "probes.csv" in err
    rows = (out / "probes.csv").read_text().strip().splitlines()
    assert len(rows) == 1 + 1 + 3      # the header, the state at t = 0, three finished steps


def test_a_failure_in_plotting_keeps_the_finished_run(tmp_path, monkeypatch, capsys):
    from solver import plots

    def broken(*a, **k):
        raise ValueError("Image size of 9e9 x 300 pixels is too large")

    monkeypatch.setattr(plots, "plot_command", broken)
    out = tmp_path / "run"
    status = main(["run", str(_small(tmp_path)), "-o", str(out), "--quiet"])
    err = capsys.readouterr().err
    assert status == 2
    assert "plotting failed (ValueError: Image size" in err
    assert f"The run is complete in {out}/" in err
    assert (out / "summary.json").exists() and (out / "probes.csv").exists()
    assert describe_written(out).startswith(f"What was written before is kept in {out}/")


def test_run_prints_the_plausibility_warnings_before_it_starts(tmp_path, capsys):
    data = copy.deepcopy(SMALL)
    data["materials"]["clay"]["youngs_modulus"] = 2.0       # bare: kPa, meant MPa
    f = tmp_path / "soft.toml"
    f.write_text(toml_dumps(data))
    assert main(["run", str(f), "-o", str(tmp_path / "run"), "--quiet", "--no-plots"]) == 0
    err = capsys.readouterr().err.splitlines()
    first = next(i for i, line in enumerate(err) if line.startswith(SMALL["title"]))
    assert any(line.startswith("warning: materials.clay.youngs_modulus: youngs_modulus = "
                               "2 kPa = 0.002 MPa is below the range") for line in err[:first])


def test_check_prints_the_plausibility_warnings(tmp_path, capsys):
    data = copy.deepcopy(SMALL)
    data["materials"]["clay"]["permeability"] = 1e-9      # bare: m/day
    f = tmp_path / "slow.toml"
    f.write_text(toml_dumps(data))
    assert main(["check", str(f)]) == 0
    out = capsys.readouterr().out
    assert "warning: materials.clay.permeability: permeability = 1e-9 m/day = " \
           "1.2e-14 m/s" in out
    assert load_model(f).materials["clay"].permeability_x == 1e-9
