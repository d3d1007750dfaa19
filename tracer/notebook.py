"""Rich display in Jupyter: the ``_repr_html_`` of scenes, results and analysis objects.

A notebook cell ending in a :class:`~tracer.scene.model.Scene` shows its solids, gaps,
sources, detectors and requirements and a section drawing; a
:class:`~tracer.engine.result.Result` or :class:`~tracer.analysis.RunAnalysis` shows the
power budget, the ghost table of each detector, the requirement verdicts and the ray
diagram inline (a PNG; drawn from a drawing run of a few rays, as in the HTML report).
Budgets, ghost tables and verdicts display as tables on their own. Nothing here is
needed outside a notebook; matplotlib is imported only for the figures, and a figure
that cannot be drawn is left out with a note.
"""

from __future__ import annotations

import html

from . import units

__all__ = ["scene_html", "result_html", "analysis_html", "budget_html", "ghost_table_html",
           "verdicts_html", "figure_html", "GHOST_ROWS"]

#: Paths shown per ghost table.
GHOST_ROWS = 10

_e = html.escape
_STYLE = ("<style>table.tracer{border-collapse:collapse;margin:.3em 0 .8em;font-size:.9em}"
          "table.tracer th,table.tracer td{border:1px solid #ccc;padding:.15em .45em;text-align:left}"
          "table.tracer td.num{text-align:right;font-variant-numeric:tabular-nums}"
          ".tracer-fail{color:#b00020;font-weight:bold}</style>")


def _table(header, rows, row_classes=None) -> str:
    out = ['<table class="tracer"><tr>' + "".join(f"<th>{_e(str(h))}</th>" for h in header) + "</tr>"]
    for i, row in enumerate(rows):
        cls = f' class="{row_classes[i]}"' if row_classes and row_classes[i] else ""
        out.append(f"<tr{cls}>" + "".join(
            f'<td class="num">{_e(c)}</td>' if _numeric(c) else f"<td>{_e(str(c))}</td>"
            for c in row) + "</tr>")
    return "".join(out) + "</table>"


def _numeric(c) -> bool:
    return isinstance(c, str) and c[:1] in "-+0123456789" and not c.endswith(")")


def _pct(x: float) -> str:
    return f"{100 * x:.4g} %"


def figure_html(fig, alt: str) -> str:
    """A matplotlib figure as an inline PNG (the figure is closed)."""
    from .report.figures import close, figure_png
    from .versions.html import png_img

    try:
        return png_img(figure_png(fig), alt)
    finally:
        close(fig)


def _diagram(scene, result=None) -> str:
    try:
        from .plot import draw_2d
        from .report.figures import drawing_result

        fig = draw_2d(scene, None if result is None else drawing_result(result))
        return figure_html(fig, "ray diagram" if result is not None else "scene section")
    except ImportError as exc:  # matplotlib missing: tables only
        return f"<p><i>diagram not drawn: {_e(str(exc))}</i></p>"


def scene_html(scene, *, figure: bool = True) -> str:
    """HTML of a scene: what it holds, and its section drawing."""
    from .scene.summary import summarize

    d = summarize(scene)
    parts = [_STYLE, f"<h3>{_e(scene.title)}</h3>",
             f"<p>{_e(str(scene.path or '(no file)'))}: {scene.dimension}D, ambient "
             f"{_e(scene.ambient_name)}, seed {scene.seed}</p>"]
    rows = []
    for name, s in d["solids"].items():
        treated = [f"{f}: {t.get('coating') or t['treatment']}" for f, t in s["faces"].items()
                   if t["treatment"] != "uncoated"]
        rows.append((name, s["kind"], s["material"], ", ".join(treated) or "uncoated"))
    parts.append("<h4>Solids</h4>" + _table(("solid", "kind", "material", "treated faces"), rows))
    if d["gaps"]:
        rows = [(n, " / ".join(g["faces"]), g["medium"], units.format_length(g["thickness_m"]))
                for n, g in d["gaps"].items()]
        parts.append("<h4>Gaps</h4>" + _table(("gap", "faces", "medium", "thickness"), rows))
    if d["sources"]:
        rows = [(n, s["kind"], units.format_power(s["power_W"]), str(s["rays"]),
                 ", ".join(units.format_wavelength(w) for w in s["spectrum"]["wavelengths_m"]),
                 s["polarization"]["label"]) for n, s in d["sources"].items()]
        parts.append("<h4>Sources</h4>" + _table(
            ("source", "kind", "power", "rays", "wavelengths", "polarisation"), rows))
    if d["detectors"]:
        rows = [(n, t["kind"], " x ".join(units.format_length(x) for x in (t.get("size_m") or []))
                 if t["kind"] == "plane" else "-") for n, t in d["detectors"].items()]
        parts.append("<h4>Detectors</h4>" + _table(("detector", "kind", "size"), rows))
    if d["requirements"]:
        rows = [(n, r["kind"], r["detector"] or r["gap"] or "",
                 _pct(r["limit"]) if r["relative"] else f"{r['limit']:.4g}")
                for n, r in d["requirements"].items()]
        parts.append("<h4>Requirements</h4>" + _table(("requirement", "kind", "on", "limit"), rows))
    if figure:
        parts.append(_diagram(scene))
    return "\n".join(parts)


def budget_html(budget) -> str:
    """HTML table of a power budget, with the closure residual."""
    rows = [(r.category, r.name, f"{r.power_w:.4g}", _pct(r.fraction)) for r in budget.rows]
    rows.append(("closure residual", "", f"{budget.residual_w:.3g}",
                 f"{budget.relative_residual:.2g}"))
    return (_STYLE + f"<h4>Power budget (source {units.format_power(budget.source_power_w)})</h4>"
            + _table(("account", "name", "power [W]", "of source"), rows))


def ghost_table_html(table, *, limit: int = GHOST_ROWS) -> str:
    """HTML of a ghost table: the strongest paths, the design path marked."""
    head = (f"<h4>Detector {_e(table.detector)}: {table.power_w:.4g} W, "
            f"{len(table.rows)} paths; design path by rule \"{_e(table.design_rule)}\"</h4>")
    rows = []
    for r in table.rows[:limit]:
        mark = "*" if r.design else ("=" if r.equivalent else "")
        se = f"{r.standard_error_w:.2g}" if r.standard_error_w > 0 else "-"
        rows.append((f"{r.rank}{mark}", r.light, f"{r.power_w:.4g}", se, _pct(r.fraction),
                     "-" if r.ratio is None else f"{r.ratio:.4g}", str(r.reflections), r.label))
    more = (f"<p>... {len(table.rows) - limit} weaker paths</p>" if len(table.rows) > limit else "")
    return (_STYLE + head + _table(("rank", "light", "power [W]", "± s.e. [W]", "of source",
                                    "to design", "refl", "path"), rows) + more)


def verdicts_html(verdicts) -> str:
    """HTML table of requirement verdicts."""
    if not verdicts:
        return "<p>requirements: none declared</p>"
    rows, classes = [], []
    for v in verdicts:
        verdict = getattr(v, "verdict", None) or ("pass" if v.passed else "fail")
        rows.append((v.name, v.kind, v.subject, f"{v.value:.4g}", f"{v.comparison} {v.limit:.4g}",
                     v.unit, verdict))
        classes.append("" if verdict == "pass" else "tracer-fail")
    return (_STYLE + "<h4>Requirements</h4>"
            + _table(("requirement", "kind", "on", "value", "limit", "unit", "verdict"), rows, classes))


def analysis_html(analysis, *, figure: bool = True) -> str:
    """HTML of a run: budget, ghost tables, verdicts and the ray diagram."""
    res = analysis.result
    parts = [_STYLE, f"<h3>{_e(res.scene.title)}: {res.events} events, mode {res.options.mode}, "
                     f"seed {res.options.seed}</h3>",
             verdicts_html(analysis.verdicts), budget_html(analysis.budget)]
    parts += [ghost_table_html(t) for t in analysis.ghosts.values()]
    if figure:
        parts.append(_diagram(res.scene, res))
    return "\n".join(parts)


def result_html(result, *, figure: bool = True) -> str:
    """HTML of a trace (analysed on the fly)."""
    from .analysis import analyse

    return analysis_html(analyse(result), figure=figure)
