"""Plots of a run folder (matplotlib, no display needed): settlement, pore pressure, profiles.

    paths = make_plots("runs/embankment")             # PNGs into runs/embankment/plots/
    paths = make_plots(run_dir, times=[180, 3650])    # profiles at the output times nearest these

The entry points; the figures are drawn in :mod:`solver.plot_histories` (against time) and
:mod:`solver.plot_profiles` (along lines at chosen times) from the run as
:mod:`solver.plot_data` reads it, in the look of :mod:`solver.plot_style`. Their public names
are importable from here too. Times are in days, lengths in m, pressures in kPa; settlement is
positive downward and drawn downward.
"""

from __future__ import annotations

from pathlib import Path
from typing import Sequence

from .plot_data import RunData, StageSpan, hand_curves, load_run, surface_probes
from .plot_histories import (degree_of_consolidation, differential_histories,
                             plot_degree_time, plot_differential, plot_pore_pressure_time,
                             plot_settlement_time)
from .plot_inclinometer import plot_inclinometer
from .plot_profiles import plot_isochrones, plot_troughs
from .plot_style import DEFAULT_DPI, MAX_PROFILES, pick_times

__all__ = ["RunData", "StageSpan", "load_run", "make_plots", "plots_of", "plot_command",
           "pick_times", "hand_curves", "differential_histories", "surface_probes",
           "degree_of_consolidation", "plot_settlement_time", "plot_pore_pressure_time",
           "plot_degree_time", "plot_isochrones", "plot_troughs", "plot_inclinometer",
           "plot_differential",
           "DEFAULT_DPI", "MAX_PROFILES"]

PLOTS_DIR = "plots"


# ============================================================================ entry points
def make_plots(run_dir: str | Path, out_dir: str | Path | None = None,
               times: Sequence[float] | None = None) -> list[Path]:
    """Write every plot the run folder supports; returns the PNG paths.

    Parameters
    ----------
    run_dir : folder written by a run (``poroplane run MODEL -o DIR``).
    out_dir : where the PNGs go; ``run_dir/plots`` by default.
    times : days at which to draw the profiles (isochrones, troughs, the inclinometer): the
        nearest output time to each. None: the stage ends, the largest excess pore pressure
        and the last output, near-duplicates merged
        (:func:`solver.plot_profiles.profile_indices`).
    """
    return plots_of(load_run(run_dir), out_dir, times)


def plots_of(run: RunData, out_dir: str | Path | None = None,
             times: Sequence[float] | None = None) -> list[Path]:
    """:func:`make_plots` for run data already read (:func:`load_run`)."""
    from .results.files import make_folder
    out = make_folder(Path(out_dir) if out_dir is not None else run.dir / PLOTS_DIR)
    paths: list[Path] = []
    paths += plot_settlement_time(run, out)
    paths += plot_pore_pressure_time(run, out)
    paths += plot_degree_time(run, out)
    paths += plot_isochrones(run, out, times)
    paths += plot_troughs(run, out, times)
    paths += plot_inclinometer(run, out, times)
    paths += plot_differential(run, out)
    return paths


def plot_command(run_dir: str | Path, times: Sequence[float] | None = None) -> list[Path]:
    """What ``poroplane plot DIR [--times ...]`` does: the plots and the section pictures,
    all as PNGs in ``DIR/plots/``. Without off-screen rendering the pictures are left out
    with a :class:`solver.pictures.RenderingUnavailable` warning; the plots are made anyway.
    """
    from .pictures import make_pictures
    run = load_run(run_dir)
    out = run.dir / PLOTS_DIR
    paths = plots_of(run, out, times)
    paths += make_pictures(run.dir, out, times)
    return paths
