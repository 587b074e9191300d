"""A Gmsh ``.geo`` file is a program: find what in it would act outside the mesh.

Gmsh runs a ``.geo`` file statement by statement when it opens it. Most statements build
geometry, name groups and set mesh options; a few reach the system. From the Gmsh script
grammar (its parser, ``Gmsh.y``, and lexer, ``Gmsh.l``), the statements that do are:

run a program
    ``SystemCall``, ``System``, ``NonBlockingSystemCall`` (a shell command), ``OnelabRun``
    and ``OnelabAction`` (start or drive a solver client), ``Plugin(...)`` (a plugin run,
    some of which write files), ``Exit`` (ends the whole process, the Python one too),
    and option assignments under ``Solver.`` (solver executables and their commands).
write or create a file
    ``Printf(...) > "file"`` and ``>> "file"``, ``Save`` (also ``Save View[i]``), ``Print``
    (a picture), ``CreateDir``, ``SendToServer``, and option assignments under
    ``General.`` and ``Print.`` (among them the file names and the session and option files
    Gmsh writes by itself; ``General.Terminal``, ``General.Verbosity``,
    ``General.NumThreads`` and ``General.ExpertMode`` are allowed).
read another file, which is itself run
    ``Include``, ``Merge``, ``MergeWithBoundingBox``, ``ShapeFromFile``, ``ListFromFile``.

Deleting or renaming files is not in the language: ``Delete`` removes model entities,
fields, views, variables or options from memory, and is harmless. Gmsh also reads
``FILE.geo.opt`` beside the file when it exists; that file is checked the same way.

A file that uses none of these is meshed as it is. Otherwise it is refused with the line of
each use, unless the user says the file is trusted (``--trust-geo`` on the command line,
``trust_geo=True`` in Python). A mesh saved as ``.msh`` is plain data and never refused.
"""

from __future__ import annotations

import re
from pathlib import Path

from .errors import MeshError

RUNS_PROGRAMS = ("SystemCall", "System", "NonBlockingSystemCall", "OnelabRun", "OnelabAction",
                 "Plugin", "Exit")
WRITES_FILES = ("Save", "Print", "CreateDir", "SendToServer")
READS_FILES = ("Include", "Merge", "MergeWithBoundingBox", "ShapeFromFile", "ListFromFile")
OPTION_GROUPS = ("Solver", "General", "Print")
HARMLESS_OPTIONS = ("General.Terminal", "General.Verbosity", "General.NumThreads",
                    "General.ExpertMode")
_WORDS = {w: "runs a program" for w in RUNS_PROGRAMS}
_WORDS.update({w: "writes a file" for w in WRITES_FILES})
_WORDS.update({w: "reads and runs another file" for w in READS_FILES})

_TOKEN = re.compile(r'//[^\n]*|/\*.*?(?:\*/|\Z)|"[^"]*(?:"|\Z)|\'[^\']*(?:\'|\Z)'
                    r"|[A-Za-z_][A-Za-z0-9_]*|\n|.", re.S)


def _code(text: str) -> list[tuple[int, str]]:
    """(line, token) of the code, comments and strings replaced by one ``"S"`` token."""
    out, line = [], 1
    for m in _TOKEN.finditer(text):
        tok = m.group(0)
        if tok == "\n":
            line += 1
            continue
        first = tok[:2]
        if first in ("//", "/*"):
            line += tok.count("\n")
            continue
        if tok[0] in "\"'":
            out.append((line, '"S"'))
            line += tok.count("\n")
            continue
        if not tok.isspace():
            out.append((line, tok))
    return out


def untrusted_statements(text: str) -> list[tuple[int, str, str]]:
    """(line, what, why) of every statement in a ``.geo`` text that reaches the system."""
    toks = _code(text)
    found = []
    depth = 0
    printf_open = None                      # depth at which a Printf( call opened
    for i, (line, tok) in enumerate(toks):
        if tok == "(":
            depth += 1
        elif tok == ")":
            depth -= 1
            if printf_open is not None and depth == printf_open:
                nxt = toks[i + 1][1] if i + 1 < len(toks) else ""
                if nxt == ">":
                    found.append((line, "Printf > file", "writes a file"))
                printf_open = None
        elif tok == "Printf" and printf_open is None:
            printf_open = depth
        elif tok in _WORDS:
            found.append((line, tok, _WORDS[tok]))
        elif tok in OPTION_GROUPS and i + 1 < len(toks) and toks[i + 1][1] == ".":
            name = toks[i + 2][1] if i + 2 < len(toks) else ""
            if f"{tok}.{name}" in HARMLESS_OPTIONS:
                continue
            found.append((line, f"{tok}.{name}", "sets an option that names programs or "
                                                 "files"))
    return found


def check_geo_file(path: str | Path) -> None:
    """Refuse a ``.geo`` file (and its ``.opt`` companion) that reaches the system."""
    path = Path(path)
    for p in (path, Path(str(path) + ".opt")):
        if p != path and not p.exists():
            continue
        try:
            text = p.read_text(encoding="utf-8", errors="replace")
        except OSError as exc:
            raise MeshError(f"cannot read it: {exc.strerror}", source=str(p)) from None
        found = untrusted_statements(text)
        if found:
            shown = "; ".join(f"line {ln}: {what} ({why})" for ln, what, why in found[:5])
            more = f" and {len(found) - 5} more" if len(found) > 5 else ""
            raise MeshError(
                f"the Gmsh script uses statements that act outside the mesh: {shown}{more}. "
                "A .geo file is a program for the mesher, and this one is not run unless you "
                "say it is trusted", source=str(p),
                fix="mesh it in Gmsh and give the .msh file instead, or, if you wrote the "
                    "file or trust its author, pass --trust-geo (trust_geo=True in Python).")
