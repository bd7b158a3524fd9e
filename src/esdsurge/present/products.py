"""Human view of ``esdsurge products`` (reads the physics' own description; computes nothing)."""

from __future__ import annotations

from typing import Any

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text

from esdsurge.present.fmt import Fmt


def products_view(items: list[dict[str, Any]], f: Fmt, temperature: float) -> RenderableType:
    t = Table(title=f"built-in products at {f.temperature(temperature)}", header_style="bold")
    t.add_column("product", no_wrap=True)
    t.add_column("density", justify="right")
    t.add_column("Ks isentropic", justify="right", no_wrap=True)
    t.add_column("sound speed", justify="right")
    t.add_column("vapour pressure", justify="right")
    t.add_column("viscosity", justify="right")
    t.add_column("valid range", justify="right", no_wrap=True)
    for p in items:
        name = p["name"]
        if p.get("aliases"):
            name += f" ({', '.join(p['aliases'])})"
        valid = f"{f.temperature(p['t_min_K'])} to {f.temperature(p['t_max_K'])}"
        if p["density_kg_m3"] is None:
            t.add_row(name, "—", "—", "—", "—", "—", valid + " (outside)")
            continue
        t.add_row(
            name,
            f.density(p["density_kg_m3"]),
            f.modulus(p["bulk_modulus_Pa"]),
            f.wave_speed(p["sound_speed_m_s"]),
            f.p_abs(p["vapour_pressure_Pa_abs"], 3),
            f.viscosity(p["viscosity_Pa_s"]),
            valid,
        )
    src = Table(title="where the values come from", header_style="bold", show_lines=False)
    src.add_column("product", no_wrap=True)
    src.add_column("property", no_wrap=True)
    src.add_column("source")
    for p in items:
        first = True
        for prop, text in p["sources"].items():
            src.add_row(p["name"] if first else "", prop, text)
            first = False
    note = Text(
        "Wave speeds depend on the isentropic bulk modulus; fuels are mixtures whose values vary "
        "by batch: give measured values in the terminal file where you have them.",
        style="dim",
    )
    return Group(t, src, note)
