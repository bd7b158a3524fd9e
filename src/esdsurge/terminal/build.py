"""Validate a composed terminal file and build the model objects.

Reads the top level, the site, the products, the routes (through the element registry of
:mod:`esdsurge.terminal.elements`) and the cases (:mod:`esdsurge.terminal.cases`), in that
order, collecting every problem. The
caller raises one :class:`~esdsurge.errors.InputError` with all of them.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from functools import partial
from typing import Any

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import (
    ELEMENT_KINDS,
    Element,
    Fluid,
    Route,
    Terminal,
)
from esdsurge.physics import products as builtin_products
from esdsurge.terminal import quantities as q
from esdsurge.terminal.cases import RouteInfo, read_cases
from esdsurge.terminal.elements import Draft, allowed_fields, read_element
from esdsurge.terminal.fields import Fields, Reader, did_you_mean, nearest_names, positive
from esdsurge.terminal.yamlnodes import YNode, YSeq, index, join

TOP_KEYS = ("format", "terminal", "site", "products", "routes", "cases")
SITE_KEYS = ("atmosphere", "temperature")
PRODUCT_KEYS = (
    "builtin",
    "density",
    "bulk_modulus",
    "sound_speed",
    "vapour_pressure",
    "viscosity",
    "kinematic_viscosity",
    "temperature",
    "conductivity",
    "sulphur",
)
_ELEMENT_EXAMPLE = "'- pipe: shore line' followed by its fields"


@dataclass
class _Item:
    kind: str
    name: str
    draft: Draft | None
    line: int
    path: str
    node_id: int


def build(root: YNode | None, reader: Reader) -> Terminal | None:
    """Build the terminal from the composed file; ``None`` when any problem was found."""
    if root is None:
        reader.problem(0, "", "the file is empty; a terminal file starts with 'format: 1'")
        return None
    top = reader.mapping(root, "", "format: 1, terminal: ..., products: ..., routes: ...")
    if top is None:
        return None
    f = Fields(reader, top, "", TOP_KEYS)
    _format(f)
    name = f.text("terminal", required="terminal: Kestrel Bay jetty 2")
    _site(f)
    products = _products(f)
    routes, infos = _routes(f)
    cases = read_cases(f, infos)
    if reader.problems or name is None:
        return None
    return Terminal(
        path=reader.file,
        name=name,
        atmosphere_abs=reader.atmosphere_abs,
        temperature=reader.temperature,
        products=products,
        routes=routes,
        cases=tuple(cases),
    )


def _format(f: Fields) -> None:
    def parse(value: object) -> int:
        if isinstance(value, int) and not isinstance(value, bool) and value == 1:
            return 1
        raise q.QuantityError(f"only format 1 is understood; write 'format: 1' (got {value!r})")

    f.value("format", parse, required="format: 1")


def _site(f: Fields) -> None:
    if not f.has("site"):
        return
    node = f.reader.mapping(f.node.entries["site"], "site", "site: {atmosphere: 1.01325 bara}")
    if node is None:
        return
    site = Fields(f.reader, node, "site", SITE_KEYS)

    def absolute(value: object) -> float:
        p = q.pressure(value, "abs", math.nan)
        if not math.isfinite(p):
            raise q.QuantityError(
                "the atmosphere is an absolute pressure: write e.g. '1.01325 bara'"
            )
        return p

    atmosphere = site.value("atmosphere", absolute, check=positive)
    if atmosphere is not None:
        f.reader.atmosphere_abs = atmosphere
    temperature = site.value("temperature", q.temperature)
    if temperature is not None:
        f.reader.temperature = temperature


# --- products --------------------------------------------------------------------------------


def _products(f: Fields) -> dict[str, Fluid]:
    reader = f.reader
    if not f.has("products"):
        f.missing("products", "products: {gasoline: {builtin: gasoline}}")
        return {}
    node = reader.mapping(f.node.entries["products"], "products", "{gasoline: {builtin: gasoline}}")
    if node is None:
        return {}
    if not node.entries:
        reader.problem(
            node.line, "products", "give at least one product, e.g. gasoline: {builtin: gasoline}"
        )
    out: dict[str, Fluid] = {}
    for name, value in node.entries.items():
        path = join("products", name)
        fluid = _product(reader, name, value, path, node.key_line(name))
        if fluid is not None:
            out[name] = fluid
    return out


def _builtin_names() -> list[str]:
    return sorted(set(builtin_products.builtin_names()) | set(builtin_products.ALIASES))


def _product(reader: Reader, name: str, node: YNode, path: str, line: int) -> Fluid | None:
    m = reader.mapping(node, path, "{builtin: gasoline} or {density: 791 kg/m^3, ...}")
    if m is None:
        return None
    f = Fields(reader, m, path, PRODUCT_KEYS)
    atm = reader.atmosphere_abs
    temperature = f.value("temperature", q.temperature)
    temperature = temperature if temperature is not None else reader.temperature
    given: dict[str, float | None] = {
        "density": f.value("density", partial(q.quantity, kind="density"), check=positive),
        "bulk_modulus": f.value(
            "bulk_modulus", partial(q.quantity, kind="modulus"), check=positive
        ),
        "sound_speed": f.value("sound_speed", partial(q.quantity, kind="velocity"), check=positive),
        "vapour_pressure": f.value(
            "vapour_pressure",
            partial(q.pressure, reference="abs", atmosphere_abs=atm),
            check=lambda p: None if p >= 0.0 else "is below absolute zero (0 bara)",
        ),
        "viscosity": f.value("viscosity", partial(q.quantity, kind="viscosity"), check=positive),
        "kinematic_viscosity": f.value(
            "kinematic_viscosity",
            partial(q.quantity, kind="kinematic viscosity"),
            check=positive,
        ),
        "conductivity": f.value(
            "conductivity",
            partial(q.quantity, kind="conductivity"),
            check=lambda c: None if c >= 0.0 else "must not be negative",
        ),
        "sulphur": f.value(
            "sulphur",
            partial(q.ratio, example="10 ppm"),
            check=lambda s: None if 0.0 <= s <= 1.0 else "must lie between 0 and 100 %",
        ),
    }
    for one, other in (("bulk_modulus", "sound_speed"), ("viscosity", "kinematic_viscosity")):
        if f.has(one) and f.has(other):
            f.problem(other, f"give either {one} or {other}, not both")
    base: Fluid | None = None
    builtin = f.text("builtin")
    if builtin is not None:
        try:
            base = builtin_products.builtin_fluid(builtin, temperature, name)
        except KeyError:
            f.problem(
                "builtin",
                f"no built-in product {builtin!r}; "
                f"{nearest_names(builtin, _builtin_names(), 'built-in product')}",
            )
        except PhysicsRangeError as exc:
            f.problem("temperature" if f.has("temperature") else "builtin", str(exc))
    elif not f.has("builtin"):
        for key, example in (
            ("density", "density: 791 kg/m^3"),
            ("bulk_modulus", "bulk_modulus: 0.83 GPa (or sound_speed: 1120 m/s)"),
            ("vapour_pressure", "vapour_pressure: 13 kPaa"),
            ("viscosity", "viscosity: 0.59 mPa*s (or kinematic_viscosity: 0.75 cSt)"),
        ):
            alternative = {"bulk_modulus": "sound_speed", "viscosity": "kinematic_viscosity"}
            if not f.has(key) and not f.has(alternative.get(key, key)):
                f.missing(key, example + ", or builtin: gasoline")
    if f.failed:
        return None
    return _fluid(f, name, temperature, base, given, line, path)


def _fluid(
    f: Fields,
    name: str,
    temperature: float,
    base: Fluid | None,
    given: dict[str, float | None],
    line: int,
    path: str,
) -> Fluid:
    """The product: the built-in set with what the file gives in its place."""
    values: dict[str, Any] = {}
    sources: dict[str, str] = dict(base.sources) if base is not None else {}

    def note(prop: str, key: str) -> None:
        sources[prop] = f"given in file (line {f.line(key)})"

    density = given["density"] if given["density"] is not None else base.density  # type: ignore[union-attr]
    if given["density"] is not None:
        values["density"] = density
        note("density", "density")
    if given["bulk_modulus"] is not None:
        values["bulk_modulus"] = given["bulk_modulus"]
        note("bulk_modulus", "bulk_modulus")
    elif given["sound_speed"] is not None:
        values["bulk_modulus"] = density * given["sound_speed"] ** 2
        note("bulk_modulus", "sound_speed")
    if given["vapour_pressure"] is not None:
        values["vapour_pressure_abs"] = given["vapour_pressure"]
        note("vapour_pressure_abs", "vapour_pressure")
    if given["viscosity"] is not None:
        values["viscosity"] = given["viscosity"]
        note("viscosity", "viscosity")
    elif given["kinematic_viscosity"] is not None:
        values["viscosity"] = density * given["kinematic_viscosity"]
        note("viscosity", "kinematic_viscosity")
    for key in ("conductivity", "sulphur"):
        if given[key] is not None:
            values[key] = given[key]
            note(key, key)
    where = f.reader.where(line, path)
    if base is None:
        return Fluid(
            name=name,
            builtin=None,
            temperature=temperature,
            sources=tuple(sources.items()),
            where=where,
            **values,
        )
    return dataclasses.replace(
        base, name=name, sources=tuple(sources.items()), where=where, **values
    )


# --- routes ----------------------------------------------------------------------------------


def _routes(f: Fields) -> tuple[dict[str, Route], dict[str, RouteInfo]]:
    reader = f.reader
    routes: dict[str, Route] = {}
    infos: dict[str, RouteInfo] = {}
    if not f.has("routes"):
        f.missing("routes", "routes: {loading: [- tank: ..., - pipe: ..., - tank: ...]}")
        return routes, infos
    node = reader.mapping(f.node.entries["routes"], "routes", "routes: {loading: [...]}")
    if node is None:
        return routes, infos
    if not node.entries:
        reader.problem(node.line, "routes", "give at least one route, e.g. loading: [...]")
    drafts: dict[int, _Item | None] = {}
    named: dict[str, tuple[Element, _Item]] = {}
    for name, value in node.entries.items():
        path = join("routes", name)
        info = RouteInfo()
        infos[name] = info
        route = _route(reader, name, value, path, node.key_line(name), drafts, named, info)
        if route is not None:
            routes[name] = route
    return routes, infos


def _read_item(reader: Reader, node: YNode, path: str) -> _Item | None:
    """Read one element mapping of a route (kind, name, fields)."""
    m = reader.mapping(node, path, _ELEMENT_EXAMPLE)
    if m is None:
        return None
    kinds = [k for k in m.entries if k in ELEMENT_KINDS]
    if len(kinds) != 1:
        if kinds:
            message = f"an element has one kind, got {' and '.join(kinds)}"
        else:
            hints = "".join(did_you_mean(k, ELEMENT_KINDS) for k in m.entries)
            message = (
                f"an element starts with its kind and name, e.g. {_ELEMENT_EXAMPLE}{hints}; "
                f"kinds: {', '.join(ELEMENT_KINDS)}"
            )
        reader.problem(m.line, path, message)
        return None
    kind = kinds[0]
    f = Fields(reader, m, path, (kind, *allowed_fields(kind)))
    name = f.text(kind, required=f"{kind}: shore line")
    if name is None:
        return None
    line = m.key_line(kind)
    draft = read_element(f, kind, name)
    if draft is not None:
        draft.kwargs["where"] = reader.where(line, path)
    return _Item(kind, name, draft, line, path, id(node))


def _route(
    reader: Reader,
    name: str,
    node: YNode,
    path: str,
    line: int,
    drafts: dict[int, _Item | None],
    named: dict[str, tuple[Element, _Item]],
    info: RouteInfo,
) -> Route | None:
    seq = reader.sequence(node, path, "[{tank: shore tank}, {pipe: shore line, ...}, ...]")
    if seq is None:
        info.complete = False
        return None
    items: list[_Item | None] = []
    for i, element_node in enumerate(seq.items):
        key = id(element_node)
        if key not in drafts:
            drafts[key] = _read_item(reader, element_node, index(path, i))
        items.append(drafts[key])
    ok = all(item is not None and item.draft is not None for item in items)
    _check_route_shape(reader, seq, path, items)
    info.complete = all(item is not None for item in items)
    for i, item in enumerate(items):
        if item is None:
            continue
        if item.name in info.kinds:
            reader.problem(
                item.line,
                index(path, i),
                f"the name {item.name!r} is used twice in route {name!r}; "
                "give each element its own name",
            )
            ok = False
            continue
        info.kinds[item.name] = item.kind
        if item.kind == "pump" and item.draft is not None:
            info.pump_counts[item.name] = item.draft.kwargs["count"]
    if not ok:
        return None
    elements = _complete(reader, path, [item for item in items if item is not None], named)
    if elements is None:
        return None
    return Route(name=name, elements=tuple(elements), where=reader.where(line, path))


def _check_route_shape(reader: Reader, seq: YSeq, path: str, items: list[_Item | None]) -> None:
    """A tank at each end and nowhere else; at least one element with length."""
    if len(items) < 3:
        reader.problem(
            seq.line,
            path,
            f"a route needs a tank at each end and at least one pipe, arm or hose between; "
            f"got {len(items)} element(s)",
        )
        return
    for i, item in enumerate(items):
        if item is None:
            continue
        end = i in (0, len(items) - 1)
        if end and item.kind != "tank":
            side = "first (shore end)" if i == 0 else "last (carrier end)"
            reader.problem(
                item.line,
                index(path, i),
                f"the {side} element of a route must be a tank, got {item.kind} {item.name!r}",
            )
        elif not end and item.kind == "tank":
            reader.problem(
                item.line,
                index(path, i),
                f"a tank can only be the first or the last element of a route; {item.name!r} "
                f"is element {i} of {len(items)}",
            )
    if all(item is not None for item in items) and not any(
        ELEMENT_KINDS[item.kind].has_length for item in items if item is not None
    ):
        reader.problem(seq.line, path, "a route needs at least one pipe, arm or hose")


def _complete(
    reader: Reader,
    path: str,
    items: list[_Item],
    named: dict[str, tuple[Element, _Item]],
) -> list[Element] | None:
    """Give valves and couplings their bore and build the model objects of one route."""
    out: list[Element] = []
    ok = True
    for i, item in enumerate(items):
        assert item.draft is not None
        kwargs = dict(item.draft.kwargs)
        if item.draft.finish is not None:
            diameter = item.draft.bore
            if diameter is None:
                diameter = _neighbour_bore(items, i)
            if diameter is None:
                reader.problem(
                    item.line,
                    item.path,
                    f"no element next to {item.kind} {item.name!r} has a bore to take its "
                    "size from; give size, e.g. size: 12 in",
                )
                ok = False
                continue
            rest = item.draft.finish(diameter)
            if isinstance(rest, str):
                reader.problem(item.line, item.path, rest)
                ok = False
                continue
            kwargs.update(rest)
        element = item.draft.cls(**kwargs)
        if item.name in named:
            first, first_item = named[item.name]
            if first != element:
                reader.problem(item.line, index(path, i), _conflict(item, first_item))
                ok = False
                continue
            element = first
        else:
            named[item.name] = (element, item)
        out.append(element)
    return out if ok else None


def _conflict(item: _Item, first: _Item) -> str:
    if item.node_id == first.node_id:
        return (
            f"{item.kind} {item.name!r} takes its bore from its neighbours, which differ from "
            f"those at {first.path}; give its size"
        )
    return (
        f"the name {item.name!r} is already used by a different element at {first.path} "
        f"(line {first.line}); one name is one element: reuse it with an anchor "
        f"(&name / *name) or give this one another name"
    )


def _neighbour_bore(items: list[_Item], i: int) -> float | None:
    """Bore of the nearest element with one, looking upstream first at each distance."""
    for distance in range(1, len(items)):
        for j in (i - distance, i + distance):
            if 0 <= j < len(items):
                draft = items[j].draft
                if draft is not None and draft.bore is not None:
                    return draft.bore
    return None
