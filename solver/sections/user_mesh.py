"""A section read from the user's mesh file."""

from __future__ import annotations

from pathlib import Path

from ..errors import InputError
from ..geometry import mesh_geo_file, read_mesh
from ..mesh import Mesh


def file_mesh(model, trust_geo: bool = False) -> Mesh:
    """The user's mesh file (``.msh`` or ``.geo``), names kept as they are.

    A relative path is looked up beside the model file first, then from the working folder.
    """
    name = model.section.mesh_file
    if not name:
        raise InputError("section kind 'mesh' needs a mesh_file", field="section.mesh_file",
                         source=model.source, fix="give the path of a .msh or .geo file.")
    path = Path(name)
    if not path.is_absolute() and model.source:
        beside = Path(model.source).parent / path
        if beside.exists():
            path = beside
    sizes = model.section.region_mesh_size
    if sizes and path.suffix.lower() == ".geo" and path.exists():
        if not trust_geo:                 # the same refusal as read_mesh makes
            from ..geo_script import check_geo_file
            check_geo_file(path)
        return mesh_geo_file(path, lambda gmsh: _region_sizes(gmsh, sizes, model))
    return read_mesh(path, trust_geo=trust_geo)


def _region_sizes(gmsh, sizes: dict[str, float], model) -> None:
    """Each named region (its surfaces and their boundary curves) at most its size; gmsh's
    own size there (the file's point sizes, its fields) still holds where it is smaller."""
    groups = {gmsh.model.getPhysicalName(2, tag): tag
              for _, tag in gmsh.model.getPhysicalGroups(2)}
    cap: dict[tuple[int, int], float] = {}
    for name, h in sizes.items():
        if name not in groups:
            raise InputError(f"the mesh has no region named {name!r}",
                             field=f"section.region_mesh_size.{name}", source=model.source,
                             fix=f"name one of the mesh's regions: {', '.join(sorted(groups))}.")
        surfaces = [(2, int(s)) for s in gmsh.model.getEntitiesForPhysicalGroup(2, groups[name])]
        for dimtag in surfaces + [(d, abs(t)) for d, t in gmsh.model.getBoundary(
                surfaces, combined=False, oriented=False, recursive=False)]:
            cap[dimtag] = min(cap.get(dimtag, float("inf")), float(h))
    gmsh.model.mesh.setSizeCallback(
        lambda dim, tag, x, y, z, lc: min(lc, cap.get((dim, tag), lc)))
