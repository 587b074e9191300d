"""Bounds on names and counts: what becomes a file name, a table cell or a table row.

A name is written into every row of a result table and may become part of a file name (a
plot per line), so it is kept short and printable; counts are bounded so that a typo (an
extra zero) is a clear message rather than hours of work and gigabytes on disk. (Points per
line and output times are bounded with the other slips, in :mod:`.bounds`.)
"""

from __future__ import annotations

from ..errors import InputError
from .fields import _join
from .schema import Model

MAX_NAME_CHARS = 64
MAX_PROBES = 100_000
MAX_LINES = 1_000
MAX_STAGES = 1_000
RESERVED_STAGE_NAMES = ("initial state",)   # the rows at t = 0, before any stage


def _fail(model: Model, message: str, path: str, fix: str) -> None:
    raise InputError(message, field=path, source=model.source, fix=fix)


def _name(model: Model, name, path: str) -> None:
    if not isinstance(name, str):
        return
    if len(name) > MAX_NAME_CHARS:
        _fail(model, f"the name is {len(name):,} characters long, more than {MAX_NAME_CHARS}",
              path, f"give a name of at most {MAX_NAME_CHARS} characters.")
    if any(not ch.isprintable() for ch in name):
        _fail(model, f"the name {name[:20]!r} holds a control character (a line break, tab "
                     "or the like)", path, "give a name of printable characters only.")


def _count(model: Model, n: int, most: int, path: str, what: str) -> None:
    if n > most:
        _fail(model, f"{n:,} {what}, more than the {most:,} a model may have", path,
              f"give at most {most:,} {what}; a result table gets a row for each at every "
              "time step.")


def check_limits(model: Model) -> None:
    """Names at most :data:`MAX_NAME_CHARS` printable characters; counts within bounds."""
    _count(model, len(model.probes), MAX_PROBES, "probes", "point probes")
    _count(model, len(model.lines), MAX_LINES, "lines", "lines")
    _count(model, len(model.stages), MAX_STAGES, "stages", "stages")
    for name in model.materials:
        _name(model, name, _join("materials", name) if len(name) <= 80 else "materials")
    for group, items in (("layers", model.layers), ("loads", model.loads),
                         ("section.footings", model.section.footings),
                         ("stages", model.stages), ("probes", model.probes),
                         ("lines", model.lines)):
        for i, item in enumerate(items):
            _name(model, getattr(item, "name", None), f"{group}[{i + 1}].name")
    for region in model.section.regions:
        _name(model, region, "section.regions")
    for i, st in enumerate(model.stages):
        if st.name in RESERVED_STAGE_NAMES:
            _fail(model, f"the stage name {st.name!r} is the one results give the state "
                         "before the first stage", f"stages[{i + 1}].name",
                  "give the stage another name.")
