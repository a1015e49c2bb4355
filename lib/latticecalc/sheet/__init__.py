"""The calc sheet: formulas, steps, checks, results, and how they are shown."""

from latticecalc.sheet.display import assumption, figure, note, summary, table
from latticecalc.sheet.formula import Formula
from latticecalc.sheet.result import CalcResult, combine
from latticecalc.sheet.source import COMMON_PRACTICE, Source
from latticecalc.sheet.step import Check, Step, check, evaluate, quantity_step

__all__ = ["COMMON_PRACTICE", "CalcResult", "Check", "Formula", "Source", "Step", "assumption",
           "check", "combine", "evaluate", "figure", "note", "quantity_step", "summary", "table"]
