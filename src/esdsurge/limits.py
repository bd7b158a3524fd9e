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
class ResolvedLimits:
    """Limits of one element for one product.

    max_gauge : highest allowed pressure including surge [Pa gauge], or ``None`` when none is set
    max_basis : what sets it (e.g. ``"design pressure 15.0 barg + 10 % surge allowance"``)
    min_abs : lowest allowed pressure [Pa abs]
    min_basis : what sets it (vacuum rating or the product's vapour pressure)
    steady_max_gauge : highest allowed pressure at steady state (design pressure, or the
        rating) [Pa gauge], or ``None``
    min_is_vapour : the minimum is the vapour pressure, i.e. no column separation is allowed
    """

    max_gauge: float | None
    max_basis: str
    min_abs: float
    min_basis: str
    steady_max_gauge: float | None
    min_is_vapour: bool = True


def _bar(p: float) -> str:
    return f"{p / 1e5:.1f}"


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
    candidates: list[tuple[float, str, float]] = []  # (surge limit, basis, steady limit)
    if lim.design_pressure_gauge is not None:
        dp = lim.design_pressure_gauge
        if lim.surge_allowance > 0.0:
            basis = (
                f"design pressure {_bar(dp)} barg + {lim.surge_allowance * 100:.0f} % "
                "surge allowance"
            )
        else:
            basis = f"design pressure {_bar(dp)} barg"
        candidates.append((dp * (1.0 + lim.surge_allowance), basis, dp))
    if lim.rated_working_pressure_gauge is not None:
        rwp = lim.rated_working_pressure_gauge
        candidates.append((rwp, f"rated working pressure {_bar(rwp)} barg", rwp))
    if lim.flange_class is not None:
        rating = flanges.b16_5_rating_gauge(lim.flange_class, fluid.temperature)
        t_c = fluid.temperature - 273.15
        candidates.append(
            (
                rating,
                f"ASME B16.5 class {lim.flange_class} (group 1.1) at {t_c:.0f} °C: "
                f"{_bar(rating)} barg",
                rating,
            )
        )
    if candidates:
        best = min(candidates, key=lambda c: c[0])
        max_gauge, max_basis = best[0], best[1]
        steady_max = min(c[2] for c in candidates)
    else:
        max_gauge, max_basis, steady_max = None, "no pressure limit set", None

    pv = fluid.vapour_pressure_abs
    if lim.min_pressure_abs is not None and lim.min_pressure_abs > pv:
        min_abs = lim.min_pressure_abs
        min_basis = f"minimum pressure {lim.min_pressure_abs / 1e5:.2f} bara"
    else:
        min_abs = pv
        min_basis = f"vapour pressure of {fluid.name} {pv / 1e5:.3f} bara (no column separation)"
    return ResolvedLimits(
        max_gauge, max_basis, min_abs, min_basis, steady_max, min_is_vapour=min_abs == pv
    )
