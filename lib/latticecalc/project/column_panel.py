"""The column-panel template's inputs turned into the objects its notebooks share.

Every column-panel notebook starts from the same cell, materials and panel size; building them
here, once, keeps the notebooks thin and the same in each section. No physics here: this only
reads declared inputs and calls the library's constructors.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pint

from latticecalc import materials
from latticecalc.errors import InputError
from latticecalc.materials import Material
from latticecalc.physics.cells import Cell, build_cell
from latticecalc.project.inputs import Inputs
from latticecalc.project.lineage import check_export
from latticecalc.project.project import Project
from latticecalc.sheet import CalcResult, quantity_step
from latticecalc.signals.frf import calibration_from_export
from latticecalc.units import Q_

#: Peak memory of the frame model's largest solve per degree of freedom of :func:`fe_memory_estimate`'s
#: mesh bound (bytes): measured 1.95 to 2.51 kB for framed octet panels of 4 x 12, 6 x 18 and 16 x 48 cells,
#: self-weight (2 elements per strut) and transmissibility (8), on this kit's solvers; rounded up.
FE_BYTES_PER_DOF = 3.0e3
#: Memory of the kernel with the kit loaded, before any frame model (bytes), measured 0.16 GB; rounded up.
FE_BASE_BYTES = 0.25e9


@dataclass(frozen=True, kw_only=True)
class MemoryEstimate:
    """Memory the frame-model sections are expected to need, against the project's limit."""

    dofs: int
    bytes: float
    limit: float

    @property
    def text(self) -> str:
        """``0.31 GB for 100,800 degrees of freedom (limit 4 GB)``."""
        from latticecalc.files import format_size

        return f"{format_size(self.bytes)} for {self.dofs:,} degrees of freedom (limit {format_size(self.limit)})"


def fe_memory_estimate(design: PanelDesign, *, n_elements: int, limit_gb: float) -> MemoryEstimate:
    """Peak memory of the frame-model sections, estimated before any of them runs.

    The mesh is bounded without building it: every cell contributes all its joints and struts (shared
    joints and frame members are counted in each cell, so the bound is above the mesh, by 1.4 x for a
    framed octet), each strut ``n_elements - 1`` inner nodes, six degrees of freedom a node. The memory
    is :data:`FE_BASE_BYTES` plus :data:`FE_BYTES_PER_DOF` a degree of freedom (measured, see there).
    The base depends on what else the kernel has loaded; the per-degree-of-freedom part is what grows.
    """
    cells = design.cells_wide * design.cells_high
    joints, struts = len(design.cell.nodes), len(design.cell.struts)
    dofs = 6 * cells * (joints + struts * max(int(n_elements), 2) - struts)
    return MemoryEstimate(dofs=int(dofs), bytes=FE_BASE_BYTES + FE_BYTES_PER_DOF * dofs, limit=float(limit_gb) * 1e9)


def check_fe_memory(design: PanelDesign, inputs: Inputs) -> MemoryEstimate:
    """:func:`fe_memory_estimate` for the project's inputs; an :class:`InputError` above ``fe.memory_limit``."""
    limit = inputs.get("fe.memory_limit") or 4.0
    est = fe_memory_estimate(design, n_elements=inputs["fe.elements_per_strut"], limit_gb=limit)
    if est.bytes > est.limit:
        raise InputError("the frame model of this panel would need more memory than the limit: " + est.text,
                         input_name="panel.cells_wide, panel.cells_high, fe.elements_per_strut", file=inputs.file,
                         expected=f"at most {limit:g} GB (fe.memory_limit)",
                         hint="Model fewer cells (the frame model checks the panel's attenuation per cell), "
                              "fewer elements per strut, or raise fe.memory_limit on a machine with more memory")
    return est


@dataclass(frozen=True, kw_only=True)
class PanelDesign:
    """Cell (with its frame), material per strut group, and the panel's cell counts."""

    cell: Cell
    materials: Mapping[str, Material]
    cells_wide: int
    cells_high: int
    cells_deep: int
    calibration: CalcResult | None = None
    added_mass: CalcResult | None = None
    #: Zones of a graded panel (``panel.zones``), None for a uniform panel; ``cell`` is then zone 1's cell.
    zoning: Any = None
    #: The added-mass sphere of each zone (None where a zone has none).
    zone_added: tuple = ()

    @property
    def lattice(self) -> Material:
        """The lattice struts' material."""
        return self.materials["lattice"]

    @property
    def frame(self) -> Material:
        """The frame members' material."""
        return self.materials["frame"]

    @property
    def counts(self) -> dict[str, int]:
        """``cells_wide``, ``cells_high``, ``cells_deep`` as keyword arguments."""
        return {"cells_wide": self.cells_wide, "cells_high": self.cells_high, "cells_deep": self.cells_deep}

    @property
    def framed(self) -> bool:
        """True when the cell has a frame group."""
        return "frame" in self.cell.group_names


def project_materials(inputs: Inputs) -> Mapping[str, Any] | None:
    """The project's material additions and overrides (the optional ``[materials]`` table)."""
    return inputs.get("materials")


def cell_from_inputs(inputs: Inputs) -> Cell:
    """The cell: a built-in kind, or ``custom`` from ``[cell.custom]`` nodes and struts.

    With ``frame.wall_thickness`` above zero the frame members are tubes of outer diameter
    ``frame.strut_diameter`` (see :meth:`~latticecalc.physics.cells.Cell.with_wall_thicknesses`).
    A custom cell gives ``nodes`` as fractions of the cell width (``[[0, 0, 0], [0.5, 0.5, 0.5], …]``)
    and ``struts`` as pairs of node indices (0-based).
    """
    kind = inputs["cell.kind"]
    nodes = struts = None
    if kind == "custom":
        custom = inputs.get("cell.custom")
        if not custom or "nodes" not in custom or "struts" not in custom:
            raise InputError("a custom cell needs [cell.custom] with 'nodes' and 'struts'", input_name="cell.custom",
                             file=inputs.file, expected="nodes = [[x, y, z], …] (fractions of the cell width), "
                             "struts = [[i, j], …] (0-based node indices)")
        nodes, struts = custom["nodes"], custom["struts"]
    # simple-cubic struts lie on the cube edges, where the frame would go: that cell has no frame
    framed = inputs.get("frame.enabled", True) and kind != "simple-cubic"
    cell = build_cell(kind, cell_width=inputs["cell.width"], strut_diameter=inputs["lattice.strut_diameter"],
                      frame_diameter=inputs["frame.strut_diameter"] if framed else None, nodes=nodes, struts=struts)
    # frame members as tubes: frame.strut_diameter is the outer diameter; 0 or absent is a solid rod
    wall = inputs.get("frame.wall_thickness") if framed else None
    if wall is not None and wall.to("mm").magnitude > 0:
        try:
            cell = cell.with_wall_thicknesses(frame=wall)
        except InputError as exc:
            raise InputError(exc.message, input_name="frame.wall_thickness", expected=exc.expected, got=exc.got,
                             file=inputs.file) from None
    return cell


def design_from_inputs(inputs: Inputs, *, folder: Path | None = None) -> PanelDesign:
    """Build the :class:`PanelDesign` every column-panel notebook uses.

    When ``lattice.calibration`` names a prototype-test export (relative to ``folder``, the project
    folder), the lattice material's modulus is scaled so its dynamic modulus is the calibrated one;
    ``design.calibration`` then holds the steps that show it.

    No silent defaults (common practice): the lattice and, when the cell has one, the frame material
    must state their loss factor and dynamic-to-static ratio, and with ``selfweight.long_term`` their
    long-term (creep) factor; a missing one is an :class:`InputError` naming the material and field.
    """
    overrides = project_materials(inputs)
    mats = {"lattice": materials.get(inputs["lattice.material"], overrides=overrides, file=inputs.file),
            "frame": materials.get(inputs["frame.material"], overrides=overrides, file=inputs.file)}
    long_term = bool(inputs.get("selfweight.long_term"))
    materials.require_for_vibration(mats["lattice"], role="lattice", file=inputs.file)
    if long_term:
        materials.require_for_permanent_load(mats["lattice"], role="lattice", file=inputs.file)
    calibration = None
    exported = inputs.get("lattice.calibration")
    if exported:
        if folder is None:
            raise InputError("the calibration file is relative to the project folder; pass folder=",
                             input_name="lattice.calibration", file=inputs.file)
        check_export(Path(folder) / exported, input_name="lattice.calibration", file=exported)
        found = calibration_from_export(Path(folder) / exported)
        calibration = materials.calibrated(mats["lattice"], dynamic_modulus=found.modulus, source=found.source,
                                           id_prefix="lattice.calibrated")
        mats["lattice"] = calibration.material
    cell = cell_from_inputs(inputs)
    if "frame" in cell.group_names:
        materials.require_for_vibration(mats["frame"], role="frame", file=inputs.file)
        if long_term:
            materials.require_for_permanent_load(mats["frame"], role="frame", file=inputs.file)
    added = None
    m_added = inputs.get("lattice.added_mass")
    if m_added is not None and m_added.to("kg").m > 0:
        from latticecalc.physics.added_mass import added_mass_sphere

        added = added_mass_sphere(mass=m_added, material=materials.get(
            inputs.get("lattice.added_mass_material") or "steel-s355", overrides=overrides),
            strut_diameter=inputs["lattice.strut_diameter"])
        cell = cell.with_point_mass("lattice", mass=added.value, rotary_inertia=added.rotary_inertia)
    zoning, zone_added = zoning_from_inputs(inputs, overrides=overrides)
    if zoning is not None:
        cell = zoning.zone_cell(cell, 0)
        added = zone_added[0]
    return PanelDesign(cell=cell, materials=mats, cells_wide=inputs["panel.cells_wide"],
                       cells_high=inputs["panel.cells_high"], cells_deep=inputs["panel.cells_deep"],
                       calibration=calibration, added_mass=added, zoning=zoning, zone_added=zone_added)


#: The fields of a ``panel.zones`` row: required, then optional.
ZONE_FIELDS = ("cells_high", "strut_diameter")
ZONE_OPTIONAL = ("added_mass",)


def zoning_from_inputs(inputs: Inputs, *, overrides: Mapping[str, Any] | None = None) -> tuple[Any, tuple]:
    """The graded panel's zones from ``panel.zones`` (one row a zone, bottom first), or ``(None, ())``.

    Each row: ``cells_high`` (whole number), ``strut_diameter`` (a length), optionally ``added_mass`` (a
    mass, a sphere of ``lattice.added_mass_material`` at mid-span of every lattice strut of the zone; none
    when omitted).  The zones' heights must add up to ``panel.cells_high``.  An empty list (or no
    ``panel.zones``) is a uniform panel.  Every zone uses ``lattice.material`` (with its calibration).
    """
    from latticecalc.physics.added_mass import added_mass_sphere
    from latticecalc.physics.zoning import Zone, Zoning
    from latticecalc.units import parse

    rows = inputs.get("panel.zones")
    if rows is None or (isinstance(rows, (list, tuple)) and len(rows) == 0):
        return None, ()
    name = "panel.zones"
    if not isinstance(rows, (list, tuple)):
        raise InputError("panel.zones must be a list of rows", input_name=name, file=inputs.file,
                         expected='[{ cells_high = 4, strut_diameter = "20 mm", added_mass = "0 kg" }, …]',
                         got=type(rows).__name__)
    sphere_material = materials.get(inputs.get("lattice.added_mass_material") or "steel-s355", overrides=overrides,
                                    file=inputs.file)
    zones, added = [], []
    for k, row in enumerate(rows):
        where = f"{name} row {k + 1}"
        if not isinstance(row, Mapping) or not row:
            raise InputError("a zone row is empty or not a table", input_name=where, file=inputs.file,
                             expected="cells_high, strut_diameter and optionally added_mass",
                             got=repr(dict(row)) if isinstance(row, Mapping) else repr(row))
        unknown = [key for key in row if key not in ZONE_FIELDS + ZONE_OPTIONAL]
        missing = [key for key in ZONE_FIELDS if key not in row]
        if unknown or missing:
            raise InputError("a zone row has unknown or missing fields", input_name=where, file=inputs.file,
                             expected="cells_high, strut_diameter and optionally added_mass",
                             got=("unknown " + ", ".join(unknown) if unknown else "")
                             + ("; " if unknown and missing else "") + ("missing " + ", ".join(missing) if missing
                                                                        else ""))
        d = parse(row["strut_diameter"], name=f"{where} strut_diameter", expected="length", file=inputs.file)
        m = parse(row.get("added_mass", "0 kg"), name=f"{where} added_mass", expected="mass", file=inputs.file)
        try:
            zone = Zone(cells_high=row["cells_high"], strut_diameter=d, added_mass=m)
            Zoning(zones=(zone,), input_name=f"{name} row {k + 1}")     # the row's own checks, named by its row
            sphere = None
            if m.to("kg").m > 0:
                sphere = added_mass_sphere(mass=m, material=sphere_material, strut_diameter=d,
                                           id_prefix=f"lattice.zone{k + 1}.added")
                zone = Zone(cells_high=zone.cells_high, strut_diameter=d, added_mass=sphere.value,
                            rotary_inertia=sphere.rotary_inertia)
        except InputError as exc:
            named = exc.input_name or ""
            named = named.replace(f"{where} zone 1", where) if named.startswith(name) else f"{where} {named}"
            raise InputError(exc.message, input_name=named, expected=exc.expected, got=exc.got,
                             file=inputs.file) from None
        zones.append(zone)
        added.append(sphere)
    zoning = Zoning(zones=tuple(zones), input_name=name)
    try:
        zoning.check_height(inputs["panel.cells_high"])
    except InputError as exc:
        raise InputError(exc.message, input_name=name, expected=exc.expected, got=exc.got, file=inputs.file) from None
    return zoning, tuple(added)


def bloch_options(project: Project, design: PanelDesign) -> dict[str, Any]:
    """Options of the Bloch-wave dispersion, the same in every section so the cache serves them all.

    ``node_zones`` is ``lattice.node_zones``, or the template's default where the project does not set it.
    """
    inp = project.inputs
    spec = next((s for s in project.template.inputs if s.name == "lattice.node_zones"), None)
    node_zones = inp.get("lattice.node_zones", spec.default if spec is not None else "none")
    return dict(materials=design.materials, n_elements=inp["fe.elements_per_strut"], n_bands=inp["fe.bands"],
                points=inp["fe.path_points"], zone_points=inp["fe.zone_points"],
                strut_modes=inp["fe.strut_modes"], cache=project.cache_dir, node_zones=node_zones)


@dataclass(frozen=True, kw_only=True)
class DesignedBand(CalcResult):
    """The band the coverage check uses: the computed complete gap when there is one, else the estimate."""

    low: pint.Quantity
    high: pint.Quantity
    method: str


def designed_band(*, estimate: Mapping[str, pint.Quantity], gaps: Sequence[Any], id_prefix: str = "coverage",
                  what: str = "Designed band") -> DesignedBand:
    """Pick the designed band: the complete gap of the Bloch-wave dispersion nearest the hand estimate.

    Parameters
    ----------
    estimate:
        The band estimate's value mapping (``f_low``, ``f_high`` in Hz).
    gaps:
        Complete gaps from :func:`latticecalc.physics.bloch.dispersion` (each with ``low``, ``high``).
        Empty: the hand estimate is used, and the sheet says so.
    id_prefix, what:
        Prefix of the step ids and the band's name in their descriptions (a graded panel's zone k:
        ``coverage.zone<k>``, ``"Zone k's designed band"``).
    """
    lo, hi = estimate["f_low"].to("Hz"), estimate["f_high"].to("Hz")
    centre = (lo + hi) / 2
    gap = min(gaps, key=lambda g: abs(((g.low + g.high) / 2).to("Hz") - centre), default=None)
    if gap is not None:
        low, high = gap.low.to("Hz"), gap.high.to("Hz")
        method = "complete gap of the Bloch-wave dispersion (numerical check section), nearest the estimate"
    else:
        low, high = lo, hi
        method = "hand estimate (no complete gap was computed)"
    steps = (quantity_step(id=f"{id_prefix}.band-low", description=f"{what}, lower edge", value=low, unit="Hz",
                           method=method),
             quantity_step(id=f"{id_prefix}.band-high", description=f"{what}, upper edge", value=high, unit="Hz",
                           method=method),
             quantity_step(id=f"{id_prefix}.preliminary", description="Coverage rests on the hand estimate alone "
                           "(1: preliminary, cannot be signed as checked; 0: confirmed by the computed gap)",
                           value=Q_(0 if gap is not None else 1, ""), sig=1, method=method))
    return DesignedBand(value={"low": low, "high": high}, steps=steps, low=low, high=high, method=method,
                        title="Designed stop band for the coverage check")


# --------------------------------------------------------------------------------------------------------
# the receiver: the column, its panels' placement and brackets, and the requirement
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class ReceiverSetup:
    """Everything the floor check needs, read from the inputs (and the survey export when named)."""

    column: Any
    placement: Any
    fixings: Any
    direction: str
    frequencies: pint.Quantity
    targets: pint.Quantity
    required: pint.Quantity
    required_source: str
    survey: Mapping[str, Any] | None


def _faces(text: str, inputs: Inputs) -> tuple[str, ...]:
    faces = tuple(f.strip() for f in str(text).split(",") if f.strip())
    from latticecalc.physics.receiver import FACES
    bad = [f for f in faces if f not in FACES]
    if bad or not faces:
        raise InputError("unknown column face", input_name="placement.faces", file=inputs.file,
                         expected="comma-separated faces from " + ", ".join(FACES), got=repr(text))
    return faces


def _levels(text: str, cells_high: int, inputs: Inputs) -> tuple[int, ...]:
    t = str(text).strip().lower()
    if t == "all":
        return tuple(range(cells_high + 1))
    if t == "ends":
        return (0, cells_high)
    try:
        levels = tuple(int(x) for x in t.split(",") if x.strip())
    except ValueError:
        levels = ()
    if not levels or any(lv < 0 or lv > cells_high for lv in levels):
        raise InputError("bracket levels must be 'all', 'ends' or whole numbers from 0 to cells_high",
                         input_name="fixing.levels", file=inputs.file,
                         expected=f"all | ends | levels 0..{cells_high}, comma-separated", got=repr(text))
    return levels


def receiver_setup(project: Project, design: PanelDesign) -> ReceiverSetup:
    """Build the column, placement, brackets, direction, frequencies and requirement of the floor check."""
    from latticecalc.physics import receiver
    from latticecalc.physics.column import Column
    from latticecalc.signals import coverage

    inp = project.inputs
    overrides = project_materials(inp)
    column = Column(shape=inp["column.shape"], width=inp["column.width"], depth=inp.get("column.depth"),
                    height=inp["column.height"],
                    material=materials.check_column_material(materials.get(inp["column.material"], overrides=overrides,
                                                                           file=inp.file), file=inp.file),
                    head_mass=inp["column.head_mass"], head=inp["column.head"],
                    head_translation=inp.get("column.head_translation"), head_rotation=inp.get("column.head_rotation"))
    placement = receiver.Placement(faces=_faces(inp["placement.faces"], inp), base_height=inp["placement.base_height"])
    fixings = receiver.Fixings(levels=_levels(inp["fixing.levels"], design.cells_high, inp),
                               normal=inp["fixing.normal_stiffness"], along=inp["fixing.along_stiffness"],
                               vertical=inp["fixing.vertical_stiffness"], loss_factor=inp["fixing.loss_factor"])
    # the panels must fit their column and their brackets sit on its face: checked here, before any sweep
    receiver.place_panels(design.cell, nx=design.cells_wide, ny=design.cells_high, column=column,
                          placement=placement, fixings=fixings)
    survey_file = inp.get("coverage.survey_results")
    direction = inp.get("receiver.direction")
    survey = None
    if survey_file:
        check_export(Path(project.folder) / survey_file, input_name="coverage.survey_results", file=survey_file)
        survey = coverage.survey_requirement(Path(project.folder) / survey_file, direction=direction)
        direction = direction or survey["direction"]
        if direction is None:
            raise InputError("no ground-motion direction for the floor check", input_name="receiver.direction",
                             file=inp.file, expected="normal, along or vertical (the survey does not say)")
        targets, required = survey["targets"], survey["losses"]
        source = f"site-survey export {survey_file} (peaks.target-losses)"
    else:
        listed = inp.get("coverage.target_peaks") or []
        targets = Q_([p.to("Hz").m for p in listed], "Hz") if listed else None
        if targets is None:
            raise InputError("no targeted peaks for the floor check", input_name="coverage.target_peaks",
                             file=inp.file, expected="a site-survey export (coverage.survey_results) or peaks")
        req = inp.get("receiver.required_loss")
        if req is None:
            raise InputError("no required insertion loss for the listed peaks", input_name="receiver.required_loss",
                             file=inp.file, expected="a number of dB (or name a site-survey export)")
        required = Q_([float(req)] * len(listed), "dB")
        direction = direction or "normal"
        source = "inputs (receiver.required_loss)"
    freqs = receiver.frequencies_for(f_min=inp["receiver.f_min"], f_max=inp["receiver.f_max"],
                                     n=inp["receiver.frequencies"], include=Q_(targets.to("Hz").m, "Hz"))
    return ReceiverSetup(column=column, placement=placement, fixings=fixings, direction=direction,
                         frequencies=freqs, targets=Q_(targets.to("Hz").m, "Hz"), required=Q_(required.to("dB").m,
                         "dB"), required_source=source, survey=survey)
