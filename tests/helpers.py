"""Shared test helpers."""

from __future__ import annotations

import numbers

import numpy as np
import pint

from latticecalc import ureg


def assert_quantity_close(actual, expected, *, rtol: float = 1e-7, atol: float = 0.0, unit: str | None = None):
    """Assert two quantities agree after unit conversion.

    Fails (rather than passing) when either side is not a number: pint's own helper only warns.
    ``expected`` may be a Quantity, or a number together with ``unit``.
    """
    if not isinstance(actual, pint.Quantity):
        raise AssertionError(f"actual is not a Quantity: {actual!r}")
    if not isinstance(expected, pint.Quantity):
        if unit is None:
            raise AssertionError("expected is a plain number: give unit=")
        expected = ureg.Quantity(expected, unit)
    a = np.asarray(actual.to(expected.units).magnitude)
    e = np.asarray(expected.magnitude)
    for name, arr in (("actual", a), ("expected", e)):
        if not (np.issubdtype(arr.dtype, np.number) and np.all(np.isfinite(arr))):
            raise AssertionError(f"{name} is not a finite number: {arr!r}")
    if atol and not isinstance(atol, numbers.Number):
        raise AssertionError("atol must be a plain number in expected's unit")
    np.testing.assert_allclose(a, e, rtol=rtol, atol=atol)


#: Coarse numerical-check settings for tests that exercise the workflow rather than the FE results.
QUICK_FE = {"fe.path_points": 20, "fe.zone_points": 0, "fe.frequencies": 60, "tolerance.samples": 2000,
            "receiver.frequencies": 40, "sweep.added_masses": ["0 g", "100 g"], "fe.elements_per_strut": 4,
            "fe.strut_modes": 4}


#: A design study's search cut down to a few designs (the demo's own counts are in
#: calcs/quillon-yard-study/inputs.toml): same space, requirement, limits and seed, fewer designs.
QUICK_STUDY = {"search.screen": 24, "search.population": 8, "search.generations": 2, "search.bloch": 2,
               "search.coupled": 1}

#: Text that would run script, load a picture or break out of the markup if it were not escaped (each part
#: sets ``window.__lcPwned`` or opens a dialog if it ever runs), for every user-typed field of a project.
HOSTILE = ('<script>window.__lcPwned = 1; alert("x")</script><img src=x onerror="window.__lcPwned=2;alert(2)">'
           '"\'><svg onload="window.__lcPwned=3"></svg></td></table></style></script>&')


def _set_known(folder, values: dict):
    """Set those of ``values`` that the project's template has as inputs (through the inputs API)."""
    from pathlib import Path

    from latticecalc.project.inputs import set_values
    from latticecalc.project.schema import load_template_spec

    folder = Path(folder)
    spec = load_template_spec(folder / "template.toml")
    set_values(folder / "inputs.toml", spec, {k: v for k, v in values.items()
                                              if any(s.name == k for s in spec.inputs)})
    return folder


def make_quick(folder):
    """Coarsen a column-panel project's numerical check (through the inputs API) so a run takes seconds."""
    return _set_known(folder, QUICK_FE)


def make_quick_study(folder):
    """Cut a design-study project's search down to :data:`QUICK_STUDY` (nothing else in any other template)."""
    return _set_known(folder, QUICK_STUDY)


def package_paths(folder):
    """The exported HTML and JSON of a project (``out/<calc-id>-rev<rev>.html`` and ``.json``)."""
    from latticecalc.project import open_project

    project = open_project(folder)
    html = project.out / f"{project.meta.package_stem}.html"
    return html, html.with_suffix(".json")


def sealed_export(data: dict) -> dict:
    """``data`` (a hand-made package JSON: ``results``, optional ``inputs``) sealed as 'latticecalc export' seals it.

    Its results and inputs become the fingerprinted content, with no sign-offs (preliminary), so a project
    importing it verifies it (:func:`latticecalc.project.lineage.check_export`) as it would a real export.
    """
    from latticecalc.project.lineage import seal_export
    from latticecalc.project.signoff.fingerprint import fingerprint_of, round_sig

    data = {"project": {"calc_id": "HAND-1", "revision": "A", "title": "hand-made export"}} | data
    for row in data.get("inputs", []):
        row.setdefault("text", str(row.get("value", "")))
        row.setdefault("unit", "")
    content = round_sig({
        "results": [{"id": r["id"], "value": r["value"], "unit": r.get("unit", ""), "text": r.get("text", "")}
                    for r in data["results"]],
        "inputs_shown": {i["id"]: f"{i['text']} {i['unit']}".strip() for i in data.get("inputs", [])},
    })
    return seal_export(data, fingerprint=fingerprint_of(content), content=content, status="preliminary",
                       signoffs=[], embed_format="latticecalc-signoff/1")
