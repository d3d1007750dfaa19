"""Loading a scene: TOML text -> validated :class:`~tracer.scene.model.Scene`.

Every section is read with the strict :class:`~tracer.scene.reader.Table`; problems of
the whole document are collected and raised together as one
:class:`~tracer.scene.problems.SceneError`. Nothing but a ``SceneError`` leaves
:func:`loads` for bad input.
"""

from __future__ import annotations

import copy
import os
from pathlib import Path

from .context import Build
from .model import Scene
from .problems import Problem, Problems, SceneError
from .quantities import SceneUnits
from .reader import Table
from .toml_io import FORMAT_VERSION, migrate, parse_text

__all__ = ["load", "loads", "from_dict", "TOP_LEVEL_KEYS", "INTERNAL_ERROR"]

#: Start of the message of a problem that is a bug of the loader, not of the scene.
INTERNAL_ERROR = "internal error while loading the scene"

#: Every top-level key and table of format 1.
TOP_LEVEL_KEYS = ("format", "title", "dimension", "length_unit", "ambient", "seed", "spectrum",
                  "trace", "gap_finding", "materials", "coatings", "solids", "parts", "gaps", "sources",
                  "detectors", "requirements", "tolerances", "include", "baseline")


#: Environment variable that lets scenes read mesh files outside their folder tree
#: (set by ``tracer --allow-outside-files``; inherited by sweep workers).
ALLOW_OUTSIDE_ENV = "TRACER_ALLOW_OUTSIDE_FILES"


def _allow_outside(value) -> bool:
    if value is not None:
        return bool(value)
    return os.environ.get(ALLOW_OUTSIDE_ENV, "").strip().lower() in ("1", "true", "yes", "on")


def load(path: str | os.PathLike, *, allow_outside_files: bool | None = None) -> Scene:
    """Load and validate a scene file.

    Parameters
    ----------
    path : str or path-like
        A ``.toml`` scene file; relative mesh paths inside it are taken from its directory.
    allow_outside_files : bool, optional
        Read mesh files outside the scene file's folder tree (default: no, unless the
        environment variable ``TRACER_ALLOW_OUTSIDE_FILES`` is 1).

    Raises
    ------
    SceneError
        Every problem found (unreadable file, TOML syntax, schema, references, geometry).
    """
    file = os.fspath(path)
    try:
        text = Path(file).read_bytes()
    except OSError as exc:
        raise SceneError([Problem(file, "", f"cannot read the file: {exc.strerror or exc}")]) from None
    return loads(text, path=file, allow_outside_files=allow_outside_files)


def loads(text: str | bytes, *, path: str | os.PathLike | None = None,
          base_dir: str | os.PathLike | None = None,
          allow_outside_files: bool | None = None) -> Scene:
    """Load a scene from TOML text.

    Parameters
    ----------
    text : str
        The TOML document.
    path : str, optional
        File name used in messages (and, unless ``base_dir`` is given, the directory
        that relative mesh paths are taken from).
    base_dir : str, optional
        Directory for relative paths (default: that of ``path``, else the working
        directory).
    """
    file = os.fspath(path) if path is not None else None
    document = parse_text(text, file=file)
    return from_dict(document, path=file, base_dir=base_dir,
                     allow_outside_files=allow_outside_files)


def from_dict(document: dict, *, path: str | None = None, base_dir=None,
              allow_outside_files: bool | None = None) -> Scene:
    """Validate an already parsed document (a dict as :mod:`tomllib` gives)."""
    from ..versions.includes import relocate, resolve_includes  # shared tables of other files
    file = os.fspath(path) if path is not None else None
    if isinstance(document, dict):
        document = resolve_includes(document, file=file, base_dir=base_dir)
    try:
        return _from_dict(document, file=file, base_dir=base_dir,
                          allow_outside_files=allow_outside_files)
    except SceneError as exc:  # problems inside included entries name their own file
        raise relocate(exc, document) from None


def _from_dict(document, *, file, base_dir, allow_outside_files=None) -> Scene:
    problems = Problems(file)
    if not isinstance(document, dict):
        problems.error("", "expected a TOML document (a table at the top level)")
        problems.raise_if_any()
    document = copy.deepcopy(dict(document))  # a plain dict (not IncludedDocument) in Scene.raw
    if base_dir is None:
        base_dir = Path(file).resolve().parent if file else Path.cwd()
    try:
        scene = _build(document, problems, file, Path(base_dir),
                       _allow_outside(allow_outside_files))
    except SceneError:
        raise
    except RecursionError:  # absurdly nested input
        problems.error("", "document too deeply nested")
        scene = None
    except Exception as exc:  # noqa: BLE001 - last resort: bad input never shows a traceback
        problems.error("", f"{INTERNAL_ERROR}: {type(exc).__name__}: {exc} (the other problems "
                           "listed may be the cause; please report this scene)")
        scene = None
    problems.raise_if_any()
    return scene


def _build(document: dict, problems: Problems, file: str | None, base_dir: Path,
           allow_outside_files: bool = False):
    from . import settings
    doc = Table(document, "", problems)

    # -- format version and migration
    version = doc.integer("format", required=True, minimum=1)
    if version is not None and version > FORMAT_VERSION:
        doc.error("format", f"this tracer reads scene formats up to {FORMAT_VERSION}, got {version}; "
                            "update tracer")
        problems.raise_if_any()
    if version is not None and version < FORMAT_VERSION:
        document = migrate(document, version)
        doc = Table(document, "", problems)
        doc.integer("format")
    # without a (valid) format the rest is still checked as the current format

    default_title = Path(file).stem if file else "untitled"
    header = settings.read_header(doc, default_title=default_title)
    su = SceneUnits(header.length_unit)
    doc.units = su
    build = Build(problems=problems, units=su, dimension=header.dimension, base_dir=base_dir,
                  allow_outside_files=allow_outside_files)

    spectrum_t = doc.table("spectrum", required=True)
    build.spectrum = settings.read_spectrum(spectrum_t) if spectrum_t is not None else None
    trace_settings, _sequence = settings.read_trace(doc.table("trace"))
    finding = settings.read_gap_finding(doc.table("gap_finding"))

    # -- materials, ambient, coatings
    from .media import read_material, resolve_material
    material_tables = doc.tables("materials")
    build.material_keys = set(material_tables)
    for name, t in material_tables.items():
        model = read_material(name, t, build)
        if model is not None:
            build.materials[name] = model
    build.ambient_name = header.ambient
    build.ambient = resolve_material(build, "ambient", header.ambient)

    from .treatments import BUILTIN_TREATMENTS, SCATTER_KINDS, read_coating
    coating_tables = doc.tables("coatings")
    for name in coating_tables:
        if name in BUILTIN_TREATMENTS:
            problems.error(f"coatings.{name}", f'"{name}" is a built-in treatment; choose another name')
    build.coating_keys = set(coating_tables) | set(BUILTIN_TREATMENTS)
    build.coatings = dict(BUILTIN_TREATMENTS)
    # scatter treatments last: their "specular" may name any other coating
    ordered = sorted(coating_tables.items(),
                     key=lambda item: isinstance(item[1].data, dict)
                     and item[1].data.get("kind") in SCATTER_KINDS)
    for name, t in ordered:
        if name in BUILTIN_TREATMENTS:
            continue
        treatment = read_coating(name, t, build)
        if treatment is not None:
            build.coatings[name] = treatment

    # -- solids (with placement and mating), gaps
    from .gaps import read_gaps
    from .solids import read_solids
    solid_tables = doc.tables("solids")
    mated = read_solids(solid_tables, build, parts=doc.tables("parts"))
    gaps = read_gaps(doc.tables("gaps"), build, mated=mated, finding=finding)

    # -- sources, detectors, requirements
    from .detectors import read_detector
    from .requirements import read_requirement
    from .sources import read_source
    sources = {}
    for name, t in doc.tables("sources").items():
        spec = read_source(name, t, build)
        if spec is not None:
            sources[name] = spec
    detector_tables = doc.tables("detectors")
    build.detector_keys = set(detector_tables)
    detectors = {}
    for name, t in detector_tables.items():
        spec = read_detector(name, t, build)
        if spec is not None:
            detectors[name] = spec
    requirements = {}
    gap_names = set(gaps) | build.gap_keys
    for name, t in doc.tables("requirements").items():
        spec = read_requirement(name, t, build, gap_names=gap_names)
        if spec is not None:
            requirements[name] = spec

    # -- tolerances: checked (key paths into everything read above), not traced
    from .tolerance_tables import read_tolerance_tables
    read_tolerance_tables(doc.tables("tolerances"), build, document)
    from ..versions.baseline import read_baseline_table  # [baseline]: checked, used by baselines
    read_baseline_table(doc.table("baseline"))
    doc.known("include")  # merged (and removed) before validation; known for "did you mean"
    doc.finish()

    # -- cross checks: design path, material ranges, sources inside solids, overlaps
    from .checks import check_scene
    sources = check_scene(build, doc, trace_settings, sources, gaps, header, solid_tables,
                          sources_tables=doc.data.get("sources", {}))

    problems.raise_if_any()
    notes = tuple(f"{p.key}: {p.message}" if p.key else p.message for p in problems.notes)
    return Scene(path=file, title=header.title, dimension=header.dimension, ambient=build.ambient,
                 ambient_name=header.ambient, spectrum=build.spectrum, seed=header.seed,
                 settings=trace_settings, solids=dict(build.solids), gaps=gaps, sources=sources,
                 detectors=detectors, requirements=requirements, notes=notes, raw=document)
