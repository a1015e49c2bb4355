"""The study command turns its arguments into one library call (common practice: a thin CLI)."""

from __future__ import annotations

from types import SimpleNamespace

from latticecalc import cli
from latticecalc.study import workflow
from latticecalc.study.engine import SchedulerError


def test_study_run_calls_the_library_once(monkeypatch, capsys):
    calls = []

    def fake(folder, **kw):
        calls.append((folder, kw))
        result = SimpleNamespace(counts={"hand": 3, "bloch": 0, "coupled": 0}, executor="serial", met=False,
                                 final_stage="hand",
                                 pareto_rows=lambda space=None: [["D1", "bcc", "lacks coverage_margin"]])
        return SimpleNamespace(result=result, results="out/study-results.json", space=None)

    monkeypatch.setattr(workflow, "run_study_project", fake)
    assert cli.main(["study", "run", "my-study", "--serial", "--quiet"]) == 0
    assert calls == [("my-study", {"scheduler": None, "serial": True, "workers": 2, "progress": None})]
    assert "No design meets every check" in capsys.readouterr().out

    calls.clear()
    assert cli.main(["study", "run", "my-study", "--scheduler", "tcp://10.0.0.5:8786", "--quiet"]) == 0
    assert calls[0][1]["scheduler"] == "tcp://10.0.0.5:8786" and calls[0][1]["serial"] is False


def test_study_apply_calls_the_library_once(monkeypatch, capsys):
    calls = []
    monkeypatch.setattr(workflow, "apply_from_study", lambda *a: calls.append(a) or ["cell.width"])
    assert cli.main(["study", "apply", "my-study", "D0123abcd", "my-panel"]) == 0
    assert calls == [("my-study", "D0123abcd", "my-panel")]
    assert "cell.width" in capsys.readouterr().out


def test_study_error_is_reported_with_exit_code_2(monkeypatch, capsys):
    def refuse(folder, **kw):
        raise SchedulerError("cannot reach the Dask scheduler", input_name="--scheduler", got="'tcp://x:1'")

    monkeypatch.setattr(workflow, "run_study_project", refuse)
    assert cli.main(["study", "run", "my-study", "--scheduler", "tcp://x:1"]) == 2
    assert "cannot reach the Dask scheduler" in capsys.readouterr().err
