"""The parser registry: one list of extensions per format, cheap listing, parser plugins (deckwarden.parsers)."""
from __future__ import annotations

import subprocess
import sys

import pytest

from linter import parsers
from linter.check import check_paths
from linter.config import Config
from linter.findings import exit_code

TOY = '''
FORMAT = "toy"
EXTENSIONS = (".TOY", ".toy2")
DEFAULT_DIALECT = "toy"
COMMENT_PREFIXES = ("#",)


def sniff(head):
    return 1.0 if head.startswith(b"TOY") else 0.0


def parse(path, options):
    raise NotImplementedError
'''

NO_PARSE = 'FORMAT = "half"\nEXTENSIONS = (".half",)\n\ndef sniff(head):\n    return 0.0\n'


@pytest.fixture
def parser_plugins(monkeypatch, tmp_path):
    """parser_plugins({"name": "module"}, {"module.py": source}): entry points of deckwarden.parsers declared
    by a dist-info folder on sys.path (nothing installed), with a fresh registry state."""

    def load(points: dict[str, str], modules: dict[str, str]) -> None:
        site = tmp_path / "site"
        info = site / "toy_formats-1.0.dist-info"
        info.mkdir(parents=True)
        (info / "METADATA").write_text("Metadata-Version: 2.1\nName: toy-formats\nVersion: 1.0\n")
        (info / "entry_points.txt").write_text(f"[{parsers.ENTRY_POINT_GROUP}]\n" +
                                               "".join(f"{n} = {v}\n" for n, v in points.items()))
        for name, text in modules.items():
            (site / name).write_text(text)
        monkeypatch.syspath_prepend(str(site))
        monkeypatch.setattr(parsers, "_plugins_loaded", False)
        monkeypatch.setattr(parsers, "_modules", {})
        monkeypatch.setattr(parsers, "_plugin_errors", [])

    yield load
    for mod in ("toy_format", "half_format"):
        sys.modules.pop(mod, None)


def test_each_format_lists_its_extensions_once():
    # the registry entry names the package; the extensions are the package's own tuple
    for name, module in parsers.BUILTIN.items():
        mod = parsers.get(name)
        assert mod.__name__ == module and mod.FORMAT == name
        assert parsers.extensions()[name] == mod.EXTENSIONS
        for ext in mod.EXTENSIONS:
            assert name in parsers.formats_for_extension(ext.upper())
    assert parsers.extensions()["keyword"] == (".inp",)
    assert ".bdf" in parsers.all_extensions() and ".inp" in parsers.all_extensions()


def test_every_builtin_format_declares_its_comment_markers():
    for name in parsers.BUILTIN:
        prefixes = parsers.get(name).COMMENT_PREFIXES
        assert isinstance(prefixes, tuple) and prefixes and all(isinstance(p, str) and p for p in prefixes)
    assert parsers.get("keyword").COMMENT_PREFIXES == ("**",)
    assert parsers.get("bulk").COMMENT_PREFIXES == ("$",)


def test_listing_the_formats_does_not_import_the_readers():
    code = ("import sys, linter.parsers as p; p.all_extensions(); p.formats_for_extension('.inp'); "
            "print(' '.join(m for m in sys.modules if any(m.startswith(v + '.') for v in p.BUILTIN.values())))")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip() == "", f"importing the format packages loaded their readers: {proc.stdout}"


def test_reader_attributes_come_from_the_parser_module():
    from linter.parsers.keyword import parser

    assert parsers.get("keyword").parse is parser.parse
    with pytest.raises(AttributeError, match="no_such_thing"):
        parsers.get("keyword").no_such_thing   # noqa: B018


def test_parser_plugin_is_registered_with_its_extensions(parser_plugins):
    parser_plugins({"toy": "toy_format"}, {"toy_format.py": TOY})
    assert "toy" in parsers.names()
    assert parsers.formats_for_extension(".toy") == ["toy"] and parsers.formats_for_extension(".TOY2") == ["toy"]
    assert parsers.plugin_errors() == []
    assert parsers.detect("a.toy", b"TOY 1") == "toy"
    assert parsers.detect("a.inp", b"*NODE\n1, 0, 0, 0\n") == "keyword"   # the built-ins are still there


def test_parser_plugin_that_cannot_be_loaded_is_reported(parser_plugins, write_deck):
    parser_plugins({"gone": "no_such_format_module", "half": "half_format"}, {"half_format.py": NO_PARSE})
    errors = dict(parsers.plugin_errors())
    assert set(errors) == {"gone", "half"}
    assert "ModuleNotFoundError" in errors["gone"] and "lacks parse" in errors["half"]
    assert "half" not in parsers.names() and ".half" not in parsers.all_extensions()
    deck = write_deck("part.inp", "*NODE\n1, 0, 0, 0\n")
    result = check_paths([str(deck)], Config())
    failed = [f for f in result.general if f.rule == "internal/plugin-failed"]
    assert sorted(f.data["plugin"] for f in failed) == ["gone", "half"]
    assert all(f.message.startswith("parser plugin ") for f in failed)
    assert result.files and exit_code(result, "error") == 2          # the deck was still checked; incomplete
