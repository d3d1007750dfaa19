"""Which faces light up a detector: detected scattered power ranked by the face that
scattered it last.

A designer's first stray-light question: of the light a sensor receives by scatter, which
surfaces send it? Every detected path with a scatter event (``SR``/``ST`` in its
signature) is credited to the face of its **last** scatter event (the surface the sensor
"sees" glowing); the specular rest of the detector's power is reported apart.
"""

from __future__ import annotations

__all__ = ["scatter_ranking", "format_scatter_ranking"]

_SCATTER = ("scatter-r", "scatter-t")


def scatter_ranking(result, detector: str) -> dict:
    """Scattered power on ``detector`` by last scattering face.

    Returns
    -------
    dict
        ``faces``: list of ``{"face", "power_w", "share"}`` strongest first (share of the
        detector's scattered power), ``scattered_w``, ``specular_w`` [W] and
        ``standard_error_w`` (of the scattered power).
    """
    by_face: dict[str, float] = {}
    specular = 0.0
    for p in result.paths(detector):
        last = [face for face, kind in p["events"] if kind in _SCATTER]
        if last:
            by_face[last[-1]] = by_face.get(last[-1], 0.0) + p["power_w"]
        else:
            specular += p["power_w"]
    total = sum(by_face.values())
    faces = [dict(face=f, power_w=w, share=w / total if total else 0.0)
             for f, w in sorted(by_face.items(), key=lambda kv: (-kv[1], kv[0]))]
    return dict(faces=faces, scattered_w=total, specular_w=specular,
                standard_error_w=float(result.detector_standard_error(detector)))


def format_scatter_ranking(result, detector: str, *, limit: int = 10) -> str:
    """Text table of :func:`scatter_ranking` ('' when nothing scattered reaches it): the
    ``limit`` strongest faces, the rest in one row."""
    from .tables import fmt_fraction, fmt_sci, format_table

    r = scatter_ranking(result, detector)
    if not r["faces"]:
        return ""
    faces = r["faces"]
    rows = [[f["face"], fmt_sci(f["power_w"]), fmt_fraction(f["share"])] for f in faces[:limit]]
    if len(faces) > limit + 1:
        rest = faces[limit:]
        rows.append([f"{len(rest)} more faces", fmt_sci(sum(f["power_w"] for f in rest)),
                     fmt_fraction(sum(f["share"] for f in rest))])
    else:
        rows += [[f["face"], fmt_sci(f["power_w"]), fmt_fraction(f["share"])]
                 for f in faces[limit:]]
    head = (f"Scattered light on {detector}: {fmt_sci(r['scattered_w'])} W "
            f"(standard error {fmt_sci(r['standard_error_w'])} W), by the face that scattered "
            f"it last")
    return head + "\n" + format_table(["face", "power [W]", "share"], rows)
