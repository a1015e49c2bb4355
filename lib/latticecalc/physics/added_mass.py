"""Masses added at mid-span of the lattice struts: their size, and what they buy at the floor.

A soft strut alone carries little resonating mass; a dense mass (a steel sphere threaded on the
strut at mid-span) raises the resonating mass ratio μ, the one quantity that bounds what the panel
can do to its column (:mod:`latticecalc.physics.receiver`).  The mass also lowers the strut's
frequency, so each added mass is paired with the strut diameter that keeps the strut's first
fixed–fixed frequency (kit FE strut, with the mass) at the target.

Sphere of a mass M and density ρ: diameter D = (6 M / (π ρ))^(1/3), rotary inertia about any axis
through its centre J = M D² / 10 (Meriam, J. L. & Kraige, L. G., *Engineering Mechanics: Dynamics*,
7th ed. 2012, Appendix D, Table D/4, solid sphere, from memory).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pint
import sympy as sym

from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import receiver as rc
from latticecalc.physics.bloch import progress_iter
from latticecalc.physics.density import panel_mass
from latticecalc.physics.roots import find_root
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, format_quantity

_M, _rho, _D = sym.symbols("M rho D")
SPHERE_DIAMETER = Formula("D", (6 * _M / (sym.pi * _rho)) ** sym.Rational(1, 3))
SPHERE_INERTIA = Formula("J", _M * _D**2 / 10)
SPHERE_SOURCE = Source(author="Meriam, J. L. & Kraige, L. G.", title="Engineering Mechanics: Dynamics, 7th ed.",
                       year=2012, locator="Appendix D, Table D/4, solid sphere: J = 2/5 M r²", tag="from memory")


@dataclass(frozen=True, kw_only=True)
class AddedMass(CalcResult):
    """Result of :func:`added_mass_sphere`: ``value`` = the mass [kg]; diameter and rotary inertia."""

    diameter: pint.Quantity
    rotary_inertia: pint.Quantity


def added_mass_sphere(*, mass: Any, material: Any, strut_diameter: Any = None,
                      id_prefix: str = "lattice.added") -> AddedMass:
    """Size of a solid sphere of ``mass`` [mass] in ``material`` (its ``density``), and its rotary inertia.

    With ``strut_diameter`` [length], a sphere narrower than the strut is refused: it would not be a
    separate mass but a thicker strut.
    """
    m = check_dimension(mass, name="lattice.added_mass", expected="mass").to("kg")
    if not (np.isfinite(m.m) and m.m >= 0):
        raise InputError("the added strut mass cannot be negative", input_name="lattice.added_mass",
                         expected=">= 0 kg", got=format_quantity(m))
    rho = material.density
    d = evaluate(SPHERE_DIAMETER, id=f"{id_prefix}.diameter", description="Diameter of the added sphere",
                 values={"M": m, "rho": rho}, unit="mm", source=SPHERE_SOURCE)
    j = evaluate(SPHERE_INERTIA, id=f"{id_prefix}.inertia", description="Rotary inertia of the sphere about its "
                 "centre", values={"M": m, "D": d.result}, unit="kg*m^2", source=SPHERE_SOURCE)
    if strut_diameter is not None and 0 < m.m and d.result < check_dimension(
            strut_diameter, name="lattice.strut_diameter", expected="length"):
        raise InputError("the added mass is narrower than the strut it sits on", input_name="lattice.added_mass",
                         expected=f"a sphere wider than the strut ({format_quantity(strut_diameter)})",
                         got=f"{format_quantity(d.result)} diameter")
    return AddedMass(value=m, steps=(d, j), diameter=d.result, rotary_inertia=j.result,
                     title="Added strut mass: a solid sphere at mid-span")


def fe_strut_frequency(*, length: float, diameter: float, material: Any, mass: float, inertia: float,
                       n_elements: int = 8, theory: str = "timoshenko") -> float:
    """First fixed–fixed bending frequency (Hz) of one strut with its mid-span mass, by the kit's FE."""
    cell = _StrutStub(diameter)
    sec = fe.sections_for(cell, {"lattice": material})["lattice"]
    red = fe.reduce_struts(nodes=np.array([[0.0, 0.0, 0.0], [length, 0.0, 0.0]]), struts=np.array([[0, 1]]),
                           groups=("lattice",), sections={"lattice": sec}, n_elements=n_elements, n_modes=2,
                           theory=theory, point_masses={"lattice": (mass, inertia)} if mass > 0 else None)
    return float(np.sqrt(red.omega2[0, 0]) / (2 * np.pi))


class _StrutStub:
    def __init__(self, d: float) -> None:
        self.groups = ("lattice",)
        self.diameters = {"lattice": Q_(d, "m")}


def retuned_diameter(*, target: float, length: float, material: Any, mass: float, inertia: float,
                     n_elements: int = 8, d_min: float = 1e-4, d_max: float = 0.2, zones_per_diameter: float = 0.0,
                     ) -> float:
    """Strut diameter (m) whose first FE fixed–fixed frequency with the mid-span mass is ``target`` (Hz).

    ``zones_per_diameter``: the rigid node zones at both ends over the strut diameter (the zones scale
    with the diameters of the struts meeting at the node); the bending length is then
    ``length − zones_per_diameter × d``.
    """
    def g(d):
        return fe_strut_frequency(length=length - zones_per_diameter * d, diameter=d, material=material, mass=mass,
                                  inertia=inertia, n_elements=n_elements) - target
    lo, hi = g(d_min), g(d_max)
    if lo > 0 or hi < 0:
        raise InputError("no strut diameter tunes the strut with this mass to the target", input_name="target",
                         expected=f"a target between {target - lo:.3g} and {target - hi:.3g} Hz", got=f"{target:g} Hz")
    return float(find_root(g, d_min, d_max, xtol=1e-7))


@dataclass(frozen=True, kw_only=True)
class MassSweep(CalcResult):
    """Result of :func:`added_mass_sweep`: ``value`` maps arrays over the added masses (NaN where it does not fit).

    ``added_mass`` (kg per strut), ``diameter`` (mm), ``panel_mass`` (kg, all panels), ``mass_ratio``,
    ``insertion_loss`` (dB at the peak, coupled model), ``estimate`` (dB, absorber on a mass-like
    host), ``bound`` (dB), ``note`` (why a point is missing).
    """


def added_mass_sweep(cell: Any, *, materials: Mapping[str, Any], mass_material: Any, nx: int, ny: int,
                     column: rc.Column, fixings: rc.Fixings, placement: rc.Placement, direction: str,
                     peak: Any, masses: Sequence[Any], n_elements: int = 8, strut_modes: int = 4,
                     node_zones: str = "none", cache: Any = None, progress: Any = None,
                     id_prefix: str = "sweep") -> MassSweep:
    """Insertion loss at ``peak`` against the mass added at mid-span of every lattice strut.

    Each point keeps the strut tuned to the peak: its diameter is solved so the kit's FE strut with
    the sphere has its first fixed–fixed frequency at ``peak`` (:func:`retuned_diameter`); the panel
    mass, the hand estimates and the coupled column model follow from that design.  A design whose
    struts no longer fit the cell is reported as such.
    """
    fp = float(check_dimension(peak, name="peak", expected="frequency").to("Hz").m)
    lat = materials["lattice"]
    L = float(cell.strut_lengths.to("m").m[cell.group_mask("lattice")].max())
    zpd = 0.0
    if fe.check_node_zones(node_zones) == "rigid":
        nz = fe.cell_node_zones(cell)
        zpd = float(sum(q.to("m").m for q in nz.value)) / float(cell.diameters["lattice"].to("m").m)
    rows: dict[str, list] = {k: [] for k in ("added_mass", "diameter", "panel_mass", "mass_ratio", "insertion_loss",
                                             "estimate", "bound", "note")}
    steps = []
    items = list(masses)
    for i, mq in enumerate(progress_iter(items, progress=progress, desc="added-mass sweep")):
        m = float(check_dimension(mq, name="masses", expected="mass").to("kg").m)
        rows["added_mass"].append(m)
        try:
            sphere = added_mass_sphere(mass=Q_(m, "kg"), material=mass_material)
            J = float(sphere.rotary_inertia.to("kg*m^2").m)
            d = retuned_diameter(target=fp, length=L, material=lat, mass=m, inertia=J, n_elements=n_elements,
                                 zones_per_diameter=zpd)
            design = cell.with_diameters(lattice=Q_(d, "m")).with_point_mass("lattice", mass=Q_(m, "kg"),
                                                                             rotary_inertia=sphere.rotary_inertia)
            pm = panel_mass(design, materials=materials, cells_wide=nx, cells_high=ny, cells_deep=1,
                            method="closed-form", id_prefix=f"{id_prefix}.{i}")
            est = rc.receiver_estimates(design, material=lat, nx=nx, ny=ny, column=column, faces=placement.faces,
                                        direction=direction, id_prefix=f"{id_prefix}.{i}")
            resp = rc.coupled_response(design, materials=materials, nx=nx, ny=ny, column=column, fixings=fixings,
                                       placement=placement, frequencies=Q_([fp], "Hz"), directions=(direction,),
                                       n_elements=n_elements, strut_modes=strut_modes, node_zones=node_zones,
                                       cache=cache)
        except LatticeCalcError as exc:
            for k in ("diameter", "panel_mass", "mass_ratio", "insertion_loss", "estimate", "bound"):
                rows[k].append(np.nan)
            rows["note"].append(f"{exc.__class__.__name__}: {getattr(exc, 'message', str(exc)).splitlines()[0]}")
            continue
        rows["diameter"].append(d * 1e3)
        rows["panel_mass"].append(float(pm.value.to("kg").m) * len(placement.faces))
        rows["mass_ratio"].append(est.mass_ratio)
        rows["insertion_loss"].append(float(resp.value["insertion_loss"][direction][0]))
        rows["estimate"].append(est.value["mass_host_il"])
        rows["bound"].append(est.value["bound"])
        rows["note"].append("")
    il = np.array(rows["insertion_loss"], float)
    best = int(np.nanargmax(il)) if np.any(np.isfinite(il)) else None
    if best is not None:
        steps.append(quantity_step(id=f"{id_prefix}.best-il", description=f"Largest predicted insertion loss at "
                                   f"{fp:.4g} Hz over the swept added masses", value=Q_(float(il[best]), "dB"),
                                   method=f"{len(items)} designs, each strut retuned to the peak (FE strut with "
                                   f"its sphere); coupled column model; added mass {rows['added_mass'][best]:g} kg "
                                   "per strut", source=rc.CREMER_HECKL, sig=3))
    value = {k: (np.array(v, float) if k != "note" else tuple(v)) for k, v in rows.items()}
    return MassSweep(value=value, steps=tuple(steps), title="Insertion loss at the peak against added strut mass")
