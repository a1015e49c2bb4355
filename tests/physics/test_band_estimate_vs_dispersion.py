"""The hand band estimate against the computed complete gap, on cells of several kinds.

The hand lower edge is the clamped–clamped strut mode (Rao, Mechanical Vibrations, 6th ed. 2017,
eq. 8.82, Table 8.1); the upper edge is the mass-in-mass edge ω₀ √(1 + m₂/m₁) (Huang, Sun & Huang,
Int. J. Eng. Sci. 47 (2009) 610–617) with m₂ the strut modal mass driven across the struts (direction
weight, derived).  The reference is the kit's Bloch-wave model (Krattiger & Hussein 2014 reduction),
itself checked against outside solutions in tests/validation.  Agreement reached (recorded in
DEVELOPERS.md): lower edges within 5 % on every cell; upper edges within 5 % on framed bcc cells,
within 15 % on framed octet and fcc cells; on an unframed cell the upper edge is 30 % high (the
lattice is its own host) and the sheet uses the computed gap.  The estimate is always above the
computed edges here, so a coverage verdict resting on it alone is marked preliminary.
"""

import warnings

import pytest

from latticecalc import Q_, materials
from latticecalc.physics.bands import band_estimate_for_cell
from latticecalc.physics.bloch import dispersion
from latticecalc.physics.cells import build_cell

pytestmark = pytest.mark.slow

TPU = materials.get("tpu-90a-printed")
CFRP = materials.get("cfrp-tube-qi")
PLA = materials.get("pla-printed")

#: (kind, a mm, d mm, frame d mm or None, frame material, bands, lower tol, upper tol) — tolerances
#: are the agreement this estimate reaches (common practice for a hand estimate: 5 % on the strut mode)
CASES = [
    ("bcc", 350, 24.6, 8, CFRP, 20, 0.05, 0.05),
    ("bcc", 120, 6, 4, CFRP, 20, 0.05, 0.05),
    ("bcc", 200, 10, 6, CFRP, 20, 0.05, 0.05),
    ("octet", 100, 6, 8, CFRP, 90, 0.05, 0.15),
    ("fcc", 100, 5, 6, CFRP, 60, 0.05, 0.15),
    ("bcc", 100, 8, None, None, 30, 0.05, None),
]


@pytest.mark.parametrize(("kind", "a", "d", "df", "fm", "bands", "tol_lo", "tol_hi"), CASES)
def test_hand_band_against_computed_gap(kind, a, d, df, fm, bands, tol_lo, tol_hi):
    warnings.simplefilter("ignore")
    cell = build_cell(kind, cell_width=Q_(a, "mm"), strut_diameter=Q_(d, "mm"),
                      frame_diameter=Q_(df, "mm") if df else None)
    mats = {"lattice": TPU} | ({"frame": fm} if df else {})
    est = band_estimate_for_cell(cell=cell, lattice_material=TPU, frame_material=fm)
    lo, hi = est.value["f_low"].to("Hz").m, est.value["f_high"].to("Hz").m
    disp = dispersion(cell, materials=mats, n_bands=bands, points=30, zone_points=2, convergence_check=False)
    # the computed gap the estimate describes: the widest one that overlaps the hand band
    gaps = [(g.low.to("Hz").m, g.high.to("Hz").m) for g in disp["gaps"]]
    near = [g for g in gaps if g[1] > lo * 0.8 and g[0] < hi]
    assert near, f"no computed gap near the hand band {lo:.4g}-{hi:.4g} Hz: {gaps}"
    g_lo, g_hi = max(near, key=lambda g: g[1] - g[0])
    assert lo == pytest.approx(g_lo, rel=tol_lo)
    assert lo >= g_lo and hi >= g_hi                      # the estimate sits above the computed edges
    if tol_hi is not None:
        assert hi == pytest.approx(g_hi, rel=tol_hi)
    else:
        assert hi > 1.2 * g_hi                            # unframed: the estimate is not to be relied on
