"""The writer of a run folder: streams fields, tables, the history and checkpoints, closes
the run with its summary and a completion marker written last.

Order of work at the start, so that a bad argument never costs a file: every check (the
folder is usable, no file is a link, the lock is free, a resume's checkpoint is readable,
matches the run's fingerprint and every file it points to has its recorded checksum) comes
before the first change. A folder holding a run is left alone unless the run resumes it
(``resume=True``) or replaces it (``force=True``: the old files are moved aside into
``.replaced/`` and deleted only when the new run is complete).
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import os
import shutil
import stat
from pathlib import Path

import numpy as np

from ..mesh import Mesh
from .checkpoint import _INFO_KEY, read_checkpoint, write_checkpoint
from .fields import _Step, _storage_array, step_file_bytes, write_mesh_file, xdmf_grid, xdmf_text
from .files import (_NAME_RE, _OWNED, _STEP_RE, CHECKPOINT_NAME, COMPLETE_NAME,
                    DERIVED, FIELDS_DIR, FORMAT, HISTORY_NAME, LINE_COLUMNS, LINES_NAME,
                    LOCK_NAME, MESH_NAME, PROBE_COLUMNS, PROBES_NAME, REPLACED_DIR, RUN_NAME,
                    SUMMARY_NAME, XDMF_NAME, EarlierFormatError, ResultsError,
                    _atomic_write_bytes, _fsync_path,
                    _to_json, ensure_folder, hash_prefix, mesh_fingerprint, os_problem,
                    refuse_link, sha256_file, take_lock)
from .verify import read_json_file
from .tables import _Log, _Table, read_log

def _utc_now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")


class ResultWriter:
    """Streams a run's results to ``out_dir`` so that a crash loses at most one output step.

    Parameters
    ----------
    out_dir : folder of the results; created if needed.
    mesh : the 6-node mesh the nodal fields live on.
    resume : continue the run in the folder from its last checkpoint: everything written
        after it is cut away (checked first: the fingerprint and every checksum must match).
        Without a checkpoint the run starts from the beginning (``resumed_from`` is None and
        ``note`` says so). A finished run is not touched (``complete`` is True).
    force : replace a run the folder already holds. Without it (and without ``resume``) a
        folder with a run in it is refused.
    fingerprint : part name -> digest of what decides the results (model tables, solver
        settings); the mesh is always part of it. A resume with any part changed is refused,
        naming the parts.
    run_info : free information kept in ``run.json`` (model name, version, options ...).
    fsync : flush to disk everything a checkpoint (or the completion marker) points to
        before writing it, so a power cut or a system crash never leaves one pointing at data
        that did not reach the disk (a few ms per step). False flushes nothing: a killed
        process still loses nothing written, a power cut may.
    single_precision : store floating fields as float32, halving the disk used.
    """

    def __init__(self, out_dir: str | Path, mesh: Mesh, *, resume: bool = False,
                 force: bool = False, fingerprint: dict | None = None,
                 run_info: dict | None = None, fsync: bool = True,
                 single_precision: bool = False):
        self.dir = Path(out_dir)
        self.mesh = mesh
        self.fsync = fsync
        self.single_precision = single_precision
        self.fields_dir = self.dir / FIELDS_DIR
        self._closed = False
        self._lock_fd = None
        self.probes = self.lines = self.history = None
        self.complete = False
        self.resumed_from: int | None = None
        self.note: str | None = None
        self.fingerprint = {"mesh": mesh_fingerprint(mesh), **(fingerprint or {})}
        ensure_folder(self.dir)
        for name in _OWNED + DERIVED + (FIELDS_DIR, LOCK_NAME, REPLACED_DIR):
            refuse_link(self.dir / name)
        self._lock()
        try:
            self._start(resume, force, run_info)
        except BaseException:
            self.close()
            raise

    # ------------------------------------------------------------------------ start
    def _start(self, resume: bool, force: bool, run_info: dict | None) -> None:
        if self.fields_dir.is_dir():
            for p in self.fields_dir.iterdir():
                refuse_link(p)
        try:
            old_run = read_json_file(self.dir / RUN_NAME, missing={}, what="run data")
        except ResultsError:
            old_run = {"damaged": True}
        if not isinstance(old_run, dict):
            old_run = {"damaged": True}
        try:
            ckpt = read_checkpoint(self.dir / CHECKPOINT_NAME)
        except EarlierFormatError:
            if resume:
                raise
            ckpt = None                       # replaced with --force, refused without
            old_run = dict(old_run, earlier=True)
        finished = (self.dir / COMPLETE_NAME).exists()
        holds_run = bool(old_run) or ckpt is not None or finished or any(
            (self.dir / n).exists() for n in (PROBES_NAME, XDMF_NAME, SUMMARY_NAME))
        self._text_files: list[str] = []
        self._steps: list[_Step] = []
        self._xdmf_grids: list[str] = []   # the XML of each step, built once
        self._unsynced: list[Path] = []
        self._names_changed = self._top_changed = False
        self._digests: dict[str, str] = {}  # file -> SHA-256 of what this writer wrote last
        self.probes = _Table(self.dir / PROBES_NAME, PROBE_COLUMNS, self.fsync)
        self.lines = _Table(self.dir / LINES_NAME, LINE_COLUMNS, self.fsync)
        self.history = _Log(self.dir / HISTORY_NAME, self.fsync)
        if resume and ckpt is not None:
            self._check_resume(ckpt)                  # raises before any change
            self.resumed_from = ckpt[0]
            self._text_files = [t for t in old_run.get("text_files", []) if _safe_rel(t)]
            if finished:
                self.complete = True
                kept = ckpt[3]["writer"]["files"].get(HISTORY_NAME, {"bytes": 0, "rows": 0})
                self.history.nbytes, self.history.rows = int(kept["bytes"]), int(kept["rows"])
                self._run = old_run
                return
            self._resume_to(ckpt)
            sessions = list(old_run.get("sessions", []))
        else:
            if resume:
                self.note = (f"no checkpoint in {self.dir}: the run starts from the "
                             "beginning")
            elif holds_run and not force:
                raise ResultsError(_occupied(self.dir, ckpt, finished,
                                             old_run.get("earlier", False)))
            if holds_run:
                self._move_aside(old_run)
            try:
                self.fields_dir.mkdir(exist_ok=True)
            except OSError as exc:
                raise os_problem(exc, self.fields_dir, "create the folder") from None
            self._write_mesh()
            self._top_changed = True          # the tables are created in this folder
            sessions = []
        sessions.append({"started_utc": _utc_now(), "resumed_from_step": self.resumed_from})
        if run_info is None:
            run_info = old_run.get("run_info", {}) if resume else {}
        self._run = {"format": FORMAT, "run_info": run_info,
                     "n_nodes": self.mesh.n_nodes, "n_elements": self.mesh.n_elements,
                     "region_names": list(self.mesh.region_names),
                     "mesh_sha256": self.fingerprint["mesh"], "sessions": sessions,
                     "text_files": self._text_files}
        self._write_run_json()

    def _check_resume(self, ckpt) -> None:
        """Everything a resume relies on, checked before anything is changed."""
        step, _t, _arrays, meta = ckpt
        old = meta["fingerprint"]
        changed = sorted(k for k in set(old) | set(self.fingerprint)
                         if old.get(k) != self.fingerprint.get(k))
        if changed:
            raise ResultsError(
                f"cannot resume the run in {self.dir}: {_list(changed)} changed since it "
                "started (a resumed run must solve the same model, on the same mesh, with "
                "the same solver settings, or its results would mix two models). Fix: "
                "restore the original model and options, or start afresh with --force.")
        w = meta["writer"]
        self._prefix = {}
        for name, kept in w["files"].items():
            if name not in (PROBES_NAME, LINES_NAME, HISTORY_NAME):
                raise ResultsError(f"the checkpoint in {self.dir} names an unknown file "
                                   f"{name!r}. Fix: start the run afresh (--force).")
            _plain_file(self.dir / name)
            self._prefix[name] = _check_prefix(self.dir / name, kept)
        _check_whole(self.fields_dir / MESH_NAME, w["mesh_file_sha256"])
        for v in w["field_steps"]:
            s = _Step.from_json(v)
            _check_whole(self.dir / s.file, s.sha256, f"of the checkpoint at step {step}")

    def _resume_to(self, ckpt) -> None:
        _step, _t, _arrays, meta = ckpt
        w = meta["writer"]
        for v in w["field_steps"]:
            self._add_step(_Step.from_json(v))
        self._mesh_sha = w["mesh_file_sha256"]
        keep = {Path(s.file).name for s in self._steps}
        for p in self.fields_dir.iterdir():
            if p.name.endswith(".tmp") or (_STEP_RE.match(p.name) and p.name not in keep):
                p.unlink()
        files = w["files"]
        empty = {"bytes": 0, "rows": 0}
        for name, f in ((PROBES_NAME, self.probes), (LINES_NAME, self.lines),
                        (HISTORY_NAME, self.history)):
            f.resume_at(files.get(name, empty), self._prefix.get(name, hashlib.sha256()))
        for name in (SUMMARY_NAME, COMPLETE_NAME, XDMF_NAME + ".tmp", CHECKPOINT_NAME + ".tmp"):
            (self.dir / name).unlink(missing_ok=True)
        self._write_xdmf()
        _fsync_path(self.fields_dir)

    def _move_aside(self, old_run: dict) -> None:
        """Move a previous run's files into ``.replaced/`` (the completion marker first, so
        the folder never looks finished); they are deleted when the new run completes."""
        aside = self.dir / REPLACED_DIR
        try:
            if aside.is_dir() and not aside.is_symlink():
                shutil.rmtree(aside)
            else:
                aside.unlink(missing_ok=True)
            aside.mkdir()
            names = [COMPLETE_NAME] + [n for n in _OWNED + DERIVED + (FIELDS_DIR,)
                                       if n != COMPLETE_NAME]
            names += [t for t in old_run.get("text_files", []) if _safe_rel(t)]
            for n in names:
                p = self.dir / n
                if os.path.lexists(p):
                    target = aside / n.replace("/", "_")
                    os.replace(p, target)
                for tmp in (Path(str(p) + ".tmp"),):
                    if os.path.lexists(tmp) and not tmp.is_dir():
                        tmp.unlink()
        except OSError as exc:
            raise os_problem(exc, aside, "move the previous run aside into") from None
        _fsync_path(self.dir)

    # ------------------------------------------------------------------ context manager
    def __enter__(self) -> "ResultWriter":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def close(self) -> None:
        """Close the files and release the lock. Files stay as they are (a later run may
        resume); a run is finished only by :meth:`finish`."""
        if self._closed:
            return
        for f in (self.probes, self.lines, self.history):
            if f is not None:
                f.close()
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
        data = step_file_bytes(step, t, stage, stored)
        _atomic_write_bytes(self.dir / rel, data, fsync=False)   # flushed by the checkpoint
        self._unsynced.append(self.dir / rel)
        self._names_changed = True
        self._add_step(_Step(step, float(t), str(stage), rel,
                             [[n, a.shape, a.dtype.str, p] for n, (a, p) in stored.items()],
                             hashlib.sha256(data).hexdigest()))
        self._write_xdmf()

    def _add_step(self, s: _Step) -> None:
        self._steps.append(s)
        self._xdmf_grids.append(xdmf_grid(self.mesh, s))

    def _write_mesh(self) -> None:
        self._mesh_sha = write_mesh_file(self.fields_dir / MESH_NAME, self.mesh,
                                         self.fingerprint["mesh"], fsync=self.fsync)

    def _write_xdmf(self) -> None:
        path = self.dir / XDMF_NAME
        if not self._steps:
            path.unlink(missing_ok=True)
            self._digests.pop(XDMF_NAME, None)
            return
        self._write_owned(XDMF_NAME, xdmf_text(self.mesh, self._xdmf_grids).encode("utf-8"))

    def _write_owned(self, rel: str, data: bytes) -> None:
        _atomic_write_bytes(self.dir / rel, data, fsync=False)   # flushed before a record
        self._digests[rel] = hashlib.sha256(data).hexdigest()
        if self.dir / rel not in self._unsynced:
            self._unsynced.append(self.dir / rel)
        self._top_changed = True

    def _sync(self) -> None:
        """Flush the tables, the files written since the last flush and the folders whose
        names changed (nothing when ``fsync`` is False)."""
        for f in (self.probes, self.lines, self.history):
            f.sync()
        if self.fsync:
            for p in self._unsynced:
                _fsync_path(p)
            if self._names_changed:
                _fsync_path(self.fields_dir)
            if self._top_changed:
                _fsync_path(self.dir)
        self._unsynced = []
        self._names_changed = self._top_changed = False

    # ----------------------------------------------------------------------- tables
    def write_probe_rows(self, rows: list[dict]) -> None:
        """Append rows to ``probes.csv`` (columns :data:`PROBE_COLUMNS`; missing keys empty)."""
        self._check_open()
        self.probes.append(rows)

    def write_line_rows(self, rows: list[dict]) -> None:
        """Append rows to ``lines.csv`` (columns :data:`LINE_COLUMNS`; missing keys empty)."""
        self._check_open()
        self.lines.append(rows)

    def write_history(self, record: np.ndarray) -> None:
        """Append one fixed-length record of float64 to ``history.f64`` (the run's values
        at full precision; a resume reads them back instead of a large checkpoint)."""
        self._check_open()
        self.history.append(record)

    def read_history(self) -> np.ndarray:
        """The records of ``history.f64`` up to the checkpoint resumed from (or all written
        so far by this writer), ``(records, record length)``."""
        return read_log(self.history.path, self.history.nbytes, self.history.rows)

    # ------------------------------------------------------------------- checkpoints
    def checkpoint(self, step: int, t: float, arrays: dict[str, np.ndarray],
                   info: dict) -> None:
        """Save the solver state so a later run can resume from here.

        Everything written before this call (tables, history, field steps) is made durable
        first, then ``checkpoint.npz`` is replaced atomically; it records the length and
        SHA-256 of each table's and the history's committed part and of each field step, so
        a resume cuts the files back to exactly this point after checking them.

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
        self._sync()
        meta = {"format": FORMAT, "step": int(step), "time_days": float(t), "info": info,
                "fingerprint": self.fingerprint,
                "writer": {"files": {PROBES_NAME: self.probes.state(),
                                     LINES_NAME: self.lines.state(),
                                     HISTORY_NAME: self.history.state()},
                           "mesh_file_sha256": self._mesh_sha,
                           "field_steps": [s.to_json() for s in self._steps]}}
        write_checkpoint(self.dir / CHECKPOINT_NAME, arrays, meta, fsync=self.fsync)

    def load_checkpoint(self) -> tuple[int, float, dict[str, np.ndarray], dict] | None:
        """(step, time in days, state arrays, info) of the checkpoint the writer resumed
        from (or found in a finished run), or None."""
        if self.resumed_from is None:
            return None
        ck = read_checkpoint(self.dir / CHECKPOINT_NAME)
        if ck is None:
            return None
        step, t, arrays, meta = ck
        return step, t, arrays, meta["info"]

    # ----------------------------------------------------------------- other outputs
    def write_summary(self, summary: dict) -> None:
        """``summary.json``, replaced atomically; NaN and infinity become null."""
        self._check_open()
        self._write_owned(SUMMARY_NAME, (_to_json(summary) + "\n").encode())

    def write_text(self, name: str, text: str) -> None:
        """A text file in the results folder (e.g. the model as read), replaced atomically.
        ``name`` is a relative path of plain names (letters, digits, ``_ . -``)."""
        self._check_open()
        if not _safe_rel(name):
            raise ResultsError(f"text file name {name!r} must be a relative path inside "
                               f"{self.dir} made of plain names (letters, digits, '_', '.', "
                               "'-'; none starting with a dot)")
        rel = Path(name)
        if rel.parts[0] in _OWNED + (FIELDS_DIR, LOCK_NAME, REPLACED_DIR):
            raise ResultsError(f"text file name {name!r} is one the results use themselves")
        parent = self.dir
        for part in rel.parts[:-1]:
            parent = parent / part
            refuse_link(parent)
            try:
                parent.mkdir(exist_ok=True)
            except OSError as exc:
                raise os_problem(exc, parent, "create the folder") from None
        self._write_owned(rel.as_posix(), text.encode("utf-8"))
        key = rel.as_posix()
        if key not in self._text_files:
            self._text_files.append(key)
            self._write_run_json()

    def finish(self) -> None:
        """Close the run: write ``complete.json`` (the SHA-256 of every file of the run)
        last, delete a replaced run kept aside, release the lock."""
        self._check_open()
        self._sync()
        files = {n: {"bytes": f.nbytes, "sha256": f.sha256}
                 for n, f in ((PROBES_NAME, self.probes), (LINES_NAME, self.lines),
                              (HISTORY_NAME, self.history)) if f.nbytes}
        files[f"{FIELDS_DIR}/{MESH_NAME}"] = {"sha256": self._mesh_sha}
        for s in self._steps:
            files[s.file] = {"sha256": s.sha256}
        for rel in self._text_files:            # kept from an earlier session of the run
            if rel not in self._digests and (self.dir / rel).is_file():
                self._digests[rel] = sha256_file(self.dir / rel)[0]
        for rel, sha in self._digests.items():
            files[rel] = {"sha256": sha}
        marker = {"format": FORMAT, "finished_utc": _utc_now(), "files": files}
        _atomic_write_bytes(self.dir / COMPLETE_NAME, (_to_json(marker) + "\n").encode(),
                            fsync=self.fsync)
        aside = self.dir / REPLACED_DIR
        if aside.is_dir() and not aside.is_symlink():
            shutil.rmtree(aside, ignore_errors=True)
        self.complete = True
        self.close()

    # ------------------------------------------------------------------------ helpers
    def _check_open(self) -> None:
        if self._closed:
            raise ResultsError(f"the result writer for {self.dir} is closed")
        if self.complete:
            raise ResultsError(f"the run in {self.dir} is complete; nothing more is written")

    def _lock(self) -> None:
        """One writer per folder: a second run writing here would interleave its files."""
        self._lock_fd = take_lock(self.dir)

    def _write_run_json(self) -> None:
        self._write_owned(RUN_NAME, (_to_json(self._run) + "\n").encode())


def check_output_folder(out_dir: str | Path, resume: bool = False, force: bool = False) -> None:
    """Refuse, without touching anything, a folder a run could not write or may not replace:
    a file in its place, a folder holding a run when neither ``resume`` nor ``force``. The
    writer checks all of it again (and more) when it starts."""
    d = Path(out_dir)
    if d.exists() and not d.is_dir():
        raise ResultsError(f"the output folder {d} is a file, not a folder. Fix: choose "
                           "another output folder (-o FOLDER).")
    if not d.is_dir() or resume or force:
        return
    finished = (d / COMPLETE_NAME).exists()
    if finished or (d / CHECKPOINT_NAME).exists() or (d / RUN_NAME).exists():
        earlier = False
        try:
            ck = read_checkpoint(d / CHECKPOINT_NAME)
        except EarlierFormatError:
            ck, earlier = None, True
        except ResultsError:
            ck = None
        raise ResultsError(_occupied(d, ck, finished, earlier))


def _occupied(d: Path, ckpt, finished: bool, earlier: bool = False) -> str:
    if earlier:
        return (f"{d} holds a run written by another version of poroplane; it is kept. Fix: "
                "replace it with --force, or choose another output folder.")
    if finished:
        return (f"{d} holds a finished run; it is kept. Fix: choose another output folder "
                "(-o FOLDER), or replace the run with --force.")
    if ckpt is not None:
        return (f"{d} holds an interrupted run (checkpoint at step {ckpt[0]}, "
                f"{ckpt[1]:,.4g} days); it is kept. Fix: continue it with --resume, replace "
                "it with --force, or choose another output folder.")
    return (f"{d} holds the results of a run that did not finish its first step; they are "
            "kept. Fix: replace them with --force, or choose another output folder.")


def _safe_rel(name) -> bool:
    if not isinstance(name, str) or not name or len(name) > 255:
        return False
    parts = name.split("/")
    return all(_NAME_RE.match(p) and not p.startswith(".") for p in parts)


def _list(names: list[str]) -> str:
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


def _plain_file(path: Path) -> None:
    """A table a resume appends to: a plain file with one link (or absent)."""
    try:
        st = os.lstat(path)
    except FileNotFoundError:
        return
    if not stat.S_ISREG(st.st_mode) or st.st_nlink != 1:
        raise ResultsError(f"{path} is not a plain file of its own (a link or a device); "
                           "the run will not write into it. Fix: remove it, or choose another "
                           "output folder.")


def _check_prefix(path: Path, kept: dict):
    """The hashlib object of the checkpoint's prefix of ``path``, after checking it."""
    want, nbytes = kept["sha256"], int(kept["bytes"])
    try:
        h, n = hash_prefix(path, nbytes)
        got = h.hexdigest()
    except FileNotFoundError:
        h, n = hashlib.sha256(), 0
        got = h.hexdigest()
    if n < nbytes:
        raise ResultsError(f"{path} holds {n} bytes but the checkpoint expects {nbytes}; the "
                           "file was cut short after the checkpoint, so the run cannot "
                           "resume. Fix: start it afresh (--force).")
    if got != want:
        raise ResultsError(f"{path} was changed after it was written (its checksum differs "
                           "from the checkpoint's), so the run cannot resume from it. Fix: "
                           "start the run afresh (--force).")
    return h


def _check_whole(path: Path, want: str, whose: str = "of the checkpoint") -> None:
    try:
        got, _n = sha256_file(path)
    except FileNotFoundError:
        raise ResultsError(f"{path}, a file {whose}, is missing; the run cannot resume. Fix: "
                           "start it afresh (--force).") from None
    if got != want:
        raise ResultsError(f"{path} was changed after it was written (its checksum differs "
                           f"from the one recorded {whose}); the run cannot resume. Fix: "
                           "start it afresh (--force).")
