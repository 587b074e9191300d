"""Stages that remove a placed lift or region: the weight comes off over the stage, the
elements go at its end, and the ground unloads (elastically, on the recompression line)."""

from pathlib import Path

import numpy as np
import pytest

from solver.errors import InputError
from solver.geometry import layered_rectangle
from solver.hand.estimate import hand_estimate
from solver.model import (Drainage, Embankment, Layer, Material, Model, OedometerParameters,
                          PointProbe, Section, Stage, TimeSteps, Water, check_model)
from solver.runner import Runner, run
from solver.simulation import Simulation

FILL = Material("fill", constrained_modulus=20000.0, poisson_ratio=0.3, unit_weight=20.0,
                permeability_x=1.0)
LONG = 30000.0      # days: every layer below consolidates fully (T_v > 10)


def fill_column(tmp_path: Path, clay: Material, probes, crust: bool = False,
                steps: TimeSteps | None = None):
    """A column of ground on rollers (one-dimensional) under a 1 m fill region that a stage
    places and a later stage removes (an invented case)."""
    layers = [("fill", 1.0)] + ([("crust", 1.0)] if crust else []) + [("clay", 2.0)]
    rows = [2] + ([4] if crust else []) + [16 if crust else 8]
    mesh = layered_rectangle(0.25 if crust else 0.5, layers, 0.5, top=1.0,
                             transfinite=(1, rows))
    path = tmp_path / "column.msh"
    mesh.write(path)
    mats = {"fill": FILL, "clay": clay}
    if crust:
        mats["crust"] = Material("crust", constrained_modulus=50000.0, poisson_ratio=0.3,
                                 unit_weight=20.0, saturated_unit_weight=20.0,
                                 permeability_x=1.0)
    model = Model(
        title="a fill placed and removed on a column (invented)", materials=mats,
        section=Section(kind="mesh", mesh_file=str(path), regions={n: n for n in mats}),
        # the water table below the ground: the fill never sinks below it (no submergence)
        water=Water(table_depth=0.25),
        drainage=Drainage(drained_edges=["interface_1"], fixed_edges=["bottom"],
                          roller_edges=["left", "right"]),
        stages=[Stage("place", "lift", 1.0, region="fill"),
                Stage("wait", "consolidate", LONG),
                Stage("remove", "remove", 1.0, region="fill"),
                Stage("rest", "consolidate", LONG)],
        time_steps=steps or TimeSteps(first_step=0.1, growth=2.0, steps_per_level=2),
        probes=probes)
    check_model(model)
    return Simulation(model, mesh=mesh)


def _at_end(probe: dict, stage: str, column: str = "settlement_m") -> float:
    return float(probe[column][np.asarray(probe["stage"]) == stage][-1])


def test_placing_and_removing_a_fill_on_a_linear_column_returns_the_settlement_to_zero(
        tmp_path):
    clay = Material("clay", constrained_modulus=2000.0, poisson_ratio=0.3,
                    permeability_x=1e-4, unit_weight=18.0, saturated_unit_weight=18.0)
    result = run(fill_column(tmp_path, clay, [PointProbe("top", 0.25, 0.0)]))
    top = result.probe("top")
    # one-dimensional settlement under the fill: q H / E_oed (Terzaghi 1925)
    assert _at_end(top, "wait") == pytest.approx(20.0 * 2.0 / 2000.0, rel=1e-6)
    # linear elasticity: taking the weight off and the fill away gives it all back
    assert abs(top["settlement_m"][-1]) < 1e-6 * _at_end(top, "wait")


def test_the_rebound_of_cam_clay_follows_kappa(tmp_path):
    # Normally consolidated Modified Cam Clay under a 20 kPa fill, which is then removed: the
    # unloading is elastic, with d e = -kappa d ln p' (Wood 1990, *Soil Behaviour and Critical
    # State Soil Mechanics*, sec. 4.2; here e = e0 - (1 + e0) eps_v), so one-dimensionally the
    # rebound of each sublayer is h kappa / (1 + e0) ln(p'_before / p'_after), and with a
    # constant Poisson's ratio the mean stress falls by dsigma_v (1 + nu) / (3 (1 - nu)).
    lam, kap, e0, nu, q = 0.2, 0.03, 1.5, 0.25, 20.0
    clay = Material("clay", model="modified cam clay", lambda_=lam, kappa=kap, void_ratio=e0,
                    M=1.0, poisson_ratio=nu, permeability_x=1e-4, unit_weight=18.0,
                    saturated_unit_weight=18.0,
                    oedometer=OedometerParameters(overconsolidation_ratio=1.0))
    n = 16
    z = 1.0 + 2.0 / n * (np.arange(n) + 0.5)          # sublayer mid-depths of the clay
    probes = [PointProbe("clay_top", 0.125, -1.0)] + [PointProbe(f"z{i}", 0.125, -zi)
                                                       for i, zi in enumerate(z)]
    steps = TimeSteps(first_step=0.02, growth=1.5, steps_per_level=2)
    result = run(fill_column(tmp_path, clay, probes, crust=True, steps=steps))
    top = result.probe("clay_top")
    rebound = _at_end(top, "wait") - top["settlement_m"][-1]

    def mean_stress(pr, stage=None):
        cols = ("vertical_effective_stress_kPa", "horizontal_effective_stress_kPa",
                "out_of_plane_effective_stress_kPa")
        if stage is None:
            return sum(pr[c][-1] for c in cols) / 3
        return sum(_at_end(pr, stage, c) for c in cols) / 3

    before = np.array([mean_stress(result.probe(f"z{i}"), "wait") for i in range(n)])
    after = np.array([mean_stress(result.probe(f"z{i}")) for i in range(n)])
    h = 2.0 / n
    on_kappa_line = np.sum(h * kap / (1 + e0) * np.log(before / after))
    # the kappa line itself: the integration is exact in ln p' (measured 1e-4)
    assert rebound == pytest.approx(on_kappa_line, rel=1e-3)
    # and by hand from the state before the unloading: the stress path is integrated to
    # first order in the step (measured 1.0 % at steps of 0.1 days doubling every 2, 0.2 %
    # at 0.01 days growing by 1.3; here 0.6 %)
    by_hand = np.sum(h * kap / (1 + e0) * np.log(before / (before - q * (1 + nu)
                                                          / (3 * (1 - nu)))))
    assert rebound == pytest.approx(by_hand, rel=0.01)
    # the unloading stays elastic: much smaller than the loading settlement on lambda
    assert rebound < 0.25 * _at_end(top, "wait")


def embankment(clay: Material, crest: float = 400.0) -> Model:
    """A wide two-lift embankment (a surcharge) on 4 m of clay; the top lift comes off
    (an invented preload)."""
    return Model(
        title="preload with its top lift removed (invented)",
        materials={"fill": FILL, "clay": clay},
        layers=[Layer("clay", "clay", 4.0)],
        section=Section(kind="embankment", half=True, mesh_size=1.0,
                        embankment=Embankment(crest, 2.0, 2.0, [1.0, 1.0], "fill")),
        water=Water(table_depth=0.5),          # no submergence of the fill
        drainage=Drainage(top=True, base=True),
        stages=[Stage("lift 1", "lift", 10.0, lift=1), Stage("settle", "consolidate", LONG),
                Stage("lift 2", "lift", 10.0, lift=2), Stage("wait", "consolidate", LONG),
                Stage("unload", "remove", 10.0, lift=2), Stage("rest", "consolidate", LONG)],
        time_steps=TimeSteps(first_step=1.0, growth=2.0, steps_per_level=2),
        probes=[PointProbe("centre", 0.0, 0.0)])


def test_the_hand_method_rebounds_with_cr_when_a_lift_is_removed():
    # Under the centre of a crest 100 times wider than the clay is deep the stress increase
    # is the fill's weight (a uniform strip: sigma_z = q (alpha + sin alpha) / pi, within
    # 1e-5 here; Poulos & Davis 1974, from memory), so the one-dimensional formulas apply:
    # compression on Cc under 40 kPa, rebound on Cr when 20 kPa come off (Terzaghi & Peck 1948).
    cc, cr, e0 = 0.5, 0.05, 1.5
    clay = Material("clay", constrained_modulus=2000.0, poisson_ratio=0.3, permeability_x=1e-4,
                    unit_weight=18.0, saturated_unit_weight=18.0,
                    oedometer=OedometerParameters(compression_index=cc, recompression_index=cr,
                                                  void_ratio=e0, overconsolidation_ratio=1.0))
    est = hand_estimate(embankment(clay)).probe("centre")
    s0 = est.initial_effective_stress_kPa
    h = np.full(s0.shape, 4.0 / s0.size)               # equal sublayers over the 4 m
    loaded = np.sum(h * cc / (1 + e0) * np.log10((s0 + 40.0) / s0))
    rebound = np.sum(h * cr / (1 + e0) * np.log10((s0 + 40.0) / (s0 + 20.0)))
    rows = {r.name: r for r in est.stages}
    assert rows["wait"].ultimate_m == pytest.approx(loaded, rel=1e-4)
    assert est.consolidation_settlement_m == pytest.approx(loaded - rebound, rel=1e-4)


def test_a_lift_removed_from_a_linear_embankment_leaves_the_settlement_of_the_rest():
    # Linear ground: once lift 1 has consolidated, lift 2 placed and removed again leaves
    # the state lift 1 alone gives (superposition), in the finite elements and by hand.
    clay = Material("clay", constrained_modulus=2000.0, poisson_ratio=0.3, permeability_x=1e-4,
                    unit_weight=18.0, saturated_unit_weight=18.0,
                    oedometer=OedometerParameters(volume_compressibility=1 / 2000.0))
    model = embankment(clay, crest=12.0)
    result = run(model)
    c = result.probe("centre")
    assert _at_end(c, "wait") > 1.5 * _at_end(c, "settle")
    assert c["settlement_m"][-1] == pytest.approx(_at_end(c, "settle"), rel=1e-5)
    est = hand_estimate(model).probe("centre")
    rows = {r.name: r for r in est.stages}
    assert est.consolidation_settlement_m == pytest.approx(rows["settle"].ultimate_m, rel=1e-9)


def test_a_run_interrupted_after_a_removal_resumes_to_the_same_numbers(tmp_path, monkeypatch):
    clay = Material("clay", constrained_modulus=2000.0, poisson_ratio=0.3,
                    permeability_x=1e-4, unit_weight=18.0, saturated_unit_weight=18.0)
    probes = [PointProbe("top", 0.25, 0.0)]
    top = run(fill_column(tmp_path, clay, probes)).probe("top")
    ref = top["settlement_m"]
    n_remove = int(np.flatnonzero(np.asarray(top["stage"]) == "remove")[-1]) + 1
    for stop in (n_remove - 1, n_remove + 2):     # before the elements go, and after
        out = tmp_path / f"run_{stop}"
        sim = fill_column(tmp_path, clay, probes)
        solver = sim.make_stepper()
        real, count = solver.step, [0]

        def step(state, t, real=real, count=count, stop=stop):
            if count[0] == stop:
                raise KeyboardInterrupt
            count[0] += 1
            return real(state, t)
        monkeypatch.setattr(solver, "step", step)
        with pytest.raises(KeyboardInterrupt):
            Runner(sim, out).run()
        again = Runner(fill_column(tmp_path, clay, probes), out, resume=True).run()
        assert np.allclose(again.probe("top")["settlement_m"], ref, rtol=0, atol=1e-12)


@pytest.mark.parametrize("stages, field, words", [
    ([Stage("a", "remove", 10.0, lift=1)], "stages[1].lift", "not in place"),
    ([Stage("a", "lift", 10.0, lift=1), Stage("b", "lift", 10.0, lift=2),
      Stage("c", "remove", 10.0, lift=1)], "stages[3].lift", "lies under lift 2"),
    ([Stage("a", "lift", 10.0, lift=1), Stage("b", "remove", 10.0)], "stages[2].lift",
     "needs the lift"),
    ([Stage("a", "lift", 10.0, lift=1), Stage("b", "remove", 10.0, lift=1),
      Stage("c", "remove", 10.0, lift=1)], "stages[3].lift", "not in place"),
    ([Stage("a", "lift", 10.0, lift=1), Stage("b", "remove", 10.0, lift=1),
      Stage("c", "lift", 10.0, lift=2)], "stages[3].lift", "rest on lift 1"),
    ([Stage("a", "lift", 10.0, lift=1), Stage("b", "remove", 10.0, region="fill")],
     "stages[2].region", "user mesh"),
    ([Stage("a", "lift", 10.0, lift=1), Stage("b", "remove", -1.0, lift=1)],
     "stages[2].duration", "must not be negative"),
])
def test_bad_removal_stages_name_their_field(stages, field, words):
    clay = Material("clay", constrained_modulus=2000.0)
    model = embankment(clay)
    model.stages = stages
    with pytest.raises(InputError) as exc:
        check_model(model)
    assert exc.value.field == field
    assert words in str(exc.value)


def test_a_region_not_in_place_cannot_be_removed(tmp_path):
    clay = Material("clay", constrained_modulus=2000.0)
    sim = fill_column(tmp_path, clay, [])
    model = sim.model
    model.stages = [Stage("b", "remove", 1.0, region="fill")]
    with pytest.raises(InputError) as exc:
        check_model(model)
    assert exc.value.field == "stages[1].region" and "not in place" in str(exc.value)
