"""Diff of two scenes end to end: documents, traces, summaries (what ``tracer diff`` runs).

>>> # d = diff("HEAD~1:scenes/plate_ghost.toml", "scenes/plate_ghost.toml", rays=50)
>>> # d.worse, print(d.format_text())
"""

from __future__ import annotations

from dataclasses import dataclass

from .result_diff import ResultDiff, diff_summaries
from .revisions import parse_spec, read_document
from .scene_diff import SceneDiff, diff_documents

__all__ = ["Diff", "diff"]

#: Paths per detector kept in the summaries compared (ghosts matched by signature).
MAX_PATHS = 1000


@dataclass
class Diff:
    """A scene diff with, when traced, the result diff and both traces."""

    scene: SceneDiff
    results: ResultDiff | None = None
    old_scene: object = None
    new_scene: object = None
    old_result: object = None
    new_result: object = None
    old_summary: dict | None = None
    new_summary: dict | None = None

    @property
    def worse(self) -> bool:
        """A requirement verdict got worse."""
        return bool(self.results is not None and self.results.worse)

    def format_text(self) -> str:
        parts = [self.scene.format_text()]
        if self.results is not None:
            parts.append(self.results.format_text())
        return "\n\n".join(parts)

    def to_dict(self) -> dict:
        from ..analysis.summary_json import CAUTION

        return dict(schema="tracer-diff", schema_version=1, caution=CAUTION, worse=self.worse,
                    scene=self.scene.to_dict(),
                    results=None if self.results is None else self.results.to_dict())

    def overlay_figure(self):
        """Both ray diagrams on one axes (:func:`tracer.plot.draw_overlay`)."""
        from ..plot import draw_overlay
        from ..report.figures import drawing_result

        return draw_overlay(self.old_scene, self.old_result and drawing_result(self.old_result),
                            self.new_scene, self.new_result and drawing_result(self.new_result),
                            labels=(self.scene.old_name, self.scene.new_name))

    def overlay_png(self) -> bytes | None:
        if self.old_scene is None or self.new_scene is None:
            return None
        from ..report.figures import close, figure_png

        fig = self.overlay_figure()
        try:
            return figure_png(fig)
        finally:
            close(fig)

    def html(self, *, figure: bool = True) -> str:
        """A self-contained HTML page."""
        from ..analysis.summary_json import CAUTION
        from .html import diff_page

        return diff_page(self.scene, self.results, caution=CAUTION,
                         overlay_png=self.overlay_png() if figure else None)

    def _repr_html_(self) -> str:
        from .html import scene_diff_html, result_diff_html, png_img

        out = scene_diff_html(self.scene)
        if self.results is not None:
            out += result_diff_html(self.results)
        png = self.overlay_png()
        if png:
            out += png_img(png, "overlay of the two ray diagrams")
        return out


def diff(old, new, *, trace: bool = True, cwd=None, **settings) -> Diff:
    """Compare two scene specs (files or ``REV:path``).

    Parameters
    ----------
    old, new : str
        Scene files or ``REV:path`` (see :mod:`tracer.versions.revisions`).
    trace : bool
        Also trace both (same settings) and compare the run summaries.
    **settings
        Passed to :func:`tracer.trace` for both scenes (``rays``, ``seed``, ...).
    """
    from ..scene.loader import from_dict

    so, sn = parse_spec(old), parse_spec(new)
    doc_o, name_o, base_o = read_document(so, cwd=cwd)
    doc_n, name_n, base_n = read_document(sn, cwd=cwd)
    out = Diff(scene=diff_documents(doc_o, doc_n, old_name=name_o, new_name=name_n))
    out.old_scene = from_dict(doc_o, path=name_o, base_dir=base_o)
    out.new_scene = from_dict(doc_n, path=name_n, base_dir=base_n)
    if trace:
        from ..analysis import analyse, run_summary
        from ..engine import trace as run_trace

        settings.setdefault("progress", False)
        out.old_result = run_trace(out.old_scene, **settings)
        out.new_result = run_trace(out.new_scene, **settings)
        out.old_summary = run_summary(analyse(out.old_result), max_paths=MAX_PATHS)
        out.new_summary = run_summary(analyse(out.new_result), max_paths=MAX_PATHS)
        out.results = diff_summaries(out.old_summary, out.new_summary, old_name=name_o,
                                     new_name=name_n)
    return out
