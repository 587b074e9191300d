"""Adding to a finished run: files and summary sections computed from its results later (the
stability checks, for instance), written under the run's lock with the completion marker
rewritten to hold their checksums, so the folder stays checked as a whole."""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

from .files import (_OWNED, COMPLETE_NAME, FIELDS_DIR, LOCK_NAME, REPLACED_DIR, SUMMARY_NAME,
                    ResultsError, _atomic_write_bytes, _to_json, take_lock)
from .read import read_summary
from .verify import read_json_file, verify_run_folder
from .writer import _safe_rel


def amend_run(out_dir: str | Path, files: dict[str, str] | None = None,
              summary: dict | None = None) -> None:
    """Write ``files`` (name -> text) beside a finished run and merge ``summary`` (section ->
    value) into its ``summary.json``; the completion marker is rewritten last.

    A folder without a completion marker (a run still going, or interrupted) is refused: its
    outputs are the run's to write. Every recorded file is checked first.
    """
    d = Path(out_dir)
    files = dict(files or {})
    for name in files:
        if not _safe_rel(name) or name.split("/")[0] in _OWNED + (FIELDS_DIR, LOCK_NAME,
                                                                   REPLACED_DIR):
            raise ResultsError(f"{name!r} cannot be added to the run in {d}: a plain relative "
                               "name of a file the run does not own is needed")
    fd = take_lock(d)
    try:
        marker = read_json_file(d / COMPLETE_NAME, what="completion marker")
        if marker is None:
            raise ResultsError(f"the run in {d} is not finished (no {COMPLETE_NAME}); finish "
                               "it first (poroplane run ... --resume)")
        verify_run_folder(d)
        written = {}
        for name, text in files.items():
            data = text.encode("utf-8")
            if "/" in name:
                (d / name).parent.mkdir(parents=True, exist_ok=True)
            _atomic_write_bytes(d / name, data, fsync=True)
            written[name] = hashlib.sha256(data).hexdigest()
        if summary:
            doc = read_summary(d) or {}
            doc.update(summary)
            data = (_to_json(doc) + "\n").encode()
            _atomic_write_bytes(d / SUMMARY_NAME, data, fsync=True)
            written[SUMMARY_NAME] = hashlib.sha256(data).hexdigest()
        for name, sha in written.items():
            marker["files"][name] = {"sha256": sha}
        _atomic_write_bytes(d / COMPLETE_NAME, (_to_json(marker) + "\n").encode(), fsync=True)
    finally:
        if fd is not None:
            os.close(fd)
