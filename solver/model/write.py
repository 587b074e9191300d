"""Writing a model back as the tables of a model file and as TOML text."""

from __future__ import annotations

import math
from typing import Any

from .fields import _key
from .rules import (_BERM_RULES, _DRAINAGE_RULES, _EMBANKMENT_RULES, _FOOTING_RULES,
                    _LAYER_RULES, _LINE_RULES, _LOAD_RULES, _MATERIAL_RULES, _MODEL_RULES,
                    _OEDOMETER_RULES, _OUTPUT_RULES, _PROBE_RULES, _SECTION_RULES,
                    _STABILITY_RULES, _STAGE_RULES, _TIME_STEP_RULES, _WATER_RULES, _Rule,
                    _GRADING_RULES, _UNDRAINED_RULES, _LIMIT_RULES, _STRUCTURE_RULES)
from .schema import Grading, Model

def _plain(obj: Any, rules: dict[str, _Rule]) -> dict[str, Any]:
    """The fields of ``obj`` under their TOML keys; None and empty lists left out."""
    out = {}
    for key, rule in rules.items():
        attr = rule.attr or key
        if not hasattr(obj, attr):
            continue
        v = getattr(obj, attr)
        if v is None or (isinstance(v, list) and not v and key != "times"):
            continue
        out[key] = list(v) if isinstance(v, list) else v
    return out


def model_to_dict(model: Model) -> dict[str, Any]:
    """The model as the tables of a model file: plain numbers in the default units (kN, m,
    kPa, kN/m3, days, m/day), None fields left out. ``model_from_dict`` reads it back."""
    d = _plain(model, _MODEL_RULES)
    mats = {}
    for name, m in model.materials.items():
        md = _plain(m, _MATERIAL_RULES)
        oed = _plain(m.oedometer, _OEDOMETER_RULES)
        if oed:
            md["oedometer"] = oed
        und = _plain(m.undrained, _UNDRAINED_RULES)
        if und:
            md["undrained"] = und
        mats[name] = md
    d["materials"] = mats
    d["layers"] = [_plain(la, _LAYER_RULES) for la in model.layers]
    sec = model.section
    sd = _plain(sec, _SECTION_RULES)
    if sec.embankment is not None:
        ed = _plain(sec.embankment, _EMBANKMENT_RULES)
        if sec.embankment.berms:
            ed["berms"] = [_plain(b, _BERM_RULES) for b in sec.embankment.berms]
        sd["embankment"] = ed
    if sec.footings:
        sd["footings"] = [_plain(f, _FOOTING_RULES) for f in sec.footings]
    if sec.regions:
        sd["regions"] = dict(sec.regions)
    if sec.grading != Grading():
        sd["grading"] = _plain(sec.grading, _GRADING_RULES)
    if sec.region_mesh_size:
        sd["region_mesh_size"] = dict(sec.region_mesh_size)
    d["section"] = sd
    d["water"] = _plain(model.water, _WATER_RULES)
    for key in ("piezometric_depths", "initial_excess_pore_pressures"):
        table = getattr(model.water, key)
        if table:
            d["water"][key] = {n: list(v) if isinstance(v, list) else v
                               for n, v in table.items()}
    d["drainage"] = _plain(model.drainage, _DRAINAGE_RULES)
    d["loads"] = [_plain(lo, _LOAD_RULES) for lo in model.loads]
    d["stages"] = [_plain(st, _STAGE_RULES) for st in model.stages]
    d["time_steps"] = _plain(model.time_steps, _TIME_STEP_RULES)
    d["probes"] = [_plain(pr, _PROBE_RULES) for pr in model.probes]
    d["lines"] = [_plain(ln, _LINE_RULES) for ln in model.lines]
    d["output"] = _plain(model.output, _OUTPUT_RULES)
    d["limits"] = _plain(model.limits, _LIMIT_RULES) or []
    d["structures"] = [_plain(s, _STRUCTURE_RULES) for s in model.structures]
    if model.stability is not None:
        d["stability"] = _plain(model.stability, _STABILITY_RULES)
    return {k: v for k, v in d.items() if v != []}


def _toml_scalar(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        out = ['"']
        for ch in v:
            if ch in '"\\':
                out.append("\\" + ch)
            elif ch in "\b\t\n\f\r":
                out.append({"\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f",
                            "\r": "\\r"}[ch])
            elif ord(ch) < 0x20 or ord(ch) == 0x7F:
                out.append(f"\\u{ord(ch):04X}")
            else:
                out.append(ch)
        return "".join(out) + '"'
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_scalar(x) for x in v) + "]"
    raise TypeError(f"cannot write {type(v).__name__} to TOML")


def _is_table_array(v: Any) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def toml_dumps(data: dict[str, Any]) -> str:
    """Write nested dicts, lists and scalars (str, int, float, bool) as TOML text."""
    lines: list[str] = []

    def table(d: dict, prefix: str) -> None:
        for k, v in d.items():
            if not isinstance(v, dict) and not _is_table_array(v):
                lines.append(f"{_key(k)} = {_toml_scalar(v)}")
        for k, v in d.items():
            name = prefix + _key(k)
            if isinstance(v, dict):
                has_scalars = any(not isinstance(x, dict) and not _is_table_array(x)
                                  for x in v.values())
                if has_scalars or not v:
                    lines.extend(["", f"[{name}]"])
                table(v, name + ".")
            elif _is_table_array(v):
                for item in v:
                    lines.extend(["", f"[[{name}]]"])
                    table(item, name + ".")

    table(data, "")
    return "\n".join(lines).lstrip("\n") + "\n"


def dump_toml(model: Model) -> str:
    """The model as a model file (TOML text), every value a plain number in the default unit.

    ``run`` saves this beside the results: a copy of the model as it was read, defaults
    filled in, that :func:`load_model` reads back to the same model.
    """
    head = [f"# {' '.join(str(model.title).split())}",
            "# The model as it was read, every value in the default unit: kN, m, kPa, kN/m3,",
            "# days; permeability in m/day. Written by poroplane; load it with load_model.",
            ""]
    return "\n".join(head) + toml_dumps(model_to_dict(model))
