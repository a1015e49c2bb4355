"""Relative density of a lattice cell, and the mass of a panel of cells.

Two methods, per strut group (``lattice``, ``frame``):

``closed-form``
    The slender-strut formula of the cell kind, which counts each strut's full cylinder and
    ignores the overlap at the nodes: octet ρ̄ = 6√2 π (r/l)² (Deshpande, Fleck & Ashby 2001),
    simple cubic 3π (r/l)², BCC 3√3 π (r/l)², FCC (face diagonals) 3√2 π (r/l)², diamond
    (3√3/4) π (r/l)² (derived the same way: struts per cell × π r² l / a³, with a from l).  The
    frame and user-defined cells use the general sum ρ̄ = π d² Σ(w l) / (4 a³), with w the
    strut's share of the cell (see :mod:`latticecalc.physics.cells`).  A group of tubes (outer
    diameter D, inner d_i) uses ρ̄ = π (D² − d_i²) Σ(w l) / (4 a³).

``geometric``
    The volume per cell of the actual solid: each strut a cylinder with hemispherical ends (the
    same as a sphere of the strut diameter at every node, the usual way lattice geometry is
    closed at a node), the union taken over the infinite lattice so overlaps at nodes count
    once.  Computed as Σ_i w_i ∫_{strut i} 1/n(x) dV, n(x) the number of struts containing x,
    with scrambled Sobol' points inside each strut (cylinder and end caps sampled separately,
    so only the small node regions carry sampling error).  Where a frame strut and a lattice
    strut overlap, the overlap belongs to the frame.  For simple cubic the result equals the
    exact inclusion–exclusion form 3π (r/l)² − 8√2 (r/l)³ (three orthogonal cylinders; the
    end caps lie inside the Steinmetz solid); the tests hold it to that.  The sampling error is
    estimated from two independent scrambles and reported on the sheet.  A tube (outer radius r,
    inner r_i) is the set of points at a distance between r_i and r from its axis segment: a
    cylindrical wall closed at each node by a hollow hemisphere, sampled the same way (annulus and
    spherical shell), so merged tube walls at a joint also count once.

Tubes: every strut volume is its section area times its length, with the area of a hollow
circle A = π(D² − d_i²)/4 where the cell gives the group a wall thickness (Roark's Formulas,
7th ed., Table A.1, from memory).
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pint
import sympy as sp

from latticecalc.cache import fingerprint
from latticecalc.errors import InputError
from latticecalc.materials import Material
from latticecalc.physics.beams import AREA_TUBE, TUBE_SECTION_SOURCE
from latticecalc.physics.cells import Cell
from latticecalc.physics.sobol import scrambled_sobol
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive

METHODS = ("closed-form", "geometric")

_r, _l, _d, _a, _L = sp.symbols("r l d a L_w")
_D, _di = sp.symbols("D d_i")
_rho_rel = "rho_rel"
_NAMES = {"rho_rel": r"\bar{\rho}", "L_w": r"\sum w_i l_i", "d_i": r"d_\mathrm{i}"}

DESHPANDE_FLECK_ASHBY_2001 = Source(
    author="Deshpande, V. S., Fleck, N. A. & Ashby, M. F.",
    title="Effective properties of the octet-truss lattice material, J. Mech. Phys. Solids 49, 1747-1769",
    year=2001, locator="§2, relative density of the octet cell (equation number from memory)")
DERIVED_SLENDER = Source(author="derived",
                         title="struts per cell × π r² l / a³, slender struts, no node overlap",
                         locator="cell geometry of latticecalc.physics.cells", tag="derived")
DERIVED_EXACT_SC = Source(author="derived", title="inclusion-exclusion of three orthogonal cylinders "
                          "(bicylinder 16r³/3, tricylinder 8(2-√2)r³)", tag="derived")
GEOMETRIC_METHOD = ("union of the struts (cylinders with hemispherical ends) over the infinite lattice, "
                    "scrambled Sobol' sampling inside each strut, {n} points per strut part")

#: Slender-strut closed forms by cell kind, ρ̄ in terms of the strut radius r and length l.
CLOSED_FORMS: Mapping[str, tuple[Formula, Source]] = {
    "octet": (Formula(_rho_rel, 6 * sp.sqrt(2) * sp.pi * (_r / _l) ** 2, _NAMES), DESHPANDE_FLECK_ASHBY_2001),
    "simple-cubic": (Formula(_rho_rel, 3 * sp.pi * (_r / _l) ** 2, _NAMES), DERIVED_SLENDER),
    "bcc": (Formula(_rho_rel, 3 * sp.sqrt(3) * sp.pi * (_r / _l) ** 2, _NAMES), DERIVED_SLENDER),
    "fcc": (Formula(_rho_rel, 3 * sp.sqrt(2) * sp.pi * (_r / _l) ** 2, _NAMES), DERIVED_SLENDER),
    "diamond": (Formula(_rho_rel, sp.Rational(3, 4) * sp.sqrt(3) * sp.pi * (_r / _l) ** 2, _NAMES),
                DERIVED_SLENDER),
}
#: Simple cubic with the exact node overlap (used by the tests and shown for simple-cubic cells).
SIMPLE_CUBIC_EXACT = Formula(_rho_rel, 3 * sp.pi * (_r / _l) ** 2 - 8 * sp.sqrt(2) * (_r / _l) ** 3, _NAMES)
#: General slender sum for any group: π d² Σ(w l) / (4 a³).
STRUT_SUM = Formula(_rho_rel, sp.pi * _d**2 * _L / (4 * _a**3), _NAMES)
#: The same for a group of tubes (outer diameter D, inner diameter d_i): π (D² − d_i²) Σ(w l) / (4 a³).
STRUT_SUM_TUBE = Formula(_rho_rel, sp.pi * (_D**2 - _di**2) * _L / (4 * _a**3), _NAMES)
CLOSED_FORM_ERROR = Formula("e_cf", (sp.Symbol("rho_cf") - sp.Symbol("rho_geo")) / sp.Symbol("rho_geo"),
                            {"e_cf": r"e_\mathrm{cf}", "rho_cf": r"\bar{\rho}_\mathrm{cf}",
                             "rho_geo": r"\bar{\rho}_\mathrm{geo}"})

#: Default Sobol' points per strut part (cylinder near the nodes, end caps), a power of 2.
DEFAULT_SAMPLES = 2**11
_GRID = 256  # axial cells used to find where other struts reach a strut


def _check_cell(cell: Any) -> Cell:
    if not isinstance(cell, Cell):
        raise InputError("not a lattice cell", input_name="cell",
                         expected="a Cell from latticecalc.physics.cells.build_cell", got=type(cell).__name__)
    return cell


def strut_areas(cell: Cell) -> np.ndarray:
    """Section area of each strut of ``cell`` [m²]: π(D² − d_i²)/4, d_i = 0 for a solid rod."""
    outer = {g: cell.diameters[g] for g in cell.group_names}
    inner = {g: cell.inner_diameter(g) for g in cell.group_names}
    by_group = {g: float(AREA_TUBE.evaluate({"D": outer[g], "d_i": inner[g]}).to("m^2").magnitude)
                for g in cell.group_names}
    return np.array([by_group[g] for g in cell.groups])


def _group_priority(cell: Cell) -> list[str]:
    names = list(cell.group_names)
    return (["frame"] if "frame" in names else []) + [g for g in names if g != "frame"]


def closed_form_steps(cell: Cell, *, id_prefix: str = "density") -> dict[str, Any]:
    """Closed-form ρ̄ step of each group (slender struts, no node overlap)."""
    steps = {}
    a = cell.cell_width
    for group in cell.group_names:
        mask = cell.group_mask(group)
        d = cell.diameters[group]
        sid = f"{id_prefix}.{group}.closed-form"
        lengths = cell.strut_lengths[mask]
        uniform = np.allclose(lengths.magnitude, lengths.magnitude[0], rtol=1e-9)
        if cell.is_hollow(group):
            lw = (cell.strut_lengths[mask] * cell.weights[mask]).sum()
            steps[group] = evaluate(STRUT_SUM_TUBE, id=sid, description=f"Relative density of the {group} "
                                    "tubes, sum of strut volumes per cell (slender, no node overlap)",
                                    values={"D": d, "d_i": cell.inner_diameter(group), "L_w": lw, "a": a},
                                    unit="", source=TUBE_SECTION_SOURCE)
        elif group == "lattice" and cell.kind in CLOSED_FORMS and uniform:
            formula, source = CLOSED_FORMS[cell.kind]
            steps[group] = evaluate(formula, id=sid, description=f"Relative density of the {group} struts, "
                                    f"{cell.kind} cell, slender-strut closed form",
                                    values={"r": d / 2, "l": lengths[0]}, unit="", source=source)
        else:
            lw = (cell.strut_lengths[mask] * cell.weights[mask]).sum()
            steps[group] = evaluate(STRUT_SUM, id=sid, description=f"Relative density of the {group} struts, "
                                    "sum of strut volumes per cell (slender, no node overlap)",
                                    values={"d": d, "L_w": lw, "a": a}, unit="", source=DERIVED_SLENDER)
    return steps


# --- geometric union -----------------------------------------------------------------------------
def _point_segment_distance(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Distances from points p (N×3) to segments a→b (K×3 each): N×K."""
    ab = b - a
    denom = np.einsum("ij,ij->i", ab, ab)
    ap = p[:, None, :] - a[None, :, :]
    t = np.clip(np.einsum("nkj,kj->nk", ap, ab) / denom, 0.0, 1.0)
    closest = a[None, :, :] + t[..., None] * ab[None, :, :]
    return np.linalg.norm(p[:, None, :] - closest, axis=2)


def _frame_basis(axis: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    helper = np.array([1.0, 0.0, 0.0]) if abs(axis[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    u = np.cross(axis, helper)
    u /= np.linalg.norm(u)
    return u, np.cross(axis, u)


def _strut_samples(n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Unit samples for a cylinder (t, ρ², φ) and a ball (ρ³, cos θ, φ).

    Scrambled Sobol' points, the same as ``scipy.stats.qmc.Sobol(d=3, scramble=True, seed=...)`` gives,
    built without importing ``scipy.stats`` (0.8 s a kernel).
    """
    return scrambled_sobol(n, 3, seed), scrambled_sobol(n, 3, seed + 1)


#: Union volumes already computed in this process, by a fingerprint of the geometry, samples and seed:
#: a run asks for the same cell's geometric density in several sections.
_UNION_MEMO: dict[str, dict[str, float]] = {}
_UNION_MEMO_SIZE = 32


def _union_key(cell: Cell, samples: int, seed: int) -> str:
    inner = {g: cell.inner_diameter(g).to("m").magnitude for g in cell.group_names}
    return fingerprint("union-volumes-v1", cell.cell_width, cell.nodes, np.asarray(cell.struts), list(cell.groups),
                       cell.strut_diameters, inner, np.asarray(cell.weights), _group_priority(cell), samples, seed)


def _union_volumes(cell: Cell, *, samples: int, seed: int) -> dict[str, float]:
    """Volume per cell [m³] of each group's share of the union of struts, memoised in the process."""
    key = _union_key(cell, samples, seed)
    if key not in _UNION_MEMO:
        if len(_UNION_MEMO) >= _UNION_MEMO_SIZE:
            _UNION_MEMO.pop(next(iter(_UNION_MEMO)))
        _UNION_MEMO[key] = _union_volumes_kept(cell, key, samples=samples, seed=seed)
    return dict(_UNION_MEMO[key])


def _union_volumes_kept(cell: Cell, key: str, *, samples: int, seed: int) -> dict[str, float]:
    """The union volumes, from the project's result cache when run in a project, else computed.

    Every rerun of every section asked for them afresh, about half a second each.
    """
    from latticecalc.cache import cached_arrays, project_folder_cache

    groups = list(cell.group_names)

    def compute() -> dict[str, np.ndarray]:
        volumes = _union_volumes_computed(cell, samples=samples, seed=seed)
        return {"volumes": np.array([volumes[g] for g in groups], dtype=float)}

    data = cached_arrays(project_folder_cache(), f"union-volumes-{key}", compute)
    return dict(zip(groups, (float(v) for v in data["volumes"])))


def _union_volumes_computed(cell: Cell, *, samples: int, seed: int) -> dict[str, float]:
    """Volume per cell [m³] of each group's share of the union of struts (see module docstring)."""
    a = cell.cell_width.to("m").magnitude
    x = cell.nodes.to("m").magnitude
    radii = cell.strut_diameters.magnitude / 2
    inner_r = {g: float(cell.inner_diameter(g).to("m").magnitude) / 2 for g in cell.group_names}
    radii_in = np.array([inner_r[g] for g in cell.groups])
    groups = np.array(cell.groups)
    priority = {g: k for k, g in enumerate(_group_priority(cell))}
    rank = np.array([priority[g] for g in groups])
    p0, p1 = x[cell.struts[:, 0]], x[cell.struts[:, 1]]
    # all struts of the 27 neighbouring cells, each spatial segment once
    seg_a, seg_b, seg_r, seg_ri, seg_rank, seen = [], [], [], [], [], set()
    for shift in itertools.product((-1, 0, 1), repeat=3):
        s = np.asarray(shift, dtype=float) * a
        for i in range(len(p0)):
            key = tuple(sorted([tuple(np.round((p0[i] + s) / a, 9)), tuple(np.round((p1[i] + s) / a, 9))]))
            if key in seen:
                continue
            seen.add(key)
            seg_a.append(p0[i] + s)
            seg_b.append(p1[i] + s)
            seg_r.append(radii[i])
            seg_ri.append(radii_in[i])
            seg_rank.append(rank[i])
    seg_a, seg_b = np.array(seg_a), np.array(seg_b)
    seg_r, seg_ri, seg_rank = np.array(seg_r), np.array(seg_ri), np.array(seg_rank)
    mid = (seg_a + seg_b) / 2
    half = np.linalg.norm(seg_b - seg_a, axis=1) / 2
    cyl_u, ball_u = _strut_samples(samples, seed)
    grid = np.linspace(0.0, 1.0, _GRID + 1)
    volumes = dict.fromkeys(cell.group_names, 0.0)
    for i in range(len(p0)):
        axis = p1[i] - p0[i]
        length = float(np.linalg.norm(axis))
        axis /= length
        r, ri = radii[i], radii_in[i]
        u, v = _frame_basis(axis)
        # neighbours whose bounding spheres meet this strut's, without the strut itself
        reach = np.linalg.norm(mid - (p0[i] + p1[i]) / 2, axis=1) <= half + length / 2 + seg_r + r + 1e-12
        itself = (np.linalg.norm(seg_a - p0[i], axis=1) < 1e-12 * a) & (
            np.linalg.norm(seg_b - p1[i], axis=1) < 1e-12 * a)
        reach &= ~itself
        na, nb, nr, nri, nk = seg_a[reach], seg_b[reach], seg_r[reach], seg_ri[reach], seg_rank[reach]
        # where along the axis another strut can reach this strut's cylinder: the distance from the
        # axis point to a segment is convex in t, so each neighbour marks one interval of grid cells
        on_axis = p0[i] + np.outer(grid * length, axis)
        near = _point_segment_distance(on_axis, na, nb) <= (nr + r)[None, :] * (1 + 1e-9)
        marked_nodes = near.any(axis=1)
        marked = marked_nodes[:-1] | marked_nodes[1:]
        marked[1:] |= marked[:-1].copy()
        marked[:-1] |= marked[1:].copy()
        cells_marked = np.flatnonzero(marked)
        frac_marked = cells_marked.size / _GRID
        wall = math.pi * (r**2 - ri**2)  # section area (a tube's annulus)
        share = wall * length * (1.0 - frac_marked)  # no other strut there: counted whole
        ends = np.vstack([p0[i], p1[i]])
        cap_near = (_point_segment_distance(ends, na, nb) <= (nr + r)[None, :] * (1 + 1e-9)).any(axis=0)
        parts = [(4.0 / 3.0 * math.pi * (r**3 - ri**3), None, cap_near)]
        if cells_marked.size:
            parts.append((wall * length * frac_marked, cells_marked, near.any(axis=0)))
        for vol, where, keep in parts:
            if where is None:
                # the ball of the end caps, each half moved to its end of the strut
                rb = np.cbrt(ri**3 + (r**3 - ri**3) * ball_u[:, 0])  # ball, or spherical shell of a tube
                cos_t = 2 * ball_u[:, 1] - 1
                sin_t = np.sqrt(np.clip(1 - cos_t**2, 0, None))
                phib = 2 * math.pi * ball_u[:, 2]
                local = (np.outer(rb * cos_t, axis) + np.outer(rb * sin_t * np.cos(phib), u)
                         + np.outer(rb * sin_t * np.sin(phib), v))
                pts = np.where((cos_t < 0)[:, None], p0[i] + local, p1[i] + local)
            else:
                pick = where[np.minimum((cyl_u[:, 0] * where.size).astype(int), where.size - 1)]
                t = (pick + (cyl_u[:, 0] * where.size - np.floor(cyl_u[:, 0] * where.size))) / _GRID * length
                rho = np.sqrt(ri**2 + (r**2 - ri**2) * cyl_u[:, 1])  # disc, or annulus of a tube
                phi = 2 * math.pi * cyl_u[:, 2]
                pts = (p0[i] + np.outer(t, axis) + np.outer(rho * np.cos(phi), u)
                       + np.outer(rho * np.sin(phi), v))
            dist = _point_segment_distance(pts, na[keep], nb[keep])
            inside = (dist <= nr[keep][None, :] * (1 + 1e-12)) & (dist >= nri[keep][None, :] * (1 - 1e-12))
            higher = (inside & (nk[keep][None, :] < rank[i])).any(axis=1)
            same = 1 + (inside & (nk[keep][None, :] == rank[i])).sum(axis=1)
            weight = np.where(higher, 0.0, 1.0 / same)
            share += vol * weight.mean()
        volumes[groups[i]] += cell.weights[i] * share
    return volumes


@dataclass(frozen=True, kw_only=True)
class RelativeDensity(CalcResult):
    """Result of :func:`relative_density`; ``value`` is the total ρ̄ (dimensionless)."""

    method: str
    by_group: Mapping[str, pint.Quantity]
    closed_form: Mapping[str, pint.Quantity]
    geometric: Mapping[str, pint.Quantity] | None = None
    sampling_error: Mapping[str, float] | None = None


def relative_density(cell: Cell, method: str = "closed-form", *, samples: int = DEFAULT_SAMPLES,
                     seed: int = 20240611, id_prefix: str = "density") -> RelativeDensity:
    """Relative density ρ̄ (solid volume over cell volume) of a cell, per group and in total.

    Parameters
    ----------
    cell:
        A :class:`~latticecalc.physics.cells.Cell`.
    method:
        ``"closed-form"`` (slender struts, no node overlap) or ``"geometric"`` (actual strut
        union with the node overlap counted once; the closed form's error is shown beside it).
    samples:
        Sobol' points per strut part for ``geometric`` (a power of 2).
    seed:
        Seed of the scrambled Sobol' sequence (fixed, so results repeat exactly).
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    RelativeDensity
        ``.value`` total ρ̄ (dimensionless); ``.by_group`` ρ̄ of each group.
    """
    cell = _check_cell(cell)
    if method not in METHODS:
        raise InputError("unknown relative density method", input_name="method",
                         expected="one of " + ", ".join(METHODS), got=repr(method))
    if isinstance(samples, bool) or not isinstance(samples, int) or samples < 64:
        raise InputError("too few sampling points", input_name="samples", expected="an integer >= 64",
                         got=repr(samples))
    cf = closed_form_steps(cell, id_prefix=id_prefix)
    steps: list[Any] = list(cf.values())
    closed = {g: s.result for g, s in cf.items()}
    if cell.kind == "simple-cubic" and "lattice" in cf:
        d = cell.diameters["lattice"]
        steps.append(evaluate(SIMPLE_CUBIC_EXACT, id=f"{id_prefix}.lattice.exact-overlap",
                              description="Relative density of the simple-cubic struts with the exact "
                                          "node overlap",
                              values={"r": d / 2, "l": cell.cell_width}, unit="", source=DERIVED_EXACT_SC))
    if method == "closed-form":
        by_group = closed
        geo = err = None
    else:
        cell_volume = cell.cell_width.to("m").magnitude ** 3
        v1 = _union_volumes(cell, samples=samples, seed=seed)
        v2 = _union_volumes(cell, samples=samples, seed=seed + 7919)
        geo, err = {}, {}
        for g in cell.group_names:
            rho1, rho2 = v1[g] / cell_volume, v2[g] / cell_volume
            geo[g] = Q_((rho1 + rho2) / 2, "")
            err[g] = abs(rho1 - rho2) / 2
            steps.append(quantity_step(
                id=f"{id_prefix}.{g}.geometric", description=f"Relative density of the {g} struts from the "
                "actual geometry, node overlap counted once", value=geo[g], unit="",
                method=GEOMETRIC_METHOD.format(n=samples) + f"; sampling error about ±{err[g]:.1e}"
                + ("; tubes: walls with hollow hemispherical ends, merged walls counted once"
                   if cell.is_hollow(g) else ""),
                source=Source(author="numerical", title="quasi-Monte Carlo volume of a union of solids",
                              tag="derived")))
            e = evaluate(CLOSED_FORM_ERROR, id=f"{id_prefix}.{g}.closed-form-error",
                         description=f"Error of the closed form against the geometry, {g} struts",
                         values={"rho_cf": closed[g], "rho_geo": geo[g]}, unit="percent",
                         source=DERIVED_SLENDER,
                         note="Positive: the closed form overstates the solid (node overlap counted twice).")
            steps.append(e)
        by_group = geo
    total = sum(by_group.values(), Q_(0.0, ""))
    if len(by_group) > 1:
        steps.append(quantity_step(id=f"{id_prefix}.total", description="Relative density, all strut groups",
                                   value=total, unit="", method="sum over the groups"))
    return RelativeDensity(value=total, steps=tuple(steps), method=method, by_group=by_group,
                           closed_form=closed, geometric=geo, sampling_error=err,
                           title=f"Relative density ({method})")


# --- mass ------------------------------------------------------------------------------------------
_rho, _rbar, _n, _m, _A, _H, _mcol = sp.symbols("rho rho_rel n m A H m_col")
CELL_MASS = Formula("m_cell", _rho * _rbar * _a**3, {"rho_rel": r"\bar{\rho}", "m_cell": r"m_\mathrm{cell}"})
MASS_PER_AREA = Formula("m_A", _m / _A, {"m_A": r"m''"})
_Na, _Ma = sp.symbols("N M_a")
#: Masses added at mid-span: one per strut.
ADDED_MASS = Formula("m_add", _Na * _Ma, latex_names={"m_add": r"m_\mathrm{added}", "M_a": r"M_\mathrm{a}"})
MASS_PER_LENGTH = Formula("m_L", _m / _H, {"m_L": r"m'"})
MASS_RATIO = Formula("mu", sp.Symbol("m_L") / _mcol,
                     {"mu": r"\mu", "m_L": r"m'", "m_col": r"m'_\mathrm{col}"})
PANEL_STRUTS = Source(author="derived", title="panel strut count: a strut on k cell-boundary planes appears "
                      "Π(n+1) times along those axes and Π n along the others", tag="derived")


def _panel_ratios(total, *, a, nx: int, nz: int, faces: int, mcol, id_prefix: str):
    """Mass per m² of face, per metre of column and over the column's mass: (per area, per length, ratio, steps)."""
    area = (nx * a) * (nz * a)
    height = nz * a
    per_area = evaluate(MASS_PER_AREA, id=f"{id_prefix}.per-area",
                        description="Mass per m² of covered column face",
                        values={"m": total, "A": area.to("m^2")}, unit="kg/m^2")
    per_length = evaluate(MASS_PER_LENGTH, id=f"{id_prefix}.per-length",
                          description="Mass added to the column per metre of height "
                                      f"({faces} panel(s) per level)",
                          values={"m": total * faces, "H": height.to("m")}, unit="kg/m")
    steps = [per_area, per_length]
    ratio = None
    if mcol is not None:
        r = evaluate(MASS_RATIO, id=f"{id_prefix}.ratio", description="Added mass over the column's own mass "
                     "per metre", values={"m_L": per_length.result, "m_col": mcol}, unit="percent")
        steps.append(r)
        ratio = r.result
    return per_area.result, per_length.result, ratio, steps


@dataclass(frozen=True, kw_only=True)
class PanelMass(CalcResult):
    """Result of :func:`panel_mass`; ``value`` is the panel mass in kg."""

    cell_mass: Mapping[str, pint.Quantity]
    panel_mass_by_group: Mapping[str, pint.Quantity]
    mass_per_area: pint.Quantity
    mass_per_length: pint.Quantity
    mass_ratio: pint.Quantity | None
    relative_density: RelativeDensity


def _positive_int(value: Any, *, name: str) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise InputError("must be a whole number of cells >= 1", input_name=name, expected="1, 2, 3, ...",
                         got=repr(value))
    return int(value)


def _materials_for(cell: Cell, materials: Any) -> dict[str, Material]:
    if isinstance(materials, Material):
        materials = {g: materials for g in cell.group_names}
    if not isinstance(materials, Mapping):
        raise InputError("materials must map each strut group to a Material", input_name="materials",
                         expected="{'lattice': Material, 'frame': Material}", got=type(materials).__name__)
    out = {}
    for g in cell.group_names:
        if g not in materials:
            raise InputError("a strut group has no material", input_name="materials",
                             expected=f"a Material for group {g!r}", got=", ".join(materials) or "none")
        if not isinstance(materials[g], Material):
            raise InputError("not a Material", input_name=f"materials[{g!r}]",
                             expected="a latticecalc.materials.Material", got=type(materials[g]).__name__)
        out[g] = materials[g]
    return out


def panel_strut_counts(cell: Cell, *, cells_wide: int, cells_high: int, cells_deep: int,
                       bottom_plane: bool = True) -> np.ndarray:
    """How many times each strut of the cell appears in an n_x × n_y × n_z panel (fractional per image).

    Axis x runs across the panel (``cells_wide``), y away from the column (``cells_deep``) and z up
    (``cells_high``).  A strut lying on the boundary planes of k axes appears in a panel
    Π_{those axes}(n + 1) · Π_{others} n times over its 2^k images in the cell.  With
    ``bottom_plane=False`` (a zone of a graded panel above the first: its bottom plane belongs to the
    zone below) a strut in the horizontal planes counts n times up the panel instead of n + 1.
    """
    n = np.array([cells_wide, cells_deep, cells_high], dtype=float)
    x = cell.nodes.to("m").magnitude / cell.cell_width.to("m").magnitude
    a, b = x[cell.struts[:, 0]], x[cell.struts[:, 1]]
    tol = 1e-9
    on = ((np.abs(a) < tol) & (np.abs(b) < tol)) | ((np.abs(a - 1) < tol) & (np.abs(b - 1) < tol))
    planes = n + 1
    if not bottom_plane:
        planes[2] = n[2]
    factors = np.where(on, planes / 2, n)
    return factors.prod(axis=1)


@dataclass(frozen=True, kw_only=True)
class PanelVolume:
    """Solid volume of one strut group in a finite panel, as drawn (see :func:`panel_volumes`)."""

    volume: pint.Quantity
    overlap: float
    struts: float


def panel_volumes(cell: Cell, *, cells_wide: int, cells_high: int, cells_deep: int,
                  density: RelativeDensity, bottom_plane: bool = True) -> dict[str, PanelVolume]:
    """Solid volume of each strut group in a ``cells_wide × cells_high × cells_deep`` panel.

    Each strut counts as often as it occurs in the panel (:func:`panel_strut_counts`: struts on
    the panel's outer faces in full), its volume the section area (a tube's annulus) times its
    length, scaled by the group's node-overlap factor: the cell's ρ̄ from ``density`` over its
    slender (no-overlap) value.

    Parameters
    ----------
    cell:
        The cell.
    cells_wide, cells_high, cells_deep:
        Cells across the column face, up the column, and away from it.
    density:
        :func:`relative_density` of ``cell`` (closed form: overlap factor 1).
    bottom_plane:
        As for :func:`panel_strut_counts`.
    """
    counts = panel_strut_counts(cell, cells_wide=cells_wide, cells_high=cells_high, cells_deep=cells_deep,
                                bottom_plane=bottom_plane)
    a3 = cell.cell_width.to("m").magnitude ** 3
    vol = strut_areas(cell) * cell.strut_lengths.magnitude
    out = {}
    for g in cell.group_names:
        mask = cell.group_mask(g)
        slender = float((vol[mask] * cell.weights[mask]).sum())
        overlap = float(density.by_group[g].to("").magnitude) * a3 / slender
        out[g] = PanelVolume(volume=Q_(float((vol[mask] * counts[mask]).sum()) * overlap, "m^3"), overlap=overlap,
                             struts=float(counts[mask].sum()))
    return out


def panel_mass(cell: Cell, *, materials: Any, cells_wide: int, cells_high: int, cells_deep: int,
               column_mass_per_length: Any = None, faces_covered: int = 1, method: str = "geometric",
               density: RelativeDensity | None = None, id_prefix: str = "mass",
               bottom_plane: bool = True) -> PanelMass:
    """Mass per cell, per panel, per m² of covered column face, and added to the column per metre.

    Parameters
    ----------
    cell:
        The cell (with a frame group if the panel has one).
    materials:
        A Material for each strut group (or one Material for all).
    cells_wide, cells_high, cells_deep:
        Cells across the column face, up the column, and away from it.
    column_mass_per_length:
        The bare column's mass per metre [mass / length]; gives the mass ratio when given.
    faces_covered:
        Panels per level on the column (faces covered), for the mass added per metre.
    method:
        Relative density method for the cell (``"geometric"`` counts node overlap once).
    density:
        A precomputed :func:`relative_density` result for ``cell`` (saves recomputing it).
    id_prefix:
        Prefix of the step ids.
    bottom_plane:
        False for a zone of a graded panel above the first (its bottom plane of struts belongs to the
        zone below; see :func:`graded_panel_mass`).

    Returns
    -------
    PanelMass
        ``.value`` panel mass [kg].

    Notes
    -----
    The panel mass counts the struts on the panel's outer faces in full (not shared), from the
    strut counts of :func:`panel_strut_counts`; the node overlap of each group is taken from the
    cell's geometric-to-slender density ratio.
    """
    cell = _check_cell(cell)
    mats = _materials_for(cell, materials)
    nx = _positive_int(cells_wide, name="cells_wide")
    nz = _positive_int(cells_high, name="cells_high")
    ny = _positive_int(cells_deep, name="cells_deep")
    faces = _positive_int(faces_covered, name="faces_covered")
    mcol = None
    if column_mass_per_length is not None:
        mcol = check_positive(check_dimension(column_mass_per_length, name="column_mass_per_length",
                                              expected="mass_per_length"), name="column_mass_per_length")
    rd = density if density is not None else relative_density(cell, method, id_prefix=f"{id_prefix}.density")
    steps: list[Any] = list(rd.steps) if density is None else []
    a = cell.cell_width
    volumes = panel_volumes(cell, cells_wide=nx, cells_high=nz, cells_deep=ny, density=rd, bottom_plane=bottom_plane)
    cell_mass, panel_by_group = {}, {}
    for g in cell.group_names:
        step = evaluate(CELL_MASS, id=f"{id_prefix}.cell.{g}", description=f"Mass of the {g} struts per cell",
                        values={"rho": mats[g].density, "rho_rel": rd.by_group[g], "a": a}, unit="g",
                        source=mats[g].source("density"))
        steps.append(step)
        cell_mass[g] = step.result
        # as-drawn panel: each strut counted as often as it occurs, slender volumes scaled for node overlap
        pv = volumes[g]
        section = "tube section areas" if cell.is_hollow(g) else "strut volumes"
        panel_by_group[g] = quantity_step(
            id=f"{id_prefix}.panel.{g}", description=f"Mass of the {g} struts in the panel "
            f"({nx} × {nz} × {ny} cells, wide × high × deep)",
            value=pv.volume * mats[g].density, unit="kg",
            method=f"{section} × lengths × occurrences in the panel × node-overlap factor {pv.overlap:.4f} "
                   "× density", source=PANEL_STRUTS)
        steps.append(panel_by_group[g])
    total = sum((s.result for s in panel_by_group.values()), Q_(0.0, "kg"))
    for g, (m_added, _j) in getattr(cell, "point_masses", {}).items():
        n_struts = int(round(volumes[g].struts))
        added = evaluate(ADDED_MASS, id=f"{id_prefix}.added.{g}", description=f"Masses added at mid-span of the "
                         f"{g} struts in the panel", values={"N": Q_(n_struts, ""), "M_a": m_added}, unit="kg",
                         source=PANEL_STRUTS)
        steps.append(added)
        total = total + added.result
    steps.append(quantity_step(id=f"{id_prefix}.panel", description="Panel mass, all strut groups"
                               + (" and added masses" if getattr(cell, "point_masses", {}) else ""),
                               value=total, unit="kg", method="sum over the groups"))
    per_area, per_length, ratio, more = _panel_ratios(total, a=a, nx=nx, nz=nz, faces=faces, mcol=mcol,
                                                      id_prefix=id_prefix)
    steps += more
    return PanelMass(value=total, steps=tuple(steps), cell_mass=cell_mass,
                     panel_mass_by_group={g: s.result for g, s in panel_by_group.items()},
                     mass_per_area=per_area, mass_per_length=per_length, mass_ratio=ratio,
                     relative_density=rd, title="Mass of the panel")


#: Weight of a mass in standard gravity, W = m g (common practice).
WEIGHT = Formula("W", _m * sp.Symbol("g"))
G_STANDARD = Q_(9.80665, "m/s^2")


@dataclass(frozen=True, kw_only=True)
class GradedPanelMass(CalcResult):
    """Result of :func:`graded_panel_mass`; ``value`` the panel mass [kg], ``zones`` each zone's :class:`PanelMass`.

    ``zone_weights`` each zone's weight [N] (bottom first).
    """

    zones: tuple[PanelMass, ...]
    zone_weights: tuple[pint.Quantity, ...]
    mass_per_area: pint.Quantity
    mass_per_length: pint.Quantity
    mass_ratio: pint.Quantity | None


def graded_panel_mass(cell: Cell, *, zoning: Any, materials: Any, cells_wide: int, cells_high: int,
                      cells_deep: int, column_mass_per_length: Any = None, faces_covered: int = 1,
                      method: str = "geometric", gravity: Any = G_STANDARD, id_prefix: str = "mass") -> GradedPanelMass:
    """Mass and weight of each zone of a graded panel, and of the whole panel.

    Each zone is :func:`panel_mass` of the zone's cell (its lattice strut diameter and added mass,
    :meth:`~latticecalc.physics.zoning.Zoning.zone_cell`) and material over the zone's rows; the struts
    lying in a plane between two zones belong to the zone below (``bottom_plane=False`` above the first
    zone), so each strut of the panel counts once.  The panel's mass is the sum of the zones'; mass per m²,
    per metre of column and the mass ratio follow from it as for a uniform panel.

    Parameters
    ----------
    cell, materials, cells_wide, cells_deep, column_mass_per_length, faces_covered, method:
        As for :func:`panel_mass`.
    zoning:
        The :class:`~latticecalc.physics.zoning.Zoning` (its heights add up to ``cells_high``).
    cells_high:
        Cells up the panel.
    gravity:
        Acceleration due to gravity [acceleration] for the zones' weights.
    id_prefix:
        Prefix of the step ids (each zone's under ``<id_prefix>.zone<k>``).
    """
    from latticecalc.physics.zoning import check_zoning

    cell = _check_cell(cell)
    nx = _positive_int(cells_wide, name="cells_wide")
    nz = _positive_int(cells_high, name="cells_high")
    faces = _positive_int(faces_covered, name="faces_covered")
    zoning = check_zoning(zoning, cells_high=nz)
    if zoning is None:
        raise InputError("a graded panel needs its zoning", input_name="zoning", expected="a Zoning", got="None")
    g = check_positive(check_dimension(gravity, name="gravity", expected="acceleration"), name="gravity")
    mcol = None
    if column_mass_per_length is not None:
        mcol = check_positive(check_dimension(column_mass_per_length, name="column_mass_per_length",
                                              expected="mass_per_length"), name="column_mass_per_length")
    zones, weights, steps = [], [], []
    for k, z in enumerate(zoning.zones):
        pm = panel_mass(zoning.zone_cell(cell, k), materials=zoning.zone_materials(
            _materials_for(cell, materials), k), cells_wide=nx, cells_high=z.cells_high, cells_deep=cells_deep,
            method=method, id_prefix=f"{id_prefix}.zone{k + 1}", bottom_plane=(k == 0))
        w = evaluate(WEIGHT, id=f"{id_prefix}.zone{k + 1}.weight", description=f"Weight of zone {k + 1}",
                     values={"m": pm.value, "g": g}, unit="N")
        zones.append(pm)
        weights.append(w.result)
        steps += [*pm.steps, w]
    total = sum((p.value for p in zones), Q_(0.0, "kg"))
    steps.append(quantity_step(id=f"{id_prefix}.panel", description="Panel mass, all zones", value=total, unit="kg",
                               method="sum over the zones (each strut in a plane between zones counted in the "
                                      "zone below)", source=PANEL_STRUTS))
    steps.append(evaluate(WEIGHT, id=f"{id_prefix}.weight", description="Weight of the panel",
                          values={"m": total, "g": g}, unit="N"))
    per_area, per_length, ratio, more = _panel_ratios(total, a=cell.cell_width, nx=nx, nz=nz, faces=faces, mcol=mcol,
                                                      id_prefix=id_prefix)
    steps += more
    return GradedPanelMass(value=total, steps=tuple(steps), zones=tuple(zones), zone_weights=tuple(weights),
                           mass_per_area=per_area, mass_per_length=per_length, mass_ratio=ratio,
                           title="Mass of the graded panel, zone by zone")

