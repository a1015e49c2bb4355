"""Bloch–Floquet dispersion of a periodic strut cell, band gaps and where the modal energy sits.

Method
------
The cell's frame model (:mod:`latticecalc.physics.frame_fe`) is reduced strut by strut
(Craig–Bampton: each strut keeps its two end joints and its lowest fixed–fixed modes).  This is
Bloch mode synthesis with the joints as the interface: the interior of every strut is reduced
once, before the wave-vector loop, and each wave vector then needs one small dense Hermitian
eigenproblem (Krattiger, D. & Hussein, M. I., "Bloch mode synthesis: ultrafast methodology for
elastic band-structure calculations", *Phys. Rev. E* 90 (2014) 063306).  The strut modes kept
are those up to :data:`MODE_CUTOFF` (3) × the top computed band (estimated at the path's corners,
re-solved if the path's top band lies higher); the band frequencies at the gap-edge wave vectors
are compared with the full strut mesh and the difference is put on the sheet.  The full mesh is
solved by shift-invert Lanczos on the Hermitian pencil with one symmetric-ordering factorisation.

Bloch–Floquet conditions tie each image joint on a face x = a to its master on x = 0:
u(image) = e^{i k·R} u(master), R the lattice translation between them (Bloch 1929;
Brillouin, *Wave Propagation in Periodic Structures*, 1946).  With T(k) the map from the master
DOFs to all DOFs, K(k) = Tᴴ K T and M(k) = Tᴴ M T are Hermitian, and ω² solves
K(k) x = ω² M(k) x.  A strut lying on a face appears in the cell together with its images
(each with a share, ``cell.weights``); after the Bloch condensation those copies are one
strut, so the model keeps exactly one strut of each periodic family (whose shares sum to 1).

Wave vectors: the simple-cubic irreducible Brillouin zone Γ(0,0,0), X(0,π/a,0), M(π/a,π/a,0),
R(π/a,π/a,π/a), path Γ–X–M–Γ–R–X | M–R (Setyawan, W. & Curtarolo, S., *Comput. Mater. Sci.* 49
(2010) 299–312).  For a panel one cell thick (periodic in two axes p, q): X = π/a along p,
M = π/a along p and q, path Γ–X–M–Γ.  A complete gap is confirmed by sampling the zone, not
only its path.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla
import sympy as sp_sym

from latticecalc.cache import cached_arrays, fingerprint
from latticecalc.errors import InputError, ModelError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics.threads import single_thread
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, format_quantity

KRATTIGER_HUSSEIN_2014 = Source(author="Krattiger, D. & Hussein, M. I.",
                                title="Bloch mode synthesis: ultrafast methodology for elastic band-structure "
                                      "calculations, Phys. Rev. E 90, 063306", year=2014)
SETYAWAN_CURTAROLO_2010 = Source(author="Setyawan, W. & Curtarolo, S.",
                                 title="High-throughput electronic band structure calculations: challenges "
                                       "and tools, Comput. Mater. Sci. 49, 299-312", year=2010,
                                 locator="simple cubic: Γ, X, M, R and the path Γ-X-M-Γ-R-X|M-R")
BRILLOUIN_1946 = Source(author="Brillouin, L.", title="Wave Propagation in Periodic Structures", year=1946,
                        locator="Bloch-Floquet condition u(x + a) = exp(i k a) u(x)")

#: Strut modes kept up to this multiple of the top computed band (Bloch mode synthesis).
MODE_CUTOFF = 3.0
DEFAULT_PATH = "G-X-M-G-R-X|M-R"
DEFAULT_PATH_2D = "G-X-M-G"
_AXES = {"x": 0, "y": 1, "z": 2}
#: Symmetry points as fractions of 2π/a along the periodic axes, by number of periodic axes.
POINTS = {
    3: {"G": (0.0, 0.0, 0.0), "X": (0.0, 0.5, 0.0), "M": (0.5, 0.5, 0.0), "R": (0.5, 0.5, 0.5)},
    2: {"G": (0.0, 0.0), "X": (0.5, 0.0), "Y": (0.0, 0.5), "M": (0.5, 0.5)},
    1: {"G": (0.0,), "X": (0.5,)},
}
LABELS = {"G": "Γ", "X": "X", "M": "M", "R": "R", "Y": "Y"}
_TOL = 1e-7

_f_lo, _f_hi = sp_sym.symbols("f_low f_high")
#: Gap width over the mid-gap frequency (the usual figure of merit of a band gap) [common practice].
RELATIVE_WIDTH = Formula("w_rel", 2 * (_f_hi - _f_lo) / (_f_hi + _f_lo),
                         latex_names={"w_rel": r"\Delta f / f_\mathrm{mid}", "f_low": r"f_\mathrm{low}",
                                      "f_high": r"f_\mathrm{high}"})


# --------------------------------------------------------------------------------------------
# periodic structure of a cell
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class PeriodicFrame:
    """A cell's joints with their Bloch masters, and one strut per periodic family (SI floats).

    ``master[j]`` is the joint whose DOFs joint ``j`` copies, ``offset[j]`` the lattice
    translation (m, along the periodic axes) from master to ``j``.
    """

    nodes: np.ndarray
    struts: np.ndarray
    groups: tuple[str, ...]
    master: np.ndarray
    offset: np.ndarray
    axes: tuple[int, ...]
    periods: np.ndarray


def parse_axes(periodic: str) -> tuple[int, ...]:
    """``"xyz"`` -> (0, 1, 2); ``"xz"`` -> (0, 2)."""
    if not isinstance(periodic, str) or not periodic or any(c not in _AXES for c in periodic) \
            or len(set(periodic)) != len(periodic):
        raise InputError("periodic axes must be letters x, y, z, each once", input_name="periodic",
                         expected="'xyz' (bulk lattice), 'xz' (panel one cell thick) or 'x'", got=repr(periodic))
    return tuple(sorted(_AXES[c] for c in periodic))


def periodic_frame(cell: Any, *, periodic: str = "xyz") -> PeriodicFrame:
    """Pair every joint with its Bloch master and keep one strut of each periodic family.

    Raises ModelError if a joint on a face has no image on the opposite face, or if a strut's
    periodic copies do not make up exactly one strut (their ``weights`` do not sum to 1).
    """
    axes = parse_axes(periodic)
    nodes, struts, groups = fe.cell_geometry(cell)
    lo = nodes.min(axis=0)
    if hasattr(cell, "cell_width"):
        width = float(cell.cell_width.to("m").magnitude)
        periods = np.full(3, width)
    else:
        periods = np.ptp(nodes, axis=0)
    for ax in axes:
        if periods[ax] <= 0:
            raise ModelError("the cell has no extent along a periodic axis", input_name="periodic",
                             expected=f"nodes spread along {'xyz'[ax]}", got="all nodes in one plane")
    frac = (nodes - lo) / np.where(periods > 0, periods, 1.0)
    shift = np.zeros((len(nodes), 3), int)
    for ax in axes:
        on_hi = np.abs(frac[:, ax] - 1.0) < _TOL
        shift[on_hi, ax] = 1
        if np.any((frac[:, ax] < -_TOL) | (frac[:, ax] > 1 + _TOL)):
            raise ModelError("a node lies outside the cell", input_name="cell.nodes",
                             expected="0 <= coordinate <= cell width", got="a node beyond the cell")
    folded = frac - shift
    key = [tuple(np.round(f, 7)) for f in folded]
    by_key: dict[tuple, list[int]] = {}
    for i, kk in enumerate(key):
        by_key.setdefault(kk, []).append(i)
    master = np.empty(len(nodes), int)
    for members in by_key.values():
        base = [i for i in members if not shift[i].any()]
        if not base:
            i = members[0]
            raise ModelError("the cell is not periodic on its faces: a node has no image on the opposite face",
                             input_name="cell", expected=f"a node at {np.round(folded[i] * periods, 6).tolist()} m",
                             got=f"only the node at {np.round(nodes[i], 6).tolist()} m",
                             hint="Give every node on a face its image on the opposite face")
        master[members] = base[0]
    # a master on a low face must have its image on the high face (and vice versa, checked above)
    for ax in axes:
        on_lo = np.flatnonzero(np.abs(frac[:, ax]) < _TOL)
        for i in on_lo:
            target = frac[i].copy()
            target[ax] = 1.0
            if not np.any(np.all(np.abs(frac - target) < 1e-6, axis=1)):
                raise ModelError("the cell is not periodic on its faces: a node has no image on the "
                                 "opposite face", input_name="cell",
                                 expected=f"a node at {np.round(target * periods + lo, 6).tolist()} m",
                                 got=f"only the node at {np.round(nodes[i], 6).tolist()} m",
                                 hint="Give every node on a face its image on the opposite face")
    # one strut per periodic family
    # the cell's shares count copies along all three axes: they apply to the bulk lattice only
    use_weights = hasattr(cell, "weights") and len(axes) == 3
    weights = np.asarray(cell.weights, float) if use_weights else np.ones(len(struts))
    fam: dict[tuple, list[int]] = {}
    for s, (i, j) in enumerate(struts):
        mi, mj = master[i], master[j]
        d = tuple((shift[j] - shift[i]).tolist())
        k1 = (mi, mj, d)
        k2 = (mj, mi, tuple((-np.asarray(d)).tolist()))
        fam.setdefault(min(k1, k2), []).append(s)
    keep = []
    for members in fam.values():
        total = weights[members].sum() if use_weights else 1.0
        if use_weights and abs(total - 1.0) > 1e-6:
            s = members[0]
            raise ModelError("the cell is not periodic on its faces: a face strut's copies do not make "
                             "one strut", input_name=f"cell.struts[{s}]",
                             expected="shares (weights) of a strut and its periodic images summing to 1",
                             got=f"{total:g} over struts {members}")
        keep.append(min(members))
    keep = np.array(sorted(keep), int)
    offset = shift * periods[None, :]
    return PeriodicFrame(nodes=nodes, struts=struts[keep], groups=tuple(groups[s] for s in keep), master=master,
                         offset=offset, axes=axes, periods=periods)


# --------------------------------------------------------------------------------------------
# the Bloch operator on a set of DOFs
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class BlochOperator:
    """Stiffness and mass on "full" DOFs plus the Bloch map to the reduced (master) DOFs.

    ``dof_master[i]`` is the reduced index of full DOF ``i``; ``dof_offset[i]`` the lattice
    translation (m) of DOF ``i`` from its master.  ``K`` and ``M`` may be dense or sparse;
    ``M_part`` the mass of one strut group (for energy fractions), or None.
    """

    K: Any
    M: Any
    dof_master: np.ndarray
    dof_offset: np.ndarray
    n_reduced: int
    M_part: Any = None

    def __post_init__(self) -> None:
        n = len(self.dof_master)
        P = sp.csr_matrix((np.ones(n), (np.arange(n), self.dof_master)), shape=(n, self.n_reduced))
        object.__setattr__(self, "_P", P)
        if not sp.issparse(self.K):
            # trailing DOFs that map one-to-one without phase (strut modal coordinates) are
            # left out of the phase products: only the joint block changes with k
            tail = 0
            nr = self.n_reduced
            while (tail < min(n, nr) and self.dof_master[n - 1 - tail] == nr - 1 - tail
                   and not self.dof_offset[n - 1 - tail].any()):
                tail += 1
            object.__setattr__(self, "_nj", (n - tail, nr - tail))
            object.__setattr__(self, "_Pd", P[: n - tail, : nr - tail].toarray())

    @property
    def P(self):  # noqa: N802 - matrix symbol
        """The 0/1 incidence matrix (full × reduced), sparse."""
        return self._P

    def phases(self, k: np.ndarray) -> np.ndarray:
        """e^{i k·R} for every full DOF."""
        return np.exp(1j * (self.dof_offset @ np.asarray(k, float)))

    def reduce(self, A, k: np.ndarray):
        """Tᴴ A T at wave vector ``k`` (rad/m, 3-vector)."""
        p = self.phases(k)
        if sp.issparse(A):
            T = (sp.diags(p) @ self._P).tocsc()
            return (T.conj().T @ A @ T).tocsc()
        nf, nr = self._nj
        T = self._Pd * p[:nf, None]
        Th = T.conj().T
        out = np.empty((self.n_reduced, self.n_reduced), complex)
        out[:nr, :nr] = Th @ (A[:nf, :nf] @ T)
        out[:nr, nr:] = Th @ A[:nf, nf:]
        out[nr:, :nr] = A[nf:, :nf] @ T
        out[nr:, nr:] = A[nf:, nf:]
        return out

    def matrices(self, k: np.ndarray):
        """K(k), M(k), Hermitian."""
        Kk = self.reduce(self.K, k)
        Mk = self.reduce(self.M, k)
        if not sp.issparse(Kk):
            Kk = 0.5 * (Kk + Kk.conj().T)
            Mk = 0.5 * (Mk + Mk.conj().T)
        return Kk, Mk

    def solve(self, k: np.ndarray, n_bands: int, *, vectors: bool = False):
        """Lowest ``n_bands`` ω² (rad²/s²) at ``k``, optionally with eigenvectors."""
        Kk, Mk = self.matrices(k)
        nb = min(n_bands, self.n_reduced)
        if sp.issparse(Kk):
            w2, x = _sparse_hermitian_lowest(Kk, Mk, nb, shift=self._shift())
        else:
            if nb < self.n_reduced // 3:
                w2, x = sla.eigh(Kk, Mk, subset_by_index=[0, nb - 1], driver="gvx")
            else:
                w2, x = sla.eigh(Kk, Mk, driver="gvd")
                w2, x = w2[:nb], x[:, :nb]
        w2 = np.clip(np.real(w2), 0.0, None)
        return (w2, x) if vectors else w2

    def energy_fraction(self, k: np.ndarray, x: np.ndarray) -> np.ndarray:
        """Share of each mode's kinetic energy in the ``M_part`` group (0..1)."""
        if self.M_part is None:
            return np.full(x.shape[1], np.nan)
        p = self.phases(k)
        full = self._P @ x * p[:, None]            # the Bloch modes on all DOFs
        num = np.real(np.einsum("ij,ij->j", full.conj(), self.M_part @ full))
        den = np.real(np.einsum("ij,ij->j", full.conj(), self.M @ full))
        return np.clip(num / den, 0.0, 1.0)

    def _shift(self) -> float:
        d = np.abs(self.K.diagonal()).mean() / max(np.abs(self.M.diagonal()).mean(), 1e-300)
        return -1e-4 * d


def shift_invert(K, M, shift: float) -> spla.LinearOperator:
    """(K − σ M)⁻¹ as an operator, factorised once with a symmetric ordering (K, M symmetric or Hermitian, sparse).

    SuperLU with a minimum-degree ordering of Aᵀ + A and diagonal pivots keeps the factors of these
    symmetric matrices several times sparser than the default column ordering; partial pivoting is the
    fallback when a diagonal pivot fails.
    """
    A = (K - shift * M).tocsc()
    try:
        lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
        probe = np.ones(A.shape[0], dtype=A.dtype)
        x = lu.solve(probe)
        if not (np.all(np.isfinite(x)) and np.linalg.norm(A @ x - probe) <= 1e-8 * np.linalg.norm(probe)):
            raise RuntimeError("inaccurate symmetric factorisation")
    except RuntimeError:
        lu = spla.splu(A)
    return spla.LinearOperator(A.shape, matvec=lu.solve, dtype=A.dtype)


def _start_vector(n: int, dtype: Any) -> np.ndarray:
    """ARPACK's starting vector: the same pseudo-random vector on every run (ARPACK's own is random each call).

    A fixed start makes a solve repeat itself exactly: within a repeated eigenvalue ARPACK returns some vector
    of the eigenspace, and with a random start a different one each run, so a mode-shape figure differed
    from run to run and was drawn afresh every time. Random-like rather than constant, so it is not
    orthogonal to a symmetric family of modes.
    """
    rng = np.random.default_rng(20_261_202)
    v = rng.standard_normal(n)
    if np.iscomplexobj(np.empty(0, dtype=dtype)):
        v = v + 1j * rng.standard_normal(n)
    return v.astype(dtype)


def _sparse_hermitian_lowest(K, M, nb: int, *, shift: float):
    """Lowest ``nb`` eigenpairs of a sparse complex Hermitian pencil, shift-invert about ``shift``.

    The pencil is solved as it is, with (K − σM)⁻¹ factorised once in a symmetric ordering
    (:func:`shift_invert`).  Should ARPACK fail there, the real symmetric double
    [[Re, −Im], [Im, Re]] (every eigenvalue twice) is solved instead.
    """
    n = K.shape[0]
    # a few more than asked: at high-symmetry wave vectors Lanczos can otherwise miss one copy of a
    # repeated eigenvalue among the last ones (seen at R for a framed octet, about one run in four)
    extra = max(8, nb // 2)
    if nb < n - 1:
        # the complex Hermitian pencil itself: each eigenvalue once, so Lanczos converges several
        # times faster than on the real double, where every eigenvalue is repeated
        try:
            w, x = spla.eigsh(K, k=min(nb + extra, n - 2), M=M, sigma=shift, which="LM",
                              OPinv=shift_invert(K, M, shift), v0=_start_vector(n, K.dtype))
            order = np.argsort(w.real)
            w, x = w.real[order], x[:, order]
            x /= np.sqrt(np.real(np.einsum("ij,ij->j", x.conj(), M @ x)))[None, :]
            return w[:nb], x[:, :nb]
        except (spla.ArpackError, spla.ArpackNoConvergence, RuntimeError):
            pass
    Kr = sp.bmat([[K.real, -K.imag], [K.imag, K.real]]).tocsc()
    Mr = sp.bmat([[M.real, -M.imag], [M.imag, M.real]]).tocsc()
    k2 = min(2 * (nb + extra), 2 * n - 2)
    w, v = spla.eigsh(Kr, k=k2, M=Mr, sigma=shift, which="LM", OPinv=shift_invert(Kr, Mr, shift),
                      v0=_start_vector(2 * n, Kr.dtype))
    order = np.argsort(w)
    w, v = w[order][::2], v[:, order][:, ::2]
    x = v[:n] + 1j * v[n:]
    x /= np.sqrt(np.real(np.einsum("ij,ij->j", x.conj(), M @ x)))[None, :]
    return w[:nb], x[:, :nb]


DOF_NAMES = ("ux", "uy", "uz", "rx", "ry", "rz")


def _drop(op: BlochOperator, restrained: np.ndarray | None = None) -> BlochOperator:
    """Remove reduced DOFs with no mass (joints without struts) and the ``restrained`` ones."""
    rowsum = np.asarray(abs(op.M).sum(axis=1)).ravel()
    diag = np.asarray(op.P.T @ rowsum).ravel()
    ok = diag > 0
    if restrained is not None and len(restrained):
        ok[np.asarray(restrained, int)] = False
    keep = np.flatnonzero(ok)
    if keep.size == op.n_reduced:
        return op
    new_index = -np.ones(op.n_reduced, int)
    new_index[keep] = np.arange(keep.size)
    rows = np.flatnonzero(new_index[op.dof_master] >= 0)

    def sub(A):
        if A is None:
            return None
        return A[rows][:, rows] if sp.issparse(A) else A[np.ix_(rows, rows)]

    return BlochOperator(K=sub(op.K), M=sub(op.M), dof_master=new_index[op.dof_master[rows]],
                         dof_offset=op.dof_offset[rows], n_reduced=keep.size, M_part=sub(op.M_part))


def _restrained_dofs(pf: PeriodicFrame, supports: Mapping[int, Sequence[str]] | None) -> np.ndarray:
    """Reduced DOF indices (before dropping) of the supported joint DOFs."""
    if not supports:
        return np.zeros(0, int)
    masters = np.unique(pf.master)
    idx = -np.ones(len(pf.nodes), int)
    idx[masters] = np.arange(masters.size)
    out = []
    for j, names in supports.items():
        if not (isinstance(j, (int, np.integer)) and 0 <= j < len(pf.nodes)):
            raise InputError("a supported node does not exist", input_name="supports",
                             expected=f"node indices 0..{len(pf.nodes) - 1}", got=repr(j))
        for name in ([names] if isinstance(names, str) else names):
            if name not in DOF_NAMES:
                raise InputError("unknown degree of freedom", input_name=f"supports[{j}]",
                                 expected=", ".join(DOF_NAMES), got=repr(name))
            out.append(6 * idx[pf.master[j]] + DOF_NAMES.index(name))
    return np.array(sorted(set(out)), int)


def _joint_maps(pf: PeriodicFrame, extra: int):
    n_j = len(pf.nodes)
    masters = np.unique(pf.master)
    idx = -np.ones(n_j, int)
    idx[masters] = np.arange(masters.size)
    jm = (6 * idx[pf.master][:, None] + np.arange(6)).ravel()
    joff = np.repeat(pf.offset, 6, axis=0)
    nm = 6 * masters.size
    dof_master = np.concatenate([jm, nm + np.arange(extra)])
    dof_offset = np.vstack([joff, np.zeros((extra, 3))])
    return dof_master, dof_offset, nm + extra


def reduced_operator(pf: PeriodicFrame, sections: Mapping[str, fe.Section], *, n_elements: int,
                     strut_modes: int, theory: str, part: str | None = "lattice",
                     supports: Mapping[int, Sequence[str]] | None = None,
                     point_masses: Mapping[str, Any] | None = None,
                     end_zones: np.ndarray | None = None, cutoff: float | None = None) -> BlochOperator:
    """Bloch operator of the strut-reduced model (joints + ``strut_modes`` modes per strut), dense.

    ``end_zones`` (struts of ``pf``, 2), m: rigid node zones (see :func:`node_zones_of`).
    ``cutoff`` (Hz): of those modes, keep only the ones at or below this frequency (None: all).
    """
    red = fe.reduce_struts(nodes=pf.nodes, struts=pf.struts, groups=pf.groups, sections=sections,
                           n_elements=n_elements, n_modes=strut_modes, theory=theory, point_masses=point_masses,
                           end_zones=end_zones)
    K, M = fe.reduced_matrices(red, n_joints=len(pf.nodes))
    Mp = fe.reduced_matrices(red, n_joints=len(pf.nodes), group=part)[1] if part in pf.groups else None
    extra = K.shape[0] - 6 * len(pf.nodes)
    dm, do, nr = _joint_maps(pf, extra)
    dropped = _restrained_dofs(pf, supports)
    if cutoff is not None and red.n_modes:
        above = np.flatnonzero(red.omega2.ravel() > (2 * np.pi * cutoff) ** 2)
        dropped = np.union1d(dropped, nr - extra + above)
    return _drop(BlochOperator(K=K, M=M, dof_master=dm, dof_offset=do, n_reduced=nr, M_part=Mp), dropped)


def strut_mode_frequencies(pf: PeriodicFrame, sections: Mapping[str, fe.Section], *, n_elements: int,
                           strut_modes: int, theory: str, point_masses: Mapping[str, Any] | None = None,
                           end_zones: np.ndarray | None = None) -> np.ndarray:
    """Fixed–fixed mode frequencies (Hz) of every strut of ``pf``, (struts, ``strut_modes``)."""
    red = fe.reduce_struts(nodes=pf.nodes, struts=pf.struts, groups=pf.groups, sections=sections,
                           n_elements=n_elements, n_modes=strut_modes, theory=theory, point_masses=point_masses,
                           end_zones=end_zones)
    return np.sqrt(np.clip(red.omega2, 0.0, None)) / (2 * np.pi)


def full_operator(pf: PeriodicFrame, sections: Mapping[str, fe.Section], *, n_elements: int, theory: str,
                  part: str | None = "lattice", supports: Mapping[int, Sequence[str]] | None = None,
                  point_masses: Mapping[str, Any] | None = None,
                  end_zones: np.ndarray | None = None) -> BlochOperator:
    """Bloch operator of the full (unreduced) frame mesh, sparse (``end_zones`` as for :func:`reduced_operator`)."""
    mesh = fe.mesh_frame(nodes=pf.nodes, struts=pf.struts, groups=pf.groups, n_elements=n_elements,
                         end_zones=end_zones)
    asm = fe.assemble(mesh, sections, theory=theory)
    extra = mesh.n_dofs - 6 * len(pf.nodes)
    dm, do, nr = _joint_maps(pf, extra)
    Mp = asm.M_by_group.get(part) if part else None
    M = asm.M
    if point_masses:
        added = fe.point_mass_matrix(mesh, point_masses)
        M = (M + added).tocsr()
        if Mp is not None:
            keep = np.zeros(mesh.n_dofs)
            for s_, g in enumerate(mesh.strut_groups):
                if g == part and g in point_masses:
                    node = mesh.strut_nodes(s_)[mesh.n_elements // 2]
                    keep[6 * node:6 * node + 6] = 1.0
            Mp = (Mp + sp.diags(keep) @ added).tocsr()
    return _drop(BlochOperator(K=asm.K, M=M, dof_master=dm, dof_offset=do, n_reduced=nr, M_part=Mp),
                 _restrained_dofs(pf, supports))


def node_zones_of(pf: PeriodicFrame, sections: Mapping[str, fe.Section], node_zones: str) -> np.ndarray | None:
    """Rigid node zones of the periodic frame's struts (None for ``"none"``).

    A joint's zones see every strut meeting it in the lattice: the struts at all its images.
    """
    return fe.end_zones_for(node_zones, nodes=pf.nodes, struts=pf.struts, groups=pf.groups, sections=sections,
                            joint_master=pf.master)


# --------------------------------------------------------------------------------------------
# wave vectors
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class WavePath:
    """Wave vectors along a path: ``k`` (n, 3) rad/m, ``s`` the path coordinate (rad/m)."""

    k: np.ndarray
    s: np.ndarray
    ticks: tuple[float, ...]
    tick_labels: tuple[str, ...]
    segment: np.ndarray


def wave_path(path: str, *, points: int, axes: Sequence[int], periods: np.ndarray) -> WavePath:
    """Sample ``path`` (e.g. ``"G-X-M-G-R-X|M-R"``) with about ``points`` wave vectors.

    Points are shared out in proportion to segment length, at least two per segment; a ``|``
    starts a new branch at the same path coordinate (no length is added across the jump).
    """
    dim = len(axes)
    table = POINTS.get(dim)
    if table is None:
        raise InputError("unsupported number of periodic axes", input_name="periodic", expected="1, 2 or 3",
                         got=str(dim))
    if isinstance(points, bool) or not isinstance(points, (int, np.integer)) or points < 2:
        raise InputError("number of wave vectors must be a whole number >= 2", input_name="points",
                         expected="an integer >= 2", got=repr(points))
    branches = [b.strip() for b in str(path).split("|")]
    legs = []
    for b in branches:
        labels = [t.strip().upper() for t in re.split(r"-", b) if t.strip()]
        for lab in labels:
            if lab not in table:
                raise InputError("unknown symmetry point in the path", input_name="path",
                                 expected=f"labels {', '.join(table)} joined by '-' and '|'", got=repr(lab))
        if len(labels) < 2:
            raise InputError("each branch of the path needs two points or more", input_name="path",
                             expected="e.g. 'G-X-M-G-R-X|M-R'", got=repr(b))
        legs.append(labels)

    def vec(lab):
        out = np.zeros(3)
        for j, ax in enumerate(axes):
            out[ax] = 2 * np.pi * table[lab][j] / periods[ax]
        return out

    segs = [(vec(a), vec(b), a, b) for labels in legs for a, b in zip(labels[:-1], labels[1:])]
    lengths = np.array([np.linalg.norm(b - a) for a, b, _, _ in segs])
    share = np.maximum(2, np.round(points * lengths / lengths.sum()).astype(int))
    ks, ss, seg_id = [], [], []
    ticks, tick_labels = [0.0], [LABELS[legs[0][0]]]
    s0 = 0.0
    i = 0
    for bi, labels in enumerate(legs):
        if bi > 0:
            tick_labels[-1] = tick_labels[-1] + "|" + LABELS[labels[0]]
        for _ in range(len(labels) - 1):
            a, b, _la, lb = segs[i]
            t = np.linspace(0.0, 1.0, share[i])
            ks.append(a[None, :] + (b - a)[None, :] * t[:, None])
            ss.append(s0 + t * lengths[i])
            seg_id.append(np.full(share[i], i))
            s0 += lengths[i]
            ticks.append(s0)
            tick_labels.append(LABELS[lb])
            i += 1
    return WavePath(k=np.vstack(ks), s=np.concatenate(ss), ticks=tuple(ticks), tick_labels=tuple(tick_labels),
                    segment=np.concatenate(seg_id))


def zone_samples(*, n_per_axis: int, axes: Sequence[int], periods: np.ndarray, zone: str = "octant") -> np.ndarray:
    """Wave vectors (n, 3) rad/m filling the irreducible part of the Brillouin zone.

    ``zone="octant"``: 0 <= k_i <= π/a_i on every periodic axis (enough for a cell with mirror
    symmetry about its mid-planes); ``"wedge"``: the cubic wedge 0 <= k_z <= k_y <= k_x (a cell
    with the full cubic symmetry); ``"half"``: k_first in [0, π/a], the others in [−π/a, π/a]
    (any cell, using ω(k) = ω(−k)).
    """
    if zone not in ("octant", "wedge", "half"):
        raise InputError("unknown zone sampling", input_name="zone", expected="'octant', 'wedge' or 'half'",
                         got=repr(zone))
    if isinstance(n_per_axis, bool) or not isinstance(n_per_axis, (int, np.integer)) or n_per_axis < 2:
        raise InputError("zone sampling needs at least 2 points per axis", input_name="zone_points",
                         expected="an integer >= 2", got=repr(n_per_axis))
    grids = []
    for j, ax in enumerate(axes):
        top = np.pi / periods[ax]
        lo = -top if (zone == "half" and j > 0) else 0.0
        grids.append(np.linspace(lo, top, n_per_axis if lo == 0 else 2 * n_per_axis - 1))
    mesh = np.stack(np.meshgrid(*grids, indexing="ij"), axis=-1).reshape(-1, len(axes))
    if zone == "wedge":
        frac = mesh * np.array([periods[a] for a in axes])[None, :]
        ok = np.all(np.diff(frac[:, ::-1], axis=1) >= -1e-12, axis=1)
        mesh = mesh[ok]
    k = np.zeros((mesh.shape[0], 3))
    k[:, list(axes)] = mesh
    return k


# --------------------------------------------------------------------------------------------
# gaps
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Gap:
    """A frequency range with no propagating wave: between band ``below`` and band ``below + 1``."""

    low: Any
    high: Any
    below: int

    @property
    def width(self):
        """High − low [Hz]."""
        return self.high - self.low

    @property
    def relative_width(self):
        """Width over mid-gap frequency [-]."""
        return RELATIVE_WIDTH.evaluate({"f_low": self.low, "f_high": self.high}).to("")

    def __getitem__(self, key: str):
        if key in ("low", "high", "width", "relative_width", "below"):
            return getattr(self, key)
        raise KeyError(key)

    def __repr__(self) -> str:
        return f"Gap({format_quantity(self.low)} – {format_quantity(self.high)}, above band {self.below + 1})"


def find_gaps(freqs: np.ndarray, *, min_relative: float = 1e-3) -> list[tuple[float, float, int]]:
    """Gaps (low, high, band index below) of a (points × bands) frequency array, Hz."""
    f = np.sort(np.asarray(freqs, float), axis=1)
    out = []
    for j in range(f.shape[1] - 1):
        lo, hi = f[:, j].max(), f[:, j + 1].min()
        if hi > lo and (hi - lo) > min_relative * 0.5 * (hi + lo):
            out.append((float(lo), float(hi), j))
    return out


# --------------------------------------------------------------------------------------------
# progress
# --------------------------------------------------------------------------------------------
def progress_iter(items: Sequence, *, progress: Any, desc: str):
    """Iterate ``items``, showing progress: ``True`` -> tqdm bar (if installed), callable -> f(done, total)."""
    total = len(items)
    if progress is True:
        try:
            from tqdm.auto import tqdm
        except ImportError:  # pragma: no cover - tqdm is optional
            yield from items
            return
        yield from tqdm(items, total=total, desc=desc, leave=False)
        return
    for i, it in enumerate(items):
        yield it
        if callable(progress):
            progress(i + 1, total)


# --------------------------------------------------------------------------------------------
# public: dispersion
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class Dispersion(CalcResult):
    """Result of :func:`dispersion`.

    ``value`` maps ``k`` (path coordinate, rad/m), ``frequencies`` (points × bands, Hz),
    ``gaps`` (complete gaps, :class:`Gap` with ``low``/``high``), ``directional_gaps`` (per
    path leg), ``strut_energy`` (points × bands, share of kinetic energy in the lattice group),
    ``wave_vectors`` (points × 3, rad/m).
    """

    ticks: tuple[float, ...]
    tick_labels: tuple[str, ...]
    n_dofs_full: int
    n_dofs_reduced: int
    method: str
    zone_frequencies: Any = None
    #: The model of the node region the bands were computed with (``"none"`` or ``"rigid"``).
    node_zones: str = "none"


def _bands_on(op: BlochOperator, ks: np.ndarray, n_bands: int, *, progress: Any, desc: str):
    f = np.zeros((len(ks), n_bands))
    e = np.zeros((len(ks), n_bands))
    with single_thread():
        for i in progress_iter(range(len(ks)), progress=progress, desc=desc):
            w2, x = op.solve(ks[i], n_bands, vectors=True)
            nb = len(w2)
            f[i, :nb] = np.sqrt(w2) / (2 * np.pi)
            e[i, :nb] = op.energy_fraction(ks[i], x)
            if nb < n_bands:
                f[i, nb:] = np.nan
    return f, e


def _edge_rows(f: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Rows and bands of the edges to check: both edges of each complete gap, else the top band's maximum."""
    gaps = find_gaps(f)
    rows, bands = [], []
    for _lo, _hi, j in gaps:
        rows += [int(np.nanargmax(f[:, j])), int(np.nanargmin(f[:, j + 1]))]
        bands += [j, j + 1]
    if not gaps:
        j = int(np.max(np.flatnonzero(np.isfinite(f).all(axis=0)), initial=0))
        rows.append(int(np.nanargmax(f[:, j])))
        bands.append(j)
    return np.array(rows, int), np.array(bands, int)


def _check_count(value: Any, *, name: str, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < minimum:
        raise InputError(f"{name} must be a whole number >= {minimum}", input_name=name,
                         expected=f"an integer >= {minimum}", got=repr(value))
    return int(value)


def _cell_key(cell: Any, materials: Mapping[str, Any]) -> tuple:
    props = ("youngs_modulus", "poissons_ratio", "density", "loss_factor", "dynamic_to_static", "long_term_factor")
    mats = {g: {a: getattr(m, a, None) for a in props} for g, m in materials.items()}
    return (np.asarray(cell.nodes.to("m").magnitude), np.asarray(cell.struts), list(map(str, cell.groups)),
            dict(cell.diameters), np.asarray(getattr(cell, "weights", [])), mats,
            sorted(fe.cell_point_masses(cell).items()),
            sorted((g, str(t)) for g, t in getattr(cell, "wall_thicknesses", {}).items()))


def dispersion(cell: Any, *, materials: Mapping[str, Any], n_elements: int = 8, n_bands: int = 30,
               path: str | None = None, points: int = 100, periodic: str = "xyz", strut_modes: int = 8,
               method: str = "reduced", zone: str = "octant", zone_points: int = 4,
               theory: str = "timoshenko", energy_group: str = "lattice", convergence_check: bool = True,
               supports: Mapping[int, Sequence[str]] | None = None, cache: Any = None, progress: Any = None,
               id_prefix: str = "bloch", node_zones: str = "none", mode_cutoff: float | None = MODE_CUTOFF,
               edge_check: bool | None = None) -> Dispersion:
    """Bloch-wave dispersion of an infinite lattice of ``cell``, its complete gaps and mode types.

    Parameters
    ----------
    cell:
        A periodic cell (``.nodes`` [length], ``.struts``, ``.groups``, ``.diameters``,
        optionally ``.cell_width`` [length] and ``.weights``).
    materials:
        Group name -> material (``youngs_modulus`` [pressure], ``poissons_ratio``, ``density``
        [density]).
    n_elements:
        Beam elements per strut (>= 1).
    n_bands:
        Number of bands computed (lowest first).
    path:
        Symmetry points joined by ``-``, branches by ``|``; default ``"G-X-M-G-R-X|M-R"`` in 3D,
        ``"G-X-M-G"`` for two periodic axes.
    points:
        About this many wave vectors along the path.
    periodic:
        Periodic axes: ``"xyz"`` for the bulk lattice, two letters (``"xz"``) for a panel one
        cell thick.
    strut_modes:
        Fixed–fixed modes computed per strut in the reduced model (``method="reduced"``): all are kept
        when ``mode_cutoff`` is None, else the most that are kept.
    mode_cutoff:
        Keep the strut modes up to ``mode_cutoff`` × the top computed band (default
        :data:`MODE_CUTOFF` = 3); the top band is first estimated at the path's corners with the two
        lowest modes per strut (an estimate from above), and the path is solved again with a higher
        cutoff when its top band lies higher.  None keeps ``strut_modes`` modes of every strut.
    edge_check:
        Solve the full strut mesh at the wave vectors of the gap edges (of the top band's maximum when
        there is no gap) and report the largest relative difference of the bands on the sheet; None
        (default): when ``convergence_check`` is on (a design loop that skips the mesh check skips this
        one too).
    method:
        ``"reduced"`` (strut-level Bloch mode synthesis, fast) or ``"full"`` (the unreduced mesh,
        sparse shift-invert eigensolver at each wave vector).
    zone, zone_points:
        Sampling of the irreducible zone used to confirm that a gap is complete (see
        :func:`zone_samples`); ``zone_points=0`` skips it (gaps then hold along the path only).
    theory:
        ``"timoshenko"`` or ``"euler-bernoulli"``.
    energy_group:
        Strut group whose share of the kinetic energy classifies each mode (the soft resonating
        struts, ``"lattice"``).
    supports:
        Joint index -> restrained DOFs (``"ux"``, ``"uy"``, ``"uz"``, ``"rx"``, ``"ry"``, ``"rz"``),
        e.g. a beam on periodic simple supports; None for a free lattice.
    convergence_check:
        Also solve with half the elements per strut and report the change of the gap edges (or
        of the highest band) on the sheet.
    cache:
        Folder for cached results (see :mod:`latticecalc.cache`), ``True`` for
        ``./.latticecalc-cache``, ``None`` for no caching.
    progress:
        ``True`` for a progress bar, or a callable ``f(done, total)``.
    id_prefix:
        Prefix of the step ids.
    node_zones:
        ``"none"`` (struts node to node) or ``"rigid"``: rigid zones at the ends of the lattice
        struts, as long as the node geometry buries them (:func:`latticecalc.physics.frame_fe.node_zone_lengths`).

    Returns
    -------
    Dispersion
        ``.value["k"]`` [rad/m], ``["frequencies"]`` [Hz], ``["gaps"]`` (list of :class:`Gap`).
    """
    axes = parse_axes(periodic)
    n = fe.check_n_elements(n_elements)
    nb = _check_count(n_bands, name="n_bands", minimum=1)
    pts = _check_count(points, name="points", minimum=2)
    sm = _check_count(strut_modes, name="strut_modes", minimum=0)
    if method not in ("reduced", "full"):
        raise InputError("unknown solution method", input_name="method", expected="'reduced' or 'full'",
                         got=repr(method))
    if path is None:
        path = DEFAULT_PATH if len(axes) == 3 else DEFAULT_PATH_2D if len(axes) == 2 else "G-X"
    fe._check_theory(theory)
    pf = periodic_frame(cell, periodic=periodic)
    sections, section_steps = fe.sections_for(cell, materials, with_steps=True, id_prefix=f"{id_prefix}.section")
    wp = wave_path(path, points=pts, axes=axes, periods=pf.periods)
    kz = zone_samples(n_per_axis=zone_points, axes=axes, periods=pf.periods, zone=zone) if zone_points else \
        np.zeros((0, 3))

    pm = fe.check_point_masses(fe.cell_point_masses(cell), n)
    zones = node_zones_of(pf, sections, node_zones)

    cutoff_on = mode_cutoff is not None and method == "reduced" and sm > 0
    edge_check = bool(convergence_check) if edge_check is None else bool(edge_check)
    if mode_cutoff is not None and not (isinstance(mode_cutoff, (int, float)) and mode_cutoff >= 1):
        raise InputError("the strut-mode cutoff is a multiple of the top band, at least 1", input_name="mode_cutoff",
                         expected="a number >= 1 (e.g. 3) or None", got=repr(mode_cutoff))

    def mesh_of(n_el: int) -> int:
        return n_el + 1 if pm and n_el % 2 else n_el      # an added mass sits on the strut's middle node

    def operator(n_el: int, cutoff: float | None = None, modes: int | None = None) -> BlochOperator:
        n_el = mesh_of(n_el)
        if method == "full":
            return full_operator(pf, sections, n_elements=n_el, theory=theory, part=energy_group,
                                 supports=supports, point_masses=pm, end_zones=zones)
        return reduced_operator(pf, sections, n_elements=n_el, strut_modes=sm if modes is None else modes,
                                theory=theory, part=energy_group, supports=supports, point_masses=pm,
                                end_zones=zones, cutoff=cutoff)

    def compute() -> dict[str, np.ndarray]:
        out: dict[str, np.ndarray] = {}
        cutoff = None
        if cutoff_on:
            modes = strut_mode_frequencies(pf, sections, n_elements=mesh_of(n), strut_modes=sm, theory=theory,
                                           point_masses=pm, end_zones=zones)
            corners = np.unique(np.r_[0, np.flatnonzero(np.diff(wp.segment)), np.flatnonzero(np.diff(wp.segment)) + 1,
                                      len(wp.k) - 1])
            # the model with the lowest two modes per strut: its bands lie at or above those of any model
            # with more modes (Rayleigh-Ritz on nested bases), so the estimate errs towards keeping modes
            f_est = _bands_on(operator(n, modes=min(sm, 2)), wp.k[corners], nb, progress=None, desc="")[0]
            if not np.isfinite(f_est[:, -1]).any():      # too few DOFs for the bands asked: all the modes
                f_est = _bands_on(operator(n), wp.k[corners], nb, progress=None, desc="")[0]
            top_est = f_est[:, -1][np.isfinite(f_est[:, -1])]
            cutoff = float(mode_cutoff) * float(top_est.max()) if top_est.size else None
        op = operator(n, cutoff)
        f, e = _bands_on(op, wp.k, nb, progress=progress, desc="dispersion")
        fz = _bands_on(op, kz, nb, progress=progress, desc="zone")[0] if len(kz) else np.zeros((0, nb))
        if cutoff_on and cutoff is None:
            cutoff = float(modes.max())                   # no band estimate: every mode kept
        if cutoff_on:
            tops = np.vstack([f, fz])[:, -1]
            top = float(mode_cutoff) * float(tops[np.isfinite(tops)].max(initial=0.0))
            if np.any((modes > cutoff) & (modes <= top)):
                # the path's top band lies above the corners' estimate: keep the modes up to its multiple
                cutoff = top
                op = operator(n, cutoff)
                f, e = _bands_on(op, wp.k, nb, progress=progress, desc="dispersion")
                fz = _bands_on(op, kz, nb, progress=None, desc="")[0] if len(kz) else np.zeros((0, nb))
            out["cutoff"] = np.array([cutoff, int((modes <= cutoff).sum()), modes.size])
        out.update({"f": f, "e": e, "fz": fz, "n_reduced": np.array(op.n_reduced),
                    "n_full": np.array(6 * (len(pf.nodes) + len(pf.struts) * (n - 1)))})
        if edge_check and method == "reduced":
            f_all, k_all = np.vstack([f, fz]), np.vstack([wp.k, kz])
            rows = np.unique(_edge_rows(f_all)[0])
            full = full_operator(pf, sections, n_elements=mesh_of(n), theory=theory, part=None, supports=supports,
                                 point_masses=pm, end_zones=zones)
            ref = np.full((rows.size, nb), np.nan)
            with single_thread():
                for r_, i in enumerate(rows):
                    w2 = full.solve(k_all[i], nb)
                    ref[r_, :w2.size] = np.sqrt(w2) / (2 * np.pi)
            out["edge_check"] = np.stack([f_all[rows], ref], axis=0)
        if convergence_check and n > 1:
            op2 = operator(max(1, n // 2), cutoff)
            out["f_coarse"] = _bands_on(op2, wp.k, nb, progress=progress, desc="mesh check")[0]
            out["fz_coarse"] = _bands_on(op2, kz, nb, progress=None, desc="")[0] if len(kz) else np.zeros((0, nb))
        return out

    key = fingerprint("dispersion-v2", _cell_key(cell, materials), n, nb, path, pts, periodic, sm, method, zone,
                      zone_points, theory, energy_group, convergence_check,
                      {str(k): list(v) if not isinstance(v, str) else v for k, v in (supports or {}).items()},
                      *((("node-zones", node_zones),) if node_zones != "none" else ()),
                      *((("mode-cutoff", float(mode_cutoff)),) if cutoff_on else ()),
                      *((("edge-check",),) if edge_check and method == "reduced" else ()))
    data = cached_arrays(cache, key, compute)
    f, e, fz = data["f"], data["e"], data["fz"]
    both = np.vstack([f, fz]) if len(fz) else f
    gaps = [Gap(low=Q_(lo, "Hz"), high=Q_(hi, "Hz"), below=j) for lo, hi, j in find_gaps(both)]
    directional = {}
    for i in np.unique(wp.segment):
        sel = wp.segment == i
        a = wp.tick_labels[i].split("|")[-1]
        b = wp.tick_labels[i + 1].split("|")[0]
        directional[f"{a}-{b}"] = [Gap(low=Q_(lo, "Hz"), high=Q_(hi, "Hz"), below=j) for lo, hi, j in find_gaps(f[sel])]
    if "cutoff" in data:
        cut, kept, total = data["cutoff"]
        kept_desc = (f"the fixed-fixed modes up to {float(mode_cutoff):g} × the top computed band "
                     f"({format_quantity(Q_(float(cut), 'Hz'))}; {int(kept)} of the {int(total)} lowest {sm} per "
                     "strut)")
    else:
        kept_desc = f"{sm} fixed-fixed modes"
    mdesc = (f"{n} {theory} beam elements per strut; " + (
        f"each strut reduced to its end joints + {kept_desc} (Bloch mode synthesis)"
        if method == "reduced" else "full mesh, sparse shift-invert eigensolver")
        + ("; rigid node zones on the lattice struts (flexible length between them, rigid offsets to the "
           "joints, zone mass on the joints)" if zones is not None else ""))
    steps = [
        *section_steps,
        quantity_step(id=f"{id_prefix}.dofs", description="Degrees of freedom of the cell model before the "
                      "Bloch and strut reductions", value=Q_(int(data["n_full"]), ""), method=mdesc, sig=6,
                      source=fe.REDDY_1997),
        quantity_step(id=f"{id_prefix}.dofs-reduced", description="Degrees of freedom of each Bloch eigenproblem",
                      value=Q_(int(data["n_reduced"]), ""), method=mdesc, sig=6, source=KRATTIGER_HUSSEIN_2014),
        quantity_step(id=f"{id_prefix}.wave-vectors", description=f"Wave vectors along the path {path} "
                      f"(+ {len(kz)} sampling the irreducible zone, {zone})", value=Q_(len(wp.k) + len(kz), ""),
                      method="uniform spacing along each leg", source=SETYAWAN_CURTAROLO_2010, sig=6),
    ]
    if zones is not None:
        steps.append(quantity_step(
            id=f"{id_prefix}.node-zone", description="Rigid node zone, longest at a lattice strut end",
            value=Q_(float(zones.max()) * 1e3, "mm"), unit="mm", source=fe.RIGID_OFFSET,
            method="where the neighbouring struts (of this and the adjacent cells) stand out of the strut's surface, "
                   "(d_j + d_i cos θ)/(2 sin θ); the strut ends are tied to the joints by rigid offsets"))
    for gi, g in enumerate(gaps, start=1):
        j = g.below
        at_lo = np.nanargmax(both[:, j])
        at_hi = np.nanargmin(both[:, j + 1])
        e_both = np.vstack([e, np.full((len(fz), e.shape[1]), np.nan)]) if len(fz) else e
        share_lo = e_both[at_lo, j]
        share_hi = e_both[at_hi, j + 1]
        steps += [
            quantity_step(id=f"{id_prefix}.gap{gi}-low", description=f"Complete gap {gi}: lower edge (top of band "
                          f"{j + 1})", value=g.low, unit="Hz", method=mdesc, source=KRATTIGER_HUSSEIN_2014,
                          note=("lattice-strut share of kinetic energy at the edge mode: "
                                f"{share_lo:.0%}" if np.isfinite(share_lo) else "")),
            quantity_step(id=f"{id_prefix}.gap{gi}-high", description=f"Complete gap {gi}: upper edge (bottom of "
                          f"band {j + 2})", value=g.high, unit="Hz", method=mdesc, source=KRATTIGER_HUSSEIN_2014,
                          note=("lattice-strut share of kinetic energy at the edge mode: "
                                f"{share_hi:.0%}" if np.isfinite(share_hi) else "")),
            evaluate(RELATIVE_WIDTH, id=f"{id_prefix}.gap{gi}-relative-width", description=f"Complete gap {gi}: "
                     "width over mid-gap frequency", values={"f_low": g.low, "f_high": g.high}, unit="",
                     source=COMMON_PRACTICE, sig=3),
        ]
    if not gaps:
        steps.append(quantity_step(id=f"{id_prefix}.gap-count", description="Complete gaps among the bands "
                                   "computed", value=Q_(0, ""), method=mdesc, source=KRATTIGER_HUSSEIN_2014,
                                   note=f"no complete gap below band {nb}"))
    if "edge_check" in data:
        red_f, ref = data["edge_check"]
        # rigid-body branches (0 Hz at Γ) have no relative error to speak of
        ok = np.isfinite(red_f) & np.isfinite(ref) & (ref > 1e-3 * np.nanmax(ref))
        err = float(np.max(np.abs(red_f[ok] - ref[ok]) / ref[ok])) if ok.any() else 0.0
        where = "the complete gaps' edges" if gaps else f"the top of band {nb}"
        steps.append(quantity_step(
            id=f"{id_prefix}.reduction-error", description="Largest difference of the band frequencies between "
            f"the reduced model and the full strut mesh, at the wave vectors of {where}",
            value=Q_(100 * err, "percent"), unit="percent", sig=2,
            method=f"full mesh ({mesh_of(n)} elements per strut, sparse shift-invert) solved for all {nb} bands at "
                   f"{red_f.shape[0]} wave vectors; reduced model: {kept_desc}", source=KRATTIGER_HUSSEIN_2014))
    if "f_coarse" in data:
        fc = np.vstack([data["f_coarse"], data["fz_coarse"]]) if len(fz) else data["f_coarse"]
        coarse_mesh = f"{max(1, n // 2)} to {n} elements per strut"
        if gaps:
            coarse = {j: (lo, hi) for lo, hi, j in find_gaps(fc)}
            # one step per gap: a higher gap converging slowly must not hide a converged first gap
            for gi, g in enumerate(gaps, start=1):
                ref = np.array([g.low.magnitude, g.high.magnitude])
                c = coarse.get(g.below)
                change = float(np.max(np.abs(np.array(c) - ref) / ref)) if c is not None else np.inf
                steps.append(quantity_step(
                    id=f"{id_prefix}.gap{gi}-mesh-change", description=f"Complete gap {gi}: change of its edges "
                    f"from {coarse_mesh}", value=Q_(100 * change, "percent"), unit="percent",
                    method="mesh convergence check, same wave vectors", sig=2,
                    note="small change = the mesh is converged for this gap" if np.isfinite(change) else
                    "the gap is not found on the coarser mesh: refine the mesh"))
        else:
            change = float(np.nanmax(np.abs(fc[:, -1] - both[:, -1]) / np.maximum(both[:, -1], 1e-300)))
            steps.append(quantity_step(id=f"{id_prefix}.mesh-change", description=f"Change of band {nb} from "
                                       f"{coarse_mesh}", value=Q_(100 * change, "percent"), unit="percent",
                                       method="mesh convergence check, same wave vectors", sig=2,
                                       note="small change = the mesh is converged for these bands"))
    value = {"k": Q_(wp.s, "rad/m"), "frequencies": Q_(f, "Hz"), "gaps": gaps, "directional_gaps": directional,
             "strut_energy": e, "wave_vectors": Q_(wp.k, "rad/m")}
    return Dispersion(value=value, steps=tuple(steps), ticks=wp.ticks, tick_labels=wp.tick_labels,
                      n_dofs_full=int(data["n_full"]), n_dofs_reduced=int(data["n_reduced"]), method=method,
                      zone_frequencies=Q_(fz, "Hz"), node_zones=node_zones,
                      title="Bloch-wave dispersion of the lattice")


# --------------------------------------------------------------------------------------------
# band-edge mode shapes
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class ModeShape:
    """A Bloch mode on the joints and strut interiors of the cell (complex, real part shown)."""

    frequency: Any
    wave_vector: np.ndarray
    lines: np.ndarray
    displacement: np.ndarray
    strut_energy: float


def band_mode_shape(cell: Any, *, materials: Mapping[str, Any], wave_vector: Any, band: int,
                    n_elements: int = 8, periodic: str = "xyz", theory: str = "timoshenko",
                    energy_group: str = "lattice", full_mesh_limit: int = 60000,
                    node_zones: str = "none") -> ModeShape:
    """The mode of band ``band`` (0-based) at ``wave_vector`` [rad/m], on the full strut mesh.

    Solved on the full mesh (sparse) so the shape along every strut is the FE shape itself.
    ``lines`` (n_el, 2, 3) m are the elements, ``displacement`` (n_el, 2, 3) their end
    translations (real part, normalised to a largest value of 1).
    """
    pf = periodic_frame(cell, periodic=periodic)
    sections = fe.sections_for(cell, materials)
    k = np.asarray(Q_(wave_vector).to("rad/m").magnitude if hasattr(wave_vector, "to") else wave_vector, float)
    zones = node_zones_of(pf, sections, node_zones)
    op = full_operator(pf, sections, n_elements=n_elements, theory=theory, part=energy_group,
                       point_masses=fe.cell_point_masses(cell), end_zones=zones)
    w2, x = op.solve(k, band + 1, vectors=True)
    v = x[:, band]
    share = float(op.energy_fraction(k, v[:, None])[0])
    full = (op.P @ v) * op.phases(k)
    j = np.argmax(np.abs(full))
    full = full * np.exp(-1j * np.angle(full[j]))
    mesh = fe.mesh_frame(nodes=pf.nodes, struts=pf.struts, groups=pf.groups, n_elements=n_elements,
                         end_zones=zones)
    # the full operator drops massless joints: rebuild node displacements on the kept rows
    u = np.zeros(mesh.n_dofs, complex)
    kept = _kept_rows(pf, mesh)
    u[kept] = full
    trans = np.real(u.reshape(-1, 6)[:, :3])
    trans /= max(np.abs(trans).max(), 1e-300)
    lines = mesh.nodes[mesh.elements]
    disp = trans[mesh.elements]
    return ModeShape(frequency=Q_(np.sqrt(w2[band]) / (2 * np.pi), "Hz"), wave_vector=k, lines=lines,
                     displacement=disp, strut_energy=share)


def _kept_rows(pf: PeriodicFrame, mesh: fe.FrameMesh) -> np.ndarray:
    used = np.zeros(mesh.nodes.shape[0], bool)
    used[mesh.elements.ravel()] = True
    masters_used = np.zeros(len(pf.nodes), bool)
    masters_used[pf.master[np.flatnonzero(used[:len(pf.nodes)])]] = True
    node_kept = np.concatenate([masters_used[pf.master], used[len(pf.nodes):]])
    return (6 * np.flatnonzero(node_kept)[:, None] + np.arange(6)).ravel()


def mode_shapes_at_gap(cell: Any, result: Dispersion, *, materials: Mapping[str, Any], gap: int = 0,
                       **kwargs: Any) -> tuple[ModeShape, ModeShape]:
    """The two modes bounding complete gap ``gap`` of ``result`` (lower edge, upper edge).

    The node-zone model is the one ``result`` was computed with unless ``node_zones`` is given.
    """
    kwargs.setdefault("node_zones", getattr(result, "node_zones", "none"))
    gaps = result["gaps"]
    if not gaps:
        raise InputError("the dispersion has no complete gap", input_name="result", expected="a gap",
                         got="none")
    g = gaps[gap]
    f = result["frequencies"].magnitude
    kv = result["wave_vectors"].magnitude
    i_lo = int(np.nanargmax(f[:, g.below]))
    i_hi = int(np.nanargmin(f[:, g.below + 1]))
    return (band_mode_shape(cell, materials=materials, wave_vector=kv[i_lo], band=g.below, **kwargs),
            band_mode_shape(cell, materials=materials, wave_vector=kv[i_hi], band=g.below + 1, **kwargs))



# --------------------------------------------------------------------------------------------
# flat branches: strut resonances that barely propagate
# --------------------------------------------------------------------------------------------
def flat_branches(disp: Dispersion, *, spread: float = 0.03, dwell: float = 0.3, share: float = 0.7,
                  id_prefix: str = "bloch.flat") -> CalcResult:
    """Plateaus of the computed bands: frequencies where branches stay nearly constant over the path.

    A band dwells on a plateau when at least ``dwell`` of the path's wave vectors lie within ±``spread``/2
    (relative) of one frequency, with at least ``share`` of the kinetic energy in the lattice struts.
    Plateaus of several bands within the same window are merged into one cluster: strut resonances
    (clamped–clamped, clamped–pinned where a node can rotate, pinned–pinned) at a nearly fixed
    frequency.  A cluster need not open a complete gap, but a measured peak near it meets strongly
    resonating struts.  ``value`` is a list of ``(low Hz, high Hz, bands, mean share)``, lowest first.
    """
    f = np.asarray(disp["frequencies"].to("Hz").m)
    e = np.asarray(disp["strut_energy"])
    found = []
    for j in range(f.shape[1]):
        col = f[:, j]
        ok = np.isfinite(col) & (col > 0)
        if ok.sum() < 4:
            continue
        vals = np.sort(col[ok])
        # the densest window of relative width ``spread`` along this band
        k = np.searchsorted(vals, vals * (1 + spread), side="right") - np.arange(vals.size)
        i = int(np.argmax(k))
        if k[i] >= dwell * col.size:
            sel = ok & (col >= vals[i]) & (col <= vals[i] * (1 + spread))
            sh = float(np.mean(e[sel, j]))
            if sh >= share:
                found.append([float(col[sel].min()), float(col[sel].max()), [j], sh])
    found.sort(key=lambda r: r[0])
    merged: list[list] = []
    for lo, hi, bands, sh in found:
        if merged and lo <= merged[-1][1] * (1 + spread):
            m = merged[-1]
            m[3] = (m[3] * len(m[2]) + sh * len(bands)) / (len(m[2]) + len(bands))
            m[1], m[2] = max(m[1], hi), m[2] + bands
        else:
            merged.append([lo, hi, bands, sh])
    out = [(lo, hi, tuple(b + 1 for b in bands), sh) for lo, hi, bands, sh in merged]
    steps = []
    if out:
        lo, hi, bands, sh = out[0]
        steps.append(quantity_step(id=f"{id_prefix}.lowest", description="Lowest plateau of the computed bands "
                                   "(a strut-resonance cluster)", value=Q_([lo, hi], "Hz"), unit="Hz",
                                   method=f"bands {', '.join(map(str, bands))} dwell there over at least "
                                   f"{100 * dwell:g} % of the path; {100 * sh:.0f} % of their kinetic energy in the "
                                   "lattice struts", source=KRATTIGER_HUSSEIN_2014))
    steps.append(quantity_step(id=f"{id_prefix}.count", description="Plateaus (strut-resonance clusters) found",
                               value=Q_(len(out), ""), sig=3, source=COMMON_PRACTICE,
                               method=f"window ±{50 * spread:g} %, dwell >= {dwell:g} of the path, lattice energy "
                               f"share >= {share:g}"))
    return CalcResult(value=out, steps=tuple(steps), title="Plateaus of the bands: strut-resonance clusters")
