"""The time loop of a Simulation: stages, steps, probes, streamed output, checkpoints, resume.

Every finished step is on disk before the next starts (probe rows flushed, a checkpoint
written atomically); ``resume`` restarts from the last checkpoint and reproduces the same step
times, so a resumed run ends with the same numbers as an uninterrupted one.
"""

from __future__ import annotations

import time as _time
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from . import CAUTION, __version__
from .errors import InputError
from .fem.biot import State
from .model import Model
from .results import ResultWriter, probe_summary
from .simulation import PROBE_COLUMNS, Simulation

AVERAGE_DEGREE = ("average degree of consolidation: 1 - W / W_ref, W = the integral of the "
                  "excess pore pressure over the soil (the excess pore water still to drain); "
                  "for a stage's until_degree W_ref is W at the start of that stage, for the "
                  "run at its end W_ref is the largest W of the run (at "
                  "largest_excess_pore_water_days)")
"""How the run measures the average degree of consolidation (summary.json says it too)."""


@dataclass
class RunResult:
    """Probe histories (arrays) and run data; also written to disk when a folder is given.

    ``probes[name][column]`` are arrays over ``time_days``; ``lines[name]`` a list of
    (time_days, stage, dict of arrays) at output times.
    """
    time_days: np.ndarray
    stage: list[str]
    probes: dict[str, dict[str, np.ndarray]]
    lines: dict[str, list]
    info: dict
    out_dir: Path | None = None

    def probe(self, name: str) -> dict[str, np.ndarray]:
        if name not in self.probes:
            raise InputError(f"no probe named {name!r}; the run has {sorted(self.probes)}",
                             field="probes")
        return self.probes[name]


class Runner:
    def __init__(self, sim, out_dir=None, resume: bool = False, progress: bool = False,
                 model_text: str | None = None):
        self.sim = sim
        self.out_dir = Path(out_dir) if out_dir is not None else None
        self.resume = resume
        self.progress = progress
        self.model_text = model_text

    # ------------------------------------------------------------------
    def _start_stage(self, k: int, t0: float, x: np.ndarray) -> None:
        """Apply what stage k does at its start (place a lift, set load ramps).

        ``x``: the unknowns at the start, which a placed lift measures its strain from. They
        are kept (``self.placed_at``) so a resumed run places its lifts identically.
        """
        sim, pb = self.sim, self.sim.problem
        st = sim.model.stages[k]
        if st.kind == "lift":
            region = st.region or f"lift_{st.lift}"
            pb.activate([region], x)
            self.placed_at.append(x.copy())
            sim.ramps[region].set(t0, st.duration, 1.0)
        elif st.kind == "remove":
            sim.ramps[self._region(st)].set(t0, st.duration, 0.0)
        elif st.kind == "load":
            for name in st.loads:   # names were checked when the model was read
                sim.ramps[name].set(t0, st.duration, st.factor)

    @staticmethod
    def _region(st) -> str:
        """The region a lift or remove stage places or takes away."""
        return st.region or f"lift_{st.lift}"

    def run(self):
        sim, pb, model = self.sim, self.sim.problem, self.sim.model
        wall0 = _time.perf_counter()
        writer = None
        if self.out_dir is not None:
            writer = ResultWriter(self.out_dir, sim.mesh, resume=self.resume,
                                  run_info={"title": model.title, "version": __version__})
        solver = sim.make_stepper()
        state = State(0.0, pb.initial_unknowns(), pb.disc.n_u)
        info = {"stage": 0, "stage_step": 0, "stage_starts": [], "step": 0, "p_ref": None,
                "w_peak": 0.0, "w_now": 0.0, "until": {}}
        hist_t, hist_stage = [], []
        hist = {name: {c: [] for c in PROBE_COLUMNS} for name in sim.probe_names}
        lines = {ln.name: [] for ln in model.lines}
        ck = writer.load_checkpoint() if (writer is not None and self.resume) else None
        self.placed_at: list[np.ndarray] = []
        if ck is not None:
            step, t, arrays, info = ck
            state = State(t, arrays["x"], pb.disc.n_u)
            # Replay the stage starts: lifts placed from the unknowns they were placed at.
            placed = iter(arrays[f"placed_at_{j}"] for j in range(int(arrays["n_placed"])))
            for k, t0 in enumerate(info["stage_starts"]):
                x_k = next(placed) if model.stages[k].kind == "lift" else state.x
                self._start_stage(k, t0, x_k)
                if model.stages[k].kind == "remove" and k < info["stage"]:
                    pb.deactivate([self._region(model.stages[k])])
            if hasattr(solver, "restore"):
                solver.restore(arrays)
            hist_t = list(arrays["hist_t"])
            hist_stage = list(info["hist_stage"])
            vals = arrays["hist_vals"]            # (nt, n_probes, n_columns)
            for i, name in enumerate(sim.probe_names):
                for j, c in enumerate(PROBE_COLUMNS):
                    hist[name][c] = list(vals[:, i, j]) if len(vals) else []
        bar = None
        if self.progress:
            from tqdm import tqdm
            planned = sum(len(sim.stage_times(0.0, s)) for s in model.stages)
            bar = tqdm(total=planned, initial=info["step"], unit="step", leave=True,
                       dynamic_ncols=True)
        output_times = set(np.round(model.output.times, 9))
        try:
            for k in range(info["stage"], len(model.stages)):
                st = model.stages[k]
                if len(info["stage_starts"]) <= k:
                    t0 = state.t
                    self._start_stage(k, t0, state.x)
                    info["stage_starts"].append(t0)
                    info["stage_step"] = 0
                    info["p_ref"] = float(sim._pressure_weights @ state.p)
                t0 = info["stage_starts"][k]
                times = sim.stage_times(t0, st)
                for t in times[info["stage_step"]:]:
                    if st.kind == "remove" and info["stage_step"] == len(times) - 1:
                        # the removed elements go for the last step, when their weight is off
                        pb.deactivate([self._region(st)])
                    state = solver.step(state, float(t))
                    info["step"] += 1
                    info["stage_step"] += 1
                    last = info["stage_step"] == len(times)
                    vals = sim.probe_values(state)
                    hist_t.append(state.t)
                    hist_stage.append(st.name)
                    for i, name in enumerate(sim.probe_names):
                        for c in PROBE_COLUMNS:
                            hist[name][c].append(float(vals[c][i]))
                    # the excess pore water of the soil, W = int u dV (the average degree of
                    # consolidation of the run: 1 - W / the largest W so far)
                    now = float(sim._pressure_weights @ state.p)
                    info["w_now"] = now
                    if now > info.get("w_peak", 0.0):
                        info["w_peak"], info["t_peak"] = now, state.t
                    if st.until_degree is not None:
                        ref = info["p_ref"]
                        degree = 1.0 - now / ref if abs(ref) > 1e-12 else 1.0
                        reached = degree >= st.until_degree
                        info.setdefault("until", {})[str(k)] = {
                            "degree": degree, "time_days": state.t, "reached": bool(reached)}
                        last = last or reached
                    is_output = last or round(state.t, 9) in output_times or \
                        model.output.every_step
                    if is_output:
                        lv = sim.line_values(state)
                        for name, arrs in lv.items():
                            lines[name].append((state.t, st.name, arrs))
                    if writer is not None:
                        writer.write_probe_rows([
                            {"time_days": state.t, "stage": st.name, "probe": name,
                             "x_m": sim._probe_pts[i, 0], "y_m": sim._probe_pts[i, 1],
                             **{c: vals[c][i] for c in PROBE_COLUMNS}}
                            for i, name in enumerate(sim.probe_names)])
                        if is_output:
                            writer.write_fields(info["step"], state.t, st.name, sim.fields(state))
                            writer.write_line_rows([
                                {"time_days": state.t, "stage": st.name, "line": name,
                                 **{c: arrs[c][j] for c in ("distance_m", "x_m", "y_m",
                                                             "settlement_m",
                                                             "horizontal_displacement_m",
                                                             "excess_pore_pressure_kPa")}}
                                for name, arrs in lv.items() for j in range(len(arrs["x_m"]))])
                        if last:
                            info["stage"] = k + 1
                            info["stage_step"] = 0
                        info["hist_stage"] = hist_stage
                        writer.checkpoint(info["step"], state.t,
                                          self._arrays(state, hist_t, hist, solver), info)
                    if bar is not None:
                        bar.set_description(f"{st.name} | t = {state.t:,.1f} days", refresh=False)
                        bar.update(1)
                    if last:
                        break
                info["stage"] = k + 1
                info["stage_step"] = 0
        finally:
            if bar is not None:
                bar.close()
        wall = _time.perf_counter() - wall0
        probes = {n: {"time_days": np.array(hist_t), "stage": np.array(hist_stage, dtype=object),
                      **{c: np.array(v) for c, v in h.items()}}
                  for n, h in hist.items()}
        degree_end = (1.0 - info.get("w_now", 0.0) / info["w_peak"]
                      if info.get("w_peak", 0.0) > 1e-12 else None)
        run_info = {"version": __version__, "title": model.title,
                    "elements": sim.mesh.n_elements, "dofs": pb.disc.n_dofs,
                    "steps": info["step"], "factorizations": solver.n_factorizations,
                    **self._newton_info(solver),
                    "average_degree_of_consolidation_at_end": degree_end,
                    "largest_excess_pore_water_days": info.get("t_peak"),
                    "average_degree_definition": AVERAGE_DEGREE,
                    "stages": self._stage_info(info, hist_t),
                    "wall_seconds": wall, "caution": CAUTION}
        result = RunResult(np.array(hist_t), hist_stage, probes, lines, run_info, self.out_dir)
        if writer is not None:
            summary = {"run": run_info,
                       "probes": probe_summary(probes, degree_end, info.get("t_peak"),
                                               model.output.residual_after)}
            if sim.oedometer_moduli:       # the moduli the FE took from the oedometer
                from .oedometer_stiffness import moduli_csv, moduli_rows
                summary["oedometer_moduli"] = moduli_rows(sim.oedometer_moduli)
                writer.write_text("oedometer_moduli.csv", moduli_csv(sim.oedometer_moduli))
            writer.write_summary(summary)
            if self.model_text is not None:
                writer.write_text("model.toml", self.model_text)
            writer.close()
        return result

    def _stage_info(self, info: dict, hist_t: list) -> list[dict]:
        """Per stage run: its start and end, and for a stage with ``until_degree`` whether the
        average degree of consolidation reached it, when, and the degree at its end."""
        model = self.sim.model
        starts = list(info["stage_starts"])
        out = []
        for k, t0 in enumerate(starts):
            st = model.stages[k]
            t1 = starts[k + 1] if k + 1 < len(starts) else (float(hist_t[-1]) if hist_t else t0)
            row = {"name": st.name, "kind": st.kind, "start_days": float(t0), "end_days": float(t1)}
            if st.until_degree is not None:
                u = info.get("until", {}).get(str(k), {})
                row.update({"until_degree": st.until_degree,
                            "degree_at_end": u.get("degree"),
                            "reached": bool(u.get("reached", False)),
                            "reached_at_days": u.get("time_days") if u.get("reached") else None})
            out.append(row)
        return out

    @staticmethod
    def _newton_info(solver) -> dict:
        if not hasattr(solver, "iteration_counts"):
            return {}
        its = solver.iteration_counts()
        if not its.size:
            return {}
        return {"newton_iterations_median": float(np.median(its)),
                "newton_iterations_max": int(its.max()),
                "newton_substeps": int(its.size)}

    def _arrays(self, state, hist_t, hist, solver=None) -> dict:
        names = self.sim.probe_names
        vals = np.array([[hist[n][c] for c in PROBE_COLUMNS] for n in names])  # (np, nc, nt)
        vals = vals.transpose(2, 0, 1) if vals.size else np.zeros((len(hist_t), len(names), 0))
        out = {"x": state.x, "n_placed": np.array(len(self.placed_at)),
               **{f"placed_at_{j}": x for j, x in enumerate(self.placed_at)},
               "hist_t": np.array(hist_t), "hist_vals": vals}
        if solver is not None and hasattr(solver, "state_arrays"):
            out.update(solver.state_arrays())
        return out


def run(model: Model | Simulation, out_dir: str | Path | None = None, *, resume: bool = False,
        progress: bool = False, model_text: str | None = None) -> RunResult:
    """Step a model (meshed and set up here) or a set-up :class:`Simulation` through all its
    stages; stream the results to ``out_dir`` when given. The scripting entry point."""
    sim = model if isinstance(model, Simulation) else Simulation(model)
    return Runner(sim, out_dir, resume=resume, progress=progress, model_text=model_text).run()
