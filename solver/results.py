"""Results written as a run goes: field time series, probe and line tables, checkpoints.

A crash (an exception, Ctrl-C or ``kill -9``) loses at most the output step in progress, and a
run can resume from its last checkpoint.

Folder layout (``DIR`` is the ``out_dir`` given to :class:`ResultWriter`)::

    DIR/results.xdmf             time series of nodal fields, opens in ParaView (XDMF 3)
    DIR/fields/mesh.h5           points (n_nodes, 3), cells (n_elements, 6) "Triangle_6",
                                 region_id (n_elements,) and the region names
    DIR/fields/step_000012.h5    one file per output step: one dataset per field
    DIR/probes.csv               one row per probe per output time
    DIR/lines.csv                one row per point of a line per output time
    DIR/checkpoint.npz           solver state at the last checkpoint, with the file lengths
    DIR/summary.json             written at the end of a run
    DIR/run.json                 run information and the text files the writer owns

Why one HDF5 file per step. HDF5 updates its metadata (superblock, object headers, B-trees)
in place; a process killed in the middle of a write can leave a single growing file that the
library no longer opens, losing every earlier step with it. A small file per step, written
under a temporary name and renamed when complete (``os.replace`` is atomic), means a file
named ``step_*.h5`` is always complete, and a kill touches only the temporary file of the
step in progress. ``results.xdmf`` is rewritten the same way after every step and lists only
complete files, so ParaView never meets a half-written step. The cost is one file open per
step (well under a millisecond) and a light XML file that grows by about 2 kB per step.

Durability. Against a killed *process* no ``fsync`` is needed: written data sit in the
operating system's cache and reach the disk anyway. Against a power cut or an operating
system crash, ``fsync=True`` (the default) flushes each step file, each table append and each
renamed file to disk; ``checkpoint`` always does so for everything it points to, so a
checkpoint never refers to data that did not reach the disk.

Array conventions: nodal fields are ``(n_nodes,)`` or ``(n_nodes, k)`` on the 6-node mesh.
An in-plane vector ``(n_nodes, 2)`` (e.g. ``displacement_m``) is stored as a 3-vector with a
zero third component, as ParaView expects, and read back as ``(n_nodes, 2)``. Times are in
days. Column names carry their units.
"""

from __future__ import annotations

import csv
import datetime as _dt
import hashlib
import io
import json
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterator, Sequence
from xml.sax.saxutils import escape, quoteattr

import numpy as np

from .errors import PoroplaneError
from .mesh import Mesh

try:  # POSIX only; without it the writer still works, unguarded against a second writer.
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None

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
_INFO_KEY = "__checkpoint_info__"
_FLOAT_FORMAT = ".12g"  # 12 significant digits: exact enough, short enough to read


class ResultsError(PoroplaneError):
    """Results that cannot be written or read as asked (bad field, broken resume, ...)."""


# ======================================================================= small file helpers
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


# ================================================================================ tables
class _Table:
    """An append-only CSV file with fixed columns; each append is flushed (and fsynced)."""

    def __init__(self, path: Path, columns: Sequence[str], fsync: bool):
        self.path = path
        self.columns = tuple(columns)
        self.fsync = fsync
        self.rows = 0
        self.nbytes = path.stat().st_size if path.exists() else 0
        self._file = None

    def _open(self):
        if self._file is None:
            self._file = open(self.path, "ab")
        return self._file

    def format_rows(self, rows: Sequence[dict]) -> bytes:
        known = set(self.columns)
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        if self.nbytes == 0:
            w.writerow(self.columns)
        for i, row in enumerate(rows):
            extra = set(row) - known
            if extra:
                raise ResultsError(f"row {i} for {self.path.name} has unknown column(s) "
                                   f"{sorted(extra)}; the columns are {list(self.columns)}")
            w.writerow([_cell(row.get(c), c, self.path.name) for c in self.columns])
        return buf.getvalue().encode("utf-8")

    def append(self, rows: Sequence[dict]) -> None:
        if not rows:
            return
        data = self.format_rows(rows)  # all checks before the first byte is written
        f = self._open()
        f.write(data)
        f.flush()
        if self.fsync:
            os.fsync(f.fileno())
        self.nbytes += len(data)
        self.rows += len(rows)

    def truncate(self, nbytes: int, rows: int) -> None:
        self.close()
        size = self.path.stat().st_size if self.path.exists() else 0
        if size < nbytes:
            raise ResultsError(f"{self.path} holds {size} bytes but the checkpoint expects "
                               f"{nbytes}; the file was cut short after the checkpoint, so the "
                               "run cannot resume. Start it afresh (resume=False).")
        if self.path.exists():
            with open(self.path, "r+b") as f:
                f.truncate(nbytes)
                f.flush()
                os.fsync(f.fileno())
        self.nbytes, self.rows = nbytes, rows

    def sync(self) -> None:
        if self._file is not None:
            self._file.flush()
            os.fsync(self._file.fileno())

    def close(self) -> None:
        if self._file is not None:
            self._file.close()
            self._file = None


def _cell(value, column: str, where: str) -> str:
    if value is None:
        return ""
    if column in TEXT_COLUMNS:
        return str(value)
    if isinstance(value, str):
        raise ResultsError(f"{where}: column {column!r} takes a number, got the text {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ResultsError(f"{where}: column {column!r} takes a number, got "
                           f"{type(value).__name__}") from None
    return "" if math.isnan(v) else format(v, _FLOAT_FORMAT)


# ========================================================================= field steps
_XDMF_TYPES = {  # numpy dtype -> (XDMF DataType, Precision)
    np.dtype(np.float64): ("Float", 8), np.dtype(np.float32): ("Float", 4),
    np.dtype(np.int64): ("Int", 8), np.dtype(np.int32): ("Int", 4),
}


def _storage_array(name: str, a, n_nodes: int, single: bool) -> tuple[np.ndarray, int]:
    """The array as stored and its in-plane component count (2 for padded vectors, else 0)."""
    a = np.asarray(a)
    if a.ndim not in (1, 2) or a.shape[0] != n_nodes:
        raise ResultsError(f"field {name!r} has shape {a.shape}; a nodal field must be "
                           f"({n_nodes},) or ({n_nodes}, k) on this mesh of {n_nodes} nodes")
    if a.dtype.kind == "f":
        dtype = np.float32 if single else np.float64
    elif a.dtype.kind in "iub":
        dtype = np.int32 if a.dtype == np.int32 else np.int64
    else:
        raise ResultsError(f"field {name!r} has dtype {a.dtype}; give numbers")
    plane = 0
    if a.ndim == 2 and a.shape[1] == 2:  # an in-plane vector: ParaView wants three components
        out = np.zeros((n_nodes, 3), dtype=dtype)
        out[:, :2] = a
        plane = 2
    else:
        out = np.ascontiguousarray(a, dtype=dtype)
    return out, plane


def _attribute_type(shape: tuple[int, ...]) -> str:
    if len(shape) == 1:
        return "Scalar"
    return {3: "Vector", 6: "Tensor6", 9: "Tensor"}.get(shape[1], "Matrix")


def _data_item(shape, dtype, ref: str) -> str:
    kind, prec = _XDMF_TYPES[np.dtype(dtype)]
    dims = " ".join(str(d) for d in shape)
    return (f'<DataItem DataType="{kind}" Precision="{prec}" Format="HDF" '
            f'Dimensions="{dims}">{escape(ref)}</DataItem>')


@dataclass
class _Step:
    """What the XDMF needs to know of one written step (kept in the checkpoint as JSON)."""
    step: int
    time_days: float
    stage: str
    file: str                        # relative to DIR, e.g. "fields/step_000003.h5"
    fields: list                     # [name, stored shape, dtype str, in-plane components]

    def to_json(self) -> list:
        return [self.step, self.time_days, self.stage, self.file, self.fields]

    @classmethod
    def from_json(cls, v) -> "_Step":
        return cls(int(v[0]), float(v[1]), str(v[2]), str(v[3]),
                   [[f[0], tuple(f[1]), f[2], int(f[3])] for f in v[4]])


# ================================================================================ writer
class ResultWriter:
    """Streams a run's results to ``out_dir`` so that a crash loses at most one output step.

    Parameters
    ----------
    out_dir : folder of the results; created if needed.
    mesh : the 6-node mesh the nodal fields live on.
    resume : False starts afresh, removing the result files a previous run left here. True
        keeps them and cuts everything back to the last checkpoint (table rows and field steps
        written after it are dropped), so that the resumed run rewrites them identically. With
        no checkpoint present, resuming is the same as starting afresh.
    run_info : free information kept in ``run.json`` (model name, version, options ...).
    fsync : flush every step and table append to disk (power-cut safety, a few ms per step).
        Checkpoints are always flushed.
    single_precision : store floating fields as float32, halving the disk used.

    Examples
    --------
    >>> with ResultWriter(out, mesh) as rw:                                 # doctest: +SKIP
    ...     rw.write_fields(1, 0.5, "lift 1", {"excess_pore_pressure_kPa": u})
    ...     rw.write_probe_rows([{"time_days": 0.5, "probe": "centre", "settlement_m": s}])
    ...     rw.checkpoint(1, 0.5, {"u": u}, {"stage": 0})
    """

    def __init__(self, out_dir: str | Path, mesh: Mesh, *, resume: bool = False,
                 run_info: dict | None = None, fsync: bool = True,
                 single_precision: bool = False):
        self.dir = Path(out_dir)
        self.mesh = mesh
        self.fsync = fsync
        self.single_precision = single_precision
        self.fields_dir = self.dir / FIELDS_DIR
        self._closed = False
        self._lock_fd = None
        self.probes = self.lines = None
        self.dir.mkdir(parents=True, exist_ok=True)
        self._lock()
        try:
            self._start(resume, run_info)
        except BaseException:
            self.close()
            raise

    def _start(self, resume: bool, run_info: dict | None) -> None:
        mesh, fsync = self.mesh, self.fsync
        self.fingerprint = mesh_fingerprint(mesh)
        old_run = self._read_run_json()
        self._text_files: list[str] = list(old_run.get("text_files", [])) if resume else []
        self._steps: list[_Step] = []
        self._xdmf_grids: list[str] = []   # the XML of each step, built once
        self._unsynced: list[Path] = []
        ckpt = self._read_checkpoint_file() if resume else None
        if ckpt is None:
            self._remove_owned(old_run)
            self.fields_dir.mkdir(exist_ok=True)
        self.probes = _Table(self.dir / PROBES_NAME, PROBE_COLUMNS, fsync)
        self.lines = _Table(self.dir / LINES_NAME, LINE_COLUMNS, fsync)
        if ckpt is None:
            self._write_mesh()
            sessions = []
        else:
            self._resume_to(ckpt)
            sessions = list(old_run.get("sessions", []))
        sessions.append({"started_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(
            timespec="seconds"), "resumed_from_step": None if ckpt is None else ckpt[0]})
        if run_info is None:
            run_info = old_run.get("run_info", {}) if resume else {}
        self._run = {"format": FORMAT, "run_info": run_info,
                     "n_nodes": mesh.n_nodes, "n_elements": mesh.n_elements,
                     "region_names": list(mesh.region_names), "mesh_sha256": self.fingerprint,
                     "sessions": sessions, "text_files": self._text_files}
        self._write_run_json()

    # ------------------------------------------------------------------ context manager
    def __enter__(self) -> "ResultWriter":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def close(self) -> None:
        """Flush and close the tables. Files stay as they are (a later run may resume)."""
        if self._closed:
            return
        for table in (self.probes, self.lines):
            if table is not None:
                table.close()
        if self._lock_fd is not None:
            os.close(self._lock_fd)
            self._lock_fd = None
        self._closed = True

    # ----------------------------------------------------------------------- fields
    @property
    def steps(self) -> list[int]:
        """Field steps written so far (including those kept from before a resume)."""
        return [s.step for s in self._steps]

    def write_fields(self, step: int, t: float, stage: str,
                     fields: dict[str, np.ndarray]) -> None:
        """Write one output step of nodal fields and add it to ``results.xdmf``.

        Parameters
        ----------
        step : output step number, increasing from call to call.
        t : time, days.
        stage : name of the stage the step belongs to.
        fields : name (with unit, e.g. ``"excess_pore_pressure_kPa"``) -> ``(n_nodes,)`` or
            ``(n_nodes, k)`` array. ``(n_nodes, 2)`` is an in-plane vector, written as a
            3-vector.
        """
        self._check_open()
        import h5py
        step = int(step)
        if self._steps and step <= self._steps[-1].step:
            raise ResultsError(f"field step {step} is not after the last one written "
                               f"({self._steps[-1].step}); "
                               "step numbers must increase")
        stored = {}
        for name, a in fields.items():
            if not _NAME_RE.match(name) or name == "region_id":
                raise ResultsError(f"field name {name!r} must be letters, digits, '_', '.' or "
                                   "'-' (and not 'region_id')")
            stored[name] = _storage_array(name, a, self.mesh.n_nodes, self.single_precision)
        rel = f"{FIELDS_DIR}/step_{step:06d}.h5"
        path = self.dir / rel
        tmp = _tmp(path)
        # Contiguous datasets, no compression: the write is a memory copy into the OS cache.
        with h5py.File(tmp, "w") as f:
            f.attrs["format"] = FORMAT
            f.attrs["step"] = step
            f.attrs["time_days"] = float(t)
            f.attrs["stage"] = str(stage)
            for name, (a, plane) in stored.items():
                ds = f.create_dataset(name, data=a, track_times=False)
                if plane:
                    ds.attrs["in_plane_components"] = plane
        if self.fsync:
            _fsync_path(tmp)
        else:
            self._unsynced.append(path)
        os.replace(tmp, path)
        self._add_step(_Step(step, float(t), str(stage), rel,
                             [[n, a.shape, a.dtype.str, p] for n, (a, p) in stored.items()]))
        self._write_xdmf()

    def _add_step(self, s: _Step) -> None:
        self._steps.append(s)
        self._xdmf_grids.append(self._xdmf_grid(s))

    def _write_mesh(self) -> None:
        import h5py
        path = self.fields_dir / MESH_NAME
        tmp = _tmp(path)
        m = self.mesh
        with h5py.File(tmp, "w") as f:
            f.attrs["format"] = FORMAT
            f.attrs["region_names"] = json.dumps(list(m.region_names))
            f.attrs["mesh_sha256"] = self.fingerprint
            # No time stamps in the files: the same results give the same bytes.
            f.create_dataset("points", data=np.column_stack([m.points, np.zeros(m.n_nodes)]),
                             track_times=False)
            f.create_dataset("cells", data=m.triangles.astype(np.int64), track_times=False)
            f.create_dataset("region_id", data=m.region.astype(np.int64), track_times=False)
        _fsync_path(tmp)
        os.replace(tmp, path)
        _fsync_path(self.fields_dir)

    def _xdmf_grid(self, s: _Step) -> str:
        """One step as a uniform grid; each names the mesh's points and cells itself (no
        XInclude), so the file reads in any XDMF 3 reader."""
        m = self.mesh
        n, ne = m.n_nodes, m.n_elements
        mesh_ref = f"{FIELDS_DIR}/{MESH_NAME}"
        parts = [f'    <Grid Name="step_{s.step:06d}" GridType="Uniform">\n',
                 f'      <Time Value="{s.time_days!r}"/>\n',
                 f'      <Information Name="stage" Value={quoteattr(s.stage)}/>\n',
                 f'      <Information Name="step" Value="{s.step}"/>\n',
                 '      <Geometry GeometryType="XYZ">\n        '
                 + _data_item((n, 3), np.float64, f"{mesh_ref}:/points")
                 + "\n      </Geometry>\n",
                 f'      <Topology TopologyType="Triangle_6" NumberOfElements="{ne}">\n'
                 "        " + _data_item((ne, 6), np.int64, f"{mesh_ref}:/cells")
                 + "\n      </Topology>\n",
                 '      <Attribute Name="region_id" AttributeType="Scalar" Center="Cell">\n'
                 "        " + _data_item((ne,), np.int64, f"{mesh_ref}:/region_id")
                 + "\n      </Attribute>\n"]
        for name, shape, dtype, _plane in s.fields:
            parts.append(f'      <Attribute Name={quoteattr(name)} '
                         f'AttributeType="{_attribute_type(tuple(shape))}" Center="Node">\n'
                         "        " + _data_item(shape, np.dtype(dtype), f"{s.file}:/{name}")
                         + "\n      </Attribute>\n")
        parts.append("    </Grid>\n")
        return "".join(parts)

    def _xdmf_text(self) -> str:
        m = self.mesh
        out = ['<?xml version="1.0" encoding="utf-8"?>\n',
               '<Xdmf Version="3.0">\n',
               "  <Domain>\n",
               '    <Information Name="region_names" Value='
               + quoteattr(json.dumps(list(m.region_names))) + "/>\n",
               '    <Grid Name="time_series" GridType="Collection" CollectionType="Temporal">\n']
        out += self._xdmf_grids
        out += ["    </Grid>\n", "  </Domain>\n", "</Xdmf>\n"]
        return "".join(out)

    def _write_xdmf(self) -> None:
        path = self.dir / XDMF_NAME
        if not self._steps:
            path.unlink(missing_ok=True)
            return
        _atomic_write_bytes(path, self._xdmf_text().encode("utf-8"), fsync=self.fsync)

    # ----------------------------------------------------------------------- tables
    def write_probe_rows(self, rows: list[dict]) -> None:
        """Append rows to ``probes.csv`` (columns :data:`PROBE_COLUMNS`; missing keys empty)."""
        self._check_open()
        self.probes.append(rows)

    def write_line_rows(self, rows: list[dict]) -> None:
        """Append rows to ``lines.csv`` (columns :data:`LINE_COLUMNS`; missing keys empty)."""
        self._check_open()
        self.lines.append(rows)

    # ------------------------------------------------------------------- checkpoints
    def checkpoint(self, step: int, t: float, arrays: dict[str, np.ndarray],
                   info: dict) -> None:
        """Save the solver state so a later run can resume from here.

        Everything written before this call (tables, field steps) is made durable first, then
        ``checkpoint.npz`` is replaced atomically; it records the table lengths and the field
        steps, so a resume cuts the files back to exactly this point.

        Parameters
        ----------
        step : time-step count reached.
        t : time, days.
        arrays : solver state (displacement, pore pressure, material state ...), numeric arrays.
        info : JSON-serialisable bookkeeping (stage index, time in stage, ...).
        """
        self._check_open()
        for name, a in arrays.items():
            if name == _INFO_KEY or np.asarray(a).dtype.hasobject:
                raise ResultsError(f"checkpoint array {name!r} must be a numeric array")
        self.probes.sync()
        self.lines.sync()
        for p in self._unsynced:
            _fsync_path(p)
        self._unsynced = []
        _fsync_path(self.fields_dir)  # the names of the step files
        _fsync_path(self.dir / XDMF_NAME)
        meta = {"format": FORMAT, "step": int(step), "time_days": float(t), "info": info,
                "writer": {"probes_bytes": self.probes.nbytes, "probes_rows": self.probes.rows,
                           "lines_bytes": self.lines.nbytes, "lines_rows": self.lines.rows,
                           "mesh_sha256": self.fingerprint,
                           "field_steps": [s.to_json() for s in self._steps]}}
        try:
            text = json.dumps(meta, default=_json_default)
        except TypeError as exc:
            raise ResultsError(f"checkpoint info must be JSON-serialisable: {exc}") from None
        buf = io.BytesIO()
        np.savez(buf, **{k: np.asarray(v) for k, v in arrays.items()},
                 **{_INFO_KEY: np.array(text)})
        _atomic_write_bytes(self.dir / CHECKPOINT_NAME, buf.getvalue(), fsync=True)

    def load_checkpoint(self) -> tuple[int, float, dict[str, np.ndarray], dict] | None:
        """(step, time in days, state arrays, info) of the last checkpoint, or None."""
        ck = self._read_checkpoint_file()
        if ck is None:
            return None
        step, t, arrays, meta = ck
        return step, t, arrays, meta["info"]

    def _read_checkpoint_file(self):
        path = self.dir / CHECKPOINT_NAME
        if not path.exists():
            return None
        try:
            with np.load(path, allow_pickle=False) as z:
                arrays = {k: z[k] for k in z.files if k != _INFO_KEY}
                meta = json.loads(str(z[_INFO_KEY]))
        except Exception as exc:  # a checkpoint is replaced atomically; this is a foreign file
            raise ResultsError(f"cannot read the checkpoint {path}: {exc}") from None
        return int(meta["step"]), float(meta["time_days"]), arrays, meta

    def _resume_to(self, ckpt) -> None:
        step, _t, _arrays, meta = ckpt
        w = meta["writer"]
        if w["mesh_sha256"] != self.fingerprint:
            raise ResultsError(f"the checkpoint in {self.dir} was made on a different mesh; "
                               "a run can resume only on the mesh it started with. Start it "
                               "afresh (resume=False) or use the original model.")
        for v in w["field_steps"]:
            self._add_step(_Step.from_json(v))
        keep = {Path(s.file).name for s in self._steps}
        for s in self._steps:
            if not (self.dir / s.file).exists():
                raise ResultsError(f"field file {s.file} of the checkpoint at step {step} is "
                                   "missing; the run cannot resume. Start it afresh.")
        self.fields_dir.mkdir(exist_ok=True)
        for p in self.fields_dir.iterdir():
            if p.name.endswith(".tmp") or (_STEP_RE.match(p.name) and p.name not in keep):
                p.unlink()
        if not (self.fields_dir / MESH_NAME).exists():
            self._write_mesh()
        self.probes.truncate(w["probes_bytes"], w["probes_rows"])
        self.lines.truncate(w["lines_bytes"], w["lines_rows"])
        for name in (SUMMARY_NAME, XDMF_NAME + ".tmp", CHECKPOINT_NAME + ".tmp"):
            (self.dir / name).unlink(missing_ok=True)
        self._write_xdmf()
        _fsync_path(self.fields_dir)

    # ----------------------------------------------------------------- other outputs
    def write_summary(self, summary: dict) -> None:
        """``summary.json``, replaced atomically; NaN and infinity become null."""
        self._check_open()
        _atomic_write_bytes(self.dir / SUMMARY_NAME, (_to_json(summary) + "\n").encode(),
                            fsync=self.fsync)

    def write_text(self, name: str, text: str) -> None:
        """A text file in the results folder (e.g. the model as read), replaced atomically."""
        self._check_open()
        rel = Path(name)
        if rel.is_absolute() or ".." in rel.parts or not rel.parts:
            raise ResultsError(f"text file name {name!r} must be a relative path inside "
                               f"{self.dir}")
        if rel.parts[0] in _OWNED + (FIELDS_DIR, LOCK_NAME):
            raise ResultsError(f"text file name {name!r} is one the results use themselves")
        path = self.dir / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        _atomic_write_bytes(path, text.encode("utf-8"), fsync=self.fsync)
        key = rel.as_posix()
        if key not in self._text_files:
            self._text_files.append(key)
            self._write_run_json()

    # ------------------------------------------------------------------------ helpers
    def _check_open(self) -> None:
        if self._closed:
            raise ResultsError(f"the result writer for {self.dir} is closed")

    def _lock(self) -> None:
        """One writer per folder: a second run writing here would interleave its files."""
        if fcntl is None:  # pragma: no cover
            return
        fd = os.open(self.dir / LOCK_NAME, os.O_RDWR | os.O_CREAT, 0o644)
        try:
            # A POSIX record lock: released by the kernel when the process dies, kill -9 too.
            fcntl.lockf(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            os.close(fd)
            raise ResultsError(f"another run is writing results in {self.dir}; wait for it "
                               "to finish or choose another output folder") from None
        self._lock_fd = fd

    def _read_run_json(self) -> dict:
        try:
            return json.loads((self.dir / RUN_NAME).read_text())
        except (OSError, ValueError):
            return {}

    def _write_run_json(self) -> None:
        _atomic_write_bytes(self.dir / RUN_NAME, (_to_json(self._run) + "\n").encode(),
                            fsync=self.fsync)

    def _remove_owned(self, old_run: dict) -> None:
        """Remove what a previous run here wrote, and nothing else."""
        names = list(_OWNED) + [n + ".tmp" for n in _OWNED]
        for rel in old_run.get("text_files", []):
            p = Path(rel)
            if not p.is_absolute() and ".." not in p.parts:
                names += [rel, rel + ".tmp"]
        for n in names:
            (self.dir / n).unlink(missing_ok=True)
        if self.fields_dir.is_dir():
            for p in self.fields_dir.iterdir():
                if p.name in (MESH_NAME, MESH_NAME + ".tmp") or p.name.endswith(".h5.tmp") \
                        or _STEP_RE.match(p.name):
                    p.unlink()


# =============================================================================== readers
def _read_table(path: Path, columns: Sequence[str]) -> list[list[str]]:
    """Rows of a results CSV; a last row cut short by a crash is left out."""
    if not path.exists():
        return []
    text = path.read_bytes().decode("utf-8")
    if text and not text.endswith("\n"):
        text = text[:text.rfind("\n") + 1]
    rows = list(csv.reader(io.StringIO(text)))
    if not rows:
        return []
    header = tuple(rows[0])
    if header != tuple(columns):
        raise ResultsError(f"{path} has columns {list(header)}, expected {list(columns)}")
    return [r for r in rows[1:] if len(r) == len(columns)]


def _column_arrays(rows: list[list[str]], columns: Sequence[str]) -> dict[str, np.ndarray]:
    out = {}
    for j, c in enumerate(columns):
        vals = [r[j] for r in rows]
        if c in TEXT_COLUMNS:
            out[c] = np.array(vals, dtype=object)
        else:
            out[c] = np.array([float(v) if v else np.nan for v in vals], dtype=float)
    return out


def read_probes(out_dir: str | Path) -> dict[str, dict[str, np.ndarray]]:
    """``probes.csv`` by probe: probe name -> column -> array over output times.

    Numeric columns are float arrays (empty cells are NaN); ``stage`` is an array of str.
    Probes appear in the order of their first row.
    """
    rows = _read_table(Path(out_dir) / PROBES_NAME, PROBE_COLUMNS)
    j = PROBE_COLUMNS.index("probe")
    groups: dict[str, list] = {}
    for r in rows:
        groups.setdefault(r[j], []).append(r)
    out = {}
    for name, rs in groups.items():
        cols = _column_arrays(rs, PROBE_COLUMNS)
        del cols["probe"]
        out[name] = cols
    return out


def read_lines(out_dir: str | Path) -> dict[str, list[dict[str, Any]]]:
    """``lines.csv`` by line: line name -> one profile per output time, in time order.

    Each profile is ``{"time_days": float, "stage": str, "distance_m": array, "x_m": array,
    ...}`` with the points in the order they were written.
    """
    rows = _read_table(Path(out_dir) / LINES_NAME, LINE_COLUMNS)
    jl, jt, js = (LINE_COLUMNS.index(c) for c in ("line", "time_days", "stage"))
    groups: dict[str, dict[tuple, list]] = {}
    for r in rows:
        groups.setdefault(r[jl], {}).setdefault((r[jt], r[js]), []).append(r)
    out: dict[str, list[dict]] = {}
    for line, by_time in groups.items():
        profiles = []
        for (t, stage), rs in by_time.items():
            cols = _column_arrays(rs, LINE_COLUMNS)
            prof: dict[str, Any] = {"time_days": float(t) if t else math.nan, "stage": stage}
            for c in LINE_COLUMNS:
                if c not in ("line", "time_days", "stage"):
                    prof[c] = cols[c]
            profiles.append(prof)
        out[line] = profiles
    return out


@dataclass
class FieldSeries:
    """Nodal fields over output steps; unpacks as ``times, stages, points, cells, fields``.

    times : (nt,) days.   stages : list of nt str.   points : (n_nodes, 2) m.
    cells : (n_elements, 6) Gmsh triangle6 order.   fields : name -> (nt, n_nodes[, k]).
    steps : (nt,) step numbers.   region : (n_elements,) region ids.   region_names : list.
    A field missing from some steps is NaN there.
    """
    times: np.ndarray
    stages: list[str]
    points: np.ndarray
    cells: np.ndarray
    fields: dict[str, np.ndarray]
    steps: np.ndarray
    region: np.ndarray
    region_names: list[str]

    def __iter__(self) -> Iterator:
        return iter((self.times, self.stages, self.points, self.cells, self.fields))


def field_step_files(out_dir: str | Path) -> list[tuple[int, Path]]:
    """(step, path) of every complete field step file, in step order."""
    d = Path(out_dir) / FIELDS_DIR
    found = []
    if d.is_dir():
        for p in d.iterdir():
            m = _STEP_RE.match(p.name)
            if m:
                found.append((int(m.group(1)), p))
    return sorted(found)


def read_fields(out_dir: str | Path, names: Sequence[str] | None = None) -> FieldSeries:
    """Read the field time series straight from the HDF5 files (no XML parsing).

    Parameters
    ----------
    names : fields to read; all when None (mind memory: nt x n_nodes x k floats each).
    """
    import h5py
    d = Path(out_dir)
    mesh_path = d / FIELDS_DIR / MESH_NAME
    if not mesh_path.exists():
        raise ResultsError(f"no field results in {d} ({mesh_path} is missing)")
    with h5py.File(mesh_path, "r") as f:
        points = f["points"][:, :2]
        cells = f["cells"][()]
        region = f["region_id"][()]
        region_names = json.loads(f.attrs["region_names"])
    times, stages, steps = [], [], []
    per_step: list[dict[str, np.ndarray]] = []
    order: list[str] = []
    for step, path in field_step_files(d):
        with h5py.File(path, "r") as f:
            times.append(float(f.attrs["time_days"]))
            stages.append(str(f.attrs["stage"]))
            steps.append(step)
            got = {}
            for k in f.keys():
                if names is not None and k not in names:
                    continue
                ds = f[k]
                a = ds[()]
                plane = int(ds.attrs.get("in_plane_components", 0))
                got[k] = a[:, :plane] if plane else a
                if k not in order:
                    order.append(k)
            per_step.append(got)
    fields = {}
    for k in order:
        first = next(s[k] for s in per_step if k in s)
        stack = np.full((len(per_step),) + first.shape,
                        np.nan if first.dtype.kind == "f" else 0, dtype=first.dtype)
        for i, s in enumerate(per_step):
            if k in s:
                if s[k].shape != first.shape:
                    raise ResultsError(f"field {k!r} changes shape from {first.shape} to "
                                       f"{s[k].shape} at step {steps[i]}")
                stack[i] = s[k]
        fields[k] = stack
    return FieldSeries(np.array(times, dtype=float), stages, points, cells, fields,
                       np.array(steps, dtype=np.int64), region, region_names)


# ============================================================================== summaries
def time_to_fraction(t: np.ndarray, s: np.ndarray, final: float | None, fraction: float):
    """First time the settlement reaches ``fraction`` of ``final``, linearly interpolated."""
    if final is None or not math.isfinite(final) or final == 0.0:
        return None
    r = s / final
    hit = np.flatnonzero(r >= fraction)
    if hit.size == 0:
        return None
    i = int(hit[0])
    if i == 0:
        return float(t[0])
    t0, t1, r0, r1 = t[i - 1], t[i], r[i - 1], r[i]
    return float(t0 + (fraction - r0) / (r1 - r0) * (t1 - t0))


def probe_summary(probes: dict[str, dict[str, np.ndarray]]) -> dict[str, dict[str, Any]]:
    """Per probe: final settlement, times to 50 % and 90 % of it, largest excess pore pressure.

    Times are on the run's clock (days from its time zero), linearly interpolated between
    output times; None when never reached (or the final settlement is zero). The fractions
    refer to the final settlement of the record, so the record should run long enough to be
    near its end value. Rows without a settlement (or pore pressure) are skipped.

    Returns
    -------
    probe -> {"final_time_days", "final_settlement_m", "time_to_50_percent_settlement_days",
    "time_to_90_percent_settlement_days", "largest_excess_pore_pressure_kPa",
    "time_of_largest_excess_pore_pressure_days", "stage_of_largest_excess_pore_pressure"}
    """
    out = {}
    for name, cols in probes.items():
        t = np.asarray(cols["time_days"], float)
        order = np.argsort(t, kind="stable")
        t = t[order]
        s = np.asarray(cols.get("settlement_m", np.full(t.shape, np.nan)), float)[order]
        u = np.asarray(cols.get("excess_pore_pressure_kPa", np.full(t.shape, np.nan)),
                       float)[order]
        stages = np.asarray(cols.get("stage", np.full(t.shape, "", dtype=object)))[order]
        ok = np.isfinite(t) & np.isfinite(s)
        ts, ss = t[ok], s[ok]
        final = float(ss[-1]) if ss.size else math.nan
        res: dict[str, Any] = {
            "final_time_days": float(ts[-1]) if ts.size else None,
            "final_settlement_m": final if math.isfinite(final) else None,
            "time_to_50_percent_settlement_days": time_to_fraction(ts, ss, final, 0.5),
            "time_to_90_percent_settlement_days": time_to_fraction(ts, ss, final, 0.9),
            "largest_excess_pore_pressure_kPa": None,
            "time_of_largest_excess_pore_pressure_days": None,
            "stage_of_largest_excess_pore_pressure": None,
        }
        okp = np.isfinite(u) & np.isfinite(t)
        if okp.any():
            i = int(np.flatnonzero(okp)[np.argmax(u[okp])])
            res["largest_excess_pore_pressure_kPa"] = float(u[i])
            res["time_of_largest_excess_pore_pressure_days"] = float(t[i])
            res["stage_of_largest_excess_pore_pressure"] = str(stages[i])
        out[name] = res
    return out
