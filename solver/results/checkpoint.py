"""Checkpoints: the solver state and the writer's bookkeeping in one ``.npz``, replaced
atomically, read back without pickles."""

from __future__ import annotations

import io
import json
from pathlib import Path

import numpy as np

from .files import ResultsError, _atomic_write_bytes, _json_default

_INFO_KEY = "__checkpoint_info__"


def write_checkpoint(path: Path, arrays: dict[str, np.ndarray], meta: dict) -> None:
    """Numeric ``arrays`` and the JSON ``meta`` as one file, flushed and renamed into place."""
    try:
        text = json.dumps(meta, default=_json_default)
    except TypeError as exc:
        raise ResultsError(f"checkpoint info must be JSON-serialisable: {exc}") from None
    buf = io.BytesIO()
    np.savez(buf, **{k: np.asarray(v) for k, v in arrays.items()},
             **{_INFO_KEY: np.array(text)})
    _atomic_write_bytes(path, buf.getvalue(), fsync=True)


def read_checkpoint(path: Path):
    """(step, time in days, arrays, meta) of the checkpoint at ``path``, or None if absent."""
    if not path.exists():
        return None
    try:
        with np.load(path, allow_pickle=False) as z:
            arrays = {k: z[k] for k in z.files if k != _INFO_KEY}
            meta = json.loads(str(z[_INFO_KEY]))
    except Exception as exc:  # a checkpoint is replaced atomically; this is a foreign file
        raise ResultsError(f"cannot read the checkpoint {path}: {exc}") from None
    return int(meta["step"]), float(meta["time_days"]), arrays, meta
