"""The time loop of a Simulation: stages, steps, probes, streamed output, checkpoints, resume.

The record starts at t = 0 with the state before any stage (stage ``"initial state"``); a
load applied at once (a stage of zero duration) adds its undrained state at the same time,
so curves start at zero and show the undrained response.

Every finished step is on disk before the next starts (probe rows flushed, the full-precision
history appended, a small checkpoint written atomically); ``resume`` restarts from the last
checkpoint and reproduces the same step times, so a resumed run ends with the same numbers as
an uninterrupted one. A run folder is finished when its summary, the caller's extra files
and, last, the completion marker are written, all under the writer's lock.
"""

from __future__ import annotations

import time as _time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

import numpy as np

from . import CAUTION, __version__
from .errors import InputError
from .fem.biot import State
from .model import Model
from .results import INITIAL_STAGE, ResultWriter, probe_summary, read_summary
from .run_state import (LINE_VALUES, check_resume_state, history_record, record_length,
                        run_fingerprint, split_record)
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

    ``probes[name][column]`` are arrays over ``time_days`` (from t = 0, the state before the
    first stage); ``lines[name]`` a list of (time_days, stage, dict of arrays) at output
    times.
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


Finisher = Callable[["RunResult", dict], dict]
"""Called with the result and its summary before a run folder is closed; returns
``{"summary": {section: value}, "files": {name: text}}`` to add to the summary and write
beside the results (e.g. :func:`solver.comparison.comparison_finisher`)."""


class Runner:
    def __init__(self, sim, out_dir=None, resume: bool = False, progress: bool = False,
                 model_text: str | None = None, force: bool = False,
                 finish: Finisher | None = None, fsync: bool = True):
        self.sim = sim
        self.fsync = fsync
        self.out_dir = Path(out_dir) if out_dir is not None else None
        self.resume = resume
        self.force = force
        self.progress = progress
        self.model_text = model_text
        self.finish = finish
        self.note: str | None = None      # what the writer said at the start (e.g. no checkpoint)

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

    def run(self) -> RunResult:
        sim, model = self.sim, self.sim.model
        wall0 = _time.perf_counter()
        solver = sim.make_stepper()
        writer = None
        if self.out_dir is not None:
            writer = ResultWriter(self.out_dir, sim.mesh, resume=self.resume, force=self.force,
                                  fingerprint=run_fingerprint(sim, solver), fsync=self.fsync,
                                  run_info={"title": model.title, "version": __version__})
            self.note = writer.note
        try:
            if writer is not None and writer.complete:
                return self._finished(writer)
            return self._run(writer, solver, wall0)
        finally:
            if writer is not None:
                writer.close()

    def _run(self, writer, solver, wall0) -> RunResult:
        sim, pb, model = self.sim, self.sim.problem, self.sim.model
        state = State(0.0, pb.initial_unknowns(), pb.disc.n_u)
        info = {"stage": 0, "stage_step": 0, "stage_starts": [], "step": 0, "p_ref": None,
                "w_peak": 0.0, "w_now": 0.0, "until": {},
                "factorizations_before": 0, "wall_seconds_before": 0.0, "sessions": 1}
        self.placed_at: list[np.ndarray] = []
        self._records: list[np.ndarray] = []     # one history record per row time
        newton_before = np.zeros(0, dtype=np.int64)
        ck = writer.load_checkpoint() if writer is not None else None
        if ck is not None:
            step, t, arrays, info = ck
            check_resume_state(sim, solver, writer, step, t, arrays, info)
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
            newton_before = arrays.get("run_newton_iterations", newton_before)
            self._records = list(writer.read_history())
            info["sessions"] = int(info["sessions"]) + 1
        bar = None
        if self.progress:
            from tqdm import tqdm
            planned = sum(len(sim.stage_times(0.0, s)) for s in model.stages)
            bar = tqdm(total=planned, initial=info["step"], unit="step", leave=True,
                       dynamic_ncols=True)
        output_times = set(np.round(model.output.times, 9))
        session = {"solver": solver, "newton_before": newton_before, "wall0": wall0}
        try:
            if ck is None:                      # the state before any stage, at t = 0
                self._record(writer, info, state, -1, True)
                self._checkpoint(writer, info, state, session)
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
                    self._record(writer, info, state, k, is_output)
                    if last:
                        info["stage"] = k + 1
                        info["stage_step"] = 0
                    self._checkpoint(writer, info, state, session)
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
        run_info = self._run_info(info, session)
        result = self._result(run_info)
        if writer is not None:
            self._close_folder(writer, result)
        return result

    # ------------------------------------------------------------------ one row time
    def _record(self, writer, info: dict, state: State, k: int, is_output: bool) -> None:
        """The probe (and at output times line) values of one row time: kept in memory and,
        with a folder, appended to the tables, the history and (output) the field steps."""
        sim = self.sim
        stage = INITIAL_STAGE if k < 0 else sim.model.stages[k].name
        vals = {c: v + 0.0 for c, v in sim.probe_values(state).items()}   # no -0.0
        lv = sim.line_values(state) if is_output else None
        if lv is not None:
            lv = {n: {c: v + 0.0 for c, v in a.items()} for n, a in lv.items()}
        rec = history_record(sim, state.t, k, vals, lv)
        self._records.append(rec)
        if writer is None:
            return
        writer.write_history(rec)
        writer.write_probe_rows([
            {"time_days": state.t, "stage": stage, "probe": name,
             "x_m": sim._probe_pts[i, 0], "y_m": sim._probe_pts[i, 1],
             **{c: vals[c][i] for c in PROBE_COLUMNS}}
            for i, name in enumerate(sim.probe_names)])
        if is_output:
            if k >= 0:
                writer.write_fields(info["step"], state.t, stage, sim.fields(state))
            writer.write_line_rows([
                {"time_days": state.t, "stage": stage, "line": name,
                 **{c: arrs[c][j] for c in ("distance_m", "x_m", "y_m") + LINE_VALUES}}
                for name, arrs in lv.items() for j in range(len(arrs["x_m"]))])

    def _checkpoint(self, writer, info: dict, state: State, session: dict) -> None:
        if writer is None:
            return
        solver = session["solver"]
        arrays = {"x": state.x, "n_placed": np.array(len(self.placed_at)),
                  **{f"placed_at_{j}": x for j, x in enumerate(self.placed_at)}}
        if hasattr(solver, "state_arrays"):
            arrays.update(solver.state_arrays())
        its = self._newton_iterations(session)
        if its is not None:
            arrays["run_newton_iterations"] = its
        saved = dict(info)
        saved["factorizations_before"] = (int(info["factorizations_before"])
                                          + solver.n_factorizations)
        saved["wall_seconds_before"] = (float(info["wall_seconds_before"])
                                        + _time.perf_counter() - session["wall0"])
        writer.checkpoint(info["step"], state.t, arrays, saved)

    # ---------------------------------------------------------------- closing
    @staticmethod
    def _newton_iterations(session) -> np.ndarray | None:
        solver = session["solver"]
        if not hasattr(solver, "iteration_counts"):
            return None
        return np.concatenate([np.asarray(session["newton_before"], dtype=np.int64),
                               np.asarray(solver.iteration_counts(), dtype=np.int64)])

    def _run_info(self, info: dict, session: dict) -> dict:
        """Run data over every session of the run (a resumed run counts the earlier ones)."""
        sim, solver = self.sim, session["solver"]
        out = {"version": __version__, "title": sim.model.title,
               "elements": sim.mesh.n_elements, "dofs": sim.problem.disc.n_dofs,
               "steps": info["step"],
               "factorizations": int(info["factorizations_before"]) + solver.n_factorizations,
               "linear_solver": getattr(solver, "backend", None)}
        its = self._newton_iterations(session)
        if its is not None and its.size:
            out.update({"newton_iterations_median": float(np.median(its)),
                        "newton_iterations_max": int(its.max()),
                        "newton_substeps": int(its.size)})
        degree_end = (1.0 - info.get("w_now", 0.0) / info["w_peak"]
                      if info.get("w_peak", 0.0) > 1e-12 else None)
        out.update({"average_degree_of_consolidation_at_end": degree_end,
                    "largest_excess_pore_water_days": info.get("t_peak"),
                    "average_degree_definition": AVERAGE_DEGREE,
                    "stages": self._stage_info(info)})
        out["wall_seconds"] = (float(info["wall_seconds_before"])
                               + _time.perf_counter() - session["wall0"])
        out["sessions"] = int(info["sessions"])
        out["caution"] = CAUTION
        return out

    def _stage_info(self, info: dict) -> list[dict]:
        """Per stage run: its start and end, and for a stage with ``until_degree`` whether the
        average degree of consolidation reached it, when, and the degree at its end."""
        model = self.sim.model
        starts = list(info["stage_starts"])
        t_last = float(self._records[-1][0]) if self._records else 0.0
        out = []
        for k, t0 in enumerate(starts):
            st = model.stages[k]
            t1 = starts[k + 1] if k + 1 < len(starts) else t_last
            row = {"name": st.name, "kind": st.kind, "start_days": float(t0),
                   "end_days": float(t1)}
            if st.until_degree is not None:
                u = info.get("until", {}).get(str(k), {})
                row.update({"until_degree": st.until_degree,
                            "degree_at_end": u.get("degree"),
                            "reached": bool(u.get("reached", False)),
                            "reached_at_days": u.get("time_days") if u.get("reached") else None})
            out.append(row)
        return out

    def _result(self, run_info: dict) -> RunResult:
        sim = self.sim
        records = np.array(self._records) if self._records else np.zeros((0, 0))
        self._records = []
        t, stage_index, output, probe_vals, line_vals = split_record(sim, records)
        del records
        names = [st.name for st in sim.model.stages]
        stages = [INITIAL_STAGE if k < 0 else names[k] for k in stage_index]
        stage_arr = np.array(stages, dtype=object)
        probes = {n: {"time_days": t, "stage": stage_arr,
                      **{c: probe_vals[:, i, j] for j, c in enumerate(PROBE_COLUMNS)}}
                  for i, n in enumerate(sim.probe_names)}
        lines = {ln.name: [] for ln in sim.model.lines}
        for r, (ln, xy, dist, _e, _N) in enumerate(sim.lines):
            for i in np.flatnonzero(output):
                arrs = {"distance_m": dist, "x_m": xy[:, 0], "y_m": xy[:, 1],
                        **{c: line_vals[r][i, :, j] for j, c in enumerate(LINE_VALUES)}}
                lines[ln.name].append((float(t[i]), stages[i], arrs))
        return RunResult(t, stages, probes, lines, run_info, self.out_dir)

    def _close_folder(self, writer: ResultWriter, result: RunResult) -> None:
        """Summary, the caller's files, the model copy, then the completion marker, all
        while the lock is held."""
        summary = {"run": result.info,
                   "probes": probe_summary(result.probes,
                                           result.info["average_degree_of_consolidation_at_end"],
                                           result.info["largest_excess_pore_water_days"],
                                           self.sim.model.output.residual_after)}
        if self.sim.oedometer_moduli:       # the moduli the FE took from the oedometer
            from .oedometer_stiffness import moduli_csv, moduli_rows
            summary["oedometer_moduli"] = moduli_rows(self.sim.oedometer_moduli)
            writer.write_text("oedometer_moduli.csv", moduli_csv(self.sim.oedometer_moduli))
        extra = self.finish(result, summary) if self.finish is not None else {}
        summary.update(extra.get("summary", {}))
        for name, text in extra.get("files", {}).items():
            writer.write_text(name, text)
        writer.write_summary(summary)
        if self.model_text is not None:
            writer.write_text("model.toml", self.model_text)
        writer.finish()

    def _finished(self, writer: ResultWriter) -> RunResult:
        """A resume of a finished run: nothing is solved or written; the result is read
        back from the run's history and summary."""
        rec = writer.read_history()
        if rec.shape[1:] and rec.shape[1] != record_length(self.sim):
            from .results import ResultsError
            raise ResultsError(f"the history in {writer.dir} does not fit this model; "
                               "start the run afresh (--force).")
        self._records = list(rec)
        summary = read_summary(writer.dir) or {}
        info = dict(summary.get("run") or {})
        info["already_complete"] = True
        return self._result(info)


def run(model: Model | Simulation, out_dir: str | Path | None = None, *, resume: bool = False,
        force: bool = False, progress: bool = False, model_text: str | None = None,
        finish: Finisher | None = None, fsync: bool = True) -> RunResult:
    """Step a model (meshed and set up here) or a set-up :class:`Simulation` through all its
    stages; stream the results to ``out_dir`` when given. The scripting entry point.

    A folder that already holds a run is refused unless ``resume`` (continue it from its
    last checkpoint; a finished run is returned as it is) or ``force`` (replace it).
    ``fsync=False`` skips flushing to disk (safe against a killed process, not a power cut).
    """
    sim = model if isinstance(model, Simulation) else Simulation(model)
    return Runner(sim, out_dir, resume=resume, force=force, progress=progress,
                  model_text=model_text, finish=finish, fsync=fsync).run()
