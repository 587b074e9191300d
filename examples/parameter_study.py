"""How the settlement of the road embankment depends on the stiffness of the soft clay.

AN INVENTED SITE: examples/embankment.toml, whose ground and soil parameters are made up and
are not from any real ground investigation; do not use the numbers for design.

The model file is read once; each value is set in memory (no temporary files), the model is
checked again and solved, and the final settlement and the time to 90 % of it are taken at
the centre of the embankment, on the original ground.

    python examples/parameter_study.py                 # the values below, printed as a table
    from examples.parameter_study import study         # or in a script (safe to import)
    rows = study([400.0, 1000.0], mesh_size=3.0)

Results inform design only after review by a qualified engineer; local codes and licensed
practice govern.
"""

from __future__ import annotations

from pathlib import Path

from solver import CAUTION
from solver.model import check_model, load_model
from solver.results import probe_summary
from solver.runner import run

MODEL = Path(__file__).with_name("embankment.toml")
MATERIAL = "upper_clay"            # the softest clay under the embankment
PARAMETER = "youngs_modulus"       # kPa; any numeric Material field works (e.g. permeability_x)
VALUES = (400.0, 600.0, 1000.0)    # kPa, drained E' of the upper clay (the file has 600)
PROBE = "centre_ground"


def study(values=VALUES, material: str = MATERIAL, parameter: str = PARAMETER,
          probe: str = PROBE, mesh_size: float | None = None,
          model_path: str | Path = MODEL, grading: bool = True) -> list[dict]:
    """Solve the embankment once per value of one material parameter.

    Parameters
    ----------
    values : values of ``materials[material].<parameter>`` in the default unit (kPa for a
        modulus, m/day for a permeability; ``"permeability"`` sets both directions).
    mesh_size : element size near the embankment, m (None: the model file's); a larger size
        gives a coarser, faster mesh.
    grading : grade the mesh toward the draining boundaries (section.grading); False gives
        the quickest, coarsest look.
    probe : where the settlement is read.

    Returns
    -------
    One dict per value: ``value``, ``final_settlement_m``, ``time_to_90_percent_days`` (the
    time to 90 % of the final settlement of the record, from the start of the first lift),
    ``final_time_days`` (the record ends when the last stage ends, here at 90 % average
    degree of consolidation), ``steps`` and ``wall_seconds``.
    """
    model = load_model(model_path)
    if mesh_size is not None:
        model.section.mesh_size = float(mesh_size)
    model.section.grading.enabled = grading
    mat = model.materials[material]
    # "permeability" is the model file's shorthand for both directions
    names = ("permeability_x", "permeability_y") if parameter == "permeability" else (parameter,)
    rows = []
    for v in values:
        for name in names:
            setattr(mat, name, float(v))
        check_model(model)                     # the same checks as a model file gets
        result = run(model)
        s = probe_summary(result.probes)[probe]
        rows.append({"value": float(v),
                     "final_settlement_m": s["final_settlement_m"],
                     "time_to_90_percent_days": s["time_to_90_percent_settlement_days"],
                     "final_time_days": s["final_time_days"],
                     "steps": result.info["steps"],
                     "wall_seconds": result.info["wall_seconds"]})
    return rows


def main(values=VALUES) -> list[dict]:
    """The study at the model file's own mesh."""
    return study(values)


def _print(rows: list[dict]) -> None:
    print(f"Embankment on soft clay (invented site): {MATERIAL}.{PARAMETER} varied; "
          f"settlement at probe {PROBE!r}")
    print(f"  {'E (kPa)':>10s} {'final settlement (m)':>22s} {'t90 (days)':>12s} "
          f"{'record ends (days)':>20s}")
    for r in rows:
        t90 = r["time_to_90_percent_days"]
        print(f"  {r['value']:10.0f} {r['final_settlement_m']:22.3f} "
              f"{t90 if t90 is not None else float('nan'):12.0f} {r['final_time_days']:20.0f}")
    print(CAUTION)


if __name__ == "__main__":
    _print(main())
