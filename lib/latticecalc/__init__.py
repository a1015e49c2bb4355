"""latticecalc: unit-aware calculation kit for strut-lattice vibration absorber panels.

``from latticecalc import ureg, Q_`` gives the kit's one pint registry and its Quantity.
"""

from latticecalc.units import Q_, ureg

__version__ = "0.1.0"

__all__ = ["Q_", "__version__", "ureg"]
