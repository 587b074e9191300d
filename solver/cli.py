"""The ``poroplane`` command line. The only place that prints errors and sets exit status."""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import CAUTION, __version__
from .errors import PoroplaneError

EXIT_BAD_INPUT = 2


def _validate(args) -> int:
    from solver.validation import run_all
    out = Path(args.out)
    checks, seconds = run_all(quick=args.quick, out_dir=out)
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
    from .bench import run_benchmark
    r = run_benchmark(args.elements, args.steps, args.linear_solver)
    if args.json:
        print(json.dumps(r))
    else:
        for k, v in r.items():
            if k == "backends":
                print("backends measured on the run's consolidation matrix:")
                for b in v:
                    print(f"  {b['backend']:12s} factor {b['factor_s']:.3f} s   solve "
                          f"{b['solve_s']:.4f} s   residual {b['residual']:.1e}")
            else:
                print(f"{k:26s} {v:.4g}" if isinstance(v, float) else f"{k:26s} {v}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="poroplane", description=(
        "Coupled consolidation (Biot) finite elements beside the hand method, for "
        "embankments and footings on soft layered clay."))
    p.add_argument("--version", action="version", version=f"poroplane {__version__}")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")

    v = sub.add_parser("validate", help="run the validation cases against closed-form solutions")
    v.add_argument("--quick", action="store_true", help="coarse meshes (about a minute)")
    v.add_argument("--json", action="store_true", help="print the checks as JSON")
    v.add_argument("--out", default="validation-results", help="folder for the comparison plots")
    v.set_defaults(func=_validate)

    b = sub.add_parser("bench", help="time assembly, factorization and stepping (a benchmark)")
    b.add_argument("--elements", type=int, default=20_000, help="target number of triangles")
    b.add_argument("--steps", type=int, default=100, help="time steps")
    b.add_argument("--linear-solver", default=None,
                   help="sparse direct solver backend (default: fastest installed)")
    b.add_argument("--json", action="store_true", help="print one JSON object")
    b.set_defaults(func=_bench)
    return p


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except PoroplaneError as exc:
        if args.debug:
            raise
        print(f"poroplane: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("poroplane: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
