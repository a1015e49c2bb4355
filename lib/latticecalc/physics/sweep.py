"""Parameter study: the stop band against cell width, strut diameter or strut modulus.

Each point is the band estimate of :mod:`latticecalc.physics.bands` for the cell changed in one
parameter, all else held: the geometry of each point (strut lengths, host mass, long-wave
modulus) is worked out from the cell, then the band formulas are evaluated once on the arrays of
all points (the same :class:`~latticecalc.sheet.Formula` objects the band sheet shows).  A mass the
cell carries at mid-span of its lattice struts (``cell.point_masses["lattice"]``) is held at every
point and counted as the band estimate counts it (Rayleigh's strut with a central mass).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from latticecalc.errors import InputError
from latticecalc.physics.bands import (
    BRAGG_FREQUENCY,
    EFFECTIVE_DENSITY,
    FIXITIES,
    HOST_MASS,
    HOST_MASS_ADDED,
    RESONATING_MASS,
    STRUT_MASS,
    WAVE_SPEED,
    _kernel,
    _kernel_added,
    cell_band_inputs,
    direction_weight,
)
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    MIDSPAN_MASS_RESONATING_CC,
    eigenvalue,
    modal_mass_fraction,
)
from latticecalc.sheet import CalcResult, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

#: parameter name -> (dimension, display unit, description)
PARAMETERS = {
    "cell_width": ("length", "mm", "cell width"),
    "strut_diameter": ("length", "mm", "lattice strut diameter"),
    "youngs_modulus": ("pressure", "MPa", "dynamic modulus of the lattice material"),
}


@dataclass(frozen=True, kw_only=True)
class BandSweep(CalcResult):
    """Result of :func:`band_sweep`; ``value`` maps names to arrays.

    Keys: ``parameter_values`` (in the display unit), ``f_low``, ``f_high`` (clamped–clamped
    struts), ``f_low_pinned``, ``f_high_pinned``, ``f_bragg`` (Hz).
    """

    parameter: str
    unit: str
    label: str


def band_sweep(*, cell, lattice_material, parameter: str, values, frame_material=None,
               effective_modulus=None, id_prefix: str = "sweep") -> BandSweep:
    """The band estimate over a range of one parameter.

    Parameters
    ----------
    cell:
        The base :class:`~latticecalc.physics.cells.Cell` (lattice group, optional frame).
    lattice_material, frame_material:
        Materials of the lattice struts and of the frame.
    parameter:
        ``"cell_width"`` [length], ``"strut_diameter"`` [length] (lattice group) or
        ``"youngs_modulus"`` [pressure] (dynamic modulus of the lattice material).
    values:
        1-D Quantity of the parameter's values (at least two).
    effective_modulus:
        Fixed long-wave modulus of the panel [pressure], or None to estimate it at each point
        (see :func:`~latticecalc.physics.bands.cell_band_inputs`).
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    BandSweep
        Band edges and Bragg frequency [Hz] at each value.
    """
    if parameter not in PARAMETERS:
        raise InputError("unknown sweep parameter", input_name="parameter",
                         expected="one of " + ", ".join(PARAMETERS), got=repr(parameter))
    dim, unit, label = PARAMETERS[parameter]
    vals = check_positive(check_dimension(values, name="values", expected=dim), name="values")
    mags = np.atleast_1d(np.asarray(vals.to(unit).magnitude, dtype=float))
    if mags.ndim != 1 or mags.size < 2:
        raise InputError("a sweep needs a 1-D list of at least two values", input_name="values",
                         expected=f"two or more values in {unit}", got=format_quantity(vals))

    rows = []
    for v in mags:
        q = Q_(float(v), unit)
        c, mat = cell, lattice_material
        if parameter == "cell_width":
            c = cell.with_cell_width(q)
        elif parameter == "strut_diameter":
            c = cell.with_diameters(lattice=q)
        else:
            mat = dataclasses.replace(lattice_material, youngs_modulus=q / lattice_material.dynamic_to_static)
        rows.append(cell_band_inputs(cell=c, lattice_material=mat, frame_material=frame_material,
                                     effective_modulus=effective_modulus).arguments)

    def stack(key, unit_):
        return Q_(np.array([float(r[key].to(unit_).magnitude) for r in rows]), unit_)

    L_long = Q_(np.array([float(r["strut_lengths"].to("mm").magnitude.max()) for r in rows]), "mm")
    L_tot = Q_(np.array([float((r["strut_weights"] * r["strut_lengths"].to("mm").magnitude).sum())
                         for r in rows]), "mm")
    d, E, rho = stack("strut_diameter", "mm"), stack("youngs_modulus", "MPa"), stack("density", "kg/m^3")
    host, a, Ee = stack("host_mass", "g"), stack("cell_width", "mm"), stack("effective_modulus", "MPa")
    w = Q_(np.array([direction_weight(lengths=r["strut_lengths"].to("m").magnitude, weights=r["strut_weights"],
                                      directions=r.get("strut_directions"))[0] for r in rows]), "")

    out = {"parameter_values": Q_(mags, unit)}
    added = getattr(cell, "point_masses", {}).get("lattice", (None,))[0]
    with_mass = added is not None and added.to("kg").magnitude > 0
    if with_mass:
        n = Q_(np.array([float(np.sum(r["strut_weights"])) for r in rows]), "")
        Ma = added.to("g")
        for fix in FIXITIES:
            cc = fix == "clamped-clamped"
            f0, fh = _kernel_added(L=L_long, Ltot=L_tot, d=d, E=E, rho=rho, m_host=host, n_struts=n, added=Ma,
                                   cc=cc, w=w)
            suffix = "" if cc else "_pinned"
            out["f_low" + suffix], out["f_high" + suffix] = f0, fh
        ms = STRUT_MASS.evaluate({"rho": rho, "A": AREA_CIRCLE.evaluate({"d": d}), "L_tot": L_tot})
        m2 = MIDSPAN_MASS_RESONATING_CC.evaluate({"N": n, "w": w, "M_a": Ma, "m_s": ms / n})
        m1 = HOST_MASS_ADDED.evaluate({"m_h": host, "m_s": ms, "N": n, "M_a": Ma, "m_2": m2})
        rho_eff = EFFECTIVE_DENSITY.evaluate({"m_1": m1, "m_2": m2, "a": a})
        speed = WAVE_SPEED.evaluate({"E_eff": Ee, "rho_eff": rho_eff})
        out["f_bragg"] = BRAGG_FREQUENCY.evaluate({"c": speed, "a": a}).to("Hz")
    for fix in () if with_mass else FIXITIES:
        mu = modal_mass_fraction(supports=fix).value
        lam = Q_(eigenvalue(supports=fix, mode=1), "")
        f0, fh = _kernel(L=L_long, Ltot=L_tot, d=d, E=E, rho=rho, m_host=host, a=a, mu=mu, lam=lam, w=w)
        suffix = "" if fix == "clamped-clamped" else "_pinned"
        out["f_low" + suffix], out["f_high" + suffix] = f0, fh
        if fix == "clamped-clamped":
            ms = STRUT_MASS.evaluate({"rho": rho, "A": AREA_CIRCLE.evaluate({"d": d}), "L_tot": L_tot})
            m2 = RESONATING_MASS.evaluate({"w": w, "mu": mu, "m_s": ms})
            m1 = HOST_MASS.evaluate({"m_h": host, "w": w, "mu": mu, "m_s": ms})
            rho_eff = EFFECTIVE_DENSITY.evaluate({"m_1": m1, "m_2": m2, "a": a})
            speed = WAVE_SPEED.evaluate({"E_eff": Ee, "rho_eff": rho_eff})
            out["f_bragg"] = BRAGG_FREQUENCY.evaluate({"c": speed, "a": a}).to("Hz")

    p = f"{id_prefix}.{parameter.replace('_', '-')}"
    method = (f"band formulas of the band section (Euler–Bernoulli lower edge, mass-in-mass upper edge, "
              f"Bragg c/(2a)) evaluated at each {label}; everything else as the base cell"
              + ("; the lattice struts carry their mid-span mass (Rayleigh's strut with a central mass)"
                 if with_mass else ""))
    steps = (quantity_step(id=f"{p}.values", description=f"Swept {label}", value=out["parameter_values"],
                           unit=unit, method="inputs of the study"),
             quantity_step(id=f"{p}.f-low", description="Lower band edge (clamped–clamped struts)",
                           value=out["f_low"], unit="Hz", method=method),
             quantity_step(id=f"{p}.f-high", description="Upper band edge (clamped–clamped struts)",
                           value=out["f_high"], unit="Hz", method=method),
             quantity_step(id=f"{p}.f-bragg", description="Bragg frequency", value=out["f_bragg"], unit="Hz",
                           method=method))
    return BandSweep(value=out, steps=steps, parameter=parameter, unit=unit, label=label,
                     title=f"Stop band against {label}")
