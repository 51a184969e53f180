"""The lumped model: plain immutable data.

A :class:`Model` is a frozen dataclass made of tuples of frozen element dataclasses. An edit makes a
new Model (``dataclasses.replace`` or :meth:`Model.with_changes`); constructing one validates it, so an
invalid Model cannot exist and a refused edit leaves the old one untouched.

Units are SI throughout: kg, m, N/m, N s/m; in a torsion model a disc's ``mass`` field holds its
polar inertia in kg m^2 and a spring's ``k`` its torsional stiffness in N m/rad.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields, replace
from functools import cached_property
from typing import Iterable, Mapping

from .errors import ModelError, is_number, shown
from .naming import named, quoted

KINDS = ("line", "planar", "torsion")
AXES = ("x", "y")
DIRECTIONS = ("x", "y", "theta")
DAMPING_MODELS = ("none", "modal", "rayleigh")
EXCITATION_TYPES = ("speed", "band")
#: Distributions a tolerance may name (see :class:`Tolerance`).
TOLERANCE_DISTRIBUTIONS = ("uniform", "normal", "triangular")

#: Most elements (masses, anchors, springs, dashpots, excitations together) a model may have:
#: ten times the largest model the sparse solver is benchmarked on, small enough that a model
#: file stays within the load limit and loads in seconds.
MAX_ELEMENTS = 200_000
#: Longest id and longest label or model name, in characters.
ID_MAX, TEXT_MAX = 200, 1000
#: Most orders one speed excitation may list.
ORDERS_MAX = 100
#: Highest mode number a per-mode damping ratio may name (six digits in the file).
MODE_MAX = 999_999


def directions_for(kind: str, axis: str = "x") -> tuple[str, ...]:
    """Directions a mass can move in for a model kind (``x``/``y`` on a line, both in a plane)."""
    if kind == "line":
        return (axis,)
    if kind == "planar":
        return ("x", "y")
    if kind == "torsion":
        return ("theta",)
    raise ModelError(f'model: kind must be one of {", ".join(KINDS)}, got "{kind}"')


def _finite(owner: str, name: str, value, unit: str = "", field: str | None = None) -> float:
    """``float(value)``; a ModelError for text, bool, None, NaN, inf or a number beyond a double.

    ``field`` is the value's key in the model file, kept in the error's ``path``.
    """
    if type(value) is float and -math.inf < value < math.inf:   # the common case, fast
        return value
    path = (field or name,)
    if not is_number(value):
        raise ModelError(f"{owner}: {name} must be a number, got {shown(value)}", path)
    try:
        v = float(value)
    except (TypeError, ValueError, OverflowError):   # an int past 1.8e308
        v = math.inf
    if not math.isfinite(v):
        raise ModelError(f"{owner}: {name} must be a finite number{unit}, got {shown(value)}",
                         path)
    return v


#: Magnitudes a physical value may take (besides 0): far wider than any real mass, stiffness,
#: damping or frequency, narrow enough that squares and products stay finite in double precision.
TINY, HUGE = 1e-30, 1e30


def _in_range(owner: str, name: str, v: float, unit: str, field: str | None = None,
              zero: bool = True) -> float:
    """``v`` when 0 (``zero``: allowed) or TINY <= |v| <= HUGE; a ModelError saying the range."""
    if v != 0 and not (TINY <= abs(v) <= HUGE):
        raise ModelError(f"{owner}: {name} = {v!r} {unit} is outside the range a model can be"
                         f" solved in ({TINY:g} to {HUGE:g} {unit}{', or 0' if zero else ''})",
                         (field or name,))
    return v


def _capped(owner: str, name: str, v: float, unit: str, field: str | None = None) -> float:
    # a rate, ratio or frequency may be as small as it likes, but beyond HUGE its products with
    # frequencies and masses leave double precision
    if v > HUGE:
        raise ModelError(f"{owner}: {name} = {v!r} {unit} is above the largest value a model"
                         f" can be solved with ({HUGE:g} {unit})", (field or name,))
    return v


def _nonneg(owner: str, name: str, value, unit: str, ranged: bool | str = False,
            field: str | None = None) -> float:
    """A value >= 0; ``ranged=True`` also keeps it in TINY..HUGE (or 0), "capped" below HUGE."""
    if type(value) is float and (TINY <= value <= HUGE or value == 0.0):   # fast path
        return value
    v = _finite(owner, name, value, f" in {unit}", field)
    if v < 0:
        raise ModelError(f"{owner}: {name} must be zero or positive, got {_fmt(v)} {unit}",
                         (field or name,))
    if ranged == "capped":
        return _capped(owner, name, v, unit, field)
    return _in_range(owner, name, v, unit, field) if ranged else v


def _positive(owner: str, name: str, value, unit: str, ranged: bool | str = False,
              field: str | None = None) -> float:
    """A value > 0; ``ranged`` as for :func:`_nonneg`."""
    if type(value) is float and TINY <= value <= HUGE:   # fast path
        return value
    v = _finite(owner, name, value, f" in {unit}", field)
    if v <= 0:
        raise ModelError(f"{owner}: {name} must be positive, got {_fmt(v)} {unit}",
                         (field or name,))
    if ranged == "capped":
        return _capped(owner, name, v, unit, field)
    return _in_range(owner, name, v, unit, field, zero=False) if ranged else v


def _coordinate(owner: str, name: str, value, unit: str = "m") -> float:
    """A position or an initial value: finite and at most HUGE in size (differences and squares
    of positions give lengths and direction cosines, which must stay finite)."""
    if type(value) is float and -HUGE <= value <= HUGE:   # fast path
        return value
    v = _finite(owner, name, value, f" in {unit}")
    if abs(v) > HUGE:
        raise ModelError(f"{owner}: {name} = {v!r} {unit} is outside the range a model can be"
                         f" solved in (-{HUGE:g} to {HUGE:g} {unit})", (name,))
    return v


def _fmt(v: float) -> str:
    return f"{v:.6g}"


def _a(word: str) -> str:
    """``a mass``, ``an anchor``, ``an excitation``."""
    return ("an " if word[:1] in "aeiou" else "a ") + word


def _check_id(kind: str, value, field: str = "id") -> str:
    """An id: non-empty printable text (no line breaks, control characters or lone surrogates,
    which would break messages, tables and the file) of at most ID_MAX characters."""
    what = "id" if field == "id" else "the id"
    if not isinstance(value, str) or not value.strip():
        raise ModelError(f"{kind}: {what} must be a non-empty text, got {shown(value)}", (field,))
    if len(value) > ID_MAX:
        raise ModelError(f"{kind}: {what} has {len(value)} characters; at most {ID_MAX} are"
                         " allowed", (field,))
    if not value.isprintable():
        raise ModelError(f"{kind}: {what} must be printable text (no line breaks or control"
                         f" characters), got {shown(value)}", (field,))
    return value


def _text(owner: str, name: str, value, default: str) -> str:
    """A label or model name: text of at most TEXT_MAX characters that UTF-8 can encode (a lone
    surrogate, which JSON's \\ud800 escape can produce, cannot be saved); "" or None gives
    ``default``."""
    if value is None or value == "":
        return default
    if not isinstance(value, str):
        raise ModelError(f"{owner}: {name} must be a text, got {shown(value)}", (name,))
    if len(value) > TEXT_MAX:
        raise ModelError(f"{owner}: {name} has {len(value)} characters; at most {TEXT_MAX} are"
                         " allowed", (name,))
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise ModelError(f"{owner}: {name} holds a lone surrogate (U+{ord(value[exc.start]):04X}"
                         f" at character {exc.start + 1}), which is not text", (name,)) from None
    return value


def _items(owner: str, name: str, value) -> tuple:
    """A tuple of a list or tuple field; text and other single values are refused."""
    if type(value) is tuple:
        return value
    if isinstance(value, (str, bytes)) or not isinstance(value, Iterable):
        raise ModelError(f"{owner}: {name} must be a list, got {shown(value)}", (name,))
    return tuple(value)


_set = object.__setattr__   # frozen dataclasses set their checked fields through this

_ORIGIN = (0.0, 0.0)


def _offset(owner: str, name: str, value) -> tuple[float, float]:
    """An attachment offset ``(dx, dy)`` in metres: two finite numbers of at most HUGE."""
    if value == _ORIGIN and type(value) is tuple and type(value[0]) is float and \
            type(value[1]) is float:
        return value   # the common case, fast
    if isinstance(value, (str, bytes)) or not isinstance(value, Iterable):
        raise ModelError(f"{owner}: {name} must be a pair [dx, dy] in m, got {shown(value)}",
                         (name,))
    items = tuple(value)
    if len(items) != 2:
        raise ModelError(f"{owner}: {name} must be a pair [dx, dy] in m, got {shown(value)}",
                         (name,))
    out = []
    for i, v in enumerate(items):
        try:
            out.append(_coordinate(owner, f"{name} {'xy'[i]}", v))
        except ModelError as exc:
            raise ModelError(str(exc), (name, i)) from None
    return (out[0], out[1])


@dataclass(frozen=True)
class Tolerance:
    """A manufacturing tolerance on one element's physical value, for a tolerance study.

    ``percent`` (0 < percent < 100) is the bound: the value lies within nominal x (1 +- percent/100).
    ``distribution`` says how values spread inside that bound:

    - ``"uniform"``: every value in the bound equally likely;
    - ``"triangular"``: symmetric, most likely at nominal, zero at the bounds;
    - ``"normal"``: a normal distribution whose 3-sigma is the bound (sigma = percent / 3),
      truncated at the bound, so a stiffness or mass never goes negative (a truncated normal
      at +-3 sigma drops 0.27 % of the tail).

    Which value it scatters: a spring's k (and k_t with the same factor), a dashpot's c, a
    mass's mass (and a rigid body's inertia with the same factor).
    """

    percent: float
    distribution: str = "uniform"

    def __post_init__(self):
        p = _finite("tolerance", "percent", self.percent, " in %")
        if not 0 < p < 100:
            raise ModelError(f"tolerance: percent must be above 0 and below 100 (the bound"
                             f" +-percent of the nominal value), got {_fmt(p)} %", ("percent",))
        _set(self, "percent", p)
        if not isinstance(self.distribution, str) or \
                self.distribution not in TOLERANCE_DISTRIBUTIONS:
            raise ModelError(f"tolerance: distribution must be one of"
                             f" {', '.join(TOLERANCE_DISTRIBUTIONS)}, got"
                             f" {shown(self.distribution)}", ("distribution",))


def _tolerance(owner: str, value) -> "Tolerance | None":
    """None, or a :class:`Tolerance` (given as one or as a mapping with ``percent`` and an
    optional ``distribution``); a refusal names the element."""
    if value is None or isinstance(value, Tolerance):
        return value
    if not isinstance(value, Mapping) or "percent" not in value or \
            set(value) - {"percent", "distribution"}:
        raise ModelError(f'{owner}: tolerance must be {{"percent": p, "distribution":'
                         f' "uniform" | "normal" | "triangular"}}, got {shown(value)}',
                         ("tolerance",))
    try:
        return Tolerance(value["percent"], value.get("distribution", "uniform"))
    except ModelError as exc:
        text = str(exc).replace("tolerance: ", "tolerance ", 1)
        raise ModelError(f"{owner}: {text}", ("tolerance",) + exc.path) from None


@dataclass(frozen=True)
class Mass:
    """A lumped mass (or, in a torsion model, a disc), or in a planar model a rigid body.

    ``mass`` is in kg (kg m^2 for a torsion disc); zero makes the node a massless junction, condensed
    out of the eigenproblem and its motion recovered. ``fixed`` lists locked directions.

    ``inertia`` is the rotary inertia about the mass's centre in kg m^2, planar models only: a
    value > 0 makes the mass a rigid body with a third DOF ``theta`` (radians, counter-clockwise),
    and springs and dashpots may then attach to it at points off its centre (their
    ``a_offset``/``b_offset``). A body needs a mass > 0 too. In a torsion model a disc's inertia
    is held in ``mass`` (the file's key ``"inertia"``) and this field stays 0.
    """

    id: str
    x: float
    y: float
    mass: float
    label: str = ""
    fixed: tuple[str, ...] = ()
    inertia: float = 0.0
    tolerance: Tolerance | None = None

    def __post_init__(self):
        _check_id("mass", self.id)
        # the label is checked under the id alone; every later message names the label too
        _set(self, "label", _text(f'mass "{self.id}"', "label", self.label, self.id))
        owner = f"mass {quoted(self.id, self.label)}"
        _set(self, "x", _coordinate(owner, "x", self.x))
        _set(self, "y", _coordinate(owner, "y", self.y))
        _set(self, "mass", _nonneg(owner, "mass", self.mass, "kg (kg m^2 for a disc)",
                                       ranged=True))
        fixed = _items(owner, "fixed", self.fixed)
        for i, d in enumerate(fixed):
            if not isinstance(d, str) or d not in DIRECTIONS:
                raise ModelError(f"{owner}: fixed direction must be one of x, y, theta, got"
                                 f" {shown(d)}", ("fixed", i))
        if len(set(fixed)) != len(fixed):
            raise ModelError(f"{owner}: fixed lists a direction twice: {list(fixed)}", ("fixed",))
        _set(self, "fixed", fixed)
        if self.inertia != 0.0 or type(self.inertia) is not float:
            _set(self, "inertia", _nonneg(owner, "inertia", self.inertia, "kg m^2",
                                          ranged=True))
            if self.inertia > 0 and self.mass == 0:
                raise ModelError(f"{owner}: inertia = {_fmt(self.inertia)} kg m^2 needs a mass"
                                 " > 0 (a rigid body has both; a massless junction has neither)",
                                 ("inertia",))
        if self.tolerance is not None:
            _set(self, "tolerance", _tolerance(owner, self.tolerance))

    @property
    def is_body(self) -> bool:
        """True for a rigid body: rotary inertia > 0 (planar models), so ``theta`` is a DOF."""
        return self.inertia > 0


@dataclass(frozen=True)
class Anchor:
    """A fixed point (ground). It never moves, except as the base in base excitation."""

    id: str
    x: float
    y: float
    label: str = ""

    def __post_init__(self):
        _check_id("anchor", self.id)
        # the label is checked under the id alone; every later message names the label too
        _set(self, "label", _text(f'anchor "{self.id}"', "label", self.label, self.id))
        owner = f"anchor {quoted(self.id, self.label)}"
        _set(self, "x", _coordinate(owner, "x", self.x))
        _set(self, "y", _coordinate(owner, "y", self.y))


@dataclass(frozen=True)
class Spring:
    """A linear spring between nodes ``a`` and ``b`` (mass or anchor ids).

    ``k`` is the axial stiffness in N/m (N m/rad in torsion); ``k_t`` the transverse stiffness in N/m,
    used only in planar models, acting at right angles to the drawn line.

    ``a_offset``, ``b_offset`` (planar models only): the attachment point of each end relative to
    that end's centre, (dx, dy) in m, in the body's frame (the global frame at rest). Nonzero only
    on an end that is a rigid body (a mass with ``inertia`` > 0). The spring's line of action
    runs between the two attachment points.
    """

    id: str
    a: str
    b: str
    k: float
    label: str = ""
    k_t: float = 0.0
    a_offset: tuple[float, float] = (0.0, 0.0)
    b_offset: tuple[float, float] = (0.0, 0.0)
    tolerance: Tolerance | None = None

    def __post_init__(self):
        _check_id("spring", self.id)
        # the label is checked under the id alone; every later message names the label too
        _set(self, "label", _text(f'spring "{self.id}"', "label", self.label, self.id))
        owner = f"spring {quoted(self.id, self.label)}"
        _set(self, "a", _check_id(f"{owner} end a", self.a, "a"))
        _set(self, "b", _check_id(f"{owner} end b", self.b, "b"))
        _set(self, "k", _positive(owner, "stiffness k", self.k, "N/m", ranged=True, field="k"))
        _set(self, "k_t", _nonneg(owner, "transverse stiffness k_t", self.k_t, "N/m",
                                      ranged=True, field="k_t"))
        _set(self, "a_offset", _offset(owner, "a_offset", self.a_offset))
        _set(self, "b_offset", _offset(owner, "b_offset", self.b_offset))
        if self.tolerance is not None:
            _set(self, "tolerance", _tolerance(owner, self.tolerance))


@dataclass(frozen=True)
class Damper:
    """A viscous dashpot between nodes ``a`` and ``b``; ``c`` in N s/m (N m s/rad in torsion).

    ``a_offset``, ``b_offset``: attachment points on rigid bodies, as for :class:`Spring`.
    """

    id: str
    a: str
    b: str
    c: float
    label: str = ""
    a_offset: tuple[float, float] = (0.0, 0.0)
    b_offset: tuple[float, float] = (0.0, 0.0)
    tolerance: Tolerance | None = None

    def __post_init__(self):
        _check_id("dashpot", self.id)
        # the label is checked under the id alone; every later message names the label too
        _set(self, "label", _text(f'dashpot "{self.id}"', "label", self.label, self.id))
        owner = f"dashpot {quoted(self.id, self.label)}"
        _set(self, "a", _check_id(f"{owner} end a", self.a, "a"))
        _set(self, "b", _check_id(f"{owner} end b", self.b, "b"))
        _set(self, "c", _nonneg(owner, "damping coefficient c", self.c, "N s/m",
                                    ranged=True, field="c"))
        _set(self, "a_offset", _offset(owner, "a_offset", self.a_offset))
        _set(self, "b_offset", _offset(owner, "b_offset", self.b_offset))
        if self.tolerance is not None:
            _set(self, "tolerance", _tolerance(owner, self.tolerance))


@dataclass(frozen=True)
class Gear:
    """A gear stage joining two discs of a torsion model.

    ``ratio`` is the speed ratio n = (speed of disc ``a``) / (speed of disc ``b``), > 0: with a
    rigid mesh theta_a = n theta_b. Referred to shaft a (kinetic and strain energy kept), an
    inertia J or a torsional stiffness k on shaft b becomes J / n^2 or k / n^2; referred to
    shaft b, one on shaft a becomes n^2 J, n^2 k. So for a reduction a -> b (a motor on a
    turning n times faster than the load on b) the load's J2 and k2 seen from the motor shaft
    are J2/n^2 and k2/n^2 (a standard textbook method, from memory).

    ``k_mesh``: None for a rigid mesh (a constraint, the default), or the mesh stiffness in
    N m/rad referred to shaft a, strain energy 1/2 k_mesh (theta_a - n theta_b)^2. The mesh's
    reversal of direction (an external pair turns its shafts opposite ways) is ignored: it
    flips the sign of the angles on one side, which changes no frequency and no energy (common
    practice for natural frequencies).
    """

    id: str
    a: str
    b: str
    ratio: float
    label: str = ""
    k_mesh: float | None = None

    def __post_init__(self):
        _check_id("gear", self.id)
        _set(self, "label", _text(f'gear "{self.id}"', "label", self.label, self.id))
        owner = f"gear {quoted(self.id, self.label)}"
        _set(self, "a", _check_id(f"{owner} disc a", self.a, "a"))
        _set(self, "b", _check_id(f"{owner} disc b", self.b, "b"))
        _set(self, "ratio", _positive(owner, "speed ratio", self.ratio,
                                      "(speed of a / speed of b)", ranged=True, field="ratio"))
        if self.k_mesh is not None:
            _set(self, "k_mesh", _positive(owner, "mesh stiffness k_mesh", self.k_mesh,
                                           "N m/rad", ranged=True, field="k_mesh"))


@dataclass(frozen=True)
class Damping:
    """Damping model applied on top of any dashpots.

    ``model`` is ``"none"``, ``"modal"`` (one ``ratio`` of critical for every mode, with optional
    per-mode overrides ``mode_ratios`` as (mode number, ratio) pairs) or ``"rayleigh"``
    (C = alpha M + beta K, alpha in 1/s, beta in s).
    """

    model: str = "none"
    ratio: float = 0.0
    alpha: float = 0.0
    beta: float = 0.0
    mode_ratios: tuple[tuple[int, float], ...] = ()

    def __post_init__(self):
        if not isinstance(self.model, str) or self.model not in DAMPING_MODELS:
            raise ModelError(f'damping: model must be one of {", ".join(DAMPING_MODELS)}, got'
                             f" {shown(self.model)}", ("model",))
        _set(self, "ratio", _nonneg("damping", "ratio", self.ratio, "(fraction of critical)",
                                    ranged="capped"))
        _set(self, "alpha", _nonneg("damping", "alpha", self.alpha, "1/s", ranged="capped"))
        _set(self, "beta", _nonneg("damping", "beta", self.beta, "s", ranged="capped"))
        pairs = {}
        for item in _items("damping", "mode_ratios", self.mode_ratios):
            if isinstance(item, (str, bytes)) or not isinstance(item, Iterable) or \
                    len(tuple(item)) != 2:
                raise ModelError(f"damping: mode_ratios holds (mode number, ratio) pairs, got"
                                 f" {shown(item)}", ("mode_ratios",))
            n, r = item
            if not is_number(n) or not math.isfinite(n) or int(n) != n or not 1 <= n <= MODE_MAX:
                raise ModelError(f"damping: mode numbers in mode_ratios are whole numbers from 1"
                                 f" to {MODE_MAX}, got {shown(n)}", ("mode_ratios",))
            n = int(n)
            if n in pairs:
                raise ModelError(f"damping: mode_ratios gives mode {n} twice",
                                 ("mode_ratios", str(n)))
            try:
                pairs[n] = _nonneg("damping", f"ratio of mode {n}", r, "(fraction of critical)",
                                   ranged="capped")
            except ModelError as exc:
                raise ModelError(str(exc), ("mode_ratios", str(n))) from None
        _set(self, "mode_ratios", tuple(sorted(pairs.items())))


@dataclass(frozen=True)
class Excitation:
    """An excitation source: a shaft speed with orders, or a frequency band.

    ``type == "speed"``: ``orders`` and either one speed ``rpm`` (each order n gives a line at
    n * rpm / 60 Hz) or an operating range ``rpm_min`` to ``rpm_max`` (variable-speed drives,
    run-up and run-down: each order n then covers the band n * rpm_min / 60 to n * rpm_max / 60
    Hz). All speeds in rev/min. A ranged source keeps ``rpm`` at 0 (not given); giving ``rpm``
    and a range together, or only one end of a range, is refused as ambiguous.
    ``type == "band"``: ``f_min_hz`` to ``f_max_hz``.
    """

    id: str
    type: str
    label: str = ""
    rpm: float = 0.0
    orders: tuple[float, ...] = (1.0,)
    f_min_hz: float = 0.0
    f_max_hz: float = 0.0
    rpm_min: float | None = None
    rpm_max: float | None = None

    def __post_init__(self):
        _check_id("excitation", self.id)
        _set(self, "label", _text(f'excitation "{self.id}"', "label", self.label, self.id))
        owner = f"excitation {quoted(self.id, self.label)}"
        if not isinstance(self.type, str) or self.type not in EXCITATION_TYPES:
            raise ModelError(f'{owner}: type must be "speed" or "band", got {shown(self.type)}',
                             ("type",))
        if self.type == "speed":
            self._check_speed(owner)
            raw = _items(owner, "orders", self.orders)
            if len(raw) > ORDERS_MAX:
                raise ModelError(f"{owner}: orders lists {len(raw)} orders; at most {ORDERS_MAX}"
                                 " are allowed", ("orders",))
            orders = []
            for i, o in enumerate(raw):
                try:
                    orders.append(_positive(owner, "order", o, "(multiple of the speed)",
                                            ranged="capped"))
                except ModelError as exc:
                    raise ModelError(str(exc), ("orders", i)) from None
            if not orders:
                raise ModelError(f"{owner}: orders must list at least one order, e.g. [1, 2]",
                                 ("orders",))
            _set(self, "orders", tuple(orders))
        else:
            for name in ("rpm_min", "rpm_max"):
                if getattr(self, name) is not None:
                    raise ModelError(f"{owner}: {name} belongs to a speed source (type"
                                     f' "speed"); a band has f_min_hz and f_max_hz', (name,))
            lo = _nonneg(owner, "f_min_hz", self.f_min_hz, "Hz", ranged="capped")
            hi = _positive(owner, "f_max_hz", self.f_max_hz, "Hz", ranged="capped")
            if hi < lo:
                raise ModelError(f"{owner}: f_max_hz must not be below f_min_hz, got {_fmt(lo)}"
                                 f" to {_fmt(hi)} Hz", ("f_max_hz",))
            _set(self, "f_min_hz", lo)
            _set(self, "f_max_hz", hi)

    def _check_speed(self, owner: str) -> None:
        ranged = self.rpm_min is not None or self.rpm_max is not None
        if not ranged:
            _set(self, "rpm", _positive(owner, "rpm", self.rpm, "rev/min", ranged="capped"))
            return
        # rpm 0 (or None) is "not given": the dataclass default, never a valid speed
        if self.rpm is not None and not (isinstance(self.rpm, (int, float))
                                         and not isinstance(self.rpm, bool) and self.rpm == 0):
            raise ModelError(
                f"{owner}: give either rpm (one speed) or rpm_min and rpm_max (an operating"
                f" range), not both; got rpm = {shown(self.rpm)} with a range", ("rpm",))
        missing = [n for n in ("rpm_min", "rpm_max") if getattr(self, n) is None]
        if missing:
            raise ModelError(
                f"{owner}: a speed range needs both rpm_min and rpm_max (positive rev/min,"
                f" rpm_min below rpm_max); {missing[0]} is missing", (missing[0],))
        lo = _positive(owner, "rpm_min", self.rpm_min, "rev/min", ranged="capped",
                       field="rpm_min")
        hi = _positive(owner, "rpm_max", self.rpm_max, "rev/min", ranged="capped",
                       field="rpm_max")
        if not lo < hi:
            raise ModelError(
                f"{owner}: rpm_min must be below rpm_max, got {_fmt(lo)} to {_fmt(hi)} rev/min"
                " (for one speed give rpm instead)", ("rpm_max",))
        _set(self, "rpm", 0.0)
        _set(self, "rpm_min", lo)
        _set(self, "rpm_max", hi)

    @property
    def is_ranged(self) -> bool:
        """True for a speed source with an operating range (``rpm_min`` to ``rpm_max``)."""
        return self.type == "speed" and self.rpm_min is not None

    def speed_range_rpm(self) -> tuple[float, float]:
        """(lowest, highest) shaft speed in rev/min; ``(rpm, rpm)`` for a single speed.
        Raises ModelError for a band, which has no shaft speed."""
        if self.type != "speed":
            raise ModelError(f'excitation "{self.id}": a band has no shaft speed')
        if self.is_ranged:
            return float(self.rpm_min), float(self.rpm_max)
        return float(self.rpm), float(self.rpm)

    def frequencies_hz(self) -> tuple[tuple[float, float], ...]:
        """The source as (low, high) intervals in Hz: per order ``order * speed / 60`` at the
        lowest and highest speed (zero width for a single speed), or the band itself."""
        if self.type == "speed":
            lo, hi = self.speed_range_rpm()
            return tuple((o * lo / 60.0, o * hi / 60.0) for o in self.orders)
        return ((self.f_min_hz, self.f_max_hz),)


@dataclass(frozen=True)
class Initial:
    """Initial displacement and velocity of one mass, by direction (m, m/s; rad, rad/s)."""

    mass_id: str
    displacement: tuple[tuple[str, float], ...] = ()
    velocity: tuple[tuple[str, float], ...] = ()

    def __post_init__(self):
        _check_id("initial condition", self.mass_id, "mass_id")
        owner = f'initial condition of "{self.mass_id}"'
        for name, items in (("displacement", self.displacement), ("velocity", self.velocity)):
            if isinstance(items, Mapping):
                items = tuple(items.items())
            clean = {}
            for item in _items(owner, name, items):
                if isinstance(item, (str, bytes)) or not isinstance(item, Iterable) or \
                        len(tuple(item)) != 2:
                    raise ModelError(f"{owner}: {name} holds (direction, value) pairs, got"
                                     f" {shown(item)}", (name,))
                d, v = item
                if not isinstance(d, str) or d not in DIRECTIONS:
                    raise ModelError(f"{owner}: direction must be x, y or theta, got {shown(d)}",
                                     (name,))
                key = d if name == "displacement" else "v" + d
                if d in clean:
                    raise ModelError(f"{owner}: {name} gives {d} twice", (key,))
                try:
                    clean[d] = _coordinate(owner, f"{name} {d}", v, "SI units")
                except ModelError as exc:
                    raise ModelError(str(exc), (key,)) from None
            _set(self, name, tuple(sorted(clean.items(), key=lambda p: DIRECTIONS.index(p[0]))))

    def get(self, what: str, direction: str) -> float:
        items = self.displacement if what == "displacement" else self.velocity
        return dict(items).get(direction, 0.0)


@dataclass(frozen=True)
class Model:
    """A whole lumped model. Constructing one validates it (raises :class:`ModelError`)."""

    kind: str = "line"
    name: str = ""
    axis: str = "x"
    masses: tuple[Mass, ...] = ()
    anchors: tuple[Anchor, ...] = ()
    springs: tuple[Spring, ...] = ()
    dampers: tuple[Damper, ...] = ()
    damping: Damping = field(default_factory=Damping)
    excitations: tuple[Excitation, ...] = ()
    margin_percent: float = 15.0
    initial: tuple[Initial, ...] = ()
    #: gear stages (torsion models only)
    gears: tuple[Gear, ...] = ()
    #: the load cases defined with the model (solver.load_cases.Loads), or None
    loads: object = None

    def __hash__(self):
        # a model is immutable and a key of the window's caches (results, sweeps), looked up
        # several times an edit: its hash, of every element (~0.1 ms at 400 elements), is kept.
        # The same value as the dataclass's own hash of its fields
        h = self.__dict__.get("_hash")
        if h is None:
            h = hash(tuple(getattr(self, f.name) for f in fields(self)))
            object.__setattr__(self, "_hash", h)
        return h

    def __getstate__(self):
        # the fields only: what is kept besides them is a cache (a hash of strings differs from
        # one process to another, so a kept hash must never travel to a worker process)
        return {f.name: self.__dict__[f.name] for f in fields(self)}

    def __post_init__(self):
        for name, cls in (("masses", Mass), ("anchors", Anchor), ("springs", Spring),
                          ("dampers", Damper), ("excitations", Excitation),
                          ("initial", Initial), ("gears", Gear)):
            items = _items("model", name, getattr(self, name))
            for i, el in enumerate(items):
                if type(el) is not cls:
                    raise ModelError(f"model: {name} holds {cls.__name__} elements, got"
                                     f" {shown(el)}", (name, i))
            _set(self, name, items)
        count = sum(len(getattr(self, n)) for n in ("masses", "anchors", "springs", "dampers",
                                                    "excitations", "gears"))
        if count > MAX_ELEMENTS:
            raise ModelError(f"model: {count:,} elements (masses, anchors, springs, dashpots,"
                             f" excitations and gears); a model may have at most"
                             f" {MAX_ELEMENTS:,}")
        if self.loads is not None:
            from .load_cases import Loads

            if type(self.loads) is not Loads:
                raise ModelError(f"model: loads must be a Loads or None, got {shown(self.loads)}",
                                 ("loads",))
        if not isinstance(self.damping, Damping):
            raise ModelError(f"model: damping must be a Damping, got {shown(self.damping)}",
                             ("damping",))
        _set(self, "name", _text("model", "name", self.name, ""))
        if not isinstance(self.kind, str) or self.kind not in KINDS:
            raise ModelError(f'model: kind must be one of {", ".join(KINDS)}, got'
                             f" {shown(self.kind)}", ("kind",))
        if not isinstance(self.axis, str) or self.axis not in AXES:
            raise ModelError(f'model: axis must be "x" or "y", got {shown(self.axis)}', ("axis",))
        _set(self, "margin_percent",
             _nonneg("model", "margin_percent", self.margin_percent, "%"))
        if self.margin_percent >= 100:
            raise ModelError(
                f"model: margin_percent must be below 100, got {_fmt(self.margin_percent)} %",
                ("margin_percent",))
        self._validate_references()

    # -- validation ---------------------------------------------------------------------------
    def _validate_references(self):
        seen: dict[str, str] = {}
        for what, key, items in (("mass", "masses", self.masses),
                                 ("anchor", "anchors", self.anchors),
                                 ("spring", "springs", self.springs),
                                 ("dashpot", "dampers", self.dampers),
                                 ("excitation", "excitations", self.excitations),
                                 ("gear", "gears", self.gears)):
            for i, el in enumerate(items):
                if el.id in seen:
                    raise ModelError(
                        f"{named(el, what)}: id is already used by {_a(seen[el.id])}; ids must"
                        " be unique", (key, i, "id"))
                seen[el.id] = what
        # A locked direction the model kind does not have (y in a line model along x) locks
        # nothing; assemble() reports it as a warning rather than refusing the model, so that
        # switching a model's kind never invalidates it.
        nodes = {m.id: m for m in self.masses}
        nodes.update({a.id: a for a in self.anchors})
        for what, key, items in (("spring", "springs", self.springs),
                                 ("dashpot", "dampers", self.dampers)):
            for i, el in enumerate(items):
                for end in ("a", "b"):
                    ref = getattr(el, end)
                    if ref not in nodes:
                        raise ModelError(
                            f'{named(el, what)}: end {end} names "{ref}", which is not a mass or'
                            " anchor", (key, i, end))
                if el.a == el.b:
                    node = nodes[el.a]
                    raise ModelError(f"{named(el, what)}: both ends are"
                                     f" {quoted(node.id, node.label)}; {_a(what)} must join"
                                     " two different nodes", (key, i, "b"))
                if el.a_offset != _ORIGIN:
                    self._check_offset(el, what, key, i, "a", nodes[el.a])
                if el.b_offset != _ORIGIN:
                    self._check_offset(el, what, key, i, "b", nodes[el.b])
                if self.kind == "planar":
                    na, nb = nodes[el.a], nodes[el.b]
                    (oax, oay), (obx, oby) = el.a_offset, el.b_offset
                    length = math.hypot(nb.x + obx - na.x - oax, nb.y + oby - na.y - oay)
                    if length <= 1e-12 * max(1.0, abs(na.x), abs(na.y)):
                        where = ("attachment points" if el.a_offset != _ORIGIN
                                 or el.b_offset != _ORIGIN else "ends")
                        raise ModelError(
                            f"{named(el, what)}: its {where} on {quoted(na.id, na.label)} and"
                            f" {quoted(nb.id, nb.label)} are at the same point;"
                            " in a planar model a spring acts along its drawn line, so it needs a"
                            " length", (key, i))
        for i, m in enumerate(self.masses):
            if m.inertia != 0 and self.kind != "planar":
                raise ModelError(
                    f"{named(m, self._mass_word)}: inertia = {_fmt(m.inertia)} kg m^2 is not"
                    f" allowed in a {self._kind_text()}: a rotary inertia of a rigid body belongs"
                    " to a planar model"
                    + (" (a torsion disc's inertia is its mass field, the file's \"inertia\")"
                       if self.kind == "torsion" else
                       " (or to a disc of a torsion model)") + "; set it to 0",
                    ("masses", i, "inertia"))
        self._validate_gears(nodes)
        masses = {m.id: m for m in self.masses}
        seen_init = set()
        for ic in self.initial:
            if ic.mass_id not in masses:
                where = "an anchor" if ic.mass_id in nodes else "not a mass in the model"
                node = nodes.get(ic.mass_id)
                who = quoted(ic.mass_id, node.label if node is not None else None)
                raise ModelError(f"initial condition: {who} is {where};"
                                 " initial conditions are given for masses",
                                 ("initial", ic.mass_id))
            if ic.mass_id in seen_init:
                who = quoted(ic.mass_id, nodes[ic.mass_id].label)
                raise ModelError(f"initial condition: mass {who} is listed twice",
                                 ("initial", ic.mass_id))
            seen_init.add(ic.mass_id)
            own = self.directions_of(masses[ic.mass_id])
            for name, items in (("displacement", ic.displacement), ("velocity", ic.velocity)):
                for d, _ in items:
                    if d == "theta" and self.kind == "planar" and d not in own:
                        who = quoted(ic.mass_id, nodes[ic.mass_id].label)
                        raise ModelError(
                            f'initial condition of {who}: direction "theta" exists only on a'
                            " rigid body (a mass with an inertia > 0); this mass is a point"
                            " (allowed: x, y)",
                            ("initial", ic.mass_id, d if name == "displacement" else "v" + d))
                    if d not in own:
                        who = quoted(ic.mass_id, nodes[ic.mass_id].label)
                        raise ModelError(
                            f'initial condition of {who}: direction "{d}" does not exist'
                            f' in a {self._kind_text()} (allowed: {", ".join(own)})',
                            ("initial", ic.mass_id, d if name == "displacement" else "v" + d))

    @property
    def _mass_word(self) -> str:
        return "disc" if self.kind == "torsion" else "mass"

    def _check_offset(self, el, what, key, i, end, node):
        field = end + "_offset"
        if self.kind != "planar":
            raise ModelError(
                f"{named(el, what)}: {field} is allowed only in planar models (an attachment"
                f" point off a rigid body's centre); in a {self._kind_text()} it must be"
                " [0, 0]", (key, i, field))
        if not isinstance(node, Mass):
            raise ModelError(
                f"{named(el, what)}: {field} needs end {end} to be a rigid body (a mass with an"
                f" inertia > 0); {named(node)} is a point of ground, attached at its centre",
                (key, i, field))
        if not node.is_body:
            raise ModelError(
                f"{named(el, what)}: {field} needs {named(node)} to have an inertia > 0 (a point"
                " mass has no rotation to carry an off-centre attachment)", (key, i, field))

    def _validate_gears(self, nodes):
        if not self.gears:
            return
        for i, g in enumerate(self.gears):
            if self.kind != "torsion":
                raise ModelError(f"{named(g, 'gear')}: gear stages join discs of torsion models;"
                                 f" this is a {self._kind_text()}", ("gears", i))
            for end in ("a", "b"):
                ref = getattr(g, end)
                node = nodes.get(ref)
                if node is None:
                    raise ModelError(f'{named(g, "gear")}: disc {end} names "{ref}", which is'
                                     " not a disc of the model", ("gears", i, end))
                if not isinstance(node, Mass):
                    raise ModelError(f"{named(g, 'gear')}: disc {end} is {named(node)}; a gear"
                                     " stage joins two discs (ground cannot turn: leave the"
                                     " stage out, or anchor the disc with a spring)",
                                     ("gears", i, end))
            if g.a == g.b:
                node = nodes[g.a]
                raise ModelError(f"{named(g, 'gear')}: both discs are"
                                 f" {quoted(node.id, node.label)}; a gear stage joins two"
                                 " different discs", ("gears", i, "b"))

    def _kind_text(self) -> str:
        return {"line": f"line model along {self.axis}", "planar": "planar model",
                "torsion": "torsion model"}[self.kind]

    # -- look-up ------------------------------------------------------------------------------
    @property
    def directions(self) -> tuple[str, ...]:
        """Directions each mass moves in for this model's kind (a planar rigid body adds theta:
        see :meth:`directions_of`)."""
        return directions_for(self.kind, self.axis)

    def directions_of(self, mass: Mass) -> tuple[str, ...]:
        """Directions this mass can move in: the kind's, plus ``theta`` for a planar rigid body
        (locked directions included)."""
        if self.kind == "planar" and mass.inertia > 0:
            return ("x", "y", "theta")
        return directions_for(self.kind, self.axis)

    @property
    def bodies(self) -> tuple[Mass, ...]:
        """The rigid bodies (planar masses with an inertia > 0), in model order."""
        if self.kind != "planar":
            return ()
        return tuple(m for m in self.masses if m.inertia > 0)

    @property
    def total_inertia(self) -> float:
        """Sum of the rigid bodies' rotary inertias about their own centres, kg m^2."""
        return float(sum(m.inertia for m in self.bodies))

    @cached_property
    def _by_id(self) -> dict:
        # built once per Model (a Model never changes), so that messages naming many
        # elements, and look-ups by id, do not scan every element each time
        return {el.id: el for items in (self.masses, self.anchors, self.springs, self.dampers,
                                        self.excitations, self.gears) for el in items}

    def find(self, element_id: str):
        """The element (mass, anchor, spring, dashpot or excitation) with this id, or None."""
        try:
            return self._by_id.get(element_id)
        except TypeError:   # an unhashable "id" names no element
            return None

    def element(self, element_id: str):
        """The element (mass, anchor, spring, dashpot or excitation) with this id."""
        el = self.find(element_id)
        if el is None:
            raise ModelError(f'model: no element has the id "{element_id}"')
        return el

    def node(self, node_id: str):
        for items in (self.masses, self.anchors):
            for el in items:
                if el.id == node_id:
                    return el
        raise ModelError(f'model: no mass or anchor has the id "{node_id}"')

    def ids(self) -> set[str]:
        return {el.id for items in (self.masses, self.anchors, self.springs, self.dampers,
                                    self.excitations, self.gears) for el in items}

    def new_id(self, prefix: str) -> str:
        """A fresh id ``prefix<N>`` not used by any element."""
        used = self.ids()
        n = 1
        while f"{prefix}{n}" in used:
            n += 1
        return f"{prefix}{n}"

    def initial_of(self, mass_id: str) -> Initial | None:
        for ic in self.initial:
            if ic.mass_id == mass_id:
                return ic
        return None

    @property
    def total_mass(self) -> float:
        """Sum of all masses in kg (kg m^2 for torsion), locked or not."""
        return float(sum(m.mass for m in self.masses))

    # -- editing ------------------------------------------------------------------------------
    def with_changes(self, remove: Iterable[str] = (), put: Iterable = (), **top) -> "Model":
        """A new Model with elements removed by id, elements added or replaced, top fields changed.

        ``put`` elements replace the element of the same id in place, or are appended to their
        collection. Removing a node also removes the springs, dashpots and initial conditions
        attached to it, so that the result is valid. Raises :class:`ModelError` (and leaves this
        Model untouched) when the result would be invalid.
        Removing a disc also removes the gear stages on it.
        """
        remove = set(remove)
        node_ids = {el.id for el in self.masses + self.anchors if el.id in remove}
        put = list(put)
        by_type = {Mass: "masses", Anchor: "anchors", Spring: "springs", Damper: "dampers",
                   Excitation: "excitations", Initial: "initial", Gear: "gears"}
        values = {}
        for cls, name in by_type.items():
            items = list(getattr(self, name))
            if cls is Initial:
                items = [ic for ic in items if ic.mass_id not in remove]
            else:
                items = [el for el in items if el.id not in remove]
            if cls in (Spring, Damper, Gear):
                items = [el for el in items if el.a not in node_ids and el.b not in node_ids]
            key = (lambda el: el.mass_id) if cls is Initial else (lambda el: el.id)
            index = {key(el): i for i, el in enumerate(items)}
            for el in put:
                if type(el) is cls:
                    if key(el) in index:
                        items[index[key(el)]] = el
                    else:
                        index[key(el)] = len(items)
                        items.append(el)
            values[name] = tuple(items)
        for el in put:
            if type(el) not in by_type:
                raise ModelError(f"model: cannot add {shown(el)}")
        values.update(top)
        return replace(self, **values)


def element_kind(el) -> str:
    """The trade word for an element's type, as used in messages."""
    return {Mass: "mass", Anchor: "anchor", Spring: "spring", Damper: "dashpot",
            Excitation: "excitation", Gear: "gear"}.get(type(el), type(el).__name__.lower())


__all__ = ["Model", "Mass", "Anchor", "Spring", "Damper", "Damping", "Excitation", "Initial",
           "Gear", "Tolerance", "TOLERANCE_DISTRIBUTIONS",
           "KINDS", "AXES", "DIRECTIONS", "directions_for", "element_kind", "fields"]
