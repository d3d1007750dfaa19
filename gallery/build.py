"""Rebuild the gallery: every demo scene rendered into ``gallery/``.

Usage (from the repository root)::

    python gallery/build.py            # all scenes/*.toml
    python gallery/build.py plate_ghost tir_prism_pair   # some of them

For each scene the script traces twice with the scene's own settings and seed: a
*drawing* run with a few rays per spectral line (so that single rays stay visible) that
records segments, and a *map* run with a few thousand rays in all for the detector maps,
the budget and the ghost table. It writes, per scene ``NAME``:

* ``NAME_diagram.png``: the 2D section (2D scenes) or the top/front/side/isometric
  views (3D scenes), with the strongest ghost on the main detector highlighted;
* ``NAME_irradiance.png``: irradiance of the main detector, linear and log, and the
  profiles through the centroid;
* ``NAME_stokes.png``: normalised Stokes maps of the main detector;
* ``NAME_farfield.png``: the far-field map (scenes with a far-field detector);
* ``NAME_budget.png``: the power budget;
* ``NAME_scatter.png``: scenes where scattered light reaches a detector: where it goes,
  where it lands on the detector receiving most of it, and which faces send it;

and ``gallery/README.md`` with the figures and a markdown ghost table per scene. The
main detector is the plane detector that receives the most power. Nothing is random
beyond the scene seeds, so a rebuild gives the same pictures.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import numpy as np  # noqa: E402

import tracer  # noqa: E402
from tracer import plot as P  # noqa: E402
from tracer.plot import _style  # noqa: E402

OUT = ROOT / "gallery"
#: Geometric rays per spectral line for the drawings and for the maps.
DRAW_RAYS = 9
MAP_RAYS_TOTAL = 3000
#: Segments recorded for a drawing.
SEGMENTS = 60000
#: Ghost-table rows shown.
GHOST_ROWS = 8


def _lines(scene) -> int:
    return max(1, sum(len(s.spectrum.wavelengths) for s in scene.sources.values()))


def _main_detector(result):
    planes = list(result.compiled.detector_names)
    if not planes:
        return None
    return max(planes, key=lambda d: (result.detector_power(d), -planes.index(d)))


def _ghost(result, detector):
    """Signature of the strongest ghost on ``detector`` (None without one)."""
    from tracer.analysis.ghosts import ghost_table

    try:
        g = ghost_table(result, detector).strongest_ghost
    except Exception:  # noqa: BLE001 - a gallery must still render without the analysis
        return None
    return g.signature if g is not None else None


def _irradiance_figure(result, det):
    """Linear map, log map and profiles of one detector in one figure."""
    plt = _style.pyplot()
    data = P.irradiance_data(result, det, pixels="auto")
    line = min(data["irradiance"].shape) == 1
    with _style.style():
        if line:
            fig, axes = plt.subplots(1, 2, figsize=(9.6, 3.4), constrained_layout=True)
            P.line_profile(result, det, ax=axes[0], pixels="auto")
            P.line_profile(result, det, ax=axes[1], log=True, title="log scale", pixels="auto")
            return fig
        fig = plt.figure(figsize=(12.0, 4.0), constrained_layout=True)
        gs = fig.add_gridspec(1, 3, width_ratios=[1, 1, 1.05])
        P.irradiance_map(result, det, ax=fig.add_subplot(gs[0]), pixels="auto")
        P.irradiance_map(result, det, ax=fig.add_subplot(gs[1]), log=True, title="log scale",
                         pixels="auto")
        P.line_profile(result, det, ax=fig.add_subplot(gs[2]), title="profiles through the centroid",
                       pixels="auto")
    return fig


def _md_table(result, detector) -> str:
    from tracer.analysis.ghosts import ghost_table

    t = ghost_table(result, detector)
    if not t.rows:
        return f"_No power reached `{detector}`._\n"
    out = [f"Paths on `{detector}` ({t.design_rule} rule for the design path), "
           f"strongest {min(GHOST_ROWS, len(t.rows))} of {len(t.rows)}:\n",
           "| # | light | path | power [W] | ± s.e. [W] | of source | to design | reflections |",
           "|---:|---|---|---:|---:|---:|---:|---:|"]
    for r in t.rows[:GHOST_ROWS]:
        label = r.label.replace("|", "\\|") + (" **(design)**" if r.design else "")
        ratio = "" if r.ratio is None else f"{r.ratio:.3g}"
        se = f"{r.standard_error_w:.2g}" if r.standard_error_w > 0 else ""
        out.append(f"| {r.rank} | {r.light} | `{label}` | {r.power_w:.3g} | {se} | "
                   f"{r.fraction:.3g} | {ratio} | {r.reflections} |")
    if any(r.scattered for r in t.rows):
        out.append(f"\nSpecular ghosts {t.specular_ghost_power_w:.3g} W, scattered light "
                   f"{t.scattered_power_w:.3g} W ± {t.standard_error_w:.2g} W (one standard "
                   "error).")
    return "\n".join(out) + "\n"


def _scatter_detector(result):
    """The plane detector receiving the most scattered light (None without any)."""
    from tracer.analysis.scatter_sources import scatter_ranking

    best = None
    for d in result.compiled.detector_names:
        w = scatter_ranking(result, d)["scattered_w"]
        if w > 0 and (best is None or w > best[1]):
            best = (d, w)
    return best[0] if best else None


def build_scene(path: Path) -> dict:
    """Render one scene; returns what the README needs."""
    from tracer.scene import load

    name = path.stem
    t0 = time.perf_counter()
    scene = load(path)
    draw = tracer.trace(scene, rays=DRAW_RAYS, segments=SEGMENTS, progress=False)
    per_line = max(50, MAP_RAYS_TOTAL // _lines(scene))
    maps = tracer.trace(scene, rays=per_line, progress=False)
    det = _main_detector(maps)
    ghost = _ghost(draw, det) if det else None
    files = {}
    if scene.dimension == 2:
        fig = P.draw_2d(scene, draw, face_labels=True, highlight=ghost)
    else:
        fig = P.draw_3d_views(scene, draw, highlight=ghost)
    files["diagram"] = _write(fig, f"{name}_diagram")
    if det:
        files["irradiance"] = _write(_irradiance_figure(maps, det), f"{name}_irradiance")
        data = P.irradiance_data(maps, det)
        if data["total_power"] > 0:
            files["stokes"] = _write(P.stokes_maps(maps, det, pixels="auto"), f"{name}_stokes")
    if maps.compiled.far_fields and P.far_field_data(maps)["total_power"] > 0:
        files["farfield"] = _write(P.far_field_map(maps), f"{name}_farfield")
    files["budget"] = _write(P.budget_figure(maps), f"{name}_budget")
    stray = _scatter_detector(maps)
    if stray:
        files["scatter"] = _write(P.scatter_figure(maps, stray, draw_result=draw),
                                  f"{name}_scatter")
    table = _md_table(maps, det) if det else ""
    return dict(name=name, title=scene.title, dimension=scene.dimension, files=files, table=table,
                detector=det, ghost=ghost, rays=int(np.sum(maps.launched)),
                seconds=time.perf_counter() - t0)


def _write(fig, stem) -> str:
    (png,) = P.save(fig, OUT / stem, formats=("png",), dpi=150, close=True)
    return png.name


_INTRO = """# Gallery

Every demo scene in `scenes/`, traced and drawn by `tracer.plot`. Rebuild with

```
python gallery/build.py
```

(from the repository root; a few seconds per scene). Each scene is traced twice with its
own settings and seed: a drawing run with {draw} rays per spectral line (segments
recorded) and a map run with about {maps} rays in all (maps, budget, ghost table).

How to read the figures:

* **Rays** are coloured by vacuum wavelength: in the visible from the CIE 1931
  colour-matching functions (Wyman, Sloan and Shirley's 2013 analytic fit); infrared in
  dark red to brown, THz and microwave in grey-violet, ultraviolet in dark violet
  (false colours). Opacity and line width fall with the log of the ray's power relative
  to its source ray; rays below 10⁻⁶ of it are not drawn.
* **Solids** are filled by material, the same colour for the same material in every
  figure. Gaps are annotated with thickness and medium; plane detectors are heavy dark
  lines (2D) or grey rectangles (3D).
* The **highlighted path** (a grey halo around one ray) is the strongest ghost on the
  main detector, the plane detector receiving the most power.
* **Maps** are seen from the light side (u to the right, v up); irradiance in W/m²,
  Stokes parameters normalised by S0 (blank where there is almost no power). The
  gallery bins them on the detector grid coarsened by powers of two until lit pixels
  get a few rays each (`pixels="auto"`), so that a few thousand rays give smooth maps.
* The **budget** puts every account on a log power axis; it closes to the source power.
* The **scattered light** figure (scenes with scatter): on the left the light after a
  scatter event in colour over the rest in grey, with the faces that send it to the
  detector outlined and numbered by rank; in the middle the scattered power per pixel on
  that detector in ppm of the source; on the right the faces ranked by what they put on
  it, with the standard error of the total (scattered powers rest on sampling).
"""


def write_readme(entries) -> Path:
    parts = [_INTRO.format(draw=DRAW_RAYS, maps=MAP_RAYS_TOTAL)]
    parts.append("| scene | file | kind |\n|---|---|---|")
    for e in entries:
        parts.append(f"| [{e['title']}](#{e['name']}) | `scenes/{e['name']}.toml` | "
                     f"{e['dimension']}D |")
    for e in entries:
        f = e["files"]
        parts.append(f"\n## {e['name']}\n\n**{e['title']}** (`scenes/{e['name']}.toml`, "
                     f"{e['dimension']}D, {e['rays']} rays in the map run)\n")
        parts.append(f"![diagram]({f['diagram']})\n")
        if e["ghost"]:
            parts.append(f"Highlighted: `{e['ghost']}`\n")
        for key, caption in (("irradiance", "irradiance"), ("stokes", "Stokes maps"),
                             ("farfield", "far field"), ("budget", "power budget"),
                             ("scatter", "scattered light")):
            if key in f:
                parts.append(f"![{caption}]({f[key]})\n")
        if e["table"]:
            parts.append(e["table"])
    path = OUT / "README.md"
    from tracer.outputs import atomic_write_text

    atomic_write_text(path, "\n".join(parts))
    return path


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="Rebuild gallery/ from scenes/*.toml.")
    ap.add_argument("scenes", nargs="*", help="scene names (default: every scenes/*.toml)")
    args = ap.parse_args(argv)
    paths = sorted((ROOT / "scenes").glob("*.toml"))
    if args.scenes:
        want = set(args.scenes)
        paths = [p for p in paths if p.stem in want]
    OUT.mkdir(exist_ok=True)
    entries = []
    for p in paths:
        try:
            e = build_scene(p)
        except tracer.errors.TracerError as exc:  # a broken scene is reported, not fatal
            print(f"{p.name}: skipped: {exc}", file=sys.stderr)
            continue
        print(f"{p.name}: {', '.join(e['files'].values())} ({e['seconds']:.1f} s)")
        entries.append(e)
    if not args.scenes:
        write_readme(entries)
    else:  # partial rebuild: keep the README's other scenes
        all_entries = {e["name"]: e for e in entries}
        if all_entries:
            print("README.md not rewritten for a partial build; run without arguments", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
