"""Numbers with units at the edge of the program.

Inside geomgen every number is plain, in the contract's units: mm, g, g/cm^3,
rpm, degrees, N, g*mm, g*mm^2.  A job number may instead be a string with a
unit ("2.5 in", "9.2 oz", "0.284 lb/in^3", "4200 rpm"); pint converts it.
pint is imported only when a string actually appears, so plain-number jobs
start fast.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

from .errors import BadInput

#: internal unit for each kind of quantity (pint spelling)
INTERNAL = {
    "length": "mm",
    "mass": "g",
    "density": "g/cm^3",
    "speed": "rpm",
    "angle": "deg",
    "force": "N",
    "unbalance": "g*mm",
    "inertia": "g*mm^2",
    "dimensionless": "",
    "surface_speed": "m/min",        # cutting data ([machining])
    "feed_rate": "mm/min",
}

#: what to write, per kind, in the messages that refuse a value
EXAMPLES = {
    "length": "2.5 in",
    "mass": "9.2 oz",
    "density": "0.284 lb/in^3",
    "speed": "4200 rpm",
    "angle": "30 deg",
    "force": "400 lbf",
    "unbalance": "12 g*mm",
    "inertia": "5e6 g*mm^2",
    "dimensionless": "0.5",
}

MM_PER_INCH = 25.4
G_PER_LB = 453.59237
N_PER_LBF = 4.4482216152605


_LEADING_NUMBER = re.compile(r"^[-+]?(\d|\.\d|nan|inf)", re.IGNORECASE)


def _speed_rpm(quantity, ureg) -> float:
    """rpm from a shaft speed.  pint counts 1 Hz as 1 rad/s, but in the shop a
    frequency of a shaft (Hz, 1/s, 1/min) counts turns: 70 Hz = 4200 rpm.
    Only a speed written with an angle (rad/s, deg/s) is an angular rate."""
    units = str(quantity.units)
    if any(word in units for word in ("radian", "degree")):
        return float(quantity.to("rad/s").magnitude) * 60.0 / (2.0 * math.pi)
    if any(word in units for word in ("revolution", "turn", "rpm", "rps", "cycle")):
        return float(quantity.to("rpm").magnitude)
    return float(quantity.to("1/minute").magnitude)


@lru_cache(maxsize=1)
def _registry():
    import pint

    ureg = pint.UnitRegistry()
    return ureg


def to_internal(value, kind: str, where: str) -> float:
    """`value` (a number or a unit string) as a float in the internal unit of `kind`.

    where : the key path or option named in the error message.
    Raises BadInput for a non-number, NaN/inf, an unknown unit or a unit of
    the wrong dimension.
    """
    unit = INTERNAL[kind]
    if isinstance(value, bool):
        raise BadInput(f"{where}: expected a number or a string with a unit, got {value!r}")
    if isinstance(value, (int, float)):
        number = float(value)
    elif isinstance(value, str):
        number = _parse(value, unit, kind, where)
    else:
        raise BadInput(f"{where}: expected a number or a string with a unit "
                       f"(e.g. \"{EXAMPLES[kind]}\"), got {type(value).__name__} {value!r}")
    if not math.isfinite(number):
        raise BadInput(f"{where}: must be a finite number, got {value!r}")
    return number


def _article(word: str) -> str:
    return "an" if word[:1] in "aeiou" else "a"


def _parse(text: str, unit: str, kind: str, where: str) -> float:
    # the shop writes products with a middle dot ("12 g·mm"); pint wants "*"
    text = text.strip().replace("\u00b7", "*").replace("\u22c5", "*")
    try:
        return float(text)  # a number written as a string: internal unit
    except ValueError:
        pass
    if not _LEADING_NUMBER.match(text):
        raise BadInput(f"{where}: {text!r} has no number; write e.g. \"{EXAMPLES[kind]}\" or a plain number in "
                       f"{unit or 'plain numbers'}")
    import pint

    ureg = _registry()
    try:
        quantity = ureg.Quantity(text)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError,
            AttributeError, ValueError, TypeError, SyntaxError, AssertionError) as exc:
        raise BadInput(f"{where}: cannot read {text!r} as {_article(kind)} {kind} ({exc}); "
                       f"write a number in {unit or 'plain numbers'} or e.g. \"{EXAMPLES[kind]}\"") from None
    if not isinstance(quantity, ureg.Quantity):
        quantity = ureg.Quantity(float(quantity), "")
    try:
        if kind == "speed":
            return _speed_rpm(quantity, ureg)
        return float(quantity.to(unit).magnitude)
    except pint.errors.DimensionalityError:
        raise BadInput(f"{where}: {text!r} is not a {kind} "
                       f"(has dimension {quantity.dimensionality}; expected something convertible to {unit})") from None
