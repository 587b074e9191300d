"""What a run folder recorded of its own files, and reading them back checked against it.

A finished run lists the SHA-256 of every file in ``complete.json``; an unfinished one has
the lengths and checksums of the tables' committed parts and of each field step in its
checkpoint. Readers use only what is recorded there (the rows and steps of a run in
progress after its last checkpoint are left out) and refuse a file whose bytes changed,
naming it. A folder with neither (written by a bare :class:`ResultWriter` without
checkpoints) is read as it is.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass, field
from pathlib import Path

from .checkpoint import read_checkpoint
from .files import (_HEX64, CHECKPOINT_NAME, COMPLETE_NAME, FIELDS_DIR, FORMAT, MESH_NAME,
                    EarlierFormatError, ResultsError, hash_prefix, open_read)

_MAX_JSON = 64 << 20
_STEP_FILE = re.compile(rf"^{FIELDS_DIR}/step_(\d{{6,}})\.h5$")


def read_json_file(path: Path, missing=None, what: str = "file"):
    """A JSON file of the run folder, or ``missing`` when absent; a link, a huge file or
    bad JSON is a :class:`ResultsError` naming the file."""
    try:
        with open_read(path) as f:
            data = f.read(_MAX_JSON + 1)
    except FileNotFoundError:
        return missing
    if len(data) > _MAX_JSON:
        raise ResultsError(f"{path} is larger than any {what} this program writes; it is not "
                           "one of a run.")
    try:
        return json.loads(data.decode("utf-8"))
    except (ValueError, UnicodeDecodeError, RecursionError) as exc:
        raise ResultsError(f"{path} is damaged ({type(exc).__name__}: {str(exc)[:120]}). "
                           "Fix: run the model again.") from None


@dataclass
class Record:
    """What a run folder recorded: per file the committed length (tables) and SHA-256, the
    field step files, and whether the run finished."""
    finished: bool
    files: dict = field(default_factory=dict)       # relative path -> {"bytes"?, "sha256"}
    steps: list | None = None                       # [(step, relative path)] in order


def run_record(out_dir: str | Path) -> Record | None:
    """The record of ``out_dir`` (the completion marker, else the checkpoint), or None."""
    d = Path(out_dir)
    marker = read_json_file(d / COMPLETE_NAME, what="completion marker")
    if marker is not None:
        try:
            if marker["format"] != FORMAT:
                raise ValueError(f"format {marker['format']!r}")
            files = marker["files"]
            for rel, v in files.items():
                if not isinstance(rel, str) or not _HEX64.match(v["sha256"]):
                    raise ValueError(rel)
                if "bytes" in v and (not isinstance(v["bytes"], int) or v["bytes"] < 0):
                    raise ValueError(rel)
        except (KeyError, TypeError, ValueError, AttributeError) as exc:
            raise ResultsError(f"{d / COMPLETE_NAME} is not one this program wrote ({exc}). "
                               "Fix: run the model again.") from None
        steps = sorted((int(m.group(1)), rel) for rel in files
                       if (m := _STEP_FILE.match(rel)))
        return Record(True, dict(files), steps)
    try:
        ck = read_checkpoint(d / CHECKPOINT_NAME)
    except EarlierFormatError:         # a folder of an earlier version: read as it is
        return None
    if ck is None:
        return None
    w = ck[3]["writer"]
    files = {rel: dict(v) for rel, v in w["files"].items()}
    files[f"{FIELDS_DIR}/{MESH_NAME}"] = {"sha256": w["mesh_file_sha256"]}
    steps = []
    for v in w["field_steps"]:
        files[v[3]] = {"sha256": v[5]}
        steps.append((int(v[0]), v[3]))
    return Record(False, files, steps)


def verified_bytes(out_dir: str | Path, rel: str, record: Record | None) -> bytes:
    """The recorded bytes of ``out_dir/rel`` (all of it when nothing is recorded), checked
    against the record; raises :class:`ResultsError` naming the file when they differ and
    ``FileNotFoundError`` when it is absent."""
    path = Path(out_dir) / rel
    entry = record.files.get(rel) if record is not None else None
    if entry is None or (entry.get("bytes") == 0 and not path.exists()):
        with open_read(path) as f:             # FileNotFoundError for a table without rows
            return f.read()
    nbytes = entry.get("bytes")
    with open_read(path) as f:
        data = f.read() if nbytes is None or record.finished else f.read(nbytes)
    _check(path, data, entry, record.finished)
    return data


def verify_file(out_dir: str | Path, rel: str, record: Record | None) -> None:
    """Check ``out_dir/rel`` against the record without keeping its bytes."""
    if record is None or rel not in record.files:
        return
    path = Path(out_dir) / rel
    entry = record.files[rel]
    try:
        h, n = hash_prefix(path, None if record.finished else entry.get("bytes"))
    except FileNotFoundError:
        if entry.get("bytes") == 0:            # a table that never got a row
            return
        raise ResultsError(f"{path} is missing from the run folder. Fix: run the model "
                           "again.") from None
    if (entry.get("bytes") is not None and n != entry["bytes"]) or \
            h.hexdigest() != entry["sha256"]:
        raise ResultsError(_changed(path, record.finished))


def _check(path: Path, data: bytes, entry: dict, finished: bool) -> None:
    import hashlib
    nbytes = entry.get("bytes")
    if (nbytes is not None and len(data) != nbytes) or \
            hashlib.sha256(data).hexdigest() != entry["sha256"]:
        raise ResultsError(_changed(path, finished))


def _changed(path: Path, finished: bool) -> str:
    when = "the run finished" if finished else "its last checkpoint"
    return (f"{path} was changed after {when} (its bytes differ from the checksum the run "
            "recorded); its values cannot be trusted. Fix: run the model again (or restore "
            "the file).")


def verify_run_folder(out_dir: str | Path) -> Record | None:
    """Check every file the run recorded (all of a finished run; the committed parts of an
    unfinished one); the record, or None when the folder records nothing."""
    record = run_record(out_dir)
    if record is not None:
        for rel in record.files:
            verify_file(out_dir, rel, record)
    return record
