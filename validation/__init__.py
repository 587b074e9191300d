"""Validation cases: the solver against closed-form and published results.

Each case is one module with ``NAME``, ``TITLE`` and ``run(quick, out_dir) -> list[Check]``;
it builds its models through the same public API a user would, writes one comparison plot
(PNG) into ``out_dir`` when given, and returns one :class:`Check` per compared quantity. The
tests call the same cases (quick) and assert every check passed; ``poroplane validate`` prints
them.
"""

from __future__ import annotations

import importlib
import time
from dataclasses import asdict, dataclass
from pathlib import Path

CASE_MODULES = ["terzaghi", "mandel", "axisymmetric", "strip_load", "convergence",
                "camclay_isotropic", "camclay_drained", "camclay_undrained", "camclay_oedometer"]


@dataclass
class Check:
    """One compared quantity: ``error`` against ``tolerance`` (same measure and unit)."""
    case: str
    quantity: str
    error: float
    tolerance: float
    source: str

    @property
    def passed(self) -> bool:
        return bool(self.error <= self.tolerance)

    def as_dict(self) -> dict:
        d = asdict(self)
        d["passed"] = self.passed
        d["error"] = float(self.error)
        d["tolerance"] = float(self.tolerance)
        return d


def load_case(name: str):
    return importlib.import_module(f"{__name__}.{name}")


def run_all(quick: bool = True, out_dir: Path | None = None,
            names: list[str] | None = None) -> tuple[list[Check], dict[str, float]]:
    """Run the cases; return all checks and the wall seconds per case."""
    checks: list[Check] = []
    seconds: dict[str, float] = {}
    if out_dir is not None:
        out_dir = Path(out_dir)
        out_dir.mkdir(parents=True, exist_ok=True)
    for name in names or CASE_MODULES:
        t0 = time.perf_counter()
        checks += load_case(name).run(quick=quick, out_dir=out_dir)
        seconds[name] = time.perf_counter() - t0
    return checks, seconds
