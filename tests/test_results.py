"""Results streamed to disk (solver/results.py): read back exactly, survive crashes, resume.

Fields are synthetic functions of the node coordinates and the step number, so every read can
be compared with the values that were written.
"""

from __future__ import annotations

import json
import math
import os
import signal
import subprocess
import sys
import textwrap
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import h5py
import meshio
import numpy as np
import pytest

from solver.geometry import layered_rectangle
from solver.mesh import Mesh
from solver.results import (LINE_COLUMNS, PROBE_COLUMNS, ResultsError, ResultWriter,
                            probe_summary, read_fields, read_lines, read_probes)

STAGES = ["lift 1", "lift 1", "consolidation, long term", "consolidation, long term",
          "consolidation, long term", "consolidation, long term"]


@pytest.fixture(scope="module")
def mesh() -> Mesh:
    return layered_rectangle(2.0, [("a", 1.0), ("b", 1.0)], 0.5)


def step_time(step: int) -> float:
    return 0.25 * 2.0 ** step


def fields_at(mesh: Mesh, step: int) -> dict[str, np.ndarray]:
    x, y = mesh.points.T
    u = np.column_stack([1e-3 * step * x, -1e-3 * step * (2.0 + y)])
    excess = 50.0 * np.exp(-0.3 * step) * np.sin(np.pi * -y / 2.0)
    stress = np.column_stack([-10 * (2 + y) - step, -20 * (2 + y) - step, -12 * (2 + y),
                              0.1 * step * x])
    return {"displacement_m": u, "excess_pore_pressure_kPa": excess,
            "total_pore_pressure_kPa": excess + 9.81 * -y, "effective_stress_kPa": stress}


def probe_rows(step: int) -> list[dict]:
    t = step_time(step)
    return [{"time_days": t, "stage": STAGES[step - 1], "probe": name, "x_m": x, "y_m": -1.0,
             "settlement_m": 0.01 * step * (1 + x), "excess_pore_pressure_kPa": 40.0 / step,
             "vertical_effective_stress_kPa": 10.0 + step}
            for name, x in (("centre", 0.0), ("toe", 1.5))]


def line_rows(step: int) -> list[dict]:
    t = step_time(step)
    return [{"time_days": t, "stage": STAGES[step - 1], "line": "ground surface",
             "distance_m": d, "x_m": d, "y_m": 0.0, "settlement_m": 0.001 * step * (2 - d),
             "horizontal_displacement_m": 1e-4 * d, "excess_pore_pressure_kPa": 0.0}
            for d in np.linspace(0.0, 2.0, 5)]


def state_at(mesh: Mesh, step: int) -> dict[str, np.ndarray]:
    return {"u": np.full(2 * mesh.n_nodes, float(step)), "p": np.arange(7.0) * step}


def write_step(w: ResultWriter, mesh: Mesh, step: int, checkpoint_at=()) -> None:
    w.write_fields(step, step_time(step), STAGES[step - 1], fields_at(mesh, step))
    w.write_probe_rows(probe_rows(step))
    w.write_line_rows(line_rows(step))
    if step in checkpoint_at:
        w.checkpoint(step, step_time(step), state_at(mesh, step),
                     {"stage_index": 0 if step <= 2 else 1, "time_in_stage_days": 1.0})


def run(out: Path, mesh: Mesh, steps, checkpoint_at=(3,)) -> None:
    """A whole run: the steps, then the completion marker."""
    with ResultWriter(out, mesh, run_info={"model": "test"}) as w:
        for k in steps:
            write_step(w, mesh, k, checkpoint_at)
        w.finish()


def structured_mesh(nx: int, ny: int) -> Mesh:
    """A unit-spaced rectangle of 2 nx ny six-node triangles, without gmsh."""
    n1 = 2 * nx + 1
    X, Y = np.meshgrid(np.arange(n1) * 0.5, -np.arange(2 * ny + 1) * 0.5)
    pts = np.column_stack([X.ravel(), -Y.ravel() - ny])
    a, b = np.meshgrid(np.arange(nx) * 2, np.arange(ny) * 2)
    a, b = a.ravel(), b.ravel()

    def node(i, j):
        return (b + j) * n1 + a + i
    t1 = np.column_stack([node(0, 0), node(2, 0), node(2, 2), node(1, 0), node(2, 1), node(1, 1)])
    t2 = np.column_stack([node(0, 0), node(2, 2), node(0, 2), node(1, 1), node(1, 2), node(0, 1)])
    tri = np.concatenate([t1, t2])
    return Mesh(pts, tri, np.zeros(len(tri), dtype=int), ["clay"])


# ------------------------------------------------------------------------------- fields
def test_fields_read_back_exactly(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 5))
    r = read_fields(tmp_path)
    times, stages, points, cells, fields = r
    np.testing.assert_array_equal(times, [step_time(k) for k in range(1, 5)])
    assert stages == STAGES[:4]
    np.testing.assert_array_equal(points, mesh.points)
    np.testing.assert_array_equal(cells, mesh.triangles)
    np.testing.assert_array_equal(r.region, mesh.region)
    assert r.region_names == ["a", "b"]
    assert list(r.steps) == [1, 2, 3, 4]
    for k in range(1, 5):
        for name, a in fields_at(mesh, k).items():
            assert fields[name][k - 1].shape == a.shape
            np.testing.assert_array_equal(fields[name][k - 1], a)
    only = read_fields(tmp_path, names=["excess_pore_pressure_kPa"]).fields
    assert list(only) == ["excess_pore_pressure_kPa"]


def test_xdmf_is_a_temporal_collection_of_triangle6_grids(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 4))
    root = ET.parse(tmp_path / "results.xdmf").getroot()
    assert root.tag == "Xdmf" and root.get("Version") == "3.0"
    (domain,) = list(root)
    (collection,) = domain.findall("Grid")
    assert collection.get("GridType") == "Collection"
    assert collection.get("CollectionType") == "Temporal"
    grids = collection.findall("Grid")
    assert len(grids) == 3
    for k, g in enumerate(grids, start=1):
        assert float(g.find("Time").get("Value")) == step_time(k)
        info = {i.get("Name"): i.get("Value") for i in g.findall("Information")}
        assert info["stage"] == STAGES[k - 1] and info["step"] == str(k)
        topo = g.find("Topology")
        assert topo.get("TopologyType") == "Triangle_6"
        assert int(topo.get("NumberOfElements")) == mesh.n_elements
        assert g.find("Geometry").get("GeometryType") == "XYZ"
        attrs = {a.get("Name"): a for a in g.findall("Attribute")}
        assert attrs["region_id"].get("Center") == "Cell"
        disp = attrs["displacement_m"]
        assert disp.get("AttributeType") == "Vector" and disp.get("Center") == "Node"
        item = disp.find("DataItem")
        assert item.get("Dimensions") == f"{mesh.n_nodes} 3"
        h5name, dataset = item.text.split(":")
        assert (tmp_path / h5name).exists() and dataset == "/displacement_m"
        assert attrs["effective_stress_kPa"].find("DataItem").get("Dimensions") == \
            f"{mesh.n_nodes} 4"


def test_meshio_reads_the_same_series_as_read_fields(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 4))
    ours = read_fields(tmp_path)
    with meshio.xdmf.TimeSeriesReader(tmp_path / "results.xdmf") as reader:
        points, cells = reader.read_points_cells()
        assert reader.num_steps == 3
        np.testing.assert_array_equal(points[:, :2], mesh.points)
        np.testing.assert_array_equal(points[:, 2], 0.0)
        assert cells[0].type == "triangle6"
        np.testing.assert_array_equal(cells[0].data, mesh.triangles)
        for k in range(3):
            t, point_data, cell_data = reader.read_data(k)
            assert t == ours.times[k]
            np.testing.assert_array_equal(cell_data["region_id"][0], mesh.region)
            assert set(point_data) == set(ours.fields)
            for name, a in point_data.items():
                b = ours.fields[name][k]
                if name == "displacement_m":  # in-plane vector padded to three components
                    np.testing.assert_array_equal(a[:, 2], 0.0)
                    a = a[:, :2]
                np.testing.assert_array_equal(a, b)


def test_bad_fields_are_refused_before_anything_is_written(tmp_path, mesh):
    with ResultWriter(tmp_path, mesh) as w:
        w.write_fields(1, 1.0, "s", {"excess_pore_pressure_kPa": np.zeros(mesh.n_nodes)})
        with pytest.raises(ResultsError, match=rf"\({mesh.n_nodes},\)"):
            w.write_fields(2, 2.0, "s", {"excess_pore_pressure_kPa": np.zeros(3)})
        with pytest.raises(ResultsError, match="increase"):
            w.write_fields(1, 2.0, "s", {"excess_pore_pressure_kPa": np.zeros(mesh.n_nodes)})
        with pytest.raises(ResultsError, match="unknown column"):
            w.write_probe_rows([{"time_days": 1.0, "settlement": 0.1}])
    assert read_fields(tmp_path).steps.tolist() == [1]
    assert not list((tmp_path / "fields").glob("*.tmp"))


def test_an_exception_during_a_step_write_leaves_earlier_steps_whole(tmp_path, mesh,
                                                                     monkeypatch):
    w = ResultWriter(tmp_path, mesh)
    write_step(w, mesh, 1)
    write_step(w, mesh, 2)
    calls = []

    def failing(self, name, **kw):
        calls.append(name)
        raise KeyboardInterrupt  # as if Ctrl-C came in the middle of the step
    monkeypatch.setattr(h5py.Group, "create_dataset", failing)
    with pytest.raises(KeyboardInterrupt):
        w.write_fields(3, step_time(3), STAGES[2], fields_at(mesh, 3))
    monkeypatch.undo()
    assert calls
    w.close()
    r = read_fields(tmp_path)
    assert r.steps.tolist() == [1, 2]
    with meshio.xdmf.TimeSeriesReader(tmp_path / "results.xdmf") as reader:
        assert reader.num_steps == 2


# ------------------------------------------------------------------------------- tables
def test_probe_table_has_fixed_columns_with_units(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 3))
    lines = (tmp_path / "probes.csv").read_text().splitlines()
    assert lines[0].split(",") == list(PROBE_COLUMNS)
    assert lines[0] == ("time_days,stage,probe,x_m,y_m,settlement_m,horizontal_displacement_m,"
                        "excess_pore_pressure_kPa,total_pore_pressure_kPa,"
                        "vertical_effective_stress_kPa,horizontal_effective_stress_kPa,"
                        "out_of_plane_effective_stress_kPa,shear_stress_kPa")
    for c in PROBE_COLUMNS + LINE_COLUMNS:  # every numeric column says its unit
        assert c in ("stage", "probe", "line") or c.rsplit("_", 1)[1] in ("m", "kPa", "days")
    assert len(lines) == 1 + 2 * 2
    p = read_probes(tmp_path)
    assert list(p) == ["centre", "toe"]
    np.testing.assert_allclose(p["toe"]["settlement_m"], [0.025, 0.05])
    np.testing.assert_array_equal(p["centre"]["time_days"], [step_time(1), step_time(2)])
    assert np.isnan(p["centre"]["shear_stress_kPa"]).all()  # missing key -> empty -> NaN
    assert list(p["centre"]["stage"]) == STAGES[:2]


def test_line_profiles_group_by_line_and_time(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 4))
    assert (tmp_path / "lines.csv").read_text().splitlines()[0].split(",") == list(LINE_COLUMNS)
    lines = read_lines(tmp_path)
    profiles = lines["ground surface"]
    assert [p["time_days"] for p in profiles] == [step_time(k) for k in range(1, 4)]
    assert profiles[2]["stage"] == "consolidation, long term"  # comma survives quoting
    np.testing.assert_allclose(profiles[1]["settlement_m"], 0.002 * (2 - np.linspace(0, 2, 5)))


def test_a_row_cut_short_by_a_crash_is_left_out_when_reading(tmp_path, mesh):
    with ResultWriter(tmp_path, mesh) as w:     # a run that never checkpointed nor finished
        for k in (1, 2):
            write_step(w, mesh, k)
    path = tmp_path / "probes.csv"
    data = path.read_bytes()
    path.write_bytes(data[:-7])
    p = read_probes(tmp_path)
    assert len(p["centre"]["time_days"]) == 2 and len(p["toe"]["time_days"]) == 1


def test_a_finished_run_with_a_file_cut_or_changed_is_refused_naming_the_file(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 3))
    path = tmp_path / "probes.csv"
    data = path.read_bytes()
    path.write_bytes(data[:-7])
    with pytest.raises(ResultsError, match="probes.csv was changed after the run finished"):
        read_probes(tmp_path)
    path.write_bytes(data.replace(b"0.025", b"0.026"))       # one digit
    with pytest.raises(ResultsError, match="probes.csv was changed"):
        read_probes(tmp_path)
    path.write_bytes(data)
    assert len(read_probes(tmp_path)["toe"]["time_days"]) == 2


# ------------------------------------------------------------------------------- resume
def snapshot(out: Path) -> dict[str, bytes]:
    """Every file's bytes but the ones that carry a clock (run.json, complete.json)."""
    return {p.relative_to(out).as_posix(): p.read_bytes() for p in sorted(out.rglob("*"))
            if p.is_file() and p.name not in ("run.json", ".writer.lock", "complete.json")}


def test_resumed_run_rewrites_files_identical_to_an_uninterrupted_run(tmp_path, mesh):
    whole, crashed = tmp_path / "whole", tmp_path / "crashed"
    run(whole, mesh, range(1, 6))

    w = ResultWriter(crashed, mesh, run_info={"model": "test"})
    for k in range(1, 6):
        write_step(w, mesh, k, checkpoint_at=(3,))
    w.write_text("model_as_read.toml", "title = 'x'\n")
    # The crash: never closed, the last probe row cut mid-row, a half step file left behind.
    probes = crashed / "probes.csv"
    probes.write_bytes(probes.read_bytes()[:-9])
    (crashed / "fields" / "step_000006.h5.tmp").write_bytes(b"\x89HDF half written")
    del w

    with ResultWriter(crashed, mesh, resume=True) as w:
        step, t, arrays, info = w.load_checkpoint()
        assert (step, t) == (3, step_time(3))
        assert info == {"stage_index": 1, "time_in_stage_days": 1.0}
        for name, a in state_at(mesh, 3).items():
            np.testing.assert_array_equal(arrays[name], a)
        assert w.steps == [1, 2, 3]
        assert read_fields(crashed).steps.tolist() == [1, 2, 3]
        assert len(read_probes(crashed)["centre"]["time_days"]) == 3
        for k in (4, 5):
            write_step(w, mesh, k)
        assert (crashed / "model_as_read.toml").exists()  # kept on resume
        w.finish()
    (crashed / "model_as_read.toml").unlink()

    a, b = snapshot(whole), snapshot(crashed)
    assert sorted(a) == sorted(b)
    for name in a:  # tables, XML, step files and checkpoint: the same bytes
        assert a[name] == b[name], name
    marks = [json.loads((d / "complete.json").read_text())["files"] for d in (whole, crashed)]
    marks[1].pop("model_as_read.toml")
    for m in marks:
        m.pop("run.json")                      # its sessions carry the clock
    assert marks[0] == marks[1]
    fa, fb = read_fields(whole), read_fields(crashed)
    np.testing.assert_array_equal(fa.times, fb.times)
    for name in fa.fields:
        np.testing.assert_array_equal(fa.fields[name], fb.fields[name])
    assert json.loads((crashed / "run.json").read_text())["sessions"][-1]["resumed_from_step"] == 3


def test_resume_without_checkpoint_starts_afresh_and_fresh_start_clears_old_results(tmp_path,
                                                                                    mesh):
    with ResultWriter(tmp_path, mesh) as w:
        write_step(w, mesh, 1)
        w.write_text("notes/model.toml", "a = 1\n")
        w.write_summary({"max": float("nan")})
    (tmp_path / "mine.txt").write_text("not the writer's")
    with ResultWriter(tmp_path, mesh, resume=True) as w:  # no checkpoint was made
        assert w.load_checkpoint() is None
        assert w.steps == []
        assert "no checkpoint" in w.note and "from the beginning" in w.note
    assert not (tmp_path / "probes.csv").exists()
    assert not (tmp_path / "results.xdmf").exists()
    assert not (tmp_path / "notes" / "model.toml").exists()
    assert not (tmp_path / "summary.json").exists()
    assert (tmp_path / "mine.txt").exists()  # files it does not own stay


def test_resume_refuses_a_different_mesh_and_a_table_cut_before_the_checkpoint(tmp_path, mesh):
    run(tmp_path, mesh, range(1, 5))
    with pytest.raises(ResultsError, match="mesh changed since it started"):
        ResultWriter(tmp_path, structured_mesh(2, 2), resume=True)
    (tmp_path / "lines.csv").write_bytes((tmp_path / "lines.csv").read_bytes()[:50])
    with pytest.raises(ResultsError, match="cut short"):
        ResultWriter(tmp_path, mesh, resume=True)


def test_summary_and_text_are_written_whole(tmp_path, mesh):
    with ResultWriter(tmp_path, mesh) as w:
        w.write_summary({"final_settlement_m": np.float64(0.5), "t90_days": float("inf"),
                         "per_probe": {"centre": [1, 2]}})
        w.write_text("model_as_read.toml", "[layers]\n")
        with pytest.raises(ResultsError):
            w.write_text("../outside.txt", "x")
        with pytest.raises(ResultsError):
            w.write_text("probes.csv", "x")
    s = json.loads((tmp_path / "summary.json").read_text())
    assert s == {"final_settlement_m": 0.5, "t90_days": None, "per_probe": {"centre": [1, 2]}}
    assert (tmp_path / "model_as_read.toml").read_text() == "[layers]\n"
    assert not list(tmp_path.glob("*.tmp"))


# ----------------------------------------------------------------------------- kill -9
CHILD = textwrap.dedent("""
    import sys, numpy as np
    from solver.mesh import Mesh
    from solver.results import ResultWriter
    z = np.load(sys.argv[2])
    mesh = Mesh(z["points"], z["triangles"], z["region"], ["clay"])
    x = mesh.points[:, 0]
    with ResultWriter(sys.argv[1], mesh, fsync=False) as w:
        step = 0
        while True:
            step += 1
            w.write_fields(step, float(step), "loop", {
                "excess_pore_pressure_kPa": x * step,
                "displacement_m": np.column_stack([x, -x]) * step,
                "effective_stress_kPa": np.tile(x[:, None], (1, 4)) * step})
            w.write_probe_rows([{"time_days": float(step), "probe": "p", "settlement_m": step}])
            if step % 3 == 0:
                w.checkpoint(step, float(step), {"x": x * step}, {"step": step})
            print(step, flush=True)
""")


def test_a_run_killed_while_writing_leaves_earlier_steps_readable(tmp_path):
    mesh = structured_mesh(40, 40)  # 6561 nodes: each step takes a millisecond or two
    np.savez(tmp_path / "mesh.npz", points=mesh.points, triangles=mesh.triangles,
             region=mesh.region)
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    proc = subprocess.Popen([sys.executable, "-c", CHILD, str(out), str(tmp_path / "mesh.npz")],
                            stdout=subprocess.PIPE, env=env, text=True)
    try:
        done = 0
        deadline = time.monotonic() + 20
        while done < 8 and time.monotonic() < deadline:
            line = proc.stdout.readline()
            if not line:
                break
            done = int(line)
        assert done >= 8, "the writing process stopped early"
        with pytest.raises(ResultsError, match="another run"):
            ResultWriter(out, mesh)  # the folder is locked while the run writes
        time.sleep(0.013)  # kill at an arbitrary point of the loop, most likely mid-step
        proc.send_signal(signal.SIGKILL)
        proc.wait(5)
    finally:
        if proc.poll() is None:
            proc.kill()
        proc.stdout.close()
    x = mesh.points[:, 0]
    r = read_fields(out)       # the steps the last checkpoint recorded
    assert r.steps.size >= done - 3 and r.steps.size % 3 == 0
    assert r.steps.tolist() == list(range(1, r.steps.size + 1))
    for i, k in enumerate(r.steps):
        np.testing.assert_array_equal(r.fields["excess_pore_pressure_kPa"][i], x * k)
        np.testing.assert_array_equal(r.fields["displacement_m"][i],
                                      np.column_stack([x, -x]) * k)
    with meshio.xdmf.TimeSeriesReader(out / "results.xdmf") as reader:
        reader.read_points_cells()
        n_xdmf = reader.num_steps
        t, pd, _ = reader.read_data(n_xdmf - 1)
        np.testing.assert_array_equal(pd["excess_pore_pressure_kPa"], x * t)
    assert n_xdmf >= r.steps.size       # the XML may list steps written after the checkpoint
    assert len(read_probes(out)["p"]["time_days"]) == r.steps.size
    with ResultWriter(out, mesh, resume=True) as w:  # the lock died with the process
        step, t, arrays, info = w.load_checkpoint()
        assert step % 3 == 0 and step >= done - 3 and info == {"step": step}
        np.testing.assert_array_equal(arrays["x"], x * step)
        assert w.steps == list(range(1, step + 1))
    assert read_probes(out)["p"]["settlement_m"].tolist() == list(range(1, step + 1))


# ----------------------------------------------------------------------------- summary
def test_probe_summary_times_match_an_exponential_settlement_curve():
    """s(t) = s_inf (1 - exp(-t/tau)) reaches 50 % at tau ln 2 and 90 % at tau ln 10."""
    tau, s_inf = 120.0, 0.35
    t = np.concatenate([[0.0], np.geomspace(1e-2, 40 * tau, 500)])
    s = s_inf * (1 - np.exp(-t / tau))
    u = 80.0 * np.exp(-t / tau)
    u[0] = 0.0
    u[1] = 80.0  # the largest pore pressure comes just after loading
    probes = {"centre": {"time_days": t, "settlement_m": s, "excess_pore_pressure_kPa": u,
                         "stage": np.array(["fill"] + ["wait"] * (t.size - 1), dtype=object)},
              "far": {"time_days": t, "settlement_m": np.zeros_like(t),
                      "excess_pore_pressure_kPa": np.full(t.size, np.nan)}}
    r = probe_summary(probes)["centre"]
    assert r["final_settlement_m"] == pytest.approx(s_inf, rel=1e-12)
    assert r["time_to_50_percent_settlement_days"] == pytest.approx(tau * math.log(2), rel=1e-3)
    assert r["time_to_90_percent_settlement_days"] == pytest.approx(tau * math.log(10), rel=1e-3)
    assert r["largest_excess_pore_pressure_kPa"] == 80.0
    assert r["time_of_largest_excess_pore_pressure_days"] == t[1]
    assert r["stage_of_largest_excess_pore_pressure"] == "wait"
    far = probe_summary(probes)["far"]
    assert far["time_to_50_percent_settlement_days"] is None
    assert far["largest_excess_pore_pressure_kPa"] is None


def test_probe_summary_reads_from_the_written_table(tmp_path, mesh):
    tau = 10.0
    with ResultWriter(tmp_path, mesh, fsync=False) as w:
        for t in np.concatenate([[0.0], np.geomspace(0.01, 400.0, 300)]):
            w.write_probe_rows([{"time_days": t, "stage": "wait", "probe": "centre",
                                 "settlement_m": 0.2 * (1 - math.exp(-t / tau))}])
    r = probe_summary(read_probes(tmp_path))["centre"]
    assert r["time_to_90_percent_settlement_days"] == pytest.approx(tau * math.log(10), rel=1e-3)
