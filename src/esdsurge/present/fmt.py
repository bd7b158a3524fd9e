"""Number formatting with units for people (``--units si|us``).

Conversion to display units only; every string carries its unit, every pressure says gauge or
absolute. Nothing here computes physics.
"""

from __future__ import annotations

from dataclasses import dataclass

from esdsurge.limits import Basis

PSI = 6894.757293168  # [Pa] (NIST SP 811, exact from lbf/in^2)
FOOT = 0.3048  # [m] exact
US_GALLON = 3.785411784e-3  # [m^3] exact
BARREL = 0.158987294928  # [m^3] exact (42 US gal)


@dataclass(frozen=True)
class Fmt:
    """Formats SI values for display in ``si`` or ``us`` units."""

    system: str = "si"
    atmosphere_abs: float = 101_325.0

    @property
    def us(self) -> bool:
        return self.system == "us"

    def p_gauge(self, p_abs: float | None, digits: int = 1) -> str:
        """An absolute pressure [Pa] shown as gauge."""
        if p_abs is None:
            return "—"
        return self.dp(p_abs - self.atmosphere_abs, digits) + "g"

    def p_gauge_value(self, p_gauge: float | None, digits: int = 1) -> str:
        """A gauge pressure [Pa] shown as gauge."""
        if p_gauge is None:
            return "—"
        return self.dp(p_gauge, digits) + "g"

    def p_abs(self, p_abs: float | None, digits: int = 2) -> str:
        if p_abs is None:
            return "—"
        if self.us:
            return f"{p_abs / PSI:.{digits}f} psia"
        return f"{p_abs / 1e5:.{digits}f} bara"

    def dp(self, dp: float, digits: int = 1) -> str:
        """A pressure difference [Pa] (the caller appends g for gauge)."""
        dp = dp + 0.0  # no negative zero
        if abs(dp) < 0.5 * 10.0 ** (-digits) * (PSI if self.us else 1e5):
            dp = 0.0
        if self.us:
            return f"{dp / PSI:.{max(digits - 1, 0)}f} psi"
        return f"{dp / 1e5:.{digits}f} bar"

    def head(self, h: float, digits: int = 1) -> str:
        if self.us:
            return f"{h / FOOT:.{digits}f} ft"
        return f"{h:.{digits}f} m"

    def length(self, x: float, digits: int = 0) -> str:
        if self.us:
            return f"{x / FOOT:.{digits}f} ft"
        return f"{x:.{digits}f} m"

    def elevation(self, z: float) -> str:
        return self.length(z, 1)

    def diameter(self, d: float) -> str:
        if self.us:
            return f"{d / 0.0254:.2f} in"
        return f"{d * 1000:.1f} mm"

    def speed(self, v: float, digits: int = 2) -> str:
        if self.us:
            return f"{v / FOOT:.{digits}f} ft/s"
        return f"{v:.{digits}f} m/s"

    def wave_speed(self, a: float | None) -> str:
        if a is None:
            return "—"
        if self.us:
            return f"{a / FOOT:.0f} ft/s"
        return f"{a:.0f} m/s"

    def flow(self, q: float) -> str:
        """A flow [m^3/s] (magnitude shown)."""
        if self.us:
            return f"{abs(q) / US_GALLON * 60:.0f} US gpm"
        return f"{abs(q) * 3600:.0f} m³/h"

    def volume(self, v: float | None, digits: int = 2) -> str:
        if v is None:
            return "—"
        if self.us:
            return f"{v / BARREL:.{digits}f} bbl"
        return f"{v:.{digits}f} m³"

    def cavity(self, v: float) -> str:
        """A vapour cavity volume [m^3]: litres (or US gallons) when small."""
        return self.small_volume(v)

    def small_volume(self, v: float, like: float | None = None) -> str:
        """A volume [m^3] that may be small (a cavity, an accumulator's gas): litres (or US
        gallons) below 0.1 m^3 (100 US gal), else m^3 (bbl); the sign is kept.

        ``like`` [m^3] : choose the unit as for this volume instead, so that volumes shown
        together share their unit.
        """
        ref = abs(v if like is None else like)
        if self.us:
            gal = v / US_GALLON
            return f"{gal:.3g} US gal" if ref / US_GALLON < 100 else f"{v / BARREL:.1f} bbl"
        return f"{v * 1000:.3g} L" if ref < 0.1 else f"{v:.2f} m³"

    def percent(self, x: float, digits: int = 0) -> str:
        """A fraction [-] as a percentage."""
        return f"{x * 100:.{digits}f} %"

    def time(self, t: float | None, digits: int = 2) -> str:
        if t is None:
            return "—"
        return f"{t:.{digits}f} s"

    def density(self, rho: float) -> str:
        if self.us:
            return f"{rho / 1000:.4f} SG"
        return f"{rho:.1f} kg/m³"

    def modulus(self, k: float) -> str:
        if self.us:
            return f"{k / PSI:,.0f} psi"
        return f"{k / 1e9:.3f} GPa"

    def viscosity(self, mu: float) -> str:
        return f"{mu * 1000:.3g} mPa·s"

    def temperature(self, t_k: float) -> str:
        if self.us:
            return f"{(t_k - 273.15) * 9 / 5 + 32:.0f} °F"
        return f"{t_k - 273.15:.0f} °C"

    def basis(self, b: Basis) -> str:
        """What sets a limit, with its pressure in these units."""
        if b.pressure is None:
            return b.what
        if b.gauge:
            value = self.p_gauge_value(b.pressure)
        else:
            value = self.p_abs(b.pressure, 3 if b.pressure < 1e5 else 2)
        text = b.what
        if b.temperature is not None:
            text += f" at {self.temperature(b.temperature)}:"
        text += f" {value}"
        if b.allowance > 0.0:
            text += f" + {b.allowance * 100:.0f} % surge allowance"
        return text + (f" {b.note}" if b.note else "")
