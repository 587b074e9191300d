"""The validate and bench commands as a user runs them."""

import json
import subprocess
import sys

from solver.cli import CASES, main
from solver.validation import CASE_MODULES


def test_cli_lists_the_same_validation_cases_as_the_package():
    assert tuple(CASE_MODULES) == CASES


def test_validate_json_has_the_documented_keys_and_exit_status_zero(tmp_path, capsys):
    status = main(["validate", "--quick", "--json", "--case", "convergence",
                   "--out", str(tmp_path)])
    rows = json.loads(capsys.readouterr().out)
    assert status == 0
    assert rows and all(set(r) == {"case", "quantity", "error", "tolerance", "passed", "source"}
                        for r in rows)
    assert all(r["passed"] for r in rows)
    assert (tmp_path / "convergence.png").exists()


def test_validate_table_names_the_source_and_the_plot_folder(tmp_path, capsys):
    assert main(["validate", "--quick", "--case", "convergence", "--out", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "Ciarlet (1978)" in out and str(tmp_path.resolve()) in out and "passed" in out


def test_unknown_validation_case_is_a_clean_error():
    r = subprocess.run([sys.executable, "-m", "solver.cli", "validate", "--case", "nope"],
                       capture_output=True, text=True)
    assert r.returncode == 2
    assert "--case" in r.stderr and "Traceback" not in r.stderr


def test_bench_json_has_the_documented_keys(capsys):
    assert main(["bench", "--elements", "400", "--steps", "3", "--json",
                 "--linear-solver", "superlu-nd", "--backends", "superlu"]) == 0
    lines = capsys.readouterr().out.splitlines()
    r = json.loads(lines[0])                        # the run's own figures come first
    for key in ("elements", "dofs", "backend", "assembly_s", "assembly_elements_per_s",
                "factor_s", "solve_s", "steps", "total_s", "overhead_ratio", "peak_memory_mb",
                "mesh_s"):
        assert key in r
    assert r["backend"] == "superlu-nd" and r["steps"] == 3
    # total time includes the factorizations and solves it is divided by
    assert r["overhead_ratio"] >= 1.0
    rows = [json.loads(line)["comparison"] for line in lines[1:]]
    assert [row["backend"] for row in rows] == ["superlu"]
    assert rows[0]["status"] == "measured" and rows[0]["residual"] < 1e-9


def test_bench_backends_none_measures_only_the_run(capsys):
    assert main(["bench", "--elements", "300", "--steps", "2", "--json",
                 "--linear-solver", "superlu-nd", "--backends", "none"]) == 0
    assert len(capsys.readouterr().out.splitlines()) == 1


def test_bench_cam_clay_reports_newton_iterations(capsys):
    assert main(["bench", "--material", "cam-clay", "--elements", "300", "--steps", "2",
                 "--json", "--linear-solver", "superlu-nd"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["newton_iterations_max"] >= r["newton_iterations_median"] >= 1
    # every step converged (no step cut) and every iteration factored once
    assert r["substeps"] == 2 and r["newton_iterations"] >= 2
    assert r["factor_s_per_iteration"] < r["iteration_s"]


def test_bench_names_how_to_install_a_missing_backend(monkeypatch, capsys):
    from solver.linalg import pardiso
    monkeypatch.setattr(pardiso, "_pardiso_entry", lambda: None)
    assert main(["bench", "--elements", "200", "--linear-solver", "pardiso"]) == 2
    assert "pip install" in capsys.readouterr().err


def test_bench_refuses_an_unknown_backend():
    r = subprocess.run([sys.executable, "-m", "solver.cli", "bench", "--elements", "200",
                        "--linear-solver", "magic"], capture_output=True, text=True)
    assert r.returncode == 2 and "magic" in r.stderr and "Traceback" not in r.stderr
