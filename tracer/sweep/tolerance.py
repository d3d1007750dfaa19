"""Monte Carlo tolerancing: random perturbations, yield, worst trials, sensitivities.

Tolerances
----------
A tolerance perturbs one scene value (or several together) by a random amount added to
its nominal value, in the value's own unit:

* ``normal``: Gaussian with standard deviation ``sigma``;
* ``uniform``: uniform on ``[-half_width, +half_width]``.

In a scene file, next to the design (the loader never sees this table: it is read and
removed before loading)::

    [tolerances.gap]
    key = "solids.upper.mate.gap"        # any key path (tracer.sweep.keypath)
    dist = "normal"
    sigma = "0.05 um"

    [tolerances.tilt]
    key = "solids.penta.rotation[2]"     # or a list of keys moved by one draw
    dist = "uniform"
    half_width = "0.5 deg"

    [tolerances.index]
    index = "glass"                      # delta-n of a material (see below)
    dist = "normal"
    sigma = 0.0005

or on the command line: ``--tol KEYPATH normal SIGMA`` / ``--tol KEYPATH uniform HALF``.
Values without a key in the file (a rotation left at its default, a mate without
``gap``) start from zero.

Index tolerances add ``delta n`` to a material defined in the scene: the ``n`` of a
``constant`` model or the ``A`` term of a ``cauchy`` model (``n = A + B/l^2 + ...``, so
adding to ``A`` is an additive delta-n at every wavelength). Catalog materials,
Sellmeier and tabulated models cannot take an additive delta-n from the file: declare
the glass as a constant or Cauchy material in ``[materials]`` to tolerance its index.

Trials and seeds
----------------
Trial ``i`` draws tolerance ``k`` from ``default_rng(SeedSequence(seed, spawn_key=(i,
k)))`` with ``seed`` the scene seed (or ``seed=``): the draws depend on the trial and the
tolerance only, not on the worker count, the backend or the other tolerances. Every
trial traces with the scene seed (common random numbers, see
:mod:`tracer.sweep.runner`).

Results
-------
* **Yield**: the fraction of trials in which every requirement of the scene passes
  (and per requirement).
* **Worst trials**: smallest normalised margin over the requirements, ``(value -
  limit)/|limit|`` for a minimum and ``(limit - value)/|limit|`` for a maximum.
* **Sensitivity** (:meth:`ToleranceResult.sensitivity`): for each result column, the
  Spearman rank correlation ``rho_k`` of every tolerance's drawn perturbation with the
  result over the trials; ``rho_k^2`` normalised to sum 1 is the ranking ("share").
  For independent perturbations and a monotonic response, ``rho_k^2`` approximates the
  fraction of the result's variance due to tolerance ``k`` (Saltelli et al., "Global
  Sensitivity Analysis: The Primer", Wiley 2008, ch. 1; recalled from memory). A
  response that is even about the nominal (e.g. a loss that grows for either sign of
  a tilt) has ``rho ~ 0``; :func:`one_at_a_time` gives the complementary local view:
  each tolerance moved by +-1 standard deviation alone, the others nominal.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import TracerError
from .keypath import KeyPathError, add_quantity, get_value, parse, split_quantity, with_values
from .parallel import Backend, parallel_map
from .tolerance_result import ToleranceResult, spearman
from .runner import check_errors, document_of, make_task, run_options, run_task

__all__ = ["Tolerance", "ToleranceError", "read_tolerances", "parse_tol_option", "tolerance_run",
           "ToleranceResult", "one_at_a_time", "spearman", "DISTRIBUTIONS"]

DISTRIBUTIONS = ("normal", "uniform")


class ToleranceError(TracerError, ValueError):
    """A malformed tolerance (distribution, scale, key)."""


@dataclass(frozen=True)
class Tolerance:
    """One random perturbation.

    Attributes
    ----------
    name : str
    paths : tuple of str
        Key paths moved together by the same draw.
    dist : "normal" or "uniform"
    scale : float
        ``sigma`` (normal) or ``half_width`` (uniform), in ``unit``.
    unit : str
        Unit of ``scale`` and of the draws (``""``: the nominal's own unit).
    """

    name: str
    paths: tuple
    dist: str
    scale: float
    unit: str = ""

    def __post_init__(self):
        if self.dist not in DISTRIBUTIONS:
            raise ToleranceError(f"tolerance {self.name!r}: dist must be one of "
                                 f"{', '.join(DISTRIBUTIONS)}, got {self.dist!r}")
        if not (math.isfinite(self.scale) and self.scale >= 0):
            raise ToleranceError(f"tolerance {self.name!r}: expected a non-negative "
                                 f"{'sigma' if self.dist == 'normal' else 'half_width'}, "
                                 f"got {self.scale!r}")
        for p in self.paths:
            parse(p)

    @property
    def std(self) -> float:
        """Standard deviation of the draws [unit]: sigma, or half_width / sqrt(3)."""
        return self.scale if self.dist == "normal" else self.scale / math.sqrt(3.0)

    def draw(self, rng: np.random.Generator) -> float:
        """One perturbation [unit]."""
        if self.dist == "normal":
            return float(rng.normal(0.0, self.scale)) if self.scale > 0 else 0.0
        return float(rng.uniform(-self.scale, self.scale)) if self.scale > 0 else 0.0

    def delta_text(self, d: float):
        """The draw as the file writes it (``"0.012 um"`` or a bare number)."""
        d = float(d)
        return f"{d!r} {self.unit}" if self.unit else d

    def describe(self) -> str:
        s = "sigma" if self.dist == "normal" else "half_width"
        keys = " + ".join(self.paths)
        head = keys if (self.name,) == self.paths else f"{self.name}: {keys}"
        return f"{head} {self.dist} {s} {self.scale:g}{' ' + self.unit if self.unit else ''}"


def _scale(name, raw, what):
    try:
        num, unit = split_quantity(raw)
    except TracerError:
        raise ToleranceError(f"tolerances.{name}.{what}: expected a number or a quantity such as "
                             f'"5 um" or "0.1 deg", got {raw!r}') from None
    if num < 0:
        raise ToleranceError(f"tolerances.{name}.{what}: expected a non-negative value, got {raw!r}")
    return num, unit


def _index_path(doc, name, material) -> str:
    mats = doc.get("materials") or {}
    if material not in mats:
        raise ToleranceError(f'tolerances.{name}.index: "{material}" is not a material of the '
                             "scene's [materials] table (catalog materials cannot take a "
                             "delta-n; declare a constant or cauchy material)")
    model = str(mats[material].get("model", ""))
    if model == "constant":
        return f"materials.{material}.n"
    if model == "cauchy":
        return f"materials.{material}.A"
    raise ToleranceError(f'tolerances.{name}.index: material "{material}" is a {model or "?"} '
                         "model; an additive delta-n needs a constant or cauchy model")


_TOL_KEYS = ("key", "index", "dist", "sigma", "half_width", "note")


def read_tolerances(doc: dict) -> tuple[list[Tolerance], dict]:
    """The ``[tolerances.NAME]`` tables of a document, and the document without them.

    Raises
    ------
    ToleranceError
        Naming ``tolerances.NAME.KEY`` for every malformed entry.
    """
    tables = doc.get("tolerances")
    rest = {k: v for k, v in doc.items() if k != "tolerances"}
    if tables is None:
        return [], rest
    if not isinstance(tables, dict):
        raise ToleranceError("tolerances: expected tables [tolerances.NAME]")
    out = []
    for name, t in tables.items():
        if not isinstance(t, dict):
            raise ToleranceError(f"tolerances.{name}: expected a table with key, dist and sigma "
                                 "or half_width")
        unknown = [k for k in t if k not in _TOL_KEYS]
        if unknown:
            import difflib

            close = difflib.get_close_matches(unknown[0], _TOL_KEYS, n=1)
            raise ToleranceError(f'tolerances.{name}: unknown key "{unknown[0]}"'
                                 + (f'; did you mean "{close[0]}"?' if close else "")
                                 + f" (known: {', '.join(_TOL_KEYS)})")
        if ("key" in t) == ("index" in t):
            raise ToleranceError(f'tolerances.{name}: give either "key" (a key path or a list '
                                 'of them) or "index" (a material name)')
        if "key" in t:
            keys = t["key"]
            keys = [keys] if isinstance(keys, str) else keys
            if not isinstance(keys, list) or not keys or not all(isinstance(k, str) for k in keys):
                raise ToleranceError(f"tolerances.{name}.key: expected a key path or a list of them")
        else:
            keys = [_index_path(rest, name, t["index"])]
        dist = t.get("dist", "normal")
        if dist not in DISTRIBUTIONS:
            raise ToleranceError(f'tolerances.{name}.dist: expected "normal" or "uniform", got {dist!r}')
        what = "sigma" if dist == "normal" else "half_width"
        other = "half_width" if dist == "normal" else "sigma"
        if other in t:
            raise ToleranceError(f'tolerances.{name}: a {dist} tolerance takes "{what}", not "{other}"')
        if what not in t:
            raise ToleranceError(f'tolerances.{name}: missing "{what}"')
        num, unit = _scale(name, t[what], what)
        try:
            out.append(Tolerance(name, tuple(keys), dist, num, unit))
        except TracerError as exc:
            raise ToleranceError(f"tolerances.{name}: {exc}") from None
    return out, rest


def parse_tol_option(path: str, dist: str, scale: str, *, name: str | None = None) -> Tolerance:
    """A tolerance from ``--tol KEYPATH DIST SCALE``.

    >>> parse_tol_option("solids.p.rotation[2]", "uniform", "0.5 deg").describe()
    'solids.p.rotation[2] uniform half_width 0.5 deg'
    """
    if dist not in DISTRIBUTIONS:
        raise ToleranceError(f"--tol {path} {dist} {scale}: the distribution must be normal or uniform")
    try:
        num, unit = split_quantity(_maybe_number(scale))
    except TracerError:
        raise ToleranceError(f"--tol {path} {dist} {scale}: expected a scale such as 5um, "
                             f'"0.1 deg" or 0.001') from None
    return Tolerance(name or path, (path,), dist, num, unit)


def _maybe_number(text):
    try:
        return float(text)
    except (TypeError, ValueError):
        return text


# ---------------------------------------------------------------------------
# drawing trials
# ---------------------------------------------------------------------------


def _nominal(doc, path):
    try:
        return get_value(doc, path)
    except KeyPathError:
        return 0  # a value left at its default (rotation, mate gap, offset): zero


def _apply(doc, tols, deltas, length_unit) -> dict:
    """``{path: new value}`` for deltas (one per tolerance)."""
    values = {}
    for tol, d in zip(tols, deltas):
        for p in tol.paths:
            base = values.get(p, _nominal(doc, p))
            try:
                values[p] = add_quantity(base, tol.delta_text(d), length_unit=length_unit)
            except TracerError as exc:
                raise ToleranceError(f"tolerance {tol.name!r} on {p}: {exc}") from None
    return values


def draw_deltas(tols: Sequence[Tolerance], trials: int, seed: int) -> np.ndarray:
    """``(trials, K)`` perturbations [each tolerance's unit] (see the module docstring)."""
    out = np.zeros((int(trials), len(tols)))
    for i in range(int(trials)):
        for k, t in enumerate(tols):
            rng = np.random.default_rng(np.random.SeedSequence(int(seed), spawn_key=(i, k)))
            out[i, k] = t.draw(rng)
    return out


def _requirements(doc, path, base):
    from ..scene import from_dict

    scene = from_dict(doc, path=path, base_dir=base)
    out = {}
    for n, r in scene.requirements.items():
        out[n] = (">=" if r.kind == "min_power" else "<=", float(r.limit))
    return scene, out


def tolerance_run(scene, tolerances: Sequence[Tolerance] | None = None, *, trials: int = 100,
                  seed: int | None = None, settings: dict | None = None,
                  groups: Sequence[str] | None = None, states: dict | None = None,
                  backend: Backend | None = None, workers: int | None = None,
                  scheduler: str | None = None, on_error: str = "raise",
                  progress: bool | None = None) -> ToleranceResult:
    """Monte Carlo tolerance analysis of ``scene``.

    Parameters
    ----------
    scene : str, path, Scene or dict
        The scene (its ``[tolerances]`` tables, if any, are read and removed).
    tolerances : sequence of Tolerance, optional
        Added to those of the file (command line ``--tol``).
    trials : int
        Number of random trials.
    seed : int, optional
        Seed of the draws (default: the scene seed).
    settings, groups, states, backend, workers, scheduler, on_error, progress
        As for :func:`tracer.sweep.sweep.sweep`.

    Returns
    -------
    ToleranceResult
    """
    if isinstance(trials, bool) or int(trials) != trials or trials < 1:
        raise ToleranceError(f"trials={trials!r}: expected a positive whole number")
    doc, path, base = document_of(scene)
    file_tols, doc = read_tolerances(doc)
    tols = [*file_tols, *(tolerances or [])]
    if not tols:
        raise ToleranceError("no tolerance: declare [tolerances.NAME] tables in the scene or give "
                             "--tol KEYPATH normal SIGMA")
    names = [t.name for t in tols]
    if len(set(names)) != len(names):
        dup = next(n for n in names if names.count(n) > 1)
        raise ToleranceError(f"tolerance {dup!r} is declared twice")
    loaded, reqs = _requirements(doc, path, base)
    length_unit = str(doc.get("length_unit", "mm"))
    seed = int(loaded.seed if seed is None else seed)
    deltas = draw_deltas(tols, int(trials), seed)
    values = [_apply(doc, tols, deltas[i], length_unit) for i in range(int(trials))]
    opts = run_options(settings, groups, states)
    tasks = [make_task(doc, path, base, 0, {}, opts, kind="nominal")]
    tasks += [make_task(doc, path, base, i, v, opts, kind="trial") for i, v in enumerate(values)]
    outcomes = parallel_map(run_task, tasks, backend=backend, workers=workers, scheduler=scheduler,
                            label="tolerance trials", progress=progress)
    if not outcomes[0]["ok"]:
        raise ToleranceError(outcomes[0]["error"])
    check_errors(outcomes[1:], on_error=on_error, kind="trial")
    return ToleranceResult(tolerances=tols, deltas=deltas, values=values,
                           rows=[o["row"] for o in outcomes[1:]], nominal=outcomes[0]["row"],
                           requirements=reqs, errors=[o["error"] for o in outcomes[1:]],
                           scene=path or str(doc.get("title", "")), seed=seed,
                           settings=dict(settings or {}))


def one_at_a_time(scene, tolerances: Sequence[Tolerance] | None = None, *, columns: Sequence[str],
                  settings: dict | None = None, backend: Backend | None = None,
                  workers: int | None = None, scheduler: str | None = None) -> dict:
    """Local sensitivities: each tolerance alone at -1 and +1 standard deviation.

    Returns
    -------
    dict
        ``{column: [(tolerance, slope x std, minus, plus), ...]}`` by falling
        ``|slope x std|``, where ``slope x std = (y(+s) - y(-s)) / 2`` is the change of
        the result for one standard deviation (central difference) and ``minus``/
        ``plus`` the two values.
    """
    doc, path, base = document_of(scene)
    file_tols, doc = read_tolerances(doc)
    tols = [*file_tols, *(tolerances or [])]
    length_unit = str(doc.get("length_unit", "mm"))
    opts = run_options(settings)
    tasks = []
    for k, t in enumerate(tols):
        for sgn in (-1.0, 1.0):
            d = np.zeros(len(tols))
            d[k] = sgn * t.std
            tasks.append(make_task(doc, path, base, len(tasks), _apply(doc, tols, d, length_unit),
                                   opts, kind="one-at-a-time"))
    outcomes = parallel_map(run_task, tasks, backend=backend, workers=workers, scheduler=scheduler,
                            label="one at a time")
    check_errors(outcomes, on_error="raise", kind="one-at-a-time point")
    out = {}
    for c in columns:
        rows = []
        for k, t in enumerate(tols):
            lo = outcomes[2 * k]["row"].get(c)
            hi = outcomes[2 * k + 1]["row"].get(c)
            if lo is None or hi is None:
                continue
            rows.append((t.name, 0.5 * (float(hi) - float(lo)), float(lo), float(hi)))
        out[c] = sorted(rows, key=lambda r: -abs(r[1]))
    return out


def with_tolerances_removed(doc: dict) -> dict:
    """The document without its ``tolerances`` table (for loading)."""
    return read_tolerances(with_values(doc, {}))[1]


__all__ += ["draw_deltas", "with_tolerances_removed"]
