"""The kill matrix (slow): a run stopped by SIGINT, SIGTERM or SIGKILL at many moments, from
the imports to the final writing, resumes to the very bytes of an uninterrupted run.

The coarse embankment of ``make demo`` through the command line, on SuperLU with the
nested-dissection order (the backend every machine has), so the numbers repeat exactly.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SOLVER = ("--linear-solver", "superlu-nd")
N_PROBES = 4
SAME = ("probes.csv", "lines.csv", "history.f64", "results.xdmf", "comparison.csv",
        "model.toml")

pytestmark = pytest.mark.slow


def cli_args(model: Path, out: Path, *extra) -> list[str]:
    return [sys.executable, "-m", "solver.cli", "run", str(model), "-o", str(out), "--quiet",
            "--no-plots", *SOLVER, *extra]


def env():
    return dict(os.environ, MPLBACKEND="Agg")


@pytest.fixture(scope="module")
def model(tmp_path_factory) -> Path:
    text = (ROOT / "examples" / "embankment.toml").read_text()
    path = tmp_path_factory.mktemp("model") / "embankment.toml"
    path.write_text(text.replace("mesh_size = 1.0", "mesh_size = 3.0", 1))
    return path


@pytest.fixture(scope="module")
def reference(model, tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("ref") / "run"
    r = subprocess.run(cli_args(model, out), capture_output=True, text=True, env=env())
    assert r.returncode == 0, r.stderr
    return out


def rows(path: Path) -> int:
    try:
        return path.read_bytes().count(b"\n")
    except FileNotFoundError:
        return 0


# (id, when to send the signal): seconds after the start, rows of probes.csv, or a file
MOMENTS = [("imports", 0.05), ("meshing", 0.8), ("first rows", 1 + N_PROBES),
           ("step 10", 1 + 11 * N_PROBES), ("step 40", 1 + 41 * N_PROBES),
           ("step 80", 1 + 81 * N_PROBES), ("step 120", 1 + 121 * N_PROBES),
           ("last step", "last"), ("summary written", "summary.json"),
           ("comparison written", "comparison.csv")]
SIGNALS = [signal.SIGINT, signal.SIGTERM, signal.SIGKILL]


def wait_for(when, out: Path, ref: Path, proc, t0: float) -> None:
    t_end = time.monotonic() + 180
    while proc.poll() is None and time.monotonic() < t_end:
        if isinstance(when, float):
            if time.monotonic() - t0 >= when:
                return
        elif when == "last":
            if rows(out / "probes.csv") >= rows(ref / "probes.csv"):
                return
        elif isinstance(when, str):
            if (out / when).exists():
                return
        elif rows(out / "probes.csv") >= when:
            return
        time.sleep(0.001)


@pytest.mark.parametrize("sig", SIGNALS, ids=[s.name for s in SIGNALS])
@pytest.mark.parametrize("when", [m[1] for m in MOMENTS], ids=[m[0] for m in MOMENTS])
def test_a_run_stopped_at_any_moment_resumes_to_the_same_bytes(model, reference, tmp_path,
                                                              when, sig):
    out = tmp_path / "run"
    t0 = time.monotonic()
    proc = subprocess.Popen(cli_args(model, out), stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=env())
    wait_for(when, out, reference, proc, t0)
    if proc.poll() is None:
        proc.send_signal(sig)
    _, err = proc.communicate(timeout=120)
    if when != MOMENTS[0][1]:     # Ctrl-C inside Python's own start-up prints its traceback
        assert "Traceback" not in err, err
    if proc.returncode != 0:
        # not finished: no completion marker, and a message unless killed outright
        assert not (out / "complete.json").exists()
        if sig != signal.SIGKILL and out.exists() and proc.returncode in (130, 143):
            assert "--resume" in err.strip().splitlines()[-1]
    if out.exists():
        r = subprocess.run(cli_args(model, out, "--resume"), capture_output=True, text=True,
                           env=env())
    else:                                     # stopped before the folder was made
        r = subprocess.run(cli_args(model, out), capture_output=True, text=True, env=env())
    assert r.returncode == 0, r.stderr
    assert (out / "complete.json").exists()
    for name in SAME:
        assert (out / name).read_bytes() == (reference / name).read_bytes(), name
    steps = sorted(p.name for p in (out / "fields").glob("step_*.h5"))
    assert steps == sorted(p.name for p in (reference / "fields").glob("step_*.h5"))
    for s in steps:
        assert (out / "fields" / s).read_bytes() == (reference / "fields" / s).read_bytes()
    mine, theirs = (json.loads((d / "summary.json").read_text()) for d in (out, reference))
    assert mine["probes"] == theirs["probes"] and mine["comparison"] == theirs["comparison"]
    assert mine["run"]["steps"] == theirs["run"]["steps"]
    assert not list(out.rglob("*.tmp"))
