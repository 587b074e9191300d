"""Reading a run folder: the probe and line tables, the field time series, the summary.

Each reader checks the bytes it reads against what the run recorded (see
:mod:`solver.results.verify`) and refuses, naming the file, when they differ.
"""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterator, Sequence

import numpy as np

from .files import (_STEP_RE, FIELDS_DIR, LINE_COLUMNS, LINES_NAME, MESH_NAME, PROBE_COLUMNS,
                    PROBES_NAME, SUMMARY_NAME, TEXT_COLUMNS, ResultsError, refuse_link)
from .verify import run_record, verified_bytes, verify_file


def _read_table(out_dir: Path, name: str, columns: Sequence[str]) -> list[list[str]]:
    """Rows of a results CSV as recorded; a last row cut short by a crash is left out."""
    path = out_dir / name
    try:
        data = verified_bytes(out_dir, name, run_record(out_dir))
    except FileNotFoundError:
        return []
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise ResultsError(f"{path} is not UTF-8 text; it is not a table a run wrote.") \
            from None
    if text and not text.endswith("\n"):
        text = text[:text.rfind("\n") + 1]
    rows = list(csv.reader(io.StringIO(text)))
    if not rows:
        return []
    header = tuple(rows[0])
    if header != tuple(columns):
        raise ResultsError(f"{path} has columns {list(header)}, expected {list(columns)}")
    return [r for r in rows[1:] if len(r) == len(columns)]


def _column_arrays(rows: list[list[str]], columns: Sequence[str],
                   where: Path | None = None) -> dict[str, np.ndarray]:
    out = {}
    for j, c in enumerate(columns):
        vals = [r[j] for r in rows]
        if c in TEXT_COLUMNS:
            out[c] = np.array(vals, dtype=object)
        else:
            try:
                out[c] = np.array([float(v) if v else np.nan for v in vals], dtype=float)
            except ValueError as exc:
                raise ResultsError(f"{where}: column {c!r} holds a cell that is not a number "
                                   f"({exc}).") from None
    return out


def read_probes(out_dir: str | Path) -> dict[str, dict[str, np.ndarray]]:
    """``probes.csv`` by probe: probe name -> column -> array over output times.

    Numeric columns are float arrays (empty cells are NaN); ``stage`` is an array of str.
    Probes appear in the order of their first row.
    """
    d = Path(out_dir)
    rows = _read_table(d, PROBES_NAME, PROBE_COLUMNS)
    j = PROBE_COLUMNS.index("probe")
    groups: dict[str, list] = {}
    for r in rows:
        groups.setdefault(r[j], []).append(r)
    out = {}
    for name, rs in groups.items():
        cols = _column_arrays(rs, PROBE_COLUMNS, d / PROBES_NAME)
        del cols["probe"]
        out[name] = cols
    return out


def read_lines(out_dir: str | Path) -> dict[str, list[dict[str, Any]]]:
    """``lines.csv`` by line: line name -> one profile per output time, in time order.

    Each profile is ``{"time_days": float, "stage": str, "distance_m": array, "x_m": array,
    ...}`` with the points in the order they were written.
    """
    d = Path(out_dir)
    rows = _read_table(d, LINES_NAME, LINE_COLUMNS)
    jl, jt, js = (LINE_COLUMNS.index(c) for c in ("line", "time_days", "stage"))
    groups: dict[str, dict[tuple, list]] = {}
    for r in rows:
        groups.setdefault(r[jl], {}).setdefault((r[jt], r[js]), []).append(r)
    out: dict[str, list[dict]] = {}
    for line, by_time in groups.items():
        profiles = []
        for (t, stage), rs in by_time.items():
            cols = _column_arrays(rs, LINE_COLUMNS, d / LINES_NAME)
            prof: dict[str, Any] = {"time_days": cols["time_days"][0], "stage": stage}
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
    """(step, path) of every field step file the run recorded (every complete one in a
    folder without a record), in step order."""
    d = Path(out_dir)
    record = run_record(d)
    if record is not None and record.steps is not None:
        return [(s, d / rel) for s, rel in record.steps]
    found = []
    if (d / FIELDS_DIR).is_dir():
        for p in (d / FIELDS_DIR).iterdir():
            m = _STEP_RE.match(p.name)
            if m:
                found.append((int(m.group(1)), p))
    return sorted(found)


def _h5(path: Path):
    """An HDF5 file of the run opened for reading, or a clear error."""
    import h5py
    refuse_link(path)
    try:
        return h5py.File(path, "r")
    except FileNotFoundError:
        raise ResultsError(f"{path} is missing from the run folder. Fix: run the model "
                           "again.") from None
    except OSError as exc:
        raise ResultsError(f"cannot read {path}: the file is damaged or cut short "
                           f"({str(exc)[:100]}). Fix: run the model again.") from None


def read_mesh_file(out_dir: str | Path) -> tuple[np.ndarray, np.ndarray, np.ndarray, list]:
    """(points (n, 2), cells (ne, 6), region ids (ne,), region names) of ``fields/mesh.h5``,
    checked against the run's record."""
    d = Path(out_dir)
    rel = f"{FIELDS_DIR}/{MESH_NAME}"
    mesh_path = d / rel
    if not mesh_path.exists():
        raise ResultsError(f"no field results in {d} ({mesh_path} is missing)")
    verify_file(d, rel, run_record(d))
    with _h5(mesh_path) as f:
        try:
            points = f["points"][:, :2]
            cells = f["cells"][()]
            region = f["region_id"][()]
            region_names = json.loads(f.attrs["region_names"])
        except (KeyError, OSError, ValueError, TypeError) as exc:
            raise ResultsError(f"cannot read {mesh_path}: {exc}. Fix: run the model "
                               "again.") from None
    return points, cells, region, region_names


def read_fields(out_dir: str | Path, names: Sequence[str] | None = None) -> FieldSeries:
    """Read the field time series straight from the HDF5 files (no XML parsing).

    Parameters
    ----------
    names : fields to read; all when None (mind memory: nt x n_nodes x k floats each).
    """
    d = Path(out_dir)
    points, cells, region, region_names = read_mesh_file(d)
    record = run_record(d)
    times, stages, steps = [], [], []
    per_step: list[dict[str, np.ndarray]] = []
    order: list[str] = []
    for step, path in field_step_files(d):
        verify_file(d, path.relative_to(d).as_posix(), record)
        with _h5(path) as f:
            try:
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
            except (KeyError, OSError, ValueError, TypeError) as exc:
                raise ResultsError(f"cannot read {path}: {exc}. Fix: run the model "
                                   "again.") from None
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


def read_summary(out_dir: str | Path) -> dict | None:
    """``summary.json`` of a run (None if absent), checked against the run's record."""
    text = read_text_file(out_dir, SUMMARY_NAME)
    if text is None:
        return None
    try:
        return json.loads(text)
    except (ValueError, RecursionError) as exc:
        raise ResultsError(f"{Path(out_dir) / SUMMARY_NAME} is damaged ({exc}). Fix: run the "
                           "model again.") from None


def read_text_file(out_dir: str | Path, name: str) -> str | None:
    """A text file the run wrote (``model.toml``, ``comparison.csv``), checked against the
    run's record; None if absent."""
    d = Path(out_dir)
    try:
        data = verified_bytes(d, name, run_record(d))
    except FileNotFoundError:
        return None
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError:
        raise ResultsError(f"{d / name} is not UTF-8 text.") from None
