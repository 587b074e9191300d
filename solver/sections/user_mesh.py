"""A section read from the user's mesh file."""

from __future__ import annotations

from pathlib import Path

from ..errors import InputError
from ..geometry import read_mesh
from ..mesh import Mesh


def file_mesh(model) -> Mesh:
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
    return read_mesh(path)
