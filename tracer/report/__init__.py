"""The design-document report: one self-contained HTML file per scene.

:func:`build_report` traces a scene (or takes a trace already made), analyses it and
renders the page: safety caution, requirement verdicts, scene summary, power budget,
ghost tables, design path, figures (embedded PNG) and the trace settings.

>>> from tracer.report import CAUTION_TEXT
>>> "not a safety certification" in CAUTION_TEXT
True
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

from .caution import CAUTION_HTML, CAUTION_TEXT

__all__ = ["Report", "build_report", "write_report", "CAUTION_TEXT", "CAUTION_HTML"]


@dataclass
class Report:
    """A rendered report: the page, and what went into it."""

    html: str
    analysis: object
    figures: list = field(default_factory=list)
    skipped: list = field(default_factory=list)

    @property
    def passed(self) -> bool:
        return self.analysis.passed

    def write(self, path: str | os.PathLike) -> Path:
        """Write the page (UTF-8, atomically); an unwritable path is a TracerError."""
        from ..outputs import atomic_write_text

        return atomic_write_text(Path(path), self.html)  # TracerError when unwritable


def build_report(scene, *, result=None, figures: bool = True, kinds=None, segments: int = 3000,
                 ghost_limit: int = 25, **settings) -> Report:
    """Trace (unless ``result`` is given), analyse and render the report of ``scene``.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    result : tracer.engine.Result, optional
        A trace of ``scene``; traced here with ``settings`` when not given.
    figures : bool
        Embed figures (needs matplotlib and :mod:`tracer.plot`).
    kinds : tuple of str, optional
        Figure kinds (default every kind in :data:`tracer.report.figures.KINDS`).
    segments : int
        Ray segments recorded for the ray diagrams.
    ghost_limit : int
        Rows per ghost table.
    **settings
        Trace settings for :func:`tracer.engine.trace`.
    """
    from ..analysis import analyse
    from ..engine import trace, trace_sequence
    from ..errors import TracerError
    from ..scene import summarize
    from . import figures as figmod
    from .html import render_html

    if result is None:
        result = trace(scene, segments=segments if figures else 0, **settings)
    analysis = analyse(result)
    seq = seq_error = None
    if scene.settings.sequence:
        try:
            seq = trace_sequence(scene).summary()
        except TracerError as exc:
            seq_error = str(exc)
    skipped: list = []
    pngs = []
    if figures:
        made = figmod.make_figures(result, analysis, kinds=kinds or figmod.KINDS, skipped=skipped)
        for f in made:
            try:
                pngs.append((f.name, f.title, figmod.figure_png(f.figure)))
            finally:
                figmod.close(f.figure)
    page = render_html(analysis=analysis, scene_summary=summarize(scene), figures=pngs,
                       sequence=seq, sequence_error=seq_error, skipped=skipped,
                       ghost_limit=ghost_limit)
    return Report(html=page, analysis=analysis, figures=[(n, t) for n, t, _ in pngs], skipped=skipped)


def write_report(scene, path, **kw) -> Report:
    """:func:`build_report` and write it to ``path``."""
    rep = build_report(scene, **kw)
    rep.write(path)
    return rep
