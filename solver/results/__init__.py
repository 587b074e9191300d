"""Results written as a run goes: field time series, probe and line tables, checkpoints.

The package by role: ``files`` (names, columns, file helpers), ``tables`` and ``fields``
(writing), ``checkpoint``, ``writer`` (:class:`ResultWriter`), ``verify`` (what a folder
recorded of its files), ``read`` (reading a run folder) and ``summary`` (per-probe
summaries).

A crash (an exception, Ctrl-C or ``kill -9``) loses at most the output step in progress, and a
run can resume from its last checkpoint.

Folder layout (``DIR`` is the ``out_dir`` given to :class:`ResultWriter`)::

    DIR/results.xdmf             time series of nodal fields, opens in ParaView (XDMF 3)
    DIR/fields/mesh.h5           points (n_nodes, 3), cells (n_elements, 6) "Triangle_6",
                                 region_id (n_elements,) and the region names
    DIR/fields/step_000012.h5    one file per output step: one dataset per field
    DIR/probes.csv               one row per probe per output time (from t = 0)
    DIR/lines.csv                one row per point of a line per output time
    DIR/history.f64              the same values at full precision, one record a step
    DIR/checkpoint.npz           solver state at the last checkpoint, with the length and
                                 SHA-256 of every file's committed part
    DIR/summary.json             written at the end of a run
    DIR/run.json                 run information and the text files the writer owns
    DIR/complete.json            written last: the run finished; the SHA-256 of its files

Safety. A folder holding a run is never overwritten unless asked (``resume`` or ``force``);
a resume is refused when the fingerprint of what the run solves changed, or when a file's
bytes differ from the checksum recorded, and readers refuse such files too, naming them. No
file is written through a symbolic link (see :mod:`solver.results.files`).

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
system crash, ``fsync=True`` (the default) flushes everything a checkpoint or the completion
marker points to (table appends, step files, the folder's names) just before writing it, so
neither ever points at data that did not reach the disk; what was written after the last
checkpoint is cut away on resume anyway, so it is not flushed step by step.

Array conventions: nodal fields are ``(n_nodes,)`` or ``(n_nodes, k)`` on the 6-node mesh.
An in-plane vector ``(n_nodes, 2)`` (e.g. ``displacement_m``) is stored as a 3-vector with a
zero third component, as ParaView expects, and read back as ``(n_nodes, 2)``. Times are in
days. Column names carry their units.
"""

from __future__ import annotations

from .files import (CHECKPOINT_NAME, COMPLETE_NAME, FIELDS_DIR, FORMAT, HISTORY_NAME,
                    INITIAL_STAGE, LINE_COLUMNS, LINES_NAME, LOCK_NAME, MESH_NAME, PROBE_COLUMNS,
                    PROBES_NAME, RUN_NAME, SUMMARY_NAME, TEXT_COLUMNS, XDMF_NAME, ResultsError,
                    mesh_fingerprint, safe_name)
from .read import (FieldSeries, field_step_files, read_fields, read_lines, read_mesh_file,
                   read_probes, read_summary, read_text_file)
from .summary import (NOT_REACHED, T50_T90, primary_settlement, primary_times, probe_summary,
                      residual_settlement, time_to_fraction)
from .amend import amend_run
from .verify import run_record, verify_run_folder
from .writer import ResultWriter, check_output_folder

__all__ = [
    "amend_run", "CHECKPOINT_NAME", "COMPLETE_NAME", "FIELDS_DIR", "FORMAT", "HISTORY_NAME", "INITIAL_STAGE",
    "LINE_COLUMNS", "LINES_NAME", "LOCK_NAME", "MESH_NAME", "PROBE_COLUMNS", "PROBES_NAME",
    "RUN_NAME", "SUMMARY_NAME", "TEXT_COLUMNS", "XDMF_NAME", "FieldSeries", "ResultWriter",
    "ResultsError", "check_output_folder", "field_step_files", "mesh_fingerprint",
    "probe_summary", "read_fields", "read_lines", "read_mesh_file", "read_probes",
    "read_summary", "read_text_file", "run_record", "safe_name", "time_to_fraction",
    "verify_run_folder", "T50_T90", "NOT_REACHED", "primary_settlement", "primary_times",
    "residual_settlement",
]

