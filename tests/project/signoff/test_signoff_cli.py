"""The sign-off sub-commands map their arguments to one library call and report errors cleanly."""

from __future__ import annotations

import json

from latticecalc.cli import main
from latticecalc.project import open_project


def _first_step(folder) -> str:
    stem = open_project(folder).meta.package_stem
    return json.loads((folder / "out" / f"{stem}.json").read_text(encoding="utf-8"))["results"][0]["id"]


def test_review_commands_round_trip(project, capsys):
    step = _first_step(project)
    assert main(["review", "add", str(project), "--step", step, "--author", "C", "--text", "Why?"]) == 0
    assert main(["review", "reply", str(project), "R1", "--author", "P", "--text", "Because."]) == 0
    assert main(["review", "list", str(project), "--open"]) == 0
    out = capsys.readouterr().out
    assert f"R1    open    {step}" in out and "↳ P: Because." in out
    assert main(["review", "close", str(project), "R1", "--author", "C"]) == 0
    assert main(["review", "list", str(project), "--open"]) == 0
    assert capsys.readouterr().out.strip().endswith("No review comments.")
    assert main(["review", "close", str(project), "R9", "--author", "C"]) == 2
    assert "no such review comment" in capsys.readouterr().err
    assert main(["review", "add", str(project), "--step", "nope", "--author", "C", "--text", "x"]) == 2
    assert "--step: no such step" in capsys.readouterr().err


def test_sign_with_a_key_and_verify_from_the_command_line(project, tmp_path, capsys):
    keys = tmp_path / "keys"
    assert main(["keygen", "--out", str(keys), "--name", "pat"]) == 0
    assert main(["sign", str(project), "--role", "prepared", "--name", "Pat", "--key", str(keys / "pat.key")]) == 0
    assert "signed with key" in capsys.readouterr().out
    assert main(["export", str(project)]) == 0
    html = capsys.readouterr().out.splitlines()[0]
    assert main(["verify", html, "--keys", str(keys)]) == 0
    assert capsys.readouterr().out.splitlines()[0].endswith(": OK")
    assert main(["verify", html, "--keys", str(tmp_path / "missing")]) == 2
    assert "--keys: not a folder of public keys" in capsys.readouterr().err
    assert main(["sign", str(project), "--role", "approved", "--name", "A", "--comment", "x"]) == 2
    assert "before a current 'checked'" in capsys.readouterr().err
