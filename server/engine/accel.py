"""Compiled kernels (numba), switched on by long-running processes.

A worker that recomputes hundreds of fields spends about 30 % less engine time with the
compiled history-match loops (:mod:`.aquifer.compiled`) and two-tank march
(:mod:`.compartments.two_tank_sensitivity`); importing numba and loading the compiled code
costs about a second, which a one-field process (``tankbook analyse``, target 1.5 s) would not
win back. So the numpy and Python paths are the default and the reference, and ``tankbook
worker``, ``tankbook recompute`` and ``tankbook serve`` with its own job thread call
:func:`enable` (issue 17). Both paths give the same results to the solvers' tolerances
(tests/engine/aquifer/test_compiled.py, tests/engine/compartments/test_two_tank_march.py)."""

from __future__ import annotations

_state = {"enabled": False}
_compiled: dict = {}


def enable() -> bool:
    """Use the compiled kernels from now on in this process; False when numba is missing."""
    try:
        import numba  # noqa: F401
    except ImportError:  # pragma: no cover - numba is a dependency; a broken install falls back
        return False
    _state["enabled"] = True
    return True


def disable() -> None:
    """Back to the numpy and Python paths (tests compare the two)."""
    _state["enabled"] = False


def enabled() -> bool:
    return _state["enabled"]


def compiled(func):
    """``func`` compiled by numba (nopython, cached on disk beside its module), made once."""
    fn = _compiled.get(func)
    if fn is None:
        from numba import njit

        fn = _compiled[func] = njit(cache=True, nogil=True)(func)
    return fn
