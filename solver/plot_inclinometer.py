"""What an inclinometer near the toe shows: the horizontal displacement along a vertical line
through the ground, at chosen output times, from the run's displacement fields.

    paths = plot_inclinometer(load_run("runs/embankment"), out_dir)

The line stands at the toe of the embankment (the outer toe of its berms), else at the edge
of the loaded zone (the outer edge of the loads and footings), from the ground surface down
to the base. Displacements are sampled from the nodal field of each output (the 6-node
triangles split into four, linear in each: the mid-side nodes are used). Lengths in m,
displacements in mm, positive towards +x (away from the centre line at a right-hand toe).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from . import plot_style as style
from .plot_data import RunData

__all__ = ["inclinometer_line", "sample_vertical", "plot_inclinometer"]

SAMPLES = 121


def inclinometer_line(model) -> tuple[float, str] | None:
    """(x, what it is) of the line: the embankment toe, else the outer edge of the loads."""
    from .model import embankment_profile, loaded_spans
    sec = model.section
    if sec.kind == "embankment" and sec.embankment is not None:
        return float(embankment_profile(sec.embankment)[-1][0]), "the toe of the embankment"
    spans = loaded_spans(model)
    if not spans:
        return None
    return float(max(hi for _, hi in spans)), "the edge of the loaded zone"


def _p1_split(cells: np.ndarray) -> np.ndarray:
    """6-node triangles (corners 0-2, mid-sides 3: 0-1, 4: 1-2, 5: 2-0) as 4 linear ones."""
    c = cells
    return np.concatenate([c[:, [0, 3, 5]], c[:, [3, 1, 4]], c[:, [5, 4, 2]],
                           c[:, [3, 4, 5]]])


def sample_vertical(points: np.ndarray, cells: np.ndarray, x: float, y0: float, y1: float,
                    n: int = SAMPLES, keep: np.ndarray | None = None):
    """Interpolation onto ``n`` points of the vertical x from y0 down to y1.

    Returns (y (m,), nodes (m, 3), weights (m, 3)): the samples inside the mesh (elements
    ``keep`` only, when given) and, for each, the nodes and linear weights that give a nodal
    field there: ``(field[nodes] * weights[..., None]).sum(axis=1)``.
    """
    from matplotlib.tri import Triangulation
    cells = cells if keep is None else cells[keep]
    tris = _p1_split(cells)
    tri = Triangulation(points[:, 0], points[:, 1], tris)
    ys = np.linspace(y0, y1, n)
    span = max(float(np.ptp(points[:, 0])), 1.0)
    xs = np.full(n, x) - 1e-9 * span           # on a vertical mesh line: the inner side
    found = tri.get_trifinder()(xs, ys)
    ok = found >= 0
    t = tris[found[ok]]
    p = points[t]                                               # (m, 3, 2)
    d = np.stack([xs[ok], ys[ok]], axis=1)
    a, b, c = p[:, 0], p[:, 1], p[:, 2]
    den = (b[:, 1] - c[:, 1]) * (a[:, 0] - c[:, 0]) + (c[:, 0] - b[:, 0]) * (a[:, 1] - c[:, 1])
    w0 = ((b[:, 1] - c[:, 1]) * (d[:, 0] - c[:, 0]) + (c[:, 0] - b[:, 0]) * (d[:, 1] - c[:, 1])) / den
    w1 = ((c[:, 1] - a[:, 1]) * (d[:, 0] - c[:, 0]) + (a[:, 0] - c[:, 0]) * (d[:, 1] - c[:, 1])) / den
    w = np.stack([w0, w1, 1.0 - w0 - w1], axis=1)
    return ys[ok], t, w


def plot_inclinometer(run: RunData, out: Path, times=None) -> list[Path]:
    """Horizontal displacement along the vertical at the toe (:func:`inclinometer_line`)
    at the output times :func:`solver.plot_profiles.profile_indices` picks."""
    from .plot_profiles import profile_indices
    from .results import read_fields
    if run.model is None or not (run.dir / "fields" / "mesh.h5").exists():
        return []
    where = inclinometer_line(run.model)
    if where is None:
        return []
    x, what = where
    fs = read_fields(run.dir, ["displacement_m"])
    disp = fs.fields.get("displacement_m")
    if disp is None or not len(fs.times):
        return []
    lo, hi = fs.points[:, 0].min(), fs.points[:, 0].max()
    if not lo <= x <= hi:
        return []
    ground = ~np.isin(fs.region, [i for i, n in enumerate(fs.region_names)
                                  if n.startswith("lift_")])
    y, nodes, w = sample_vertical(fs.points, fs.cells, x, 0.0, float(fs.points[:, 1].min()),
                                  keep=ground)
    if y.size < 2:
        return []
    idx = profile_indices(run, [{"time_days": t} for t in fs.times], times)
    fig = style.figure(8.6, 8.4)
    ax = fig.subplots()
    for c, i in zip(style.time_colours(len(idx)), idx):
        ux = (disp[i][nodes, 0] * w).sum(axis=1)
        ax.plot(1000.0 * ux, y, color=c, lw=1.7,
                label=f"{style.fmt_days(fs.times[i])}  ({fs.stages[i]})")
    ax.axvline(0.0, color="#555555", lw=0.8)
    ax.set_xlabel("horizontal displacement (mm; positive towards +x, away from the centre "
                  "line)")
    ax.set_ylabel("elevation y (m; original ground surface at 0)")
    ax.grid(True, color="#e2e2e2", lw=0.6)
    h, l = ax.get_legend_handles_labels()
    style.legend(ax, h, l, "time (stage)")
    fig.suptitle(f"Inclinometer at {what} (x = {x:g} m): horizontal displacement through "
                 "time", fontsize=11.5)
    note = (f"A vertical line at x = {x:g} m from the ground surface to the base of the model, "
            "as an inclinometer casing installed before construction reads it (displacements "
            "from the start of the run; the base of the model is fixed, so a casing founded in "
            "it reads the same).")
    return [style.finish(fig, out / "inclinometer.png", note)]
