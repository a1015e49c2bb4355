"""Figures and tables of a study result (drawn from the result object; imported by the study notebook only)."""

from __future__ import annotations

from collections import Counter
from typing import Any

from latticecalc.study.engine import StudyResult


def mass_margin_figure(result: StudyResult, *, margin: str = "il_margin", mass_limit: float | None = None) -> Any:
    """Panel mass against the hand insertion-loss margin of every design, coloured by hand feasibility.

    Designs that reached the Bloch or coupled stage are ringed; the Pareto set is drawn as stars; the
    study's mass limit [kg], when given, is a dashed vertical line.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(6.4, 4.2))
    ok = [r for r in result.records if r.feasible("hand") and "panel_mass" in r.outputs["hand"]]
    bad = [r for r in result.records if not r.feasible("hand") and "panel_mass" in r.outputs["hand"]]
    for group, colour, label in ((bad, "0.7", "fails a hand check"), (ok, "tab:blue", "passes the hand checks")):
        ax.scatter([r.outputs["hand"]["panel_mass"] for r in group], [r.outputs["hand"].get(margin) for r in group],
                   s=14, c=colour, label=f"{label} ({len(group)})")
    later = [r for r in result.records if "bloch" in r.outputs or "coupled" in r.outputs]
    if later:
        ax.scatter([r.outputs["hand"]["panel_mass"] for r in later], [r.outputs["hand"].get(margin) for r in later],
                   s=70, facecolors="none", edgecolors="tab:orange", label="checked by the Bloch/coupled models")
    best = [result.record(i) for i in result.pareto]
    if best:
        ax.scatter([r.outputs["hand"]["panel_mass"] for r in best], [r.outputs["hand"].get(margin) for r in best],
                   marker="*", s=160, c="tab:red", label="Pareto set")
    ax.axhline(0.0, color="k", lw=0.8)
    if mass_limit is not None:
        ax.axvline(mass_limit, color="tab:red", lw=0.9, ls="--", label=f"mass limit ({mass_limit:g} kg)")
    ax.set_xlabel("panel mass (kg)")
    ax.set_ylabel("insertion-loss margin, hand estimate (dB)")
    ax.legend(fontsize=8, loc="best")
    fig.tight_layout()
    return fig


def binding_rows(result: StudyResult) -> list[list[str]]:
    """(stage, check, designs failing it, designs evaluated) rows: which constraint binds where."""
    rows = []
    for stage in ("hand", "bloch", "coupled"):
        at = [r for r in result.records if stage in r.outputs]
        if not at:
            continue
        c = Counter(name for r in at for name in r.lacks.get(stage, ()))
        for name, n in c.most_common():
            rows.append([stage, name, str(n), str(len(at))])
        rows.append([stage, "(none failed)", str(sum(1 for r in at if not r.lacks.get(stage))), str(len(at))])
    return rows
