"""The run folder: never mixed, lost or escaped (resume fingerprint, checksums, locks,
links, names), curves from t = 0, and the default output folder.

Most cases use the invented 1D column of the hand-method tests (47 elements, a quarter of a
second a run); the command line is called as a user meets it where the case is about it.
"""

from __future__ import annotations

import copy
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from solver.errors import InputError, MeshError
from solver.model import dump_toml, load_model, model_from_toml
from solver.results import (INITIAL_STAGE, ResultsError, read_fields, read_lines, read_probes,
                            read_summary, safe_name)
from solver.runner import run as solver_run

from test_hand_estimate import column_model


def run(*args, **kw):
    """The runner without flushing to disk (the cases here are not about power cuts)."""
    return solver_run(*args, fsync=kw.pop("fsync", False), **kw)

ROOT = Path(__file__).resolve().parents[1]


def column(**kw):
    m = column_model(ramp=0.0, wait=400.0, **kw)       # a load applied at once, then waiting
    from solver.model import LineProbe
    m.lines = [LineProbe("centre line", 0.0, 0.0, 0.0, -10.0, points=11, kind="vertical")]
    return m


def interrupted(model, out: Path, after_steps: int = 40) -> None:
    """A run stopped by Ctrl-C after ``after_steps`` steps (a checkpoint each step)."""
    from solver.fem.biot import StepSolver
    real = StepSolver.step
    count = {"n": 0}

    def step(self, state, t):
        count["n"] += 1
        if count["n"] > after_steps:
            raise KeyboardInterrupt
        return real(self, state, t)
    StepSolver.step = step
    try:
        with pytest.raises(KeyboardInterrupt):
            run(model, out)
    finally:
        StepSolver.step = real


def snapshot(d: Path) -> dict[str, bytes]:
    return {p.relative_to(d).as_posix(): p.read_bytes() for p in sorted(d.rglob("*"))
            if p.is_file()}


# ================================================================== 9.4: curves from t = 0
def test_records_start_at_t0_and_an_instant_load_adds_its_undrained_state(tmp_path):
    """Two rows at t = 0: the state before any stage, then the undrained state just after
    the load. Under a load q over the whole top of a saturated column of incompressible
    constituents, the undrained excess pore pressure is q everywhere and nothing settles
    (Terzaghi 1925; e.g. Verruijt 2013, Theory and Problems of Poroelasticity, ch. 2)."""
    m = column()
    r = run(m, tmp_path / "run")
    assert r.stage[:3] == [INITIAL_STAGE, "load", "wait"]
    assert r.time_days[0] == r.time_days[1] == 0.0 < r.time_days[2]
    mid = r.probe("mid")
    assert mid["excess_pore_pressure_kPa"][0] == 0.0 and mid["settlement_m"][0] == 0.0
    assert mid["excess_pore_pressure_kPa"][1] == pytest.approx(50.0, rel=1e-9)
    assert abs(mid["settlement_m"][1]) < 1e-12
    # the same two rows in probes.csv and in the line profiles
    disk = read_probes(tmp_path / "run")["mid"]
    assert list(disk["stage"][:2]) == [INITIAL_STAGE, "load"]
    np.testing.assert_allclose(disk["excess_pore_pressure_kPa"][:2], [0.0, 50.0], rtol=1e-9)
    profiles = read_lines(tmp_path / "run")["centre line"]
    assert [(p["time_days"], p["stage"]) for p in profiles[:2]] == [(0.0, INITIAL_STAGE),
                                                                    (0.0, "load")]
    assert np.all(profiles[0]["excess_pore_pressure_kPa"] == 0.0)
    inner = profiles[1]["excess_pore_pressure_kPa"][1:]          # below the drained top
    np.testing.assert_allclose(inner, 50.0, rtol=1e-6)
    assert [t for t, s, _ in r.lines["centre line"][:2]] == [0.0, 0.0]


def test_the_plots_start_at_zero_and_keep_the_initial_state_out_of_the_stage_marks(tmp_path):
    from solver.plot_data import load_run
    run(column(), tmp_path / "run")
    data = load_run(tmp_path / "run", hand=False)
    assert [s.name for s in data.stages] == ["load", "wait"]
    assert data.stages[0].start_days == 0.0


# ================================================================= 22.1: resume fingerprint
EDITS = [
    ("permeability", lambda m: setattr(m.materials["clay"], "permeability_x",
                                       m.materials["clay"].permeability_x * 10),
     "materials.clay"),
    ("unit weight", lambda m: setattr(m.materials["clay"], "unit_weight", 19.0),
     "materials.clay"),
    ("stiffness", lambda m: setattr(m.materials["clay"], "youngs_modulus", 2500.0),
     "materials.clay"),
    ("load", lambda m: setattr(m.loads[0], "pressure", 60.0), "loads"),
    ("a probe added", lambda m: m.probes.append(copy.deepcopy(m.probes[0])) or
     setattr(m.probes[-1], "name", "new"), "probes"),
    ("a stage longer", lambda m: setattr(m.stages[1], "duration", 500.0), "stages"),
    ("the mesh size", lambda m: setattr(m.section, "mesh_size", 0.4), "section"),
]


@pytest.mark.parametrize("edit, part", [e[1:] for e in EDITS], ids=[e[0] for e in EDITS])
def test_a_resume_with_an_edited_model_is_refused_naming_what_changed(tmp_path, edit, part):
    out = tmp_path / "run"
    interrupted(column(), out)
    before = snapshot(out)
    m = column()
    edit(m)
    with pytest.raises(ResultsError, match=rf"cannot resume .*\b{part}\b.* changed since "
                                           "it started") as e:
        run(m, out, resume=True)
    assert "--force" in str(e.value)
    assert snapshot(out) == before                  # nothing touched


def test_a_finished_run_resumed_with_an_edited_model_is_refused_too(tmp_path):
    out = tmp_path / "run"
    run(column(), out)
    m = column()
    m.materials["clay"].youngs_modulus = 2500.0
    with pytest.raises(ResultsError, match=r"materials.clay( and mesh)? changed"):
        run(m, out, resume=True)
    again = run(column(), out, resume=True)          # the same model: nothing to do
    assert again.info["already_complete"]
    assert again.probe("mid")["settlement_m"][-1] == \
        read_summary(out)["probes"]["mid"]["final_settlement_m"]


def test_resume_continues_byte_for_byte_and_counts_every_session(tmp_path):
    whole, cut = tmp_path / "whole", tmp_path / "cut"
    ref = run(column(), whole)
    interrupted(column(), cut, after_steps=57)
    res = run(column(), cut, resume=True)
    for name in ("probes.csv", "lines.csv", "history.f64", "results.xdmf"):
        assert (cut / name).read_bytes() == (whole / name).read_bytes(), name
    np.testing.assert_array_equal(res.probe("mid")["settlement_m"],
                                  ref.probe("mid")["settlement_m"])
    assert len(res.lines["centre line"]) == len(ref.lines["centre line"])
    info = read_summary(cut)["run"]
    assert info["sessions"] == 2 and info["steps"] == ref.info["steps"]
    assert info["factorizations"] >= ref.info["factorizations"]
    assert read_summary(cut)["probes"] == read_summary(whole)["probes"]


def test_the_checkpoint_stays_small_and_the_history_is_appended(tmp_path):
    """The checkpoint holds the solver state, not the probe history: its size does not grow
    with the steps nor with the number of probes."""
    from solver.model import PointProbe
    sizes = {}
    for n in (2, 500):
        m = column()
        m.probes = [PointProbe(f"p{i}", 0.0, -10.0 * (i + 0.5) / n) for i in range(n)]
        out = tmp_path / f"n{n}"
        interrupted(m, out, after_steps=10)
        early = (out / "checkpoint.npz").stat().st_size
        run(m, out, resume=True)
        sizes[n] = (early, (out / "checkpoint.npz").stat().st_size)
        history = (out / "history.f64").stat().st_size
        steps = read_summary(out)["run"]["steps"]
        assert history == (steps + 1) * 8 * (3 + n * 8 + 11 * 3)     # one record a row time
    assert all(abs(a - b) < 100 for a, b in zip(sizes[500], sizes[2]))   # no probes in it
    assert sizes[500][1] < history / 20
    # it grows only by the list of field steps (their checksums), not by the history
    assert sizes[2][1] - sizes[2][0] < 400 * len(list((tmp_path / "n2" / "fields").glob("s*")))


# ============================================================ 22.2: nothing lost by mistake
def test_a_folder_with_a_run_is_kept_unless_resumed_or_forced(tmp_path):
    out = tmp_path / "run"
    run(column(), out)
    before = snapshot(out)
    with pytest.raises(ResultsError, match="holds a finished run; it is kept"):
        run(column(), out)
    assert snapshot(out) == before
    interrupted(column(), tmp_path / "cut")
    with pytest.raises(ResultsError, match=r"holds an interrupted run \(checkpoint at step 40"):
        run(column(), tmp_path / "cut")


def test_force_keeps_the_old_run_aside_until_the_new_one_is_complete(tmp_path):
    out = tmp_path / "run"
    run(column(), out)
    old = (out / "probes.csv").read_bytes()
    m = column()
    m.loads[0].pressure = 80.0

    def fail(result, summary):
        raise KeyboardInterrupt          # stopped while closing: not complete
    with pytest.raises(KeyboardInterrupt):
        run(m, out, force=True, finish=fail)
    assert not (out / "complete.json").exists()
    assert (out / ".replaced" / "probes.csv").read_bytes() == old
    assert (out / ".replaced" / "complete.json").exists()
    run(m, out, force=True)
    assert not (out / ".replaced").exists()
    assert read_probes(out)["mid"]["excess_pore_pressure_kPa"][1] == pytest.approx(80.0)


def test_a_wrong_argument_deletes_nothing(tmp_path):
    model = tmp_path / "column.toml"
    model.write_text(dump_toml(column()))
    out = tmp_path / "run"
    run(load_model(model), out)
    before = snapshot(out)
    for extra in (["--linear-solver", "superlu_nd"], [], ["--resume", "--force"]):
        r = cli("run", model, "-o", out, "--quiet", "--no-plots", *extra)
        assert r.returncode == 2, r.stderr
        assert r.stderr.count("\n") == 1 and "Traceback" not in r.stderr
    assert snapshot(out) == before


# ================================================================ 22.3: damaged files
def test_a_changed_byte_is_found_on_reading_and_on_resume(tmp_path):
    out = tmp_path / "run"
    interrupted(column(), out)
    probes = out / "probes.csv"
    data = probes.read_bytes()
    i = data.index(b",50,", data.index(b",load,mid,")) + 1   # the undrained pressure
    probes.write_bytes(data[:i] + b"6" + data[i + 1:])
    with pytest.raises(ResultsError, match="probes.csv was changed after its last checkpoint"):
        read_probes(out)
    with pytest.raises(ResultsError, match="probes.csv was changed"):
        run(column(), out, resume=True)
    probes.write_bytes(data)
    run(column(), out, resume=True)
    step = sorted((out / "fields").glob("step_*.h5"))[1]
    raw = bytearray(step.read_bytes())
    raw[-200:-136] = b"\xff" * 64                 # 64 bytes of field data overwritten
    step.write_bytes(bytes(raw))
    with pytest.raises(ResultsError, match=f"{step.name} was changed after the run finished"):
        read_fields(out)
    step.write_bytes(bytes(raw[: len(raw) // 2]))  # cut short
    with pytest.raises(ResultsError, match=step.name):
        read_fields(out)


def test_a_truncated_mesh_file_gives_one_line_from_plot(tmp_path):
    out = tmp_path / "run"
    run(column(), out)
    mesh = out / "fields" / "mesh.h5"
    mesh.write_bytes(mesh.read_bytes()[:500])
    r = cli("plot", out)
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert "mesh.h5" in r.stderr and r.stderr.count("\n") == 1


# ======================================================= 22.4: the lock until complete
def test_the_completion_marker_is_written_last_under_the_lock(tmp_path):
    out = tmp_path / "run"
    seen = {}
    probe_lock = ("import fcntl, os, sys; fd = os.open(sys.argv[1], os.O_RDWR)\n"
                  "try:\n    fcntl.lockf(fd, fcntl.LOCK_EX | fcntl.LOCK_NB); print('free')\n"
                  "except OSError:\n    print('held')")

    def finish(result, summary):       # another process tries the lock while the run closes
        r = subprocess.run([sys.executable, "-c", probe_lock, str(out / ".writer.lock")],
                           capture_output=True, text=True)
        seen["lock"] = r.stdout.strip()
        seen["complete"] = (out / "complete.json").exists()
        return {"summary": {"extra": 1}, "files": {"notes.txt": "x\n"}}
    run(column(), out, finish=finish)
    assert seen == {"lock": "held", "complete": False}
    marker = json.loads((out / "complete.json").read_text())
    for name in ("probes.csv", "summary.json", "notes.txt", "history.f64", "fields/mesh.h5"):
        assert name in marker["files"], name
    assert read_summary(out)["extra"] == 1
    r = subprocess.run([sys.executable, "-c", probe_lock, str(out / ".writer.lock")],
                       capture_output=True, text=True)
    assert r.stdout.strip() == "free"


# ================================================================= 22.5: .geo scripts
GEO = """
SystemCall "touch MARK";
Point(1) = {0, 0, 0, 0.5}; Point(2) = {2, 0, 0, 0.5};
Point(3) = {2, -2, 0, 0.5}; Point(4) = {0, -2, 0, 0.5};
Line(1) = {1, 2}; Line(2) = {2, 3}; Line(3) = {3, 4}; Line(4) = {4, 1};
Curve Loop(1) = {1, 2, 3, 4}; Plane Surface(1) = {1};
Physical Surface("clay") = {1}; Physical Curve("top") = {1}; Physical Curve("base") = {3};
Physical Curve("left") = {4}; Physical Curve("right") = {2};
"""


def test_a_geo_that_calls_the_system_is_refused_unless_trusted(tmp_path):
    from solver.geo_script import untrusted_statements
    from solver.geometry import read_mesh
    mark = tmp_path / "MARK"
    geo = tmp_path / "site.GEO"                    # the extension in capitals reads too
    geo.write_text(GEO.replace("MARK", str(mark)))
    with pytest.raises(MeshError, match=r"line 2: SystemCall \(runs a program\).*--trust-geo"):
        read_mesh(geo)
    assert not mark.exists()
    mesh = read_mesh(geo, trust_geo=True)
    assert mark.exists() and mesh.region_names == ["clay"]
    found = untrusted_statements('Printf("%g", a > 1) > "out.txt";\nPrintf("fine");\n'
                                 '// SystemCall "in a comment"\nx = "Save";\n'
                                 'Include "other.geo";\nGeneral.SaveOptions = 1;\n'
                                 'General.Terminal = 0;\nMesh.Algorithm = 6;\n')
    assert [(ln, what) for ln, what, _ in found] == [(1, "Printf > file"), (5, "Include"),
                                                     (6, "General.SaveOptions")]


def test_check_refuses_a_model_whose_geo_runs_a_command(tmp_path):
    text = (ROOT / "examples" / "irregular_section.toml").read_text()
    geo = tmp_path / "site.geo"
    mark = tmp_path / "MARK"
    geo.write_text((ROOT / "meshes" / "ditch_and_fill.geo").read_text()
                   + f'\nSystemCall "touch {mark}";\n')
    model = tmp_path / "site.toml"
    model.write_text(text.replace("../meshes/ditch_and_fill.msh", str(geo)))
    r = cli("check", model)
    assert r.returncode == 2 and "SystemCall" in r.stderr and "--trust-geo" in r.stderr
    assert not mark.exists()


# =================================================== 22.6 and 22.7: names and links
def test_names_stay_inside_the_run_folder(tmp_path):
    assert safe_name("../../../../tmp/x/pwn").startswith("tmp_x_pwn-")
    assert safe_name("centre_line") == "centre_line"
    assert len({safe_name("a b"), safe_name("a_b"), safe_name("a/b")}) == 3
    m = column()
    m.lines[0].name = "../" * 10 + "tmp/pp_outside/pwn"     # up to / and down to /tmp
    from solver.plot_data import load_run
    from solver.plot_profiles import plot_isochrones
    run(m, tmp_path / "run")
    paths = plot_isochrones(load_run(tmp_path / "run", hand=False), tmp_path / "run" / "plots")
    assert len(paths) == 1
    assert not Path("/tmp/pp_outside").exists()
    assert all((tmp_path / "run" / "plots") in p.parents for p in paths)


@pytest.mark.parametrize("name", ["comparison.csv.tmp", "summary.json.tmp", "run.json.tmp",
                                  "model.toml.tmp", "complete.json.tmp"])
def test_a_planted_link_for_a_temporary_file_is_not_followed(tmp_path, name):
    target = tmp_path / "outside.txt"
    target.write_text("keep me")
    out = tmp_path / "run"
    out.mkdir()
    (out / name).symlink_to(target)
    run(column(), out, model_text="title = 'x'\n",
        finish=lambda r, s: {"files": {"comparison.csv": "a\n"}})
    assert target.read_text() == "keep me"
    assert not (out / name).exists() and (out / "complete.json").exists()


@pytest.mark.parametrize("name", ["probes.csv", ".writer.lock", "fields", "history.f64"])
def test_a_run_folder_with_a_linked_file_is_refused(tmp_path, name):
    target = tmp_path / "outside"
    target.mkdir() if name == "fields" else target.write_text("keep me")
    out = tmp_path / "run"
    interrupted(column(), out)
    p = out / name
    if p.is_dir():
        import shutil
        shutil.rmtree(p)
    else:
        p.unlink()
    p.symlink_to(target)
    with pytest.raises(ResultsError, match=f"{name} is a symbolic link"):
        run(column(), out, resume=True)
    assert target.is_dir() or target.read_text() == "keep me"


def test_a_hard_linked_table_is_not_appended_to(tmp_path):
    out = tmp_path / "run"
    interrupted(column(), out)
    outside = tmp_path / "outside.csv"
    os.link(out / "probes.csv", outside)
    before = outside.read_bytes()
    with pytest.raises(ResultsError, match="not a plain file of its own"):
        run(column(), out, resume=True)
    assert outside.read_bytes() == before


# ============================================================ 22.8: clean messages
def test_output_folders_that_cannot_be_used_give_one_message(tmp_path):
    a_file = tmp_path / "a_file"
    a_file.write_text("x")
    with pytest.raises(ResultsError, match="is a file, not a folder"):
        run(column(), a_file)
    with pytest.raises(ResultsError, match="a part of the path is a file"):
        run(column(), a_file / "sub")
    with pytest.raises(ResultsError, match="too long for the file system"):
        run(column(), tmp_path / ("x" * 256))


def test_crafted_checkpoints_are_refused(tmp_path):
    out = tmp_path / "run"
    interrupted(column(), out)
    good = (out / "checkpoint.npz").read_bytes()

    def craft(change):
        with np.load(out / "checkpoint.npz") as z:
            arrays = {k: z[k] for k in z.files}
        meta = json.loads(arrays["__checkpoint_info__"].tobytes())
        change(arrays, meta)
        arrays["__checkpoint_info__"] = np.frombuffer(json.dumps(meta).encode(), np.uint8)
        np.savez(out / "checkpoint.npz", **arrays)

    cases = [
        (lambda a, m: a.__setitem__("x", a["x"][:-3]), "unknowns are not an array"),
        (lambda a, m: m["info"].pop("stage_starts"), "missing stage_starts"),
        (lambda a, m: m["writer"]["files"]["probes.csv"].__setitem__("bytes", -5),
         "not one this program wrote"),
        (lambda a, m: m["info"].__setitem__("stage", 10**6), "stage = 1000000"),
        (lambda a, m: m.__setitem__("step", "many"), "not one this program wrote"),
    ]
    for change, words in cases:
        (out / "checkpoint.npz").write_bytes(good)
        craft(change)
        with pytest.raises(ResultsError, match=words):
            run(column(), out, resume=True)
    (out / "checkpoint.npz").write_bytes(b"PK\x03\x04 not a zip")
    with pytest.raises(ResultsError, match="cannot read the checkpoint"):
        run(column(), out, resume=True)


def test_deep_toml_and_a_malformed_msh_raise_the_package_errors(tmp_path):
    with pytest.raises(InputError, match="nests arrays or tables too deeply"):
        model_from_toml("a = " + "[" * 1000 + "]" * 1000, source="deep.toml")
    from solver.mesh import read_mesh_file
    bad = tmp_path / "bad.msh"
    bad.write_text("garbage\n")
    with pytest.raises(MeshError, match="cannot read the mesh"):   # meshio would exit
        read_mesh_file(bad)


# =================================================================== 22.9: bounds
def test_names_and_counts_are_bounded(monkeypatch):
    from solver.model import check_model
    m = column()
    m.probes[0].name = "p" * 65
    with pytest.raises(InputError, match=r"probes\[1\].name: the name is 65 characters"):
        check_model(m)
    m = column()
    m.stages[1].name = "initial state"
    with pytest.raises(InputError, match=r"stages\[2\].name"):
        check_model(m)
    m = column()
    m.lines[0].name = "two\nlines"
    with pytest.raises(InputError, match="control character"):
        check_model(m)
    from solver.model import limits
    monkeypatch.setattr(limits, "MAX_PROBES", 1)
    with pytest.raises(InputError, match="2 point probes, more than the 1"):
        check_model(column())


# ================================================== 22.10 and 9.8: the command line
def cli(*args, cwd=None, timeout=300):
    env = dict(os.environ, MPLBACKEND="Agg")
    return subprocess.run([sys.executable, "-m", "solver.cli", *map(str, args)],
                          capture_output=True, text=True, cwd=cwd, timeout=timeout, env=env)


def test_run_without_o_writes_beside_and_refuses_to_overwrite(tmp_path):
    model = tmp_path / "my column.toml"
    model.write_text(dump_toml(column()))
    here = tmp_path / "work"
    here.mkdir()
    r = cli("run", model, "--quiet", "--no-plots", cwd=here)
    assert r.returncode == 0, r.stderr
    out = here / "my column_results"
    assert f"-> {out}" in r.stderr.splitlines()[0] or f"-> {out}" in r.stderr
    assert (out / "complete.json").exists()
    again = cli("run", model, "--quiet", "--no-plots", cwd=here)
    assert again.returncode == 2 and "holds a finished run" in again.stderr
    resumed = cli("run", model, "--quiet", "--no-plots", "--resume", cwd=here)
    assert resumed.returncode == 0 and "already complete" in resumed.stdout


def test_resume_without_a_checkpoint_says_it_starts_from_the_beginning(tmp_path):
    from solver.runner import Runner
    from solver.simulation import Simulation
    runner = Runner(Simulation(column()), tmp_path / "new", resume=True, fsync=False)
    runner.run()
    assert runner.note == f"no checkpoint in {tmp_path / 'new'}: the run starts from the beginning"


def test_sigterm_stops_with_a_message_and_a_resume_hint_keeping_the_options(tmp_path):
    model = tmp_path / "column.toml"
    m = column()
    m.stages[1].duration = 40000.0               # long enough to be stopped in the middle
    m.time_steps.growth = 1.02
    model.write_text(dump_toml(m))
    out = tmp_path / "run"
    env = dict(os.environ, MPLBACKEND="Agg")
    proc = subprocess.Popen([sys.executable, "-m", "solver.cli", "run", str(model), "-o",
                             str(out), "--quiet", "--no-plots", "--linear-solver", "superlu"],
                            stderr=subprocess.PIPE, stdout=subprocess.PIPE, text=True, env=env)
    t_end = time.monotonic() + 120
    while not (out / "checkpoint.npz").exists() and time.monotonic() < t_end:
        time.sleep(0.05)
    time.sleep(0.3)
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 143, err
    last = err.strip().splitlines()[-1]
    assert last.startswith("terminated (SIGTERM): finished steps are kept")
    for word in ("--resume", "--linear-solver superlu", "--no-plots", "--quiet", str(out)):
        assert word in last, word
    assert not (out / "complete.json").exists()


def test_a_folder_that_cannot_be_written_gives_one_message(tmp_path, monkeypatch):
    # (the tests may run as root, for whom permissions do not bite: the error is simulated)
    import errno

    def denied(self, *a, **kw):
        raise PermissionError(errno.EACCES, "Permission denied", str(self))
    monkeypatch.setattr(Path, "mkdir", denied)
    with pytest.raises(ResultsError, match="cannot create the folder .*permission denied. "
                                           r"Fix: choose a folder you can write to"):
        run(column(), tmp_path / "locked" / "run")


def test_a_folder_of_an_earlier_version_is_read_but_not_resumed(tmp_path):
    out = tmp_path / "run"
    interrupted(column(), out)
    with np.load(out / "checkpoint.npz") as z:
        arrays = {k: z[k] for k in z.files}
    meta = json.loads(arrays["__checkpoint_info__"].tobytes())
    meta["format"] = "poroplane results 1"
    arrays["__checkpoint_info__"] = np.array(json.dumps(meta))    # as that version kept it
    np.savez(out / "checkpoint.npz", **arrays)
    assert len(read_probes(out)["mid"]["time_days"]) > 40         # read as it is
    with pytest.raises(ResultsError, match="written by another version of poroplane"):
        run(column(), out, resume=True)
    with pytest.raises(ResultsError, match="another version of poroplane; it is kept"):
        run(column(), out)
    run(column(), out, force=True)


def test_a_finished_run_is_added_to_under_its_lock_and_stays_checked(tmp_path):
    from solver.results import amend_run, verify_run_folder
    out = tmp_path / "run"
    run(column(), out)
    amend_run(out, {"extra.json": "{}\n"}, {"extra": {"a": 1}})
    record = verify_run_folder(out)                 # every file still matches the marker
    assert record.finished and "extra.json" in record.files
    assert read_summary(out)["extra"] == {"a": 1}
    with pytest.raises(ResultsError, match="cannot be added"):
        amend_run(out, {"probes.csv": "x"})
    interrupted(column(), tmp_path / "cut")
    with pytest.raises(ResultsError, match="is not finished"):
        amend_run(tmp_path / "cut", {"extra.json": "{}"})
