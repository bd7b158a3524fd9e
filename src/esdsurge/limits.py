"""The pressure limits that apply to an element, resolved for a product.

An element may carry several limit fields; the one that bites is the lowest maximum and the
highest minimum. This module says which one that is and where it comes from, so that the
summary can name the governing limit.
"""

from __future__ import annotations

from dataclasses import dataclass

from esdsurge.model import Element, Fluid
from esdsurge.physics import flanges


@dataclass(frozen=True)
class Basis:
    """What sets a limit, as numbers for the presenters (``esdsurge.present.fmt.Fmt.basis``
    shows it in the unit system asked for); ``str()`` gives it in SI for logs and JSON.

    what : the kind of limit, e.g. ``"design pressure"``, ``"ASME B16.5 class 150 (group
        1.1)"``, ``"vapour pressure of gasoline"``, or ``"no pressure limit set"``
    pressure : its value [Pa], gauge when ``gauge`` else absolute (``None``: no value)
    allowance : a surge allowance on top of it [-]
    temperature : the temperature a rating is taken at [K], or ``None``
    note : words that follow the value, e.g. ``"(no column separation)"``
    """

    what: str
    pressure: float | None = None
    gauge: bool = True
    allowance: float = 0.0
    temperature: float | None = None
    note: str = ""

    def __str__(self) -> str:
        if self.pressure is None:
            return self.what
        if self.gauge:
            value = f"{self.pressure / 1e5:.1f} barg"
        else:
            digits = 3 if self.pressure < 1e5 else 2
            value = f"{self.pressure / 1e5:.{digits}f} bara"
        text = self.what
        if self.temperature is not None:
            text += f" at {self.temperature - 273.15:.0f} °C:"
        text += f" {value}"
        if self.allowance > 0.0:
            text += f" + {self.allowance * 100:.0f} % surge allowance"
        return text + (f" {self.note}" if self.note else "")


@dataclass(frozen=True)
class ResolvedLimits:
    """Limits of one element for one product.

    max_gauge : highest allowed pressure including surge [Pa gauge], or ``None`` when none is set
    max_basis : what sets it (e.g. design pressure 15.0 barg + 10 % surge allowance)
    min_abs : lowest allowed pressure [Pa abs]
    min_basis : what sets it (vacuum rating or the product's vapour pressure)
    steady_max_gauge : highest allowed pressure at steady state (design pressure, or the
        rating) [Pa gauge], or ``None``
    min_is_vapour : the minimum is the vapour pressure, i.e. no column separation is allowed
    """

    max_gauge: float | None
    max_basis: Basis
    min_abs: float
    min_basis: Basis
    steady_max_gauge: float | None
    min_is_vapour: bool = True


def resolve(element: Element, fluid: Fluid) -> ResolvedLimits:
    """Resolve ``element``'s limits for ``fluid`` at the product temperature.

    The surge limit is the lowest of: design pressure x (1 + surge allowance); the hose's rated
    working pressure (which includes surge); the ASME B16.5 group 1.1 rating of the flange class
    at the product temperature. The steady limit is the lowest of the design pressure, the rated
    working pressure and the flange rating. The minimum is the element's ``min_pressure`` or, by
    default, the product's vapour pressure (no column separation); where both exist the higher
    one applies.
    """
    lim = element.limits
    candidates: list[tuple[float, Basis, float]] = []  # (surge limit, basis, steady limit)
    if lim.design_pressure_gauge is not None:
        dp = lim.design_pressure_gauge
        basis = Basis("design pressure", dp, allowance=lim.surge_allowance)
        candidates.append((dp * (1.0 + lim.surge_allowance), basis, dp))
    if lim.rated_working_pressure_gauge is not None:
        rwp = lim.rated_working_pressure_gauge
        candidates.append((rwp, Basis("rated working pressure", rwp), rwp))
    if lim.flange_class is not None:
        rating = flanges.b16_5_rating_gauge(lim.flange_class, fluid.temperature)
        what = f"ASME B16.5 class {lim.flange_class} (group 1.1)"
        candidates.append((rating, Basis(what, rating, temperature=fluid.temperature), rating))
    if candidates:
        best = min(candidates, key=lambda c: c[0])
        max_gauge, max_basis = best[0], best[1]
        steady_max = min(c[2] for c in candidates)
    else:
        max_gauge, max_basis, steady_max = None, Basis("no pressure limit set"), None

    pv = fluid.vapour_pressure_abs
    if lim.min_pressure_abs is not None and lim.min_pressure_abs > pv:
        min_abs = lim.min_pressure_abs
        min_basis = Basis("minimum pressure", min_abs, gauge=False)
    else:
        min_abs = pv
        min_basis = Basis(
            f"vapour pressure of {fluid.name}", pv, gauge=False, note="(no column separation)"
        )
    return ResolvedLimits(
        max_gauge, max_basis, min_abs, min_basis, steady_max, min_is_vapour=min_abs == pv
    )
