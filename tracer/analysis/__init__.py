"""Stray-light analysis of a trace: power budget, ghost tables, leakage, requirements.

Everything here reads a :class:`tracer.engine.Result` and returns plain objects with
``to_dict()`` (JSON), ``to_csv()`` and ``format_text()`` outputs:

* :func:`power_budget` -- where the source power went, closing to the source power;
* :func:`ghost_table` / :func:`ghost_tables` -- paths on a detector ranked by power,
  with the design path marked;
* :func:`gap_crossings` / :func:`gap_leakage` -- power that crossed a gap (booked by the
  engine at each crossing; tunnelled and refracted shares) over source power;
* :func:`evaluate` -- the scene's requirements as verdicts;
* :func:`analyse` and :func:`run_summary` -- all of it at once, and the JSON summary.
"""

from .budget import BudgetRow, PowerBudget, power_budget
from .ghosts import GhostRow, GhostTable, ghost_label, ghost_table, ghost_tables, matches_sequence
from .leakage import (gap_crossings, gap_faces, gap_leakage, gap_tunnel_table,
                      gap_tunnelled_power, path_tunnelled_power, tunnelled_power)
from .requirements import Verdict, all_passed, evaluate, format_verdicts
from .summary_json import SCHEMA_VERSION, RunAnalysis, analyse, run_summary, write_json

__all__ = [
    "BudgetRow", "PowerBudget", "power_budget",
    "GhostRow", "GhostTable", "ghost_label", "ghost_table", "ghost_tables", "matches_sequence",
    "gap_crossings", "gap_faces", "gap_leakage", "gap_tunnel_table", "gap_tunnelled_power",
    "path_tunnelled_power", "tunnelled_power",
    "Verdict", "all_passed", "evaluate", "format_verdicts",
    "SCHEMA_VERSION", "RunAnalysis", "analyse", "run_summary", "write_json",
]
