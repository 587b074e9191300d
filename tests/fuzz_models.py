"""Fuzzing model files: mutated copies of every example, read and meshed under a memory limit.

Each case takes one example model file (``examples/*.toml``), changes one to three fields to
odd values (a value scaled by a typing slip's factor, replaced by an extreme or a wrong type,
or deleted), reads it with ``model_from_dict`` and meshes it with ``build_mesh``. The only
acceptable outcomes are a mesh or the package's own message (a :class:`solver.errors.
PoroplaneError` that names the file and the fix); anything else (a raw exception of gmsh,
numpy or scipy, a process killed for memory or time) is a failure.

The cases run in a worker process (this file run as a script) under ``resource.setrlimit``:
an address-space limit, so a runaway allocation ends in MemoryError instead of taking the
machine, and a CPU-time limit per case. The parent (:func:`fuzz`) reads one JSON line per
case; when the worker dies in a case, that case is recorded as killed and a new worker goes
on with the next one.

    python tests/fuzz_models.py --count 300 --seed 1     # a summary and the failures
"""

from __future__ import annotations

import argparse
import copy
import json
import math
import os
import random
import subprocess
import sys
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "examples").glob("*.toml"))

# Factors of the slips a user makes with a magnitude: a unit prefix (mm for m, kPa for MPa,
# kN for N), a power of ten typed wrong, an exponent's sign flipped, and the absurd.
FACTORS = (1e-300, 1e-30, 1e-12, 1e-9, 1e-6, 1e-3, 1e-2, 0.1, 10.0, 100.0, 1e3, 1e6, 1e9,
           1e12, 1e30, 1e300, -1.0)
# Values that replace a field whatever it held.
ODD = (0, 0.0, -1, -1.0, 1, 2, 6e-12, 2e12, 1e30, 1e300, -1e300, float("nan"), float("inf"),
       True, False, "", "abc", "1e300 m", "1e-300 m", "-3 m", "18 kN/m3", "2 years", [], {},
       [0.0], [1e30, 1.0], 10 ** 9, 10 ** 30)

MEMORY_LIMIT_GB = 3.0       # address space of the worker (it imports numpy, scipy and gmsh)
CPU_SECONDS_PER_CASE = 60.0  # CPU time one case may take before it counts as a runaway
FUZZ_MAX_ELEMENTS = 60_000  # the element limit given to the meshing refusal in the fuzz run


# ----------------------------------------------------------------------------- mutations

def _leaves(node, prefix=()):
    """Every path to a value (scalars, lists and tables alike) in the nested data."""
    out = []
    items = node.items() if isinstance(node, dict) else enumerate(node)
    for k, v in items:
        out.append(prefix + (k,))
        if isinstance(v, (dict, list)):
            out += _leaves(v, prefix + (k,))
    return out


def _scaled(value, factor: float):
    """``value`` times ``factor``: numbers, and the number of a string with units."""
    if isinstance(value, bool):
        return value
    if isinstance(value, int):
        f = value * factor
        return int(f) if math.isfinite(f) and abs(f) < 1e18 and f == int(f) else f
    if isinstance(value, float):
        return value * factor
    if isinstance(value, str):
        head, _, unit = value.strip().partition(" ")
        try:
            return f"{float(head) * factor:g} {unit}".strip()
        except ValueError:
            return value
    return value


def mutate(data: dict, rng: random.Random) -> tuple[dict, list[str]]:
    """A copy of ``data`` with one to three fields changed; the changes as TOML-like text."""
    data = copy.deepcopy(data)
    changes: list[str] = []
    for _ in range(rng.choice((1, 1, 2, 3))):
        paths = [p for p in _leaves(data) if p[0] != "title"]
        if not paths:
            break
        # Numbers and quantities are where slips happen and what reaches the mesher: favour
        # them over tables and names.
        numeric = [p for p in paths if _is_quantity(_get(data, p))]
        path = rng.choice(numeric if numeric and rng.random() < 0.85 else paths)
        parent, key = _get(data, path[:-1]), path[-1]
        op = rng.choices(("scale", "replace", "delete"), weights=(6, 3, 1))[0]
        name = _name(path)
        if op == "scale" and _is_quantity(parent[key]):
            parent[key] = _scaled(parent[key], rng.choice(FACTORS))
            changes.append(f"{name} = {parent[key]!r}")
        elif op == "delete" and isinstance(parent, dict):
            del parent[key]
            changes.append(f"{name} deleted")
        else:
            parent[key] = copy.deepcopy(rng.choice(ODD))
            changes.append(f"{name} = {parent[key]!r}")
    return data, changes


def _is_quantity(v) -> bool:
    if isinstance(v, bool):
        return False
    if isinstance(v, (int, float)):
        return True
    if isinstance(v, str):
        try:
            float(v.strip().split(" ")[0])
            return True
        except ValueError:
            return False
    return isinstance(v, list) and bool(v) and all(_is_quantity(x) for x in v)


def _get(node, path):
    for k in path:
        node = node[k]
    return node


def _name(path) -> str:
    """A path as the package names fields: ``layers[2].thickness`` (lists from 1)."""
    out = ""
    for k in path:
        out += f"[{k + 1}]" if isinstance(k, int) else (f".{k}" if out else str(k))
    return out


GRADED_EVERY = 4   # one case in this many keeps the grading toward draining boundaries


def case(i: int, seed: int) -> tuple[Path, dict, list[str]]:
    """Case ``i`` of the run with ``seed``: the example, the mutated data, the changes.

    Coarse on purpose: the grading toward draining boundaries (checked in
    tests/test_grading.py) makes the examples' meshes three to four times larger and slower;
    it is kept in one case of :data:`GRADED_EVERY` and turned off in the others before they
    are mutated (so a mutation may change it)."""
    rng = random.Random(seed * 1_000_003 + i)
    example = EXAMPLES[i % len(EXAMPLES)]
    base = tomllib.loads(example.read_text(encoding="utf-8"))
    sec = base.get("section", {})
    if i % GRADED_EVERY and sec.get("kind", "mesh" if "mesh_file" in sec else "") != "mesh":
        sec.setdefault("grading", {"enabled": False})
    data, changes = mutate(base, rng)
    return example, data, changes


# ----------------------------------------------------------------------------- one case

def run_case(example: Path, data: dict) -> dict:
    """Read and mesh; return the outcome: "meshed", "refused" (the package's message, at
    reading or at meshing), or "failed" (anything else) with the message."""
    from solver.errors import PoroplaneError
    from solver.model import model_from_dict
    from solver import sections
    step = "reading"
    try:
        model = model_from_dict(data, source=str(example))
        step = "meshing"
        mesh = sections.build_mesh(model, max_elements=FUZZ_MAX_ELEMENTS)
    except PoroplaneError as exc:
        ok = getattr(exc, "source", None) == str(example) and bool(getattr(exc, "fix", None))
        return {"outcome": "refused" if ok else "failed", "step": step,
                "message": str(exc) if ok else f"message without file or fix: {exc}"}
    except Exception as exc:   # noqa: BLE001 - that is what the fuzz looks for
        return {"outcome": "failed", "step": step,
                "message": f"{type(exc).__name__}: {str(exc)[:300]}"}
    return {"outcome": "meshed", "step": step, "elements": int(mesh.n_elements)}


def _limit_memory(gb: float) -> None:
    import resource
    limit = int(gb * 2 ** 30)
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))


def _limit_cpu(seconds: float) -> None:
    """SIGXCPU (which ends the process) once this case has used ``seconds`` of CPU time."""
    import resource
    used = resource.getrusage(resource.RUSAGE_SELF)
    now = used.ru_utime + used.ru_stime
    hard = resource.getrlimit(resource.RLIMIT_CPU)[1]
    soft = int(now + seconds) + 1
    resource.setrlimit(resource.RLIMIT_CPU, (soft if hard < 0 else min(soft, hard), hard))


def worker(start: int, stop: int, seed: int, memory_gb: float, cpu: float) -> None:
    """Run cases start..stop-1, one JSON line each on stdout (a "start" line first)."""
    _limit_memory(memory_gb)
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    import solver.sections  # noqa: F401 - import before the clock starts
    for i in range(start, stop):
        example, data, changes = case(i, seed)
        print(json.dumps({"start": i}), flush=True)
        _limit_cpu(cpu)
        t0 = time.perf_counter()
        rec = run_case(example, data)
        rec.update(i=i, example=example.name, changes=changes,
                   seconds=round(time.perf_counter() - t0, 3))
        print(json.dumps(rec), flush=True)


# ----------------------------------------------------------------------------- parent

def fuzz(count: int, seed: int = 1, memory_gb: float = MEMORY_LIMIT_GB,
         cpu: float = CPU_SECONDS_PER_CASE) -> list[dict]:
    """Run ``count`` cases in worker processes; one record per case (see :func:`run_case`;
    "killed" when the worker died in the case)."""
    records: list[dict] = []
    i = 0
    env = {**os.environ, "OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1",
           "MKL_NUM_THREADS": "1", "PYTHONPATH": str(ROOT)}
    while i < count:
        cmd = [sys.executable, str(Path(__file__).resolve()), "--worker", "--start", str(i),
               "--count", str(count), "--seed", str(seed), "--memory-gb", str(memory_gb),
               "--cpu", str(cpu)]
        proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                                text=True, env=env, cwd=ROOT)
        current = None
        for line in proc.stdout:
            rec = json.loads(line)
            if "start" in rec:
                current = rec["start"]
            else:
                records.append(rec)
                current = None
                i = rec["i"] + 1
        err = proc.stderr.read()
        code = proc.wait()
        if current is not None or (code != 0 and i < count):
            k = current if current is not None else i
            example, _, changes = case(k, seed)
            records.append({"i": k, "example": example.name, "changes": changes,
                            "outcome": "killed", "step": "?",
                            "message": f"worker ended with status {code}: "
                                       f"{err.strip()[-300:]}"})
            i = k + 1
    return records


def summary(records: list[dict]) -> dict:
    out = {"cases": len(records)}
    for key in ("meshed", "refused", "failed", "killed"):
        out[key] = sum(r["outcome"] == key for r in records)
    out["refused_at_reading"] = sum(r["outcome"] == "refused" and r["step"] == "reading"
                                    for r in records)
    out["refused_at_meshing"] = out["refused"] - out["refused_at_reading"]
    return out


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--count", type=int, default=300)
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--start", type=int, default=0)
    p.add_argument("--memory-gb", type=float, default=MEMORY_LIMIT_GB)
    p.add_argument("--cpu", type=float, default=CPU_SECONDS_PER_CASE)
    p.add_argument("--worker", action="store_true", help=argparse.SUPPRESS)
    p.add_argument("--json", metavar="FILE", help="write every record to this file")
    p.add_argument("--show", default="failed,killed",
                   help="outcomes to list (comma separated, or 'all')")
    args = p.parse_args(argv)
    if args.worker:
        worker(args.start, args.count, args.seed, args.memory_gb, args.cpu)
        return 0
    t0 = time.perf_counter()
    recs = fuzz(args.count, args.seed, args.memory_gb, args.cpu)
    if args.json:
        Path(args.json).write_text(json.dumps(recs, indent=0))
    show = None if args.show == "all" else set(args.show.split(","))
    for r in recs:
        if show is None or r["outcome"] in show:
            print(f"{r['i']:5d} {r['example']:26s} {r['outcome']:8s} {'; '.join(r['changes'])}"
                  f"\n      {r.get('message', r.get('elements', ''))}")
    print(json.dumps({**summary(recs), "seconds": round(time.perf_counter() - t0, 1)}))
    return 0


if __name__ == "__main__":
    sys.exit(main())
