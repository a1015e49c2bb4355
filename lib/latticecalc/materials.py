"""Materials: a frozen :class:`Material` and the kit's catalogue in ``data/materials.toml``.

**Caution: design values come from the supplier's data sheet** for the grade, print settings and
temperatures actually used.  The catalogue holds typical values for early sizing, each with its
source or marked ``from memory``; a project overrides or adds entries in its inputs
(:func:`catalogue` with ``overrides=``, or :func:`from_mapping`).

Elastomers (and polymers) carry, besides the static Young's modulus:

* ``dynamic_to_static``: dynamic modulus at the design frequency over the static modulus;
  band and resonance calculations use :meth:`Material.dynamic_modulus`;
* ``modulus_low_factor`` / ``modulus_high_factor``: modulus at the warm / cold end of the service
  temperature range over the value at room temperature (:meth:`Material.modulus_range`);
* ``long_term_factor``: long-term (creep) modulus under sustained load over the short-term
  modulus (:meth:`Material.long_term_modulus`), used for self-weight under permanent load.

**No silent defaults.**  A :class:`Material` records in ``stated`` which fields its data gave
(the catalogue entry, the project's ``[materials.<key>]`` table, or the arguments of a direct
construction); the others hold the historical defaults (η = 0, factors 1) but are not stated.  A
material used for vibration must state its loss factor and dynamic-to-static ratio
(:func:`require_for_vibration`, :func:`check_column_material`); one under permanent load its
long-term factor (:func:`require_for_permanent_load`).  A missing one is an :class:`InputError`
naming the material, the field and the file.
"""

from __future__ import annotations

import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field, fields, replace
from functools import cache
from importlib import resources
from types import MappingProxyType
from typing import Any

import pint
import sympy as sp

from latticecalc.errors import InputError
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity, parse

CAUTION = ("Material values are typical values for sizing; design values come from the supplier's "
           "data sheet for the grade, process and temperature used.")

_E, _nu, _k = sp.symbols("E nu k")
SHEAR_MODULUS = Formula("G", _E / (2 * (1 + _nu)), latex_names={"nu": r"\nu"})
DYNAMIC_MODULUS = Formula("E_dyn", _k * _E, latex_names={"E_dyn": r"E_\mathrm{dyn}", "k": r"k_\mathrm{dyn}"})
_E_dyn = sp.Symbol("E_dyn")
#: The static modulus that gives a measured dynamic modulus: DYNAMIC_MODULUS solved for E (written out, so no kernel
#: solves it at import; tests/test_materials.py checks it is sympy's solution of DYNAMIC_MODULUS).
STATIC_FROM_DYNAMIC = Formula("E", _E_dyn / _k,
                              latex_names={"E_dyn": r"E_\mathrm{dyn,cal}", "k": r"k_\mathrm{dyn}"})
SCALED_MODULUS = Formula("E_T", _k * _E, latex_names={"E_T": r"E_T", "k": r"k_T"})
LONG_TERM_MODULUS = Formula("E_lt", _k * _E, latex_names={"E_lt": r"E_\mathrm{lt}", "k": r"k_\mathrm{creep}"})

ELASTICITY_SOURCE = Source(author="Timoshenko, S. P. & Goodier, J. N.", title="Theory of Elasticity, 3rd ed.",
                           year=1970, locator="§3, G = E / 2(1 + ν)", tag="from memory")

CATEGORIES = ("elastomer", "polymer", "composite", "metal", "other")

_QUANTITY_FIELDS = {"youngs_modulus": "pressure", "density": "density"}
_NUMBER_FIELDS = ("poissons_ratio", "loss_factor", "dynamic_to_static", "modulus_low_factor",
                  "modulus_high_factor", "long_term_factor")
_TEXT_FIELDS = ("name", "category", "service_temperature")
#: Fields that describe the material (not its key, sources, or where it was read from).
DATA_FIELDS = ("name", "youngs_modulus", "poissons_ratio", "density", "loss_factor", "category",
               "dynamic_to_static", "modulus_low_factor", "modulus_high_factor", "long_term_factor",
               "service_temperature")
_REQUIRED_FIELDS = ("name", "youngs_modulus", "poissons_ratio", "density")

#: What a use needs, and what each missing field is expected to be (the text of the input error).
VIBRATION_FIELDS = {
    "loss_factor": "a loss factor (0 <= η < 1) from the supplier's data",
    "dynamic_to_static": "a dynamic-to-static modulus ratio (> 0) at the design frequency from the supplier's "
                         "data (1 for a solid whose dynamic and static moduli are equal)",
}
PERMANENT_LOAD_FIELDS = {
    "long_term_factor": "a long-term (creep) factor (0 < factor <= 1) from the supplier's creep data "
                        "(1 for a material that does not creep under the sustained stress)",
}


class _Defaulted(float):
    """A default number a caller did not give: the value is used, but the field is not *stated*."""


class _DefaultText(str):
    """A default text a caller did not give (not *stated*)."""


def _number(value: Any, *, name: str) -> float:
    if isinstance(value, pint.Quantity):
        value = check_dimension(value, name=name, expected="dimensionless").to("").magnitude
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        try:
            value = float(value)
        except (TypeError, ValueError):
            raise InputError("not a number", input_name=name, expected="a plain number",
                             got=repr(value)) from None
    return float(value)


@dataclass(frozen=True, kw_only=True)
class Material:
    """A linear-elastic, isotropic material with damping and (for elastomers) modulus factors.

    Parameters
    ----------
    name:
        Descriptive name.
    youngs_modulus:
        Static (short-term, room-temperature) Young's modulus E [pressure].
    poissons_ratio:
        ν, strictly between −1 and 0.5.
    density:
        Mass density ρ [mass / length³].
    loss_factor:
        Structural loss factor η (dimensionless, ≥ 0).
    category:
        ``"elastomer"``, ``"polymer"``, ``"composite"``, ``"metal"`` or ``"other"``.
    dynamic_to_static:
        Dynamic modulus at the design frequency over the static modulus (≥ 1 for elastomers).
    modulus_low_factor, modulus_high_factor:
        Modulus at the warm and the cold end of the service temperature range over E.
    long_term_factor:
        Long-term (creep) modulus under sustained load over E, in (0, 1].
    key:
        Catalogue key (``"pu-elastomer-cast"``), empty for an ad-hoc material.
    service_temperature:
        The temperature range the factors refer to, as text.
    sources:
        Source of each value, by field name.
    stated:
        Names of the fields the material's data gave (see :data:`DATA_FIELDS`).  Left out, it is
        every field passed to the constructor; fields left at their defaults are not stated.
        :func:`dataclasses.replace` keeps it.
    file:
        Where the stated values were read from, for error messages (not compared).
    """

    name: str
    youngs_modulus: pint.Quantity
    poissons_ratio: float
    density: pint.Quantity
    loss_factor: float = _Defaulted(0.0)
    category: str = _DefaultText("other")
    dynamic_to_static: float = _Defaulted(1.0)
    modulus_low_factor: float = _Defaulted(1.0)
    modulus_high_factor: float = _Defaulted(1.0)
    long_term_factor: float = _Defaulted(1.0)
    key: str = ""
    service_temperature: str = _DefaultText("")
    sources: Mapping[str, Source] = field(default_factory=dict)
    stated: frozenset[str] | None = None
    file: str | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        label = self.key or self.name
        pre = f"{label}." if label else ""
        if self.stated is None:
            given = {f for f in DATA_FIELDS if not isinstance(getattr(self, f), (_Defaulted, _DefaultText))}
        else:
            given = {self.stated} if isinstance(self.stated, str) else set(self.stated)
            unknown = sorted(given - set(DATA_FIELDS))
            if unknown:
                raise InputError("unknown field in 'stated'", input_name=f"{pre}stated",
                                 expected="names from " + ", ".join(DATA_FIELDS), got=repr(unknown[0]))
        object.__setattr__(self, "stated", frozenset(given | set(_REQUIRED_FIELDS)))
        for fname in ("category", "service_temperature"):
            object.__setattr__(self, fname, str(getattr(self, fname)))
        for fname, dim in _QUANTITY_FIELDS.items():
            q = check_dimension(getattr(self, fname), name=f"{pre}{fname}", expected=dim)
            check_positive(q, name=f"{pre}{fname}")
            object.__setattr__(self, fname, q)
        for fname in _NUMBER_FIELDS:
            object.__setattr__(self, fname, _number(getattr(self, fname), name=f"{pre}{fname}"))
        nu = self.poissons_ratio
        if not -1.0 < nu < 0.5:
            raise InputError("Poisson's ratio of an isotropic solid lies strictly between -1 and 0.5",
                             input_name=f"{pre}poissons_ratio", expected="-1 < ν < 0.5", got=f"{nu:g}")
        if self.loss_factor < 0:
            raise InputError("a loss factor cannot be negative", input_name=f"{pre}loss_factor",
                             expected=">= 0", got=f"{self.loss_factor:g}")
        for fname in ("dynamic_to_static", "modulus_low_factor", "modulus_high_factor", "long_term_factor"):
            if getattr(self, fname) <= 0:
                raise InputError("a modulus factor must be positive", input_name=f"{pre}{fname}",
                                 expected="> 0", got=f"{getattr(self, fname):g}")
        if self.long_term_factor > 1:
            raise InputError("the long-term (creep) modulus cannot exceed the short-term modulus",
                             input_name=f"{pre}long_term_factor", expected="0 < factor <= 1",
                             got=f"{self.long_term_factor:g}")
        if self.modulus_low_factor > self.modulus_high_factor:
            raise InputError("the low modulus factor exceeds the high one",
                             input_name=f"{pre}modulus_low_factor",
                             expected=f"<= modulus_high_factor ({self.modulus_high_factor:g})",
                             got=f"{self.modulus_low_factor:g}")
        if self.category not in CATEGORIES:
            raise InputError("unknown material category", input_name=f"{pre}category",
                             expected="one of " + ", ".join(CATEGORIES), got=repr(self.category))
        object.__setattr__(self, "sources", MappingProxyType(dict(self.sources)))

    # derived values ---------------------------------------------------------------------------
    @property
    def shear_modulus(self) -> pint.Quantity:
        """G = E / (2 (1 + ν)) [MPa], from the static modulus."""
        return SHEAR_MODULUS.evaluate({"E": self.youngs_modulus, "nu": self.poissons_ratio}).to("MPa")

    def dynamic_modulus(self) -> pint.Quantity:
        """Dynamic Young's modulus at the design frequency, E · dynamic_to_static [MPa]."""
        return DYNAMIC_MODULUS.evaluate({"E": self.youngs_modulus, "k": self.dynamic_to_static}).to("MPa")

    def modulus_range(self, *, dynamic: bool = True) -> tuple[pint.Quantity, pint.Quantity]:
        """(low, high) modulus over the service temperature range [MPa], dynamic by default."""
        base = self.dynamic_modulus() if dynamic else self.youngs_modulus
        return (SCALED_MODULUS.evaluate({"E": base, "k": self.modulus_low_factor}).to("MPa"),
                SCALED_MODULUS.evaluate({"E": base, "k": self.modulus_high_factor}).to("MPa"))

    def long_term_modulus(self) -> pint.Quantity:
        """Long-term modulus under sustained load, E · long_term_factor [MPa]."""
        return LONG_TERM_MODULUS.evaluate({"E": self.youngs_modulus, "k": self.long_term_factor}).to("MPa")

    @property
    def is_elastomer(self) -> bool:
        """True for the elastomer category."""
        return self.category == "elastomer"

    def is_stated(self, field_name: str) -> bool:
        """True when the material's data gave ``field_name`` (False: its default is in use)."""
        return field_name in self.stated

    @property
    def defaulted(self) -> dict[str, float]:
        """The number fields the data did not give, with the default value in use for each."""
        return {f: getattr(self, f) for f in _NUMBER_FIELDS if f not in self.stated}

    def source(self, field_name: str) -> Source:
        """The source of one value (a 'not stated' placeholder when none was given)."""
        return self.sources.get(field_name) or Source(
            author="not stated", title="value given without a source", tag="no source")

    def properties(self, *, id_prefix: str = "material") -> CalcResult:
        """The material's values as sheet steps, each with its source, plus the derived moduli."""
        p = id_prefix
        steps = [
            quantity_step(id=f"{p}.youngs-modulus", description=f"{self.name}: Young's modulus (static)",
                          value=self.youngs_modulus, unit="MPa", method="material data",
                          source=self.source("youngs_modulus")),
            quantity_step(id=f"{p}.poissons-ratio", description=f"{self.name}: Poisson's ratio",
                          value=Q_(self.poissons_ratio, ""), method="material data",
                          source=self.source("poissons_ratio")),
            quantity_step(id=f"{p}.density", description=f"{self.name}: density", value=self.density,
                          unit="kg/m^3", method="material data", source=self.source("density")),
            quantity_step(id=f"{p}.loss-factor", description=f"{self.name}: loss factor",
                          value=Q_(self.loss_factor, ""),
                          method="material data" if self.is_stated("loss_factor") else "default (not stated)",
                          source=self.source("loss_factor"),
                          note="" if self.is_stated("loss_factor") else
                          f"No loss factor was stated for this material: η = {self.loss_factor:g} "
                          "(no material damping) is what was used."),
            evaluate(SHEAR_MODULUS, id=f"{p}.shear-modulus", description=f"{self.name}: shear modulus",
                     values={"E": self.youngs_modulus, "nu": Q_(self.poissons_ratio, "")}, unit="MPa",
                     source=ELASTICITY_SOURCE),
        ]
        if self.dynamic_to_static != 1.0:
            steps.append(evaluate(DYNAMIC_MODULUS, id=f"{p}.dynamic-modulus",
                                  description=f"{self.name}: dynamic modulus at the design frequency",
                                  values={"E": self.youngs_modulus, "k": Q_(self.dynamic_to_static, "")},
                                  unit="MPa", source=self.source("dynamic_to_static")))
        if (self.modulus_low_factor, self.modulus_high_factor) != (1.0, 1.0):
            base = self.dynamic_modulus()
            for end, k in (("low", self.modulus_low_factor), ("high", self.modulus_high_factor)):
                text = f"{self.name}: {end} end of the dynamic modulus over the service temperatures"
                steps.append(evaluate(SCALED_MODULUS, id=f"{p}.modulus-{end}",
                                      description=f"{text} {self.service_temperature}".strip(),
                                      values={"E": base, "k": Q_(k, "")}, unit="MPa",
                                      source=self.source(f"modulus_{end}_factor")))
        if self.long_term_factor != 1.0:
            steps.append(evaluate(LONG_TERM_MODULUS, id=f"{p}.long-term-modulus",
                                  description=f"{self.name}: long-term (creep) modulus under sustained load",
                                  values={"E": self.youngs_modulus, "k": Q_(self.long_term_factor, "")},
                                  unit="MPa", source=self.source("long_term_factor"),
                                  note="Elastomers and polymers creep under permanent load: confirm the "
                                       "factor with the supplier's creep data."))
        return CalcResult(value=self, steps=tuple(steps), title=f"Material: {self.name}")

    def __str__(self) -> str:
        return (f"{self.name}: E = {format_quantity(self.youngs_modulus.to('MPa'))}, "
                f"ν = {self.poissons_ratio:g}, ρ = {format_quantity(self.density.to('kg/m^3'))}, "
                f"η = {self.loss_factor:g}")


# --- reading the catalogue and project overrides ---------------------------------------------
def _entry_value(raw: Any, *, origin: str) -> tuple[Any, Source | None]:
    if isinstance(raw, Mapping) and "value" in raw:
        src = None
        if raw.get("source") or raw.get("tag"):
            src = Source(author=origin, title=str(raw.get("source", "")), tag=str(raw.get("tag", "")))
        return raw["value"], src
    return raw, None


def from_mapping(mapping: Mapping[str, Any], *, key: str = "", file: str | None = None,
                 base: Material | None = None) -> Material:
    """A :class:`Material` from a mapping such as one table of ``materials.toml`` or of inputs.

    Parameters
    ----------
    mapping:
        Field names to values: quantities as text (``"12 MPa"``), as Quantities, or as
        ``{value = "12 MPa", source = "...", tag = "from memory"}``; numbers plain.
    key:
        The material's key, used in error messages.
    file:
        Where the mapping was read from, for error messages.
    base:
        A material to start from: only the fields given are changed (a project override).
    """
    known = set(_QUANTITY_FIELDS) | set(_NUMBER_FIELDS) | set(_TEXT_FIELDS)
    unknown = sorted(set(mapping) - known)
    if unknown:
        raise InputError("unknown material field", input_name=f"{key}.{unknown[0]}" if key else unknown[0],
                         expected="one of " + ", ".join(sorted(known)), got=repr(unknown[0]), file=file)
    values: dict[str, Any] = {}
    sources: dict[str, Source] = dict(base.sources) if base else {}
    if base is not None:
        values = {f.name: getattr(base, f.name) for f in fields(base)
                  if f.name not in ("sources", "key", "stated", "file")}
    for fname, raw in mapping.items():
        value, src = _entry_value(raw, origin="Project inputs" if base else "Material data")
        label = f"{key}.{fname}" if key else fname
        if fname in _QUANTITY_FIELDS:
            value = parse(value, name=label, expected=_QUANTITY_FIELDS[fname], file=file)
        elif fname in _NUMBER_FIELDS:
            value = _number(value, name=label)
        else:
            value = str(value)
        values[fname] = value
        sources[fname] = src or Source(author="Project inputs" if base else "not stated",
                                       title=file or "value given without a source",
                                       tag="" if base else "no source")
    missing = [f for f in ("name", "youngs_modulus", "poissons_ratio", "density") if f not in values]
    if missing:
        raise InputError("a material needs a name, Young's modulus, Poisson's ratio and density",
                         input_name=f"{key}.{missing[0]}" if key else missing[0],
                         expected=", ".join(missing), got="missing", file=file)
    stated = (set(base.stated) if base is not None else set()) | set(mapping)
    return Material(key=key, sources=sources, stated=frozenset(stated), file=file, **values)


@cache
def _builtin() -> Mapping[str, Material]:
    text = resources.files("latticecalc").joinpath("data/materials.toml").read_text(encoding="utf-8")
    data = tomllib.loads(text)
    out = {}
    for key, entry in data.items():
        out[key] = from_mapping(entry, key=key, file="latticecalc data/materials.toml")
    return MappingProxyType(out)


def names() -> tuple[str, ...]:
    """Keys of the kit's built-in materials."""
    return tuple(_builtin())


def catalogue(*, overrides: Mapping[str, Mapping[str, Any]] | None = None,
              file: str | None = None) -> dict[str, Material]:
    """The built-in materials with a project's additions and overrides applied.

    ``overrides`` maps a key to fields: for a built-in key only the fields given change (their
    source becomes "project input" unless one is given); a new key needs at least ``name``,
    ``youngs_modulus``, ``poissons_ratio`` and ``density``.
    """
    cat = dict(_builtin())
    for key, entry in (overrides or {}).items():
        if not isinstance(entry, Mapping):
            raise InputError("a material entry must be a table of fields", input_name=str(key),
                             expected="a mapping such as {youngs_modulus = '12 MPa', ...}",
                             got=type(entry).__name__, file=file)
        cat[key] = from_mapping(entry, key=key, file=file, base=cat.get(key))
    return cat


def get(name: str, *, overrides: Mapping[str, Mapping[str, Any]] | None = None,
        file: str | None = None) -> Material:
    """One material by key from the catalogue (with ``overrides`` applied, see :func:`catalogue`).

    ``file`` names where ``overrides`` were read from (the project's inputs.toml), for error messages.
    """
    cat = catalogue(overrides=overrides, file=file)
    if name not in cat:
        raise InputError("unknown material", input_name="material", expected="one of " + ", ".join(cat),
                         got=repr(name), hint="Add it to the project's materials, or pick a listed one")
    return cat[name]


# --- what a use needs: no silent defaults ------------------------------------------------------
def _require(material: Material, needed: Mapping[str, str], *, role: str, use: str,
             file: str | None) -> Material:
    if not isinstance(material, Material):
        raise InputError("not a material", input_name=f"{role} material", expected="a latticecalc Material",
                         got=type(material).__name__)
    label = material.key or material.name
    missing = [f for f in needed if not material.is_stated(f)]
    if missing:
        first = missing[0]
        what = " and ".join(missing)
        example = ", ".join(f'{f} = {{ value = …, source = "…" }}' for f in missing)
        raise InputError(f"the {role} material {label!r} ({material.name}) does not state {what}, which "
                         f"{use} needs; no default is assumed",
                         input_name=f"materials.{label}.{first}", expected=needed[first], got="not stated",
                         file=file or material.file,
                         hint=f"Add {example} under [materials.{label}] in the project's inputs.toml")
    return material


def require_for_vibration(material: Material, *, role: str, file: str | None = None) -> Material:
    """``material`` unchanged when it states what a vibration calculation needs, else an :class:`InputError`.

    Needed: ``loss_factor`` (0 <= η < 1) and ``dynamic_to_static`` (:data:`VIBRATION_FIELDS`); a
    material that left them at their defaults (η = 0, ratio 1) would give an undamped response at
    the static modulus without saying so.

    Parameters
    ----------
    material:
        The material to check.
    role:
        What it is used for, for the message (``"lattice"``, ``"frame"``, ``"column"``).
    file:
        The file to name in the error (the project's inputs.toml); default ``material.file``.
    """
    _require(material, VIBRATION_FIELDS, role=role, use="a vibration calculation (damping, dynamic modulus)",
             file=file)
    if not 0.0 <= material.loss_factor < 1.0:
        raise InputError("loss factor out of range for a vibration calculation",
                         input_name=f"materials.{material.key or material.name}.loss_factor",
                         expected=VIBRATION_FIELDS["loss_factor"], got=f"{material.loss_factor:g}",
                         file=file or material.file)
    return material


def require_for_permanent_load(material: Material, *, role: str, file: str | None = None) -> Material:
    """``material`` unchanged when it states its long-term (creep) factor, else an :class:`InputError`.

    A material carrying permanent load (self-weight with the long-term modulus) needs
    ``long_term_factor`` (:data:`PERMANENT_LOAD_FIELDS`); left at its default of 1 the short-term
    modulus would be used while the sheet speaks of the long-term one.

    Parameters
    ----------
    material:
        The material to check.
    role:
        What it is used for, for the message (``"lattice"``, ``"frame"``).
    file:
        The file to name in the error (the project's inputs.toml); default ``material.file``.
    """
    return _require(material, PERMANENT_LOAD_FIELDS, role=role,
                    use="self-weight under permanent load with the long-term modulus", file=file)


def check_column_material(material: Material, *, file: str | None = None) -> Material:
    """The column material checked for the floor check's vibration model (loss factor, dynamic ratio).

    The column's damping and dynamic modulus enter the coupled response, so both must be stated
    (:func:`require_for_vibration` with ``role="column"``).
    """
    return require_for_vibration(material, role="column", file=file)


@dataclass(frozen=True, kw_only=True)
class CalibratedMaterial(CalcResult):
    """Result of :func:`calibrated`; ``value`` is the new static modulus, ``material`` the new Material."""

    material: Material


def calibrated(material: Material, *, dynamic_modulus: Any, source: Source,
               id_prefix: str = "material.calibrated", rescale_long_term: bool = False) -> CalibratedMaterial:
    """The material with its modulus scaled so its dynamic modulus equals a measured one.

    The static and temperature moduli follow (they are factors on E).  The long-term (creep)
    modulus does not: a dynamic test says nothing about creep under sustained load, so by default
    the long-term modulus is kept at its value before the calibration (its factor is restated
    against the new static modulus, and capped at 1 should the calibrated static modulus fall
    below the old long-term one).  ``rescale_long_term=True`` moves it with the calibration too
    (the user says the creep factor holds for the calibrated material).

    Parameters
    ----------
    material:
        The catalogue or project material.
    dynamic_modulus:
        The calibrated dynamic modulus at the design frequency [pressure].
    source:
        Where the calibration comes from (the prototype test's package).
    id_prefix:
        Prefix of the step ids.
    rescale_long_term:
        Scale the long-term (creep) modulus with the calibration (default False: keep it).
    """
    e_dyn = check_positive(check_dimension(dynamic_modulus, name="dynamic_modulus", expected="pressure"),
                           name="dynamic_modulus")
    given = quantity_step(id=f"{id_prefix}.dynamic-modulus", description=f"{material.name}: calibrated dynamic "
                          "modulus at the design frequency", value=e_dyn.to("MPa"), unit="MPa",
                          method="prototype test", source=source)
    e_new = STATIC_FROM_DYNAMIC.evaluate({"E_dyn": e_dyn, "k": material.dynamic_to_static}).to("MPa")
    sources = dict(material.sources) | {"youngs_modulus": source}
    changes: dict[str, Any] = {}
    note = f"replaces the catalogue value {format_quantity(material.youngs_modulus.to('MPa'))}"
    e_lt = material.long_term_modulus()
    if rescale_long_term:
        note += (f"; the long-term (creep) modulus is rescaled with it (factor {material.long_term_factor:g} "
                 "kept, as asked)")
    elif material.long_term_factor != 1.0 or material.is_stated("long_term_factor"):
        k_new = min(1.0, float((e_lt / e_new).to("").magnitude))
        changes["long_term_factor"] = k_new
        capped = k_new == 1.0 and e_lt > e_new
        if capped:
            note += (f"; the long-term (creep) modulus is not rescaled by a dynamic calibration, but its value "
                     f"before ({format_quantity(e_lt.to('MPa'))}) exceeds the calibrated static modulus: it is "
                     f"taken equal to that (long-term factor {material.long_term_factor:g} → 1)")
        else:
            note += (f"; the long-term (creep) modulus is not rescaled by a dynamic calibration: it stays "
                     f"{format_quantity(e_lt.to('MPa'))} (long-term factor {material.long_term_factor:g} → "
                     f"{k_new:.4g})")
        was = material.source("long_term_factor")
        sources["long_term_factor"] = Source(
            author=was.author, title=f"long-term modulus {format_quantity(e_lt.to('MPa'))} kept through the "
            f"dynamic calibration, over the calibrated static modulus; factor before: {material.long_term_factor:g} "
            f"({was.title})", year=was.year, locator=was.locator, tag=was.tag)
    step = evaluate(STATIC_FROM_DYNAMIC, id=f"{id_prefix}.static-modulus", unit="MPa", source=source,
                    description=f"{material.name}: static modulus implied by the calibration",
                    values={"E_dyn": e_dyn, "k": material.dynamic_to_static}, note=note)
    new = replace(material, youngs_modulus=step.result, sources=sources, **changes)
    return CalibratedMaterial(value=step.result, steps=(given, step), material=new,
                              title=f"Calibrated modulus of {material.name}")
