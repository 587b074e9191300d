"""One self-contained HTML report of a run: inputs, pictures, plots, comparison, validation.

    path = write_report("runs/embankment")        # runs/embankment/report.html

The page is a single file: images embedded as base64 PNG, the style sheet inline, no script,
no link to anything outside it, so it opens offline and can be mailed or archived as it is.
Sections, in order: the caution, the job and model summary (inputs as tables with units), the
mesh, the results (section pictures and plots), the hand method held against the finite
elements, the validation status of the installed version, the run data, the caution again.

The quick validation (:func:`solver.validation.run_all` with ``quick=True``, some tens of
seconds) runs once and is kept in ``DIR/validation.json``; a later report of the same folder
with the same installed version reads it back.
"""

from __future__ import annotations

import base64
import csv
import datetime as _dt
import html
import io
import json
import math
import time
import warnings
from pathlib import Path
from typing import Any, Iterable, Sequence

import numpy as np

from . import CAUTION, __version__
from .results.files import write_file_atomic

__all__ = ["write_report", "report_command", "validation_status", "REPORT_NAME",
           "VALIDATION_NAME", "SECTION_IDS"]

REPORT_NAME = "report.html"
VALIDATION_NAME = "validation.json"
SECTION_IDS = ("caution", "model-summary", "mesh", "results", "comparison", "validation",
               "run-data")

_CSS = """
:root { --ink: #1d232b; --muted: #5a6370; --line: #d5dae0; --band: #f4f6f8;
        --warn-bg: #fff6df; --warn-line: #c98a00; --ok: #1f7a3a; --bad: #b3261e; }
* { box-sizing: border-box; }
body { font: 15px/1.45 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: var(--ink);
       margin: 0; background: #ffffff; }
main { max-width: 1180px; margin: 0 auto; padding: 18px 28px 48px; }
header.top { border-bottom: 3px solid var(--ink); padding-bottom: 10px; margin-bottom: 14px; }
header.top h1 { font-size: 25px; margin: 0 0 4px; }
header.top p { margin: 2px 0; color: var(--muted); }
h2 { font-size: 20px; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 1px solid var(--line); }
h3 { font-size: 16px; margin: 22px 0 8px; }
p.note { color: var(--muted); font-size: 13.5px; margin: 6px 0 10px; }
.caution { background: var(--warn-bg); border: 1px solid var(--warn-line);
           border-left: 8px solid var(--warn-line); padding: 10px 14px; margin: 14px 0;
           font-weight: bold; }
nav.toc { font-size: 13.5px; color: var(--muted); margin: 8px 0 0; }
nav.toc span { margin-right: 14px; }
table { border-collapse: collapse; margin: 6px 0 14px; font-size: 13.5px; }
th, td { border: 1px solid var(--line); padding: 4px 8px; text-align: left; vertical-align: top; }
th { background: var(--band); font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr.fail td { background: #fdecea; }
.wide { overflow-x: auto; }
figure { margin: 12px 0 22px; }
figure img { max-width: 100%; height: auto; border: 1px solid var(--line); display: block; }
figcaption { font-size: 13px; color: var(--muted); margin-top: 4px; }
.status-ok { color: var(--ok); font-weight: bold; }
.status-bad { color: var(--bad); font-weight: bold; }
.kv th { width: 260px; }
details { margin: 4px 0 12px; } summary { cursor: pointer; color: var(--muted); }
footer { margin-top: 36px; font-size: 12.5px; color: var(--muted); }
@media print { main { max-width: none; } figure { break-inside: avoid; } }
"""


# ================================================================================ helpers
def _e(v: Any) -> str:
    return html.escape("" if v is None else str(v), quote=True)


def _fmt(v: Any, fmt: str = ".4g") -> str:
    if v is None:
        return "-"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return f"{int(v):,}"
    if isinstance(v, (float, np.floating)):
        f = float(v)
        if not math.isfinite(f):
            return "-"
        if f == 0.0:
            return "0"
        if abs(f) >= 1000 and abs(f) < 1e9 and abs(f - round(f)) < 1e-9 * abs(f):
            return f"{f:,.0f}"
        text = format(f, fmt)
        return text.replace("e+0", "e+").replace("e-0", "e-")
    if isinstance(v, (list, tuple)):
        return ", ".join(_fmt(x, fmt) for x in v) if v else "-"
    return str(v)


def _table(head: Sequence[str], rows: Iterable[Sequence[Any]], num: Sequence[bool] | None = None,
           classes: Sequence[str] | None = None, fmt: str = ".4g") -> str:
    """An HTML table; ``head`` cells carry the units, numbers right-aligned."""
    out = ['<div class="wide"><table><thead><tr>']
    out += [f"<th>{_e(h)}</th>" for h in head]
    out.append("</tr></thead><tbody>")
    for k, r in enumerate(rows):
        cls = f' class="{classes[k]}"' if classes and classes[k] else ""
        out.append(f"<tr{cls}>")
        for j, v in enumerate(r):
            is_num = isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool)
            if num is not None:
                is_num = num[j] and is_num
            out.append(f'<td class="num">{_e(_fmt(v, fmt))}</td>' if is_num
                       else f"<td>{_e(_fmt(v, fmt))}</td>")
        out.append("</tr>")
    out.append("</tbody></table></div>")
    return "".join(out)


def _kv(rows: Iterable[tuple[str, Any]]) -> str:
    body = "".join(f"<tr><th>{_e(k)}</th><td>{_e(_fmt(v))}</td></tr>" for k, v in rows)
    return f'<div class="wide"><table class="kv"><tbody>{body}</tbody></table></div>'


def _img(path: Path, alt: str, caption: str = "") -> str:
    data = base64.b64encode(Path(path).read_bytes()).decode("ascii")
    cap = f"<figcaption>{_e(caption)}</figcaption>" if caption else ""
    return (f'<figure><img alt="{_e(alt)}" src="data:image/png;base64,{data}">{cap}'
            f"</figure>")


def _days(t: float | None) -> str:
    if t is None or not math.isfinite(t):
        return "-"
    return f"{t:,.4g} days" + (f" ({t / 365.25:.2f} years)" if t >= 365.25 else "")


# ============================================================================ validation
def validation_status(run_dir: str | Path | None = None, *, refresh: bool = False,
                      quick: bool = True) -> dict:
    """The quick validation of the installed version, cached in ``run_dir/validation.json``.

    Returns ``{"version", "level", "when_utc", "seconds", "checks": [Check.as_dict()...],
    "passed", "failed"}``; the cache is used when it names the installed version and level.
    A validation that cannot run gives ``{"error": message, ...}`` instead of checks.
    """
    cache = Path(run_dir) / VALIDATION_NAME if run_dir is not None else None
    level = "quick" if quick else "full"
    if cache is not None and cache.exists() and not refresh:
        try:
            data = json.loads(cache.read_text(encoding="utf-8"))
            if data.get("version") == __version__ and data.get("level") == level:
                data["cached"] = True
                return data
        except (OSError, ValueError):
            pass
    t0 = time.perf_counter()
    data: dict[str, Any] = {"version": __version__, "level": level,
                            "when_utc": _dt.datetime.now(_dt.timezone.utc)
                            .strftime("%Y-%m-%d %H:%M UTC")}
    try:
        from .validation import run_all
        checks, seconds = run_all(quick=quick)
        data["checks"] = [c.as_dict() for c in checks]
        data["seconds"] = {k: float(v) for k, v in seconds.items()}
        data["passed"] = sum(1 for c in data["checks"] if c["passed"])
        data["failed"] = len(data["checks"]) - data["passed"]
    except Exception as exc:    # the report still shows everything else
        data["error"] = f"{type(exc).__name__}: {exc}"
    data["wall_seconds"] = time.perf_counter() - t0
    if cache is not None and "error" not in data:
        write_file_atomic(cache, json.dumps(data, indent=1).encode("utf-8"))
    data["cached"] = False
    return data


def _validation_html(v: dict | None) -> str:
    if v is None:
        return '<p class="note">The validation was not run for this report.</p>'
    if "error" in v:
        return (f'<p class="status-bad">The validation could not be run: {_e(v["error"])}</p>'
                '<p class="note">Run <code>poroplane validate --quick</code> to see it.</p>')
    checks = v.get("checks", [])
    n_fail = sum(1 for c in checks if not c.get("passed"))
    state = (f'<span class="status-ok">all {len(checks)} checks passed</span>' if n_fail == 0
             else f'<span class="status-bad">{n_fail} of {len(checks)} checks failed</span>')
    secs = sum((v.get("seconds") or {}).values())
    head = (f"<p>poroplane {_e(v.get('version'))}, {_e(v.get('level'))} level, "
            f"{_e(v.get('when_utc'))} ({secs:.1f} s"
            f"{', read from ' + VALIDATION_NAME if v.get('cached') else ''}): {state}.</p>")
    cases: dict[str, list[dict]] = {}
    for c in checks:
        cases.setdefault(str(c.get("case")), []).append(c)
    summary_rows, summary_cls = [], []
    for case, cs in cases.items():
        worst = max(cs, key=lambda c: (c.get("error") or 0.0) / (c.get("tolerance") or 1.0))
        bad = sum(1 for c in cs if not c.get("passed"))
        summary_rows.append((case, len(cs), len(cs) - bad, (v.get("seconds") or {}).get(case),
                             worst.get("quantity"),
                             (worst.get("error") or 0.0) / (worst.get("tolerance") or 1.0),
                             worst.get("source")))
        summary_cls.append("fail" if bad else "")
    rows = [(c.get("case"), c.get("quantity"), c.get("error"), c.get("tolerance"),
             "yes" if c.get("passed") else "NO", c.get("source")) for c in checks]
    classes = ["" if c.get("passed") else "fail" for c in checks]
    failed_first = sorted(range(len(rows)), key=lambda k: classes[k] != "fail")
    return head + _table(("case", "checks", "passed", "time (s)",
                          "closest to its tolerance", "error / tolerance (-)",
                          "published source"), summary_rows, classes=summary_cls, fmt=".3g") + (
        f"<details{' open' if n_fail else ''}><summary>All {len(checks)} checks</summary>" +
        _table(("case", "compared quantity", "error", "tolerance", "passed",
                "published source"), [rows[k] for k in failed_first],
               classes=[classes[k] for k in failed_first], fmt=".3g") + "</details>") + (
        '<p class="note">Each check compares the solver with a closed-form or published '
        "result on a coarse mesh; error and tolerance are in the same measure (stated in "
        "the quantity). A full-level run: <code>poroplane validate</code>.</p>")


# ============================================================================ model tables
def _material_tables(model) -> str:
    fe, hand = [], []
    for name, m in model.materials.items():
        oed = m.oedometer
        fe.append([name, m.model, m.youngs_modulus, m.constrained_modulus, m.poisson_ratio,
                   m.permeability_x, m.permeability_y if m.permeability_y is not None
                   else m.permeability_x, m.unit_weight, m.saturated_unit_weight,
                   m.friction_angle, m.k0, m.lambda_, m.kappa, m.M, m.void_ratio])
        hand.append([name, oed.compression_index, oed.recompression_index, oed.void_ratio,
                     oed.overconsolidation_ratio, oed.preconsolidation_pressure,
                     oed.preconsolidation_margin, oed.volume_compressibility,
                     oed.consolidation_coefficient, oed.secondary_compression_index])
    h1, r1 = _drop_empty_columns(_FE_HEAD, fe)
    h2, r2 = _drop_empty_columns(_OED_HEAD, hand, keep_first=1)
    r2 = [r for r in r2 if any(v is not None for v in r[1:])]
    out = ("<h3>Materials: finite-element parameters</h3>" + _table(h1, r1) +
           '<p class="note">Dashes: not given (the unit weight below the water table is then '
           "the one above it; K0 then follows from phi'). Permeability in m/day (1 m/s = "
           "86,400 m/day).</p>")
    if r2:
        out += ("<h3>Materials: oedometer parameters for the hand method</h3>" + _table(h2, r2)
                + '<p class="note">The hand method reads these; the finite elements use the '
                "parameters above. Materials not listed have none.</p>")
    return out


_FE_HEAD = ("material", "model", "E' (kPa)", "E_oed (kPa)", "nu' (-)", "k_x (m/day)",
            "k_y (m/day)", "gamma (kN/m3)", "gamma_sat (kN/m3)", "phi' (deg)", "K0 (-)",
            "lambda (-)", "kappa (-)", "M (-)", "e0 (-)")
_OED_HEAD = ("material", "Cc (-)", "Cr (-)", "e0 (-)", "OCR (-)", "sigma'_p (kPa)",
             "sigma'_p - sigma'_v0 (kPa)", "m_v (1/kPa)", "c_v (m2/day)", "C_alpha (-)")


def _drop_empty_columns(head, rows, keep_first: int = 2):
    keep = [j for j in range(len(head))
            if j < keep_first or any(r[j] is not None for r in rows)]
    return [head[j] for j in keep], [[r[j] for j in keep] for r in rows]


def _layers_html(model) -> str:
    if not model.layers:
        return '<p class="note">No layers: the section comes from a mesh file.</p>'
    rows, top = [], 0.0
    for ly in model.layers:
        rows.append([ly.name, ly.material, ly.thickness,
                     ly.thickness_right if ly.thickness_right is not None else ly.thickness,
                     0.0 - top, 0.0 - (top + ly.thickness)])
        top += ly.thickness
    return _table(("layer", "material", "thickness at the left edge (m)",
                   "thickness at the right edge (m)", "top at the left edge, y (m)",
                   "base at the left edge, y (m)"), rows)


def _section_html(model) -> str:
    sec = model.section
    rows = [("section kind", sec.kind),
            ("half section (x >= 0, symmetry at x = 0)", sec.half),
            ("width (m)", sec.width if sec.width is not None else "from the layers and loads"),
            ("depth (m)", sec.depth if sec.depth is not None else "from the layers"),
            ("element size under the load (m)", sec.mesh_size if sec.mesh_size is not None
             else "default")]
    try:
        from .model import domain_extent
        ext = domain_extent(model)
        if ext is not None:
            rows.append(("modelled domain: x from, to (m); depth (m)",
                         f"{ext[0]:g}, {ext[1]:g}; {ext[2]:g}"))
    except Exception:
        pass
    if sec.mesh_file:
        rows.append(("mesh file", sec.mesh_file))
    out = _kv(rows)
    emb = sec.embankment
    if emb is not None:
        toe = emb.crest_width / 2 + emb.height * emb.side_slope
        out += "<h3>Embankment</h3>" + _kv([
            ("crest width (m)", emb.crest_width), ("height (m)", emb.height),
            ("side slope (horizontal per unit rise)", emb.side_slope),
            ("toe from the centre line (m)", toe),
            ("lift thicknesses, bottom up (m)", list(emb.lifts)), ("fill material", emb.material),
            ("berms: width x height (m)", ", ".join(f"{b.width:g} x {b.height:g}"
                                                    for b in emb.berms) or "none")])
    if sec.footings:
        out += "<h3>Footings</h3>" + _table(
            ("footing", "centre x (m)", "width (m)", "pressure (kPa)", "force (kN/m or kN)",
             "embedment (m)", "rigid"),
            [[f.name, f.center, f.width, f.load, f.force, f.embedment, f.rigid]
             for f in sec.footings])
    if sec.regions:
        out += "<h3>Regions of the mesh file</h3>" + _table(
            ("region", "material"), [[k, v] for k, v in sec.regions.items()])
    return out


def _stages_html(model, run) -> str:
    spans = {st.name: st for st in (run.stages if run is not None else [])}
    rows = []
    for i, st in enumerate(model.stages):
        what = {"lift": f"places {st.region or f'lift {st.lift}'}",
                "remove": f"removes {st.region or f'lift {st.lift}'} (weight off over the "
                          "stage, elements gone at its end)",
                "load": f"ramps {', '.join(st.loads)} to {st.factor:g}",
                "consolidate": "waits (consolidation)"}.get(st.kind, st.kind)
        sp = spans.get(st.name)
        rows.append([i + 1, st.name, st.kind, what, st.duration,
                     None if st.until_degree is None else 100 * st.until_degree,
                     sp.start_days if sp else None, sp.end_days if sp else None])
    ts = model.time_steps
    return _table(("no.", "stage", "kind", "what it does", "duration, at most (days)",
                   "ends early at average degree (%)", "started in the run (day)",
                   "ended in the run (day)"), rows) + _kv([
        ("first step of each stage (days)", ts.first_step),
        ("step growth factor (-)", ts.growth), ("steps of one length before it grows", ts.steps_per_level),
        ("longest step (days)", ts.max_step if ts.max_step else "no limit"),
        ("extra output times (days)", list(model.output.times) or "none")])


def _model_html(model, run) -> str:
    parts = []
    parts.append("<h3>Section</h3>" + _section_html(model))
    parts.append("<h3>Layers (from the ground surface down)</h3>" + _layers_html(model))
    moduli = ((run.summary or {}).get("oedometer_moduli") or []) if run is not None else []
    if moduli:
        parts.append("<h3>Constrained modulus from the oedometer (stiffness_from_oedometer)</h3>"
                     + _table(("layer", "sublayer top (m)", "sublayer base (m)",
                               "sigma'_v0 (kPa)", "sigma'_v final (kPa)",
                               "sigma'_p (kPa)", "oedometer line", "E_oed used (kPa)"),
                              [[m["layer"], m["top_m"], m["bottom_m"], m["sigma_v0_kPa"],
                                m["sigma_v_final_kPa"], m["preconsolidation_kPa"], m["line"],
                                m["constrained_modulus_kPa"]] for m in moduli])
                     + '<p class="note">Each sublayer\'s secant modulus over the stress range '
                       "the load imposes (under the centre of the load, by the hand method); "
                       "the finite elements of the layer take these values by depth.</p>")
    parts.append(_material_tables(model))
    w, dr = model.water, model.drainage
    parts.append("<h3>Water and drainage</h3>" + _kv([
        ("water table depth below the ground surface (m)", w.table_depth),
        ("unit weight of water (kN/m3)", w.unit_weight),
        ("ground and embankment surfaces drain", dr.top), ("base drains", dr.base),
        ("sides drain", dr.sides),
        ("drained edges (mesh file)", list(dr.drained_edges) or "-")]))
    if model.loads:
        parts.append("<h3>Surface loads</h3>" + _table(
            ("load", "from x (m)", "to x (m)", "pressure (kPa)"),
            [[lo.name, lo.x_left, lo.x_right, lo.pressure] for lo in model.loads]))
    parts.append("<h3>Stages</h3>" + _stages_html(model, run))
    parts.append("<h3>Probes</h3>" + _table(
        ("point probe", "x (m)", "y (m)"), [[p.name, p.x, p.y] for p in model.probes]))
    if model.lines:
        parts.append(_table(("line probe", "kind", "from x, y (m)", "to x, y (m)", "points"),
                            [[ln.name, ln.kind, f"{ln.x0:g}, {ln.y0:g}", f"{ln.x1:g}, {ln.y1:g}",
                              ln.points] for ln in model.lines]))
    return "".join(parts)


# ============================================================================ comparison
_COMPARE_HEAD = (
    ("probe", "probe"), ("fe_final_settlement_m", "FE settlement (m)"),
    ("hand_final_settlement_m", "hand settlement, same time (m)"),
    ("hand_ultimate_settlement_m", "hand ultimate settlement (m)"),
    ("settlement_ratio_fe_to_hand", "ratio FE / hand (-)"),
    ("fe_t50_days", "FE t50 (days)"), ("hand_t50_days", "hand t50 (days)"),
    ("t50_ratio_fe_to_hand", "t50 ratio (-)"),
    ("fe_t90_days", "FE t90 (days)"), ("hand_t90_days", "hand t90 (days)"),
    ("t90_ratio_fe_to_hand", "t90 ratio (-)"),
    ("fe_max_excess_pore_pressure_kPa", "FE largest u (kPa)"),
    ("hand_max_excess_pore_pressure_kPa", "hand largest u (kPa)"),
    ("pore_pressure_ratio_fe_to_hand", "u ratio (-)"),
)


def _read_comparison_csv(path: Path) -> list[dict]:
    from .results import read_text_file
    rows = []
    text = read_text_file(path.parent, path.name) or ""     # checked against the run record
    for r in csv.DictReader(io.StringIO(text)):
        row: dict[str, Any] = {}
        for k, v in r.items():
            if k in ("probe", "hints", "notes"):
                row[k] = v
            else:
                try:
                    row[k] = float(v) if v not in ("", None) else None
                except ValueError:
                    row[k] = v
        rows.append(row)
    return rows


def _comparison_rows(run) -> tuple[list[dict] | None, str]:
    """Rows from DIR/comparison.csv, else computed; (None, why) when neither works."""
    path = run.dir / "comparison.csv"
    if path.exists():
        try:
            return _read_comparison_csv(path), "from comparison.csv in the run folder"
        except (OSError, ValueError, csv.Error) as exc:
            note = f"comparison.csv could not be read ({exc}); computed afresh"
        else:  # pragma: no cover
            note = ""
    else:
        note = "computed for this report"
    try:
        from .comparison import compare
    except ImportError:
        return None, "the comparison module (solver.comparison) is not installed"
    if run.hand_estimate is None:
        return None, run.hand_note or "the hand estimate is not available"
    try:
        return compare(run.hand_estimate, run.probes, run.summary), note
    except Exception as exc:
        return None, f"the comparison could not be computed ({exc})"


def _comparison_html(run) -> str:
    rows, where = _comparison_rows(run)
    if rows is None:
        return f'<p class="note">No comparison with the hand method: {_e(where)}.</p>'
    cols = [c for c, _ in _COMPARE_HEAD]
    body = [[r.get(c) for c in cols] for r in rows]
    out = _table([h for _, h in _COMPARE_HEAD], body, fmt=".4g")
    hints = [(r.get("probe"), h) for r in rows for h in str(r.get("hints") or "").split("; ") if h]
    notes = [(r.get("probe"), h) for r in rows for h in str(r.get("notes") or "").split("; ") if h]
    if notes:
        out += "<h3>What a dash and some values mean</h3>" + _table(("probe", "note"), notes)
    if hints:
        out += "<h3>Where the two differ by more than the tolerance</h3>" + _table(
            ("probe", "what the difference suggests"), hints)
    try:
        from .comparison import DEFINITIONS, RATIO_TOLERANCE, REASONS
        out += (f'<p class="note">{_e(DEFINITIONS)} Hints appear where a ratio lies outside '
                f"1 &plusmn; {RATIO_TOLERANCE:g}. {_e(REASONS)}</p>")
    except ImportError:
        pass
    out += f'<p class="note">Rows {_e(where)}.</p>'
    est = run.hand_estimate
    if est is not None and getattr(est, "notes", None):
        out += "<h3>Notes of the hand estimate</h3><ul>" + "".join(
            f"<li>{_e(n)}</li>" for n in est.notes) + "</ul>"
    out += _differential_html(run)
    return out


def _differential_html(run) -> str:
    """Limit checks between neighbouring surface probes, FE and hand side by side: building
    limits of angular distortion for structure pairs, the model's limits along the ground."""
    try:
        from .plots import differential_histories
        fe = differential_histories(run)
    except Exception:
        fe = []
    if not fe:
        return ""
    hand = {}
    for d in (getattr(run.hand_estimate, "differential", None) or []):
        hand[(d.probe_a, d.probe_b, d.kind)] = d
    rows = {"structure": [], "ground": []}
    for p in fe:
        h = p["history"]
        hd = hand.get((p["a"], p["b"], p["kind"]))
        hchecks = {c.limit: c for c in hd.checks} if hd is not None else {}
        for c in h.checks:
            hc = hchecks.get(c.limit)
            label = f"1/{1 / c.limit:.0f}" if p["kind"] == "structure" else f"{c.limit:g} m"
            rows[p["kind"]].append([f"{p['a']} to {p['b']}", p["distance_m"], label,
                                    c.description, c.max_distortion, c.first_exceeded_days,
                                    None if hc is None else hc.max_distortion,
                                    None if hc is None else hc.first_exceeded_days])
    out = ""
    if rows["structure"]:
        out += ("<h3>Angular distortion of structures against building limits</h3>" + _table(
            ("probes", "distance (m)", "limit (-)", "limit after Bjerrum (1963)",
             "FE largest (-)", "FE first exceeded (day)", "hand largest (-)",
             "hand first exceeded (day)"), rows["structure"], fmt=".4g") +
            '<p class="note">Pairs of neighbouring footing bases and of [[structures]] only. '
            'Dash in "first exceeded": not exceeded within the record. Limit values and '
            "wording as recalled, to be checked against the paper; rigid tilt is included in "
            "the distortion.</p>")
    if rows["ground"]:
        out += ("<h3>Differential settlement along the ground against the limit given</h3>" +
                _table(("probes", "distance (m)", "limit", "check", "FE largest (m)",
                        "FE first exceeded (day)", "hand largest (m)", "hand first exceeded (day)"),
                       rows["ground"], fmt=".4g"))
    if not out:
        out = ('<p class="note">No limits checked between the surface probes: building limits '
               "apply to structures only (footings, [[structures]]); along the ground give "
               "[limits] differential_settlement and change_of_gradient.</p>")
    return out


# ============================================================================= run data
def _run_html(run) -> str:
    info = (run.summary or {}).get("run", {})
    from .results import ResultsError, read_text_file
    rj = {}
    try:
        rj = json.loads(read_text_file(run.dir, "run.json") or "{}")
    except (ResultsError, ValueError):
        pass
    sessions = rj.get("sessions") or []
    started = sessions[0].get("started_utc") if sessions else None
    resumed = [s.get("resumed_from_step") for s in sessions if s.get("resumed_from_step")]
    rows = [("poroplane version of the run", info.get("version")),
            ("poroplane version of this report", __version__),
            ("run started (UTC)", started),
            ("resumed from steps", resumed or "not resumed"),
            ("elements (6-node triangles)", info.get("elements")),
            ("nodes", rj.get("n_nodes")),
            ("unknowns (degrees of freedom)", info.get("dofs")),
            ("time steps", info.get("steps")), ("matrix factorizations", info.get("factorizations")),
            ("wall time (s)", None if info.get("wall_seconds") is None
             else round(float(info["wall_seconds"]), 2)),
            ("mesh fingerprint (SHA-256)", rj.get("mesh_sha256")),
            ("run folder", str(run.dir.resolve()))]
    out = _kv(rows)
    probes = (run.summary or {}).get("probes") or {}
    if probes:
        out += "<h3>Probe summary (finite elements)</h3>" + _table(
            ("probe", "end of record (days)", "settlement at the end (m)",
             "time to 50 % of it (days)", "time to 90 % of it (days)",
             "largest excess pore pressure (kPa)", "at time (days)"),
            [[n, p.get("final_time_days"), p.get("final_settlement_m"),
              p.get("time_to_50_percent_settlement_days"),
              p.get("time_to_90_percent_settlement_days"),
              p.get("largest_excess_pore_pressure_kPa"),
              p.get("time_of_largest_excess_pore_pressure_days")] for n, p in probes.items()])
        out += _residual_html(run, probes)
    files = sorted(p.name for p in run.dir.iterdir() if p.is_file() and not p.name.startswith("."))
    out += f'<p class="note">Files in the run folder: {_e(", ".join(files))}.</p>'
    return out


def _residual_html(run, probes: dict) -> str:
    """The settlement still to come after the day the model names (``output.residual_after``,
    e.g. paving), beside the final one, by finite elements and by hand."""
    day = next((p.get("residual_after_days") for p in probes.values()
                if p.get("residual_after_days") is not None), None)
    if day is None:
        return ""
    rows = []
    for n, p in probes.items():
        hand = None
        c = (run.hand or {}).get(n)
        end = p.get("final_time_days")
        if c is not None and end is not None and c["time_days"][-1] >= end * (1 - 1e-9):
            s_h = np.interp([day, end], c["time_days"], c["settlement_m"])
            hand = float(s_h[1] - s_h[0])
        rows.append([n, p.get("final_settlement_m"), p.get("settlement_at_residual_start_m"),
                     p.get("residual_settlement_m"), hand])
    return (f"<h3>Settlement after day {_fmt(day)} (output.residual_after)</h3>" + _table(
        ("probe", "settlement at the end (m)", f"settlement on day {_fmt(day)} (m)",
         f"residual settlement after day {_fmt(day)} (m)", "residual by hand (m)"), rows)
        + '<p class="note">Residual settlement: the settlement at the end of the record minus '
          "that on the day, at every probe; by hand from the hand method's settlement history "
          "between the same two times. A probe whose record ends before the day has none.</p>")


# =============================================================================== report
def _image_section(paths: Sequence[Path], captions: dict[str, str]) -> str:
    return "".join(_img(p, p.stem.replace("_", " "), captions.get(p.stem, "")) for p in paths)


def _caption(stem: str) -> str:
    fixed = {
        "settlement_time": "Settlement at each probe against time, linear and logarithmic; "
                           "finite elements solid, the hand method dashed.",
        "pore_pressure_time": "Excess pore pressure at the probes inside the ground.",
        "degree_of_consolidation": "Degree of consolidation from settlement (definition under "
                                   "the plot).",
        "differential_settlement": "Differential settlement and angular distortion of "
                                   "neighbouring surface probes, with limit lines.",
    }
    if stem in fixed:
        return fixed[stem]
    if stem.startswith("isochrones_"):
        return f"Isochrones of excess pore pressure along the line {stem[11:]}."
    if stem.startswith("trough_"):
        return f"Settlement trough along the line {stem[7:]}."
    return ""


def write_report(run_dir: str | Path, *, validation: dict | str | Path | bool | None = None,
                 times: Sequence[float] | None = None, pictures: bool = True) -> Path:
    """Write ``run_dir/report.html`` (self-contained) and return its path.

    Parameters
    ----------
    run_dir : folder written by a run.
    validation : None runs the quick validation or reads ``run_dir/validation.json`` when it
        names the installed version; a dict (as :func:`validation_status` returns) or the path
        of such a JSON file uses that; False leaves the validation out.
    times : days for the profiles and section pictures (nearest output times).
    pictures : False leaves out the section pictures (pyvista).
    """
    from .plots import load_run, plots_of
    d = Path(run_dir)
    run = load_run(d)
    model = run.model

    plot_paths = plots_of(run, d / "plots", times)
    pic_paths, pic_note = [], ""
    if pictures:
        from .pictures import RenderingUnavailable, make_pictures, rendering_available
        ok, why = rendering_available()
        if ok:
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore", RenderingUnavailable)
                    pic_paths = make_pictures(d, d / "pictures", times)
            except Exception as exc:    # the rest of the report is still worth having
                pic_note = f"the pictures could not be made ({type(exc).__name__}: {exc})"
                warnings.warn(pic_note, RuntimeWarning, stacklevel=2)
        else:
            pic_note = why
    else:
        pic_note = "section pictures were not asked for in this report"

    if validation is False:
        val = None
    elif isinstance(validation, dict):
        val = validation
    elif isinstance(validation, (str, Path)):
        val = json.loads(Path(validation).read_text(encoding="utf-8"))
    else:
        val = validation_status(d)

    title = run.title
    now = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    caution = f'<div class="caution" id="caution-box">{_e(CAUTION)}</div>'
    mesh_pic = [p for p in pic_paths if p.stem == "mesh"]
    field_pics = [p for p in pic_paths if p.stem != "mesh"]

    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_e(title)}: poroplane report</title>",
        f"<style>{_CSS}</style></head><body><main>",
        '<header class="top">', f"<h1>{_e(title)}</h1>",
        f"<p>Coupled consolidation by finite elements beside the hand method. Report written "
        f"{_e(now)} by poroplane {_e(__version__)} from the run folder {_e(d.name)}.</p>",
        '<nav class="toc">' + "".join(f"<span>{_e(s)}</span>" for s in (
            "1 Caution", "2 Model summary", "3 Mesh", "4 Results", "5 Hand method and finite "
            "elements", "6 Validation", "7 Run data")) + "</nav>",
        "</header>",
        '<section id="caution"><h2>1 Caution</h2>', caution,
        '<p class="note">The results below come from a numerical model of an idealised ground '
        "with the parameters listed; they are as good as those parameters and the assumptions "
        "stated with each figure.</p></section>",
        '<section id="model-summary"><h2>2 Model summary</h2>',
    ]
    if model is not None:
        parts.append(_kv([("title", model.title), ("analysis", model.analysis),
                          ("model", "model.toml, the copy of the model file kept in the run "
                                    "folder"),
                          ("run folder", str(d.resolve()))]))
        parts.append(_model_html(model, run))
    else:
        parts.append(f'<p class="note">The model could not be summarised: {_e(run.model_note)}.</p>')
    parts.append("</section>")

    parts.append('<section id="mesh"><h2>3 Mesh</h2>')
    if mesh_pic:
        parts.append(_img(mesh_pic[0], "mesh", "Elements, regions and probes of the section."))
    else:
        parts.append(f'<p class="note">No mesh picture: {_e(pic_note)}.</p>')
    parts.append("</section>")

    parts.append('<section id="results"><h2>4 Results</h2>')
    parts.append("<h3>Over the section</h3>")
    if field_pics:
        parts.append(_image_section(field_pics, {}))
    else:
        parts.append(f'<p class="note">No section pictures: {_e(pic_note)}.</p>')
    parts.append("<h3>At the probes and along the lines</h3>")
    parts.append(_image_section(plot_paths, {p.stem: _caption(p.stem) for p in plot_paths}))
    parts.append("</section>")

    parts.append('<section id="comparison"><h2>5 Hand method and finite elements</h2>')
    parts.append(_comparison_html(run))
    parts.append("</section>")

    parts.append('<section id="validation"><h2>6 Validation of the installed version</h2>')
    parts.append(_validation_html(val))
    parts.append("</section>")

    parts.append('<section id="run-data"><h2>7 Run data</h2>')
    parts.append(_run_html(run))
    parts.append("</section>")

    parts.append(caution)
    parts.append(f"<footer>poroplane {_e(__version__)}. Units: kN, m, kPa, kN/m3, days; "
                 "settlement positive downward, pore pressure positive in compression.</footer>")
    parts.append("</main></body></html>")
    out = d / REPORT_NAME
    write_file_atomic(out, "\n".join(parts).encode("utf-8"))    # never through a link
    return out


def report_command(run_dir: str | Path, times: Sequence[float] | None = None) -> Path:
    """What ``poroplane report DIR [--times ...]`` does: ``DIR/report.html``; ``times``
    (days, stored outputs) for the profiles and pictures."""
    return write_report(run_dir, times=times)
