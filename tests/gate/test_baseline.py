"""Baseline and fingerprints: line shifts keep the identity, a changed value is new; SARIF for code
scanning (validated against the SARIF 2.1.0 schema, tests/data); --files-from; output order and --jobs."""
from __future__ import annotations

import io
import json
import shutil

import pytest

from linter.cli import main
from linter.findings import Finding
from linter.fingerprint import SARIF_KEY, _key_data, assign

from decks import TET_MESH as MESH


def deck(nu_a="0.7", nu_b="0.7") -> str:
    # nu = 0.7 lies outside -1 < nu < 0.5 (isotropic elasticity, common practice): one error per material
    return (MESH + f"*MATERIAL,NAME=A\n*ELASTIC\n210000.,{nu_a}\n*DENSITY\n7.85e-9\n"
            f"*MATERIAL,NAME=B\n*ELASTIC\n210000.,{nu_b}\n*DENSITY\n7.85e-9\n"
            "*SOLID SECTION,ELSET=E1,MATERIAL=A\n*STEP\n*STATIC\n*END STEP\n")


def run(args, capsys):
    code = main(args)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def repo(tmp_path):
    (tmp_path / "models").mkdir()
    (tmp_path / "models" / "m.inp").write_text(deck())
    (tmp_path / "other").mkdir()
    return tmp_path


def findings_json(capsys, *args):
    code, out, err = run(["check", *args, "--units", "mm-tonne-s", "--format", "json", "--jobs", "1"], capsys)
    return code, json.loads(out)


def test_round_trip_survives_inserted_and_deleted_lines(repo, capsys):
    base = repo / "other" / "baseline.json"
    code, doc = findings_json(capsys, str(repo / "models"), "--write-baseline", str(base))
    assert code == 0 and doc["summary"]["in_baseline"] >= 2 and doc["summary"]["error"] == 0
    before = {f["fingerprint"] for f in doc["findings"]}
    # lines inserted above the findings, then some deleted: the fingerprints stay, nothing is new
    text = (repo / "models" / "m.inp").read_text()
    (repo / "models" / "m.inp").write_text("** revision 2\n**\n** more history\n" + text.replace("*DENSITY\n7.85e-9\n*MATERIAL,NAME=B", "*MATERIAL,NAME=B"))
    code, doc = findings_json(capsys, str(repo / "models"), "--baseline", str(base))
    after = {f["fingerprint"] for f in doc["findings"] if f["rule"] == "elastic/poisson-out-of-range"}
    assert after <= before and len(after) == 2
    new = [f for f in doc["findings"] if not f.get("baseline") and f["severity"] == "error"]
    assert code == 0 and not new and doc["summary"]["error"] == 0


def test_changed_value_is_one_new_finding_and_one_fixed_entry(repo, capsys):
    base = repo / "other" / "baseline.json"
    findings_json(capsys, str(repo / "models"), "--write-baseline", str(base))
    (repo / "models" / "m.inp").write_text(deck(nu_b="0.8"))
    code, doc = findings_json(capsys, str(repo / "models"), "--baseline", str(base))
    new = [f for f in doc["findings"] if not f.get("baseline")]
    assert code == 1 and [(f["rule"], f["material"]) for f in new] == [("elastic/poisson-out-of-range", "B")]
    assert doc["summary"]["error"] == 1
    assert [(e["rule"], e["material"]) for e in doc["summary"]["fixed"]] == [("elastic/poisson-out-of-range", "B")]
    code, out, _ = run(["check", str(repo / "models"), "--units", "mm-tonne-s", "--baseline", str(base)], capsys)
    assert "1 baseline entry fixed" in out and "in the baseline (not counted)" in out


def test_baseline_file_is_sorted_stable_and_relative(repo, capsys):
    base = repo / "other" / "baseline.json"
    findings_json(capsys, str(repo / "models"), "--write-baseline", str(base))
    first = base.read_bytes()
    findings_json(capsys, str(repo / "models"), "--write-baseline", str(base))
    assert base.read_bytes() == first
    doc = json.loads(first)
    assert doc["fingerprint"] == SARIF_KEY
    keys = [(e["path"], e["rule"], e["material"] or "", e["fingerprint"]) for e in doc["entries"]]
    assert keys == sorted(keys) and all(e["path"] == "m.inp" for e in doc["entries"])   # relative to models/
    assert b"0.7" not in first.replace(b"210000.,0.7", b"")   # no number of the finding's data in the keys


def test_bad_baseline_is_a_usage_error(repo, capsys):
    (repo / "other" / "b.json").write_text('{"something": 1}')
    code, _, err = run(["check", str(repo / "models"), "--baseline", str(repo / "other" / "b.json")], capsys)
    assert code == 2 and "not a deckwarden baseline" in err


def test_identical_findings_get_an_occurrence_index(tmp_path):
    p = tmp_path / "x.inp"
    p.write_text("a\nsame  text\nsame text\n")
    fs = [Finding("elastic/poisson-out-of-range", "error", "m", str(p), 2, "A", {"kind": "x", "nu": 0.7}),
          Finding("elastic/poisson-out-of-range", "error", "m", str(p), 3, "A", {"kind": "x", "nu": 0.7})]
    assign(fs, [str(tmp_path)])
    assert fs[0].fingerprint.rsplit(":", 1) == [fs[1].fingerprint.rsplit(":", 1)[0], "0"]
    assert fs[1].fingerprint.endswith(":1")
    assert _key_data({"kind": "x", "nu": 0.7, "line": 3, "rows": [{"T": 20.0}]}) == {"kind": "x"}
    # text data: paths relative to the root, line references and written-out floats replaced
    assert _key_data({"step": "MODES (line 77)", "include": str(tmp_path / "m" / "a.inp"),
                      "decks": [str(tmp_path / "b.inp")], "note": "E 2.1e5 and nu 0.3"},
                     [str(tmp_path)]) == {"step": "MODES (line #)", "include": "m/a.inp", "decks": ["b.inp"],
                                          "note": "E # and nu #"}


def test_line_texts_reads_only_what_it_needs(tmp_path, monkeypatch):
    import linter.fingerprint as fp

    monkeypatch.setattr(fp, "BLOCK", 7)                    # many blocks, lines split across them
    lines = [f"line {i} " + "x" * (i % 13) for i in range(1, 120)]
    p = tmp_path / "f.inp"
    p.write_text("\n".join(lines))                         # no line end after the last line
    got = fp.line_texts(str(p), {1, 2, 60, 119, 500})
    assert got == {1: lines[0], 2: lines[1], 60: lines[59], 119: lines[118]}


def test_sarif_for_code_scanning(repo, capsys, sarif_validator):
    base = repo / "other" / "baseline.json"
    findings_json(capsys, str(repo / "models"), "--write-baseline", str(base))
    (repo / "models" / "m.inp").write_text(deck(nu_b="0.8"))
    code, out, _ = run(["check", str(repo / "models"), "--units", "mm-tonne-s", "--format", "sarif",
                        "--baseline", str(base), "--sarif-category", "shard-1"], capsys)
    doc = json.loads(out)
    sarif_validator(doc)
    run_ = doc["runs"][0]
    assert run_["automationDetails"]["id"] == "deckwarden/shard-1/"
    assert run_["originalUriBaseIds"]["SRCROOT"]["uri"] == (repo / "models").as_uri() + "/"
    res = [r for r in run_["results"] if r["ruleId"] == "elastic/poisson-out-of-range"]
    loc = res[0]["locations"][0]["physicalLocation"]["artifactLocation"]
    assert loc == {"uri": "m.inp", "uriBaseId": "SRCROOT"}
    assert all(SARIF_KEY in r["partialFingerprints"] for r in res)
    assert sorted(r["baselineState"] for r in res) == ["new", "unchanged"]
    assert not any("helpUri" in d for d in run_["tool"]["driver"]["rules"])
    assert run_["invocations"][0]["executionSuccessful"] is True and code == 1


def test_sarif_execution_unsuccessful_on_exit_2(repo, capsys, sarif_validator):
    code, out, _ = run(["check", str(repo / "models"), str(repo / "missing.inp"), "--format", "sarif"], capsys)
    doc = json.loads(out)
    sarif_validator(doc)
    assert code == 2 and doc["runs"][0]["invocations"][0]["executionSuccessful"] is False


def test_files_from_and_deterministic_order(repo, capsys, monkeypatch):
    for i in range(4):
        shutil.copy(repo / "models" / "m.inp", repo / "models" / f"z{i}.inp")
    names = [str(repo / "models" / f"z{i}.inp") for i in (3, 1, 2, 0)]
    lst = repo / "other" / "shard.txt"
    lst.write_text("# shard 1\n" + "\n".join(names) + "\n\n")
    outs = []
    for jobs in ("1", "2"):
        code, out, _ = run(["check", "--files-from", str(lst), "--format", "json", "--units", "mm-tonne-s",
                            "--jobs", jobs], capsys)
        outs.append(out)
    assert outs[0] == outs[1]
    assert [f["path"] for f in json.loads(outs[0])["files"]] == sorted(names)
    monkeypatch.setattr("sys.stdin", io.StringIO(names[0] + "\n"))
    code, out, _ = run(["check", "--files-from", "-", "--format", "json", "--units", "mm-tonne-s"], capsys)
    assert [f["path"] for f in json.loads(out)["files"]] == [names[0]]


def test_files_from_errors(repo, capsys):
    code, _, err = run(["check", "--files-from", str(repo / "nothing.txt")], capsys)
    assert code == 2 and "cannot read" in err
    (repo / "empty.txt").write_text("\n# none\n")
    code, _, err = run(["check", "--files-from", str(repo / "empty.txt")], capsys)
    assert code == 2 and "lists no path" in err


def test_keyword_fingerprints_from_the_parsers_text(tmp_path, monkeypatch):
    """Fingerprints of a keyword deck come from the lines the check took from the parser's text, and equal
    those computed by reading the file again."""
    import linter.fingerprint as fp
    from linter.check import check_paths
    from linter.config import Config

    p = tmp_path / "pv40_seal.inp"
    p.write_text("*NODE\n1,0,0,0\n2,1,0,0\n3,0,1,0\n4,0,0,1\n*ELEMENT,TYPE=C3D4,ELSET=E1\n1,1,2,3,4\n"
                 "*MATERIAL,NAME=SEAL\n*ELASTIC\n210000.,0.7\n*SOLID SECTION,ELSET=E1,MATERIAL=SEAL\n"
                 "*STEP\n*STATIC\n*END STEP\n")
    res = check_paths([str(p)], Config.from_mapping({"units": "mm-tonne-s"}))
    (fr,) = res.files
    assert fr.line_texts[str(p)][10] == "210000.,0.7"               # nu 0.7: the finding's line (10)
    real = fp.line_texts
    monkeypatch.setattr(fp, "line_texts", lambda path, wanted: (_ for _ in ()).throw(AssertionError(path)))
    shown = fp.assign(res.findings, [str(tmp_path)], fr.line_texts)
    got = {f.rule: f.fingerprint for f in res.findings}
    monkeypatch.setattr(fp, "line_texts", real)
    assert fp.assign(res.findings, [str(tmp_path)]) == shown
    assert {f.rule: f.fingerprint for f in res.findings} == got and "elastic/poisson-out-of-range" in got


def test_identity_does_not_depend_on_how_the_decks_are_named(tmp_path, capsys, monkeypatch):
    """A baseline written with absolute paths matches a run that names the folder relative to the working
    folder, also for findings whose data lists other decks (material drift across two decks)."""
    models = tmp_path / "models"
    models.mkdir()
    mesh = "*NODE\n1,0,0,0\n2,1,0,0\n3,0,1,0\n4,0,0,1\n*ELEMENT,TYPE=C3D4,ELSET=E1\n1,1,2,3,4\n"
    for name, e in (("a.inp", "210000."), ("b.inp", "200000.")):
        (models / name).write_text(mesh + f"*MATERIAL,NAME=STEEL\n*ELASTIC\n{e},0.3\n"
                                   "*SOLID SECTION,ELSET=E1,MATERIAL=STEEL\n*STEP\n*STATIC\n*END STEP\n")
    (tmp_path / "other").mkdir()
    bl = tmp_path / "other" / "baseline.json"       # beside, not above, the decks: the root is the folder checked
    run(["check", str(models), "--units", "mm-tonne-s", "--write-baseline", str(bl)], capsys)
    recorded = json.loads(bl.read_text())
    recorded = recorded["entries"]
    assert any(e["rule"] == "model/material-drift" for e in recorded)
    monkeypatch.chdir(tmp_path)
    _code, doc = findings_json(capsys, "models", "--baseline", "other/baseline.json")
    assert doc["summary"]["total"] == 0 and doc["summary"]["in_baseline"] == len(recorded)
