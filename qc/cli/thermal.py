"""Thermal advice on the command line: soak time, temperature band, expansion, drift study.

``register(app)`` adds the commands ``soak``, ``temperature-band``, ``expansion`` and
``drift`` to the main `qc` app.  Each parses options, calls one library function and
prints plain text with units, ranges and the assumptions made.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from enum import StrEnum
from pathlib import Path
from typing import Annotated, Any

import numpy as np
import typer

from qc.core import band as band_core
from qc.core import drift as drift_core
from qc.core import expansion as exp_core
from qc.core import soak as soak_core
from qc.errors import ConfigError, QcError, UnknownNameError
from qc.library.heat_transfer import load_heat_transfer

__all__ = ["format_duration", "load_heat_transfer", "register"]

CAUTION = (
    "Caution: this supports but does not replace the customer's acceptance requirements, "
    "accredited procedures (ISO/IEC 17025) and qualified judgement."
)


# --------------------------------------------------------------------------- data and lookups
@dataclass(frozen=True)
class Props:
    """Material properties used by a command, with where they came from."""

    label: str
    cte: float | None
    cte_u: float | None
    density: float | None
    specific_heat: float | None
    conductivity: float | None


def _material(name: str | None) -> Any:
    if name is None:
        return None
    try:
        from qc.library.materials import load_materials
    except ImportError as exc:
        raise ConfigError(
            "the material library is not available; give the properties as options instead"
        ) from exc
    return load_materials().get(name)


def _props(name: str | None, **explicit: float | None) -> Props:
    mat = _material(name)
    values = {
        key: (val if val is not None else (getattr(mat, key, None) if mat is not None else None))
        for key, val in explicit.items()
    }
    label = getattr(mat, "name", name) if mat is not None else "properties as given"
    if mat is not None and any(v is not None for v in explicit.values()):
        label += " (some properties overridden)"
    return Props(label=label, **values)


def _need(value: float | None, what: str, option: str, by_name: str = "--material") -> float:
    if value is None:
        raise ConfigError(f"{what} is needed: give {by_name} NAME or {option}")
    return float(value)


def format_duration(seconds: float) -> str:
    """A time for a shop-floor reader: '0 s', '45 s', '12 min', '2 h 05 min', 'never'."""
    if math.isinf(seconds):
        return "never"
    if seconds <= 0:
        return "0 s"
    if seconds < 90:
        return f"{seconds:.0f} s"
    minutes = seconds / 60.0
    if minutes < 90:
        return f"{minutes:.0f} min"
    h, m = divmod(round(minutes), 60)
    return f"{h} h {m:02d} min"


def _fail(exc: QcError) -> typer.Exit:
    typer.echo(f"error: {exc}", err=True)
    return typer.Exit(code=2)


def _parse_numbers(text: str, what: str) -> list[float]:
    parts = [p for p in text.replace("×", "x").replace(",", "x").lower().split("x") if p.strip()]
    try:
        return [float(p) for p in parts]
    except ValueError as exc:
        raise ConfigError(f"{what}: expected numbers such as 100x50x30, got {text!r}") from exc


# --------------------------------------------------------------------------- soak
class Shape(StrEnum):
    block = "block"
    cylinder = "cylinder"
    plate = "plate"
    sphere = "sphere"


def _geometry(
    shape: Shape | None, size: str | None, mass: float | None, area: float | None, rho: float
) -> tuple[soak_core.Geometry, str]:
    if shape is not None:
        if size is None:
            raise ConfigError("--size is needed with --shape (mm, e.g. 100x50x30)")
        dims = _parse_numbers(size, "--size")
        want = {"block": 3, "cylinder": (1, 2), "plate": (1, 3), "sphere": 1}[shape.value]
        counts = want if isinstance(want, tuple) else (want,)
        if len(dims) not in counts:
            hint = {
                "block": "length x width x height",
                "cylinder": "diameter x length (or diameter alone for a long bar)",
                "plate": "thickness (x width x length)",
                "sphere": "diameter",
            }[shape.value]
            raise ConfigError(f"--size for a {shape.value}: expected {hint} in mm, got {size!r}")
        if shape is Shape.block:
            g = soak_core.block(*dims)
        elif shape is Shape.cylinder:
            g = soak_core.cylinder(*dims)
        elif shape is Shape.plate:
            g = soak_core.plate(dims[0], *(dims[1:] if len(dims) == 3 else ()))
        else:
            g = soak_core.sphere(dims[0])
        return g, f"{shape.value} {' × '.join(f'{d:g}' for d in dims)} mm ({g.description})"
    if mass is None or area is None:
        raise ConfigError(
            "give the part's shape and size (--shape block --size 100x50x30) "
            "or its mass and surface area (--mass kg --area mm²)"
        )
    g = soak_core.mass_and_area(mass, area, rho)
    return g, f"mass {mass:g} kg, surface {area:g} mm² ({g.description})"


def soak(
    part_temp: Annotated[float, typer.Option(help="Part temperature now, °C.")],
    room_temp: Annotated[float, typer.Option(help="Room temperature, °C.")] = 20.0,
    band: Annotated[float, typer.Option(help="Wanted closeness to room (or gauge), K.")] = 0.5,
    gauge_temp: Annotated[
        float | None, typer.Option(help="Gauge temperature, °C, if not the room's.")
    ] = None,
    material: Annotated[str | None, typer.Option(help="Material name from the library.")] = None,
    density: Annotated[float | None, typer.Option(help="Density, kg/m³.")] = None,
    specific_heat: Annotated[float | None, typer.Option(help="Specific heat, J/(kg·K).")] = None,
    conductivity: Annotated[float | None, typer.Option(help="Conductivity, W/(m·K).")] = None,
    shape: Annotated[Shape | None, typer.Option(help="Simple shape of the part.")] = None,
    size: Annotated[str | None, typer.Option(help="Dimensions in mm, e.g. 100x50x30.")] = None,
    mass: Annotated[float | None, typer.Option(help="Mass, kg (with --area).")] = None,
    area: Annotated[float | None, typer.Option(help="Surface area, mm² (with --mass).")] = None,
    rest: Annotated[
        str, typer.Option(help="How it rests: still-air, moving-air, granite-plate, iron-plate.")
    ] = "still-air",
    surface: Annotated[
        str, typer.Option(help="Finish: bright-metal, dull-metal, painted.")
    ] = "bright-metal",
    h: Annotated[
        str | None, typer.Option(help="Own convection coefficients LOW,NOMINAL,HIGH, W/(m²·K).")
    ] = None,
) -> None:
    """How long a part must rest before it is within a band of the room (or gauge)."""
    try:
        resting, finishes = load_heat_transfer()
        if rest not in resting:
            raise UnknownNameError("resting condition", rest, list(resting))
        if surface not in finishes:
            raise UnknownNameError("surface finish", surface, list(finishes))
        cond, fin = resting[rest], finishes[surface]
        p = _props(
            material,
            cte=None,
            cte_u=None,
            density=density,
            specific_heat=specific_heat,
            conductivity=conductivity,
        )
        rho = _need(p.density, "density", "--density")
        cp = _need(p.specific_heat, "specific heat", "--specific-heat")
        k = _need(p.conductivity, "conductivity", "--conductivity")
        geometry, geo_text = _geometry(shape, size, mass, area, rho)
        if h is not None:
            hs = _parse_numbers(h.replace(",", "x"), "--h")
            if len(hs) != 3:
                raise ConfigError(f"--h: expected LOW,NOMINAL,HIGH in W/(m²·K), got {h!r}")
            h_conv, h_source = hs, "as given with --h"
        else:
            h_conv, h_source = [cond.h_low, cond.h_nominal, cond.h_high], cond.source
        temp_k = 273.15 + room_temp
        eps = [fin.eps_low, fin.eps_nominal, fin.eps_high]
        h_tot = [
            float(soak_core.combined_coefficient(c, e, temp_k))
            for c, e in zip(h_conv, eps, strict=True)
        ]
        r = soak_core.soak_time_range(
            part_temp, room_temp, band, rho, cp, k, *h_tot, geometry=geometry, gauge_c=gauge_temp
        )
    except QcError as exc:
        raise _fail(exc) from exc

    target = "the room" if gauge_temp is None else f"the gauge at {gauge_temp:g} °C"
    echo = typer.echo
    echo(
        f"Soak time: part at {part_temp:g} °C, room at {room_temp:g} °C, "
        f"wanted within ±{band:g} K of {target}"
    )
    echo(f"Part: {geo_text}; {p.label}: ρ {rho:g} kg/m³, c {cp:g} J/(kg·K), k {k:g} W/(m·K)")
    echo(f"Resting: {cond.name if h is None else 'own coefficients'}; surface: {fin.name}")
    echo(
        "Effective coefficient h = convection + linearised radiation "
        f"(4·ε·σ·T³ = {float(soak_core.radiation_coefficient(1.0, temp_k)):.2f}·ε W/(m²·K) "
        f"at {temp_k:.0f} K)"
    )
    echo("")
    echo(f"  {'case':<16}{'h W/(m²·K)':>12}{'Bi':>9}  {'model':<10}{'surface':>14}{'centre':>14}")
    rows = (("fast (high h)", r.fast), ("nominal", r.nominal), ("slow (low h)", r.slow))
    for label, t in rows:
        echo(
            f"  {label:<16}{float(t.h):>12.1f}{float(t.biot):>9.3g}  {t.method!s:<10}"
            f"{format_duration(float(t.surface_s)):>14}{format_duration(float(t.centre_s)):>14}"
        )
    echo("")
    centre = [float(t.centre_s) for _, t in rows]
    if math.isinf(centre[1]):
        echo(
            "The part cannot stay within the band: gauge and room differ by the band or more. "
            "Bring the gauge to room temperature or widen the band."
        )
    elif centre[2] == 0:
        echo("The part is already within the band: it can be measured now.")
    else:
        echo(
            f"Let it rest about {format_duration(centre[1])} "
            f"(range {format_duration(centre[0])} to {format_duration(centre[2])}, "
            "from the uncertain heat-transfer coefficient)."
        )
    echo("Assumptions:")
    echo("  - uniform room temperature; the part approaches it without other heat sources;")
    if any(str(t.method) == "one-term" for _, t in rows):
        echo(
            "  - Bi ≥ 0.1: one-term series solution; the core lags the surface, so the centre "
            "time is the one to wait for;"
        )
    if any(str(t.method) == "lumped" for _, t in rows):
        echo("  - Bi < 0.1: lumped capacitance (Newton cooling), the part is nearly uniform;")
    if not all(bool(t.fourier_ok) for _, t in rows):
        echo(
            "  - Fo < 0.2 in some direction: the one-term result there overstates the time a "
            "little (safe side);"
        )
    echo(f"  - h source: {h_source};")
    if surface == "bright-metal":
        echo("  - surface taken as bright metal (the default; for plastics or painted parts")
        echo("    give --surface painted, which shortens the time);")
    echo(f"  - emissivity {fin.eps_low:g}–{fin.eps_high:g}: {fin.source}.")
    echo(CAUTION)


# --------------------------------------------------------------------------- temperature band
def temperature_band(
    size: Annotated[float, typer.Option(help="Nominal size of the characteristic, mm.")],
    tolerance: Annotated[float, typer.Option(help="Tolerance width (upper − lower), µm.")],
    share: Annotated[float, typer.Option(help="Share of the tolerance for temperature, %.")] = 10.0,
    material: Annotated[str | None, typer.Option(help="Part material from the library.")] = None,
    cte: Annotated[float | None, typer.Option(help="Part expansion coefficient, µm/(m·K).")] = None,
    cte_u: Annotated[float | None, typer.Option(help="Its standard uncertainty, µm/(m·K).")] = None,
    gauge_material: Annotated[
        str | None, typer.Option(help="Gauge or scale material from the library.")
    ] = None,
    gauge_cte: Annotated[
        float | None, typer.Option(help="Gauge expansion coefficient, µm/(m·K).")
    ] = None,
    gauge_cte_u: Annotated[
        float | None, typer.Option(help="Its standard uncertainty, µm/(m·K).")
    ] = None,
    thermometer_u: Annotated[
        float, typer.Option(help="Thermometer standard uncertainty, K (for ±a: a/√3).")
    ] = 0.2,
    k: Annotated[float, typer.Option(help="Coverage factor for the residual.")] = 2.0,
) -> None:
    """Between which temperatures a characteristic can be measured, with and without correction."""
    try:
        p = _props(
            material,
            cte=_scale(cte),
            cte_u=_scale(cte_u),
            density=None,
            specific_heat=None,
            conductivity=None,
        )
        gauge_default = gauge_material is None and gauge_cte is None
        g = _props(
            gauge_material,
            cte=_scale(gauge_cte),
            cte_u=_scale(gauge_cte_u),
            density=None,
            specific_heat=None,
            conductivity=None,
        )
        if not 0 < share <= 100:
            raise ConfigError(
                f"--share: expected a percentage above 0 and at most 100, got {share:g}"
            )
        a_p = _need(p.cte, "the part's expansion coefficient", "--cte")
        if gauge_default:
            # ISO 3650:1998, 6.2.2 (from memory): steel gauge blocks (11.5 ± 1.0)·10⁻⁶/K.
            a_g, g_label = 11.5e-6, "steel gauge (assumed)"
            u_g = 1.0e-6 / math.sqrt(3) if gauge_cte_u is None else gauge_cte_u * 1e-6
        else:
            a_g = _need(
                g.cte, "the gauge's expansion coefficient", "--gauge-cte", "--gauge-material"
            )
            u_g, g_label = (g.cte_u or 0.0), g.label
        u_p = p.cte_u or 0.0
        b = band_core.allowable_band(
            size, tolerance, share / 100.0, a_p, a_g, u_p, u_g, thermometer_u, k
        )
    except QcError as exc:
        raise _fail(exc) from exc
    echo = typer.echo
    unc, cor, off = float(b.uncorrected_k[()]), float(b.corrected_k[()]), float(b.offset_k[()])
    echo(
        f"Temperature band: {size:g} mm, tolerance {tolerance:g} µm, "
        f"{share:g} % of it ({float(b.budget_um[()]):.2f} µm) allowed for temperature"
    )
    echo(f"Part: {p.label}, α {a_p * 1e6:.2f} ± {u_p * 1e6:.2f} µm/(m·K) (standard uncertainty)")
    echo(f"Gauge: {g_label}, α {a_g * 1e6:.2f} ± {u_g * 1e6:.2f} µm/(m·K)")
    echo("")
    echo(f"  Without correction: {_range_text(unc)}")
    echo(
        f"  With correction to 20 °C (thermometer u = {thermometer_u:g} K, k = {k:g}): "
        f"{_range_text(cor)}"
    )
    echo(f"  Part and gauge may differ by up to ±{_k_text(off)} (uncorrected, both near 20 °C).")
    echo("")
    echo("Assumptions:")
    echo("  - part and gauge at the same temperature for the two bands above;")
    echo("  - uncorrected: the whole differential expansion L·(α_part − α_gauge)·(t − 20 °C)")
    echo("    counts, with k times the uncertainty of the expansion coefficients added, and the")
    echo("    band for the thermometer reading is narrowed by k times its uncertainty;")
    echo("  - corrected: only the residual uncertainty of the correction counts")
    echo("    (JCGM 100:2008, H.1); the thermometer reads the part's temperature;")
    if gauge_default:
        echo(
            "  - gauge assumed steel, α = 11.5 ± 1.0 µm/(m·K) rectangular (ISO 3650, from memory);"
        )
    echo(f"  - the {share:g} % share is a choice of the shop (common practice, no source).")
    echo(CAUTION)


def _scale(x: float | None) -> float | None:
    """Options take α in µm/(m·K) = 10⁻⁶/K; the core works in 1/K."""
    return None if x is None else x * 1e-6


def _k_text(half: float) -> str:
    return "any difference" if math.isinf(half) else f"{half:.2g} K"


def _range_text(half: float) -> str:
    if math.isinf(half):
        return "any temperature (no thermal limit from this characteristic)"
    if half <= 0:
        return "no temperature is good enough: the thermometer alone uses up the share"
    return f"measure only between {20 - half:.1f} and {20 + half:.1f} °C (20 ± {half:.2f} K)"


# --------------------------------------------------------------------------- expansion
def expansion(
    length: Annotated[float, typer.Option(help="Length, mm.")],
    to_temp: Annotated[float, typer.Option("--to", help="Temperature it goes to, °C.")],
    from_temp: Annotated[
        float, typer.Option("--from", help="Temperature it comes from, °C.")
    ] = 20.0,
    material: Annotated[str | None, typer.Option(help="Material of the piece.")] = None,
    cte: Annotated[float | None, typer.Option(help="Its expansion coefficient, µm/(m·K).")] = None,
    base_material: Annotated[
        str | None, typer.Option(help="Material it is fixed to (base, backing, vice).")
    ] = None,
    base_cte: Annotated[
        float | None, typer.Option(help="The base's expansion coefficient, µm/(m·K).")
    ] = None,
    modulus: Annotated[
        float | None, typer.Option(help="Young's modulus of the piece, GPa (for stress).")
    ] = None,
    thickness: Annotated[float | None, typer.Option(help="Thickness of the piece, mm.")] = None,
    base_thickness: Annotated[float | None, typer.Option(help="Thickness of the base, mm.")] = None,
    base_modulus: Annotated[float | None, typer.Option(help="Modulus of the base, GPa.")] = None,
) -> None:
    """Growth of a length between two temperatures, and the mismatch of two materials."""
    try:
        p = _props(
            material,
            cte=_scale(cte),
            cte_u=None,
            density=None,
            specific_heat=None,
            conductivity=None,
        )
        a = _need(p.cte, "the expansion coefficient", "--cte")
        has_base = base_material is not None or base_cte is not None
        if has_base:
            bp = _props(
                base_material,
                cte=_scale(base_cte),
                cte_u=None,
                density=None,
                specific_heat=None,
                conductivity=None,
            )
            a_b = _need(bp.cte, "the base's expansion coefficient", "--base-cte", "--base-material")
        want_bow = thickness is not None or base_thickness is not None
        if want_bow and not has_base:
            raise ConfigError("a bow estimate needs the base: give --base-material or --base-cte")
        if want_bow and (thickness is None or base_thickness is None):
            raise ConfigError("a bow estimate needs both --thickness and --base-thickness (mm)")
        if want_bow and (modulus is None) != (base_modulus is None):
            raise ConfigError("give both --modulus and --base-modulus, or neither (then equal)")
    except QcError as exc:
        raise _fail(exc) from exc
    dt = to_temp - from_temp
    echo = typer.echo
    grow = float(exp_core.length_change_um(length, a, from_temp, to_temp))
    echo(
        f"Expansion: {length:g} mm ({p.label}, α {a * 1e6:.2f} µm/(m·K)), "
        f"{from_temp:g} → {to_temp:g} °C (ΔT {dt:+g} K)"
    )
    echo(f"  Free growth: {grow:+.1f} µm ({a * dt * 1e6:+.1f} µm/m)")
    if has_base:
        e = math.nan if modulus is None else modulus
        m = exp_core.mismatch(length, a, a_b, dt, e)
        base_grow = float(exp_core.length_change_um(length, a_b, from_temp, to_temp))
        echo(f"  Base ({bp.label}, α {a_b * 1e6:.2f} µm/(m·K)): free growth {base_grow:+.1f} µm")
        echo(
            f"  Mismatch over the length: {float(m.free_um):+.1f} µm "
            f"(strain {float(m.strain) * 1e6:+.0f} µm/m)"
        )
        if modulus is not None:
            echo(
                f"  Stress if fully restrained: {float(m.stress_mpa):+.1f} MPa "
                "(negative = compression; bolts that slip relieve part of it)"
            )
        if want_bow:
            e1 = modulus if modulus is not None else 1.0
            e2 = base_modulus if base_modulus is not None else 1.0
            kappa = float(exp_core.bimetal_curvature(a_b, a, base_thickness, thickness, e2, e1, dt))
            bow = float(exp_core.bow_um(kappa, length))
            side = "the piece's side bulges out" if kappa > 0 else "the base's side bulges out"
            echo(
                f"  Bow estimate if bonded along its length and free to bend: {abs(bow):.1f} µm "
                f"over {length:g} mm ({side}); curvature {abs(kappa):.3g} 1/m"
            )
            echo(
                "  (estimate: Timoshenko's bimetal formula and a shallow arc δ = κ·ℓ²/8;"
                + (" equal moduli assumed)" if modulus is None else ")")
            )
    echo("Assumptions: uniform temperature; α constant over the range; lengths at 20 °C.")


# --------------------------------------------------------------------------- drift
def drift(
    log: Annotated[Path, typer.Argument(help="Drift-study CSV (see docs/thermal.md).")],
    resolution: Annotated[float, typer.Option(help="Indicator resolution, µm.")] = 1.0,
    plot: Annotated[
        Path | None, typer.Option(help="Write a plot here (.png, .svg or .pdf).")
    ] = None,
    alpha: Annotated[float, typer.Option(help="Significance level for the slope.")] = 0.05,
) -> None:
    """Whether a machine moves with the room: µm per K for each axis from a drift log."""
    from qc.io.driftlog import read_drift_log

    try:
        data = read_drift_log(log)
        fit = drift_core.fit_drift(data.temperature_c, data.readings_um, resolution, alpha)
        written = None
        if plot is not None:
            from qc.report.drift_plot import plot_drift

            written = plot_drift(
                plot,
                data.time_s,
                data.temperature_c,
                data.readings_um,
                data.axes,
                fit.slope_um_per_k,
                f"Drift study: {data.source}",
            )
    except QcError as exc:
        raise _fail(exc) from exc
    echo = typer.echo
    t = data.temperature_c
    duration = format_duration(float(data.time_s[-1]))
    echo(
        f"Drift study: {data.source}, {len(t)} rows over {duration}, "
        f"temperature {np.min(t):.2f} to {np.max(t):.2f} °C"
    )
    echo(
        f"  {'axis':<10}{'µm/K':>9}{'± u':>8}{'n':>5}{'span K':>8}{'drift µm':>10}{'p':>9}  verdict"
    )
    for i, name in enumerate(data.axes):
        if fit.moves_with_room[i]:
            verdict = "moves with the room"
        elif fit.significant[i]:
            verdict = "trend found, but below the indicator resolution"
        elif fit.above_resolution[i]:
            verdict = "no significant trend (scatter too large to tell)"
        else:
            verdict = "no movement the indicator can show"
        echo(
            f"  {name:<10}{fit.slope_um_per_k[i]:>+9.2f}{fit.u_slope_um_per_k[i]:>8.2f}"
            f"{fit.n[i]:>5d}{fit.span_k[i]:>8.2f}{fit.drift_um[i]:>10.1f}"
            f"{fit.p_value[i]:>9.2g}  {verdict}"
        )
    echo("")
    echo(
        f"µm/K: least-squares slope of reading on temperature, ± its standard uncertainty; "
        f"drift = |slope| × span, compared with the resolution {resolution:g} µm; "
        f"slope significant if p < {alpha:g} (t-test, n − 2 degrees of freedom)."
    )
    echo(
        "Assumptions: readings follow the temperature without lag; other causes of drift "
        "(warm-up, time) are not separated from temperature."
    )
    if written is not None:
        echo(f"Plot written: {written}")


def register(app: typer.Typer) -> None:
    """Add the thermal commands to ``app``."""
    app.command("soak")(soak)
    app.command("temperature-band")(temperature_band)
    app.command("expansion")(expansion)
    app.command("drift")(drift)
