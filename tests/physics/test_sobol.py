"""Scrambled Sobol' points (latticecalc.physics.sobol) against scipy.stats.qmc.Sobol, bit for bit.

Sources: S. Joe and F. Y. Kuo, "Constructing Sobol sequences with better two-dimensional projections",
SIAM J. Sci. Comput. 30, 2008 (direction numbers); J. Matoušek, "On the L2-discrepancy for anchored
boxes", J. Complexity 14, 1998 (linear matrix scrambling and digital shift); scipy.stats.qmc.Sobol as
the reference implementation (general-purpose reference library).
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy.stats import qmc

from latticecalc.physics.sobol import direction_numbers, scrambled_sobol


def test_direction_numbers_are_scipys_unscrambled_ones():
    reference = qmc.Sobol(d=3, scramble=False)._sv.astype(np.uint64)
    assert np.array_equal(direction_numbers(3), reference)


def test_first_direction_numbers_by_hand():
    """Joe & Kuo 2008: dimension 2 (x + 1, m = 1): m = 1, 3, 5, 15; dimension 3 (x² + x + 1, m = 1, 3): 1, 3, 3, 9."""
    v = direction_numbers(3, bits=4)
    assert v[0].tolist() == [8, 4, 2, 1]
    assert v[1].tolist() == [1 << 3, 3 << 2, 5 << 1, 15]
    assert v[2].tolist() == [1 << 3, 3 << 2, 3 << 1, 9]


@pytest.mark.parametrize("seed", [0, 7, 12345, 2026])
@pytest.mark.parametrize("n", [1, 2, 5, 1000, 4096, 20000])
@pytest.mark.parametrize("d", [1, 2, 3])
def test_points_equal_scipys_bit_for_bit(seed, n, d):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)   # scipy warns when n is not a power of 2
        reference = qmc.Sobol(d=d, scramble=True, seed=seed).random(n)
    assert np.array_equal(scrambled_sobol(n, d, seed), reference)


def test_points_fill_the_cube_evenly():
    """A (0, m, s)-net property, loosely: 4096 points put 512 in each octant of the unit cube."""
    x = scrambled_sobol(4096, 3, seed=3)
    octant = (x >= 0.5).astype(int) @ np.array([1, 2, 4])
    assert np.bincount(octant, minlength=8).tolist() == [512] * 8
    assert x.min() >= 0.0 and x.max() < 1.0


def test_four_dimensions_are_refused():
    with pytest.raises(ValueError, match="1 to 3"):
        scrambled_sobol(8, 4, seed=0)
