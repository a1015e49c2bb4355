"""A column carrying many identical resonators: the locally resonant band f_t … f_t √(1 + μ).

Reference: Sugino, C., Xia, Y., Leadenham, S., Ruzzene, M. & Erturk, A., "A general theory for
bandgap estimation in locally resonant metastructures", *J. Sound Vib.* 406 (2017) 104–123: for a
structure carrying many identical resonators of frequency f_t and total mass μ times its own, the
band with no natural frequencies (in the limit of many resonators) runs from f_t to f_t √(1 + μ),
whatever the kind of vibration.  Here the host is the kit's FE column (axial and bending, the
receiver's own elements and assembly) with resonators spread evenly along it.  Units: SI, Hz.
"""

import numpy as np
import pytest

from latticecalc import Q_, materials
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import receiver
from latticecalc.physics.column import Column, column_properties

#: a finite number of resonators leaves the band edges a little blurred; Sugino et al. (2017) show the
#: edges converge as resonators are added.  Tolerance on the edges (common practice for 60 resonators)
EDGE_RTOL = 0.03
N_RES = 60

CONCRETE = materials.Material(name="concrete (test)", youngs_modulus=Q_(33, "GPa"), poissons_ratio=0.2,
                              density=Q_(2400, "kg/m^3"), loss_factor=0.0)


def column_with_resonators(*, mu: float, f_t: float, axis: int):
    col = Column(shape="rectangular", width=Q_(400, "mm"), depth=Q_(400, "mm"), height=Q_(3.5, "m"),
                 material=CONCRETE, head_mass=Q_(0.0, "kg"), head="free")
    sec = column_properties(col).section
    n_el = N_RES
    z = np.linspace(0.0, 3.5, n_el + 1)
    nodes = np.column_stack([np.zeros_like(z), np.zeros_like(z), z])
    Kl, Ml = fe.local_element_matrices(np.diff(z), [sec] * n_el, "euler-bernoulli")
    T = fe._transform(fe.rotations(nodes[:-1], nodes[1:]))
    Kg = np.einsum("eki,ekl,elj->eij", T, Kl, T)
    Mg = np.einsum("eki,ekl,elj->eij", T, Ml, T)
    ent = receiver.Entries()
    el = np.column_stack([np.arange(n_el), np.arange(1, n_el + 1)])
    ent.blocks((6 * el[:, :, None] + np.arange(6)).reshape(-1, 12), Kg, Mg, np.zeros(n_el))
    host_mass = sec.rho * sec.A * 3.5
    m_r = mu * host_mass / N_RES
    k_r = m_r * (2 * np.pi * f_t) ** 2
    n_col = 6 * (n_el + 1)
    res = n_col + np.arange(N_RES)                       # one DOF per resonator, along ``axis``
    host_dofs = 6 * np.arange(1, n_el + 1) + axis        # nodes 1..n_el (the base is fixed)
    spring = np.array([[1.0, -1.0], [-1.0, 1.0]])
    ent.blocks(np.column_stack([host_dofs, res]), np.repeat((k_r * spring)[None], N_RES, 0),
               np.zeros((N_RES, 2, 2)), np.zeros(N_RES))
    ent.blocks(res[:, None], np.zeros((N_RES, 1, 1)), np.full((N_RES, 1, 1), m_r), np.zeros(N_RES))
    n = n_col + N_RES
    K, M = ent.matrices(n)
    free = np.arange(6, n)
    w2, _ = fe.lowest_modes(K[free][:, free], M[free][:, free], 200, hermitian_dense_limit=5000)
    return np.sqrt(w2) / (2 * np.pi)


# f_t well above the column's first axial (265 Hz) and bending (15 Hz) modes: the band edges are sharp
# when the host's modes lie well below the tuning (Sugino et al. 2017, the modal neighbourhood)
@pytest.mark.parametrize(("axis", "f_t"), [(2, 1000.0), (1, 120.0)])
@pytest.mark.parametrize("mu", [0.1, 0.3])
def test_no_natural_frequency_inside_the_band(axis, f_t, mu):
    f = column_with_resonators(mu=mu, f_t=f_t, axis=axis)
    upper = f_t * np.sqrt(1 + mu)                          # Sugino et al. 2017, the band's upper edge
    inside = f[(f > f_t * (1 + EDGE_RTOL)) & (f < upper * (1 - EDGE_RTOL))]
    assert inside.size == 0, f"modes inside the band: {inside}"
    below = f[f <= f_t * (1 + EDGE_RTOL)].max()
    above = f[f >= upper * (1 - EDGE_RTOL)].min()
    assert below == pytest.approx(f_t, rel=EDGE_RTOL)
    assert above == pytest.approx(upper, rel=EDGE_RTOL)


def test_kit_shown_band_formula_is_sugino():
    # the step the package shows evaluates f_t √(1 + μ) (Sugino et al. 2017)
    up = receiver.SUGINO_UPPER.evaluate({"f_t": Q_(40.0, "Hz"), "mu": Q_(0.21, "")})
    assert float(up.to("Hz").m) == pytest.approx(40.0 * np.sqrt(1.21), rel=1e-12)
