"""Never trust a deck: include confinement, literal printing of deck strings, safe YAML,
size and depth limits, inputs never written, and a parser crash contained to its file."""
from __future__ import annotations

import hashlib
import io
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from linter import parsers
from linter import registry
from linter.check import check_paths
from linter.findings import exit_code
from linter.config import Config, ConfigError
from linter.findings import Finding, FileReport, RunResult
from linter.safe_yaml import MAX_YAML_BYTES, YamlRefused, load_yaml_file, load_yaml_text
from decks import CUBE_NODES


def need(fmt: str):
    try:
        return parsers.get(fmt)
    except ImportError:
        pytest.skip(f"the {fmt} parser is not there yet")


def reporter_names():
    from linter import reporters

    return reporters.names() if hasattr(reporters, "names") else []


def render(name: str, result) -> str:
    from linter import reporters

    try:
        fn = reporters.get(name)
    except ImportError:
        pytest.skip(f"reporter {name} is not there yet")
    buf = io.StringIO()
    fn(result, buf, {"color": False, "width": 200})
    return buf.getvalue()


DECK = """*NODE, NSET=NALL
""" + CUBE_NODES + """*ELEMENT, TYPE=C3D8, ELSET=EALL
1, 1, 2, 3, 4, 5, 6, 7, 8
{include}*SOLID SECTION, ELSET=EALL, MATERIAL={material}

*BOUNDARY
1, 1, 3
*STEP
*STATIC
*END STEP
"""
MATERIAL = "*MATERIAL, NAME={name}\n*ELASTIC\n210000., 0.3\n*DENSITY\n7.85e-9\n"


def deck(include: str = "", material: str = "STEEL", inline: bool = False) -> str:
    inc = MATERIAL.format(name=material) if inline else (f"*INCLUDE, INPUT={include}\n" if include else "")
    return DECK.format(include=inc, material=material)


INCLUDE_LINE = 12


# --------------------------------------------------------------------------- include root


@pytest.fixture
def repo(tmp_path):
    """A project folder (a git work tree: the default include root) with models/ and materials/."""
    root = tmp_path / "project"
    (root / ".git").mkdir(parents=True)
    (root / "models").mkdir()
    (root / "materials").mkdir()
    (root / "materials" / "steel.inp").write_text(MATERIAL.format(name="STEEL"))
    (tmp_path / "outside.inp").write_text(MATERIAL.format(name="STEEL"))
    return root


def test_shared_materials_inside_root_work(repo):
    need("keyword")
    p = repo / "models" / "part.inp"
    p.write_text(deck("../materials/steel.inp"))
    r = check_paths([str(p)], Config())
    rules = {f.rule for f in r.findings}
    assert not rules & {"parse/include-refused", "parse/missing-include", "model/undefined-material"}, r.findings
    assert [m["name"] for m in r.files[0].materials] == ["STEEL"]
    assert r.files[0].materials[0]["path"].endswith("steel.inp")


@pytest.mark.parametrize("target", ["/etc/passwd", "../../outside.inp", "{abs_outside}", "link.inp"])
def test_include_leaving_root_refused(repo, target):
    need("keyword")
    outside = repo.parent / "outside.inp"
    if target == "link.inp":      # a link inside the root that points outside is judged by where it points
        (repo / "models" / "link.inp").symlink_to(outside)
    target = target.format(abs_outside=outside)
    p = repo / "models" / "part.inp"
    p.write_text(deck(target))
    r = check_paths([str(p)], Config())
    refused = [f for f in r.findings if f.rule == "parse/include-refused"]
    assert refused and refused[0].severity == "error" and refused[0].line == INCLUDE_LINE, r.findings
    assert os.path.samefile(refused[0].path, p)
    assert exit_code(r, "error") == 2
    assert registry.get("parse/include-refused").incomplete
    # nothing of the refused file was read
    assert all(m["path"] is None or not m["path"].endswith(("passwd", "outside.inp")) for m in r.files[0].materials)


def test_include_outside_allowed_by_option(repo):
    need("keyword")
    p = repo / "models" / "part.inp"
    p.write_text(deck("../../outside.inp"))
    r = check_paths([str(p)], Config(allow_include_outside=True))
    assert not [f for f in r.findings if f.rule == "parse/include-refused"], r.findings
    assert [m["name"] for m in r.files[0].materials] == ["STEEL"]


def test_include_root_option(repo):
    need("keyword")
    p = repo / "models" / "part.inp"
    p.write_text(deck("../materials/steel.inp"))
    r = check_paths([str(p)], Config(include_root=str(repo / "models")))
    assert [f.rule for f in r.findings if f.rule == "parse/include-refused"] == ["parse/include-refused"]


def test_bulk_include_leaving_root_refused(repo):
    need("bulk")
    p = repo / "models" / "part.bdf"
    p.write_text("SOL 101\nCEND\nBEGIN BULK\nINCLUDE '/etc/passwd'\nMAT1,1,210000.,,0.3\nENDDATA\n")
    r = check_paths([str(p)], Config())
    refused = [f for f in r.findings if f.rule == "parse/include-refused"]
    assert refused and refused[0].line == 4, r.findings
    assert exit_code(r, "error") == 2


def test_cli_exit_code_on_refused_include(repo):
    need("keyword")
    pytest.importorskip("linter.cli")
    p = repo / "models" / "part.inp"
    p.write_text(deck("/etc/passwd"))
    proc = subprocess.run([sys.executable, "-m", "linter", "check", "--format", "json", str(p)],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2, proc.stderr
    rep = json.loads(proc.stdout)
    assert any(f["rule"] == "parse/include-refused" for f in rep["findings"])
    assert "root:" not in proc.stdout      # no content of the refused file leaks into the report


# --------------------------------------------------------------------------- deck strings printed literally

HOSTILE = "[bold red]EVIL[/bold red]\x1b[31mRED\x1b]0;title\x07"


def hostile_result(tmp_path) -> RunResult:
    """A report whose strings carry markup, escape sequences and line breaks (as a hostile deck could)."""
    path = str(tmp_path / "x.inp")
    (tmp_path / "x.inp").write_text("*HEADING\n" * 5)
    nasty = HOSTILE + "\nforged.inp:1: error: fake/rule: injected\r\x0bx\u2028y\x85z"
    f = Finding(rule="model/unused-material", severity="note", message=f"material {nasty} is not used",
                path=path, line=3, material=nasty, data={"name": nasty, "v": float("nan"), "w": float("inf")})
    rep = FileReport(path=path, format="keyword", dialect="calculix",
                     materials=[{"name": nasty, "path": path, "line": 3, "properties": ["elastic"]}],
                     unchecked=[{"what": nasty, "path": path, "line": 2, "reason": nasty, "material": nasty}],
                     findings=[f], summary={"elements": 1})
    return RunResult(files=[rep])


def test_line_format_cannot_be_forged(tmp_path):
    if "line" not in reporter_names():
        pytest.skip("line reporter not there yet")
    out = render("line", hostile_result(tmp_path))
    lines = [ln for ln in out.split("\n") if ln]
    assert len(lines) == 1, lines
    assert not any(ch in out for ch in "\x1b\r\x0b\x85\u2028\x07")
    assert "forged.inp:1" in lines[0]         # still shown, but inside the one line


@pytest.mark.parametrize("name", ["text", "audit", "line"])
def test_human_reports_show_strings_literally(tmp_path, name):
    if name not in reporter_names():
        pytest.skip(f"{name} reporter not there yet")
    out = render(name, hostile_result(tmp_path))
    assert "\x1b" not in out and "\x07" not in out
    assert "EVIL" in out
    if name == "text":
        assert "[bold red]" in out        # markup shown, not interpreted


@pytest.mark.parametrize("name", ["json", "sarif"])
def test_machine_reports_stay_valid(tmp_path, name, sarif_schema_path):
    if name not in reporter_names():
        pytest.skip(f"{name} reporter not there yet")
    out = render(name, hostile_result(tmp_path))
    doc = json.loads(out)          # strict: NaN/Infinity would be rejected below
    json.loads(out, parse_constant=lambda c: pytest.fail(f"non-standard JSON constant {c}"))
    assert HOSTILE.split("\x1b")[0] in out
    if name == "sarif":
        import jsonschema    # a test dependency (pyproject [test]): never skipped

        schema = json.loads(Path(sarif_schema_path).read_text(encoding="utf-8"))
        jsonschema.Draft7Validator(schema).validate(doc)


def test_hostile_material_name_end_to_end(write_deck):
    need("keyword")
    name = "[bold red]EVIL\x1b[31mX"
    p = write_deck("evil.inp", deck(material=name, inline=True))
    r = check_paths([str(p)], Config())
    written = [m["name"] for m in r.files[0].materials]
    assert len(written) == 1 and "EVIL" in written[0]
    for rep in reporter_names():
        out = render(rep, r)
        assert "\x1b" not in out, rep
        if rep in ("json", "sarif"):
            json.loads(out)


# --------------------------------------------------------------------------- YAML


BILLION_LAUGHS = """a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]
b: &b [*a,*a,*a,*a,*a,*a,*a,*a,*a]
c: &c [*b,*b,*b,*b,*b,*b,*b,*b,*b]
d: &d [*c,*c,*c,*c,*c,*c,*c,*c,*c]
e: &e [*d,*d,*d,*d,*d,*d,*d,*d,*d]
f: &f [*e,*e,*e,*e,*e,*e,*e,*e,*e]
g: &g [*f,*f,*f,*f,*f,*f,*f,*f,*f]
h: &h [*g,*g,*g,*g,*g,*g,*g,*g,*g]
i: &i [*h,*h,*h,*h,*h,*h,*h,*h,*h]
"""


def test_yaml_aliases_refused():
    with pytest.raises(YamlRefused, match="alias"):
        load_yaml_text(BILLION_LAUGHS)


def test_yaml_python_tag_refused(tmp_path):
    marker = tmp_path / "pwned"
    doc = f'fail_on: !!python/object/apply:os.system ["touch {marker}"]\n'
    with pytest.raises(YamlRefused):
        load_yaml_text(doc)
    cfg = tmp_path / "deckwarden.yaml"
    cfg.write_text(doc)
    with pytest.raises(ConfigError):
        Config.load(str(cfg))
    assert not marker.exists()


def test_yaml_size_limit(tmp_path):
    big = "rules:\n" + "".join(f"  elastic/r{i}: off\n" for i in range(MAX_YAML_BYTES // 18 + 10))
    assert len(big) > MAX_YAML_BYTES
    with pytest.raises(YamlRefused):
        load_yaml_text(big)
    p = tmp_path / "deckwarden.yaml"
    p.write_text(big)
    with pytest.raises(YamlRefused):
        load_yaml_file(p)
    with pytest.raises(ConfigError):
        Config.load(str(p))


def test_billion_laughs_config_file(tmp_path):
    p = tmp_path / "deckwarden.yaml"
    p.write_text(BILLION_LAUGHS)
    with pytest.raises(ConfigError, match="alias"):
        Config.load(str(p))


# --------------------------------------------------------------------------- limits


def test_include_depth_limit(tmp_path):
    need("keyword")
    depth = 3
    for i in range(1, 7):
        nxt = f"*INCLUDE, INPUT=level{i + 1}.inp\n" if i < 6 else MATERIAL.format(name="STEEL")
        (tmp_path / f"level{i}.inp").write_text(f"** level {i}\n{nxt}")
    top = tmp_path / "top.inp"
    top.write_text(deck("level1.inp"))
    r = check_paths([str(top)], Config(max_include_depth=depth))
    deep = [f for f in r.findings if f.rule == "parse/include-too-deep"]
    assert len(deep) == 1, r.findings
    # top -> level1 -> level2 -> level3 are the 3 allowed levels; level3's include of level4 is refused
    assert os.path.basename(deep[0].path) == f"level{depth}.inp" and deep[0].line == 2
    # a generous limit reads the whole chain
    r = check_paths([str(top)], Config(max_include_depth=16))
    assert not [f for f in r.findings if f.rule == "parse/include-too-deep"]
    assert [m["name"] for m in r.files[0].materials] == ["STEEL"]


def test_file_size_limit(tmp_path):
    need("keyword")
    top = tmp_path / "big.inp"
    top.write_text(deck(inline=True) + "** padding\n" * 2000)
    r = check_paths([str(top)], Config(max_file_size_mb=0.01))
    assert [f.rule for f in r.findings] == ["parse/file-too-large"]
    assert "MiB" in r.findings[0].message
    assert exit_code(r, "error") == 2


def test_included_file_size_limit(tmp_path):
    need("keyword")
    (tmp_path / "huge_mat.inp").write_text(MATERIAL.format(name="STEEL") + "** padding\n" * 2000)
    top = tmp_path / "top.inp"
    top.write_text(deck("huge_mat.inp"))
    r = check_paths([str(top)], Config(max_file_size_mb=0.01))
    found = [f for f in r.findings if f.rule in ("parse/include-unreadable", "parse/file-too-large")]
    assert found and found[0].line == INCLUDE_LINE and os.path.samefile(found[0].path, top), r.findings
    assert exit_code(r, "error") == 2


# --------------------------------------------------------------------------- inputs never written


def _fingerprint(folder: Path) -> dict[str, tuple[str, int, int]]:
    out = {}
    for p in sorted(folder.rglob("*")):
        if p.is_file():
            st = p.stat()
            out[str(p.relative_to(folder))] = (hashlib.sha256(p.read_bytes()).hexdigest(), st.st_mtime_ns, st.st_mode)
    return out


def test_inputs_never_written(tmp_path):
    need("keyword")
    src = tmp_path / "inputs"
    (src / "materials").mkdir(parents=True)
    (src / "materials" / "steel.inp").write_text(MATERIAL.format(name="STEEL"))
    (src / "part.inp").write_text(deck("materials/steel.inp"))
    (src / "bad.inp").write_text(deck(inline=True).replace("210000., 0.3", "nan, 0.4999"))
    (src / "bracket.bdf").write_text("SOL 101\nCEND\nBEGIN BULK\nMAT1,1,210000.,,0.3\nENDDATA\n")
    (src / "deckwarden.yaml").write_text("fail_on: warning\n")
    before = _fingerprint(src)
    result = check_paths([str(src)], Config.load(str(src / "deckwarden.yaml")))
    for name in reporter_names():
        render(name, result)
    if _has_cli():
        out = tmp_path / "out"
        out.mkdir()
        for fmt in reporter_names():
            subprocess.run([sys.executable, "-m", "linter", "check", str(src), "--format", fmt,
                            "--output", str(out / f"report.{fmt}"), "--no-color"],
                           capture_output=True, timeout=120, cwd=str(src))
    assert _fingerprint(src) == before


def _has_cli() -> bool:
    try:
        import linter.cli  # noqa: F401
    except ImportError:
        return False
    return True


# --------------------------------------------------------------------------- parser crash contained


@pytest.mark.parametrize("jobs", [1, 2])
def test_parser_crash_on_one_file_among_several(tmp_path, monkeypatch, jobs):
    mod = need("keyword")
    if jobs > 1:
        import multiprocessing as mp

        if "fork" not in mp.get_all_start_methods():
            pytest.skip("the monkeypatched parser reaches worker processes only through fork")
    paths = []
    for name in ("a.inp", "b.inp", "c.inp"):
        p = tmp_path / name
        p.write_text(deck(inline=True))
        paths.append(str(p))
    real_parse = mod.parse

    def flaky(path, options):
        if os.path.basename(path) == "b.inp":
            raise RuntimeError("simulated parser defect")
        return real_parse(path, options)

    monkeypatch.setattr(mod, "parse", flaky)
    r = check_paths(paths, Config(), jobs=jobs)
    reports = {os.path.basename(f.path): f for f in r.files}
    assert set(reports) == {"a.inp", "b.inp", "c.inp"}
    crash = reports["b.inp"].findings
    assert [f.rule for f in crash] == ["internal/parser-failed"]
    assert "RuntimeError" in crash[0].message and "simulated parser defect" in crash[0].message
    assert reports["b.inp"].incomplete
    for ok in ("a.inp", "c.inp"):
        assert reports[ok].materials and not reports[ok].incomplete
        assert not [f for f in reports[ok].findings if f.rule.startswith("internal/")]
    assert exit_code(r, "error") == 2


def test_bulk_include_depth_limit(tmp_path):
    need("bulk")
    for i in range(1, 7):
        nxt = f"INCLUDE 'level{i + 1}.bdf'\n" if i < 6 else "MAT1,1,210000.,,0.3\n"
        (tmp_path / f"level{i}.bdf").write_text(f"$ level {i}\n{nxt}")
    top = tmp_path / "top.bdf"
    top.write_text("SOL 101\nCEND\nBEGIN BULK\nINCLUDE 'level1.bdf'\nENDDATA\n")
    r = check_paths([str(top)], Config(max_include_depth=3))
    deep = [f for f in r.findings if f.rule == "parse/include-too-deep"]
    assert len(deep) == 1 and os.path.basename(deep[0].path) == "level3.bdf" and deep[0].line == 2, r.findings
    r = check_paths([str(top)], Config(max_include_depth=16))
    assert not [f for f in r.findings if f.rule == "parse/include-too-deep"]
    assert len(r.files[0].materials) == 1
