"""One BLAS thread for loops of many small dense solves, set once per loop.

Many small dense eigen- and linear solves run faster on one thread than with two threads
competing for a shared CPU.  ``threadpoolctl`` finds the loaded BLAS libraries by scanning the
process; doing that for every wave vector or frequency cost 10–15 ms a call.  One controller,
created at the first use and kept, makes entering the limit cheap; callers enter it once around
a whole solve loop (energy fractions and condensation included).
"""

from __future__ import annotations

import contextlib
from typing import Any

_CONTROLLER: Any = None


def _controller() -> Any:
    global _CONTROLLER
    if _CONTROLLER is None:
        from threadpoolctl import ThreadpoolController

        _CONTROLLER = ThreadpoolController()
    return _CONTROLLER


def single_thread():
    """Context limiting BLAS to one thread for the loop it wraps (a no-op without threadpoolctl)."""
    try:
        ctl = _controller()
    except ImportError:  # pragma: no cover - threadpoolctl is a dependency
        return contextlib.nullcontext()
    return ctl.limit(limits=1, user_api="blas")
