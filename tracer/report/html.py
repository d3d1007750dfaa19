"""The HTML report: one self-contained page per scene (no external resources).

Sections: safety caution, verdicts, scene summary (solids and faces, gaps, sources,
detectors), power budget, ghost tables, design path (when the scene declares one),
figures (embedded PNG as ``data:`` URIs) and the tool version with the trace settings.
"""

from __future__ import annotations

import base64
import html
import math

from ..analysis.ghosts import SPOT_HEADER
from ..analysis.tables import fmt_fraction, fmt_sci
from .caution import CAUTION_HTML

__all__ = ["render_html", "CSS"]

CSS = """
:root { --ink:#1f2328; --muted:#59636e; --line:#d0d7de; --soft:#f6f8fa; --pass:#1a7f37;
        --fail:#cf222e; --unsure:#9a6700; --accent:#0b5cad; --warn-bg:#fff8c5; --warn-line:#d4a72c; }
* { box-sizing: border-box; }
html { font-size: 15px; }
body { margin: 0; color: var(--ink); background: #fff;
       font-family: "Source Sans 3", "Segoe UI", "Helvetica Neue", "DejaVu Sans", Arial, sans-serif;
       line-height: 1.5; }
main { max-width: 1040px; margin: 0 auto; padding: 28px 28px 60px; }
h1 { font-size: 1.75rem; margin: 0 0 2px; font-weight: 650; letter-spacing: -0.01em; }
h2 { font-size: 1.25rem; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 1px solid var(--line);
     font-weight: 620; }
h3 { font-size: 1.02rem; margin: 20px 0 6px; font-weight: 620; }
p { margin: 6px 0; }
.sub { color: var(--muted); margin: 0 0 16px; }
.caution { background: var(--warn-bg); border: 1px solid var(--warn-line); border-left-width: 5px;
           border-radius: 6px; padding: 10px 16px; margin: 16px 0 8px; }
.caution strong { display: block; margin-bottom: 2px; }
.verdict-box { display: inline-block; padding: 3px 12px; border-radius: 14px; font-weight: 650;
               color: #fff; background: var(--pass); }
.verdict-box.fail { background: var(--fail); }
.verdict-box.inconclusive { background: var(--unsure); }
table { border-collapse: collapse; margin: 6px 0 12px; font-size: 0.93rem; }
th, td { padding: 4px 10px; border-bottom: 1px solid var(--line); vertical-align: top; }
th { text-align: left; font-weight: 620; background: var(--soft); white-space: nowrap; }
th.num { text-align: right; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.path { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 0.84rem; }
tr.design td { background: #eef6ff; }
tr.total td { font-weight: 650; border-top: 2px solid var(--line); }
.pass { color: var(--pass); font-weight: 650; }
.fail { color: var(--fail); font-weight: 650; }
.inconclusive { color: var(--unsure); font-weight: 650; }
.note { color: var(--muted); font-size: 0.9rem; }
figure { margin: 14px 0 22px; }
figure img { max-width: 100%; height: auto; border: 1px solid var(--line); border-radius: 4px; }
figcaption { color: var(--muted); font-size: 0.9rem; margin-top: 4px; }
dl.kv { display: grid; grid-template-columns: max-content 1fr; gap: 2px 18px; margin: 6px 0; }
dl.kv dt { color: var(--muted); }
dl.kv dd { margin: 0; }
footer { margin-top: 40px; color: var(--muted); font-size: 0.88rem; border-top: 1px solid var(--line);
         padding-top: 10px; }
@media print { main { max-width: none; padding: 0; } h2 { break-after: avoid; }
               figure, table { break-inside: avoid; } }
"""

e = html.escape


def _table(header, rows, *, num=(), row_class=None) -> str:
    """HTML table; ``num`` are indices of right-aligned numeric columns."""
    out = ["<table><thead><tr>"]
    for i, h in enumerate(header):
        out.append(f'<th class="num">{e(h)}</th>' if i in num else f"<th>{e(h)}</th>")
    out.append("</tr></thead><tbody>")
    for j, row in enumerate(rows):
        cls = row_class(j) if row_class else None
        out.append(f'<tr class="{cls}">' if cls else "<tr>")
        for i, cell in enumerate(row):
            raw = isinstance(cell, _Raw)
            text = cell.html if raw else e(str(cell))
            klass = ' class="num"' if i in num else ""
            if raw and cell.klass:
                klass = f' class="{cell.klass}"'
            out.append(f"<td{klass}>{text}</td>")
        out.append("</tr>")
    out.append("</tbody></table>")
    return "".join(out)


class _Raw:
    def __init__(self, html_text: str, klass: str | None = None):
        self.html = html_text
        self.klass = klass


def _mm(x) -> str:
    return "-" if x is None else f"{1e3 * x:.4g} mm"


def _vec(v) -> str:
    return "(" + ", ".join(f"{x:.4g}" for x in v) + ")"


def _wavelength(w: float) -> str:
    """Vacuum wavelength, with the frequency for radio and microwave lines (above 100 µm)."""
    from .. import units

    text = units.format_wavelength(w)
    if w > 100e-6:
        text += f" ({units.format_frequency(299_792_458.0 / w, digits=4)})"
    return text


def _scene_section(summary: dict) -> str:
    from .. import units

    parts = ["<h2>Scene</h2>"]
    spec = summary.get("spectrum") or {}
    wl = ", ".join(_wavelength(w) for w in spec.get("wavelengths_m", []))
    tr = summary.get("trace") or {}
    parts.append('<dl class="kv">')
    for k, v in (("file", summary.get("file") or "-"),
                 ("dimension", f"{summary.get('dimension')}D"),
                 ("ambient", summary.get("ambient")),
                 ("wavelengths", wl or "-"),
                 ("design sequence", " > ".join(tr.get("sequence") or []) or "none declared")):
        parts.append(f"<dt>{e(str(k))}</dt><dd>{e(str(v))}</dd>")
    parts.append("</dl>")
    solids = summary.get("solids") or {}
    if solids:
        rows = []
        for name, s in solids.items():
            faces = s.get("faces") or {}
            treated = [f"{f}: {d.get('coating') or d.get('treatment')}" for f, d in faces.items()
                       if d.get("treatment") != "uncoated"]
            rows.append([name, s.get("kind", ""), s.get("material", ""),
                         "; ".join(treated) or "all uncoated"])
        parts.append("<h3>Solids</h3>" + _table(["solid", "kind", "material", "treated faces"], rows))
    gaps = summary.get("gaps") or {}
    if gaps:
        rows = [[name, " | ".join(g.get("faces", [])), units.format_length(g.get("thickness_m", 0.0),
                                                                           digits=4),
                 g.get("medium", ""), g.get("origin", ""), g.get("coherence", "")]
                for name, g in gaps.items()]
        parts.append("<h3>Gaps</h3>" + _table(["gap", "faces", "thickness", "medium", "found by",
                                                "coherence"], rows, num=(2,)))
    sources = summary.get("sources") or {}
    if sources:
        rows = []
        for name, s in sources.items():
            pol = (s.get("polarization") or {}).get("label", "")
            sw = ", ".join(_wavelength(w) for w in (s.get("spectrum") or {}).get("wavelengths_m", []))
            rows.append([name, s.get("kind", ""), units.format_power(s.get("power_W", 0.0)),
                         str(s.get("rays", "")), sw, pol])
        parts.append("<h3>Sources</h3>" + _table(["source", "kind", "power", "rays", "wavelengths",
                                                   "polarisation"], rows, num=(2, 3)))
    dets = summary.get("detectors") or {}
    if dets:
        rows = []
        for name, d in dets.items():
            if d.get("kind") == "far_field":
                rows.append([name, "far field", "-", "-", "x".join(str(p) for p in d.get("pixels", []))])
            else:
                size = d.get("size_m") or (0, 0)
                rows.append([name, "plane" + (f" on {d['on_face']}" if d.get("on_face") else ""),
                             _vec([1e3 * x for x in d.get("position_m", [])]) + " mm",
                             (f"disk {1e3 * size[0]:.4g} mm" if d.get("outline") == "circle"
                              else f"{1e3 * size[0]:.4g} x {1e3 * size[1]:.4g} mm"),
                             "x".join(str(p) for p in d.get("pixels", []))])
        parts.append("<h3>Detectors</h3>" + _table(["detector", "kind", "position", "size", "pixels"], rows))
    return "\n".join(parts)


def _leakage_notes(result, verdicts) -> list:
    from ..analysis.leakage import leakage_notes

    return leakage_notes(result, verdicts)


def _verdicts_section(verdicts, warnings=(), notes=()) -> str:
    from ..analysis.requirements import _fmt

    parts = ["<h2>Requirements</h2>"]
    if not verdicts:
        parts.append('<p class="note">The scene declares no requirement.</p>')
    else:
        failed = [v for v in verdicts if v.verdict == "fail"]
        unsure = [v for v in verdicts if v.verdict == "inconclusive"]
        boxes = []
        if failed:
            boxes.append(f'<span class="verdict-box fail">{len(failed)} of {len(verdicts)} '
                         "failed</span>")
        if unsure:
            boxes.append(f'<span class="verdict-box inconclusive">{len(unsure)} of '
                         f"{len(verdicts)} inconclusive</span>")
        if not boxes:
            boxes.append(f'<span class="verdict-box">all {len(verdicts)} passed</span>')
        parts.append("<p>" + " ".join(boxes) + "</p>")
        what = {"min_power": "minimum power", "max_power": "maximum power",
                "max_scattered_power": "maximum scattered power",
                "max_ghost_fraction": "maximum ghost fraction", "max_leakage": "maximum gap leakage"}
        label = {"pass": "pass", "fail": "FAIL", "inconclusive": "INCONCLUSIVE"}
        rows = [[v.name, what.get(v.kind, v.kind), v.subject, _fmt(v.value, v.unit),
                 _fmt(v.bound, v.unit), f"{v.comparison} {_fmt(v.limit, v.unit)}",
                 _Raw(label[v.verdict], v.verdict)] for v in verdicts]
        parts.append(_table(["requirement", "checks", "on", "value", "worst case", "limit",
                             "verdict"], rows, num=(3, 4, 5)))
        parts.append('<p class="note">A requirement passes only when its worst case (all '
                     "discarded and cut power gone the worst way for it) meets the limit; it is "
                     "inconclusive when only the worst case misses it.</p>")
        for v in unsure:
            parts.append(f'<p class="note">{html.escape(v.advice())}</p>')
    for w in warnings:
        parts.append(f'<p class="note">{html.escape(w)}</p>')
    for line in notes:  # what crossed each judged gap, by mechanism
        parts.append(f'<p class="note">{html.escape(line.strip())}</p>')
    return "\n".join(parts)


def _budget_section(budget, figure_html: str) -> str:
    parts = ["<h2>Power budget</h2>",
             f"<p>Where the {fmt_sci(budget.source_power_w)} W of source power goes. Every account "
             "is listed once (beyond the eight strongest of a kind, the rest in one row; the CSV and "
             "JSON outputs list them all); the rows add up to the source power.</p>"]
    shown = budget.display_rows() if hasattr(budget, "display_rows") else budget.rows
    rows = [[r.category, r.name, fmt_sci(r.power_w), fmt_fraction(r.fraction)] for r in shown]
    rows.append(["total", "", fmt_sci(budget.source_power_w - budget.residual_w),
                 fmt_fraction((budget.source_power_w - budget.residual_w) / budget.source_power_w
                              if budget.source_power_w else 0.0)])
    n = len(rows)
    parts.append(_table(["where", "account", "power [W]", "of source"], rows, num=(2, 3),
                        row_class=lambda j: "total" if j == n - 1 else None))
    parts.append(f'<p class="note">Closure residual {fmt_sci(budget.residual_w)} W '
                 f"({fmt_sci(budget.relative_residual)} of the source power). "
                 "Discarded: rays below the power threshold; cut: rays stopped at the event cap."
                 + (f" Far-field detector(s) {e(', '.join(budget.far_field))} collect the escaped power."
                    if budget.far_field else "") + "</p>")
    if budget.tunnelled:
        parts.append(_crossings_table(budget))
    parts.append(figure_html)
    return "\n".join(parts)


def _crossings_table(budget) -> str:
    """Every gap: the power that crossed it, tunnelled and refracted, per direction."""
    rows = []
    for name, g in budget.tunnelled.items():
        cemented = not g.get("tir_possible", True)
        src = budget.source_power_w

        def w(x):
            return f"{fmt_sci(x)} ({fmt_fraction(x / src if src else 0.0)})"

        rows.append([name, f"{g['faces'][0]} | {g['faces'][1]}", w(g["crossed_w"]),
                     "- (cemented joint)" if cemented else w(g["tunnelled_w"]),
                     "-" if cemented else w(g["refracted_w"]),
                     fmt_sci(g["crossed"]["a_to_b_w"]), fmt_sci(g["crossed"]["b_to_a_w"])])
    return ("<h3>Gap crossings</h3><p>Power that crossed each gap from one face to the other "
            "(booked at each crossing; already inside the accounts above): tunnelled beyond the "
            "gap medium's critical angle (frustrated TIR) or refracted below it. Leakage "
            "requirements judge the crossed power unless they name one mechanism.</p>"
            + _table(["gap", "faces", "crossed [W]", "tunnelled [W]", "refracted [W]",
                      "A to B [W]", "B to A [W]"], rows, num=(2, 3, 4, 5, 6)))


def _ghost_section(tables, limit: int, result=None) -> str:
    parts = ["<h2>Ghost paths</h2>",
             "<p>Every path that reaches a detector, ranked by power. The design path (shaded) is the "
             "path following the scene's declared sequence, or the strongest path when none is "
             "declared. Paths meeting the same faces with the same events in another order (the "
             "sub-apertures of a corner cube or a roof) are equivalent to it: with it they make the "
             "design signal (shaded, marked =). All others are ghosts: specular ghosts, and "
             "scattered light (paths with a scatter event, whose powers rest on sampling and carry "
             "a standard error). Events: T transmitted, R partially reflected, "
             "TIR totally reflected, FT tunnelled across a gap, A absorbed, SR / ST scattered "
             "back / forward; (…)×n repeats.</p>"]
    for name, t in tables.items():
        src = t.source_power_w
        parts.append(f"<h3>Detector {e(name)}</h3>")
        sig = t.design_group_power_w

        def of_signal(w):
            return f" = {fmt_sci(w / sig)} of the design signal" if sig > 0 else ""

        sums = (f"specular ghosts {fmt_sci(t.specular_ghost_power_w)} W"
                f"{of_signal(t.specular_ghost_power_w)}; scattered light "
                f"{fmt_sci(t.scattered_power_w)} W ± {fmt_sci(t.standard_error_w)} W (one "
                f"standard error){of_signal(t.scattered_power_w)}"
                if any(r.scattered for r in t.rows) else
                f"ghost power {fmt_sci(t.ghost_power_w)} W = "
                f"{fmt_sci(t.ghost_fraction) if math.isfinite(t.ghost_fraction) else 'inf'} "
                "of the design signal")
        parts.append(f'<p>{fmt_sci(t.power_w)} W ({fmt_fraction(t.power_w / src if src else 0)} of the '
                     f"source power) in {len(t.rows)} path{'s' if len(t.rows) != 1 else ''}; "
                     f"{sums}.</p>")
        if not t.rows:
            continue
        plane = t.kind == "plane"
        sampled = any(r.standard_error_w > 0 for r in t.rows)
        header = ["rank", "light", "power [W]"] + (["± s.e. [W]"] if sampled else []) + [
            "of source", "to design", "refl."]
        if plane:
            header += SPOT_HEADER
        header.append("path")
        rows = []
        for r in t.rows[:limit]:
            row = [str(r.rank), r.light, fmt_sci(r.power_w)]
            if sampled:
                row.append(fmt_sci(r.standard_error_w) if r.standard_error_w > 0 else "–")
            row += [fmt_fraction(r.fraction),
                    "design" if r.design else (("= " if r.equivalent else "")
                                               + (fmt_sci(r.ratio) if r.ratio is not None else "–")),
                    str(r.reflections)]
            if plane:
                row += r.spot_cells()
            row.append(_Raw(e(r.label), "path"))
            rows.append(row)
        numeric = tuple(i for i in range(len(header) - 1) if i != 1)
        designs = [not r.ghost for r in t.rows[:limit]]
        parts.append(_table(header, rows, num=numeric,
                            row_class=lambda j: "design" if designs[j] else None))
        if len(t.rows) > limit:
            rest = sum(r.power_w for r in t.rows[limit:])
            parts.append(f'<p class="note">… {len(t.rows) - limit} weaker paths, {fmt_sci(rest)} W '
                         "together (all paths are in the CSV and JSON outputs).</p>")
        if result is not None and plane and any(r.scattered for r in t.rows):
            parts.append(_scatter_sources_table(result, name))
    return "\n".join(parts)


def _scatter_sources_table(result, detector: str) -> str:
    """Which faces light up ``detector`` by scatter (the last scattering face of each path)."""
    from ..analysis.scatter_sources import scatter_ranking

    r = scatter_ranking(result, detector)
    rows = [[_Raw(e(f["face"]), "path"), fmt_sci(f["power_w"]), fmt_fraction(f["share"])]
            for f in r["faces"]]
    return (f"<h4>Faces whose scatter reaches {e(detector)}</h4><p>Scattered power on the "
            "detector credited to the face of each path's last scatter event (the surface the "
            "detector sees glowing).</p>"
            + _table(["face", "power [W]", "share"], rows, num=(1, 2)))


def _sequence_section(seq: dict | None, error: str | None) -> str:
    if seq is None and error is None:
        return ""
    parts = ["<h2>Design path (sequential)</h2>"]
    if error is not None:
        parts.append(f'<p class="fail">The design path could not be followed: {e(error)}</p>')
        return "\n".join(parts)
    parts.append("<p>" + e(" > ".join(seq["sequence"])) + "</p>")
    rows = []
    for i, st in enumerate(seq["steps"], 1):
        def d(x):
            return "-" if x is None else f"{x:.3f}"
        rows.append([str(i), st["face"], st["kind"], d(st.get("angle_of_incidence_deg")),
                     d(st.get("critical_angle_deg")), d(st.get("tir_margin_deg")),
                     fmt_sci(st.get("leakage")), fmt_fraction(st.get("power_fraction"))])
    parts.append(_table(["step", "face", "event", "incidence [°]", "critical [°]", "TIR margin [°]",
                         "leakage", "kept"], rows, num=(3, 4, 5, 6, 7)))
    sp = seq.get("spread")
    if sp:
        for st in seq["steps"]:
            if "below_critical_fraction" in st:
                worst = st.get("worst_tir_margin_deg")
                parts.append(f"<p>Over the source's extent ({e(sp['kind'])}, {sp['rays']} rays): "
                             f"{e(st['face'])} worst TIR margin "
                             f"{'-' if worst is None else f'{worst:.3f}'}°, "
                             f"{fmt_fraction(st['below_critical_fraction'])} of the source power "
                             "below the critical angle.</p>")
        for w in seq.get("warnings", []):
            parts.append(f'<p class="fail">Warning: {e(w)}</p>')
    if not seq["complete"]:
        left = seq.get("left_at") or {}
        parts.append(f'<p class="fail">The chief ray left the sequence at step '
                     f"{int(left.get('step', 0)) + 1}: expected {e(str(left.get('expected')))}, met "
                     f"{e(str(left.get('hit') or 'nothing'))}.</p>")
        return "\n".join(parts)
    hand = {1: "upright", -1: "mirrored", 0: "degenerate", None: "-"}[seq.get("handedness")]
    rot = seq.get("image_rotation_deg")
    items = [("throughput", fmt_fraction(seq["throughput"])),
             ("deviation", f"{seq['deviation_deg']:.4f}°"),
             ("lateral displacement", _mm(seq["lateral_displacement_m"])),
             ("optical path length", _mm(seq["optical_path_length_m"])),
             ("image", hand + ("" if rot is None else f", rotated {rot:.2f}°")),
             ("retardance", f"{seq['retardance_deg']:.3f}°"),
             ("diattenuation", f"{seq['diattenuation']:.4g}")]
    parts.append('<dl class="kv">' + "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in items)
                 + "</dl>")
    return "\n".join(parts)


def figure_html(png: bytes, caption: str, name: str) -> str:
    """A ``<figure>`` with the PNG embedded as a data URI."""
    data = base64.b64encode(png).decode("ascii")
    return (f'<figure id="fig-{e(name)}"><img alt="{e(caption)}" src="data:image/png;base64,{data}">'
            f"<figcaption>{e(caption)}</figcaption></figure>")


def render_html(*, analysis, scene_summary: dict, figures: list, sequence: dict | None = None,
                sequence_error: str | None = None, skipped=(), ghost_limit: int = 25) -> str:
    """The report page.

    Parameters
    ----------
    analysis : tracer.analysis.RunAnalysis
    scene_summary : dict
        :func:`tracer.scene.summarize` of the scene.
    figures : list of (name, caption, png bytes)
    sequence : dict, optional
        :meth:`SequenceReport.summary` of the design path.
    sequence_error : str, optional
        Why the design path could not be followed.
    skipped : list of (kind, reason)
        Figures that could not be drawn.
    ghost_limit : int
        Rows per ghost table.
    """
    from .. import __version__

    res = analysis.result
    o = res.options
    title = scene_summary.get("title") or "tracer report"
    figs = {name: figure_html(png, cap, name) for name, cap, png in figures}
    budget_fig = figs.pop("budget", "")
    body = [f"<h1>{e(title)}</h1>",
            f'<p class="sub">Stray-light and power report · tracer {e(__version__)} · '
            f"{e(str(scene_summary.get('file') or ''))}</p>",
            CAUTION_HTML,
            _verdicts_section(analysis.verdicts, getattr(analysis, "warnings", ()),
                              _leakage_notes(res, analysis.verdicts)),
            _scene_section(scene_summary),
            _budget_section(analysis.budget, budget_fig),
            _ghost_section(analysis.ghosts, ghost_limit, res),
            _sequence_section(sequence, sequence_error)]
    if figs or skipped:
        body.append("<h2>Figures</h2>")
        body.extend(figs.values())
        if skipped:
            body.append('<p class="note">Not drawn: ' + e("; ".join(f"{k} ({why})" for k, why in skipped))
                        + "</p>")
    settings = [("tool", f"tracer {__version__}"), ("mode", o.mode), ("seed", str(o.seed)),
                ("power threshold", f"{o.power_threshold:g} of the source ray's power"
                 + (f" (auto: {res.threshold_choice['reason']})"
                    if getattr(res, "threshold_choice", None) else "")),
                ("event cap", f"{o.max_events} events per ray"),
                ("source rays", ", ".join(f"{n}: {int(res.launched[i])}"
                                           for i, n in enumerate(res.source_names))),
                ("events traced", str(res.events))]
    body.append("<h2>Trace settings</h2>")
    body.append('<dl class="kv">' + "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in settings)
                + "</dl>")
    body.append("<footer>Generated by tracer " + e(__version__) + ". Path powers in tree mode are "
                "exact sums over the traced rays; in Monte Carlo mode they are estimates. This is an "
                "engineering estimate, not a safety certification.</footer>")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            f"<title>{e(title)} — tracer report</title><style>{CSS}</style></head>"
            "<body><main>\n" + "\n".join(b for b in body if b) + "\n</main></body></html>\n")
