"""The ``poroplane`` command line. The only place that prints errors and sets exit status."""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import CAUTION, __version__
from .boundary import describe_written, run_step, step
from .errors import PoroplaneError

EXIT_BAD_INPUT = 2
TRUST_GEO_HELP = ("mesh a .geo mesh file even if it runs programs, writes files or reads other "
                  "files (only for a file you wrote or whose author you trust)")
CASES = ("terzaghi", "mandel", "axisymmetric", "strip_load", "convergence",
         "camclay_isotropic", "camclay_drained", "camclay_undrained", "camclay_oedometer")


def _validate(args) -> int:
    from solver.validation import CASE_MODULES, run_all
    unknown = [c for c in (args.case or []) if c not in CASE_MODULES]
    if unknown:
        from .errors import InputError
        raise InputError(f"unknown validation case {unknown[0]!r}", field="--case",
                         fix=f"use one of {', '.join(CASE_MODULES)}.")
    out = Path(args.out)
    checks, seconds = run_all(quick=args.quick, out_dir=out, names=args.case or None)
    if args.json:
        print(json.dumps([c.as_dict() for c in checks], indent=1))
    else:
        rows = [("case", "quantity", "error", "tolerance", "pass", "published source")]
        rows += [(c.case, c.quantity, f"{c.error:.3g}", f"{c.tolerance:.3g}",
                  "yes" if c.passed else "NO", c.source) for c in checks]
        widths = [max(len(r[i]) for r in rows) for i in range(5)]
        for r in rows:
            print("  ".join(v.ljust(w) for v, w in zip(r[:5], widths)) + "  " + r[5])
        n_fail = sum(not c.passed for c in checks)
        print(f"\n{len(checks) - n_fail} passed, {n_fail} failed "
              f"({'quick' if args.quick else 'full'} level, "
              f"{sum(seconds.values()):.1f} s). Comparison plots: {out.resolve()}")
        print(CAUTION)
    return 0 if all(c.passed for c in checks) else 1


def _bench(args) -> int:
    from . import bench
    names = bench.parse_backends(args.backends)
    if args.material == "cam-clay":
        from .bench_newton import run_newton_benchmark
        r = run_newton_benchmark(args.elements, args.steps or 10, args.linear_solver)
        print(json.dumps(r) if args.json else "\n".join(bench.format_figures(r)))
        return 0
    b = bench.LinearBenchmark(args.elements, args.steps or 100, args.linear_solver)
    b.make_mesh()
    if not args.json:
        print(f"{'mesh generation':28s} {b.mesh_s:.4g} s ({b.mesh.n_elements} triangles)",
              flush=True)
    r = b.run()
    # The run's figures first, at once: a later comparison cannot lose them.
    print(json.dumps(r) if args.json else "\n".join(bench.format_figures(r)), flush=True)
    if names == []:
        return 0
    if not args.json:
        print("other backends on the run's consolidating matrix (dt = 1 day), where they fit:",
              flush=True)
    for row in b.compare(names):
        print(json.dumps({"comparison": row}) if args.json else bench.format_comparison(row),
              flush=True)
    return 0


def _load(path: str):
    from .model import load_model
    with step("reading", path):
        return load_model(path)


def _warnings(model) -> list[str]:
    """Everything worth a second look, values outside the range of real soils included."""
    from .model import model_warnings
    return model_warnings(model)


def _set_up(args, model, backend=None):
    """Mesh and set up, each inside its step's boundary."""
    from .sections import build_mesh
    from .simulation import Simulation
    with step("meshing", args.model, model):
        mesh = build_mesh(model, max_elements=args.max_elements,
                          trust_geo=getattr(args, "trust_geo", False))
    with step("set-up", args.model, model):
        return Simulation(model, mesh=mesh, backend=backend)


def _check(args) -> int:
    model = _load(args.model)
    sim = _set_up(args, model)
    mesh, pb = sim.mesh, sim.problem
    total = sum(s.duration for s in model.stages)
    print(f"{model.title}")
    print(f"  analysis      {model.analysis}")
    print(f"  mesh          {mesh.n_elements} triangles (6-node), {mesh.n_nodes} nodes, "
          f"regions: {', '.join(mesh.region_names)}")
    print(f"  unknowns      {pb.disc.n_dofs} ({pb.disc.n_u} displacement, "
          f"{pb.disc.n_p} pore pressure)")
    print(f"  stages        {len(model.stages)}, at most {total:,.1f} days in all")
    for st in model.stages:
        extra = f", until {st.until_degree:.0%} consolidated" if st.until_degree else ""
        what = (f"lift {st.region or st.lift}" if st.kind == "lift" else
                f"remove {st.region or f'lift {st.lift}'}" if st.kind == "remove" else
                f"{', '.join(st.loads)} to {st.factor:g}" if st.kind == "load" else "consolidate")
        print(f"    {st.name:24s} {what:28s} {st.duration:10,.1f} days{extra}")
    print(f"  probes        {', '.join(sim.probe_names) or '(none)'}")
    print(f"  lines         {', '.join(ln.name for ln in model.lines) or '(none)'}")
    if sim.oedometer_moduli:
        from .oedometer_stiffness import moduli_table
        print(moduli_table(sim.oedometer_moduli))
    for w in _warnings(model):
        print(f"  warning: {w}")
    print("Model is valid; nothing was solved.")
    return 0


MESH_FORMATS = {".msh": "Gmsh 2.2", ".vtu": "VTK XML", ".vtk": "legacy VTK"}


def _mesh(args) -> int:
    from .errors import InputError
    from .sections import build_mesh
    suffix = Path(args.output).suffix.lower()
    if suffix not in MESH_FORMATS:
        raise InputError(f"cannot write a mesh to {args.output!r}: "
                         + (f"{suffix} is not a mesh format" if suffix else "no extension"),
                         field="--output", fix="give a file name ending in one of "
                         + ", ".join(f"{e} ({w})" for e, w in MESH_FORMATS.items())
                         + ", e.g. -o section.msh.")
    model = _load(args.model)
    with step("meshing", args.model, model):
        mesh = build_mesh(model, max_elements=args.max_elements, trust_geo=args.trust_geo)
    with step(f"writing {args.output}", args.model):
        mesh.write(args.output)
    print(f"wrote {args.output}: {mesh.n_elements} triangles, {mesh.n_nodes} nodes, "
          f"regions {mesh.region_names}, edges {sorted(mesh.edges)}")
    return 0


class Terminated(KeyboardInterrupt):
    """SIGTERM turned into an interruption, so a run stops at a clean point with a message."""


def default_output(model_path: str) -> Path:
    """The run folder when ``-o`` is not given: ``MODEL_results`` in the current folder."""
    return Path.cwd() / f"{Path(model_path).stem}_results"


def _resume_hint(args, out: Path) -> str:
    """The command that continues this run: the user's own words, with --resume and -o."""
    import shlex
    words = list(getattr(args, "argv", None) or [])
    words = [w for w in words if w not in ("--force", "--resume")]
    if args.output is None:
        words += ["-o", str(out)]
    return shlex.join(["poroplane"] + words + ["--resume"])


def _run_checks(args) -> None:
    """Every argument checked before the run folder is touched."""
    from .errors import InputError
    if args.resume and args.force:
        raise InputError("--resume and --force exclude each other", field="--force",
                         fix="give --resume to continue the run in the folder, or --force "
                             "to replace it.")
    if args.linear_solver is not None:
        from .linalg import available_backends
        names = available_backends()
        if args.linear_solver not in names:
            raise InputError(f"unknown linear solver {args.linear_solver!r}",
                             field="--linear-solver", fix=f"use one of {', '.join(names)}.")


def _on_term(signum, frame):
    raise Terminated()


def _run(args) -> int:
    import signal
    _run_checks(args)
    old = signal.signal(signal.SIGTERM, _on_term)
    try:
        return _run_with(args)
    finally:
        signal.signal(signal.SIGTERM, old)


def _run_with(args) -> int:
    import signal
    from .comparison import comparison_outputs, format_table
    from .model import dump_toml
    from .results import check_output_folder
    from .runner import Runner
    model = _load(args.model)
    if args.times:
        _add_output_times(args, model)
    out = Path(args.output) if args.output is not None else default_output(args.model)
    check_output_folder(out, resume=args.resume, force=args.force)   # before any meshing
    # The model as read (units converted, paths resolved), so the run folder stands alone.
    text = (f"# The model as poroplane read it from {Path(args.model).resolve()}\n"
            "# (quantities in the default units, paths absolute).\n" + dump_toml(model))
    for w in _warnings(model):
        print(f"warning: {w}", file=sys.stderr)
    sim = _set_up(args, model, backend=args.linear_solver)
    print(f"{model.title}: {sim.mesh.n_elements} triangles, {sim.problem.disc.n_dofs} unknowns, "
          f"{len(model.stages)} stages -> {out}{'/' if str(out)[-1:] != '/' else ''}",
          file=sys.stderr)
    seen = {}

    def finish(result, summary):       # the comparison, written before the run is complete
        seen["rows"], seen["message"], extra = comparison_outputs(model, result.probes,
                                                                  summary, mesh=sim.mesh)
        return extra

    runner = Runner(sim, out, resume=args.resume, force=args.force, progress=not args.quiet,
                    model_text=text, finish=finish)
    signal.signal(signal.SIGTERM, _on_term)      # again: meshing (gmsh) resets the handler
    try:
        with step("stepping", args.model, model, written=lambda: describe_written(out),
                  classify=run_step):
            result = runner.run()
    except KeyboardInterrupt as exc:
        what = "terminated (SIGTERM)" if isinstance(exc, Terminated) else "interrupted"
        print(f"{what}: finished steps are kept in {out}/; continue with "
              f"'{_resume_hint(args, out)}'", file=sys.stderr)
        return 143 if isinstance(exc, Terminated) else 130
    if runner.note:
        print(f"note: {runner.note}", file=sys.stderr)
    if result.info.get("already_complete"):
        print(f"the run in {out.resolve()} is already complete; nothing was solved. See it "
              f"with 'poroplane compare {out}' or 'poroplane report {out}'.")
        print(CAUTION)
        return 0
    done = f"The run is complete in {out}/."
    if seen.get("rows") is None:
        print(f"warning: {seen.get('message')}", file=sys.stderr)
    else:
        print(format_table(seen["rows"]))
    for st in result.info.get("stages", []):
        if "until_degree" in st:
            print(f"stage {st['name']!r}: " + until_degree_text(st))
    if sim.oedometer_moduli:
        from .oedometer_stiffness import moduli_table
        print(moduli_table(sim.oedometer_moduli))
    if model.output.residual_after is not None:
        from .results.summary import probe_summary, residual_table
        print(residual_table(probe_summary(result.probes,
                                           residual_after=model.output.residual_after)))
    print(f"results in {out.resolve()}: results.xdmf (ParaView), probes.csv, lines.csv, "
          f"summary.json{', comparison.csv, hand.json' if seen.get('rows') is not None else ''}"
          f" ({result.info['steps']} steps, {result.info['wall_seconds']:.1f} s)")
    if model.stability is not None:
        with step("the stability checks", args.model, model, written=done):
            _stability_table(out)
    if args.mesh_study:
        from .mesh_study import mesh_study
        with step("the mesh study", args.model, model, written=done):
            print(mesh_study(model, sim, result, backend=args.linear_solver))
    if not args.no_plots:
        from .plots import plot_command
        with step("plotting", out, written=done):
            paths = plot_command(out)
        print(f"{len(paths)} plots and pictures in {(out / 'plots').resolve()}; "
              f"'poroplane report {out}' writes the report")
    print(CAUTION)
    return 0


def _stability_table(out: Path, times=None) -> None:
    from .stability.checks import format_checks, read_stability, stability_command
    checks, warnings = stability_command(out, times=times)
    print(format_checks(checks, read_stability(out)["required_factor_of_safety"]))
    for w in warnings:
        print(f"warning: {w}", file=sys.stderr)


def _stability(args) -> int:
    with step("the stability checks", args.results):
        _stability_table(Path(args.results), times=args.times)
    print(f"wrote {(Path(args.results) / 'stability.json').resolve()}")
    print(CAUTION)
    return 0


def _add_output_times(args, model) -> None:
    """``run --times``: store these times exactly (added to ``output.times``)."""
    from .errors import InputError
    from .plot_times import parse_times
    if args.resume:
        raise InputError("--times cannot change a run that is resumed (its steps are fixed)",
                         field="--times", source=args.model,
                         fix="resume without --times, or start the run afresh with them.")
    end = sum(s.duration for s in model.stages)
    times = parse_times(args.times)
    for t in times:
        if not 0.0 <= t <= end * (1 + 1e-12):
            raise InputError(f"{t:g} days is outside the stages, which cover 0 to {end:g} "
                             "days", field="--times", source=args.model,
                             fix=f"give times from 0 to {end:g} days.")
    model.output.times = sorted(set(model.output.times) | set(times))


def _asked_times(args) -> list[float] | None:
    """The stored outputs for ``--times`` (None when not given), saying which each became."""
    if not args.times:
        return None
    from .plot_times import resolve_run_times
    times, lines = resolve_run_times(Path(args.results), args.times)
    for line in lines:
        print(f"time {line}")
    return times


def _plot(args) -> int:
    from .plots import plot_command
    times = _asked_times(args)
    with step("plotting", args.results):
        paths = plot_command(Path(args.results), times=times)
    for p in paths:
        print(p)
    print(CAUTION)
    return 0


def _report(args) -> int:
    from .report import report_command
    times = _asked_times(args)
    with step("writing the report", args.results):
        path = report_command(Path(args.results), times=times)
    print(f"wrote {path.resolve()} (self-contained; open it in a browser)")
    print(CAUTION)
    return 0


def until_degree_text(st: dict) -> str:
    """Whether and when a stage's ``until_degree`` was reached (the run's stage record)."""
    target = f"average degree of consolidation {st['until_degree']:.0%}"
    if st.get("reached"):
        return f"{target} reached at {st['reached_at_days']:,.1f} days; the stage ended there."
    deg = st.get("degree_at_end")
    got = f" ({deg:.0%} at its end)" if deg is not None else ""
    return f"{target} not reached in its {st['end_days'] - st['start_days']:,.1f} days{got}."


def _hand(args) -> int:
    from .hand_output import hand_json, hand_report
    from .hand_section import estimate as hand_estimate
    model = _load(args.model)
    with step("the hand method", args.model, model):
        est = hand_estimate(model)
        print(json.dumps(hand_json(est), indent=2) if args.json else hand_report(est))
    return 0


def _compare(args) -> int:
    from .comparison import compare_run_dir
    with step("the comparison", args.results):
        print(compare_run_dir(Path(args.results)))
    return 0


def _positive_int(text: str) -> int:
    try:
        n = int(text.replace("_", "").replace(",", ""))
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if n < 1:
        raise argparse.ArgumentTypeError(f"expected a positive whole number, got {n}")
    return n


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="poroplane", description=(
        "Coupled consolidation (Biot) finite elements beside the hand method, for "
        "embankments and footings on soft layered clay."))
    p.add_argument("--version", action="version", version=f"poroplane {__version__}")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    # --debug also after the command name (poroplane run MODEL --debug)
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show the full traceback on errors")

    model = ("model", "model file (.toml)")
    results = ("results", "folder written by 'poroplane run'")

    def command(name: str, func, text: str, *positional: tuple[str, str]):
        """A subcommand calling ``func(args)``, with its positional arguments."""
        sp = sub.add_parser(name, parents=[common], help=text)
        for arg, arg_help in positional:
            sp.add_argument(arg, help=arg_help)
        sp.set_defaults(func=func)
        return sp

    v = command("validate", _validate, "run the validation cases against closed-form solutions")
    v.add_argument("--quick", action="store_true", help="coarse meshes (about a minute)")
    v.add_argument("--json", action="store_true", help="print the checks as JSON")
    v.add_argument("--out", default="validation-results", help="folder for the comparison plots")
    v.add_argument("--case", action="append", metavar="NAME",
                   help="run only this case (repeatable): " + ", ".join(CASES))

    def max_elements(sp):
        sp.add_argument("--max-elements", type=_positive_int, default=None, metavar="N",
                        help="refuse a section estimated above N triangles before meshing "
                             "(default: section.max_elements, else 3,000,000)")

    c = command("check", _check, "read, check and mesh a model file; solve nothing", model)
    max_elements(c)
    c.add_argument("--trust-geo", action="store_true", help=TRUST_GEO_HELP)

    m = command("mesh", _mesh, "write the mesh of a model", model)
    m.add_argument("-o", "--output", required=True,
                   help="mesh file to write: .msh (Gmsh 2.2), .vtu or .vtk")
    max_elements(m)
    m.add_argument("--trust-geo", action="store_true", help=TRUST_GEO_HELP)

    r = command("run", _run, "solve a model through its stages, streaming results", model)
    max_elements(r)
    r.add_argument("-o", "--output", default=None,
                   help="folder for the results (default: MODEL_results in the current "
                        "folder, named after the model file)")
    r.add_argument("--resume", action="store_true",
                   help="continue an interrupted run from its last finished step")
    r.add_argument("--force", action="store_true",
                   help="replace a run the folder already holds (the old one is kept aside "
                        "until the new one is complete)")
    r.add_argument("--mesh-study", action="store_true",
                   help="also solve on a uniformly refined mesh and report the change")
    r.add_argument("--linear-solver", default=None, help="sparse direct solver backend")
    r.add_argument("--quiet", action="store_true", help="no progress bar")
    r.add_argument("--no-plots", action="store_true",
                   help="skip the default plots and pictures after the run")
    r.add_argument("--times", nargs="+", metavar="TIME",
                   help="also store the fields and lines at these times exactly (added to "
                        "[output] times): days, or with units (\"2 years\")")
    r.add_argument("--trust-geo", action="store_true", help=TRUST_GEO_HELP)

    times_help = ("times for the isochrones, troughs, inclinometer and pictures: days, or "
                  "with units (\"2 years\"; commas separate several); each is drawn at the "
                  "output the run stored for it, and the command says which")
    pl = command("plot", _plot, "plots and section pictures of a run (PNG)", results)
    pl.add_argument("--times", nargs="+", metavar="TIME", help=times_help)

    rp = command("report", _report, "one self-contained HTML report of a run", results)
    rp.add_argument("--times", nargs="+", metavar="TIME", help=times_help)
    sb = command("stability", _stability,
                 "factor of safety against a slip at stored times of a run", results)
    sb.add_argument("--times", type=float, nargs="+", metavar="DAYS",
                    help="stored times (days); default: [stability] times or every stage end")
    h = command("hand", _hand, "the hand method alone: settlement, t50, t90 per probe", model)
    h.add_argument("--json", action="store_true", help="print the estimate as JSON")
    command("compare", _compare, "hand method against the finite elements of a run", results)

    b = command("bench", _bench, "time assembly, factorization and stepping (a benchmark)")
    b.add_argument("--elements", type=int, default=20_000, help="target number of triangles")
    b.add_argument("--steps", type=int, default=None,
                   help="time steps (default 100; 10 with --material cam-clay)")
    b.add_argument("--linear-solver", default=None,
                   help="sparse direct solver backend (default: fastest installed)")
    b.add_argument("--backends", default="all",
                   help="backends to compare after the run on its matrix: 'all' (installed, "
                        "other than the run's), 'none', or names separated by commas")
    b.add_argument("--material", choices=["linear", "cam-clay"], default="linear",
                   help="cam-clay: the soft clay layer in Modified Cam Clay, Newton steps")
    b.add_argument("--json", action="store_true",
                   help="JSON lines: the run's figures, then one line per compared backend")
    return p


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    args.argv = list(sys.argv[1:] if argv is None else argv)
    try:
        return args.func(args)
    except PoroplaneError as exc:
        if args.debug:
            raise
        print(f"poroplane: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt as exc:
        print("poroplane: interrupted", file=sys.stderr)
        return 143 if isinstance(exc, Terminated) else 130
    except Exception as exc:  # noqa: BLE001 - the last boundary: no raw traceback
        if args.debug:
            raise
        print(f"poroplane: error: {args.command} failed ({type(exc).__name__}: {exc}). "
              "Rerun with --debug for the traceback.", file=sys.stderr)
        return EXIT_BAD_INPUT


if __name__ == "__main__":
    sys.exit(main())
