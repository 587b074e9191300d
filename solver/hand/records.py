"""The records of the hand estimate: per probe, per stage, per pair of probes, per model.

Units: m, kPa, days; settlement positive downward; depth positive downward from the original
ground surface. Results inform design: they need review by a qualified engineer; local codes
and licensed practice govern.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from solver import CAUTION
from solver.errors import InputError

from . import differential

__all__ = ["T50_T90", "StageEstimate", "ProbeEstimate", "DifferentialEstimate", "GradientChange",
           "HandEstimate"]

T50_T90 = ("t50, t90: days from the start of the first stage until the settlement reaches 50 % "
           "/ 90 % of its primary value, the immediate plus the primary consolidation "
           "settlement under the final load (secondary compression left out)")
"""The meaning of t50 and t90 in the hand estimate (the same as the run summary's)."""


@dataclass
class StageEstimate:
    """One stage seen from a probe: ``settlement_m`` the consolidation settlement of the soil
    below it at the stage's end, ``ultimate_m`` the settlement the load in place then would
    give held for ever (the 1D settlement along the stress path), ``degree`` their ratio (the
    degree of consolidation reached); times in days on the estimate's clock."""
    name: str
    kind: str
    start_days: float
    end_days: float
    settlement_m: float
    ultimate_m: float
    degree: float


@dataclass
class ProbeEstimate:
    """The hand estimate at one point probe.

    Scalars: ``probe_depth_m`` (depth of the probe below the original ground; 0 on the
    surface or in the fill), ``final_settlement_m`` = immediate + consolidation + secondary,
    ``immediate_settlement_m``, ``consolidation_settlement_m`` (primary, U = 100 % under the
    final load, along the stress path of the stages), ``primary_settlement_m`` (immediate +
    consolidation),
    ``secondary_settlement_m`` (to the end of the last stage), ``t50_days``, ``t90_days``
    (days from the start of the first stage to 50 % / 90 % of the primary settlement,
    :data:`solver.hand.records.T50_T90`; ``t50_note``, ``t90_note`` say when one is after the
    stages end or missing), ``end_of_primary_days`` (t95 of the consolidation part, where
    secondary compression starts), ``max_excess_pore_pressure_kPa`` (NaN on a drained surface).

    Profile arrays, one value per sublayer below the probe (n_sub,): ``depth_m`` (mid-depth
    below the original ground; ``sublayer_top_m``, ``sublayer_bottom_m`` its faces), ``stress_increase_kPa`` (half-space, used),
    ``stress_increase_2to1_kPa`` (quick check), ``initial_effective_stress_kPa``,
    ``preconsolidation_pressure_kPa`` (NaN for m_v layers), ``sublayer_settlement_m``
    (ultimate, under the final load along the stress path), ``sublayer_layer`` (names).

    History arrays (nt,): ``time_days``, ``settlement_m`` (immediate + consolidation +
    secondary), ``consolidation_degree`` (U of the soil below the probe: its consolidation
    settlement over the settlement the load in place would give held for ever),
    ``excess_pore_pressure_kPa`` (at the probe depth).

    ``where``: "ground surface", "in the fill", "footing base" or "inside the ground";
    ``stages``: one :class:`StageEstimate` per stage (the degree reached before each change);
    ``how_found``: for "immediate", "consolidation" and "secondary" how the part was found;
    ``skempton_bjerrum``: layer -> the Skempton-Bjerrum (1957) factor applied to its
    consolidation settlement (layers that give Skempton's A).
    """
    name: str
    x_m: float
    y_m: float
    probe_depth_m: float
    final_settlement_m: float
    immediate_settlement_m: float
    consolidation_settlement_m: float
    secondary_settlement_m: float
    t50_days: float
    t90_days: float
    end_of_primary_days: float
    max_excess_pore_pressure_kPa: float
    depth_m: NDArray[np.float64]
    stress_increase_kPa: NDArray[np.float64]
    stress_increase_2to1_kPa: NDArray[np.float64]
    initial_effective_stress_kPa: NDArray[np.float64]
    preconsolidation_pressure_kPa: NDArray[np.float64]
    sublayer_settlement_m: NDArray[np.float64]
    sublayer_layer: list[str]
    layer_settlement_m: dict[str, float]
    time_days: NDArray[np.float64]
    settlement_m: NDArray[np.float64]
    consolidation_degree: NDArray[np.float64]
    excess_pore_pressure_kPa: NDArray[np.float64]
    notes: list[str] = field(default_factory=list)
    where: str = "ground surface"
    stages: list[StageEstimate] = field(default_factory=list)
    how_found: dict[str, str] = field(default_factory=dict)
    skempton_bjerrum: dict[str, float] = field(default_factory=dict)
    t50_note: str | None = None
    t90_note: str | None = None
    primary_settlement_m: float = float("nan")
    sublayer_top_m: NDArray[np.float64] = field(default_factory=lambda: np.zeros(0))
    sublayer_bottom_m: NDArray[np.float64] = field(default_factory=lambda: np.zeros(0))

    @property
    def on_surface(self) -> bool:
        """True for a probe on the ground surface, in the fill above it or on a footing base
        (the probes the differential settlement is taken between)."""
        return self.where != "inside the ground"

    def settlement_at(self, times) -> NDArray[np.float64]:
        """Settlement (m) at ``times`` (days), linear between the history's times (held after)."""
        return np.interp(np.asarray(times, dtype=float), self.time_days, self.settlement_m)

    def stress_at(self, depth: float) -> tuple[float, float]:
        """(half-space, 2:1) stress increase (kPa) at ``depth`` (m), linear between sublayers."""
        if self.depth_m.size == 0:
            return float("nan"), float("nan")
        return (float(np.interp(depth, self.depth_m, self.stress_increase_kPa)),
                float(np.interp(depth, self.depth_m, self.stress_increase_2to1_kPa)))


@dataclass
class DifferentialEstimate:
    """Differential settlement of two neighbouring surface probes through time.

    ``differential_settlement_m`` = settlement of ``probe_a`` minus that of ``probe_b``;
    ``angular_distortion`` = its absolute value over ``distance_m``. ``kind`` "structure"
    (neighbouring footing bases, or probes the user names as a structure, ``structure`` its
    name): ``checks`` against the building limits of angular distortion (Bjerrum 1963;
    :data:`solver.hand.differential.DEFAULT_DISTORTION_LIMITS`). ``kind`` "ground" (along an
    embankment or the ground): ``checks`` against the user's ``limits.differential_settlement``
    (none when not given).
    """
    probe_a: str
    probe_b: str
    distance_m: float
    time_days: NDArray[np.float64]
    differential_settlement_m: NDArray[np.float64]
    angular_distortion: NDArray[np.float64]
    checks: list[differential.LimitCheck]
    kind: str = "structure"
    structure: str | None = None

    @property
    def final_differential_settlement_m(self) -> float:
        return float(self.differential_settlement_m[-1])

    @property
    def max_angular_distortion(self) -> float:
        return float(np.max(self.angular_distortion))

    @property
    def max_differential_settlement_m(self) -> float:
        """The largest |differential settlement| through time (m)."""
        return float(np.max(np.abs(self.differential_settlement_m)))


@dataclass
class GradientChange:
    """The change of the surface gradient at ``probe_b`` between the ground pairs
    ``probe_a``-``probe_b`` and ``probe_b``-``probe_c`` (-, slope of the right pair minus that
    of the left), through time, with ``checks`` against ``limits.change_of_gradient``."""
    probe_a: str
    probe_b: str
    probe_c: str
    time_days: NDArray[np.float64]
    change: NDArray[np.float64]
    checks: list[differential.LimitCheck]

    @property
    def max_change(self) -> float:
        return float(np.max(np.abs(self.change)))


@dataclass
class HandEstimate:
    """The hand estimate of a model: one :class:`ProbeEstimate` per point probe (model order),
    the differential settlement of neighbouring surface probes (ground pairs and structure
    pairs), the change of gradient along the ground, and notes on the model as a whole
    (parameter conversions, assumptions)."""
    title: str
    analysis: str
    end_days: float
    probes: dict[str, ProbeEstimate]
    differential: list[DifferentialEstimate]
    notes: list[str]
    caution: str = CAUTION
    gradient_changes: list[GradientChange] = field(default_factory=list)

    def probe(self, name: str) -> ProbeEstimate:
        if name not in self.probes:
            raise InputError(f"no probe named {name!r}; the hand estimate has {list(self.probes)}",
                             field="probes")
        return self.probes[name]
