"""Fingerprint, seal and ``verify``: an edited figure, a wrong key, a forged record are caught.

No physics is asserted here; the reference for the signature scheme is RFC 8032 (Josefsson &
Liusvaara, "Edwards-Curve Digital Signature Algorithm (EdDSA)", 2017), implemented by the
``cryptography`` library, and for the hash FIPS 180-4 (SHA-256), via Python's ``hashlib``.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from latticecalc.cli import main
from latticecalc.errors import InputError
from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.signoff import fingerprint_of, generate_keypair, sign_project, verify_package
from latticecalc.project.signoff.fingerprint import canonical_json, round_sig
from latticecalc.project.signoff.records import current_fingerprint
from latticecalc.project.signoff.verify import read_embedded

CHECKER = "Chris Checker"
RESOLVED = "failing checks reviewed: accepted for this test"


def package_of(folder: Path) -> Path:
    return folder / "out" / f"{open_project(folder).meta.package_stem}.html"


def first_result_number(html: str) -> tuple[str, str]:
    """The step id and the first result shown in a step's output column (``lc-result">x unit``)."""
    for chunk in html.split('id="step-')[1:]:
        body = chunk.split('id="step-', 1)[0]  # stop before the next step
        m = re.search(r'<span class="lc-result">([0-9]+\.[0-9]+)[ <]', body)
        if m:
            return chunk.split('"', 1)[0], m.group(1)
    raise AssertionError("no result found in a step's output column")


def test_fresh_export_verifies_and_shows_its_fingerprint(project):
    fp, content = current_fingerprint(open_project(project))
    html = package_of(project).read_text(encoding="utf-8")
    assert fp in html.split('id="title-block"', 1)[1].split("</table>", 1)[0]
    data = read_embedded(html)
    assert data["fingerprint"] == fp == fingerprint_of(data["fingerprint_content"])
    assert data["fingerprint_content"]["inputs"] == round_sig(open_project(project).inputs.canonical())
    report = verify_package(package_of(project))
    assert report.ok, report.text()


def test_canonical_json_is_sorted_and_compact():
    assert canonical_json({"b": 1, "a": [1.5, "x"]}) == '{"a":[1.5,"x"],"b":1}'


def test_float_noise_does_not_change_the_fingerprint_but_a_real_change_does():
    base = {"results": [{"id": "f", "value": 47.49126575152737}]}
    noisy = {"results": [{"id": "f", "value": 47.49126575152737 * (1 + 3e-15)}]}
    moved = {"results": [{"id": "f", "value": 47.49126575152737 * (1 + 1e-6)}]}
    assert fingerprint_of(round_sig(base)) == fingerprint_of(round_sig(noisy))
    assert fingerprint_of(round_sig(base)) != fingerprint_of(round_sig(moved))


def test_editing_one_digit_of_a_shown_result_fails_verify_and_names_it(project, tmp_path):
    html = package_of(project).read_text(encoding="utf-8")
    step, number = first_result_number(html)
    last = str((int(number[-1]) + 1) % 10)
    edited = number[:-1] + last
    tampered = tmp_path / "tampered.html"
    tampered.write_text(html.replace(f'<span class="lc-result">{number}', f'<span class="lc-result">{edited}', 1),
                        encoding="utf-8")
    report = verify_package(tampered)
    assert not report.ok
    named = [p for p in report.problems if f"step {step}:" in p]
    assert named and f"'{number}' became '{edited}'" in named[0], report.text()
    assert main(["verify", str(tampered)]) == 1


def test_editing_the_embedded_results_breaks_the_fingerprint(project, tmp_path):
    html = package_of(project).read_text(encoding="utf-8")
    m = re.search(r'("value": )([0-9]+\.[0-9]+)', html.split('id="lc-package-data">', 1)[1])
    tampered = tmp_path / "tampered.html"
    tampered.write_text(html.replace(m.group(0), m.group(1) + m.group(2) + "1", 1), encoding="utf-8")
    report = verify_package(tampered)
    assert any(p.startswith("fingerprint:") for p in report.problems), report.text()


def test_markup_edit_without_text_change_is_caught_by_the_document_hash(project, tmp_path):
    html = package_of(project).read_text(encoding="utf-8")
    tampered = tmp_path / "tampered.html"
    tampered.write_text(html.replace('<div class="lc-cautions"', '<div class="lc-cautions" hidden', 1),
                        encoding="utf-8")
    report = verify_package(tampered)
    assert report.problems == ["document: markup or images differ from the sealed package (no text changed)"]


def test_keyed_signoff_verifies_with_the_right_key_and_fails_with_a_wrong_one(project, tmp_path):
    good = generate_keypair(tmp_path / "good")
    other = generate_keypair(tmp_path / "other")
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED, key=good.private)
    export_project(project)
    pkg = package_of(project)
    assert verify_package(pkg, keys=tmp_path / "good").ok
    report = verify_package(pkg, keys=tmp_path / "other")
    assert not report.ok
    assert any(good.key_id in p and "not among the trusted keys" in p for p in report.problems), report.text()
    assert other.key_id not in report.text()
    assert main(["verify", str(pkg), "--keys", str(tmp_path / "other")]) == 1
    assert main(["verify", str(pkg), "--keys", str(tmp_path / "good")]) == 0


def test_a_forged_signoff_name_fails_the_signature(project, tmp_path):
    key = generate_keypair(tmp_path / "k")
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED, key=key.private)
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    forged = tmp_path / "forged.html"
    # Change the signer's name inside the embedded record only (the visible one is left alone).
    script = html.split('id="lc-package-data">', 1)[1]
    forged.write_text(html.replace(script, script.replace(f'"name": "{CHECKER}"', '"name": "Someone Else"', 1), 1),
                      encoding="utf-8")
    report = verify_package(forged)
    assert any("signature does not match" in p for p in report.problems), report.text()


def test_unsigned_signoff_is_noted_against_trusted_keys_and_fails_when_keys_are_required(project, tmp_path):
    generate_keypair(tmp_path / "k")
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    export_project(project)
    report = verify_package(package_of(project), keys=tmp_path / "k")
    assert report.ok and any("no keyed signature" in n for n in report.notes)
    strict = verify_package(package_of(project), keys=tmp_path / "k", require_keys=True)
    assert any("not signed with a key" in p for p in strict.problems)
    assert verify_package(package_of(project)).ok


def test_a_new_key_never_overwrites_and_keeps_the_private_key_private(tmp_path):
    files = generate_keypair(tmp_path / "keys")
    assert files.private.stat().st_mode & 0o777 == 0o600
    before = files.private.read_bytes()
    with pytest.raises(InputError, match="never replaced"):
        generate_keypair(tmp_path / "keys")
    assert files.private.read_bytes() == before
    assert files.private.name == "signing.signing.pem" and files.public.name == "signing.public.pem"
    assert main(["key", "new", "--holder", "signing", "--folder", str(tmp_path / "keys")]) == 2


def test_verify_of_a_page_without_data_says_so(tmp_path):
    page = tmp_path / "x.html"
    page.write_text("<html><body>hello</body></html>", encoding="utf-8")
    report = verify_package(page)
    assert report.problems and "no embedded sign-off data" in report.problems[0]


def test_embedded_data_cannot_break_out_of_its_script_element(project):
    html = package_of(project).read_text(encoding="utf-8")
    script = html.split('id="lc-package-data">', 1)[1].split("</script>", 1)[0]
    assert "<" not in script and ">" not in script
    json.loads(script)


def test_title_block_shows_the_current_signoff_of_a_role_before_a_void_later_one():
    from latticecalc.project.signoff.extras import _sign_rows
    from latticecalc.project.signoff.records import judge

    content = {"inputs": {"a": {"value": 1.0, "unit": "m"}}, "results": []}
    other = {"inputs": {"a": {"value": 2.0, "unit": "m"}}, "results": []}
    fp, fp_other = fingerprint_of(content), fingerprint_of(other)
    records = [{"seq": 1, "role": "checked", "name": "First", "time": "2026-01-01T00:00:00+00:00",
                "fingerprint": fp, "content": content},
               {"seq": 2, "role": "checked", "name": "Second", "time": "2026-01-02T00:00:00+00:00",
                "fingerprint": fp_other, "content": other}]
    [row] = _sign_rows(judge(records, fp, content))
    assert (row.name, row.void) == ("First", False)
    [row] = _sign_rows(judge(records[:1], fp_other, other))
    assert row.void and row.void_reason == "inputs changed: a (1 m -> 2 m)"
