"""The run folder's names and columns, and the small file helpers every part uses.

Every file the results write is opened without following a symbolic link: temporary files
are created exclusively (``O_CREAT | O_EXCL | O_NOFOLLOW``, a stale one removed first), the
tables are appended through ``O_NOFOLLOW`` and must be plain files with one link, and a file
is replaced by renaming a complete temporary file over it (``os.replace`` renames the link,
never its target). So nothing planted in a run folder makes a run write outside it.
"""

from __future__ import annotations

import errno
import hashlib
import json
import math
import os
import re
import stat
from pathlib import Path

import numpy as np

from ..errors import PoroplaneError
from ..mesh import Mesh

try:  # POSIX only; without it the writer still works, unguarded against a second writer.
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None

FORMAT = "poroplane results 2"

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

INITIAL_STAGE = "initial state"
"""The ``stage`` of the rows at t = 0 that record the state before the first stage."""

XDMF_NAME = "results.xdmf"
FIELDS_DIR = "fields"
MESH_NAME = "mesh.h5"
PROBES_NAME = "probes.csv"
LINES_NAME = "lines.csv"
HISTORY_NAME = "history.f64"       # probe and line values at full precision, for resume
CHECKPOINT_NAME = "checkpoint.npz"
SUMMARY_NAME = "summary.json"
RUN_NAME = "run.json"
COMPLETE_NAME = "complete.json"    # written last: the run is finished, with its checksums
LOCK_NAME = ".writer.lock"
REPLACED_DIR = ".replaced"         # a previous run moved aside while --force replaces it
# Written by a run (and by the plots and report of a run): moved aside when a run replaces it.
_OWNED = (XDMF_NAME, PROBES_NAME, LINES_NAME, HISTORY_NAME, CHECKPOINT_NAME, SUMMARY_NAME,
          RUN_NAME, COMPLETE_NAME)
DERIVED = ("comparison.csv", "hand.json", "model.toml", "oedometer_moduli.csv", "plots",
           "pictures", "report.html", "stability.json", "validation.json")
_STEP_RE = re.compile(r"^step_(\d{6,})\.h5$")
_NAME_RE = re.compile(r"^[A-Za-z0-9_.\-]+$")
_FLOAT_FORMAT = ".12g"  # 12 significant digits: exact enough, short enough to read
_HEX64 = re.compile(r"^[0-9a-f]{64}$")


class ResultsError(PoroplaneError):
    """Results that cannot be written or read as asked (bad field, broken resume, ...)."""


class EarlierFormatError(ResultsError):
    """A checkpoint of an earlier version of the run folder: read as it is, never resumed."""


# ================================================================================ names
def safe_name(name: str, max_chars: int = 64) -> str:
    """``name`` as a file name of its own inside a folder: letters, digits, ``_``, ``-`` and
    ``.`` only, no leading dot, at most ``max_chars`` characters. A name that had to change
    gets a short hash of the original, so two names never meet in one file.

    >>> safe_name("centre_line"), safe_name("../../tmp/x")[:6]
    ('centre_line', 'tmp_x-')
    """
    text = str(name)
    clean = re.sub(r"[^A-Za-z0-9_.\-]+", "_", text).strip("._-")
    clean = re.sub(r"\.{2,}", ".", clean)
    if clean == text and 0 < len(clean) <= max_chars:
        return clean
    tag = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()[:8]
    return f"{clean[:max_chars - 9] or 'name'}-{tag}"


# ========================================================================= OS errors
def os_problem(exc: OSError, path: Path | str, doing: str = "write") -> ResultsError:
    """One clear message for an operating-system error on a run-folder path."""
    path = Path(path)
    code = exc.errno
    if code in (errno.EACCES, errno.EPERM, errno.EROFS):
        why, fix = "permission denied", "choose a folder you can write to (-o FOLDER)."
    elif code == errno.ENAMETOOLONG:
        why = "a name in the path is too long for the file system (most allow 255 bytes)"
        fix = "choose a shorter folder name."
    elif code == errno.ENOTDIR:
        why, fix = "a part of the path is a file, not a folder", "choose another folder."
    elif code == errno.EEXIST:
        why, fix = "it exists and is not a folder", "choose another folder."
    elif code == errno.ENOSPC:
        why, fix = "the disk is full", "free some space and resume the run (--resume)."
    elif code == errno.ELOOP:
        why = "it is a symbolic link, and a run folder's files must be plain files"
        fix = "remove the link or choose another folder."
    else:
        why, fix = (exc.strerror or str(exc)).lower(), "check the folder and try again."
    return ResultsError(f"cannot {doing} {path}: {why}. Fix: {fix}")


def ensure_folder(path: Path) -> None:
    """Create the run folder (and its parents) or say clearly why it cannot be used."""
    try:
        if path.is_symlink() and not path.is_dir():
            raise ResultsError(f"{path} is a symbolic link that leads nowhere. Fix: remove it "
                               "or choose another output folder.")
        if path.exists() and not path.is_dir():
            raise ResultsError(f"the output folder {path} is a file, not a folder. Fix: "
                               "choose another output folder (-o FOLDER).")
    except OSError as exc:
        raise os_problem(exc, path, "use the folder") from None
    try:
        path.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise os_problem(exc, path, "create the folder") from None
    if not os.access(path, os.W_OK | os.X_OK):
        raise ResultsError(f"cannot write in {path}: permission denied. Fix: choose a folder "
                           "you can write to (-o FOLDER).")


def refuse_link(path: Path) -> None:
    """A run folder's own file must not be a symbolic link (nor a folder that is one)."""
    try:
        st = os.lstat(path)
    except FileNotFoundError:
        return
    except OSError as exc:
        raise os_problem(exc, path, "read") from None
    if stat.S_ISLNK(st.st_mode):
        raise ResultsError(f"{path} is a symbolic link; the files of a run folder must be "
                           "plain files. Fix: remove the link, or choose another output "
                           "folder.")


# ============================================================================ writing
def _fsync_path(path: Path) -> None:
    """Flush a file (or a folder, for the names in it) to disk."""
    flags = (os.O_RDONLY | getattr(os, "O_DIRECTORY", 0)) if path.is_dir() else os.O_RDONLY
    try:
        fd = os.open(path, flags | getattr(os, "O_NOFOLLOW", 0))
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


_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)


def create_exclusive(path: Path) -> int:
    """A new, empty file at ``path`` opened for writing; whatever was there before (a stale
    temporary file, or a planted link) is removed first, never followed."""
    try:
        os.unlink(path)
    except FileNotFoundError:
        pass
    except IsADirectoryError:
        raise ResultsError(f"{path} is a folder; the results need that name for a file. Fix: "
                           "remove it or choose another output folder.") from None
    except OSError as exc:
        if exc.errno != errno.EISDIR:
            raise os_problem(exc, path) from None
        raise ResultsError(f"{path} is a folder; the results need that name for a file. Fix: "
                           "remove it or choose another output folder.") from None
    try:
        return os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | _NOFOLLOW, 0o644)
    except OSError as exc:
        raise os_problem(exc, path) from None


def write_fd(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        n = os.write(fd, view)
        view = view[n:]


def _atomic_write_bytes(path: Path, data: bytes, fsync: bool = True) -> None:
    """Write to ``path.tmp`` (created exclusively), then rename it over ``path``: readers see
    the old or the new file, and a link planted at either name is replaced, not followed."""
    tmp = _tmp(path)
    fd = create_exclusive(tmp)
    try:
        write_fd(fd, data)
        if fsync:
            os.fsync(fd)
    except OSError as exc:
        os.close(fd)
        raise os_problem(exc, path) from None
    os.close(fd)
    try:
        os.replace(tmp, path)
    except OSError as exc:
        raise os_problem(exc, path) from None
    if fsync:
        _fsync_path(path.parent)


def write_file_atomic(path: str | Path, data: bytes) -> None:
    """A derived file of a run (a plot, the report) replaced whole, never through a link."""
    _atomic_write_bytes(Path(path), data, fsync=False)


def make_folder(path: str | Path) -> Path:
    """A folder inside a run folder (``plots/``), created if needed; refused if a link."""
    path = Path(path)
    refuse_link(path)
    try:
        path.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise os_problem(exc, path, "create the folder") from None
    return path


def take_lock(folder: Path) -> int | None:
    """The lock of a run folder (one writer at a time), held until its descriptor is closed.

    The lock file is created exclusively, or, left by an earlier run, opened without
    following links and used only if it is a plain file of its own. A POSIX record lock: the
    kernel releases it when the process dies, kill -9 too."""
    if fcntl is None:  # pragma: no cover
        return None
    path = Path(folder) / LOCK_NAME
    try:
        fd = os.open(path, os.O_RDWR | os.O_CREAT | os.O_EXCL | _NOFOLLOW, 0o644)
    except FileExistsError:
        try:
            fd = os.open(path, os.O_RDWR | _NOFOLLOW)
        except OSError as exc:
            raise os_problem(exc, path, "open the lock file") from None
    except OSError as exc:
        raise os_problem(exc, path, "create the lock file") from None
    st = os.fstat(fd)
    if not stat.S_ISREG(st.st_mode) or st.st_nlink != 1:
        os.close(fd)
        raise ResultsError(f"{path} is not a plain file of its own; the run will not use it "
                           "as its lock. Fix: remove it.")
    try:
        fcntl.lockf(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except OSError as exc:
        os.close(fd)
        if exc.errno in (errno.EACCES, errno.EAGAIN):
            raise ResultsError(f"another run is writing results in {folder}; wait for it to "
                               "finish or choose another output folder") from None
        raise os_problem(exc, path, "lock") from None
    return fd


def open_append(path: Path) -> int:
    """A descriptor appending to ``path`` (created if missing): a plain file with one link,
    never a symbolic link, so a planted name cannot send the rows elsewhere."""
    try:
        fd = os.open(path, os.O_WRONLY | os.O_APPEND | os.O_CREAT | _NOFOLLOW, 0o644)
    except OSError as exc:
        raise os_problem(exc, path) from None
    st = os.fstat(fd)
    if not stat.S_ISREG(st.st_mode) or st.st_nlink != 1:
        os.close(fd)
        raise ResultsError(f"{path} is not a plain file of its own (a link or a device); "
                           "the run will not write into it. Fix: remove it, or choose another "
                           "output folder.")
    return fd


def open_read(path: Path):
    """``path`` opened for reading without following a symbolic link (a clear error if so)."""
    try:
        fd = os.open(path, os.O_RDONLY | _NOFOLLOW)
    except FileNotFoundError:
        raise
    except OSError as exc:
        raise os_problem(exc, path, "read") from None
    return os.fdopen(fd, "rb")


def sha256_file(path: Path, nbytes: int | None = None) -> tuple[str, int]:
    """(SHA-256 hex, bytes read) of the first ``nbytes`` of a file (all when None)."""
    h, n = hash_prefix(path, nbytes)
    return h.hexdigest(), n


def hash_prefix(path: Path, nbytes: int | None = None):
    """(hashlib SHA-256 object, bytes read) of the first ``nbytes`` of a file."""
    h = hashlib.sha256()
    n = 0
    with open_read(path) as f:
        while nbytes is None or n < nbytes:
            chunk = f.read(1 << 20 if nbytes is None else min(1 << 20, nbytes - n))
            if not chunk:
                break
            h.update(chunk)
            n += len(chunk)
    return h, n


# ================================================================================ JSON
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
