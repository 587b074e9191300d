"""The command line's boundary around each step it runs (reading, meshing, set-up, stepping,
writing, plotting): an exception that is not the package's own (one raised by gmsh, numpy,
scipy, meshio, h5py, matplotlib, or a MemoryError) becomes a :class:`StepFailed` naming the
step, the model file, the library it came from and the field most likely behind it.

    with step("meshing", args.model, model):
        mesh = build_mesh(model)

The original exception stays chained (``__cause__``), so ``--debug`` shows its traceback.
Nothing here deletes or rewrites a file: what a step wrote before it failed stays on disk,
and ``written`` names it in the message.
"""

from __future__ import annotations

import contextlib
import math
import traceback
from pathlib import Path

from .errors import PoroplaneError

# Libraries whose exceptions are reported by name (module prefix -> words in messages).
LIBRARIES = {
    "gmsh": "the meshing library (gmsh)",
    "numpy": "numpy",
    "scipy": "scipy",
    "meshio": "meshio (mesh files)",
    "h5py": "h5py (HDF5 files)",
    "matplotlib": "matplotlib (plots)",
    "pyvista": "pyvista (pictures)",
    "vtkmodules": "VTK (pictures)",
    "pypardiso": "PARDISO (linear solver)",
    "pint": "pint (units)",
}


class StepFailed(PoroplaneError):
    """A step of a command failed with an exception that is not the package's own.

    step : what was being done ("meshing", "set-up", "stepping", "writing", ...).
    source : the model file (or run folder) the step worked on.
    field : the TOML path of the field most likely behind it, or None.
    """

    def __init__(self, step: str, source: str | None, cause: BaseException,
                 field: str | None = None, hint: str | None = None,
                 written: str | None = None):
        self.step, self.source, self.field, self.cause = step, source, field, cause
        self.hint, self.written = hint, written
        super().__init__(self.__str__())

    def __str__(self) -> str:
        origin = library_of(self.cause)
        what = f"{type(self.cause).__name__}: {_first_line(self.cause)}"
        if isinstance(self.cause, MemoryError):
            text = f"{self.step} ran out of memory ({what})"
        else:
            text = f"{self.step} failed in {origin} ({what})" if origin else \
                f"{self.step} failed ({what})"
        if self.source:
            text = f"{self.source}: {text}"
        text += "."
        if self.field:
            text += f" The likely field: {self.field}" + (f" ({self.hint})" if self.hint
                                                          else "") + "."
        if self.written:
            text += f" {self.written}"
        fix = ("check that value (a unit or a power of ten typed wrong?)" if self.field
               else "check the model's values against docs/model.md")
        return text + f" Fix: {fix}; rerun with --debug for the traceback."


def _first_line(exc: BaseException) -> str:
    text = str(exc).strip().splitlines()
    line = text[0] if text else "no message"
    return line if len(line) <= 200 else line[:197] + "..."


def library_of(exc: BaseException) -> str | None:
    """The library the exception came from: the innermost frame's top-level module, if it is
    one of :data:`LIBRARIES`; gmsh raises from its Python wrapper, ``gmsh.py``."""
    tb = exc.__traceback__
    found = None
    for frame, _ in traceback.walk_tb(tb):
        mod = (frame.f_globals.get("__name__") or "").split(".")[0]
        if mod in LIBRARIES:
            found = mod
    return LIBRARIES.get(found) if found else None


def frames_in(exc: BaseException, module: str) -> bool:
    """Whether the traceback passes through ``module`` (e.g. "solver.results")."""
    return any((f.f_globals.get("__name__") or "") == module
               for f, _ in traceback.walk_tb(exc.__traceback__))


@contextlib.contextmanager
def step(name: str, source, model=None, written: str | None = None, classify=None):
    """Turn a foreign exception raised inside the block into :class:`StepFailed`.

    name : the step, as named in the message; ``classify(exc) -> str`` may rename it from
        the exception (stepping or writing, told apart by where it was raised).
    source : the model file or run folder; model : the model, to name the likely field.
    written : a sentence saying what is already on disk and stays there, or a function
        returning it (called after the failure).
    PoroplaneError, KeyboardInterrupt and SystemExit pass unchanged.
    """
    try:
        yield
    except (PoroplaneError, KeyboardInterrupt, SystemExit):
        raise
    except Exception as exc:  # noqa: BLE001 - the boundary: every foreign exception
        name = classify(exc) if classify else name
        field, hint = likely_field(model, name) if model is not None else (None, None)
        if callable(written):
            written = written()
        raise StepFailed(name, str(source) if source is not None else None, exc, field, hint,
                         written) from exc


def run_step(exc: BaseException) -> str:
    """Stepping or writing, from where an exception of a run was raised."""
    if isinstance(exc, OSError) or frames_in(exc, "solver.results"):
        return "writing the results"
    return "stepping"


# ----------------------------------------------------------------------------- likely field

def count_outliers(model) -> list[tuple[str, str]]:
    """(path, why) of counts beyond their sane maximum (:mod:`solver.model.bounds`)."""
    from .model.bounds import MAX_LINE_POINTS, MAX_STEPS_PER_LEVEL
    out = [(f"lines[{i + 1}].points", f"{ln.points:g} points")
           for i, ln in enumerate(model.lines) if ln.points > MAX_LINE_POINTS]
    if model.time_steps.steps_per_level > MAX_STEPS_PER_LEVEL:
        out.append(("time_steps.steps_per_level", f"{model.time_steps.steps_per_level:g}"))
    return out


def geometry_outlier(model) -> list[tuple[str, str]]:
    """The length of the section (a thickness, a width) furthest, by a factor of more than
    30, from the median of its lengths, as [(path, why)], or []. Element sizes are left out:
    they are small against the section by design."""
    from .model.bounds import section_lengths
    lengths = [(p, v) for p, v, role, _ in section_lengths(model) if role == "feature"]
    positive = sorted(abs(v) for _, v in lengths if v and math.isfinite(v))
    if not positive:
        return []
    median = positive[len(positive) // 2]
    best, score = None, math.log10(30.0)
    for p, v in lengths:
        if not math.isfinite(v):
            return [(p, f"{v:g} m")]
        if v and abs(math.log10(abs(v) / median)) > score:
            best, score = (p, v), abs(math.log10(abs(v) / median))
    if best is None:
        return []
    return [(best[0], f"{best[1]:g} m, against a median length of {median:g} m in the "
                      "section")]


def likely_field(model, step_name: str) -> tuple[str | None, str | None]:
    """The field most likely behind a failure in ``step_name``, and why, or (None, None).

    Meshing: a length of the section far (a factor of 30) from the median of its lengths.
    Other steps: a count beyond its sane maximum, then the value furthest outside the range
    of real soils (:func:`solver.model.plausible.out_of_range`), then the geometry.
    """
    try:
        from .model.plausible import out_of_range
        if step_name == "meshing":
            tries = (geometry_outlier,)
        else:
            tries = (count_outliers, out_of_range, geometry_outlier)
        for find in tries:
            found = find(model)
            if found:
                return found[0]
        return None, None
    except Exception:  # noqa: BLE001 - a guess must never hide the real failure
        return None, None


def describe_written(folder) -> str | None:
    """A sentence naming what a run folder already holds, or None when it holds nothing."""
    folder = Path(folder)
    names = [n for n in ("results.xdmf", "probes.csv", "lines.csv", "checkpoint.npz",
                         "summary.json") if (folder / n).exists()]
    if not names:
        return None
    return f"What was written before is kept in {folder}/ ({', '.join(names)})."
