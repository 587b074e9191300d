"""The window of the section pictures: cropped to the loaded zone when the section is much
wider than it, and the exaggeration of the deformed mesh chosen for that window.

A section drawn to scale whole makes a loaded zone of 30 m small in a domain of 150 m (the side
boundary lies 2 B to 2 D beyond the load); the settlement and the excess pore pressure live
under and beside the load. :func:`loaded_window` is the part of the section within one loaded
width or half the depth (the larger) beyond the load on each side, the whole depth; None when
that is most of the section anyway. Lengths in m.
"""

from __future__ import annotations

import numpy as np

__all__ = ["CROP_MARGIN", "loaded_window", "exaggeration_words"]

CROP_MARGIN = 1.0
"""Margin beside the load in loaded widths B (or half depths D / 2, the larger): the
settlement trough and the excess pore pressure under a strip fade within about B to 2 B of its
edge (elastic influence, common practice)."""


def loaded_window(model, points: np.ndarray, keep_fraction: float = 0.8
                  ) -> tuple[float, float, float, float] | None:
    """(x0, x1, y0, y1) of the loaded zone and what lies around it, or None (no load, no
    model, or the window would be most of the section: wider than ``keep_fraction`` of it)."""
    if model is None:
        return None
    from .model import loaded_spans
    spans = loaded_spans(model)
    if not spans:
        return None
    x_lo, x_hi = float(points[:, 0].min()), float(points[:, 0].max())
    y_lo, y_hi = float(points[:, 1].min()), float(points[:, 1].max())
    lo, hi = min(s[0] for s in spans), max(s[1] for s in spans)
    margin = CROP_MARGIN * max(hi - lo, 0.5 * (y_hi - y_lo))
    x0, x1 = max(x_lo, lo - margin), min(x_hi, hi + margin)
    if x1 - x0 >= keep_fraction * (x_hi - x_lo):
        return None
    return x0, x1, y_lo, y_hi


def exaggeration_words(factor: float) -> str:
    """How the title states the deformed mesh's scale."""
    if factor == 1.0:
        return "deformed mesh at true scale (the displacements are large enough to see)"
    return f"deformed mesh, displacements exaggerated {factor:g} times"
