"""The writer of a run folder: streams fields, tables, checkpoints and the closing files."""

from __future__ import annotations

import datetime as _dt
import json
import os
from pathlib import Path

import numpy as np

from ..mesh import Mesh
from .checkpoint import _INFO_KEY, read_checkpoint, write_checkpoint
from .fields import _Step, _storage_array, write_mesh_file, xdmf_grid, xdmf_text
from .files import (_NAME_RE, _OWNED, _STEP_RE, CHECKPOINT_NAME, FIELDS_DIR, FORMAT, LINE_COLUMNS,
                    LINES_NAME, LOCK_NAME, MESH_NAME, PROBE_COLUMNS, PROBES_NAME, RUN_NAME,
                    SUMMARY_NAME, XDMF_NAME, ResultsError, _atomic_write_bytes, _fsync_path,
                    _tmp, _to_json, mesh_fingerprint)
from .tables import _Table

try:  # POSIX only; without it the writer still works, unguarded against a second writer.
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None


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
        self._xdmf_grids.append(xdmf_grid(self.mesh, s))

    def _write_mesh(self) -> None:
        write_mesh_file(self.fields_dir / MESH_NAME, self.mesh, self.fingerprint)

    def _write_xdmf(self) -> None:
        path = self.dir / XDMF_NAME
        if not self._steps:
            path.unlink(missing_ok=True)
            return
        _atomic_write_bytes(path, xdmf_text(self.mesh, self._xdmf_grids).encode("utf-8"), fsync=self.fsync)

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
        write_checkpoint(self.dir / CHECKPOINT_NAME, arrays, meta)

    def load_checkpoint(self) -> tuple[int, float, dict[str, np.ndarray], dict] | None:
        """(step, time in days, state arrays, info) of the last checkpoint, or None."""
        ck = self._read_checkpoint_file()
        if ck is None:
            return None
        step, t, arrays, meta = ck
        return step, t, arrays, meta["info"]

    def _read_checkpoint_file(self):
        return read_checkpoint(self.dir / CHECKPOINT_NAME)

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
