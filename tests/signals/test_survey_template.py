"""The site-survey template with bad records: the run stops naming the file and line; nothing is exported."""

from __future__ import annotations

import pytest

from latticecalc.errors import LatticeCalcError
from latticecalc.project.export import export_project
from latticecalc.project.templates import new_project

pytestmark = pytest.mark.slow


@pytest.mark.parametrize("text, words, line", [
    ("time [s],z [m/s^2]\n0.000,0.1\n0.001,nan\n", "non-finite", 3),
    ("time [s],z [m/s^2]\n0.000,0.1\n0.001,abc\n", "text in a number column", 3),
    ("time [s],z [Pa]\n0.000,0.1\n0.001,0.2\n", "neither an acceleration nor a velocity", 1),
])
def test_bad_record_stops_the_run_and_nothing_is_exported(tmp_path, text, words, line):
    folder = new_project(tmp_path / "survey", template="site-survey")
    (folder / "records").mkdir()
    (folder / "records" / "site-demo.csv").write_text(text)
    with pytest.raises(LatticeCalcError) as err:
        export_project(folder, run=True, progress=None)
    message = str(err.value)
    assert "site-demo.csv" in message and words in message and f"line {line}" in message
    packages = list((folder / "out").glob("LC-SV-001*")) if (folder / "out").exists() else []
    assert packages == []
