"""Quantities with units, converted once where the input enters.

A model file may give a value as a bare number (read in the field's default unit) or as a
string with units: ``"1e-9 m/s"``, ``"2 years"``, ``"18 kN/m3"``, ``"0.5 MPa"``, ``"28 deg"``,
``"90 %"``. :func:`to_value` turns either into a plain float in the default unit and checks the
dimension. Everything after loading works in kN, m, kPa, kN/m3, days and m/day.

The parsing is done by pint: it knows hundreds of units and the dimension of each, so a user
may type the unit they have on the lab sheet (cm/s, ft, psi, t/m2, years) and a wrong one
("18 m" for a unit weight) is caught with its dimension named, not silently misread. Importing
pint and building its registry takes about half a second, so the registry is created on the
first string that needs it and ``import solver`` stays fast; bare numbers never touch pint.

Time: pint's ``year`` is the Julian year of 365.25 days and ``month`` is a twelfth of it
(30.4375 days).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

from .errors import InputError

__all__ = ["Kind", "KINDS", "to_value", "registry", "describe_value"]


@dataclass(frozen=True)
class Kind:
    """What a field measures: ``unit`` is the default unit (pint spelling), ``label`` the words
    used in messages, ``shown`` the unit as written in docs and messages, ``example`` a value
    with units a user could type."""
    unit: str
    label: str
    shown: str
    example: str


KINDS: dict[str, Kind] = {
    "length": Kind("m", "a length", "m", '"4.5 m"'),
    "pressure": Kind("kPa", "a pressure (stress)", "kPa", '"150 kPa"'),
    "unit_weight": Kind("kN/m^3", "a unit weight (force per volume)", "kN/m3", '"18 kN/m3"'),
    "permeability": Kind("m/day", "a permeability (a velocity)", "m/day", '"1e-9 m/s"'),
    "time": Kind("day", "a time", "days", '"2 years"'),
    "angle": Kind("degree", "an angle", "degrees", '"28 deg"'),
    "number": Kind("dimensionless", "a plain number", "-", '0.9 or "90 %"'),
    "compressibility": Kind("1/kPa", "a compressibility (1/pressure)", "1/kPa",
                            '"2e-4 1/kPa"'),
    "consolidation_coefficient": Kind("m^2/day", "a coefficient of consolidation (area/time)",
                                      "m2/day", '"3 m2/year"'),
    "line_force": Kind("kN/m", "a force per metre run", "kN/m", '"300 kN/m"'),
    "force": Kind("kN", "a force", "kN", '"500 kN"'),
}

# A value string starts with a number; "kPa" alone or "abc" is not a quantity.
_LEADING_NUMBER = re.compile(
    r"^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?(?=$|[\sA-Za-z%°/*(])")
# "m3", "m2" -> "m**3", "m**2" (a unit name directly followed by its power), as engineers write.
_UNIT_POWER = re.compile(r"\b([A-Za-z_]+)(\d+)\b")
# Powers only on unit names and only small ones, so no string can make pint compute 9**9**9.
_POWER = re.compile(r"(\*\*|\^)")
_SAFE_POWER = re.compile(r"(?<=[A-Za-z_])\s*(\*\*|\^)\s*[-+]?\d{1,2}(?![\d.]|\s*(\*\*|\^))")
_MAX_LENGTH = 100


def _unit_powers(text: str) -> str:
    return _UNIT_POWER.sub(r"\1**\2", text)


@lru_cache(maxsize=1)
def registry():
    """The one shared pint UnitRegistry, created on first use (pint is slow to import)."""
    import pint
    return pint.UnitRegistry(preprocessors=[_unit_powers])


def describe_value(value) -> str:
    """A few words naming the TOML type of ``value``, for messages."""
    if isinstance(value, bool):
        return f"{str(value).lower()} (true/false)"
    if isinstance(value, str):
        return f"the text {value!r}"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, (int, float)):
        return repr(value)
    return f"{type(value).__name__} {value!s}"


def _error(message: str, field: str | None, source: str | None, kind: Kind,
           extra: str = "", example: str | None = None) -> InputError:
    key = field.rsplit(".", 1)[-1] if field else "value"
    entry = re.fullmatch(r"(.+)\[\d+\]", key)
    if kind.unit == "dimensionless":
        fix = f"write a plain number, as in {example}" if example else \
            f"write {key} = {kind.example.split(' or ')[0]} (a plain number)"
    elif entry:
        fix = (f"give each entry of {entry.group(1)} as a bare number in {kind.shown} or "
               f"with units, such as {kind.example}")
    elif example and '"' in example:
        fix = f"write a value with units, as in {example}, or a bare number in {kind.shown}"
    else:
        fix = (f"write a bare number in {kind.shown}"
               + (f", as in {example}," if example else "")
               + f" or a value with units, such as {key} = {kind.example}")
    return InputError(message, field=field, source=source, fix=(extra + fix + "."))


def _dimension_words(q) -> str:
    """Name what a parsed quantity measures, by matching it against the known kinds."""
    ureg = registry()
    for name, k in KINDS.items():
        if name in ("number", "angle"):
            continue
        if q.dimensionality == ureg.Quantity(1, k.unit).dimensionality:
            return k.label
    if q.dimensionality == ureg.Quantity(1, "t/m^3").dimensionality:
        return "a density (mass per volume)"
    if q.dimensionless:
        return "an angle" if _is_angle(q) else "a plain number"
    return f"of dimension {q.dimensionality}"


def _is_angle(q) -> bool:
    ureg = registry()
    return str(ureg.get_root_units(q.units)[1]) == "radian"


def to_value(value, kind: str, *, field: str | None = None, source: str | None = None,
             example: str | None = None) -> float:
    """Convert a bare number or a string with units to a float in the default unit of ``kind``.

    Parameters
    ----------
    value : int, float, str, or a pint Quantity. Bare numbers are taken in the default unit
        (``KINDS[kind].shown``); strings are parsed with units, e.g. ``"1e-9 m/s"``.
    kind : a key of :data:`KINDS` ("length", "pressure", "unit_weight", "permeability", "time",
        "angle", "number", "compressibility", "consolidation_coefficient", "line_force",
        "force").
    field, source : TOML path and file, named in the message if the value is bad.
    example : the field as a user would write it (``'thickness = 4.0'``), quoted in the fix.

    Returns
    -------
    float, finite, in the default unit.

    Raises
    ------
    InputError : wrong type, unreadable string, wrong dimension, or not finite.

    Examples
    --------
    >>> to_value("1e-9 m/s", "permeability")   # doctest: +ELLIPSIS
    8.64e-05...
    >>> to_value("2 years", "time")
    730.5
    """
    k = KINDS[kind]
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        if hasattr(value, "magnitude") and hasattr(value, "to"):   # a pint Quantity
            return _from_quantity(value, value, k, field, source, example)
        raise _error(f"expected {k.label}, got {describe_value(value)}", field, source, k,
                     example=example)
    if isinstance(value, str):
        return _from_text(value, k, field, source, example)
    try:
        v = float(value)
    except OverflowError:
        v = math.inf
    if not math.isfinite(v):
        raise _error(f"expected a finite number, got {value!r}", field, source, k,
                     example=example)
    return v


def _from_text(text: str, k: Kind, field, source, example=None) -> float:
    shown = text if len(text) <= 40 else text[:37] + "..."
    if "," in text:
        raise _error(f"could not read {shown!r}: a comma is not a decimal mark here", field,
                     source, k, "use a point for decimals and no thousands separator; ",
                     example=example)
    if len(text) > _MAX_LENGTH or not _LEADING_NUMBER.match(text):
        raise _error(f"could not read {shown!r} as {k.label}: a value starts with a number, "
                     f"then an optional unit", field, source, k, example=example)
    if len(_POWER.findall(text)) != len(_SAFE_POWER.findall(text)):
        raise _error(f"could not read {text!r}: powers are allowed only on units (m^3, m3)",
                     field, source, k, "write the number in e-notation, e.g. 1e-9; ",
                     example=example)
    ureg = registry()
    try:
        q = ureg.parse_expression(text)
    except Exception as exc:  # pint raises many kinds (undefined unit, syntax, arithmetic)
        reason = str(exc).split("\n")[0]
        if type(exc).__name__ == "UndefinedUnitError":
            reason = f"unknown unit ({reason})"
        raise _error(f"could not read {text!r} as {k.label}: {reason}", field, source,
                     k, example=example) from None
    return _from_quantity(q, text, k, field, source, example)


def _from_quantity(q, given, k: Kind, field, source, example=None) -> float:
    ureg = registry()
    if not isinstance(q, ureg.Quantity):
        if not hasattr(q, "units"):           # a plain number from an expression like "150"
            return _finite(float(q), given, k, field, source, example)
        q = ureg.Quantity(q.magnitude, str(q.units))
    if str(q.units) == "dimensionless":
        # A bare number written as text ("150") is in the default unit, as a bare number is.
        return _finite(float(q.magnitude), given, k, field, source, example)
    target = ureg.Quantity(1, k.unit)
    ok = q.dimensionality == target.dimensionality
    if ok and k.unit == "degree":
        ok = _is_angle(q)           # "90 %" is dimensionless but not an angle
    elif ok and k.unit == "dimensionless":
        ok = not _is_angle(q)       # "28 deg" is not a fraction
    if not ok:
        extra = ""
        if q.dimensionality == ureg.Quantity(1, "t/m^3").dimensionality and \
                k.unit == "kN/m^3":
            extra = "a unit weight is a force per volume: multiply a density in t/m3 by 9.81; "
        raise _error(f"expected {k.label}, got {given!r}, which is {_dimension_words(q)}",
                     field, source, k, extra, example=example)
    try:
        v = float(q.to(k.unit).magnitude)
    except Exception as exc:        # e.g. offset units; rare
        raise _error(f"could not convert {given!r} to {k.shown}: {exc}", field, source,
                     k, example=example) from None
    return _finite(v, given, k, field, source, example)


def _finite(v: float, given, k: Kind, field, source, example=None) -> float:
    if not math.isfinite(v):
        raise _error(f"expected a finite value, got {given!r}", field, source, k,
                     example=example)
    return v
