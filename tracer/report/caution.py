"""The safety caution every report carries (our own wording)."""

from __future__ import annotations

__all__ = ["CAUTION_TEXT", "CAUTION_HTML"]

CAUTION_TEXT = (
    "Safety caution. This report is an engineering estimate computed from a ray model; it is "
    "not a safety certification. Laser and microwave sources can injure eyes and skin. Ghost "
    "reflections from faces, coatings and gaps can leave an assembly in unexpected directions "
    "and reach eyes even when the design path is enclosed, and real parts scatter, chip and "
    "misalign in ways the model does not include. Before anyone is exposed, measure the stray "
    "beams, and follow the laser safety standards (such as IEC 60825-1) and radio-frequency "
    "exposure limits that apply where you work, your local codes and licensed professional "
    "practice; defer to your laser or radiation safety officer."
)

CAUTION_HTML = (
    '<aside class="caution" role="note"><strong>Safety caution</strong>'
    "This report is an engineering estimate computed from a ray model; it is not a safety "
    "certification. Laser and microwave sources can injure eyes and skin. Ghost reflections from "
    "faces, coatings and gaps can leave an assembly in unexpected directions and reach eyes even "
    "when the design path is enclosed, and real parts scatter, chip and misalign in ways the model "
    "does not include. Before anyone is exposed, measure the stray beams, and follow the laser "
    "safety standards (such as IEC&nbsp;60825-1) and radio-frequency exposure limits that apply "
    "where you work, your local codes and licensed professional practice; defer to your laser or "
    "radiation safety officer.</aside>"
)
