"""The run folder's names and columns, and the small file helpers every part uses."""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
from pathlib import Path

import numpy as np

from ..errors import PoroplaneError
from ..mesh import Mesh

FORMAT = "poroplane results 1"

PROBE_COLUMNS = (
    "time_days", "stage", "probe", "x_m", "y_m", "settlement_m", "horizontal_displacement_m",
    "excess_pore_pressure_kPa", "total_pore_pressure_kPa", "vertical_effective_stress_kPa",
    "horizontal_effective_stress_kPa", "out_of_plane_effective_stress_kPa", "shear_stress_kPa",
)
LINE_COLUMNS = (
    "time_days", "stage", "line", "distance_m", "x_m", "y_m", "settlement_m",
    "horizontal_displacement_m", "excess_pore_pressure_kPa",
)
TEXT_COLUMNS = frozenset({"stage", "probe", "line"})

XDMF_NAME = "results.xdmf"
FIELDS_DIR = "fields"
MESH_NAME = "mesh.h5"
PROBES_NAME = "probes.csv"
LINES_NAME = "lines.csv"
CHECKPOINT_NAME = "checkpoint.npz"
SUMMARY_NAME = "summary.json"
RUN_NAME = "run.json"
LOCK_NAME = ".writer.lock"
_OWNED = (XDMF_NAME, PROBES_NAME, LINES_NAME, CHECKPOINT_NAME, SUMMARY_NAME, RUN_NAME)
_STEP_RE = re.compile(r"^step_(\d+)\.h5$")
_NAME_RE = re.compile(r"^[A-Za-z0-9_.\-]+$")
_FLOAT_FORMAT = ".12g"  # 12 significant digits: exact enough, short enough to read


class ResultsError(PoroplaneError):
    """Results that cannot be written or read as asked (bad field, broken resume, ...)."""


def _fsync_path(path: Path) -> None:
    """Flush a file (or a folder, for the names in it) to disk."""
    flags = (os.O_RDONLY | getattr(os, "O_DIRECTORY", 0)) if path.is_dir() else os.O_RDONLY
    try:
        fd = os.open(path, flags)
    except OSError:  # pragma: no cover - folders cannot be opened on some systems
        return
    try:
        os.fsync(fd)
    except OSError:  # pragma: no cover
        pass
    finally:
        os.close(fd)


def _tmp(path: Path) -> Path:
    return path.with_name(path.name + ".tmp")


def _atomic_write_bytes(path: Path, data: bytes, fsync: bool = True) -> None:
    """Write to ``path.tmp``, then rename over ``path``: readers see the old or the new file."""
    tmp = _tmp(path)
    with open(tmp, "wb") as f:
        f.write(data)
        if fsync:
            f.flush()
            os.fsync(f.fileno())
    os.replace(tmp, path)
    if fsync:
        _fsync_path(path.parent)


def _json_default(obj):
    if isinstance(obj, np.generic):
        return obj.item()
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, Path):
        return str(obj)
    raise TypeError(f"{type(obj).__name__} is not JSON serialisable")


def _finite_or_none(obj):
    """JSON has no NaN or infinity: write them as null."""
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {k: _finite_or_none(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_finite_or_none(v) for v in obj]
    return obj


def _to_json(obj, indent: int | None = 2) -> str:
    plain = json.loads(json.dumps(obj, default=_json_default))  # numpy -> plain Python
    return json.dumps(_finite_or_none(plain), indent=indent, allow_nan=False)


def mesh_fingerprint(mesh: Mesh) -> str:
    """SHA-256 of points, triangles and regions: tells whether a resumed run has the same mesh."""
    h = hashlib.sha256()
    for a in (mesh.points, mesh.triangles, mesh.region):
        h.update(str(a.shape).encode())
        h.update(np.ascontiguousarray(a).tobytes())
    h.update(json.dumps(list(mesh.region_names)).encode())
    return h.hexdigest()

