"""Compiled kernels: when they are used, and the decorator that compiles them.

The event loop's hot functions (nearest hit, interface frame, child fields) have two
implementations behind one array signature: the numpy reference (always present,
readable, the oracle of the kernel tests) and a per-ray loop compiled by numba
(``numba.njit``, cached on disk so that only the first process pays the compile time).
The compiled path is used when numba imports and ``TRACER_KERNELS`` is not ``numpy``;
:func:`use_compiled` switches it for a block (tests compare the two paths).

Kernels are compiled without ``fastmath`` (IEEE semantics, no reassociation or fused
multiply-add), so they follow the numpy reference's order of operations.
"""

from __future__ import annotations

import contextlib
import os

try:  # pragma: no cover - depends on the platform's wheels
    import numba as _numba
except Exception:  # numba missing or broken: the numpy reference paths are used
    _numba = None

__all__ = ["available", "compiled", "use_compiled", "njit"]

#: Whether numba could be imported.
available = _numba is not None
_state = {"on": available and os.environ.get("TRACER_KERNELS", "compiled").lower() != "numpy"}


def compiled() -> bool:
    """True when the event loop uses the compiled kernels."""
    return _state["on"]


@contextlib.contextmanager
def use_compiled(flag: bool):
    """Use (or not) the compiled kernels inside a ``with`` block.

    Examples
    --------
    >>> with use_compiled(False):
    ...     compiled()
    False
    """
    old = _state["on"]
    _state["on"] = bool(flag) and available
    try:
        yield
    finally:
        _state["on"] = old


def njit(fn):
    """Compile ``fn`` with numba (cached, GIL released); unchanged when numba is missing.

    The compiled code is cached next to the sources, or in the user's cache folder
    (``NUMBA_CACHE_DIR``) when the installation is read-only; where neither can be
    written the kernels are compiled afresh in each process.
    """
    if _numba is None:
        return fn
    try:
        return _numba.njit(cache=True, nogil=True, error_model="numpy")(fn)
    except RuntimeError:  # no writable cache location
        return _numba.njit(nogil=True, error_model="numpy")(fn)
