"""Quantities typed by the user: parse ``12 lbf/in`` with pint, show values in the display system.

The model always holds SI (kg, m, N/m, N s/m, kg m^2, N m/rad). The display unit system (``"SI"`` or
``"US"`` customary) is a preference only: it decides which unit a value is shown in and which unit a
plain number typed without a unit is taken to be in.

Display factors are written out from the exact definitions (1 in = 0.0254 m, 1 lb = 0.45359237 kg,
1 lbf = 4.4482216152605 N; NIST SP 811, appendix B) so that showing a value does not need pint,
whose registry takes most of a second to build; pint is loaded on the first parse, and the tests
check these factors against pint's own conversions.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

SYSTEMS = ("SI", "US")

_IN = 0.0254  # m, exact
_LB = 0.45359237  # kg, exact
_LBF = 4.4482216152605  # N, exact (lb x standard gravity 9.80665 m/s^2)


class UnitError(ValueError):
    """Text that is not a usable quantity; the message says why and what would do."""


@dataclass(frozen=True)
class QuantityKind:
    """What a field holds: its SI unit and, per display system, the unit shown and its SI factor.

    ``display[system] = (label shown, pint unit text, SI value of one display unit)``.
    """

    name: str
    si_pint: str
    display: dict
    example: str
    nonnegative: bool = False
    positive: bool = False
    #: For a rate of turning or cycling (shaft speed, frequency): the pint units the value is
    #: taken in when the typed unit names an angle (``rpm``, ``rad/s``, ``turn/s``) and when it
    #: does not (``Hz``, ``1/min``). pint counts a radian as 1, so ``Hz`` to ``rpm`` would come out
    #: 2 pi too small; the trade reads a bare Hz or 1/min of a shaft as revolutions.
    cyclic: tuple[str, str] | None = None

    def factor(self, system: str) -> float:
        return self.display[system][2]

    def label(self, system: str) -> str:
        return self.display[system][0]


def _k(name, si_pint, si, us, example, **kw) -> QuantityKind:
    return QuantityKind(name, si_pint, {"SI": si, "US": us}, example, **kw)


KINDS: dict[str, QuantityKind] = {
    "mass": _k("mass", "kg", ("kg", "kg", 1.0), ("lb", "lb", _LB), "20 lb or 9 kg",
               nonnegative=True),
    "inertia": _k("inertia", "kg*m**2", ("kg m²", "kg*m**2", 1.0),
                  ("lb in²", "lb*in**2", _LB * _IN ** 2), "0.4 kg m^2", nonnegative=True),
    "stiffness": _k("stiffness", "N/m", ("N/m", "N/m", 1.0), ("lbf/in", "lbf/in", _LBF / _IN),
                    "12 lbf/in or 3.5 kN/mm", positive=True),
    "transverse stiffness": _k("stiffness", "N/m", ("N/m", "N/m", 1.0),
                               ("lbf/in", "lbf/in", _LBF / _IN), "0 or 2 kN/mm",
                               nonnegative=True),
    "torsional stiffness": _k("torsional stiffness", "N*m/rad", ("N m/rad", "N*m/rad", 1.0),
                              ("lbf in/rad", "lbf*in/rad", _LBF * _IN), "500 N m/rad",
                              positive=True),
    "damping": _k("damping coefficient", "N*s/m", ("N s/m", "N*s/m", 1.0),
                  ("lbf s/in", "lbf*s/in", _LBF / _IN), "50 N s/m", nonnegative=True),
    "torsional damping": _k("torsional damping", "N*m*s/rad", ("N m s/rad", "N*m*s/rad", 1.0),
                            ("lbf in s/rad", "lbf*in*s/rad", _LBF * _IN), "2 N m s/rad",
                            nonnegative=True),
    "length": _k("length", "m", ("m", "m", 1.0), ("in", "in", _IN), "0.25 m or 10 in"),
    "velocity": _k("velocity", "m/s", ("m/s", "m/s", 1.0), ("in/s", "in/s", _IN),
                   "0.1 m/s or 4 in/s"),
    "angle": _k("angle", "rad", ("rad", "rad", 1.0), ("rad", "rad", 1.0), "0.01 rad or 1 deg"),
    "angular velocity": _k("angular velocity", "rad/s", ("rad/s", "rad/s", 1.0),
                           ("rad/s", "rad/s", 1.0), "1 rad/s"),
    # the model keeps shaft speeds in rev/min and frequencies in Hz (cycles per second)
    "shaft speed": _k("shaft speed", "turn/min", ("rpm", "turn/min", 1.0),
                      ("rpm", "turn/min", 1.0), "1450 rpm, 24.2 Hz or 152 rad/s", positive=True,
                      cyclic=("turn/min", "1/min")),
    "frequency": _k("frequency", "turn/s", ("Hz", "turn/s", 1.0), ("Hz", "turn/s", 1.0),
                    "50 Hz or 3000 rpm", nonnegative=True, cyclic=("turn/s", "1/s")),
    # response per unit force or torque (shown, never typed)
    "receptance": _k("receptance", "m/N", ("m/N", "m/N", 1.0), ("in/lbf", "in/lbf", _IN / _LBF),
                     "1e-6 m/N"),
    "mobility": _k("mobility", "m/s/N", ("m/s/N", "m/s/N", 1.0),
                   ("in/s/lbf", "in/s/lbf", _IN / _LBF), "1e-3 m/s/N"),
    "accelerance": _k("accelerance", "m/s**2/N", ("m/s²/N", "m/s**2/N", 1.0),
                      ("in/s²/lbf", "in/s**2/lbf", _IN / _LBF), "0.1 m/s^2/N"),
    "torsional receptance": _k("torsional receptance", "rad/(N*m)", ("rad/(N m)", "rad/(N*m)", 1.0),
                               ("rad/(lbf in)", "rad/(lbf*in)", 1.0 / (_LBF * _IN)),
                               "1e-4 rad/(N m)"),
    "torsional mobility": _k("torsional mobility", "rad/s/(N*m)",
                             ("rad/s/(N m)", "rad/s/(N*m)", 1.0),
                             ("rad/s/(lbf in)", "rad/s/(lbf*in)", 1.0 / (_LBF * _IN)),
                             "1e-2 rad/s/(N m)"),
    "torsional accelerance": _k("torsional accelerance", "rad/s**2/(N*m)",
                                ("rad/s²/(N m)", "rad/s**2/(N*m)", 1.0),
                                ("rad/s²/(lbf in)", "rad/s**2/(lbf*in)", 1.0 / (_LBF * _IN)),
                                "1 rad/s^2/(N m)"),
}


@lru_cache(maxsize=1)
def registry():
    """pint's unit registry, built on first use (about 0.8 s)."""
    import pint

    return pint.UnitRegistry()


_NUMBER = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$")


def parse(text: str, kind: str, system: str = "SI") -> float:
    """The SI value of ``text`` for a field of ``kind``.

    A plain number is in the display unit of ``system``; otherwise pint parses the text
    (``12 lbf/in``, ``3.5 kN/mm``, ``0.4 kg m^2``). Raises :class:`UnitError` with a reason a user
    can act on: not a number, wrong kind of unit, not finite, negative where not allowed.
    """
    qk = KINDS[kind]
    s = (text or "").strip()
    if not s:
        raise UnitError(f"enter a {qk.name}, e.g. {qk.example}")
    if _NUMBER.match(s):
        value = float(s) * qk.factor(system)
    else:
        value = _parse_with_pint(s, qk)
    if not math.isfinite(value):
        raise UnitError(f"{qk.name} must be a finite number, got {s!r}")
    if qk.positive and value <= 0:
        raise UnitError(f"{qk.name} must be positive, got {s}")
    if qk.nonnegative and value < 0:
        raise UnitError(f"{qk.name} must be zero or positive, got {s}")
    return value


def _parse_with_pint(s: str, qk: QuantityKind) -> float:
    import pint

    import re

    ureg = registry()
    if re.search(r"\d,\d", s):
        raise UnitError(f"cannot read {s!r}: use a decimal point (1.5, not 1,5); try {qk.example}")
    if re.fullmatch(r"[+-]?(nan|inf|infinity)(\s.*)?", s, re.I):
        raise UnitError(f"{qk.name} must be a finite number, got {s!r}")
    if qk.cyclic:
        s = re.sub(r"\brev\b", "turn", s)   # "1450 rev/min": pint knows turn, revolution
    try:
        q = ureg.Quantity(s.replace("²", "^2").replace("·", " "))
    except pint.errors.UndefinedUnitError as exc:
        names = ", ".join(repr(n) for n in (exc.unit_names if isinstance(exc.unit_names, (list, tuple))
                                            else [exc.unit_names]))
        raise UnitError(f"cannot read {s!r}: {names} is not a unit; try {qk.example}") from None
    except Exception as exc:  # pint's parser raises many types for odd text; all mean "unreadable"
        reason = str(exc).splitlines()[0] if str(exc) else "not a quantity"
        raise UnitError(f"cannot read {s!r} as a {qk.name} ({reason}); try {qk.example}") from None
    if not isinstance(q, ureg.Quantity):
        raise UnitError(f"cannot read {s!r} as a {qk.name}; try {qk.example}")
    if q.dimensionless and qk.si_pint not in ("rad", "rad/s"):
        # e.g. "12 percent": a bare ratio is not a physical quantity of this field
        raise UnitError(f"{s!r} has no {qk.name} unit; try {qk.example}")
    try:
        if qk.cyclic:
            angle = "radian" in str(ureg.get_root_units(q.units)[1])
            return float(q.to(qk.cyclic[0] if angle else qk.cyclic[1]).magnitude)
        return float(q.to(qk.si_pint).magnitude)
    except pint.errors.DimensionalityError:
        raise UnitError(f"{s!r} is not a {qk.name} (its units are {q.units:~P}); try"
                        f" {qk.example}") from None


def to_display(value_si: float, kind: str, system: str = "SI") -> float:
    """The value in the display unit of ``system``."""
    return value_si / KINDS[kind].factor(system)


def format_value(value_si: float, kind: str, system: str = "SI", digits: int = 6) -> str:
    """Text for a field: the value in the display unit with the unit, e.g. ``12 lbf/in``
    (the shared number format, :func:`app.text.numbers.quantity`)."""
    from app.text.numbers import quantity

    qk = KINDS[kind]
    return quantity(value_si / qk.factor(system), qk.label(system), digits)


def show(value_si: float, kind: str, system: str = "SI", sig: int | None = None) -> str:
    """A value for reading (panels, messages): display unit, the shared significant digits."""
    from app.text.numbers import SIG

    return format_value(value_si, kind, system, SIG if sig is None else sig)


def count(n: int, one: str, many: str | None = None) -> str:
    """``1 mass``, ``3 masses``: a count with its noun, for display."""
    return f"{n} {one if n == 1 else (many or one + 's')}"


def unit_label(kind: str, system: str = "SI") -> str:
    return KINDS[kind].label(system)
