"""Results written as a run goes: field time series, probe and line tables, checkpoints.

The package by role: ``files`` (names, columns, file helpers), ``tables`` and ``fields``
(writing), ``checkpoint``, ``writer`` (:class:`ResultWriter`), ``read`` (reading a run
folder) and ``summary`` (per-probe summaries).

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

from .files import (CHECKPOINT_NAME, FIELDS_DIR, FORMAT, LINE_COLUMNS, LINES_NAME, LOCK_NAME,
                    MESH_NAME, PROBE_COLUMNS, PROBES_NAME, RUN_NAME, SUMMARY_NAME, TEXT_COLUMNS,
                    XDMF_NAME, ResultsError, mesh_fingerprint)
from .read import FieldSeries, field_step_files, read_fields, read_lines, read_probes
from .summary import (NOT_REACHED, T50_T90, primary_settlement, primary_times, probe_summary,
                      residual_settlement, time_to_fraction)
from .writer import ResultWriter

__all__ = [
    "CHECKPOINT_NAME", "FIELDS_DIR", "FORMAT", "LINE_COLUMNS", "LINES_NAME", "LOCK_NAME",
    "MESH_NAME", "PROBE_COLUMNS", "PROBES_NAME", "RUN_NAME", "SUMMARY_NAME", "TEXT_COLUMNS",
    "XDMF_NAME", "FieldSeries", "ResultWriter", "ResultsError", "field_step_files",
    "mesh_fingerprint", "probe_summary", "read_fields", "read_lines", "read_probes",
    "time_to_fraction", "T50_T90", "NOT_REACHED", "primary_settlement", "primary_times",
    "residual_settlement",
]

