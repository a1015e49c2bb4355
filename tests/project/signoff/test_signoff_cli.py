"""The sign-off sub-commands map their arguments to one library call and report errors cleanly."""

from __future__ import annotations

import json
import re

from latticecalc.cli import main
from latticecalc.project import open_project


def _first_step(folder) -> str:
    stem = open_project(folder).meta.package_stem
    return json.loads((folder / "out" / f"{stem}.json").read_text(encoding="utf-8"))["results"][0]["id"]


def test_query_commands_round_trip(project, capsys):
    step = _first_step(project)
    assert main(["query", "raise", str(project), "--at", step, "--by", "C", "--text", "Why?"]) == 0
    assert capsys.readouterr().out.strip() == f"CQ-1 raised at {step}"
    assert main(["query", "answer", str(project), "CQ-1", "--by", "P", "--text", "Because."]) == 0
    assert main(["query", "list", str(project), "--open"]) == 0
    out = capsys.readouterr().out
    assert f"CQ-1   open     at {step}" in out and "answer by P: Because." in out
    assert main(["query", "settle", str(project), "CQ-1", "--by", "C"]) == 0
    assert main(["query", "list", str(project), "--open"]) == 0
    assert capsys.readouterr().out.strip().endswith("No checker queries.")
    assert main(["query", "settle", str(project), "CQ-9", "--by", "C"]) == 2
    assert "no such checker query" in capsys.readouterr().err
    assert main(["query", "raise", str(project), "--at", "nope", "--by", "C", "--text", "x"]) == 2
    assert "--at: no such step" in capsys.readouterr().err


def test_sign_with_a_key_and_verify_from_the_command_line(project, tmp_path, capsys):
    keys = tmp_path / "keys"
    assert main(["key", "new", "--holder", "Pat", "--folder", str(keys)]) == 0
    mark = capsys.readouterr().out.split("Key mark: ", 1)[1].split()[0]
    assert re.fullmatch(r"LK-[0-9A-HJKMNP-TV-Z]{4}(-[0-9A-HJKMNP-TV-Z]{4}){3}", mark)   # Crockford base 32
    assert main(["sign", str(project), "--role", "prepared", "--name", "Pat", "--key",
                 str(keys / "pat.signing.pem")]) == 0
    assert f"signed with key {mark}" in capsys.readouterr().out
    assert main(["export", str(project)]) == 0
    html = capsys.readouterr().out.splitlines()[0]
    assert main(["verify", html, "--keys", str(keys)]) == 0
    assert capsys.readouterr().out.splitlines()[0].endswith(": OK")
    assert main(["verify", html, "--keys", str(tmp_path / "missing")]) == 2
    assert "--keys: not a folder of public keys" in capsys.readouterr().err
    assert main(["sign", str(project), "--role", "approved", "--name", "A", "--comment", "x"]) == 2
    assert "before a current 'checked'" in capsys.readouterr().err
