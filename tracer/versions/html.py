"""HTML of scene and result diffs: fragments (Jupyter) and the page ``tracer diff --html``."""

from __future__ import annotations

import base64
import html

__all__ = ["scene_diff_html", "result_diff_html", "diff_page", "png_img"]

_CSS = """
body { font-family: system-ui, sans-serif; margin: 2em; color: #222; max-width: 70em; }
table.tracer { border-collapse: collapse; margin: 0.5em 0 1em; font-size: 0.9em; }
table.tracer th, table.tracer td { border: 1px solid #ccc; padding: 0.2em 0.5em; text-align: left;
  vertical-align: top; }
table.tracer td.num { text-align: right; font-variant-numeric: tabular-nums; }
.added { background: #e8f6e8; } .removed { background: #fbeaea; } .worse { color: #b00020;
  font-weight: bold; } .caution { font-size: 0.85em; color: #555; }
"""

_e = html.escape


def png_img(png: bytes, alt: str) -> str:
    """An inline ``<img>`` of PNG bytes."""
    return (f'<img alt="{_e(alt)}" style="max-width:100%" '
            f'src="data:image/png;base64,{base64.b64encode(png).decode()}">')


def _table(header, rows, classes=None) -> str:
    out = ['<table class="tracer"><tr>' + "".join(f"<th>{_e(h)}</th>" for h in header) + "</tr>"]
    for i, row in enumerate(rows):
        cls = f' class="{classes[i]}"' if classes and classes[i] else ""
        cells = "".join(f'<td class="num">{_e(str(c))}</td>' if isinstance(c, (int, float))
                        else f"<td>{_e(str(c))}</td>" for c in row)
        out.append(f"<tr{cls}>{cells}</tr>")
    return "\n".join(out) + "</table>"


def scene_diff_html(d) -> str:
    from .scene_diff import show

    title = f"<h3>Scene: {_e(d.old_name)} &rarr; {_e(d.new_name)}</h3>"
    if d.identical:
        return title + "<p>No difference by meaning (order, layout, comments and units aside).</p>"
    rows = [(c.kind, c.key, "" if c.kind == "added" else show(c.old),
             "" if c.kind == "removed" else show(c.new)) for c in d.changes]
    return title + _table(("change", "key path", "old", "new"), rows,
                          [c.kind if c.kind != "changed" else "" for c in d.changes])


def _fmt(v, key="") -> str:
    if v is None:
        return "n/a"
    return f"{v:.4g}" + (" W" if key.endswith("_w") else "")


def result_diff_html(d) -> str:
    parts = [f"<h3>Results: {_e(d.old_name)} &rarr; {_e(d.new_name)}</h3>"]
    if d.verdicts:
        rows = [(v.name, v.old or "(absent)", v.new or "(absent)", "worse" if v.worse else "")
                for v in d.verdicts]
        parts.append("<h4>Requirement verdicts that changed</h4>"
                     + _table(("requirement", "old", "new", ""), rows,
                              ["worse" if v.worse else "" for v in d.verdicts]))
    else:
        parts.append("<p>Requirement verdicts: no change.</p>")
    moved = d.changed_accounts()
    if moved:
        rows = [(a.key, _fmt(a.old, a.key), _fmt(a.new, a.key),
                 "n/a" if a.delta is None else f"{a.delta:+.4g}",
                 "n/a" if a.relative is None else f"{a.relative:+.3%}") for a in moved]
        parts.append("<h4>Budget and accounts</h4>"
                     + _table(("account", "old", "new", "delta", "relative"), rows))
    else:
        parts.append("<p>Accounts: no change.</p>")
    pc = d.path_changes()
    if pc:
        rows = [(p.detector, p.status, _fmt(p.old_w, "_w"), _fmt(p.new_w, "_w"),
                 "" if p.ratio is None else f"{p.ratio:.4g}", p.label or p.signature) for p in pc]
        parts.append("<h4>Ghost paths (matched by signature)</h4>"
                     + _table(("detector", "status", "old", "new", "new/old", "path"), rows,
                              [{"new": "added", "gone": "removed"}.get(p.status, "") for p in pc]))
    else:
        parts.append("<p>Ghost paths: no change.</p>")
    return "\n".join(parts)


def diff_page(scene_diff, result_diff=None, *, overlay_png: bytes | None = None,
              caution: str = "") -> str:
    """A self-contained HTML page of a diff."""
    title = f"tracer diff: {scene_diff.old_name} vs {scene_diff.new_name}"
    body = [f"<h1>{_e(title)}</h1>"]
    if caution:
        body.append(f'<p class="caution">{_e(caution)}</p>')
    if result_diff is not None and result_diff.worse:
        body.append('<p class="worse">A requirement verdict got worse.</p>')
    body.append(scene_diff_html(scene_diff))
    if result_diff is not None:
        body.append(result_diff_html(result_diff))
    if overlay_png:
        body.append("<h3>Ray diagrams overlaid</h3>" + png_img(overlay_png, "overlay of the two ray diagrams"))
    return (f'<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8"><title>{_e(title)}</title>'
            f"<style>{_CSS}</style></head><body>\n" + "\n".join(body) + "\n</body></html>\n")
