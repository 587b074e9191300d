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
