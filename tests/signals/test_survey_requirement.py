"""The column panel reads the survey's requirement: peaks, required losses, direction; bad exports named.

The export format is the kit's own (``latticecalc export`` JSON); the checks are behaviour (common
practice): a survey with nothing to target or a direction it did not record must stop the floor check
with an error naming the input.
"""

import json

import pytest

from latticecalc.errors import InputError, RecordError
from latticecalc.signals.coverage import survey_requirement


def export(tmp_path, *, targets=(39.25,), losses=(11.3,), direction="normal", name="sv.json"):
    results = [{"id": "peaks.target-frequencies", "value": list(targets), "unit": "Hz"},
               {"id": "peaks.target-losses", "value": list(losses), "unit": "dB"}]
    inputs = [{"id": "criterion.id", "value": "vc-a"}]
    if direction is not None:
        inputs.append({"id": "record.direction", "value": direction})
    p = tmp_path / name
    p.write_text(json.dumps({"results": results, "inputs": inputs}), encoding="utf-8")
    return p


def test_reads_peaks_losses_and_direction(tmp_path):
    req = survey_requirement(export(tmp_path, targets=(39.25, 24.5), losses=(11.3, 1.4)))
    assert req["targets"].to("Hz").m.tolist() == [39.25, 24.5]
    assert req["losses"].to("dB").m.tolist() == [11.3, 1.4]
    assert req["direction"] == "normal" and req["criterion"] == "vc-a"


def test_no_targeted_peaks_is_an_error_naming_the_input(tmp_path):
    with pytest.raises(RecordError, match="nothing to target") as e:
        survey_requirement(export(tmp_path, targets=(), losses=()))
    assert e.value.input_name == "coverage.survey_results"


def test_a_direction_the_survey_did_not_record(tmp_path):
    p = export(tmp_path, direction="vertical")
    with pytest.raises(InputError, match="did not record this direction") as e:
        survey_requirement(p, direction="normal")
    assert e.value.input_name == "receiver.direction" and "vertical" in str(e.value)
    q = export(tmp_path, direction=None, name="old.json")
    with pytest.raises(InputError, match="does not say which building direction"):
        survey_requirement(q, direction="normal")
    assert survey_requirement(q)["direction"] is None
