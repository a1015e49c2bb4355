"""Expected stop band of a strut lattice from its strut resonances.

Method (each step is on the sheet with its source):

* **Lower edge** f_low: the first bending mode of the lattice struts (Euler–Bernoulli, Rao 2017,
  eq. 8.82).  The nodes are neither perfectly rigid nor free to rotate, so the end fixity is
  bracketed: pinned–pinned (lower bound) to clamped–clamped (nominal: the frame and the node
  overlap hold the strut ends).  When the lattice has struts of several lengths, the longest
  resonates first and sets the edge; the others form the cluster of strut modes listed with it.
  With rigid node zones (``node_zone_length``) the clamped–clamped mode is that of the flexible
  length L_f = L − l₁ − l₂ between the zones (the zones' mass neglected: the clamps hold them);
  the pinned–pinned bound keeps the node-to-node length (a node free to rotate carries its zones
  round with it, so pinned over L stays below it).  The mass split is unchanged.
* **Upper edge** f_high: the mass-in-mass chain of Huang, Sun & Huang (2009): a host mass m₁
  joined to its neighbours, carrying a resonator m₂ tuned to ω₀; the gap closes at
  ω₀ √(1 + m₂/m₁).  Here ω₀ is the struts' first bending mode, m₂ the effective modal mass of
  the resonating struts (the fraction μ of their mass that moves in that mode when both ends move
  together, computed from the mode shape: 0.690 clamped–clamped, 0.811 pinned–pinned) and
  m₁ everything else in the cell: the frame, and the (1 − μ) share of the struts that moves with
  the nodes.
* **Mass at mid-span** (``added_mass`` M_a per lattice strut, a sphere threaded on it): the strut's
  first mode and its resonating mass by Rayleigh's method with the static deflection shape under a
  central load (Rao 2017, §8.7): clamped–clamped f = √(192 EI / (L³ (M_a + 13 m_s/35))) / 2π,
  pinned–pinned f = √(48 EI / (L³ (M_a + 17 m_s/35))) / 2π, and per strut the participating mass
  (M_a + m_s/2)² / (M_a + 13 m_s/35), resp. (M_a + 5 m_s/8)² / (M_a + 17 m_s/35), times the direction
  weight; the host mass m₁ is the rest of the cell, spheres included.  The sphere's rotary inertia
  does not enter the symmetric first mode; its length along the strut (a stiff stretch at mid-span)
  is neglected.  With no added mass the exact Euler–Bernoulli path above is used unchanged.
* **Bragg frequency** f_B = c / (2a), with c = √(E*/ρ*) the long-wave speed of the homogenised
  panel (Brillouin 1946): the frequency at which a half wavelength spans one cell, where periodic
  scattering opens a band.  Whichever of f_low and f_B is lower is the mechanism that acts first.
* **Scatter**: the band's edges over the material's dynamic-modulus range (service temperature)
  and the geometric tolerances, by evaluating the same formulas at every corner of that box.
"""

from __future__ import annotations

import dataclasses
import itertools
from dataclasses import dataclass

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import InputError
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    EULER_BERNOULLI_FREQUENCY,
    FLEXIBLE_LENGTH,
    MIDSPAN_MASS_FREQUENCY_CC,
    MIDSPAN_MASS_FREQUENCY_PP,
    MIDSPAN_MASS_RESONATING_CC,
    MIDSPAN_MASS_RESONATING_PP,
    NODE_ZONE_SOURCE,
    RAO_2017,
    RAYLEIGH_MIDSPAN_CC,
    RAYLEIGH_MIDSPAN_PP,
    SECOND_MOMENT_CIRCLE,
    SECTION_SOURCE,
    eigenvalue,
    modal_mass_fraction,
)
from latticecalc.physics.tolerance import half_width
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Formula, Source, check, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_number, format_quantity

HUANG_SUN_HUANG_2009 = Source(author="Huang, H. H., Sun, C. T. & Huang, G. L.",
                              title="On the negative effective mass density in acoustic metamaterials, "
                              "Int. J. Eng. Sci. 47, 610–617", year=2009,
                              locator="mass-in-mass lattice: effective mass and dispersion relation")
BRILLOUIN_1946 = Source(author="Brillouin, L.", title="Wave Propagation in Periodic Structures", year=1946,
                        locator="first Brillouin zone boundary, half wavelength = period", tag="from memory")
ASHBY_2006 = Source(author="Ashby, M. F.", title="The properties of foams and lattices, Phil. Trans. R. Soc. A "
                    "364, 15–30", year=2006, locator="stretch-dominated E*/E_s ≈ ρ̄/3", tag="from memory")
GIBSON_ASHBY_1997 = Source(author="Gibson, L. J. & Ashby, M. F.", title="Cellular Solids, 2nd ed.", year=1997,
                           locator="bending-dominated E*/E_s ≈ ρ̄²", tag="from memory")
STATICS = Source(author="common practice", title="axial stiffness of the frame members per unit face area",
                 tag="common practice")

FIXITIES = ("clamped-clamped", "pinned-pinned")
#: Strut mode families listed in the cluster: clamped–pinned where one node is free to rotate (the
#: centre node of a bcc cell, for instance) falls between the two bounds.
CLUSTER_FIXITIES = ("clamped-clamped", "clamped-pinned", "pinned-pinned")
DIRECTION_WEIGHT_SOURCE = Source(author="common practice", title="derived: a strut's bending is driven by the "
                                 "component of the host motion across its axis, 1 − (d·e)² of the motion's "
                                 "square; its effective modal mass is that share of μ m_s", tag="common practice")

# --- formulas ------------------------------------------------------------------------------------
_rho, _A, _Lt, _mu, _ms, _mh, _m1, _m2 = sp.symbols("rho A L_tot mu m_s m_h m_1 m_2")
_f0, _a, _Ee, _re, _c = sp.symbols("f_0 a E_eff rho_eff c")
_k1, _k2, _q = sp.symbols("k_1 k_2 q")
_Es, _rbar, _Af, _Ef, _Lf, _Afr = sp.symbols("E_s rhobar A_f E_f L_f A_fr")

STRUT_MASS = Formula("m_s", _rho * _A * _Lt, latex_names={"L_tot": r"L_\mathrm{tot}"})
_w = sp.Symbol("w")
#: Only the struts' bending across the host motion resonates: w μ m_s, with w the direction weight
#: (mean of 1 − (d·e)² over the struts, d the wave's motion, e a strut's axis; 2/3 for any strut set
#: averaged over three axes, since Σ_d (d·e)² = 1) [derived].
RESONATING_MASS = Formula("m_2", _w * _mu * _ms)
HOST_MASS = Formula("m_1", _mh + (1 - _w * _mu) * _ms)
_Na, _Ma = sp.symbols("N M_a")
#: With a mass M_a at mid-span of each of the N lattice struts of a cell: everything in the cell that does not
#: resonate, the frame, the struts and the spheres less the resonating mass m₂.
HOST_MASS_ADDED = Formula("m_1", _mh + _ms + _Na * _Ma - _m2, latex_names={"M_a": r"M_\mathrm{a}"})
UPPER_EDGE = Formula("f_high", _f0 * sp.sqrt(1 + _m2 / _m1), latex_names={"f_high": r"f_\mathrm{high}"})
EFFECTIVE_DENSITY = Formula("rho_eff", (_m1 + _m2) / _a**3, latex_names={"rho_eff": r"\rho^*"})
WAVE_SPEED = Formula("c", sp.sqrt(_Ee / _re), latex_names={"E_eff": "E^*", "rho_eff": r"\rho^*"})
BRAGG_FREQUENCY = Formula("f_B", _c / (2 * _a))

# Effective long-wave modulus of a cell (used when no value is given).
RELATIVE_DENSITY_SLENDER = Formula("rhobar", _A * _Lt / _a**3, latex_names={"rhobar": r"\bar\rho",
                                                                          "L_tot": r"L_\mathrm{tot}"})
STRETCH_MODULUS = Formula("E_lat", _rbar * _Es / 3, latex_names={"E_lat": r"E_\mathrm{lat}", "rhobar": r"\bar\rho"})
BENDING_MODULUS = Formula("E_lat", _rbar**2 * _Es, latex_names={"E_lat": r"E_\mathrm{lat}", "rhobar": r"\bar\rho"})
FRAME_MODULUS = Formula("E_fr", _Ef * _Afr / _a**2, latex_names={"E_fr": r"E_\mathrm{fr}",
                                                                "A_fr": r"A_\mathrm{fr}"})

# Mass-in-mass chain (Huang, Sun & Huang 2009): with s = 2 k₁ (1 − cos qa) and ω₀² = k₂/m₂,
#   m₁ ω⁴ − ((m₁ + m₂) ω₀² + s) ω² + s ω₀² = 0.
# Acoustic root written 2 s ω₀² / (B + √D) (no cancellation as q → 0), optical (B + √D) / (2 m₁).
_s = 2 * _k1 * (1 - sp.cos(_q * _a))
_w0sq = _k2 / _m2
_B = (_m1 + _m2) * _w0sq + _s
_D = _B**2 - 4 * _m1 * _s * _w0sq
ACOUSTIC_BRANCH = Formula("f_ac", sp.sqrt(2 * _s * _w0sq / (_B + sp.sqrt(_D))) / (2 * sp.pi),
                          latex_names={"f_ac": r"f_\mathrm{ac}"})
OPTICAL_BRANCH = Formula("f_op", sp.sqrt((_B + sp.sqrt(_D)) / (2 * _m1)) / (2 * sp.pi),
                         latex_names={"f_op": r"f_\mathrm{op}"})


# --- mass-in-mass chain --------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class ChainDispersion(CalcResult):
    """Result of :func:`mass_in_mass_dispersion`; ``value`` maps ``gap_low`` / ``gap_high`` to Hz."""

    wavenumber: pint.Quantity
    acoustic: pint.Quantity
    optical: pint.Quantity


def mass_in_mass_dispersion(*, outer_mass, inner_mass, outer_stiffness, inner_stiffness, cell_length,
                            points: int = 201, id_prefix: str = "band.chain") -> ChainDispersion:
    """Exact dispersion of the one-dimensional mass-in-mass chain (Huang, Sun & Huang 2009).

    Parameters
    ----------
    outer_mass, inner_mass:
        m₁ (host) and m₂ (resonator) per cell [mass].
    outer_stiffness, inner_stiffness:
        k₁ (between neighbouring hosts) and k₂ (host to resonator) [force / length].
    cell_length:
        Period a [length].
    points:
        Number of wavenumbers from 0 to π/a.
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    ChainDispersion
        Acoustic and optical branches [Hz] against q [1/m]; gap edges as steps.
    """
    m1 = check_positive(check_dimension(outer_mass, name="outer_mass", expected="mass"), name="outer_mass")
    m2 = check_positive(check_dimension(inner_mass, name="inner_mass", expected="mass"), name="inner_mass")
    k1 = check_positive(check_dimension(outer_stiffness, name="outer_stiffness", expected="N/m"),
                        name="outer_stiffness")
    k2 = check_positive(check_dimension(inner_stiffness, name="inner_stiffness", expected="N/m"),
                        name="inner_stiffness")
    a = check_positive(check_dimension(cell_length, name="cell_length", expected="length"), name="cell_length")
    if isinstance(points, bool) or not isinstance(points, (int, np.integer)) or points < 2:
        raise InputError("too few wavenumbers", input_name="points", expected="an integer >= 2",
                         got=repr(points))
    q = np.linspace(0.0, np.pi, points) / a.to("m")
    vals = {"m_1": m1, "m_2": m2, "k_1": k1, "k_2": k2, "a": a}
    acoustic = ACOUSTIC_BRANCH.evaluate({**vals, "q": q}).to("Hz")
    optical = OPTICAL_BRANCH.evaluate({**vals, "q": q}).to("Hz")
    low = evaluate(ACOUSTIC_BRANCH, id=f"{id_prefix}.gap-low", unit="Hz", source=HUANG_SUN_HUANG_2009,
                   description="Gap lower edge: acoustic branch at the zone boundary q = π/a",
                   values={**vals, "q": np.pi / a})
    high = evaluate(OPTICAL_BRANCH, id=f"{id_prefix}.gap-high", unit="Hz", source=HUANG_SUN_HUANG_2009,
                    description="Gap upper edge: optical branch at q = 0", values={**vals, "q": 0 / a})
    return ChainDispersion(value={"gap_low": low.result, "gap_high": high.result}, steps=(low, high),
                           wavenumber=q, acoustic=acoustic, optical=optical,
                           title="Mass-in-mass chain dispersion")


# --- band estimate ----------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class BandEstimate(CalcResult):
    """Result of :func:`band_estimate`; ``value`` maps names to Hz.

    Keys: ``f_low``, ``f_high`` (nominal band, clamped–clamped struts), ``f_low_pinned``,
    ``f_high_pinned`` (pinned–pinned end of the fixity bracket), ``f_bragg``, and the ranges under
    scatter ``f_low_min``, ``f_low_max``, ``f_high_min``, ``f_high_max``, and the envelope over
    fixity and scatter ``envelope_low``, ``envelope_high``.
    """

    mechanism: str
    cluster: tuple[tuple[str, int, str, pint.Quantity], ...]
    mass_ratio: float
    cell_width: pint.Quantity
    effective_modulus: pint.Quantity

    @property
    def band(self) -> tuple[pint.Quantity, pint.Quantity]:
        """The nominal band [f_low, f_high]."""
        return self.value["f_low"], self.value["f_high"]

    def cluster_rows(self, sig: int = 4) -> list[list[str]]:
        """Rows (strut length, mode, fixity, frequency, where it falls) for a sheet table."""
        lo, hi = (float(v.to("Hz").magnitude) for v in self.band)
        rows = []
        for length, mode, fix, f in self.cluster:
            fv = float(f.to("Hz").magnitude)
            where = "below the band" if fv < lo * (1 - 1e-9) else ("in the band" if fv <= hi else "above")
            rows.append([length, str(mode), fix, format_number(fv, sig), where])
        return rows


def direction_weight(*, lengths, weights, directions) -> tuple[float, str]:
    """Share w of the struts' bending driven by the host motion, and how it was found.

    The smallest over the wave axes x, y, z of the length-weighted mean of 1 − (d·e)²; with no
    directions, 2/3 (any strut set averaged over three axes, since Σ_d (d·e)² = 1) [derived].
    """
    if directions is None:
        return 2.0 / 3.0, "any strut set averaged over three axes: Σ_d (d·e)² = 1, so the mean of 1 − (d·e)² is 2/3"
    lengths = np.atleast_1d(np.asarray(lengths, dtype=float))
    e = np.asarray(directions, dtype=float)
    if e.shape != (lengths.size, 3):
        raise InputError("one direction per strut", input_name="strut_directions",
                         expected=f"shape ({lengths.size}, 3)", got=f"shape {e.shape}")
    e = e / np.linalg.norm(e, axis=1)[:, None]
    share = np.asarray(weights, dtype=float) * lengths
    per_axis = [float((share * (1.0 - e[:, k] ** 2)).sum() / share.sum()) for k in range(3)]
    return min(per_axis), ("smallest over the wave axes x, y, z of the length-weighted mean of 1 − (d·e)²: "
                           + ", ".join(f"{v:.4g}" for v in per_axis))


def _kernel(*, L, Ltot, d, E, rho, m_host, a, mu, lam, w):
    """The band formulas on (array) Quantities: the same Formula objects as the sheet, vectorised."""
    area = AREA_CIRCLE.evaluate({"d": d})
    second = SECOND_MOMENT_CIRCLE.evaluate({"d": d})
    f0 = EULER_BERNOULLI_FREQUENCY.evaluate({"lambda_n": lam, "L": L, "E": E, "I": second, "rho": rho,
                                             "A": area}).to("Hz")
    ms = STRUT_MASS.evaluate({"rho": rho, "A": area, "L_tot": Ltot})
    m2 = RESONATING_MASS.evaluate({"w": w, "mu": mu, "m_s": ms})
    m1 = HOST_MASS.evaluate({"m_h": m_host, "w": w, "mu": mu, "m_s": ms})
    fh = UPPER_EDGE.evaluate({"f_0": f0, "m_2": m2, "m_1": m1}).to("Hz")
    return f0, fh


def _kernel_added(*, L, Ltot, d, E, rho, m_host, n_struts, added, cc, w):
    """The band formulas with a mass ``added`` at mid-span of each strut, vectorised (same Formula objects)."""
    area = AREA_CIRCLE.evaluate({"d": d})
    second = SECOND_MOMENT_CIRCLE.evaluate({"d": d})
    freq, res = ((MIDSPAN_MASS_FREQUENCY_CC, MIDSPAN_MASS_RESONATING_CC) if cc
                 else (MIDSPAN_MASS_FREQUENCY_PP, MIDSPAN_MASS_RESONATING_PP))
    one = STRUT_MASS.evaluate({"rho": rho, "A": area, "L_tot": L})
    f0 = freq.evaluate({"E": E, "I": second, "L": L, "M_a": added, "m_s": one}).to("Hz")
    ms = STRUT_MASS.evaluate({"rho": rho, "A": area, "L_tot": Ltot})
    m2 = res.evaluate({"N": n_struts, "w": w, "M_a": added, "m_s": ms / n_struts})
    m1 = HOST_MASS_ADDED.evaluate({"m_h": m_host, "m_s": ms, "N": n_struts, "M_a": added, "m_2": m2})
    fh = UPPER_EDGE.evaluate({"f_0": f0, "m_2": m2, "m_1": m1}).to("Hz")
    return f0, fh


def _as_lengths(value, name):
    q = check_dimension(value, name=name, expected="length")
    q = Q_(np.atleast_1d(np.asarray(q.to("m").magnitude, dtype=float)), "m")
    if q.magnitude.ndim != 1 or q.magnitude.size == 0:
        raise InputError("expected one length or a list of lengths", input_name=name,
                         expected="a length or a 1-D list of lengths", got=format_quantity(value))
    return check_positive(q, name=name)


def _zone_sums(node_zone_length, n: int):
    """Zone lengths (m) at both ends of each of ``n`` struts, (n, 2), from one length, n lengths or n pairs."""
    if node_zone_length is None:
        return np.zeros((n, 2))
    z = check_dimension(node_zone_length, name="node_zone_length", expected="length")
    zm = np.asarray(z.to("m").magnitude, dtype=float)
    if zm.ndim == 0:
        zm = np.full((n, 2), float(zm))
    elif zm.shape == (2,) and n != 2:
        zm = np.tile(zm, (n, 1))
    elif zm.shape == (n,):
        zm = np.repeat(zm[:, None], 2, axis=1)
    if zm.shape != (n, 2) or not np.all(np.isfinite(zm)) or np.any(zm < 0):
        raise InputError("node zones: one length, one per strut, or a pair per strut, each >= 0",
                         input_name="node_zone_length", expected=f"a length, {n} lengths or {n} × 2 lengths",
                         got=format_quantity(node_zone_length))
    return zm


def band_estimate(*, strut_lengths, strut_diameter, youngs_modulus, density, cell_width, host_mass,
                  effective_modulus, strut_weights=None, strut_directions=None, modulus_range=None,
                  modulus_tolerance=None,
                  diameter_tolerance=None, length_tolerance=None, density_tolerance=None, cluster_modes=(1, 2, 3),
                  node_zone_length=None, added_mass=None, id_prefix: str = "band") -> BandEstimate:
    """Expected stop band [f_low, f_high] of a strut lattice, with its fixity bracket and scatter.

    Parameters
    ----------
    strut_lengths:
        Length of each resonating (lattice) strut of one cell [length]; one value or a list.
    strut_diameter:
        Diameter of the resonating struts [length].
    youngs_modulus:
        Dynamic Young's modulus of the strut material at the design frequency [pressure].
    density:
        Density of the strut material [mass / length³].
    cell_width:
        Cell period a [length].
    host_mass:
        Mass per cell that does not resonate with the struts (frame, fittings) [mass].
    effective_modulus:
        Long-wave Young's modulus E* of the homogenised panel along the wave path [pressure].
    strut_weights:
        Share of each strut belonging to the cell (1, or 1/2 for a strut on a face); default 1.
    strut_directions:
        Axis of each strut (N × 3, any length); the direction weight w is then the smallest over the
        three wave axes of the mean 1 − (d·e)²; default (None) w = 2/3, the mean over three axes.
    modulus_range:
        (low, high) dynamic modulus over the service temperature range [pressure], or None.
    modulus_tolerance:
        ± tolerance on the modulus (batch scatter: a pressure or a fraction of ``youngs_modulus``),
        applied on top of ``modulus_range``: the range becomes (low (1 − t), high (1 + t)).
    diameter_tolerance, length_tolerance, density_tolerance:
        ± tolerances (a Quantity of the parameter's dimension or a fraction), or None.
    cluster_modes:
        Modes listed in the cluster of strut modes.
    node_zone_length:
        Rigid node zones [length]: one length at both ends of every strut, one per strut, or a
        pair per strut (N × 2); None for struts node to node.  The clamped–clamped modes are then
        those of the flexible length L − l₁ − l₂, and the lower edge is set by the strut with the
        longest flexible length (see :func:`latticecalc.physics.frame_fe.cell_node_zones`).
    added_mass:
        Mass added at mid-span of every resonating strut [mass] (a sphere threaded on it), or None / zero
        for none.  The strut modes and the mass split then follow Rayleigh's method with the static
        deflection shape (module docstring); with none, the exact Euler–Bernoulli path is unchanged.
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    BandEstimate
        The nominal band, the pinned–pinned bracket, the Bragg frequency, the ranges under
        scatter, the cluster of strut modes, and the steps.
    """
    lengths = _as_lengths(strut_lengths, "strut_lengths")
    d = check_positive(check_dimension(strut_diameter, name="strut_diameter", expected="length"),
                       name="strut_diameter")
    E = check_positive(check_dimension(youngs_modulus, name="youngs_modulus", expected="pressure"),
                       name="youngs_modulus")
    rho = check_positive(check_dimension(density, name="density", expected="density"), name="density")
    a = check_positive(check_dimension(cell_width, name="cell_width", expected="length"), name="cell_width")
    mh = check_positive(check_dimension(host_mass, name="host_mass", expected="mass"), name="host_mass",
                        allow_zero=True)
    Ee = check_positive(check_dimension(effective_modulus, name="effective_modulus", expected="pressure"),
                        name="effective_modulus")
    if strut_weights is None:
        weights = np.ones(lengths.magnitude.size)
    else:
        weights = np.atleast_1d(np.asarray(strut_weights, dtype=float))
        if weights.shape != lengths.magnitude.shape or np.any(weights <= 0) or np.any(weights > 1):
            raise InputError("one weight in (0, 1] per strut", input_name="strut_weights",
                             expected=f"{lengths.magnitude.size} values in (0, 1]", got=repr(strut_weights))
    if modulus_range is None:
        e_lo, e_hi = E, E
    else:
        e_lo, e_hi = (check_positive(check_dimension(v, name="modulus_range", expected="pressure"),
                                     name="modulus_range") for v in modulus_range)
        if e_lo > e_hi:
            raise InputError("the modulus range is reversed", input_name="modulus_range",
                             expected="(low, high)", got=f"({format_quantity(e_lo)}, {format_quantity(e_hi)})")
    t_mod = (half_width(E, modulus_tolerance, name="modulus_tolerance") / E).to("").magnitude
    e_lo, e_hi = e_lo * (1 - t_mod), e_hi * (1 + t_mod)
    Ma = None
    if added_mass is not None:
        Ma = check_dimension(added_mass, name="added_mass", expected="mass").to("g")
        if not (np.isfinite(Ma.magnitude) and Ma.magnitude >= 0):
            raise InputError("the added strut mass cannot be negative", input_name="added_mass",
                             expected=">= 0 kg", got=format_quantity(added_mass))
        if Ma.magnitude == 0:
            Ma = None                     # no added mass: today's path, to the last bit
    zones = _zone_sums(node_zone_length, lengths.magnitude.size)
    flex = lengths.magnitude - zones.sum(axis=1)
    if np.any(flex <= 0):
        raise InputError("the node zones leave a strut no flexible length", input_name="node_zone_length",
                         expected="zones shorter together than the strut", got=format_quantity(node_zone_length))
    L_long = Q_(float(lengths.magnitude.max()), "m").to("mm")
    L_tot = Q_(float((weights * lengths.magnitude).sum()), "m").to("mm")
    zoned = bool(np.any(zones > 0))
    s_flex = int(np.argmax(flex))                  # the strut of the lower edge
    L_node = Q_(float(lengths.magnitude[s_flex]), "m").to("mm")
    z_flex = zones[s_flex]
    lam = {fix: Q_(eigenvalue(supports=fix, mode=1), "") for fix in FIXITIES}
    p = id_prefix
    steps = []

    # resonator and host masses
    mu = {fix: modal_mass_fraction(supports=fix, id=f"{p}.modal-mass-fraction-{_short(fix)}") for fix in FIXITIES}
    area = evaluate(AREA_CIRCLE, id=f"{p}.strut-area", description="Strut cross-section area",
                    values={"d": d}, unit="mm^2", source=SECTION_SOURCE)
    second = evaluate(SECOND_MOMENT_CIRCLE, id=f"{p}.strut-second-moment", unit="mm^4", source=SECTION_SOURCE,
                      description="Second moment of area of the strut section", values={"d": d})
    ms = evaluate(STRUT_MASS, id=f"{p}.strut-mass", unit="g", source=COMMON_PRACTICE,
                  description="Mass of the resonating struts per cell (slender struts, node overlap neglected)",
                  values={"rho": rho, "A": area.result, "L_tot": L_tot})
    w_val, w_method = direction_weight(lengths=lengths.magnitude, weights=weights, directions=strut_directions)
    w_dir = quantity_step(id=f"{p}.direction-weight", description="Direction weight w: share of the struts' "
                          "bending that the host motion drives", value=Q_(w_val, ""), sig=4, method=w_method,
                          source=DIRECTION_WEIGHT_SOURCE)
    if Ma is None:
        steps += [area, second, ms, mu["clamped-clamped"].steps[0], mu["pinned-pinned"].steps[0], w_dir]
    else:
        n_struts = Q_(float(weights.sum()), "")
        ma_step = quantity_step(id=f"{p}.added-mass", description="Mass added at mid-span of every lattice strut "
                                "(a sphere threaded on it)", value=Ma, unit="g", method="lattice.added_mass",
                                source=COMMON_PRACTICE,
                                note="The sphere's rotary inertia does not enter the first mode (symmetric: the "
                                "mid-span does not turn); its length along the strut, a stiff stretch at mid-span, "
                                "is neglected (the strut is taken uniform under it).")
        n_step = quantity_step(id=f"{p}.strut-count", description="Lattice struts per cell, N (a strut on a face "
                               "counts by its share in the cell)", value=n_struts, unit="", sig=4,
                               method="sum of the strut shares", source=COMMON_PRACTICE)
        each = quantity_step(id=f"{p}.strut-mass-each", description="Mass of one lattice strut, node to node "
                             "(mean over the cell's struts), for the mass split", value=(ms.result / n_struts).to("g"),
                             unit="g", method="m_s / N", source=COMMON_PRACTICE)
        steps += [area, second, ms, w_dir, ma_step, n_step, each]
    L_f = L_long
    if zoned:
        lf = evaluate(FLEXIBLE_LENGTH, id=f"{p}.strut-flexible-length", unit="mm", source=NODE_ZONE_SOURCE,
                      description="Flexible length of the lattice strut between its rigid node zones (the strut "
                      "with the longest flexible length)",
                      values={"L": L_node, "l_1": Q_(z_flex[0] * 1e3, "mm"), "l_2": Q_(z_flex[1] * 1e3, "mm")})
        f_nn = evaluate(EULER_BERNOULLI_FREQUENCY, id=f"{p}.f1-cc-node-to-node", unit="Hz", source=RAO_2017,
                        description="For comparison: first bending mode of the longest lattice strut, clamped–"
                        "clamped over its node-to-node length (no node zones)",
                        values={"lambda_n": lam["clamped-clamped"], "L": L_long, "E": E, "I": second.result,
                                "rho": rho, "A": area.result})
        L_f = lf.result
        steps += [lf, f_nn]

    out = {}
    if Ma is not None:
        bare = evaluate(EULER_BERNOULLI_FREQUENCY, id=f"{p}.f1-cc-bare", unit="Hz", source=RAO_2017,
                        description="For comparison: the same strut without its mid-span mass, clamped–clamped",
                        values={"lambda_n": lam["clamped-clamped"], "L": L_f, "E": E, "I": second.result,
                                "rho": rho, "A": area.result})
        steps.append(bare)
    for fix in FIXITIES:
        t = _short(fix)
        cc = fix == "clamped-clamped"
        if Ma is not None:
            L_fix = L_f if cc else L_long
            one = evaluate(STRUT_MASS, id=f"{p}.strut-mass-{t}", unit="g", source=COMMON_PRACTICE,
                           description=("Mass of the longest lattice strut over its bending length"
                                        + (" between the node zones" if zoned and cc else "") + f" ({fix})"),
                           values={"rho": rho, "A": area.result, "L_tot": L_fix})
            f0 = evaluate(MIDSPAN_MASS_FREQUENCY_CC if cc else MIDSPAN_MASS_FREQUENCY_PP, id=f"{p}.f1-{t}",
                          unit="Hz", source=RAYLEIGH_MIDSPAN_CC if cc else RAYLEIGH_MIDSPAN_PP,
                          description=f"First bending mode of the lattice strut with its mid-span mass, {fix} "
                          "(Rayleigh, static deflection shape)"
                          + (" (nominal lower edge)" if cc else " (lower bound of the fixity bracket)"),
                          values={"E": E, "I": second.result, "L": L_fix, "M_a": Ma, "m_s": one.result})
            m2 = evaluate(MIDSPAN_MASS_RESONATING_CC if cc else MIDSPAN_MASS_RESONATING_PP, id=f"{p}.m2-{t}",
                          unit="g", source=RAYLEIGH_MIDSPAN_CC if cc else RAYLEIGH_MIDSPAN_PP,
                          description=f"Resonating mass m₂: participating mass of the struts with their mid-span "
                          f"masses moving across the host motion ({fix})",
                          values={"N": n_struts, "w": w_dir.result, "M_a": Ma, "m_s": each.result})
            m1 = evaluate(HOST_MASS_ADDED, id=f"{p}.m1-{t}", unit="g", source=HUANG_SUN_HUANG_2009,
                          description="Host mass m₁: frame, struts and mid-span masses less the resonating mass",
                          values={"m_h": mh, "m_s": ms.result, "N": n_struts, "M_a": Ma, "m_2": m2.result})
            fh = evaluate(UPPER_EDGE, id=f"{p}.f-high-{t}", unit="Hz", source=HUANG_SUN_HUANG_2009,
                          description=f"Upper band edge, mass-in-mass model ({fix})",
                          values={"f_0": f0.result, "m_2": m2.result, "m_1": m1.result})
            steps += [one, f0, m2, m1, fh]
            out[fix] = (f0.result, fh.result, m2.result, m1.result)
            continue
        f0 = evaluate(EULER_BERNOULLI_FREQUENCY, id=f"{p}.f1-{t}", unit="Hz", source=RAO_2017,
                      description=(f"First bending mode of the lattice strut over its flexible length between "
                                   f"rigid node zones, {fix}" if zoned and cc else
                                   f"First bending mode of the longest lattice strut, {fix}")
                      + (" (nominal lower edge)" if cc else " (lower bound of the fixity bracket)"),
                      values={"lambda_n": lam[fix], "L": L_f if cc else L_long, "E": E, "I": second.result,
                              "rho": rho, "A": area.result})
        m2 = evaluate(RESONATING_MASS, id=f"{p}.m2-{t}", unit="g", source=HUANG_SUN_HUANG_2009,
                      description=f"Resonating mass m₂: effective modal mass of the struts moving across the "
                      f"host motion ({fix})", values={"w": w_dir.result, "mu": mu[fix].value, "m_s": ms.result})
        m1 = evaluate(HOST_MASS, id=f"{p}.m1-{t}", unit="g", source=HUANG_SUN_HUANG_2009,
                      description="Host mass m₁: frame and the struts' non-resonating share",
                      values={"m_h": mh, "w": w_dir.result, "mu": mu[fix].value, "m_s": ms.result})
        fh = evaluate(UPPER_EDGE, id=f"{p}.f-high-{t}", unit="Hz", source=HUANG_SUN_HUANG_2009,
                      description=f"Upper band edge, mass-in-mass model ({fix})",
                      values={"f_0": f0.result, "m_2": m2.result, "m_1": m1.result})
        steps += [f0, m2, m1, fh]
        out[fix] = (f0.result, fh.result, m2.result, m1.result)

    # Bragg frequency
    m1c, m2c = out["clamped-clamped"][3], out["clamped-clamped"][2]
    rho_eff = evaluate(EFFECTIVE_DENSITY, id=f"{p}.effective-density", unit="kg/m^3", source=COMMON_PRACTICE,
                       description="Effective density of the panel (cell mass over cell volume)",
                       values={"m_1": m1c, "m_2": m2c, "a": a})
    c = evaluate(WAVE_SPEED, id=f"{p}.wave-speed", unit="m/s", source=BRILLOUIN_1946,
                 description="Long-wave speed in the homogenised panel",
                 values={"E_eff": Ee, "rho_eff": rho_eff.result})
    fb = evaluate(BRAGG_FREQUENCY, id=f"{p}.bragg", unit="Hz", source=BRILLOUIN_1946,
                  description="Bragg frequency: half a wavelength spans one cell", values={"c": c.result, "a": a})
    steps += [rho_eff, c, fb]

    # scatter: every corner of (modulus range) × (tolerances), through the same formulas
    hd = half_width(d, diameter_tolerance, name="diameter_tolerance")
    hl = half_width(L_long, length_tolerance, name="length_tolerance")
    hr = half_width(rho, density_tolerance, name="density_tolerance")
    corners = np.array(list(itertools.product((0.0, 1.0), (-1.0, 1.0), (-1.0, 1.0), (-1.0, 1.0))))
    E_c = e_lo + (e_hi - e_lo) * corners[:, 0]
    d_c = d + hd * corners[:, 1]
    scale_c = 1.0 + (hl / L_long).to("").magnitude * corners[:, 2]
    rho_c = rho + hr * corners[:, 3]
    ranges = {}
    for fix in FIXITIES:
        L_c = (L_node * scale_c - Q_(z_flex.sum() * 1e3, "mm")) if fix == "clamped-clamped" else L_long * scale_c
        if Ma is None:
            f0_c, fh_c = _kernel(L=L_c, Ltot=L_tot * scale_c, d=d_c, E=E_c, rho=rho_c, m_host=mh,
                                 a=a, mu=mu[fix].value, lam=lam[fix], w=w_dir.result)
        else:
            f0_c, fh_c = _kernel_added(L=L_c, Ltot=L_tot * scale_c, d=d_c, E=E_c, rho=rho_c, m_host=mh,
                                       n_struts=n_struts, added=Ma, cc=fix == "clamped-clamped", w=w_dir.result)
        ranges[fix] = (f0_c.magnitude.min(), f0_c.magnitude.max(), fh_c.magnitude.min(), fh_c.magnitude.max())
    lo_min, lo_max, hi_min, hi_max = ranges["clamped-clamped"]
    scatter_text = (f"dynamic modulus {format_quantity(e_lo.to('MPa'))} to {format_quantity(e_hi.to('MPa'))}"
                    f" (temperature range and ± {format_number(100 * t_mod, 3)} % batch), diameter ± "
                    f"{format_quantity(hd)}, strut length ± {format_quantity(hl)}, density ± {format_quantity(hr)}")
    method = "formulas above evaluated at all 16 corners of: " + scatter_text
    for key, val, desc in (("f-low-min", lo_min, "Lower edge, lowest under scatter"),
                           ("f-low-max", lo_max, "Lower edge, highest under scatter"),
                           ("f-high-min", hi_min, "Upper edge, lowest under scatter"),
                           ("f-high-max", hi_max, "Upper edge, highest under scatter")):
        steps.append(quantity_step(id=f"{p}.{key}", description=desc + " (clamped–clamped struts)",
                                   value=Q_(val, "Hz"), unit="Hz", method=method, source=COMMON_PRACTICE))
    env_lo = min(ranges["pinned-pinned"][0], lo_min)
    env_hi = max(ranges["pinned-pinned"][3], hi_max)
    steps.append(quantity_step(id=f"{p}.envelope-low", description="Band envelope, lowest lower edge "
                               "(fixity bracket and scatter)", value=Q_(env_lo, "Hz"), unit="Hz",
                               method="minimum over both fixities and all scatter corners", source=COMMON_PRACTICE))
    steps.append(quantity_step(id=f"{p}.envelope-high", description="Band envelope, highest upper edge "
                               "(fixity bracket and scatter)", value=Q_(env_hi, "Hz"), unit="Hz",
                               method="maximum over both fixities and all scatter corners", source=COMMON_PRACTICE))

    f_low, f_high = out["clamped-clamped"][0], out["clamped-clamped"][1]
    mechanism = "local resonance" if f_low < fb.result else "Bragg scattering"
    steps.append(check(id=f"{p}.mechanism", description="Local resonance comes before Bragg scattering "
                       "(f_low ≤ f_B): the band is a locally resonant one", demand=f_low, limit=fb.result,
                       sense="max", source=COMMON_PRACTICE,
                       note="" if mechanism == "local resonance" else
                       "The Bragg frequency lies below the strut resonance: periodic scattering acts first, "
                       "and the mass-in-mass estimate of the upper edge does not describe the first band."))

    # cluster of strut modes: every distinct lattice strut length, modes and fixities
    # (with node zones: the clamped–clamped family over the flexible length, the others node to node)
    cluster = []
    pairs = np.unique(np.round(np.c_[lengths.to("mm").magnitude, 1e3 * zones.sum(axis=1)], 9), axis=0)
    for Lm, zm in pairs:
        for fix in CLUSTER_FIXITIES:
            L_m = Lm - zm if fix == "clamped-clamped" else Lm
            label = format_quantity(Q_(Lm, "mm")) + (f" (flexible {format_quantity(Q_(L_m, 'mm'))})"
                                                     if zm > 0 and fix == "clamped-clamped" else "")
            if Ma is not None:
                # with a mid-span mass: mode 1 of either fixity by Rayleigh's formula; mode 2 (antisymmetric,
                # the mid-span at rest, the sphere's rotary inertia neglected) as the bare strut's; the other
                # modes and clamped–pinned have no hand formula with the mass here and are not listed
                if fix == "clamped-pinned":
                    continue
                cc = fix == "clamped-clamped"
                for m in cluster_modes:
                    if m == 1:
                        one = STRUT_MASS.evaluate({"rho": rho, "A": area.result, "L_tot": Q_(L_m, "mm")})
                        f = (MIDSPAN_MASS_FREQUENCY_CC if cc else MIDSPAN_MASS_FREQUENCY_PP).evaluate(
                            {"E": E, "I": second.result, "L": Q_(L_m, "mm"), "M_a": Ma, "m_s": one})
                        cluster.append((label + ", with the mid-span mass", m, fix, f.to("Hz")))
                    elif m == 2:
                        lam_m = Q_(eigenvalue(supports=fix, mode=m), "")
                        f = EULER_BERNOULLI_FREQUENCY.evaluate({"lambda_n": lam_m, "L": Q_(L_m, "mm"), "E": E,
                                                                "I": second.result, "rho": rho, "A": area.result})
                        cluster.append((label + ", mid-span at rest", m, fix, f.to("Hz")))
                continue
            for m in cluster_modes:
                lam_m = Q_(eigenvalue(supports=fix, mode=m), "")
                f = EULER_BERNOULLI_FREQUENCY.evaluate({"lambda_n": lam_m, "L": Q_(L_m, "mm"), "E": E,
                                                        "I": second.result, "rho": rho, "A": area.result})
                cluster.append((label, m, fix, f.to("Hz")))

    value = {"f_low": f_low, "f_high": f_high, "f_low_pinned": out["pinned-pinned"][0],
             "f_high_pinned": out["pinned-pinned"][1], "f_bragg": fb.result,
             "f_low_min": Q_(lo_min, "Hz"), "f_low_max": Q_(lo_max, "Hz"), "f_high_min": Q_(hi_min, "Hz"),
             "f_high_max": Q_(hi_max, "Hz"), "envelope_low": Q_(env_lo, "Hz"), "envelope_high": Q_(env_hi, "Hz")}
    ratio = float((out["clamped-clamped"][2] / out["clamped-clamped"][3]).to("").magnitude)
    return BandEstimate(value=value, steps=tuple(steps), mechanism=mechanism, cluster=tuple(cluster),
                        mass_ratio=ratio, cell_width=a, effective_modulus=Ee,
                        title="Stop band estimate from the strut resonances")


def _short(fix: str) -> str:
    return "cc" if fix == "clamped-clamped" else "pp"


# --- from a cell and materials --------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class CellBandInputs(CalcResult):
    """The plain inputs of :func:`band_estimate` worked out from a cell and its materials."""

    arguments: dict


def cell_band_inputs(*, cell, lattice_material, frame_material=None, effective_modulus=None,
                     id_prefix: str = "band.cell") -> CellBandInputs:
    """Strut lengths, host mass and long-wave modulus of a cell, for :func:`band_estimate`.

    Parameters
    ----------
    cell:
        A :class:`~latticecalc.physics.cells.Cell` with a ``"lattice"`` group (and optionally
        ``"frame"``).
    lattice_material, frame_material:
        :class:`~latticecalc.materials.Material` of each group (frame needed when the cell has one).
    effective_modulus:
        Long-wave modulus E* of the panel [pressure]; when None it is estimated as the frame's
        axial path E_f A_f / a² (struts along the wave direction, per cell face) plus the lattice's
        scaling law: ρ̄ E_s / 3 if stretch-dominated (Ashby 2006), ρ̄² E_s if bending-dominated
        (Gibson & Ashby 1997), with the slender-strut relative density ρ̄.
    id_prefix:
        Prefix of the step ids.
    """
    mask = cell.group_mask("lattice")
    lengths = cell.strut_lengths[mask]
    weights = np.asarray(cell.weights)[mask]
    d = cell.diameters["lattice"]
    E = lattice_material.dynamic_modulus()
    steps = []
    host = Q_(0.0, "g")
    frame_modulus = Q_(0.0, "MPa")
    if "frame" in cell.group_names:
        if frame_material is None:
            raise InputError("the cell has a frame: give its material", input_name="frame_material",
                             expected="a Material", got="None")
        fmask = cell.group_mask("frame")
        df = cell.diameters["frame"]
        fw = np.asarray(cell.weights)[fmask]
        flen = cell.strut_lengths[fmask].to("mm").magnitude
        af = evaluate(AREA_CIRCLE, id=f"{id_prefix}.frame-area", description="Frame member area",
                      values={"d": df}, unit="mm^2", source=SECTION_SOURCE)
        mf = evaluate(STRUT_MASS, id=f"{id_prefix}.frame-mass", unit="g", source=COMMON_PRACTICE,
                      description="Frame mass per cell (host mass)",
                      values={"rho": frame_material.density, "A": af.result,
                              "L_tot": Q_(float((fw * flen).sum()), "mm")})
        host = mf.result
        # members parallel to the wave direction (x): their share per cell
        vec = cell.strut_vectors[fmask].magnitude
        along = np.abs(vec[:, 0]) > 0.999 * np.linalg.norm(vec, axis=1)
        x_len = float((fw[along] * flen[along]).sum())
        a_mm = float(cell.cell_width.to("mm").magnitude)
        a_fr = Q_(af.result.magnitude * x_len / a_mm, "mm^2")
        fm = evaluate(FRAME_MODULUS, id=f"{id_prefix}.frame-modulus", unit="MPa", source=STATICS,
                      description="Long-wave modulus of the frame path (members along the wave, per cell face)",
                      values={"E_f": frame_material.youngs_modulus, "A_fr": a_fr, "a": cell.cell_width})
        frame_modulus = fm.result
        steps += [af, mf, fm]
    if effective_modulus is None:
        area = AREA_CIRCLE.evaluate({"d": d})
        rb = evaluate(RELATIVE_DENSITY_SLENDER, id=f"{id_prefix}.lattice-relative-density", unit="",
                      source=COMMON_PRACTICE, description="Relative density of the lattice (slender struts)",
                      values={"A": area.to("mm^2"), "L_tot": Q_(float((weights * lengths.to("mm").magnitude).sum()),
                                                                "mm"), "a": cell.cell_width.to("mm")})
        law, src = ((STRETCH_MODULUS, ASHBY_2006) if cell.regime == "stretch-dominated"
                    else (BENDING_MODULUS, GIBSON_ASHBY_1997))
        el = evaluate(law, id=f"{id_prefix}.lattice-modulus", unit="MPa", source=src,
                      description=f"Long-wave modulus of the lattice ({cell.regime})",
                      values={"rhobar": rb.result, "E_s": E})
        total = (frame_modulus + el.result).to("MPa")
        steps += [rb, el, quantity_step(id=f"{id_prefix}.effective-modulus", unit="MPa", value=total,
                                        description="Long-wave modulus of the panel, frame path + lattice",
                                        method="sum of the parallel load paths", source=COMMON_PRACTICE)]
        effective_modulus = total
    args = {"strut_lengths": lengths, "strut_weights": weights, "strut_directions": cell.strut_vectors[mask].magnitude,
            "strut_diameter": d, "youngs_modulus": E,
            "density": lattice_material.density, "cell_width": cell.cell_width, "host_mass": host,
            "effective_modulus": effective_modulus, "modulus_range": lattice_material.modulus_range()}
    return CellBandInputs(value=effective_modulus, steps=tuple(steps), arguments=args,
                          title="Band inputs from the cell")


def band_estimate_for_cell(*, cell, lattice_material, frame_material=None, effective_modulus=None,
                           modulus_tolerance=None, diameter_tolerance=None, length_tolerance=None,
                           density_tolerance=None, node_zones: str = "none", added_mass=None,
                           id_prefix: str = "band") -> BandEstimate:
    """:func:`band_estimate` for a cell: lattice struts resonate, the frame is host mass.

    The dynamic modulus of the lattice material is used, and its range over the service
    temperature (``modulus_range()``) is the material scatter.  Parameters as in
    :func:`cell_band_inputs` and :func:`band_estimate`; ``node_zones="rigid"`` gives the lattice
    struts rigid zones at the nodes of the infinite lattice
    (:func:`latticecalc.physics.frame_fe.cell_node_zones`, shown on the sheet).  ``added_mass``
    [mass] at mid-span of every lattice strut: default the cell's own (``cell.point_masses["lattice"]``,
    the sphere the Bloch, panel and column models carry), none when it has none; ``Q_(0, "kg")``
    for the bare struts.
    """
    from latticecalc.physics import frame_fe

    inputs = cell_band_inputs(cell=cell, lattice_material=lattice_material, frame_material=frame_material,
                              effective_modulus=effective_modulus, id_prefix=f"{id_prefix}.cell")
    zone_steps: tuple = ()
    zone_lengths = None
    if frame_fe.check_node_zones(node_zones) == "rigid":
        zones = frame_fe.cell_node_zones(cell, group="lattice", id_prefix=f"{id_prefix}.node-zone")
        zone_lengths = zones.lengths[cell.group_mask("lattice")]
        zone_steps = zones.steps
    if added_mass is None:
        added_mass = getattr(cell, "point_masses", {}).get("lattice", (None,))[0]
    est = band_estimate(**inputs.arguments, modulus_tolerance=modulus_tolerance,
                        diameter_tolerance=diameter_tolerance,
                        length_tolerance=length_tolerance, density_tolerance=density_tolerance,
                        node_zone_length=zone_lengths, added_mass=added_mass, id_prefix=id_prefix)
    return dataclasses.replace(est, steps=inputs.steps + zone_steps + est.steps)


def zone_band_estimates(*, cell, zoning, lattice_material, frame_material=None, id_prefix: str = "band",
                        **kwargs) -> tuple[BandEstimate, ...]:
    """:func:`band_estimate_for_cell` for each zone of a graded panel (its cell and lattice material).

    ``zoning`` a :class:`~latticecalc.physics.zoning.Zoning`; zone k's steps are under
    ``<id_prefix>.zone<k>``; ``kwargs`` as for :func:`band_estimate_for_cell` (tolerances, node zones).
    Each zone's estimate counts the zone's own mass at mid-span of its struts (its zone cell carries it).
    """
    out = []
    for k, z in enumerate(zoning.zones):
        out.append(band_estimate_for_cell(cell=zoning.zone_cell(cell, k),
                                          lattice_material=z.material if z.material is not None else lattice_material,
                                          frame_material=frame_material, id_prefix=f"{id_prefix}.zone{k + 1}",
                                          **kwargs))
    return tuple(out)


RESONATOR_STIFFNESS = Formula("k_2", _m2 * (2 * sp.pi * _f0) ** 2)
HOST_STIFFNESS = Formula("k_1", _Ee * _a, latex_names={"E_eff": "E^*"})


def equivalent_chain(estimate: BandEstimate, *, points: int = 201, id_prefix: str = "band.chain") -> ChainDispersion:
    """The mass-in-mass chain behind a band estimate, solved exactly (Huang, Sun & Huang 2009).

    m₁, m₂ and f₀ are the estimate's clamped–clamped values; k₂ = m₂ (2π f₀)² tunes the resonator
    to the strut mode and k₁ = E* a is the axial stiffness of one cubic cell of the homogenised
    panel.  The exact gap shows how far the lower edge sits below f₀.
    """
    m1 = next(s.result for s in estimate.steps if s.id.endswith(".m1-cc"))
    m2 = next(s.result for s in estimate.steps if s.id.endswith(".m2-cc"))
    f0 = estimate.value["f_low"]
    k2 = evaluate(RESONATOR_STIFFNESS, id=f"{id_prefix}.k2", unit="N/m", source=HUANG_SUN_HUANG_2009,
                  description="Resonator stiffness tuned to the strut mode", values={"m_2": m2, "f_0": f0})
    k1 = evaluate(HOST_STIFFNESS, id=f"{id_prefix}.k1", unit="N/m", source=COMMON_PRACTICE,
                  description="Host stiffness: axial stiffness of one cubic cell, E* a² / a",
                  values={"E_eff": estimate.effective_modulus, "a": estimate.cell_width})
    chain = mass_in_mass_dispersion(outer_mass=m1, inner_mass=m2, outer_stiffness=k1.result,
                                    inner_stiffness=k2.result, cell_length=estimate.cell_width, points=points,
                                    id_prefix=id_prefix)
    return dataclasses.replace(chain, steps=(k2, k1, *chain.steps))
