"""Graded panels in the design space: three variables of our own turned into each zone's rows, struts and mass.

A graded panel (``panel.zones`` of a column-panel project, :mod:`latticecalc.physics.zoning`) is searched
through three variables a search can move:

``zones.count``
    How many zones up the panel (a list of whole numbers from 1). One zone is the uniform panel: its
    design, fingerprint and numbers are exactly those of a space without zone variables.
``zones.diameter_spread``
    The relative step of lattice strut diameter from one zone to the next, centred on
    ``lattice.strut_diameter``: zone k of n (k = 1 … n, bottom first) has
    d_k = d (1 + s (k − (n + 1)/2)). With two zones and s = 0.2, d × 0.9 below and d × 1.1 above.
``zones.mass_spread``
    Likewise for the mass at strut mid-span, centred on ``lattice.added_mass`` (no mass stays no mass).

Why a linear step centred on the panel's own diameter: the clamped strut's first mode is proportional to
its diameter, so the zones' strut modes sit a fixed fraction apart around the mode of the centre diameter,
and a search moves them apart (to cover peaks far apart) or together (one peak) with one number, while
``lattice.strut_diameter`` keeps its meaning (the middle of the panel). A list of diameters per zone would
give the search a variable per zone whose meaning changes with the zone count.

Zone heights: the panel's cell rows are split as evenly as they allow, the lower zones taking one row more
where they do not divide (10 rows in 3 zones: 4, 3, 3). Every value is rounded to the resolution a design is
written back with (0.01 mm, 0.1 g), so a project rebuilt from the written rows evaluates the same zones.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from latticecalc.errors import InputError

#: The zone variables, in the order a table shows them (as one "zones" column).
ZONE_VARIABLES = ("zones.count", "zones.diameter_spread", "zones.mass_spread")
#: Resolution of a zone's strut diameter [mm] and added mass [g] (as :data:`latticecalc.study.space.RESOLUTION`).
DIAMETER_STEP, MASS_STEP = 0.01, 0.1


def zone_count(design: Mapping[str, Any]) -> int:
    """Zones of a design (1 when the design has no zone variables)."""
    return int(design.get("zones.count", 1) or 1)


def canonical(design: Mapping[str, Any]) -> dict[str, Any]:
    """The design with a uniform panel's zone variables removed and a graded panel's missing spreads set to 0.

    A one-zone design is then the very mapping of the same design without zone variables, so it has the
    same fingerprint and is evaluated on the same path.
    """
    out = dict(design)
    if zone_count(out) == 1:
        for name in ZONE_VARIABLES:
            out.pop(name, None)
    else:
        out.setdefault("zones.diameter_spread", 0.0)
        out.setdefault("zones.mass_spread", 0.0)
    return out


def zone_heights(cells_high: int, count: int) -> tuple[int, ...]:
    """Cell rows of each zone, bottom first: as even as ``cells_high`` allows, lower zones one row more."""
    base, extra = divmod(int(cells_high), int(count))
    return tuple(base + (1 if k < extra else 0) for k in range(int(count)))


def _rounded(x: float, step: float) -> float:
    return float(round(round(x / step) * step, 9))


def zone_values(design: Mapping[str, Any], cells_high: int) -> tuple[tuple[int, float, float], ...] | None:
    """(cells high, strut diameter [mm], added mass [g]) of each zone, bottom first; None for a uniform panel.

    ``design`` is a full design (:func:`latticecalc.study.evaluate.full_design`). Raises
    :class:`~latticecalc.errors.InputError` naming the variable when the panel has fewer rows than zones or
    a spread leaves a zone with no strut or a negative mass.
    """
    n = zone_count(design)
    if n == 1:
        return None
    if int(cells_high) < n:
        raise InputError("the panel has fewer cell rows than zones", input_name="zones.count",
                         expected=f"at most {int(cells_high)} zones (one per cell row)", got=str(n))
    d0 = float(design["lattice.strut_diameter"])
    m0 = float(design.get("lattice.added_mass") or 0.0)
    sd = float(design.get("zones.diameter_spread") or 0.0)
    sm = float(design.get("zones.mass_spread") or 0.0)
    out = []
    for k, rows in enumerate(zone_heights(cells_high, n)):
        offset = k - (n - 1) / 2.0
        d = _rounded(d0 * (1.0 + sd * offset), DIAMETER_STEP)
        m = _rounded(m0 * (1.0 + sm * offset), MASS_STEP)
        if d <= 0:
            raise InputError("the diameter spread leaves a zone with no strut", input_name="zones.diameter_spread",
                             expected=f"a spread giving zone {k + 1} a diameter > 0 mm",
                             got=f"{sd:g} with {n} zones: {d:g} mm")
        if m < 0:
            raise InputError("the mass spread makes a zone's added mass negative", input_name="zones.mass_spread",
                             expected=f"a spread giving zone {k + 1} a mass >= 0 g",
                             got=f"{sm:g} with {n} zones: {m:g} g")
        out.append((int(rows), d, m))
    return tuple(out)


def zoning(design: Mapping[str, Any], cells_high: int, *, material_overrides: Mapping[str, Any] | None = None):
    """The :class:`~latticecalc.physics.zoning.Zoning` of a full design (None for a uniform panel).

    Built as the column-panel project builds ``panel.zones`` (``column_panel.zoning_from_inputs``): each zone's
    added mass a sphere of ``lattice.added_mass_material`` sized against the zone's strut, with its rotary
    inertia; every zone of the panel's lattice material.
    """
    values = zone_values(design, cells_high)
    if values is None:
        return None
    from latticecalc import Q_, materials
    from latticecalc.physics.added_mass import added_mass_sphere
    from latticecalc.physics.zoning import Zone, Zoning

    sphere_material = materials.get(design.get("lattice.added_mass_material") or "steel-s355",
                                    overrides=material_overrides or None)
    zones = []
    for k, (rows, d, m) in enumerate(values):
        dq, mq = Q_(d, "mm"), Q_(m, "g")
        if m > 0:
            sphere = added_mass_sphere(mass=mq, material=sphere_material, strut_diameter=dq,
                                       id_prefix=f"lattice.zone{k + 1}.added")
            zones.append(Zone(cells_high=rows, strut_diameter=dq, added_mass=sphere.value,
                              rotary_inertia=sphere.rotary_inertia))
        else:
            zones.append(Zone(cells_high=rows, strut_diameter=dq, added_mass=mq))
    return Zoning(zones=tuple(zones), input_name="zones")


def zone_rows_input(values: tuple[tuple[int, float, float], ...] | None) -> list[dict[str, Any]]:
    """The ``panel.zones`` rows a column-panel project takes (an empty list: a uniform panel)."""
    if values is None:
        return []
    rows = []
    for rows_k, d, m in values:
        row: dict[str, Any] = {"cells_high": int(rows_k), "strut_diameter": f"{d:.12g} mm"}
        if m > 0:
            row["added_mass"] = f"{m:.12g} g"
        rows.append(row)
    return rows


def outputs(values: tuple[tuple[int, float, float], ...]) -> dict[str, float]:
    """Each zone's rows, diameter and mass as plain outputs (``zones``, ``zone<k>_cells_high`` …)."""
    out = {"zones": float(len(values))}
    for k, (rows, d, m) in enumerate(values, start=1):
        out.update({f"zone{k}_cells_high": float(rows), f"zone{k}_strut_diameter": d, f"zone{k}_added_mass": m})
    return out


def zones_text(design: Mapping[str, Any], hand: Mapping[str, Any]) -> str:
    """The zones as an engineer writes them: ``uniform``, ``2 zones: 24 mm / 30 mm (5 + 5 cells high)``.

    From the hand stage's outputs (each zone as evaluated); a design the model did not build (it does not fit,
    or was refused) is given by its zone count and spreads.
    """
    from latticecalc.units import format_number

    n = zone_count(design)
    if n == 1:
        return "uniform"
    if not hand.get("zones"):
        return (f"{n} zones, diameter step {format_number(100 * float(design.get('zones.diameter_spread', 0.0)), 3)} %"
                f", mass step {format_number(100 * float(design.get('zones.mass_spread', 0.0)), 3)} % (not built)")
    parts, heights = [], []
    for k in range(1, n + 1):
        text = f"{format_number(hand[f'zone{k}_strut_diameter'], 4)} mm"
        if hand[f"zone{k}_added_mass"] > 0:
            text += f" + {format_number(hand[f'zone{k}_added_mass'], 4)} g"
        parts.append(text)
        heights.append(str(int(hand[f"zone{k}_cells_high"])))
    return f"{n} zones: " + " / ".join(parts) + f" ({' + '.join(heights)} cells high, bottom first)"
