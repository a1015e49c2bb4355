"""latticecalc: unit-aware calculation kit for strut-lattice vibration absorber panels.

``from latticecalc import ureg, Q_`` gives the kit's one pint registry and its Quantity.
They are loaded on first use (PEP 562), so that ``import latticecalc`` and the command line's
``--help`` do not pay for pint and numpy.
"""

__version__ = "0.1.0"

__all__ = ["Q_", "__version__", "ureg"]


def __getattr__(name: str):
    if name in ("ureg", "Q_"):
        from latticecalc import units

        value = globals()[name] = getattr(units, name)
        return value
    raise AttributeError(f"module 'latticecalc' has no attribute {name!r}")
