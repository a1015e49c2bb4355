"""The finite panel: transmissibility under base motion, its attenuation band, and self-weight.

The panel is ``nx`` cells wide (x), ``ny`` cells high (z, vertical) and one cell thick (y),
built by tiling the cell and merging the nodes and struts that neighbouring cells share.  Its
bottom joints (z = 0) move with an imposed harmonic displacement (rotations held); every other
DOF is free.  Damping is structural, by a loss factor per material: K* = Σ_g K_g (1 + i η_g)
(Cremer, L., Heckl, M. & Petersson, B. A. T., *Structure-Borne Sound*, 3rd ed. (2005), §3.7;
Nashif, Jones & Henderson, *Vibration Damping* (1985), ch. 3).  Transmissibility is the RMS over
the top joints of the displacement in the excitation direction, over the base displacement, in dB.

Speed: each strut is reduced to its two end joints plus its lowest fixed–fixed modes
(Craig–Bampton, as in :mod:`latticecalc.physics.bloch`), and at each frequency the modal
coordinates are condensed exactly into a 12 × 12 dynamic stiffness per strut, so the sparse
solve per frequency is over the joints only.  With loss factors per strut material the reduction
basis is unchanged and the condensation stays exact for the modes kept.  The error of the
truncation is measured against a direct solve of the full mesh at a few frequencies and put on
the sheet.

A long frequency list is not solved frequency by frequency: exact joint solves (and their slopes in
frequency, from the same factorisation) at a few frequencies chosen greedily span a basis, and every
frequency is a small dense Galerkin solve on it, with the strut resonances still condensed exactly
(Hetmaniuk, Tezaur & Farhat 2012).  The number of exact solves, the basis size and the measured
difference at the last samples are on the sheet; ``solver="direct"`` keeps the frequency-by-frequency
path.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
import sympy as sp_sym

from latticecalc.cache import cached_arrays, fingerprint
from latticecalc.errors import InputError, ModelError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import zoning as zn
from latticecalc.physics.bloch import _cell_key, periodic_frame, progress_iter
from latticecalc.physics.threads import single_thread
from latticecalc.physics.zoning import zoning_text
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

CREMER_HECKL_2005 = Source(author="Cremer, L., Heckl, M. & Petersson, B. A. T.", title="Structure-Borne Sound, "
                           "3rd ed.", year=2005, locator="§3.7, complex modulus E(1 + iη)")
DIRECTIONS = {"horizontal": 0, "x": 0, "normal": 1, "y": 1, "vertical": 2, "z": 2}
G_STANDARD = Q_(9.80665, "m/s^2")
_T = sp_sym.Symbol("T")
#: Transmissibility as a level: 20 log10 of the amplitude ratio (dB re the base motion).
LEVEL_DB = Formula("L_T", 20 * sp_sym.log(_T, 10))
LEVEL_SOURCE = Source(author="IEC", title="IEC 60050-801 International Electrotechnical Vocabulary: Acoustics "
                      "and electroacoustics", year=1994, locator="801-22-04 level of a field quantity, 20 lg",
                      tag="from memory")
F_MIN_DEFAULT = Q_(1.0, "Hz")
F_MAX_DEFAULT = Q_(100.0, "Hz")


# --------------------------------------------------------------------------------------------
# geometry
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class PanelFrame:
    """Joints (m), struts and groups of the tiled panel; ``base``/``top`` joint indices."""

    nodes: np.ndarray
    struts: np.ndarray
    groups: tuple[str, ...]
    base: np.ndarray
    top: np.ndarray
    nx: int
    ny: int
    cell_width: float


def zoned_frame(cell: Any, *, materials: Mapping[str, Any], nx: int, ny: int, zoning: Any = None,
                modulus: str = "dynamic", with_steps: bool = False,
                id_prefix: str = "section") -> tuple[PanelFrame, zn.ZonedStruts]:
    """The tiled panel with each strut's group, section and added mass (from its zone, when zoned).

    Without a zoning the frame and the sections are exactly the uniform panel's; with one, the lattice
    struts carry their zone's group (:func:`latticecalc.physics.zoning.zoned_struts`).
    """
    pan = panel_frame(cell, nx=nx, ny=ny)
    zoning = zn.check_zoning(zoning, cells_high=pan.ny, input_name="ny")
    zs = zn.zoned_struts(cell, materials=materials, zoning=zoning, nodes=pan.nodes, struts=pan.struts,
                         groups=pan.groups, cells_high=pan.ny, modulus=modulus, with_steps=with_steps,
                         id_prefix=id_prefix)
    if zoning is not None:
        pan = dataclasses.replace(pan, groups=zs.groups)
    return pan, zs


def _zoning_key(zoning: Any) -> tuple:
    """The cache-key part of a zoning: nothing for a uniform panel (its keys stay as they were)."""
    return () if zoning is None else (("zoning", zoning.key()),)


def _check_cells(value: Any, name: str) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise InputError("number of cells must be a whole number >= 1", input_name=name,
                         expected="an integer >= 1", got=repr(value))
    return int(value)


def panel_frame(cell: Any, *, nx: int, ny: int) -> PanelFrame:
    """Tile ``cell`` ``nx`` wide (x) and ``ny`` high (z), one thick (y), merging shared nodes/struts."""
    nx = _check_cells(nx, "nx")
    ny = _check_cells(ny, "ny")
    pf = periodic_frame(cell, periodic="xz")        # checks the faces match
    nodes, struts, groups = fe.cell_geometry(cell)
    a = float(pf.periods[0])
    lo = nodes.min(axis=0)
    rel = nodes - lo
    shifts = np.array([(ix * a, 0.0, iz * a) for iz in range(ny) for ix in range(nx)])
    allnodes = (rel[None, :, :] + shifts[:, None, :]).reshape(-1, 3)
    keys = np.round(allnodes / a * 1e6).astype(np.int64)
    _, first, inverse = np.unique(keys, axis=0, return_index=True, return_inverse=True)
    order = np.argsort(first)                 # keep the first-seen order
    rank = np.empty_like(order)
    rank[order] = np.arange(order.size)
    merged = allnodes[first[order]]
    idx = rank[inverse.ravel()]
    ncell = len(nodes)
    all_struts = np.concatenate([idx[c * ncell + struts] for c in range(nx * ny)])
    all_groups = list(groups) * (nx * ny)
    pair = np.sort(all_struts, axis=1)
    _, keep = np.unique(pair, axis=0, return_index=True)
    keep = np.sort(keep)
    z = merged[:, 2]
    base = np.flatnonzero(np.abs(z - z.min()) < 1e-9 * a)
    top = np.flatnonzero(np.abs(z - z.max()) < 1e-9 * a)
    return PanelFrame(nodes=merged, struts=all_struts[keep], groups=tuple(all_groups[i] for i in keep),
                      base=base, top=top, nx=nx, ny=ny, cell_width=a)


# --------------------------------------------------------------------------------------------
# frequency response
# --------------------------------------------------------------------------------------------
class _ReducedPanel:
    """Joint-level dynamic stiffness of the strut-reduced panel, one sparse solve per frequency."""

    def __init__(self, pan: PanelFrame, sections: Mapping[str, fe.Section], *, n_elements: int,
                 strut_modes: int, theory: str, direction: int, point_masses: Mapping[str, Any] | None = None,
                 end_zones: np.ndarray | None = None) -> None:
        red = fe.reduce_struts(nodes=pan.nodes, struts=pan.struts, groups=pan.groups, sections=sections,
                               n_elements=n_elements, n_modes=strut_modes, theory=theory, point_masses=point_masses,
                               end_zones=end_zones)
        self.red = red
        eta = np.array([sections[g].eta for g in pan.groups])
        self.factor = 1.0 + 1j * eta
        nj = len(pan.nodes)
        n = 6 * nj
        dofs = (6 * pan.struts[:, :, None] + np.arange(6)).reshape(-1, 12)
        rows = np.repeat(dofs, 12, axis=1).ravel()
        cols = np.tile(dofs, (1, 12)).ravel()
        self.vals_K = (red.K_bb * self.factor[:, None, None]).ravel()
        self.vals_M = red.M_bb.ravel()
        self.n = n
        base_dofs = (6 * pan.base[:, None] + np.arange(6)).ravel()
        used = np.zeros(nj, bool)
        used[pan.struts.ravel()] = True
        all_used = (6 * np.flatnonzero(used)[:, None] + np.arange(6)).ravel()
        self.free = np.setdiff1d(all_used, base_dofs)
        self.base_dofs = base_dofs
        ub = np.zeros(base_dofs.size)
        ub[direction::6] = 1.0
        self.ub = ub
        # fixed sparsity, built once: strut entries -> CSC data of the free-free block, and
        # strut entries -> right-hand side (minus the free-base block times the base motion)
        nf = self.free.size
        free_index = -np.ones(n, int)
        free_index[self.free] = np.arange(nf)
        base_motion = np.zeros(n)
        base_motion[base_dofs] = ub
        fr, fc = free_index[rows], free_index[cols]
        ff = np.flatnonzero((fr >= 0) & (fc >= 0))
        key = fc[ff] * nf + fr[ff]                       # column-major: the CSC data order
        uniq, inv = np.unique(key, return_inverse=True)
        self.S_ff = sp.csr_matrix((np.ones(ff.size), (inv.ravel(), ff)), shape=(uniq.size, rows.size))
        self.indices = (uniq % nf).astype(np.int32)
        self.indptr = np.searchsorted(uniq // nf, np.arange(nf + 1)).astype(np.int32)
        fb = np.flatnonzero((fr >= 0) & (base_motion[cols] != 0))
        self.R = sp.csr_matrix((base_motion[cols[fb]], (fr[fb], fb)), shape=(nf, rows.size))
        self.nf = nf
        self.top_dofs = 6 * pan.top + direction
        self.Ct = np.ascontiguousarray(np.transpose(red.C, (0, 2, 1))) if red.n_modes else None

    def _values(self, omega: float, *, derivative: bool = False) -> np.ndarray:
        """Strut entries of the dynamic stiffness at ``omega`` (or of its derivative in ω)."""
        w2 = omega**2
        if self.Ct is not None:
            # exact condensation of each strut's modal coordinates at this frequency:
            # D = K_bb* − ω² M_bb − ω⁴ Cᵀ (Ω*² − ω²)⁻¹ C
            a = self.red.omega2 * self.factor[:, None]
            if derivative:
                coef = (4 * omega**3 * a - 2 * omega**5) / (a - w2) ** 2                # d/dω of ω⁴/(a − ω²)
            else:
                coef = w2**2 / (a - w2)                                                # (s, m)
            modal = ((self.Ct * coef[:, None, :]) @ self.red.C).ravel()
        else:
            modal = 0.0
        if derivative:
            return -2 * omega * self.vals_M - modal
        return self.vals_K - w2 * self.vals_M - modal

    def _matrix(self, vals: np.ndarray) -> sp.csc_matrix:
        return sp.csc_matrix((self.S_ff @ vals, self.indices, self.indptr), shape=(self.nf, self.nf))

    def response(self, omega: float) -> np.ndarray:
        """Displacement (complex) of every joint DOF for a unit base displacement at ``omega``."""
        vals = self._values(omega)
        u = np.zeros(self.n, complex)
        u[self.base_dofs] = self.ub
        u[self.free] = symmetric_solve(self._matrix(vals), -(self.R @ vals))
        return u

    def response_and_slope(self, omega: float) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`response` and its derivative in ω (rad/s), from one factorisation.

        D u = −D_fb u_b differentiated: D u' = −D'_fb u_b − D' u.
        """
        vals = self._values(omega)
        dvals = self._values(omega, derivative=True)
        solve = symmetric_factor(self._matrix(vals))
        u = np.zeros(self.n, complex)
        u[self.base_dofs] = self.ub
        u[self.free] = solve(-(self.R @ vals))
        du = np.zeros(self.n, complex)
        du[self.free] = solve(-(self.R @ dvals) - self._matrix(dvals) @ u[self.free])
        return u, du


#: Tolerance of the projected sweep (dB): it adds exact solves until the reduced levels change by less.
SWEEP_TOL_DB = 1e-3
#: Below this many frequencies the sweep solves every frequency directly.
SWEEP_MIN_FREQUENCIES = 40
HETMANIUK_2012 = Source(author="Hetmaniuk, U., Tezaur, R. & Farhat, C.", title="Review and assessment of "
                        "interpolatory model order reduction methods for frequency response structural dynamics "
                        "and acoustics problems", year=2012, locator="Int. J. Numer. Meth. Engng 90, 1636-1662: "
                        "Galerkin projection on a real basis of solutions and their frequency derivatives at "
                        "sampled frequencies, greedy choice of the samples")


@dataclass(frozen=True)
class SweepInfo:
    """How a projected sweep was built: basis size, exact solves, the largest measured error (dB)."""

    basis: int
    samples: int
    error_db: float
    indicator_db: float


class _ProjectedSweep:
    """The joint-level response over a frequency list by projection on solutions at sampled frequencies.

    The joint displacement is sought as u = e + V y: e the imposed base motion, V an orthonormal basis
    of the real and imaginary parts of exact joint solutions (:meth:`_ReducedPanel.response`) at some
    frequencies; the Galerkin equations Vᵀ D(ω) (e + V y) = 0 are a small dense system per frequency.
    D(ω) is assembled from parts with scalar frequency factors, each projected once:
    Σ_η (1 + iη) K_η − ω² M − Σ_j ω⁴ / (Ω_j² (1 + iη_j) − ω²) C_jᵀ C_j, the last sum over the distinct
    (strut-mode frequency, loss factor) classes of the strut modal condensation, so the strut resonances
    stay exact.  At a sampled frequency the projection returns the exact solution.
    """

    def __init__(self, rp: _ReducedPanel) -> None:
        red = rp.red
        n = rp.n
        ns = red.K_bb.shape[0]
        m = red.n_modes
        eta = (rp.factor.imag).round(12)
        dofs = (6 * red.struts[:, :, None] + np.arange(6)).reshape(ns, 12)
        rows = np.repeat(dofs, 12, axis=1)
        cols = np.tile(dofs, (1, 12))
        self.etas = np.unique(eta)
        self.K = [sp.csr_matrix((red.K_bb[eta == e].ravel(), (rows[eta == e].ravel(), cols[eta == e].ravel())),
                                shape=(n, n)) for e in self.etas]
        self.M = sp.csr_matrix((red.M_bb.ravel(), (rows.ravel(), cols.ravel())), shape=(n, n))
        if m:
            pairs = np.stack([red.omega2, np.repeat(eta[:, None], m, axis=1)], axis=2).reshape(-1, 2)
            scale = max(float(np.abs(red.omega2).max()), 1e-300)
            keys, self.cls = np.unique(np.c_[np.round(pairs[:, 0] / scale, 12), pairs[:, 1]], axis=0,
                                       return_inverse=True)
            self.cls = self.cls.ravel()
            self.cls_om2 = keys[:, 0] * scale
            self.cls_eta = keys[:, 1]
            rows_c = np.repeat(np.arange(ns * m), 12)
            self.C = sp.csr_matrix((red.C.ravel(), (rows_c, np.repeat(dofs, m, axis=0).ravel())), shape=(ns * m, n))
        else:
            self.cls_om2 = np.zeros(0)
            self.cls_eta = np.zeros(0)
        self.e = np.zeros(n)
        self.e[rp.base_dofs] = rp.ub
        self.rp = rp

    def _coefficients(self, omegas: np.ndarray) -> np.ndarray:
        w = np.asarray(omegas, float)[:, None]
        parts = [np.broadcast_to(1.0 + 1j * self.etas[None, :], (w.shape[0], self.etas.size)), -(w**2) + 0j]
        if self.cls_om2.size:
            parts.append(-(w**4) / (self.cls_om2[None, :] * (1.0 + 1j * self.cls_eta[None, :]) - w**2))
        return np.hstack(parts)

    def _projected(self, V: np.ndarray) -> np.ndarray:
        Z = np.column_stack([self.e, V])
        S = [Z.T @ (K @ Z) for K in self.K] + [Z.T @ (self.M @ Z)]
        if self.cls_om2.size:
            B = self.C @ Z
            S += [B[self.cls == j].T @ B[self.cls == j] for j in range(self.cls_om2.size)]
        return np.array(S)

    def top_levels(self, V: np.ndarray, omegas: np.ndarray, *, chunk: int = 64) -> np.ndarray:
        """Transmissibility (RMS over the top DOFs) of the projection on ``V`` at ``omegas`` (rad/s)."""
        S = self._projected(V)
        r1 = S.shape[1]
        S = S.reshape(S.shape[0], -1)
        Zt = np.column_stack([self.e, V])[self.rp.top_dofs]
        out = np.empty(len(omegas))
        for i0 in range(0, len(omegas), chunk):
            w = omegas[i0:i0 + chunk]
            A = (self._coefficients(w) @ S).reshape(-1, r1, r1)
            y = np.linalg.solve(A[:, 1:, 1:], -A[:, 1:, :1])[..., 0]
            ut = Zt[:, :1].T + y @ Zt[:, 1:].T
            out[i0:i0 + chunk] = np.sqrt(np.mean(np.abs(ut) ** 2, axis=1))
        return out

    def _extend(self, V: np.ndarray, u: np.ndarray) -> np.ndarray:
        """Add the real and imaginary parts of the free part of ``u`` to the orthonormal basis ``V``."""
        cols = [V]
        for v in (u.real.copy(), u.imag.copy()):
            v[self.rp.base_dofs] = 0.0
            size = np.linalg.norm(v)
            for _ in range(2):                        # Gram–Schmidt twice (common practice)
                for W in cols:
                    v -= W @ (W.T @ v)
            if size > 0 and np.linalg.norm(v) > 1e-10 * size:
                cols.append((v / np.linalg.norm(v))[:, None])
        return np.hstack(cols)

    def sweep(self, omegas: np.ndarray, *, tol_db: float = SWEEP_TOL_DB, n_initial: int = 10,
              batch: int = 8, progress: Any = None, desc: str = "panel") -> tuple[np.ndarray, SweepInfo]:
        """Transmissibility at ``omegas`` (rad/s) and how the basis was built.

        Greedy (Hetmaniuk et al. 2012): exact solves at ``n_initial`` evenly spaced frequencies, then
        batches at the frequencies where the levels of the last two bases differ most, each measured
        against its exact solve before it joins the basis, until both the change and the measured
        error are below ``tol_db`` everywhere.  With every frequency sampled the result is the exact one.
        """
        nw = len(omegas)
        T = np.full(nw, np.nan)
        V = np.zeros((self.rp.n, 0))
        sampled = np.zeros(nw, bool)

        def solve(i: int) -> None:
            nonlocal V
            u, du = self.rp.response_and_slope(omegas[i])
            T[i] = np.sqrt(np.mean(np.abs(u[self.rp.top_dofs]) ** 2))
            sampled[i] = True
            V = self._extend(self._extend(V, u), du)

        first = np.unique(np.linspace(0, nw - 1, min(n_initial, nw)).round().astype(int))
        # the first half of the initial samples gives the previous basis for the first indicator
        order = np.r_[first[::2], first[1::2]]
        half = 0
        done = 0
        for k, i in enumerate(progress_iter(list(order), progress=progress, desc=desc)):
            solve(int(i))
            if k + 1 == first[::2].size:
                half = V.shape[1]
        done = order.size
        db = lambda x: 20 * np.log10(np.maximum(x, 1e-300))   # noqa: E731 - local shorthand
        # the indicator is evaluated on at most ~250 of the frequencies (every other one of 500)
        grid = np.zeros(nw, bool)
        grid[::max(1, nw // 250)] = True
        prev = np.zeros(nw)
        prev[grid] = self.top_levels(V[:, :half], omegas[grid])
        err = np.inf
        while True:
            cur = np.zeros(nw)
            cur[grid] = self.top_levels(V, omegas[grid])
            change = np.abs(db(cur) - db(prev))
            change[sampled | ~grid] = 0.0
            if change.max() < tol_db and err < tol_db:
                break
            if sampled.all():
                break
            candidates = np.argsort(change)[::-1]
            picks: list[int] = []
            gap = max(1, nw // (4 * (done + batch)))
            for i in candidates:
                if sampled[i] or any(abs(int(i) - j) <= gap for j in picks):
                    continue
                picks.append(int(i))
                if len(picks) == batch:
                    break
            err = 0.0
            for i in picks:
                solve(i)
                err = max(err, abs(db(T[i]) - db(cur[i])))
            done += len(picks)
            prev = cur
        rest = ~sampled & ~grid
        if rest.any():
            cur[rest] = self.top_levels(V, omegas[rest])
        out = np.where(sampled, T, cur)
        return out, SweepInfo(basis=V.shape[1], samples=int(sampled.sum()), error_db=float(err),
                              indicator_db=float(change.max()))


def symmetric_factor(A, *, what: str = "the panel", input_name: str = "cell",
                     expected: str = "a frame that resists every motion of its joints"):
    """Factorise a sparse complex-symmetric A once; returns ``solve(b)`` (as :func:`symmetric_solve`).

    Each solve is checked by its residual; a failed check refactorises with partial pivoting.
    """
    state: dict[str, Any] = {}
    try:
        state["lu"] = spla.splu(A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                options={"SymmetricMode": True})
    except RuntimeError:
        state["lu"] = None

    def solve(b):
        lu = state["lu"]
        if lu is not None and not state.get("pivoting"):
            x = lu.solve(b)
            if np.all(np.isfinite(x)) and np.linalg.norm(A @ x - b) <= 1e-8 * max(np.linalg.norm(b), 1e-300):
                return x
        if not state.get("pivoting"):
            try:
                state["lu"] = spla.splu(A)
            except RuntimeError as exc:
                raise ModelError(f"{what} is a mechanism: its dynamic stiffness is singular", input_name=input_name,
                                 expected=expected, got=str(exc)) from None
            state["pivoting"] = True
        return state["lu"].solve(b)

    return solve


def symmetric_solve(A, b, *, what: str = "the panel", input_name: str = "cell",
                    expected: str = "a frame that resists every motion of its joints"):
    """Solve a sparse complex-symmetric system A x = b (``b`` one or several right-hand sides).

    SuperLU with a symmetric ordering and diagonal pivots (several times faster for these
    matrices), checked by its residual; partial pivoting as the fallback.  A singular system is a
    ModelError naming ``what`` is a mechanism, with ``input_name`` and ``expected``.
    """
    try:
        lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
        x = lu.solve(b)
        if np.all(np.isfinite(x)) and np.linalg.norm(A @ x - b) <= 1e-8 * max(np.linalg.norm(b), 1e-300):
            return x
    except RuntimeError:
        pass
    try:
        return spla.splu(A).solve(b)
    except RuntimeError as exc:
        raise ModelError(f"{what} is a mechanism: its dynamic stiffness is singular", input_name=input_name,
                         expected=expected, got=str(exc)) from None


def _full_response(pan: PanelFrame, sections, *, n_elements: int, theory: str, direction: int,
                   omegas: Sequence[float], point_masses: Mapping[str, Any] | None = None,
                   end_zones: np.ndarray | None = None) -> np.ndarray:
    """Transmissibility of the full (unreduced) mesh by direct sparse solves at ``omegas``."""
    model = fe.build_frame(nodes=pan.nodes, struts=pan.struts, groups=pan.groups, sections=sections,
                           n_elements=n_elements, theory=theory, end_zones=end_zones)
    Kc = model.matrices.damped_stiffness(sections)
    M = model.matrices.M
    if point_masses:
        M = (M + fe.point_mass_matrix(model.mesh, point_masses)).tocsr()
    base_dofs = (6 * pan.base[:, None] + np.arange(6)).ravel()
    free = np.setdiff1d(fe.used_dofs(model.mesh), base_dofs)
    ub = np.zeros(base_dofs.size)
    ub[direction::6] = 1.0
    top = 6 * pan.top + direction
    out = []
    for w in omegas:
        A = (Kc - w**2 * M).tocsr()
        uf = symmetric_solve(A[free][:, free].tocsc(), -(A[free][:, base_dofs] @ ub))
        u = np.zeros(model.n_dofs, complex)
        u[free] = uf
        u[base_dofs] = ub
        out.append(np.sqrt(np.mean(np.abs(u[top]) ** 2)))
    return np.array(out)


@dataclass(frozen=True, kw_only=True)
class Transmissibility(CalcResult):
    """Result of :func:`transmissibility`.

    ``value`` maps ``frequency`` (Hz), ``transmissibility`` (ratio), ``level`` (dB),
    ``band`` (the attenuation band as ``(low, high)`` Hz, or None), ``check`` (reduced against
    full at a few frequencies: frequencies, both levels in dB, the difference).
    """

    nx: int
    ny: int
    n_dofs_full: int
    n_dofs_reduced: int


def attenuation_band(freq: np.ndarray, level_db: np.ndarray, *, threshold_db: float,
                     near: tuple[float, float] | None = None):
    """Contiguous range where the level is at or below −``threshold_db`` (Hz), or None.

    The widest such range, or, when ``near`` (low, high in Hz, e.g. the lattice's gap) is given,
    the widest of those that overlap it (the widest overall if none does): a wide attenuation range
    far above the gap, from the frame's own dynamics, must not hide the one the design is about.
    """
    below = level_db <= -abs(threshold_db)
    runs = []
    i = 0
    while i < len(below):
        if below[i]:
            j = i
            while j + 1 < len(below) and below[j + 1]:
                j += 1
            runs.append((float(freq[i]), float(freq[j])))
            i = j + 1
        else:
            i += 1
    if near is not None:
        overlapping = [r for r in runs if r[1] >= near[0] and r[0] <= near[1]]
        runs = overlapping or runs
    return max(runs, key=lambda r: r[1] - r[0], default=None)


def _frequencies(f_min, f_max, n_frequencies) -> np.ndarray:
    lo = check_positive(check_dimension(f_min, name="f_min", expected="frequency"), name="f_min").to("Hz").magnitude
    hi = check_positive(check_dimension(f_max, name="f_max", expected="frequency"), name="f_max").to("Hz").magnitude
    if hi <= lo:
        raise InputError("the top frequency must be above the bottom one", input_name="f_max",
                         expected=f"> {format_quantity(Q_(lo, 'Hz'))}", got=format_quantity(Q_(hi, "Hz")))
    if isinstance(n_frequencies, bool) or not isinstance(n_frequencies, (int, np.integer)) or n_frequencies < 2:
        raise InputError("number of frequencies must be a whole number >= 2", input_name="n_frequencies",
                         expected="an integer >= 2", got=repr(n_frequencies))
    return np.linspace(float(lo), float(hi), int(n_frequencies))


def _direction(direction: str) -> int:
    if direction not in DIRECTIONS:
        raise InputError("unknown excitation direction", input_name="direction",
                         expected="'vertical' (z), 'horizontal' (x, in the panel plane) or 'normal' (y)",
                         got=repr(direction))
    return DIRECTIONS[direction]


def transmissibility(cell: Any, *, materials: Mapping[str, Any], nx: int = 4, ny: int = 16,
                     n_elements: int = 8, f_min: Any = F_MIN_DEFAULT, f_max: Any = F_MAX_DEFAULT,
                     n_frequencies: int = 500, direction: str = "vertical", strut_modes: int = 8,
                     threshold_db: float = 10.0, check_points: int = 3, gap: tuple | None = None,
                     theory: str = "timoshenko", cache: Any = None, progress: Any = None,
                     id_prefix: str = "panel", node_zones: str = "none",
                     solver: str = "projected", zoning: Any = None) -> Transmissibility:
    """Transmissibility of an ``nx`` × ``ny`` panel of ``cell`` under imposed base displacement.

    Parameters
    ----------
    cell:
        A periodic cell (see :func:`latticecalc.physics.bloch.dispersion`).
    materials:
        Group -> material with ``youngs_modulus`` [pressure], ``poissons_ratio``, ``density``
        [density] and ``loss_factor`` (0 <= η < 1).
    nx, ny:
        Cells across (x) and up (z); the panel is one cell thick.
    n_elements:
        Beam elements per strut.
    f_min, f_max:
        Frequency range [frequency].
    n_frequencies:
        Number of frequencies, evenly spaced from ``f_min`` to ``f_max``.
    direction:
        ``"vertical"`` (z), ``"horizontal"`` (x) or ``"normal"`` (y, out of the panel plane).
    strut_modes:
        Fixed–fixed modes kept per strut in the reduced model.
    threshold_db:
        The attenuation band is the widest range with the level at or below −threshold (dB)
        (the widest of those overlapping ``gap`` when a gap is given).
    check_points:
        Frequencies at which the reduced model is checked against a direct solve of the full mesh
        (0 to skip).
    gap:
        Optional ``(low, high)`` [frequency] of the infinite-lattice gap: the mean level inside it
        is reported.
    theory:
        ``"timoshenko"`` or ``"euler-bernoulli"``.
    cache, progress:
        As for :func:`latticecalc.physics.bloch.dispersion`.
    id_prefix:
        Prefix of the step ids.
    node_zones:
        ``"none"`` or ``"rigid"`` (rigid zones at the ends of the lattice struts, from the panel's own
        node geometry: see :func:`latticecalc.physics.frame_fe.node_zone_lengths`).
    solver:
        ``"projected"`` (default): exact joint solves at frequencies chosen greedily, every other
        frequency by projection on them (:class:`_ProjectedSweep`, within :data:`SWEEP_TOL_DB` of the
        direct solve; the basis size, the exact solves and the measured error are on the sheet);
        ``"direct"``: one sparse solve per frequency.  Fewer than :data:`SWEEP_MIN_FREQUENCIES`
        frequencies are always solved directly.
    zoning:
        A :class:`~latticecalc.physics.zoning.Zoning` (zones of cell rows up the panel, each with its
        own lattice strut diameter, added mass and material; their heights add up to ``ny``), or None
        for a uniform panel.

    Returns
    -------
    Transmissibility
        ``.value["frequency"]`` [Hz], ``["level"]`` [dB], ``["band"]``.
    """
    d = _direction(direction)
    n = fe.check_n_elements(n_elements)
    freqs = _frequencies(f_min, f_max, n_frequencies)
    fe._check_theory(theory)
    pan, zs = zoned_frame(cell, materials=materials, nx=nx, ny=ny, zoning=zoning, with_steps=True,
                          id_prefix=f"{id_prefix}.section")
    sections, section_steps = zs.sections, zs.section_steps
    n_check = int(check_points)
    pm = fe.check_point_masses(zs.point_masses, n)
    zones = fe.end_zones_for(node_zones, nodes=pan.nodes, struts=pan.struts, groups=pan.groups, sections=sections,
                             zone_groups=zs.zone_groups)

    def compute():
        rp = _ReducedPanel(pan, sections, n_elements=n, strut_modes=strut_modes, theory=theory, direction=d,
                           point_masses=pm, end_zones=zones)
        T = np.zeros(freqs.size)
        info = None
        with single_thread():
            if solver == "projected" and freqs.size >= SWEEP_MIN_FREQUENCIES:
                T, info = _ProjectedSweep(rp).sweep(2 * np.pi * freqs, progress=progress,
                                                    desc=f"panel {pan.nx}×{pan.ny}")
            else:
                for i in progress_iter(range(freqs.size), progress=progress, desc=f"panel {pan.nx}×{pan.ny}"):
                    u = rp.response(2 * np.pi * freqs[i])
                    T[i] = np.sqrt(np.mean(np.abs(u[rp.top_dofs]) ** 2))
        out = {"T": T, "n_reduced": np.array(rp.free.size),
               "n_full": np.array(6 * (len(pan.nodes) + len(pan.struts) * (n - 1)) - rp.base_dofs.size)}
        if info is not None:
            out["sweep"] = np.array([info.basis, info.samples, info.error_db, info.indicator_db])
        if n_check:
            idx = np.unique(np.linspace(0, freqs.size - 1, n_check + 2).round().astype(int)[1:-1])
            out["check_idx"] = idx
            out["check_full"] = _full_response(pan, sections, n_elements=n, theory=theory, direction=d, point_masses=pm,
                                               omegas=2 * np.pi * freqs[idx], end_zones=zones)
        return out

    if solver not in ("projected", "direct"):
        raise InputError("unknown frequency-sweep solver", input_name="solver", expected="'projected' or 'direct'",
                         got=repr(solver))
    key = fingerprint("panel-v1", _cell_key(cell, materials), nx, ny, n, freqs, d, strut_modes, n_check, theory,
                      *((("node-zones", node_zones),) if node_zones != "none" else ()),
                      *((("sweep", solver, SWEEP_TOL_DB),) if solver == "projected" else ()),
                      *_zoning_key(zoning))
    data = cached_arrays(cache, key, compute)
    T = data["T"]
    level = LEVEL_DB.evaluate({"T": Q_(np.maximum(T, 1e-300), "")}).to("").magnitude
    near = None if gap is None else tuple(
        check_dimension(g, name="gap", expected="frequency").to("Hz").magnitude for g in gap)
    band = attenuation_band(freqs, level, threshold_db=threshold_db, near=near)
    method = (f"{nx} × {ny} cells, {n} {theory} elements per strut; struts reduced to end joints + "
              f"{strut_modes} fixed-fixed modes, condensed per frequency; loss factor per material"
              + ("; rigid node zones on the lattice struts" if zones is not None else "")
              + ("" if zoning is None else "; graded: " + zoning_text(zoning)))
    if "sweep" in data:
        basis, samples, sweep_err, indicator = data["sweep"]
        method += (f"; {int(samples)} of the {freqs.size} frequencies solved exactly, the others by Galerkin "
                   f"projection on the {int(basis)} real and imaginary parts of those solutions (samples chosen "
                   f"greedily until the levels change by less than {SWEEP_TOL_DB:g} dB)")
    steps = [
        *section_steps,
        quantity_step(id=f"{id_prefix}.dofs", description="Free degrees of freedom of the full panel mesh",
                      value=Q_(int(data["n_full"]), ""), method=method, sig=6, source=fe.REDDY_1997),
        quantity_step(id=f"{id_prefix}.dofs-reduced", description="Degrees of freedom of each frequency solve",
                      value=Q_(int(data["n_reduced"]), ""), method=method, sig=6, source=fe.CRAIG_BAMPTON_1968),
        quantity_step(id=f"{id_prefix}.min-transmissibility", description="Lowest transmissibility in the range "
                      "(RMS of the top joints over the base amplitude)", value=Q_(float(T.min()), ""),
                      method=f"{direction} base motion", source=CREMER_HECKL_2005,
                      note=f"at {format_quantity(Q_(freqs[T.argmin()], 'Hz'))}"),
        evaluate(LEVEL_DB, id=f"{id_prefix}.min-level", description="Lowest transmissibility as a level (dB)",
                 values={"T": Q_(float(T.min()), "")}, unit="", source=LEVEL_SOURCE),
    ]
    if band is not None:
        steps += [
            quantity_step(id=f"{id_prefix}.band-low", description=f"Attenuation band (level <= −{threshold_db:g} "
                          "dB): lower edge", value=Q_(band[0], "Hz"), unit="Hz", method=method,
                          source=COMMON_PRACTICE),
            quantity_step(id=f"{id_prefix}.band-high", description=f"Attenuation band (level <= −{threshold_db:g} "
                          "dB): upper edge", value=Q_(band[1], "Hz"), unit="Hz", method=method,
                          source=COMMON_PRACTICE),
        ]
    else:
        steps.append(quantity_step(id=f"{id_prefix}.band-count", description="Attenuation bands found",
                                   value=Q_(0, ""), method=method, source=COMMON_PRACTICE,
                                   note=f"the level never falls to −{threshold_db:g} dB in the range"))
    gap_mean = None
    if gap is not None:
        glo = check_dimension(gap[0], name="gap[0]", expected="frequency").to("Hz").magnitude
        ghi = check_dimension(gap[1], name="gap[1]", expected="frequency").to("Hz").magnitude
        sel = (freqs >= glo) & (freqs <= ghi)
        if sel.any():
            gap_mean = float(np.mean(level[sel]))
            steps.append(quantity_step(id=f"{id_prefix}.gap-level", description="Mean transmissibility inside "
                                       "the infinite-lattice gap", value=Q_(gap_mean, ""), method=method,
                                       note="value in dB", source=CREMER_HECKL_2005))
    if "sweep" in data:
        steps.append(quantity_step(id=f"{id_prefix}.sweep-error", description="Largest difference between the "
                                   "projected sweep and exact joint solves at its last sampled frequencies",
                                   value=Q_(float(max(sweep_err, 0.0)), ""), method=method, note="value in dB; "
                                   f"the last two bases differ by at most {indicator:.1g} dB at any frequency",
                                   sig=2, source=HETMANIUK_2012))
    check = None
    if "check_idx" in data:
        idx = data["check_idx"]
        full_db = LEVEL_DB.evaluate({"T": Q_(np.maximum(data["check_full"], 1e-300), "")}).to("").magnitude
        err = np.abs(level[idx] - full_db)
        check = {"frequency": Q_(freqs[idx], "Hz"), "reduced_db": level[idx], "full_db": full_db, "error_db": err}
        steps.append(quantity_step(id=f"{id_prefix}.reduction-error", description="Largest difference between "
                                   "the reduced and the full model", value=Q_(float(err.max()), ""),
                                   method="direct sparse solve of the full mesh at "
                                   + ", ".join(format_quantity(Q_(f, "Hz")) for f in freqs[idx]),
                                   note="value in dB", sig=2, source=fe.CRAIG_BAMPTON_1968))
    value = {"frequency": Q_(freqs, "Hz"), "transmissibility": Q_(T, ""), "level": level,
             "band": None if band is None else (Q_(band[0], "Hz"), Q_(band[1], "Hz")), "check": check,
             "gap_level": gap_mean}
    return Transmissibility(value=value, steps=tuple(steps), nx=pan.nx, ny=pan.ny,
                            n_dofs_full=int(data["n_full"]), n_dofs_reduced=int(data["n_reduced"]),
                            title=f"Transmissibility of the {nx} × {ny} panel")


@dataclass(frozen=True, kw_only=True)
class CellCountStudy(CalcResult):
    """Result of :func:`attenuation_vs_cells`: ``value`` maps ``cells`` and ``mean_level`` (dB)."""

    runs: tuple[Transmissibility, ...]


def attenuation_vs_cells(cell: Any, *, materials: Mapping[str, Any], band: tuple, heights: Sequence[int] = (4, 8, 16),
                         nx: int = 4, n_frequencies: int = 40, id_prefix: str = "panel.cells",
                         **kwargs: Any) -> CellCountStudy:
    """Mean transmissibility (dB) inside ``band`` for panels ``heights`` cells high.

    Parameters
    ----------
    cell, materials:
        As for :func:`transmissibility`.
    band:
        ``(low, high)`` [frequency]: the band over which the level is averaged (and computed).
    heights:
        Panel heights, in cells.
    nx:
        Cells across.
    n_frequencies:
        Frequencies evenly spaced across the band.
    id_prefix:
        Prefix of the step ids.
    **kwargs:
        Further arguments of :func:`transmissibility` (not ``f_min``/``f_max``).
    """
    lo = check_dimension(band[0], name="band[0]", expected="frequency").to("Hz").magnitude
    hi = check_dimension(band[1], name="band[1]", expected="frequency").to("Hz").magnitude
    kwargs = {k: v for k, v in kwargs.items() if k not in ("f_min", "f_max", "n_frequencies", "gap")}
    kwargs.setdefault("check_points", 0)
    runs, means, steps = [], [], []
    for ny in heights:
        r = transmissibility(cell, materials=materials, nx=nx, ny=int(ny), f_min=Q_(lo, "Hz"), f_max=Q_(hi, "Hz"),
                             n_frequencies=n_frequencies, id_prefix=f"{id_prefix}.{ny}", **kwargs)
        f = r["frequency"].magnitude
        sel = (f >= lo) & (f <= hi)
        if not sel.any():
            raise InputError("no computed frequency falls inside the band", input_name="band",
                             expected="a band inside f_min..f_max", got=f"{lo:g}-{hi:g} Hz")
        m = float(np.mean(r["level"][sel]))
        runs.append(r)
        means.append(m)
        steps.append(quantity_step(id=f"{id_prefix}.h{ny}", description=f"Mean transmissibility in the band, "
                                   f"panel {nx} × {ny} cells", value=Q_(m, ""), note="value in dB",
                                   method=r.step(f"{id_prefix}.{ny}.dofs").method, source=CREMER_HECKL_2005))
    return CellCountStudy(value={"cells": np.array(heights), "mean_level": np.array(means)}, steps=tuple(steps),
                          runs=tuple(runs), title="Attenuation against the number of cells")


# --------------------------------------------------------------------------------------------
# self-weight
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class SelfWeight(CalcResult):
    """Result of :func:`self_weight_deflection`; ``value``: mean settlement of the top frame joints (mm)."""

    max_deflection: Any
    mass: Any


def self_weight_deflection(cell: Any, *, materials: Mapping[str, Any], nx: int = 4, ny: int = 16,
                           n_elements: int = 2, gravity: Any = G_STANDARD, theory: str = "timoshenko",
                           modulus: str = "static", frame_group: str = "frame",
                           id_prefix: str = "selfweight.fe", zoning: Any = None) -> SelfWeight:
    """Settlement of the panel's top under its own weight, base joints fixed (static FE solve).

    The load is the consistent one, f = −g M r_z (M the consistent mass, r_z a unit vertical
    translation), which for these elements makes the nodal displacements exact for the uniform
    weight of each strut; two elements per strut are enough (a coarser mesh changes nothing at
    the joints).

    Parameters
    ----------
    cell, materials:
        As for :func:`transmissibility`.
    nx, ny:
        Cells across and up.
    n_elements:
        Elements per strut.
    gravity:
        Acceleration due to gravity [acceleration].
    theory:
        ``"timoshenko"`` or ``"euler-bernoulli"``.
    modulus:
        ``"static"`` (``youngs_modulus``), ``"long-term"`` (creep, for the permanent load) or
        ``"dynamic"``.
    frame_group:
        Strut group of the stiff frame: the settlement reported is the mean over the top joints
        on those members (all top joints when there is no frame).
    id_prefix:
        Prefix of the step ids.
    zoning:
        As for :func:`transmissibility`: each zone's struts with their own section, material and added
        mass (the model's mass is then also given per zone).
    """
    g = check_positive(check_dimension(gravity, name="gravity", expected="acceleration"), name="gravity")
    pan, zs = zoned_frame(cell, materials=materials, nx=nx, ny=ny, zoning=zoning, modulus=modulus)
    sections = zs.sections
    model = fe.build_frame(nodes=pan.nodes, struts=pan.struts, groups=pan.groups, sections=sections,
                           n_elements=n_elements, theory=theory)
    pm = zs.point_masses
    if pm and n_elements % 2:
        raise InputError("a mass at mid-span needs an even number of elements per strut", input_name="n_elements",
                         expected="an even integer", got=str(n_elements))
    M = (model.matrices.M + fe.point_mass_matrix(model.mesh, pm)).tocsr() if pm else model.matrices.M
    rz = np.zeros(model.n_dofs)
    rz[2::6] = 1.0
    loads = -g.to("m/s^2").magnitude * (M @ rz)
    fixed = (6 * pan.base[:, None] + np.arange(6)).ravel()
    u = fe.static_solve(model, fixed_dofs=fixed, loads=loads)
    top_w = u[6 * pan.top + 2]
    mass = float(rz @ (M @ rz))
    # joints on the stiff load path (frame members) settle as the panel does; lattice-only top
    # joints (face centres hanging on soft struts) also sag locally, so they are reported apart
    on_frame = np.zeros(len(pan.nodes), bool)
    frame_struts = np.array([g == frame_group for g in pan.groups])
    on_frame[pan.struts[frame_struts].ravel()] = True
    top_frame = pan.top[on_frame[pan.top]]
    carrier = top_frame if top_frame.size else pan.top
    mean = Q_(-float(u[6 * carrier + 2].mean()), "m").to("mm")
    worst = Q_(-float(top_w.min()), "m").to("mm")
    which = f"top joints on the {frame_group} members" if top_frame.size else "top joints"
    steps = (
        quantity_step(id=f"{id_prefix}.mass", description="Mass of the panel model", value=Q_(mass, "kg"),
                      unit="kg", method="sum of the consistent mass", source=fe.PRZEMIENIECKI_1968),
        quantity_step(id=f"{id_prefix}.top-mean", description=f"Mean settlement of the {which} under "
                      "self-weight (FE)", value=mean, unit="mm", method=f"{nx} × {ny} cells, static FE, "
                      f"{n_elements} elements per strut, base joints fixed, {modulus} modulus",
                      source=fe.PRZEMIENIECKI_1968),
        quantity_step(id=f"{id_prefix}.top-max", description="Largest settlement of any top joint (FE)",
                      value=worst, unit="mm", method="static FE", source=fe.PRZEMIENIECKI_1968),
    )
    return SelfWeight(value=mean, steps=steps, max_deflection=worst, mass=Q_(mass, "kg"),
                      title="Self-weight settlement of the panel by FE")
