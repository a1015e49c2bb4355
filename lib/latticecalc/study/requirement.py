"""What a study must achieve, and the fixed part of every design it evaluates, read from a column-panel project.

The requirement (targeted peaks, their spread, the insertion loss each needs, the ground-motion
direction), the column with its brackets, the tolerances and the self-weight limits are read through the
same calls the column-panel notebooks make (:func:`latticecalc.project.column_panel.receiver_setup`), so
the study targets exactly what the project's floor check will check. The project's own design supplies
every design value the study's space does not vary.

Everything is kept as plain numbers and text (:class:`StudyContext`), so an evaluation can be shipped to
another process or machine (Dask workers) and rebuilt there, and so it fingerprints the same everywhere.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from latticecalc.errors import InputError


class RequirementError(InputError):
    """The project gives no requirement a study can search for (no peaks, no required loss)."""


def plain(value: Any) -> Any:
    """A TOML/tomlkit value as plain Python (dicts, lists, str, float, int, bool)."""
    if hasattr(value, "unwrap"):
        value = value.unwrap()
    if isinstance(value, Mapping):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(v) for v in value]
    return value


@dataclass(frozen=True, kw_only=True)
class Requirement:
    """The targeted peaks [Hz], their ± spread (fraction), the insertion loss each needs [dB], the direction."""

    peaks: tuple[float, ...]
    required: tuple[float, ...]
    spread: float
    direction: str
    source: str

    def __post_init__(self) -> None:
        if not self.peaks:
            raise RequirementError("the requirement has no targeted peaks: nothing to design for",
                                   input_name="coverage.target_peaks",
                                   expected="peaks from a site-survey export (coverage.survey_results) or listed")
        if len(self.required) != len(self.peaks):
            raise RequirementError("one required insertion loss per peak", input_name="receiver.required_loss",
                                   expected=f"{len(self.peaks)} values", got=f"{len(self.required)}")
        if any(not (math.isfinite(p) and p > 0) for p in self.peaks):
            raise RequirementError("a targeted peak is not a positive frequency", input_name="coverage.target_peaks",
                                   expected="> 0 Hz", got=repr(self.peaks))


@dataclass(frozen=True, kw_only=True)
class StudyContext:
    """The fixed part of every evaluation: requirement, base design, column, brackets, limits, numerics.

    Plain data only (numbers in the units their names state, text, lists); see the module docstring.
    """

    requirement: Requirement
    base: Mapping[str, Any]
    material_overrides: Mapping[str, Any]
    column: Mapping[str, Any]
    fixing: Mapping[str, Any]
    faces: tuple[str, ...]
    base_height_m: float
    tolerance: Mapping[str, Any]
    selfweight: Mapping[str, Any]
    node_zones: str
    limits: Mapping[str, Any] = field(default_factory=dict)
    numerics: Mapping[str, Any] = field(default_factory=dict)


#: Numerical settings of the staged model (a study may override them under [numerics]).
DEFAULT_NUMERICS = {"bloch_elements": 4, "bloch_bands": 24, "bloch_points": 30, "bloch_zone_points": 0,
                    "bloch_strut_modes": 4, "coupled_elements": 4, "coupled_strut_modes": 4}


def _q(value: Any, unit: str) -> float | None:
    return None if value is None else float(value.to(unit).m)


def context_from_project(folder: str | Path, *, limits: Mapping[str, Any] | None = None,
                         numerics: Mapping[str, Any] | None = None) -> StudyContext:
    """Read the requirement and the fixed design of a column-panel project (its inputs, read-only).

    Raises :class:`RequirementError` when the project names no targeted peak, and the project's own
    named input errors when its inputs, survey export or column do not validate.
    """
    from latticecalc.project import column_panel
    from latticecalc.project.project import open_project

    proj = open_project(folder)
    if proj.template.name != "column-panel":
        raise InputError("the requirement is read from a column-panel project", input_name="study.project",
                         expected="a folder made from the column-panel template", got=repr(proj.template.name))
    inp = proj.inputs
    if not (inp.get("coverage.survey_results") or inp.get("coverage.target_peaks")):
        raise RequirementError("the project names no targeted peaks: nothing to design for",
                               input_name="coverage.target_peaks", file=inp.file,
                               expected="a site-survey export (coverage.survey_results) or listed peaks")
    design = column_panel.design_from_inputs(inp, folder=proj.folder)
    setup = column_panel.receiver_setup(proj, design)
    peaks = tuple(float(f) for f in setup.targets.to("Hz").m)
    spread_hz = inp.get("coverage.peak_spread_hz")
    spread = inp.get("coverage.peak_spread")
    if spread_hz is not None and peaks:
        spread = float(spread_hz.to("Hz").m) / min(peaks)
    elif spread is None:
        from latticecalc.signals.coverage import DEFAULT_PEAK_SPREAD

        spread = DEFAULT_PEAK_SPREAD
    req = Requirement(peaks=peaks, required=tuple(float(r) for r in setup.required.to("dB").m), spread=float(spread),
                      direction=setup.direction, source=setup.required_source)
    spec = next((s for s in proj.template.inputs if s.name == "lattice.node_zones"), None)
    node_zones = inp.get("lattice.node_zones", spec.default if spec is not None else "none")
    added = inp.get("lattice.added_mass")
    base = {"cell.kind": inp["cell.kind"], "cell.width": _q(inp["cell.width"], "mm"),
            "lattice.strut_diameter": _q(inp["lattice.strut_diameter"], "mm"),
            "lattice.material": inp["lattice.material"],
            "lattice.added_mass": _q(added, "g") if added is not None else 0.0,
            "lattice.added_mass_material": inp.get("lattice.added_mass_material") or "steel-s355",
            "frame.enabled": bool(inp.get("frame.enabled", True)),
            "frame.strut_diameter": _q(inp["frame.strut_diameter"], "mm"),
            "frame.wall_thickness": _q(inp.get("frame.wall_thickness"), "mm") or 0.0,
            "frame.material": inp["frame.material"], "panel.cells_deep": int(inp["panel.cells_deep"])}
    if inp.get("cell.custom"):
        raise InputError("a study varies the built-in cells only", input_name="cell.kind", file=inp.file,
                         expected="octet, simple-cubic, bcc, fcc or diamond", got="custom")
    col = setup.column
    column = {"shape": col.shape, "width_m": _q(col.width, "m"), "depth_m": _q(col.depth, "m"),
              "height_m": _q(col.height, "m"), "material": inp["column.material"],
              "head_mass_kg": _q(col.head_mass, "kg"), "head": col.head,
              "head_translation_N_per_m": _q(inp.get("column.head_translation"), "N/m"),
              "head_rotation_N_m": _q(inp.get("column.head_rotation"), "N*m")}
    fx = setup.fixings
    fixing = {"levels": str(inp["fixing.levels"]), "normal_N_per_m": _q(fx.normal, "N/m"),
              "along_N_per_m": _q(fx.along, "N/m"), "vertical_N_per_m": _q(fx.vertical, "N/m"),
              "loss_factor": float(fx.loss_factor)}
    tolerance = {"modulus": float(inp["tolerance.modulus"]), "diameter_mm": _q(inp["tolerance.strut_diameter"], "mm"),
                 "length_mm": _q(inp["tolerance.strut_length"], "mm"), "density": float(inp["tolerance.density"])}
    selfweight = {"deflection_limit_mm": _q(inp["selfweight.deflection_limit"], "mm"),
                  "safety_factor": float(inp["selfweight.buckling_safety_factor"]),
                  "long_term": bool(inp["selfweight.long_term"]),
                  "strut_end_condition": inp["selfweight.strut_end_condition"],
                  "frame_end_condition": inp["selfweight.frame_end_condition"], "k_value": inp["selfweight.k_value"]}
    nums = dict(DEFAULT_NUMERICS)
    nums.update({k: int(v) for k, v in (numerics or {}).items()})
    return StudyContext(requirement=req, base=base, material_overrides=plain(inp.get("materials") or {}),
                        column=column, fixing=fixing, faces=tuple(setup.placement.faces),
                        base_height_m=_q(setup.placement.base_height, "m"), tolerance=tolerance,
                        selfweight=selfweight, node_zones=str(node_zones), limits=dict(limits or {}), numerics=nums)
