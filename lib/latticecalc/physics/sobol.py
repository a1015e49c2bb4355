"""Scrambled Sobol' points in up to three dimensions, without importing ``scipy.stats``.

The geometric relative density samples each strut with a scrambled Sobol' sequence in three
dimensions. ``scipy.stats.qmc.Sobol`` gives it, but importing ``scipy.stats`` costs a kernel about
0.8 s, more than the whole sampling. This module builds the same points:

* direction numbers of the first three dimensions from Joe & Kuo's table (S. Joe and F. Y. Kuo,
  "Constructing Sobol sequences with better two-dimensional projections", SIAM J. Sci. Comput. 30,
  2008: dimension 1 is van der Corput's, dimensions 2 and 3 have the primitive polynomials x + 1 and
  x² + x + 1 with initial numbers m = 1 and m = 1, 3);
* linear matrix scrambling with a random digital shift (J. Matoušek, "On the L2-discrepancy for
  anchored boxes", J. Complexity 14, 1998): each direction number is multiplied over GF(2) by a
  random lower-triangular matrix with unit diagonal, and every point is XOR-ed with a random shift;
* points in Gray-code order, the first point being the shift itself.

The random bits come from ``numpy.random.default_rng(seed)`` in the order scipy draws them (the
shift's bits, then the matrices), so a seed gives the points ``scipy.stats.qmc.Sobol(d, scramble=True,
seed=seed).random(n)`` gives, bit for bit; ``tests/physics/test_sobol.py`` checks that.
"""

from __future__ import annotations

import numpy as np

#: Binary digits of each coordinate (scipy's default).
BITS = 30

#: (degree s, polynomial coefficients a, initial direction numbers m) of dimensions 2 and 3 (Joe & Kuo 2008).
_POLYNOMIALS = ((1, 0, (1,)), (2, 1, (1, 3)))


def direction_numbers(d: int, bits: int = BITS) -> np.ndarray:
    """Unscrambled direction numbers v[dim, j] = m_j 2^(bits − 1 − j) of the first ``d`` ≤ 3 dimensions."""
    if not 1 <= d <= 1 + len(_POLYNOMIALS):
        raise ValueError(f"Sobol' points here have 1 to {1 + len(_POLYNOMIALS)} dimensions, not {d}")
    v = np.zeros((d, bits), dtype=np.uint64)
    for dim in range(d):
        if dim == 0:
            m = [1] * bits
        else:
            s, a, initial = _POLYNOMIALS[dim - 1]
            m = list(initial)
            for k in range(s, bits):   # m_k = 2 a_1 m_(k−1) ⊕ … ⊕ 2^s m_(k−s) ⊕ m_(k−s)
                new = m[k - s] ^ (m[k - s] << s)
                for i in range(1, s):
                    if (a >> (s - 1 - i)) & 1:
                        new ^= m[k - i] << i
                m.append(new)
        v[dim] = [m[j] << (bits - 1 - j) for j in range(bits)]
    return v


def _digits(v: np.ndarray, bits: int) -> np.ndarray:
    """Binary digits, most significant first: out[..., k] = digit k of v."""
    shifts = np.arange(bits - 1, -1, -1, dtype=np.uint64)
    return ((v[..., None] >> shifts) & np.uint64(1)).astype(np.int64)


def _from_digits(digits: np.ndarray, bits: int) -> np.ndarray:
    weights = np.uint64(1) << np.arange(bits - 1, -1, -1, dtype=np.uint64)
    return (digits.astype(np.uint64) * weights).sum(axis=-1, dtype=np.uint64)


def scrambled_sobol(n: int, d: int, seed: int, bits: int = BITS) -> np.ndarray:
    """``n`` scrambled Sobol' points in [0, 1)^d (an n × d array) for the integer ``seed``."""
    if n < 0:
        raise ValueError(f"the number of points must not be negative, got {n}")
    rng = np.random.default_rng(seed)
    shift_bits = rng.integers(2, size=(d, bits), dtype=np.uint32)           # bit j of each shift, lowest first
    lower = np.tril(rng.integers(2, size=(d, bits, bits), dtype=np.uint32)).astype(np.int64)
    idx = np.arange(bits)
    lower[:, idx, idx] = 1                                                   # unit diagonal: L is invertible
    shift = (shift_bits.astype(np.uint64) << np.arange(bits, dtype=np.uint64)).sum(axis=1, dtype=np.uint64)
    v = direction_numbers(d, bits)
    # scrambled v_j = L v_j over GF(2), on the digits (most significant first)
    scrambled = _from_digits(np.einsum("dik,djk->dji", lower, _digits(v, bits)) % 2, bits)
    k = np.arange(n, dtype=np.uint64)
    gray = k ^ (k >> np.uint64(1))
    x = np.repeat(shift[None, :], n, axis=0)
    for j in range(bits):
        on = ((gray >> np.uint64(j)) & np.uint64(1)).astype(bool)
        x[on] ^= scrambled[:, j]
    return x * (1.0 / 2 ** bits)
