"""Field output: one HDF5 file per output step, the mesh file, and the XDMF index of them."""

from __future__ import annotations

import hashlib
import io
import json
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

import numpy as np

from ..mesh import Mesh
from .files import FIELDS_DIR, FORMAT, MESH_NAME, ResultsError, _atomic_write_bytes

_XDMF_TYPES = {  # numpy dtype -> (XDMF DataType, Precision)
    np.dtype(np.float64): ("Float", 8), np.dtype(np.float32): ("Float", 4),
    np.dtype(np.int64): ("Int", 8), np.dtype(np.int32): ("Int", 4),
}


def _storage_array(name: str, a, n_nodes: int, single: bool) -> tuple[np.ndarray, int]:
    """The array as stored and its in-plane component count (2 for padded vectors, else 0)."""
    a = np.asarray(a)
    if a.ndim not in (1, 2) or a.shape[0] != n_nodes:
        raise ResultsError(f"field {name!r} has shape {a.shape}; a nodal field must be "
                           f"({n_nodes},) or ({n_nodes}, k) on this mesh of {n_nodes} nodes")
    if a.dtype.kind == "f":
        dtype = np.float32 if single else np.float64
    elif a.dtype.kind in "iub":
        dtype = np.int32 if a.dtype == np.int32 else np.int64
    else:
        raise ResultsError(f"field {name!r} has dtype {a.dtype}; give numbers")
    plane = 0
    if a.ndim == 2 and a.shape[1] == 2:  # an in-plane vector: ParaView wants three components
        out = np.zeros((n_nodes, 3), dtype=dtype)
        out[:, :2] = a
        plane = 2
    else:
        out = np.ascontiguousarray(a, dtype=dtype)
    return out, plane


def _attribute_type(shape: tuple[int, ...]) -> str:
    if len(shape) == 1:
        return "Scalar"
    return {3: "Vector", 6: "Tensor6", 9: "Tensor"}.get(shape[1], "Matrix")


def _data_item(shape, dtype, ref: str) -> str:
    kind, prec = _XDMF_TYPES[np.dtype(dtype)]
    dims = " ".join(str(d) for d in shape)
    return (f'<DataItem DataType="{kind}" Precision="{prec}" Format="HDF" '
            f'Dimensions="{dims}">{escape(ref)}</DataItem>')


@dataclass
class _Step:
    """What the XDMF needs to know of one written step (kept in the checkpoint as JSON)."""
    step: int
    time_days: float
    stage: str
    file: str                        # relative to DIR, e.g. "fields/step_000003.h5"
    fields: list                     # [name, stored shape, dtype str, in-plane components]
    sha256: str = ""                 # of the whole step file

    def to_json(self) -> list:
        return [self.step, self.time_days, self.stage, self.file, self.fields, self.sha256]

    @classmethod
    def from_json(cls, v) -> "_Step":
        return cls(int(v[0]), float(v[1]), str(v[2]), str(v[3]),
                   [[f[0], tuple(f[1]), f[2], int(f[3])] for f in v[4]], str(v[5]))


def _h5_bytes(fill) -> bytes:
    """An HDF5 file built in memory by ``fill(h5file)``: written to disk in one piece by the
    caller (through a file created exclusively), never by HDF5 opening a path itself."""
    import h5py
    buf = io.BytesIO()
    with h5py.File(buf, "w") as f:
        fill(f)
    return buf.getvalue()


def step_file_bytes(step: int, t: float, stage: str, stored: dict) -> bytes:
    """One output step: an attribute set (format, step, time, stage) and one dataset per
    field, contiguous and uncompressed, without time stamps (same results, same bytes)."""
    def fill(f):
        f.attrs["format"] = FORMAT
        f.attrs["step"] = step
        f.attrs["time_days"] = float(t)
        f.attrs["stage"] = str(stage)
        for name, (a, plane) in stored.items():
            ds = f.create_dataset(name, data=a, track_times=False)
            if plane:
                ds.attrs["in_plane_components"] = plane
    return _h5_bytes(fill)


def write_mesh_file(path: Path, mesh: Mesh, fingerprint: str, fsync: bool = True) -> str:
    """``fields/mesh.h5``: points (n_nodes, 3), cells, region ids and names; atomic.
    Returns the SHA-256 of the file."""
    m = mesh

    def fill(f):
        f.attrs["format"] = FORMAT
        f.attrs["region_names"] = json.dumps(list(m.region_names))
        f.attrs["mesh_sha256"] = fingerprint
        f.create_dataset("points", data=np.column_stack([m.points, np.zeros(m.n_nodes)]),
                         track_times=False)
        f.create_dataset("cells", data=m.triangles.astype(np.int64), track_times=False)
        f.create_dataset("region_id", data=m.region.astype(np.int64), track_times=False)
    data = _h5_bytes(fill)
    _atomic_write_bytes(path, data, fsync=fsync)
    return hashlib.sha256(data).hexdigest()


def xdmf_grid(mesh: Mesh, s: _Step) -> str:
    """One step as a uniform grid; each names the mesh's points and cells itself (no
    XInclude), so the file reads in any XDMF 3 reader."""
    m = mesh
    n, ne = m.n_nodes, m.n_elements
    mesh_ref = f"{FIELDS_DIR}/{MESH_NAME}"
    parts = [f'    <Grid Name="step_{s.step:06d}" GridType="Uniform">\n',
             f'      <Time Value="{s.time_days!r}"/>\n',
             f'      <Information Name="stage" Value={quoteattr(s.stage)}/>\n',
             f'      <Information Name="step" Value="{s.step}"/>\n',
             '      <Geometry GeometryType="XYZ">\n        '
             + _data_item((n, 3), np.float64, f"{mesh_ref}:/points")
             + "\n      </Geometry>\n",
             f'      <Topology TopologyType="Triangle_6" NumberOfElements="{ne}">\n'
             "        " + _data_item((ne, 6), np.int64, f"{mesh_ref}:/cells")
             + "\n      </Topology>\n",
             '      <Attribute Name="region_id" AttributeType="Scalar" Center="Cell">\n'
             "        " + _data_item((ne,), np.int64, f"{mesh_ref}:/region_id")
             + "\n      </Attribute>\n"]
    for name, shape, dtype, _plane in s.fields:
        parts.append(f'      <Attribute Name={quoteattr(name)} '
                     f'AttributeType="{_attribute_type(tuple(shape))}" Center="Node">\n'
                     "        " + _data_item(shape, np.dtype(dtype), f"{s.file}:/{name}")
                     + "\n      </Attribute>\n")
    parts.append("    </Grid>\n")
    return "".join(parts)


def xdmf_text(mesh: Mesh, grids: list[str]) -> str:
    """The whole ``results.xdmf``: a temporal collection of the given step grids."""
    out = ['<?xml version="1.0" encoding="utf-8"?>\n',
           '<Xdmf Version="3.0">\n',
           "  <Domain>\n",
           '    <Information Name="region_names" Value='
           + quoteattr(json.dumps(list(mesh.region_names))) + "/>\n",
           '    <Grid Name="time_series" GridType="Collection" CollectionType="Temporal">\n']
    out += grids
    out += ["    </Grid>\n", "  </Domain>\n", "</Xdmf>\n"]
    return "".join(out)
