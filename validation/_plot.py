"""Shared look of the validation plots: closed form as lines, the solver as markers."""

from __future__ import annotations

from pathlib import Path


def figure(ncols: int = 2, width: float = 11.0, height: float = 4.4):
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    fig, axes = plt.subplots(1, ncols, figsize=(width, height), constrained_layout=True)
    return fig, axes


def save(fig, out_dir: Path | None, name: str) -> Path | None:
    import matplotlib.pyplot as plt
    path = None
    if out_dir is not None:
        path = Path(out_dir) / f"{name}.png"
        fig.savefig(path, dpi=110)
    plt.close(fig)
    return path


# The solver's points where a case draws many of them over a closed-form line.
COMPUTED = dict(ls="none", marker="o", ms=3.5, color="0.2", mfc="none", label="computed")


def log_axis(ax, ticks, label: str) -> None:
    """A logarithmic x axis (stresses) with ticks at the given plain numbers."""
    from matplotlib.ticker import FixedLocator, NullLocator, ScalarFormatter
    ax.set_xscale("log")
    ax.xaxis.set_major_locator(FixedLocator(ticks))
    ax.xaxis.set_minor_locator(NullLocator())
    ax.xaxis.set_major_formatter(ScalarFormatter())
    ax.set_xlabel(label)
