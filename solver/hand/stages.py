"""The model's stages as the hand method's load history.

:func:`schedule` turns the stages into load :class:`Piece` records (start, duration, load
name, change of factor, stage): a lift's weight ramps on over its stage and off over a stage
that removes it, a load stage ramps the named loads to their new factor, a consolidate stage
waits. :func:`ramp` is the fraction of a
piece applied at given times; :func:`default_times` the output times of the settlement
histories.

Units: days.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np
from numpy.typing import NDArray

from solver.errors import InputError
from solver.model import Model

from .loads import Load

__all__ = ["Piece", "StageSpan", "schedule", "ramp", "default_times"]


@dataclass(frozen=True)
class Piece:
    """One load switched by one stage: its factor changes by ``change`` from ``start`` over
    ``duration`` days (0: at once); ``stage`` is the stage's index in the model (0-based)."""
    start: float
    duration: float
    load: str
    change: float
    stage: int


@dataclass(frozen=True)
class StageSpan:
    """A stage on the estimate's clock: ``name``, ``kind``, ``start`` and ``end`` (days)."""
    name: str
    kind: str
    start: float
    end: float


def schedule(model: Model, loads: dict[str, Load], notes: list[str]
             ) -> tuple[list[Piece], dict[str, float], float, list[StageSpan]]:
    """(pieces, final load factors, end of the stages, the stages on the clock)."""
    t = 0.0
    factor = {n: 0.0 for n in loads}
    pieces: list[Piece] = []
    spans: list[StageSpan] = []
    for i, st in enumerate(model.stages):
        dur = float(st.duration)
        if st.kind == "lift":
            name = st.region or f"lift_{st.lift}"
            if name not in loads:
                raise InputError(f"stage {st.name!r} places lift {st.lift}, which the embankment "
                                 "does not have", field=f"stages[{i + 1}].lift", source=model.source,
                                 fix="place lifts 1, 2, ... of section.embankment.lifts.")
            pieces.append(Piece(t, dur, name, 1.0 - factor[name], i))
            factor[name] = 1.0
        elif st.kind == "remove":
            name = st.region or f"lift_{st.lift}"
            if name not in loads:
                raise InputError(f"stage {st.name!r} removes {name!r}, which the hand method "
                                 "does not know as a load", field=f"stages[{i + 1}].lift",
                                 source=model.source,
                                 fix="remove a lift placed by an earlier stage.")
            if factor[name] != 0.0:     # its weight comes off over the stage (Cr on unloading)
                pieces.append(Piece(t, dur, name, -factor[name], i))
            factor[name] = 0.0
        elif st.kind == "load":
            for j, name in enumerate(st.loads):
                if name not in loads:
                    raise InputError(f"stage {st.name!r} names load {name!r}, never defined",
                                     field=f"stages[{i + 1}].loads[{j + 1}]", source=model.source,
                                     fix=f"use one of {sorted(n for n in loads if not n.startswith('lift_'))}.")
                change = float(st.factor) - factor[name]
                if change != 0.0:
                    pieces.append(Piece(t, dur, name, change, i))
                factor[name] = float(st.factor)
        elif st.until_degree is not None:
            notes.append(f"stage {st.name!r} runs its full {dur:g} days here; the FE run ends it "
                         f"once the average degree of consolidation reaches {st.until_degree:.0%}.")
        spans.append(StageSpan(st.name, st.kind, t, t + dur))
        t += dur
    return pieces, factor, t, spans


def ramp(t: NDArray[np.float64], start: float, duration: float) -> NDArray[np.float64]:
    """Fraction of a piece applied at times t (a sudden piece counts from its start on)."""
    if duration <= 0.0:
        return (t >= start).astype(float)
    return np.clip((t - start) / duration, 0.0, 1.0)


def default_times(model: Model, end: float, knots: Sequence[float]) -> NDArray[np.float64]:
    extra = [t for t in model.output.times if 0.0 <= t <= end]
    if end > 0.0:
        grid = np.geomspace(end * 1e-4, end, 241)
        lin = np.linspace(0.0, end, 121)
    else:
        grid = lin = np.zeros(1)
    return np.unique(np.concatenate([[0.0], grid, lin, extra, list(knots), [end]]))

