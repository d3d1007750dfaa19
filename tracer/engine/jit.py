"""Compiled kernels: when they are used, and the decorator that compiles them.

The event loop's hot functions (nearest hit, interface frame, child fields) have two
implementations behind one array signature: the numpy reference (always present,
readable, the oracle of the kernel tests) and a per-ray loop compiled by numba
(``numba.njit``, cached on disk so that only the first process pays the compile time).
The compiled path is used when numba imports and ``TRACER_KERNELS`` is not ``numpy``;
:func:`use_compiled` switches it for a block (tests compare the two paths).

Kernels are compiled without ``fastmath`` (IEEE semantics, no reassociation or fused
multiply-add), so they follow the numpy reference's order of operations.

Kernel cache
------------
The compiled code of tracer's kernels is cached in a per-user folder, never inside the
installed package: ``$NUMBA_CACHE_DIR`` when it is set (numba's own setting, honoured
for every numba function), else :func:`cache_dir` (``$XDG_CACHE_HOME/tracer/numba``, by
default ``~/.cache/tracer/numba``; ``%LOCALAPPDATA%\\tracer\\numba`` on Windows,
``~/Library/Caches/tracer/numba`` on macOS), one sub-folder per source folder (so two
checkouts do not share entries). Only tracer's own kernels are redirected (a cache
locator registered with numba for files of this package); other numba code in the
same process keeps numba's defaults. Where the folder cannot be written the kernels are
compiled afresh in each process.
"""

from __future__ import annotations

import contextlib
import os
import sys
from pathlib import Path

try:  # pragma: no cover - depends on the platform's wheels
    import numba as _numba
except Exception:  # numba missing or broken: the numpy reference paths are used
    _numba = None

__all__ = ["available", "compiled", "use_compiled", "njit", "cache_dir"]

#: The package folder: kernels defined below it are cached in :func:`cache_dir`.
_PACKAGE = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def cache_dir() -> Path:
    """Folder of tracer's compiled-kernel cache (module docstring, "Kernel cache")."""
    given = os.environ.get("NUMBA_CACHE_DIR")
    if given:
        return Path(given)
    if sys.platform == "win32":
        base = os.environ.get("LOCALAPPDATA") or os.path.join(os.path.expanduser("~"), "AppData", "Local")
    elif sys.platform == "darwin":
        base = os.path.join(os.path.expanduser("~"), "Library", "Caches")
    else:
        base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "tracer" / "numba"


def _register_cache_locator() -> bool:
    """Put tracer's kernels in :func:`cache_dir` (first in numba's locator list)."""
    try:
        from numba.core import caching
    except Exception:  # pragma: no cover - other numba layout: numba's defaults
        return False
    base = getattr(caching, "_CacheLocator", None)
    mixin = getattr(caching, "_SourceFileBackedLocatorMixin", None)
    impl = getattr(caching, "CacheImpl", None)
    if base is None or mixin is None or impl is None or not hasattr(impl, "_locator_classes"):
        return False  # pragma: no cover

    class TracerCacheLocator(mixin, base):
        """Cache of a kernel defined in the tracer package: the per-user folder."""

        def __init__(self, py_func, py_file):
            self._py_file = py_file
            self._lineno = py_func.__code__.co_firstlineno
            self._cache_path = os.path.join(os.fspath(cache_dir()),
                                            self.get_suitable_cache_subpath(py_file))

        def get_cache_path(self):
            return self._cache_path

        @classmethod
        def from_function(cls, py_func, py_file):
            path = os.path.abspath(py_file)
            if os.path.commonpath([path, _PACKAGE]) != _PACKAGE:
                return None  # not ours: numba's own locators decide
            return super().from_function(py_func, py_file)

    classes = impl._locator_classes
    if not any(getattr(c, "__name__", "") == "TracerCacheLocator" for c in classes):
        classes.insert(0, TracerCacheLocator)
    return True


_LOCATOR = _numba is not None and _register_cache_locator()

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

    The compiled code is cached in the per-user folder :func:`cache_dir` (module
    docstring); where it cannot be written the kernels are compiled afresh in each process.
    """
    if _numba is None:
        return fn
    try:
        return _numba.njit(cache=True, nogil=True, error_model="numpy")(fn)
    except RuntimeError:  # no writable cache location
        return _numba.njit(nogil=True, error_model="numpy")(fn)
