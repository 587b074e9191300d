"""Field paths and values: TOML keys and paths as named in messages, and the reader that
converts one field's value (with units) and checks it against its rule."""

from __future__ import annotations

import difflib
import math
import re
from typing import Any

from ..errors import InputError
from ..units import KINDS, describe_value, to_value
from .rules import _Rule

_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


def _key(name: str) -> str:
    """A TOML key as written in a file: bare when it can be, else quoted."""
    return name if _BARE_KEY.fullmatch(name) else '"' + name.replace('"', '\\"') + '"'


def _join(path: str, key: str) -> str:
    return f"{path}.{_key(key)}" if path else _key(key)


def _suggest(word: str, choices) -> str | None:
    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return close[0] if close else None


def _where(path: str) -> str:
    """How a table is named in a fix: [water], this [[layers]] table, the top level."""
    if not path:
        return "the top level"
    if path.endswith("]"):
        return f"this [[{path.rsplit('[', 1)[0]}]] table"
    return f"[{path}]"


def _canonical(value: Any, choices: tuple[str, ...]) -> Any:
    """Accept a choice whatever its case and separators: "Plane_Strain" -> "plane strain"."""
    if isinstance(value, str):
        plain = " ".join(value.replace("_", " ").replace("-", " ").lower().split())
        if plain in choices:
            return plain
    return value


def _kind_of(rule: _Rule) -> str:
    return rule.kind.split(":", 1)[1] if rule.kind.startswith("list:") else rule.kind


class _Reader:
    """Reads tables into field values; every failure is an InputError naming ``source``."""

    def __init__(self, source: str | None):
        self.source = source

    def fail(self, message: str, path: str | None, fix: str) -> None:
        raise InputError(message, field=path or None, source=self.source, fix=fix)

    # ------------------------------------------------------------ structure
    def table(self, value: Any, path: str, example: str) -> dict:
        if not isinstance(value, dict):
            self.fail(f"expected a table, got {describe_value(value)}", path,
                      f"write it as a table: [{path}] followed by lines such as {example}.")
        return value

    def tables(self, value: Any, path: str, example: str) -> list[dict]:
        if isinstance(value, dict):
            self.fail("expected an array of tables, got a single table", path,
                      f"write each entry under its own [[{path}]] header (double brackets).")
        if not isinstance(value, list):
            self.fail(f"expected an array of tables, got {describe_value(value)}", path,
                      f"write each entry as [[{path}]] followed by lines such as {example}.")
        for i, item in enumerate(value):
            if not isinstance(item, dict):
                self.fail(f"expected a table, got {describe_value(item)}", f"{path}[{i + 1}]",
                          f"write each entry as [[{path}]] followed by lines such as "
                          f"{example}.")
        return value

    def read(self, data: dict, path: str, rules: dict[str, _Rule], nested: tuple = (),
             kinds: dict[str, str] | None = None) -> dict[str, Any]:
        """Convert the known keys of ``data``; an unknown key is an error naming the nearest."""
        known = list(rules) + list(nested)
        for key in data:
            if key not in known:
                best = _suggest(key, known)
                fix = (f"did you mean {best!r}? Rename it." if best else
                       f"remove it; the fields of {_where(path)} are: {', '.join(known)}.")
                self.fail(f"unknown field {key!r}", _join(path, key), fix)
        out = {}
        for key, rule in rules.items():
            if key in data:
                kind = (kinds or {}).get(key)
                out[rule.attr or key] = self.value(data[key], _join(path, key), rule, kind)
        return out

    def require(self, data: dict, path: str, rules: dict[str, _Rule], keys) -> None:
        for key in keys:
            if key not in data:
                self.fail(f"missing required field {key!r}", _join(path, key),
                          f"add {rules[key].example} to {_where(path)}.")

    # ------------------------------------------------------------ values
    def value(self, value: Any, path: str, rule: _Rule, kind: str | None = None) -> Any:
        kind = kind or rule.kind
        if kind == "text":
            if not isinstance(value, str) or not value.strip():
                self.fail(f"expected a non-empty text, got {describe_value(value)}", path,
                          f"write {rule.example} (in quotes).")
            return value
        if kind == "bool":
            if not isinstance(value, bool):
                self.fail(f"expected true or false, got {describe_value(value)}", path,
                          f"write {rule.example} (no quotes).")
            return value
        if kind == "choice":
            value = _canonical(value, rule.choices)
            if not isinstance(value, str) or value not in rule.choices:
                best = _suggest(value, rule.choices) if isinstance(value, str) else None
                hint = f"did you mean {best!r}? " if best else ""
                self.fail(f"expected one of {', '.join(map(repr, rule.choices))}, got "
                          f"{describe_value(value)}", path, f"{hint}write {rule.example}.")
            return value
        if kind == "texts":
            items = [value] if isinstance(value, str) else value
            if not isinstance(items, list) or not all(isinstance(s, str) and s.strip()
                                                      for s in items):
                self.fail(f"expected a list of names, got {describe_value(value)}", path,
                          f"write {rule.example}.")
            return list(items)
        if kind == "int":
            ok = isinstance(value, int) and not isinstance(value, bool)
            if isinstance(value, float) and math.isfinite(value) and value == int(value):
                value, ok = int(value), True
            if not ok:
                self.fail(f"expected a whole number, got {describe_value(value)}", path,
                          f"write {rule.example}.")
            self.check_range(value, path, rule)
            return value
        if kind.startswith("list:"):
            if not isinstance(value, list):
                self.fail(f"expected a list, got {describe_value(value)}", path,
                          f"write {rule.example}.")
            unit_kind = kind.split(":", 1)[1]
            out = []
            for i, item in enumerate(value):
                p = f"{path}[{i + 1}]"
                out.append(to_value(item, unit_kind, field=p, source=self.source))
                self.check_range(out[-1], p, rule)
            return out
        v = to_value(value, kind, field=path, source=self.source, example=rule.example)
        self.check_range(v, path, rule)
        return v

    def check_range(self, v: float, path: str, rule: _Rule) -> None:
        if rule.violates(v):
            unit = KINDS[_kind_of(rule)].shown if _kind_of(rule) in KINDS else ""
            unit = "" if unit in ("", "-") else f" {unit}"
            self.fail(f"{path.rsplit('.', 1)[-1]} {rule.bounds_text()}, got {v:g}{unit}", path,
                      (rule.fix or f"write, e.g., {rule.example}") + ".")
