"""The kit's sources live in the repository: docs/references.md and the register of values to confirm.

- No file under lib/ or tests/ cites a reference list outside the repository (the old shared
  reference notes and their bare confidence tags); tests name the primary source beside each check.
- Every source the code cites (each ``Source(author=..., title=..., year=...)`` written in lib/) has
  an entry in docs/references.md holding its author, its title (up to the first ": ", ", " or
  ". ") and its year.
- Every source tagged ``from memory`` in lib/ has an entry in the register
  (lib/latticecalc/data/to_confirm.toml), and every register entry names a source of the code.
- :func:`latticecalc.sources_register.blocks_approval` finds the from-memory sources a check rests on.
"""

import ast
import re
from pathlib import Path

import numpy as np

from latticecalc import Q_
from latticecalc.sheet import Source, check, quantity_step
from latticecalc.sheet.result import CalcResult
from latticecalc.signals import criteria as C
from latticecalc.sources_register import blocks_approval, register_entries

ROOT = Path(__file__).resolve().parents[1]
LIB = ROOT / "lib" / "latticecalc"
REFERENCES = ROOT / "docs" / "references.md"
#: The name of the reference notes kept outside the repository (spelt in two parts so this file passes).
OUTSIDE_LIST = "REFERENCES" + ".md"
#: Bare confidence tags of those notes ("[C]", "[D]", "[M]", "[C, secondary]") and "REFERENCES [D]".
OUTSIDE_TAG = re.compile(r"\[(?:C|D|M)(?:, secondary)?\]|\bREFERENCES\b")
#: Authors that are not publications (rules of thumb, derivations, numerical results, missing sources).
NOT_PUBLICATIONS = {"common practice", "derived", "numerical", "not stated"}


def _text_files(folder: Path):
    for p in sorted(folder.rglob("*")):
        if p.is_file() and p.suffix in {".py", ".toml", ".md", ".txt", ".ipynb", ".json", ".cfg"}:
            yield p


def _lib_sources() -> list[tuple[str, Source]]:
    """Every ``Source(...)`` in lib/ whose author and title are literal text, with where it is."""
    out = []
    for path in sorted(LIB.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            name = getattr(node, "func", None) and getattr(node.func, "id", getattr(node.func, "attr", ""))
            if not (isinstance(node, ast.Call) and name == "Source"):
                continue
            kw = {k.arg: k.value.value for k in node.keywords if isinstance(k.value, ast.Constant)}
            if isinstance(kw.get("author"), str) and isinstance(kw.get("title"), str):
                src = Source(author=kw["author"], title=kw["title"], year=kw.get("year", ""), tag=kw.get("tag", ""))
                out.append((f"{path.relative_to(ROOT)}:{node.lineno}", src))
    return out


def _publications():
    return [(where, s) for where, s in _lib_sources()
            if s.author not in NOT_PUBLICATIONS and s.tag not in ("common practice", "derived")]


def _normal(text: str) -> str:
    return " ".join(text.replace("*", "").split())


def _entries() -> list[str]:
    """The list items of docs/references.md after its first heading, with continuation lines, normalised."""
    entries, current, in_body = [], None, False
    for line in REFERENCES.read_text(encoding="utf-8").splitlines():
        in_body = in_body or line.startswith("## ")
        if line.startswith("- "):
            if current is not None:
                entries.append(current)
            current = line[2:] if in_body else None
        elif current is not None and line.startswith("  ") and line.strip():
            current += " " + line.strip()
        else:
            if current is not None:
                entries.append(current)
            current = None
    if current is not None:
        entries.append(current)
    return [_normal(e) for e in entries]


def main_title(title: str) -> str:
    """The title up to its first ": ", ", " or ". " (edition, journal and pages left off)."""
    cut = min((i for i in (title.find(": "), title.find(", "), title.find(". ")) if i >= 0), default=len(title))
    return title[:cut]


def test_no_file_cites_the_reference_notes_outside_the_repository():
    offenders = []
    for folder in (LIB, ROOT / "tests"):
        for path in _text_files(folder):
            if path == Path(__file__).resolve():
                continue
            for n, line in enumerate(path.read_text(encoding="utf-8", errors="replace").splitlines(), 1):
                if OUTSIDE_LIST in line or OUTSIDE_TAG.search(line):
                    offenders.append(f"{path.relative_to(ROOT)}:{n}: {line.strip()[:100]}")
    assert not offenders, "cite the primary source instead:\n" + "\n".join(offenders)


def test_the_scan_finds_the_sources_of_the_code():
    found = {(s.author, s.year) for _, s in _publications()}
    # a few the kit is known to cite (guards against a scan that silently finds nothing)
    assert {("Rao, S. S.", 2017), ("Den Hartog, J. P.", 1956), ("US Federal Transit Administration", 2018),
            ("BSI", 2008)} <= found


def test_every_source_of_the_code_is_in_the_references():
    entries = _entries()
    missing = []
    for where, s in _publications():
        need = [_normal(s.author), _normal(main_title(s.title)), str(s.year)]
        if not any(all(n in e for n in need) for e in entries):
            missing.append(f"{where}: {s.author} | {main_title(s.title)} | {s.year}")
    assert not missing, "add these to docs/references.md:\n" + "\n".join(sorted(set(missing)))


def test_every_reference_says_where_it_is_used():
    entries = _entries()
    assert len(entries) > 40
    assert all("Used in:" in e or "register" in e for e in entries), [e[:80] for e in entries if "Used in:" not in e]


def test_every_from_memory_source_of_the_code_is_in_the_register():
    missing = [f"{where}: {s.author} | {s.title}" for where, s in _lib_sources()
               if s.from_memory and not register_entries(s, materials=False)]
    assert not missing, "add these to lib/latticecalc/data/to_confirm.toml:\n" + "\n".join(missing)


def test_every_register_entry_names_a_source_of_the_code_and_of_the_references():
    code = {(s.author, s.title) for _, s in _lib_sources()}
    entries = _entries()
    for e in register_entries(materials=False):
        assert (e.source.author, e.source.title) in code, e.id
        assert e.value and e.used_in and e.why and e.confirm_against, e.id
        assert any(_normal(e.source.author) in r and _normal(main_title(e.source.title)) in r for r in entries), e.id
        assert any(f"[{e.id}" in r or f", {e.id}" in r or f" {e.id}]" in r for r in entries), \
            f"docs/references.md should give the register id {e.id}"
    ids = [e.id for e in register_entries()]
    assert len(ids) == len(set(ids))


def test_register_lists_the_catalogue_values_recalled():
    entries = {e.id: e for e in register_entries()}
    tpu = [e for k, e in entries.items() if k.startswith("material.") and k.endswith(".loss_factor")]
    assert tpu and all(e.source.from_memory and e.source.author == "Material data" for e in tpu)
    # values stated from a standard are not in the register (EN 1993-1-1 steel modulus)
    assert "material.steel-s355.youngs_modulus" not in entries
    assert register_entries(C.FTA_2018)[0].id == "criteria.fta-2018"
    assert register_entries(C.FTA_2006) == ()


def _levels():
    centre = Q_(1000 * 10 ** (np.arange(-20, -10) / 10), "Hz")
    return {"centre": centre, "nominal": [str(i) for i in range(10)], "velocity_rms": Q_(np.full(10, 30.0), "um/s")}



def test_blocks_approval_names_the_recalled_source_of_a_check():
    recalled = C.assess(levels=_levels(), criterion="fta-2018-cat2-frequent")
    assert blocks_approval(recalled) == [C.FTA_2018]
    # the 2006 table as reproduced in named secondary sources does not block
    assert blocks_approval(C.assess(levels=_levels(), criterion="fta-cat2-frequent")) == []
    # the same through the JSON records the package is built from
    records = [s.to_dict() for s in recalled.steps]
    assert [s.cite() for s in blocks_approval(records)] == [C.FTA_2018.cite()]
    # only the named checks count when asked
    assert blocks_approval(recalled, check_ids=["criterion.overall"]) == [C.FTA_2018]
    assert blocks_approval(recalled, check_ids=["no.such-check"]) == []


def test_blocks_approval_ignores_steps_unless_asked_and_takes_sources_as_given():
    memory = Source(author="Someone", title="A recalled table", tag="from memory")
    step = quantity_step(id="x.value", description="a value", value=Q_(1.0, "m"), source=memory)
    ok = check(id="x.check", description="a check", demand=Q_(1.0, "m"), limit=Q_(2.0, "m"),
               source=Source(author="Someone", title="A checked table"))
    result = CalcResult(value=1.0, steps=(step, ok))
    assert blocks_approval(result) == []
    assert blocks_approval(result, include_steps=True) == [memory]
    assert blocks_approval([memory, memory, Source(author="A", title="B")]) == [memory]
    assert blocks_approval(None) == []


def test_the_doc_file_is_in_the_repository():
    assert REFERENCES.is_file()
