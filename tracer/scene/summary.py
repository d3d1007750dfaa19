"""A plain-data summary of a scene (what ``tracer check`` prints, and ``--json`` gives).

Numbers are SI with the unit in the key name (``thickness_m``, ``power_W``), rounded to
12 significant digits; lists and dicts only, so that ``json.dumps`` takes it as is.
"""

from __future__ import annotations

import math

import numpy as np

from .. import units
from .model import Scene
from .toml_io import FORMAT_VERSION

__all__ = ["summarize", "format_summary"]


def _f(x) -> float | None:
    x = float(x)
    if not math.isfinite(x):
        return None
    return float(f"{x:.12g}")


def _v(a) -> list:
    return [_f(x) for x in np.asarray(a, float).ravel()]


def _spectrum(sp) -> dict:
    cl = sp.coherence_length()
    return {
        "wavelengths_m": _v(sp.wavelengths),
        "weights": _v(sp.weights),
        "bandwidth_m": None if sp.bandwidth is None else _f(sp.bandwidth),
        "coherence_length_m": [_f(c) for c in np.asarray(cl, float)],
    }


def summarize(scene: Scene) -> dict:
    """Plain data describing ``scene``: solids with their faces and treatments, gaps
    (thickness, medium, origin), sources, detectors, requirements and notes."""
    solids = {}
    for name, s in scene.solids.items():
        g = s.geometry
        faces = {}
        for i, face in enumerate(g.face_names):
            tr = s.faces.get(face)
            faces[face] = {
                "treatment": tr.kind if tr else "uncoated",
                "coating": tr.coating_name if tr else None,
                "scatter": _scatter_kind(tr),
                "reflectance": None if tr is None or tr.reflectance is None else _f(tr.reflectance),
                "normal": _v(g.face_normals[i]),
                "centroid_m": _v(g.face_centroid(i)),
            }
        solids[name] = {
            "kind": s.kind,
            "opaque": bool(getattr(s, "opaque", False)),
            "material": s.material_name,
            "volume_m3": _f(g.volume),
            "bounds_m": [_v(b) for b in np.asarray(g.bounds, float)],
            "faces": faces,
            "bevels": [{"face": bv.face, "edge": list(bv.faces), "width_m": _f(bv.width)}
                       for bv in getattr(s, "bevels", ())],
        }
    gaps = {
        name: {
            "faces": [f"{g.solid_a}.{g.face_a}", f"{g.solid_b}.{g.face_b}"],
            "medium": g.medium_name,
            "thickness_m": _f(g.thickness),
            "wedge_rad": _f(g.wedge),
            "origin": g.origin,
            "coherence": g.coherence,
        }
        for name, g in scene.gaps.items()
    }
    sources = {}
    for name, s in scene.sources.items():
        sources[name] = {
            "kind": s.kind,
            "position_m": _v(s.position),
            "direction": _v(s.direction),
            "x_axis": _v(s.x_axis),
            "power_W": _f(s.power),
            "rays": int(s.rays),
            "sampling": s.sampling,
            "aperture": s.aperture if s.kind == "collimated" else None,
            "size_m": _v(s.size) if s.kind == "collimated" else None,
            "half_angle_rad": _f(s.half_angle) if s.kind != "collimated" else None,
            "spectrum": _spectrum(s.spectrum),
            "polarization": {"label": s.polarization.label, "stokes": _v(s.polarization.stokes)},
            "inside_solid": s.inside_solid,
            "aim": _aim(s.aim),
        }
    detectors = {
        name: {
            "kind": d.kind,
            "position_m": _v(d.position),
            "normal": _v(d.normal),
            "x_axis": _v(d.x_axis),
            "size_m": _v(d.size),
            "outline": getattr(d, "outline", "rectangle"),
            "pixels": [int(p) for p in d.pixels],
            "two_sided": bool(d.two_sided),
            "on_face": d.on_face,
        }
        for name, d in scene.detectors.items()
    }
    requirements = {
        name: {"kind": r.kind, "limit": _f(r.limit), "relative": bool(r.relative),
               "detector": r.detector, "gap": r.gap,
               **({"mechanism": r.mechanism} if r.kind == "max_leakage" else {})}
        for name, r in scene.requirements.items()
    }
    st = scene.settings
    out = {
        "file": scene.path,
        "format": FORMAT_VERSION,
        "title": scene.title,
        "dimension": int(scene.dimension),
        "ambient": scene.ambient_name,
        "seed": int(scene.seed),
        "spectrum": _spectrum(scene.spectrum),
        "trace": {"mode": st.mode,
                  "power_threshold": "auto" if getattr(st, "auto_threshold", False)
                  else _f(st.power_threshold),
                  "max_events": int(st.max_events),
                  "sequence": list(st.sequence) if st.sequence else None},
        "solids": solids,
        "gaps": gaps,
        "sources": sources,
        "detectors": detectors,
        "requirements": requirements,
        "notes": list(scene.notes),
        "warnings": index_basis_warnings(scene),
    }
    tolerances = _tolerances(scene)
    if tolerances:  # only for scenes that carry [tolerances] (checked by the loader)
        out["tolerances"] = tolerances
    return out


def _aim(aim) -> dict | None:
    """The aim of an aimed source (``None`` for a source given by position and direction)."""
    if aim is None:
        return None
    return {"face": aim.face, "point_m": _v(aim.point), "angle_rad": _f(aim.angle),
            "plane_normal": _v(aim.plane_normal), "distance_m": _f(aim.distance),
            "angle_inside_rad": None if aim.angle_inside is None else _f(aim.angle_inside),
            "wavelength_m": None if aim.wavelength is None else _f(aim.wavelength)}


#: Inline material models whose numbers are relative to air unless ``index_basis = "vacuum"``.
_AIR_DEFAULT_MODELS = ("constant", "cauchy", "sellmeier", "table")


def index_basis_warnings(scene: Scene) -> list[str]:
    """Warnings for inline materials whose numbers are read relative to air (the default
    ``index_basis``, not written in the file) in a vacuum ambient.

    There an inline ``n = 1.5`` becomes the absolute index ``1.5 × n_air`` (1.50042 at
    550 nm), not the 1.5 the file seems to say (DEVELOPERS.md, "Index basis"). A material
    that states ``index_basis`` explicitly is taken as meant and not warned about.
    """

    try:
        wl = np.asarray(scene.spectrum.wavelengths, float)
        amb = np.asarray(scene.ambient.refractive_index(wl, extrapolate=True))
    except Exception:  # noqa: BLE001 - no usable ambient: nothing to compare
        return []
    if not np.all(np.abs(amb - 1.0) < 1e-12):
        return []  # not a vacuum ambient
    mats = (scene.raw or {}).get("materials") or {}
    used: dict[str, list[str]] = {}
    for name, s in scene.solids.items():
        used.setdefault(s.material_name, []).append(s.table_key)
    for name, g in scene.gaps.items():
        used.setdefault(g.medium_name, []).append(f"gaps.{name}")
    where = f"{scene.path}: " if scene.path else ""
    out = []
    for name, table in mats.items():
        if not isinstance(table, dict) or table.get("model") not in _AIR_DEFAULT_MODELS:
            continue
        if "index_basis" in table:
            continue
        model = None
        for s in scene.solids.values():
            if s.material_name == name:
                model = s.material
        for g in scene.gaps.values():
            if g.medium_name == name:
                model = g.medium
        example = ""
        if model is not None and hasattr(model, "relative_index"):
            w0 = float(wl[0])
            try:
                rel = complex(np.ravel(model.relative_index(w0, extrapolate=True))[0]).real
                ab = complex(np.ravel(model.refractive_index(w0, extrapolate=True))[0]).real
                example = (f" (at {units.format_wavelength(w0)}: {rel:.6g} relative to air is "
                           f"{ab:.7g} in vacuum)")
            except Exception:  # noqa: BLE001 - the example is optional
                example = ""
        users = f", used by {', '.join(used[name])}" if name in used else ""
        out.append(f"{where}materials.{name}: its numbers are relative to air (the default "
                   f"index_basis), but the ambient is vacuum, so each index is multiplied by "
                   f"the index of standard air{example}{users}; add index_basis = \"vacuum\" if "
                   f"they are absolute indices, or index_basis = \"air\" to keep them and "
                   f"silence this warning")
    return out


def _tolerances(scene: Scene) -> dict:
    """``{name: {keys, index, dist, scale}}`` of the scene's ``[tolerances.NAME]`` tables."""
    tables = (scene.raw or {}).get("tolerances") or {}
    out = {}
    for name, t in tables.items():
        dist = t.get("dist", "normal")
        keys = t.get("key")
        out[name] = {
            "keys": ([keys] if isinstance(keys, str) else list(keys)) if keys is not None else None,
            "index": t.get("index"),
            "dist": dist,
            "scale": t.get("sigma" if dist == "normal" else "half_width"),
        }
    return out


def _direction(v) -> str:
    """A unit vector as ``[0.7071, -0.7071, 0]`` (4 decimals, no negative zero)."""
    return "[" + ", ".join(f"{(round(float(c), 4) + 0.0):.4g}" for c in v) + "]"


def _len(x) -> str:
    return units.format_length(x) if x is not None else "-"


def _threshold(x) -> str:
    return x if isinstance(x, str) else f"{x:g}"


#: Scene-file kind of each scatter model class (``[coatings.NAME] kind``).
_SCATTER_KIND = {"Lambertian": "lambertian", "BlackSurface": "black", "RoughSurface": "rough",
                 "BsdfTable": "bsdf-table"}


def _scatter_kind(treatment) -> str | None:
    sc = getattr(treatment, "scatter", None)
    return None if sc is None else _SCATTER_KIND.get(type(sc).__name__, type(sc).__name__)


def _face_label(f: dict) -> str:
    what = f.get("scatter") or f["treatment"]
    if f["coating"] and f["coating"] != what:
        what += f" ({f['coating']})"
    if f["reflectance"] is not None and not f.get("scatter"):
        what += f", R = {f['reflectance']:g}"
    return what


def _solid_lines(name: str, so: dict) -> list[str]:
    head = (f"  {name}: {so['kind']}, opaque part" + (f" of {so['material']}" if so["material"] != "opaque" else "")
            if so.get("opaque") else f"  {name}: {so['kind']} of {so['material']}")
    lines = [head + f", volume {so['volume_m3'] * 1e9:.6g} mm³"]
    if so.get("opaque"):  # parts have many faces: one line per treatment
        groups: dict[str, list[str]] = {}
        for face, f in so["faces"].items():
            groups.setdefault(_face_label(f), []).append(face)
        for what, names in groups.items():
            shown = ", ".join(names[:6]) + (f", ... ({len(names)} faces)" if len(names) > 6 else "")
            lines.append(f"    {what}: {shown if len(groups) > 1 or len(names) <= 6 else f'every face ({len(names)})'}")
        return lines
    bevels = {b["face"]: b for b in so.get("bevels") or ()}
    for face, f in so["faces"].items():
        bevel = bevels.get(face)
        what = _face_label(f) + (f", a {_len(bevel['width_m'])} bevel on the edge "
                                 f"{bevel['edge'][0]} | {bevel['edge'][1]}" if bevel else "")
        lines.append(f"    {face}: {what}; normal {_direction(f['normal'])}, centroid "
                     "[" + ", ".join(f"{v * 1e3 + 0.0:.6g}" for v in f["centroid_m"]) + "] mm")
    return lines


def format_summary(summary: dict) -> str:
    """The summary as readable text (gap thickness in µm)."""
    s = summary
    lines = [f"{s['file'] or '<scene>'}: {s['title']}",
             f"  {s['dimension']}D, ambient {s['ambient']}, wavelengths "
             + ", ".join(units.format_wavelength(w) for w in s["spectrum"]["wavelengths_m"])
             + (f" (bandwidth {units.format_wavelength(s['spectrum']['bandwidth_m'])})"
                if s["spectrum"]["bandwidth_m"] else ""),
             f"  trace: {s['trace']['mode']}, power threshold {_threshold(s['trace']['power_threshold'])}, "
             f"at most {s['trace']['max_events']} events"
             + (f", design path {' -> '.join(s['trace']['sequence'])}" if s["trace"]["sequence"] else "")]
    solid_names = [n for n, so in s["solids"].items() if not so.get("opaque")]
    part_names = [n for n, so in s["solids"].items() if so.get("opaque")]
    lines.append(f"solids ({len(solid_names)}):")
    for name in solid_names:
        lines += _solid_lines(name, s["solids"][name])
    if part_names:
        lines.append(f"parts ({len(part_names)}):")
        for name in part_names:
            lines += _solid_lines(name, s["solids"][name])
    lines.append(f"gaps ({len(s['gaps'])}):")
    for name, g in s["gaps"].items():
        wedge = f", wedge {units.format_angle(g['wedge_rad'])}" if g["wedge_rad"] else ""
        lines.append(f"  {name}: {g['faces'][0]} | {g['faces'][1]}: {g['thickness_m'] * 1e6:.6g} µm of "
                     f"{g['medium']}{wedge}, {g['origin']}, coherence {g['coherence']}")
    lines.append(f"sources ({len(s['sources'])}):")
    for name, so in s["sources"].items():
        extra = ""
        if so["kind"] == "collimated":
            shape = "line" if s["dimension"] == 2 else so["aperture"]
            extra = f", {shape} {' x '.join(_len(v) for v in so['size_m'] if v) if shape != 'circle' else _len(so['size_m'][0])}"
        else:
            extra = f", half angle {units.format_angle(so['half_angle_rad'])}"
        inside = f", inside {so['inside_solid']}" if so["inside_solid"] else ""
        aim = so.get("aim")
        if aim:
            inside += (f", aimed at {aim['face']} at {units.format_angle(aim['angle_rad'])}"
                       + (f" ({units.format_angle(aim['angle_inside_rad'])} inside)"
                          if aim["angle_inside_rad"] is not None else "")
                       + f" from {_len(aim['distance_m'])}")
        lines.append(f"  {name}: {so['kind']}{extra}, {units.format_power(so['power_W'])}, "
                     f"{so['rays']} rays ({so['sampling']}), {so['polarization']['label']}{inside}")
    lines.append(f"detectors ({len(s['detectors'])}):")
    for name, d in s["detectors"].items():
        if d["kind"] == "far_field":
            lines.append(f"  {name}: far field, {d['pixels'][0]} x {d['pixels'][1]} bins")
        else:
            where = f"on {d['on_face']}" if d["on_face"] else "at [" + ", ".join(
                _len(v) for v in d["position_m"]) + "]"
            size = (f"disk {_len(d['size_m'][0])} across" if d.get("outline") == "circle"
                    else f"{_len(d['size_m'][0])} x {_len(d['size_m'][1])}")
            lines.append(f"  {name}: plane {where}, {size}, "
                         f"{d['pixels'][0]} x {d['pixels'][1]} pixels")
    lines.append(f"requirements ({len(s['requirements'])}):")
    for name, r in s["requirements"].items():
        target = r["detector"] or r["gap"]
        if r["kind"] in ("min_power", "max_power", "max_scattered_power"):
            limit = (f"{r['limit'] * 100:g} % of the source power" if r["relative"]
                     else units.format_power(r["limit"]))
            what = "scattered power" if r["kind"] == "max_scattered_power" else "power"
            cmp = ">=" if r["kind"] == "min_power" else "<="
            lines.append(f"  {name}: {what} on {target} {cmp} {limit}")
        elif r["kind"] == "max_ghost_fraction":
            lines.append(f"  {name}: ghost fraction on {target} <= {r['limit']:g}")
        else:
            what = {"crossed": "power crossing", "tunnelled": "tunnelled power through",
                    "refracted": "refracted power through"}.get(r.get("mechanism", "crossed"),
                                                                "power crossing")
            lines.append(f"  {name}: {what} {target} <= {r['limit']:g} of the source power")
    if s.get("tolerances"):
        lines.append(f"tolerances ({len(s['tolerances'])}, for `tracer tolerance`):")
        for name, t in s["tolerances"].items():
            what = " + ".join(t["keys"]) if t["keys"] else f"delta-n of {t['index']}"
            scale = "sigma" if t["dist"] == "normal" else "half width"
            lines.append(f"  {name}: {what}, {t['dist']}, {scale} {t['scale']}")
    if s["notes"]:
        lines.append(f"notes ({len(s['notes'])}):")
        lines.extend(f"  {n}" for n in s["notes"])
    if s.get("warnings"):
        lines.append(f"warnings ({len(s['warnings'])}):")
        lines.extend(f"  warning: {w}" for w in s["warnings"])
    return "\n".join(lines)
