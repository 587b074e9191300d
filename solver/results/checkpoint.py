"""Checkpoints: the solver state and the writer's bookkeeping in one ``.npz``, replaced
atomically, read back without pickles and checked field by field before anything is used.

A checkpoint is small: the unknowns, the unknowns each lift was placed at, the material
state of a nonlinear run, and JSON bookkeeping (step, time, stage, the fingerprint of what
the run solves, and the length and SHA-256 of every file's committed part). The probe and
line history is not in it: it lives append-only in ``history.f64``.
"""

from __future__ import annotations

import io
import json
import math
import re
from pathlib import Path

import numpy as np

from .files import (_HEX64, FIELDS_DIR, FORMAT, EarlierFormatError, ResultsError,
                    _atomic_write_bytes, _json_default, open_read)

_INFO_KEY = "__checkpoint_info__"
_MAX_BYTES = 1 << 40
_STEP_FILE = re.compile(rf"^{FIELDS_DIR}/step_(\d{{6,}})\.h5$")


def write_checkpoint(path: Path, arrays: dict[str, np.ndarray], meta: dict,
                     fsync: bool = True) -> None:
    """Numeric ``arrays`` and the JSON ``meta`` as one file, flushed (``fsync``) and renamed
    into place."""
    try:
        text = json.dumps(meta, default=_json_default, allow_nan=False)
    except (TypeError, ValueError) as exc:
        raise ResultsError(f"checkpoint info must be JSON-serialisable: {exc}") from None
    buf = io.BytesIO()
    np.savez(buf, **{k: np.asarray(v) for k, v in arrays.items()},
             **{_INFO_KEY: np.frombuffer(text.encode("utf-8"), dtype=np.uint8)})
    _atomic_write_bytes(path, buf.getvalue(), fsync=fsync)


def read_checkpoint(path: Path):
    """(step, time in days, arrays, meta) of the checkpoint at ``path``, or None if absent.

    The writer's part of ``meta`` is checked here (types, ranges, file names); the runner
    checks its own part against the model. Anything else is a :class:`ResultsError` naming
    the file.
    """
    try:
        f = open_read(path)
    except FileNotFoundError:
        return None
    try:
        with f, np.load(f, allow_pickle=False) as z:
            arrays = {k: z[k] for k in z.files if k != _INFO_KEY}
            info = z[_INFO_KEY]
            if info.dtype.kind == "U" and info.ndim == 0:     # as earlier versions kept it
                meta = json.loads(str(info[()]))
            elif info.dtype == np.uint8 and info.ndim == 1:
                meta = json.loads(info.tobytes().decode("utf-8"))
            else:
                raise ValueError("the bookkeeping is not JSON text")
    except Exception as exc:  # a checkpoint is replaced atomically; this is a foreign file
        raise ResultsError(f"cannot read the checkpoint {path} ({type(exc).__name__}: "
                           f"{exc}). Fix: start the run afresh (--force).") from None
    if isinstance(meta, dict) and isinstance(meta.get("format"), str) \
            and meta["format"].startswith("poroplane results ") and meta["format"] != FORMAT:
        raise EarlierFormatError(f"the checkpoint {path} was written by another version of "
                                 f"poroplane ({meta['format']!r}, this one writes {FORMAT!r}); "
                                 "that run cannot be resumed. Fix: start it afresh (--force).")
    try:
        step, t = check_meta(meta)
    except (KeyError, TypeError, ValueError, IndexError, AttributeError) as exc:
        raise ResultsError(f"the checkpoint {path} is not one this program wrote (bad or "
                           f"missing entry: {exc}). Fix: start the run afresh (--force).") \
            from None
    for k, a in arrays.items():
        if a.dtype.kind not in "fiub":
            raise ResultsError(f"the checkpoint {path} holds a non-numeric array {k!r}. Fix: "
                               "start the run afresh (--force).")
    return step, t, arrays, meta


def _int(v, lo: int = 0, hi: int = _MAX_BYTES) -> int:
    if isinstance(v, bool) or not isinstance(v, int) or not lo <= v <= hi:
        raise ValueError(f"{v!r} is not a whole number in [{lo}, {hi}]")
    return v


def _float(v) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
        raise ValueError(f"{v!r} is not a finite number")
    return float(v)


def check_file_state(v) -> dict:
    if not isinstance(v, dict):
        raise TypeError("a file entry must be a table")
    _int(v["bytes"]), _int(v["rows"])
    if not isinstance(v["sha256"], str) or not _HEX64.match(v["sha256"]):
        raise ValueError(f"{v['sha256']!r} is not a SHA-256")
    return v


def check_meta(meta) -> tuple[int, float]:
    """The writer's bookkeeping, checked; returns (step, time in days)."""
    if not isinstance(meta, dict) or meta.get("format") != FORMAT:
        raise ValueError(f"format {meta.get('format') if isinstance(meta, dict) else meta!r}, "
                         f"expected {FORMAT!r}")
    step = _int(meta["step"], 0, 10**9)
    t = _float(meta["time_days"])
    if not isinstance(meta["info"], dict) or not isinstance(meta["fingerprint"], dict):
        raise TypeError("info and fingerprint must be tables")
    w = meta["writer"]
    for name in ("files",):
        if not isinstance(w[name], dict):
            raise TypeError(f"writer.{name} must be a table")
    for v in w["files"].values():
        check_file_state(v)
    if not isinstance(w["mesh_file_sha256"], str) or not _HEX64.match(w["mesh_file_sha256"]):
        raise ValueError("mesh_file_sha256")
    last = -1
    for v in w["field_steps"]:
        s, ts, stage, rel, fields, sha = v
        s = _int(s, 0, 10**9)
        if s <= last or not _STEP_FILE.match(rel) or int(_STEP_FILE.match(rel).group(1)) != s:
            raise ValueError(f"field step entry {v[:4]!r}")
        last = s
        _float(ts)
        if not isinstance(stage, str) or not isinstance(fields, list):
            raise TypeError("field step stage and fields")
        if not isinstance(sha, str) or not _HEX64.match(sha):
            raise ValueError("field step sha256")
        for f in fields:
            name, shape, dtype, plane = f
            if not isinstance(name, str) or not all(isinstance(d, int) and d >= 0
                                                    for d in shape):
                raise ValueError(f"field entry {f!r}")
            np.dtype(dtype)
            _int(plane, 0, 3)
    return step, t
