"""Projects an older kit made (``project.toml``, ``[template]``/``[[input]]``) open as before, with one notice;
``latticecalc refile`` brings them to ``cover.toml`` and the ``[about]``/``[given.*]`` layout, same inputs.

Every check here is ``common practice``: no outside source fixes file names or layouts.
"""

from __future__ import annotations

import json
import re
import shutil
import tomllib
from pathlib import Path

import pytest
import tomlkit

from latticecalc.cli import main
from latticecalc.errors import InputError, ProjectError
from latticecalc.project.meta import load_meta
from latticecalc.project.project import open_project
from latticecalc.project.refile import refile
from latticecalc.project.schema import convert_old_layout, load_template_spec
from latticecalc.project.state import RUN_RECORD, current_state, stale_files
from latticecalc.project.templates import templates_root

TEMPLATES = sorted(p.name for p in templates_root().iterdir() if (p / "template.toml").is_file())
#: The older layout's names, written here independently of the kit's converter.
_OLD_KEYS = {"meaning": "description", "form": "kind", "preset": "default", "at_least": "min",
             "at_most": "max", "options": "choices", "may_omit": "optional"}
_OLD_FORMS = {"quantities": "quantity-list", "count": "integer", "words": "text", "pick": "choice",
              "yes-no": "bool", "file": "path", "rows": "table"}


def old_layout(text: str) -> str:
    """A current-layout template.toml written in the older layout ([template], [[input]] with name first)."""
    data = tomllib.loads(text)
    doc = tomlkit.document()
    doc.add(tomlkit.comment("written in the older layout by the test"))
    about = data["about"]
    doc["template"] = {"name": about["name"], "title": about["title"], "description": about["purpose"],
                       "notebooks": about["notebooks"]}
    inputs = tomlkit.aot()
    for name, given in data.get("given", {}).items():
        row = tomlkit.table()
        row["name"] = name
        for key, value in given.items():
            row[_OLD_KEYS.get(key, key)] = _OLD_FORMS.get(value, value) if key == "form" else value
        inputs.append(row)
    doc["input"] = inputs
    if "summary" in data:
        rows = tomlkit.aot()
        for s in data["summary"]:
            rows.append(tomlkit.item(s))
        doc["summary"] = rows
    return tomlkit.dumps(doc)


def old_project(tmp_path: Path, template: str = "prototype-test") -> Path:
    """A copy of a bundled template as an older kit made it: project.toml and the older template layout."""
    folder = tmp_path / f"old-{template}"
    shutil.copytree(templates_root() / template, folder)
    (folder / "cover.toml").rename(folder / "project.toml")
    path = folder / "template.toml"
    path.write_text(old_layout(path.read_text(encoding="utf-8")), encoding="utf-8")
    return folder


@pytest.mark.parametrize("template", TEMPLATES)
def test_older_layout_reads_as_the_same_specs(tmp_path, template):
    new = templates_root() / template / "template.toml"
    old = tmp_path / "template.toml"
    old.write_text(old_layout(new.read_text(encoding="utf-8")), encoding="utf-8")
    before, after = load_template_spec(old), load_template_spec(new)
    assert before.old_layout and not after.old_layout
    assert before.inputs == after.inputs and before.summary == after.summary
    assert (before.name, before.title, before.description, before.notebooks) == (
        after.name, after.title, after.description, after.notebooks)
    # the converter's own output reads the same too
    converted = tmp_path / "converted" / "template.toml"
    converted.parent.mkdir()
    converted.write_text(convert_old_layout(old.read_text(encoding="utf-8")), encoding="utf-8")
    assert load_template_spec(converted).inputs == after.inputs


@pytest.mark.parametrize("template", TEMPLATES)
def test_given_tables_keep_the_file_order(template):
    path = templates_root() / template / "template.toml"
    headers = re.findall(r'^\[given\.(?:"([^"]+)"|([\w-]+))\]', path.read_text(encoding="utf-8"), re.M)
    assert [a or b for a, b in headers] == [s.name for s in load_template_spec(path).inputs]


def test_bundled_templates_keep_their_section_comments():
    text = (templates_root() / "column-panel" / "template.toml").read_text(encoding="utf-8")
    # a section comment stays right above the first input of its section
    assert re.search(r"# --- band coverage of the measured peaks \(70_coverage\) ---\n"
                     r'\[given\."coverage\.target_peaks"\]', text)


def test_old_project_opens_with_one_notice(tmp_path, capsys):
    folder = old_project(tmp_path)
    project = open_project(folder)
    open_project(folder)                                   # a second open in the same command: no repeat
    err = capsys.readouterr().err
    assert err.count("older kit") == 1 and "project.toml" in err and "template.toml" in err
    assert f"latticecalc refile {folder}" in err
    assert project.meta.calc_id == load_meta(templates_root() / "prototype-test" / "cover.toml").calc_id
    assert project.template.old_layout
    assert stale_files(project) == ["(never run)"]          # the stale check runs on it
    assert "project.toml" in current_state(project)


def test_refile_converts_and_the_result_opens_without_notice(tmp_path, capsys):
    folder = old_project(tmp_path, "column-panel")
    cover_bytes = (folder / "project.toml").read_bytes()
    before = load_template_spec(folder / "template.toml")
    meta_before = load_meta(folder / "project.toml")
    assert main(["refile", str(folder)]) == 0
    out = capsys.readouterr().out
    assert "renamed project.toml to cover.toml" in out and "converted template.toml" in out
    assert not (folder / "project.toml").exists()
    assert (folder / "cover.toml").read_bytes() == cover_bytes
    assert load_meta(folder / "cover.toml") == meta_before
    project = open_project(folder)
    assert "older kit" not in capsys.readouterr().err
    assert not project.template.old_layout
    assert project.template.inputs == before.inputs == load_template_spec(
        templates_root() / "column-panel" / "template.toml").inputs
    assert "# written in the older layout by the test" in (folder / "template.toml").read_text(encoding="utf-8")


def test_refile_with_nothing_to_do_changes_nothing(tmp_path, capsys):
    folder = tmp_path / "p"
    shutil.copytree(templates_root() / "site-survey", folder)
    files = {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()}
    assert main(["refile", str(folder)]) == 0
    assert "nothing to refile" in capsys.readouterr().out
    assert {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()} == files


def test_refile_makes_a_run_stale_but_keeps_the_cover_fields(tmp_path):
    # the run record names the files the run read; after refile those are gone, so the project is
    # run again before export; the fingerprint's identity part (the cover's fields) is unchanged
    folder = old_project(tmp_path)
    project = open_project(folder)
    (folder / "out").mkdir()
    (folder / "out" / RUN_RECORD).write_text(json.dumps({"state": current_state(project)}))
    assert stale_files(project) == []
    meta = project.meta
    refile(folder)
    after = open_project(folder)
    assert {"project.toml", "cover.toml", "template.toml"} <= set(stale_files(after))
    assert after.meta == meta


def test_refile_refuses_when_cover_exists(tmp_path, capsys):
    folder = old_project(tmp_path)
    shutil.copy(folder / "project.toml", folder / "cover.toml")
    template = (folder / "template.toml").read_bytes()
    assert main(["refile", str(folder)]) != 0
    err = capsys.readouterr().err
    assert "cover.toml" in err and "project.toml" in err and "nothing was changed" in err
    assert (folder / "template.toml").read_bytes() == template and (folder / "project.toml").exists()


def test_both_cover_files_is_an_error_naming_both(tmp_path):
    folder = old_project(tmp_path)
    shutil.copy(folder / "project.toml", folder / "cover.toml")
    with pytest.raises(ProjectError) as err:
        open_project(folder)
    assert "cover.toml" in str(err.value) and "project.toml" in str(err.value)


def _template(tmp_path: Path, given: str) -> Path:
    path = tmp_path / "template.toml"
    path.write_text('[about]\nname = "t"\ntitle = "T"\npurpose = "p"\nnotebooks = ["a.ipynb"]\n\n' + given)
    return path


def _refusal(tmp_path: Path, given: str) -> str:
    """The message with which a template holding ``given`` is refused."""
    with pytest.raises(InputError) as err:
        load_template_spec(_template(tmp_path, given))
    return str(err.value)


def test_unknown_key_names_file_input_and_key(tmp_path):
    msg = _refusal(tmp_path, '[given."cell.width"]\nmeaning = "w"\ndimension = "length"\ndefault = "5 mm"\n')
    assert "template.toml" in msg and "cell.width" in msg and "'default'" in msg and "preset" in msg


def test_unknown_form_names_file_and_input(tmp_path):
    msg = _refusal(tmp_path, '[given."cell.count"]\nmeaning = "n"\nform = "integer"\n')
    assert "unknown form" in msg and "template.toml" in msg and "cell.count" in msg and "count" in msg


def test_unquoted_dotted_name_gets_a_hint(tmp_path):
    assert '[given."cell.width"]' in _refusal(tmp_path, '[given.cell.width]\nmeaning = "w"\ndimension = "length"\n')


def test_mixed_layouts_are_an_error(tmp_path):
    msg = _refusal(tmp_path, '[[input]]\nname = "x"\nkind = "number"\n')
    assert "mixes" in msg and "[[input]]" in msg and "[about]" in msg


def test_old_layout_unknown_key_is_named(tmp_path):
    path = tmp_path / "template.toml"
    path.write_text('[template]\nname = "t"\nnotebooks = ["a.ipynb"]\n\n[[input]]\nname = "x"\nkind = "number"\n'
                    'maximum = 3\n')
    with pytest.raises(InputError) as err:
        load_template_spec(path)
    assert "template.toml" in str(err.value) and "x" in str(err.value) and "'maximum'" in str(err.value)


def test_refile_keeps_the_fingerprint_and_a_changed_cover_field_changes_it(tmp_path, executed_projects):
    # the fingerprint holds the cover's fields, not the file: the same fields under either name, and
    # through refile, give the same fingerprint, so a sign-off stays bound to the same content
    from latticecalc.project.export.collect import collect
    from latticecalc.project.export.package import build_package_data
    from latticecalc.project.signoff.fingerprint import fingerprint_content, fingerprint_of

    folder = executed_projects.copy("site-survey", tmp_path / "survey")

    def fingerprint() -> str:
        project = open_project(folder)
        doc = collect([project.out / "executed" / nb.name for nb in project.notebooks])
        data = build_package_data(project, doc, "2026-01-01T00:00:00+00:00")
        return fingerprint_of(fingerprint_content(project, data, doc))

    current = fingerprint()
    (folder / "cover.toml").rename(folder / "project.toml")
    template = folder / "template.toml"
    template.write_text(old_layout(template.read_text(encoding="utf-8")), encoding="utf-8")
    assert fingerprint() == current
    refile(folder)
    assert fingerprint() == current
    cover = folder / "cover.toml"
    cover.write_text(cover.read_text(encoding="utf-8").replace("[calc]\n", "[calc]\nrevision_note = \"x\"\n", 1),
                     encoding="utf-8")
    assert fingerprint() != current


def test_demo_cover_under_the_older_name_is_built_as_cover_toml(tmp_path):
    from latticecalc.project.demo import _overlay

    source = tmp_path / "demo-src"
    source.mkdir()
    (source / "project.toml").write_text((templates_root() / "site-survey" / "cover.toml").read_text())
    dest = tmp_path / "built"
    shutil.copytree(templates_root() / "site-survey", dest)
    _overlay(source, dest)
    assert not (dest / "project.toml").exists()
    assert (dest / "cover.toml").read_text() == (source / "project.toml").read_text()
