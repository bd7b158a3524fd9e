"""Elements of a route: the fields each kind takes and how a model object is drafted from them.

:data:`SPECS` is the registry: one :class:`KindSpec` per kind of
:data:`esdsurge.model.ELEMENT_KINDS`; a new kind is added to the model's registry and here.
Each spec reads one element mapping into a :class:`Draft` (the keyword arguments of the model
class). Valves and couplings may take their bore from a neighbouring element, which only the
route knows: their drafts carry a ``finish`` function that completes them once the route has
found that bore. Reliefs and accumulators sit on a branch at a point of the route: they state no
bore of the route's own (an accumulator's ``connection`` is the bore of its branch).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from functools import partial
from typing import Any

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import ELEMENT_KINDS, Element, Limits
from esdsurge.physics import pipes, pumps, valves
from esdsurge.physics.flanges import FLANGE_CLASSES
from esdsurge.terminal import quantities as q
from esdsurge.terminal.fields import Fields, between, not_negative, positive

#: Absolute roughness of a cargo hose bore when none is given [m]: a smooth-bore (rubber or
#: composite lined) hose. Common practice, no source: 0.01 mm, in the range usually taken for
#: drawn tubing and smooth linings.
HOSE_ROUGHNESS = 1.0e-5

#: Loss coefficient of an emergency release coupling fully open when none is given [-] (on the
#: velocity in its bore). Common practice, no source: a full-bore coupling of two ball valves
#: in series loses little; 0.2 is a round, modest value. Give the vendor's value when known.
COUPLING_K_OPEN = 0.2

#: Pressure rise above the set pressure at which a surge relief valve is fully open, as a
#: fraction of the set pressure (gauge) [-], when none is given. Common practice, no source:
#: 10 % is the accumulation usually allowed for relief valves; give the vendor's value when known.
RELIEF_OVERPRESSURE = 0.10

#: Polytropic exponent of an accumulator's gas during a surge when none is given [-]. From
#: memory (Wylie & Streeter, Fluid Transients in Systems, 1993, on air chambers): 1.2 is the
#: value commonly used for surge vessels, between isothermal (1.0) and adiabatic (1.4 for a
#: diatomic gas such as nitrogen).
ACCUMULATOR_EXPONENT = 1.2

#: Range of the polytropic exponent accepted [-]: from isothermal (1.0) to adiabatic for a
#: monatomic gas (5/3, written 1.67); a diatomic gas such as nitrogen is adiabatic at 1.4.
ACCUMULATOR_EXPONENT_RANGE = (1.0, 1.67)

#: Loss coefficient of the branch between the route and an accumulator when none is given [-],
#: on the velocity in the branch: one velocity head (the exit loss). Common practice, no source.
ACCUMULATOR_CONNECTION_LOSS = 1.0

#: Default wall material of pipes and arms.
DEFAULT_MATERIAL = "carbon steel"

#: Limit fields that every element except tanks and pumps may carry.
LIMIT_FIELDS = (
    "design_pressure",
    "surge_allowance",
    "rated_working_pressure",
    "flange_class",
    "min_pressure",
)

_PIPE_FIELDS = (
    "length",
    "size",
    "inside_diameter",
    "wall",
    "material",
    "youngs_modulus",
    "poisson",
    "anchoring",
    "roughness",
    "elevation",
    "wave_speed",
    "friction_factor",
)


@dataclass
class Draft:
    """What one element mapping says, before the route completes it.

    ``kwargs`` are keyword arguments of the model class; ``bore`` is the element's own bore
    [m] if it has one; ``finish`` (valves and couplings without a size) takes the bore that the
    route found and returns the remaining keyword arguments, or a message when it cannot.
    """

    cls: type[Element]
    kwargs: dict[str, Any]
    bore: float | None = None
    finish: Callable[[float], dict[str, Any] | str] | None = None


@dataclass(frozen=True)
class KindSpec:
    """How to read one kind: its fields, whether it carries limits, and its reader."""

    fields: tuple[str, ...]
    limits: bool
    read: Callable[[Fields], dict[str, Any] | Draft | None]


def _length(f: Fields, key: str, *, required: str | None = None) -> float | None:
    return f.value(key, partial(q.quantity, kind="length"), required=required, check=positive)


def _profile(f: Fields, length: float | None) -> tuple[tuple[float, float], ...] | None:
    """``elevation``: points (chainage, elevation) from 0 to the element's length."""
    if not f.has("elevation"):
        return ((0.0, 0.0), (length, 0.0)) if length is not None else None
    parse = partial(q.quantity, kind="length")
    points = f.reader.pairs(
        f.node.entries["elevation"],
        f.key_path("elevation"),
        (parse, parse),
        "elevation: [[0 m, 4 m], [85 m, 6 m]]",
    )
    if points is None:
        f.failed = True
        return None
    if not points:
        return ((0.0, 0.0), (length, 0.0)) if length is not None else None
    tolerance = 1e-3  # 1 mm
    message = None
    if abs(points[0][0]) > tolerance:
        message = f"the first chainage must be 0 m, got {points[0][0]:g} m"
    elif any(b[0] <= a[0] for a, b in zip(points, points[1:], strict=False)):
        message = "chainages must increase from point to point"
    elif length is not None and abs(points[-1][0] - length) > tolerance:
        message = (
            f"the last chainage must equal the length, {length:g} m (within 1 mm), "
            f"got {points[-1][0]:g} m"
        )
    elif len(points) < 2:
        message = "give at least two points, at chainage 0 m and at the length"
    if message is not None:
        f.problem("elevation", message)
        return None
    if length is None:
        return None
    points[0] = (0.0, points[0][1])
    points[-1] = (length, points[-1][1])
    return tuple(points)


def limits(f: Fields) -> Limits | None:
    """The limit fields of an element (see :data:`LIMIT_FIELDS`)."""
    atm = f.reader.atmosphere_abs
    gauge = partial(q.pressure, reference="gauge", atmosphere_abs=atm)
    design = f.value("design_pressure", gauge, check=positive)
    allowance = f.value("surge_allowance", q.ratio, check=between(0.0, 1.0, "0 % and 100 %"))
    rated = f.value("rated_working_pressure", gauge, check=positive)
    flange = f.value("flange_class", partial(q.number, example="flange_class: 150", integer=True))
    if flange is not None and flange not in FLANGE_CLASSES:
        f.problem(
            "flange_class",
            f"{flange} is not a known class; valid: {', '.join(map(str, FLANGE_CLASSES))}",
        )
        flange = None
    low = f.value(
        "min_pressure",
        partial(q.pressure, reference="abs", atmosphere_abs=atm),
        check=lambda p: None if p >= 0.0 else "is below absolute zero (0 bara)",
    )
    if f.failed:
        return None
    return Limits(
        design_pressure_gauge=design,
        surge_allowance=allowance if allowance is not None else 0.0,
        rated_working_pressure_gauge=rated,
        flange_class=int(flange) if flange is not None else None,
        min_pressure_abs=low,
    )


def _tank(f: Fields) -> dict[str, Any] | None:
    atm = f.reader.atmosphere_abs
    surface = f.value("surface", partial(q.quantity, kind="length"), required="surface: 16 m")
    gas = f.value(
        "gas_pressure",
        partial(q.pressure, reference="gauge", atmosphere_abs=atm),
        check=lambda p: None if p + atm >= 0.0 else "is below absolute zero",
    )
    return {"surface": surface, "gas_pressure_gauge": gas if gas is not None else 0.0}


def _pump(f: Fields) -> dict[str, Any] | None:
    curve = None
    if not f.has("curve"):
        f.missing("curve", "curve: [[0 m^3/h, 78 m], [400 m^3/h, 74 m], [700 m^3/h, 64 m]]")
    else:
        curve = f.reader.pairs(
            f.node.entries["curve"],
            f.key_path("curve"),
            (partial(q.quantity, kind="flow"), partial(q.quantity, kind="length")),
            "curve: [[0 m^3/h, 78 m], [400 m^3/h, 74 m], [700 m^3/h, 64 m]]",
            min_points=3,
        )
        if curve is None:
            f.failed = True
        else:
            curve = _check_curve(f, curve)
    pushes = f.choice("pushes", ("to-carrier", "to-shore"), required="pushes: to-carrier")
    count = f.value(
        "count", partial(q.number, example="count: 2", integer=True), check=_at_least_one
    )
    speed = f.value("speed", q.rotational_speed, check=positive)
    inertia = f.value("inertia", partial(q.quantity, kind="moment of inertia"), check=positive)
    check_valve = f.flag("check_valve")
    efficiency = f.value(
        "efficiency",
        partial(q.ratio, example="78 %"),
        check=lambda e: None if 0.0 < e <= 1.0 else "must be above 0 % and at most 100 %",
    )
    return {
        "curve": curve,
        "pushes": 1 if pushes == "to-carrier" else -1,
        "count": int(count) if count is not None else 1,
        "rated_speed": speed,
        "inertia": inertia,
        "check_valve": check_valve if check_valve is not None else True,
        "efficiency": efficiency,
    }


def _at_least_one(n: float) -> str | None:
    return None if n >= 1 else "must be at least 1"


def _check_curve(f: Fields, curve: list[tuple[float, float]]) -> tuple | None:
    try:
        pumps.fit_curve(curve)
    except ValueError as exc:  # PhysicsRangeError, or numpy's LinAlgError on extreme values
        f.problem("curve", f"{exc}; e.g. [[0 m^3/h, 78 m], [400 m^3/h, 74 m], [700 m^3/h, 64 m]]")
        return None
    return tuple(curve)


def _wall_material(f: Fields) -> dict[str, Any]:
    """``material`` or ``youngs_modulus`` + ``poisson``, and the roughness."""
    out: dict[str, Any] = {}
    given_e = f.has("youngs_modulus") or f.has("poisson")
    if f.has("material") and given_e:
        f.problem("material", "give either material or youngs_modulus + poisson, not both")
        return out
    if given_e:
        e = f.value(
            "youngs_modulus",
            partial(q.quantity, kind="modulus"),
            required="youngs_modulus: 207 GPa",
            check=positive,
        )
        nu = f.value(
            "poisson",
            partial(q.ratio, example="0.3"),
            required="poisson: 0.3",
            check=lambda v: None if 0.0 <= v < 0.5 else "must be at least 0 and below 0.5",
        )
        out.update(youngs_modulus=e, poisson=nu, material="")
        rough = f.value(
            "roughness",
            partial(q.quantity, kind="length"),
            required="roughness: 0.045 mm (no material is named to take it from)",
            check=not_negative,
        )
        out["roughness"] = rough
        return out
    material = f.choice("material", pipes.MATERIALS) or (
        None if f.has("material") else DEFAULT_MATERIAL
    )
    if material is None:
        return out
    e, nu = pipes.MATERIALS[material]
    rough = f.value("roughness", partial(q.quantity, kind="length"), check=not_negative)
    out.update(
        youngs_modulus=e,
        poisson=nu,
        material=material,
        roughness=rough if rough is not None else pipes.DEFAULT_ROUGHNESS[material],
    )
    return out


def _bore(f: Fields) -> tuple[float | None, float | None]:
    """``size: {nps, schedule}`` or ``inside_diameter`` + ``wall``."""
    if f.has("size"):
        if f.has("inside_diameter") or f.has("wall"):
            f.problem("size", "give either size or inside_diameter + wall, not both")
            return None, None
        node = f.reader.mapping(
            f.node.entries["size"], f.key_path("size"), "size: {nps: 16, schedule: STD}"
        )
        if node is None:
            f.failed = True
            return None, None
        size = Fields(f.reader, node, f.key_path("size"), ("nps", "schedule"))
        nps = size.value(
            "nps", partial(q.number, example="nps: 16"), required="nps: 16", check=positive
        )
        schedule = size.text("schedule", required="schedule: STD")
        if size.failed or nps is None or schedule is None:
            f.failed = True
            return None, None
        try:
            return pipes.nps_dimensions(float(nps), schedule)
        except PhysicsRangeError as exc:
            f.problem("size", str(exc))
            return None, None
    if not f.has("inside_diameter") and not f.has("wall"):
        f.missing("size", "size: {nps: 16, schedule: STD}, or inside_diameter and wall")
        return None, None
    d = _length(f, "inside_diameter", required="inside_diameter: 381 mm")
    e = _length(f, "wall", required="wall: 9.5 mm")
    if d is not None and e is not None and e >= d / 2.0:
        f.problem(
            "wall",
            f"the wall ({e:g} m) is thicker than half the inside diameter ({d:g} m); "
            f"it must be less than {d / 2.0:g} m",
        )
        return None, None
    return d, e


def _pipe(f: Fields) -> Draft | None:
    length = _length(f, "length", required="length: 1350 m")
    d, wall = _bore(f)
    out = _wall_material(f)
    out.update(length=length, inside_diameter=d, wall=wall)
    out["anchoring"] = f.choice("anchoring", pipes.ANCHORINGS) or "anchored"
    out["profile"] = _profile(f, length)
    out["wave_speed"] = f.value("wave_speed", partial(q.quantity, kind="velocity"), check=positive)
    out["friction_factor"] = _friction(f)
    return Draft(ELEMENT_KINDS["pipe"], out, bore=d)


def _friction(f: Fields) -> float | None:
    return f.value(
        "friction_factor",
        partial(q.number, example="friction_factor: 0.015"),
        check=lambda v: None if 0.0 <= v < 1.0 else "must be at least 0 and below 1",
    )


def _hose(f: Fields) -> Draft | None:
    length = _length(f, "length", required="length: 6 m")
    d = _length(f, "inside_diameter", required="inside_diameter: 254 mm")
    wave = f.value("wave_speed", partial(q.quantity, kind="velocity"), check=positive)
    expansion = f.value(
        "expansion", partial(q.quantity, kind="expansion per pressure"), check=positive
    )
    if f.has("wave_speed") and f.has("expansion"):
        f.problem("expansion", "give either wave_speed or expansion, not both")
    elif not f.has("wave_speed") and not f.has("expansion"):
        f.missing("expansion", "expansion: 0.4 %/bar (or wave_speed: 300 m/s)")
    rough = f.value("roughness", partial(q.quantity, kind="length"), check=not_negative)
    out = {
        "length": length,
        "inside_diameter": d,
        "wave_speed": wave,
        "expansion": expansion,
        "roughness": rough if rough is not None else HOSE_ROUGHNESS,
        "profile": _profile(f, length),
        "friction_factor": _friction(f),
    }
    return Draft(ELEMENT_KINDS["hose"], out, bore=d)


def _characteristic(f: Fields, valve_type: str | None) -> tuple | None:
    example = "characteristic: [[0 %, 0], [50 %, 0.2], [100 %, 1]]"
    if not f.has("characteristic"):
        if valve_type == "custom":
            f.missing("characteristic", example)
        return ()
    pct = partial(q.ratio, example="50 %")
    points = f.reader.pairs(
        f.node.entries["characteristic"], f.key_path("characteristic"), (pct, pct), example
    )
    if points is None:
        f.failed = True
        return None
    message = valves.validate_characteristic(points)
    if message is not None:
        f.problem("characteristic", f"{message} (travel 100 % = 1); e.g. {example}")
        return None
    return tuple(points)


def _flow_area_from_k(k: float) -> Callable[[float], dict[str, Any] | str]:
    def finish(diameter: float) -> dict[str, Any] | str:
        try:
            return {"diameter": diameter, "flow_area": valves.k_to_flow_area(k, diameter)}
        except PhysicsRangeError as exc:
            return str(exc)

    return finish


def _valve(f: Fields) -> Draft | None:
    valve_type = f.choice("type", valves.VALVE_TYPES, required="type: ball")
    given = [k for k in ("cv", "kv", "k_open") if f.has(k)]
    if not given:
        f.missing("cv", "cv: 9000 (US gpm/psi^0.5), or kv: 7800 (m^3/h/bar^0.5), or k_open: 0.1")
    elif len(given) > 1:
        f.problem(
            given[1],
            "give exactly one of cv (US gpm/psi^0.5), kv (m^3/h/bar^0.5) or k_open (loss "
            f"coefficient fully open), not {' and '.join(given)}",
        )
    coefficient = None
    if len(given) == 1:
        coefficient = f.value(
            given[0], partial(q.number, example=f"{given[0]}: 9000"), check=positive
        )
    size = _length(f, "size")
    out: dict[str, Any] = {
        "valve_type": valve_type,
        "characteristic": _characteristic(f, valve_type),
    }
    draft = Draft(ELEMENT_KINDS["valve"], out, bore=size)
    if coefficient is None:
        return draft
    if given[0] == "k_open":
        draft.finish = _flow_area_from_k(float(coefficient))
    else:
        convert = valves.cv_to_flow_area if given[0] == "cv" else valves.kv_to_flow_area
        try:
            area = convert(float(coefficient))
        except PhysicsRangeError as exc:
            f.problem(given[0], str(exc))
            return draft
        draft.finish = lambda diameter: {"diameter": diameter, "flow_area": area}
    return draft


def _coupling(f: Fields) -> Draft | None:
    closing = f.value(
        "closing_time",
        partial(q.quantity, kind="time"),
        required="closing_time: 5 s",
        check=positive,
    )
    k = f.value("k_open", partial(q.number, example="k_open: 0.2"), check=positive)
    valve_type = f.choice("type", valves.VALVE_TYPES) or ("ball" if not f.has("type") else None)
    out: dict[str, Any] = {
        "closing_time": closing,
        "valve_type": valve_type,
        "characteristic": _characteristic(f, valve_type),
    }
    return Draft(
        ELEMENT_KINDS["coupling"],
        out,
        finish=_flow_area_from_k(float(k) if k is not None else COUPLING_K_OPEN),
    )


def _manifold(f: Fields) -> dict[str, Any]:
    return {}


def _flow_coefficient(f: Fields, example: str) -> float | None:
    """Exactly one of ``cv`` or ``kv`` (required), as an effective flow area [m^2]."""
    given = [k for k in ("cv", "kv") if f.has(k)]
    if not given:
        f.missing("cv", example)
        return None
    if len(given) > 1:
        f.problem(
            given[1],
            "give exactly one of cv (US gpm/psi^0.5) or kv (m^3/h/bar^0.5), not cv and kv",
        )
        return None
    key = given[0]
    coefficient = f.value(key, partial(q.number, example=f"{key}: 300"), check=positive)
    if coefficient is None:
        return None
    convert = valves.cv_to_flow_area if key == "cv" else valves.kv_to_flow_area
    try:
        return convert(float(coefficient))
    except PhysicsRangeError as exc:
        f.problem(key, str(exc))
        return None


def _relief(f: Fields) -> dict[str, Any]:
    atm = f.reader.atmosphere_abs
    gauge = partial(q.pressure, reference="gauge", atmosphere_abs=atm)
    time = partial(q.quantity, kind="time")
    set_pressure = f.value(
        "set_pressure",
        gauge,
        required="set_pressure: 12 barg",
        check=lambda p: None if p > 0.0 else "must be above 0 barg",
    )
    overpressure = f.value(
        "overpressure",
        partial(q.ratio, example="10 %"),
        check=lambda r: None if 0.0 < r <= 1.0 else "must be above 0 % and at most 100 %",
    )
    flow_area = _flow_coefficient(f, "cv: 350 (US gpm/psi^0.5), or kv: 300 (m^3/h/bar^0.5)")
    opening = f.value("opening_time", time, required="opening_time: 0.5 s", check=positive)
    closing = f.value("closing_time", time, required="closing_time: 5 s", check=positive)
    reseats = f.flag("reseats")
    back = f.value(
        "back_pressure",
        gauge,
        check=lambda p: None if p + atm >= 0.0 else "is below absolute zero (0 bara)",
    )
    receiver = f.value("receiver_volume", partial(q.quantity, kind="volume"), check=positive)
    if set_pressure is not None and back is not None and back >= set_pressure:
        f.problem(
            "back_pressure",
            f"{f.written('back_pressure')} must be below the set pressure "
            f"{f.written('set_pressure')}: the valve could not discharge",
        )
    ratio = overpressure if overpressure is not None else RELIEF_OVERPRESSURE
    return {
        "set_pressure_gauge": set_pressure,
        "full_open_pressure_gauge": (
            set_pressure * (1.0 + ratio) if set_pressure is not None else None
        ),
        "flow_area": flow_area,
        "opening_time": opening,
        "closing_time": closing,
        "reseats": reseats if reseats is not None else True,
        "back_pressure_gauge": back if back is not None else 0.0,
        "receiver_volume": receiver,
    }


def _accumulator(f: Fields) -> dict[str, Any]:
    low, high = ACCUMULATOR_EXPONENT_RANGE
    volume = f.value(
        "volume", partial(q.quantity, kind="volume"), required="volume: 2 m^3", check=positive
    )
    precharge = f.value(
        "precharge",
        partial(q.pressure, reference="abs", atmosphere_abs=f.reader.atmosphere_abs),
        required="precharge: 4 barg",
        check=lambda p: None if p > 0.0 else "must be above 0 bara",
    )
    temperature = f.value("precharge_temperature", q.temperature)
    exponent = f.value(
        "exponent",
        partial(q.number, example="exponent: 1.2"),
        check=between(
            low, high, f"{low:.1f} (isothermal) and {high:.2f} (adiabatic, monatomic gas)"
        ),
    )
    connection = _length(f, "connection", required="connection: 150 mm")
    loss = f.value(
        "connection_loss", partial(q.number, example="connection_loss: 1.0"), check=not_negative
    )
    return {
        "volume": volume,
        "precharge_abs": precharge,
        "precharge_temperature": temperature if temperature is not None else f.reader.temperature,
        "exponent": float(exponent) if exponent is not None else ACCUMULATOR_EXPONENT,
        "connection_diameter": connection,
        "connection_loss": float(loss) if loss is not None else ACCUMULATOR_CONNECTION_LOSS,
    }


#: Reader of each element kind; keys match :data:`esdsurge.model.ELEMENT_KINDS`.
SPECS: dict[str, KindSpec] = {
    "tank": KindSpec(("surface", "gas_pressure"), False, _tank),
    "pump": KindSpec(
        ("curve", "pushes", "count", "speed", "inertia", "check_valve", "efficiency"),
        False,
        _pump,
    ),
    "pipe": KindSpec(_PIPE_FIELDS, True, _pipe),
    "arm": KindSpec(_PIPE_FIELDS, True, _pipe),
    "hose": KindSpec(
        (
            "length",
            "inside_diameter",
            "wave_speed",
            "expansion",
            "elevation",
            "roughness",
            "friction_factor",
        ),
        True,
        _hose,
    ),
    "valve": KindSpec(("type", "cv", "kv", "k_open", "size", "characteristic"), True, _valve),
    "coupling": KindSpec(("closing_time", "k_open", "type", "characteristic"), True, _coupling),
    "manifold": KindSpec((), True, _manifold),
    "relief": KindSpec(
        (
            "set_pressure",
            "overpressure",
            "cv",
            "kv",
            "opening_time",
            "closing_time",
            "reseats",
            "back_pressure",
            "receiver_volume",
        ),
        True,
        _relief,
    ),
    "accumulator": KindSpec(
        (
            "volume",
            "precharge",
            "precharge_temperature",
            "exponent",
            "connection",
            "connection_loss",
        ),
        True,
        _accumulator,
    ),
}


def read_element(f: Fields, kind: str, name: str) -> Draft | None:
    """Read the fields of an element of ``kind`` (the kind key itself already read).

    Returns the draft, or ``None`` when a field has a problem (reported through ``f``).
    """
    spec = SPECS[kind]
    result = spec.read(f)
    draft = result if isinstance(result, Draft) else Draft(ELEMENT_KINDS[kind], result or {})
    draft.cls = ELEMENT_KINDS[kind]  # arms read like pipes but are arms
    lim = limits(f) if spec.limits else None
    if f.failed:
        return None
    draft.kwargs["name"] = name
    if lim is not None:
        draft.kwargs["limits"] = lim
    return draft


def allowed_fields(kind: str) -> tuple[str, ...]:
    spec = SPECS[kind]
    return spec.fields + (LIMIT_FIELDS if spec.limits else ())
