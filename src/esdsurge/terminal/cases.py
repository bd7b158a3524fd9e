"""Cases: which route, which product, the initial state and the events of each ESD case.

Element names in events and ``running`` are checked against what the routes say (a
:class:`RouteInfo` per route), so that a case naming a missing element, or an event on an
element of the wrong kind, is refused with the names that would be valid.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import partial
from typing import Any

from esdsurge.model import CARRIER_KINDS, EVENT_ACTIONS, Carrier, Case, Event
from esdsurge.physics import valves
from esdsurge.terminal import quantities as q
from esdsurge.terminal.fields import Fields, Reader, nearest_names, positive
from esdsurge.terminal.yamlnodes import YMap, YNode, index, join

CASE_KEYS = (
    "name",
    "route",
    "product",
    "rate",
    "running",
    "events",
    "duration",
    "spill_limit",
    "max_closure_time",
    "carrier",
)
#: Keys of a case's ``carrier`` mapping.
CARRIER_KEYS = ("kind", "vent_capacity", "inlet_diameter", "inlets", "fill_pipe")
_CARRIER_EXAMPLE = "carrier: {kind: ship, vent_capacity: 1500 m^3/h, inlet_diameter: 250 mm}"

#: Keys of an event by its action (the action key itself names the element).
EVENT_KEYS: dict[str, tuple[str, ...]] = {
    "close": ("at", "close", "stroke", "travel"),
    "trip": ("at", "trip"),
    "release": ("at", "release"),
    "ramp": ("at", "ramp", "ramp_time"),
}
#: The element kind each action applies to.
EVENT_TARGET = {"close": "valve", "trip": "pump", "release": "coupling", "ramp": "pump"}
#: The action that applies to each kind that has one (for "use ... instead"): the first that
#: :data:`EVENT_TARGET` lists for it (a pump: ``trip``; ``ramp`` is named beside it).
ACTION_FOR_KIND = {kind: action for action, kind in reversed(EVENT_TARGET.items())}
#: Kinds that take no event, and why (for the message when an event names one).
NO_EVENT = {
    "relief": "a relief valve takes no event: it opens and recloses with the pressure",
    "accumulator": "an accumulator takes no event: it takes in and gives back liquid with "
    "the pressure",
}

_EVENT_EXAMPLE = "{at: 0 s, close: shore ESD valve, stroke: 25 s}"


@dataclass
class RouteInfo:
    """What the cases need to know about a route, even when some of its elements failed."""

    kinds: dict[str, str] = field(default_factory=dict)  # element name -> kind
    pump_counts: dict[str, int] = field(default_factory=dict)
    #: every element's kind and name could be read (else names are not checked against it)
    complete: bool = True


def read_cases(f: Fields, infos: dict[str, RouteInfo]) -> list[Case]:
    """The ``cases`` list of the top-level mapping ``f``; ``infos`` describe the routes."""
    reader = f.reader
    if not f.has("cases"):
        f.missing("cases", "cases: [{name: ..., route: loading, product: gasoline, events: ...}]")
        return []
    seq = reader.sequence(f.node.entries["cases"], "cases", "[{name: ..., route: ..., ...}]")
    if seq is None:
        return []
    if not seq.items:
        reader.problem(seq.line, "cases", "give at least one case")
    product_names = _product_names(f)
    out: list[Case] = []
    seen: dict[str, str] = {}
    for i, node in enumerate(seq.items):
        path = index("cases", i)
        case = _case(reader, node, path, infos, product_names)
        if case is None:
            continue
        if case.name in seen:
            reader.problem(
                case.where.line,
                join(path, "name"),
                f"the case name {case.name!r} is already used by {seen[case.name]}; "
                "give each case its own name",
            )
            continue
        seen[case.name] = path
        out.append(case)
    return out


def _product_names(f: Fields) -> list[str]:
    node = f.node.entries.get("products")
    return list(node.entries) if isinstance(node, YMap) else []


def _case(
    reader: Reader,
    node: YNode,
    path: str,
    infos: dict[str, RouteInfo],
    product_names: list[str],
) -> Case | None:
    m = reader.mapping(node, path, "{name: ..., route: loading, product: gasoline, ...}")
    if m is None:
        return None
    f = Fields(reader, m, path, CASE_KEYS)
    name = f.text("name", required="name: loading, shore ESD valve closes")
    route = f.text("route", required="route: loading")
    info = None
    if route is not None:
        info = infos.get(route)
        if info is None:
            f.problem("route", f"no route {route!r}; {nearest_names(route, infos, 'route')}")
    product = f.text("product", required="product: gasoline")
    if product is not None and product not in product_names:
        f.problem(
            "product", f"no product {product!r}; {nearest_names(product, product_names, 'product')}"
        )
    time = partial(q.quantity, kind="time")
    rate = f.value("rate", partial(q.quantity, kind="flow"), check=positive)
    duration = f.value("duration", time, check=positive)
    spill = f.value("spill_limit", partial(q.quantity, kind="volume"), check=positive)
    max_closure = f.value("max_closure_time", time, check=positive)
    running = _running(f, route, info)
    events = _events(f, route, info)
    carrier = _carrier(f)
    if f.failed or name is None or route is None or product is None:
        return None
    return Case(
        name=name,
        route=route,
        product=product,
        rate=rate,
        running=running,
        events=events,
        duration=duration,
        spill_limit=spill,
        max_closure_time=max_closure,
        carrier=carrier,
        where=reader.where(m.line, path),
    )


def _carrier(f: Fields) -> Carrier | None:
    """The optional ``carrier`` mapping of a case (rate limits other than surge)."""
    if not f.has("carrier"):
        return None
    reader = f.reader
    path = f.key_path("carrier")
    m = reader.mapping(f.node.entries["carrier"], path, _CARRIER_EXAMPLE)
    if m is None:
        f.failed = True
        return None
    c = Fields(reader, m, path, CARRIER_KEYS)
    kind = c.choice("kind", CARRIER_KINDS) if c.has("kind") else None
    length = partial(q.quantity, kind="length")
    vent = c.value("vent_capacity", partial(q.quantity, kind="flow"), check=positive)
    inlet = c.value("inlet_diameter", length, check=positive)
    inlets = c.value(
        "inlets",
        partial(q.number, example="inlets: 2", integer=True),
        check=lambda n: None if n >= 1 else "must be at least 1",
    )
    fill = c.value("fill_pipe", length, check=positive)
    if c.has("inlets") and not c.has("inlet_diameter") and inlets is not None:
        c.problem("inlets", "give the tank inlets' inlet_diameter too, e.g. inlet_diameter: 250 mm")
    if c.failed:
        f.failed = True
        return None
    return Carrier(
        kind=kind,
        vent_capacity=vent,
        inlet_diameter=inlet,
        inlets=int(inlets) if inlets is not None else 1,
        fill_pipe=fill,
        where=reader.where(m.line, path),
    )


def _running(f: Fields, route: str | None, info: RouteInfo | None) -> tuple[tuple[str, int], ...]:
    if not f.has("running"):
        return ()
    reader = f.reader
    path = f.key_path("running")
    m = reader.mapping(f.node.entries["running"], path, "running: {jetty pumps: 2}")
    if m is None:
        f.failed = True
        return ()
    out: list[tuple[str, int]] = []
    for pump, value in m.entries.items():
        item_path = join(path, pump)
        count = reader.scalar(
            value, item_path, partial(q.number, example=f"{pump}: 1", integer=True)
        )
        if count is None:
            f.failed = True
            continue
        if info is None:
            continue
        if pump not in info.pump_counts:
            f.failed = True
            if info.kinds.get(pump) == "pump" or not info.complete:
                continue  # the pump itself has a problem, reported with the route
            if pump in info.kinds:
                what = f"{pump!r} in route {route!r} is a {info.kinds[pump]}, not a pump"
            else:
                what = f"route {route!r} has no pump {pump!r}"
            reader.problem(
                m.key_line(pump),
                item_path,
                f"{what}; {nearest_names(pump, info.pump_counts, 'pump')}",
            )
            continue
        installed = info.pump_counts[pump]
        if not 0 <= count <= installed:
            f.failed = True
            reader.problem(
                value.line,
                item_path,
                f"{count} running is not possible: {pump!r} has {installed} installed; "
                f"give 0 to {installed}",
            )
            continue
        out.append((pump, int(count)))
    return tuple(out)


def _events(f: Fields, route: str | None, info: RouteInfo | None) -> tuple[Event, ...]:
    reader = f.reader
    if not f.has("events"):
        f.missing("events", f"events: [{_EVENT_EXAMPLE}]")
        return ()
    path = f.key_path("events")
    seq = reader.sequence(f.node.entries["events"], path, f"[{_EVENT_EXAMPLE}]")
    if seq is None:
        f.failed = True
        return ()
    if not seq.items:
        f.problem("events", f"a case needs at least one event, e.g. {_EVENT_EXAMPLE}")
    out: list[Event] = []
    moved: dict[str, str] = {}
    for j, node in enumerate(seq.items):
        event = _event(reader, node, index(path, j), route, info)
        if event is None:
            f.failed = True
            continue
        if event.element in moved:
            f.failed = True
            reader.problem(
                event.where.line,
                event.where.path,
                f"{event.element!r} already has an event ({moved[event.element]}); "
                "give each element at most one event per case",
            )
            continue
        moved[event.element] = event.where.path
        out.append(event)
    return tuple(out)


def _event(
    reader: Reader, node: YNode, path: str, route: str | None, info: RouteInfo | None
) -> Event | None:
    m = reader.mapping(node, path, _EVENT_EXAMPLE)
    if m is None:
        return None
    actions = [a for a in EVENT_KEYS if a in m.entries]
    if len(actions) != 1:
        got = " and ".join(actions) if actions else "none"
        *first, last = EVENT_KEYS
        reader.problem(
            m.line,
            path,
            f"an event has exactly one of {', '.join(first)} or {last} naming an element "
            f"(got {got}), e.g. {_EVENT_EXAMPLE}",
        )
        return None
    action = actions[0]
    f = Fields(reader, m, path, EVENT_KEYS[action])
    element = f.text(action)
    if element is not None and info is not None:
        _check_target(f, action, element, route, info)
    at = f.value(
        "at",
        partial(q.quantity, kind="time"),
        check=lambda t: None if t >= 0.0 else "must not be before the trigger (0 s)",
    )
    kwargs: dict[str, Any] = {}
    if action == "close":
        kwargs["stroke"] = f.value(
            "stroke", partial(q.quantity, kind="time"), required="stroke: 25 s", check=positive
        )
        travel = _travel(f)
        if travel is not None:
            kwargs["travel"] = travel
    elif action == "ramp":
        kwargs["ramp_time"] = f.value(
            "ramp_time",
            partial(q.quantity, kind="time"),
            required="ramp_time: 15 s",
            check=positive,
        )
    if f.failed or element is None:
        return None
    return EVENT_ACTIONS[action](
        element=element,
        at=at if at is not None else 0.0,
        where=reader.where(m.line, path),
        **kwargs,
    )


def _check_target(f: Fields, action: str, element: str, route: str | None, info: RouteInfo) -> None:
    kind = info.kinds.get(element)
    target = EVENT_TARGET[action]
    if kind is None and not info.complete:
        return  # the route has unreadable elements (reported there): this may be one of them
    if kind is None:
        names = [n for n, k in info.kinds.items() if k == target] or list(info.kinds)
        f.problem(
            action,
            f"no element {element!r} in route {route!r}; {nearest_names(element, names, target)}",
        )
    elif kind != target:
        instead = ACTION_FOR_KIND.get(kind)
        hint = f"; for a {kind} use '{instead}: {element}'" if instead else ""
        for other in (a for a, k in EVENT_TARGET.items() if k == kind and a != instead):
            keys = [k for k in EVENT_KEYS[other] if k not in ("at", other)]
            hint += f" (or '{other}: {element}'" + (f" with {', '.join(keys)})" if keys else ")")
        if kind in NO_EVENT:
            hint = f"; {NO_EVENT[kind]}"
        f.problem(
            action,
            f"'{action}' applies to a {target}, but {element!r} is a {kind}{hint}",
        )


def _travel(f: Fields) -> tuple[tuple[float, float], ...] | None:
    if not f.has("travel"):
        return None
    example = "travel: [[0, 100 %], [0.5, 30 %], [1, 0 %]]"
    points = f.reader.pairs(
        f.node.entries["travel"],
        f.key_path("travel"),
        (partial(q.number, example="[0.5, 30 %]"), partial(q.ratio, example="30 %")),
        example,
    )
    if points is None:
        f.failed = True
        return None
    message = valves.validate_travel_curve(points)
    if message is not None:
        f.problem(
            "travel",
            f"{message} (fraction of stroke time, then travel open with 100 % = 1); e.g. {example}",
        )
        return None
    return tuple((float(t), float(x)) for t, x in points)
