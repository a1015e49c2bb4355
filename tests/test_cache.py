"""Disk cache keyed by a SHA-256 fingerprint of the inputs."""

from __future__ import annotations

import numpy as np
import pytest

from latticecalc import Q_
from latticecalc.cache import DEFAULT_FOLDER, cached_arrays, fingerprint, resolve_folder
from latticecalc.errors import InputError


def test_fingerprint_depends_on_values_not_on_units():
    a = fingerprint(Q_(40, "mm"), {"n": 8, "path": "G-X"}, np.arange(3))
    assert a == fingerprint(Q_(0.04, "m"), {"path": "G-X", "n": 8}, np.arange(3))
    assert a != fingerprint(Q_(41, "mm"), {"n": 8, "path": "G-X"}, np.arange(3))
    assert a != fingerprint(Q_(40, "mm"), {"n": 9, "path": "G-X"}, np.arange(3))
    assert len(a) == 64                                   # SHA-256 hex digest


def test_second_call_reads_the_cache(tmp_path):
    calls = []

    def compute():
        calls.append(1)
        return {"f": np.array([1.0, 2.0])}

    first = cached_arrays(tmp_path, "key", compute)
    second = cached_arrays(tmp_path, "key", compute)
    assert len(calls) == 1
    np.testing.assert_array_equal(second["f"], first["f"])
    assert [p.name for p in tmp_path.iterdir()] == ["key.npz"]


def test_no_cache_and_default_folder(tmp_path, monkeypatch):
    assert resolve_folder(None) is None and resolve_folder(False) is None
    monkeypatch.chdir(tmp_path)
    assert resolve_folder(True) == tmp_path / DEFAULT_FOLDER
    with pytest.raises(InputError, match="cache"):
        resolve_folder(3.5)


def test_a_complex_quantity_keeps_its_phase_in_the_fingerprint():
    # common practice: a key covers every number the result depends on (a transmissibility is a phasor)
    assert fingerprint(Q_(np.array([1 + 1j]), "")) != fingerprint(Q_(np.array([1 - 1j]), ""))
    assert fingerprint(Q_(np.array([1.0, 2.0]), "m")) == fingerprint(Q_(np.array([1000.0, 2000.0]), "mm"))


def test_fields_left_out_of_equality_are_left_out_of_the_fingerprint():
    import dataclasses

    @dataclasses.dataclass(frozen=True)
    class Value:
        x: float
        read_from: str = dataclasses.field(default="", compare=False)

    assert fingerprint(Value(1.0, "a.toml")) == fingerprint(Value(1.0, "b.toml"))
    assert fingerprint(Value(1.0)) != fingerprint(Value(2.0))


def test_a_formula_expression_is_fingerprinted_by_its_structure():
    import sympy as sp

    a, b = sp.symbols("a b")
    assert fingerprint(a * b) == fingerprint(b * a)
    assert fingerprint(a * b) != fingerprint(a + b)
