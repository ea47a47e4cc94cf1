"""Property-based fuzzing of every registered parser and every registered reporter.

Inputs: arbitrary bytes, deck-like text made of each format's cards, and mutations
(deleted, duplicated, swapped, truncated lines; altered numbers) of a fixed, small
subset of the shared corpus and of the sample decks. Properties: no exception escapes
``check_file`` / ``check_paths`` and no internal failure is reported; every line number
reported exists in its file; every reporter renders the result, the JSON report parses
and the SARIF report validates against the SARIF 2.1.0 schema.

Deterministic (``derandomize=True``, no example database) and bounded: the whole file
runs in well under two minutes. Run with ``-s`` to see how many cases each test ran.
"""
from __future__ import annotations

import io
import json
import os
import re
import tempfile
from collections import Counter
from pathlib import Path

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from linter import parsers
from linter.check import check_file, check_paths, make_policy
from linter.config import Config
from linter.parsers.sources import SourceError, read_deck_bytes

REPO = Path(__file__).resolve().parents[2]
SAMPLES = REPO / "sample_decks"

SETTINGS = dict(derandomize=True, deadline=None, database=None, print_blob=True,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture,
                                       HealthCheck.data_too_large])
CASES: Counter = Counter()


@pytest.fixture(scope="module", autouse=True)
def _count_report():
    yield
    if CASES:
        print("\nfuzz cases run: " + ", ".join(f"{k}={v}" for k, v in sorted(CASES.items()))
              + f"; total {sum(CASES.values())}")


def available_formats() -> list[str]:
    out = []
    for name in parsers.names():
        try:
            parsers.get(name)
        except ImportError:
            continue
        out.append(name)
    return out


FORMATS = available_formats()
if not FORMATS:
    pytestmark = pytest.mark.skip(reason="no parser is importable yet")


def ext_of(fmt: str) -> str:
    return (parsers.extensions().get(fmt) or (".txt",))[0]


# --------------------------------------------------------------------------- properties


def n_lines(path: str) -> int:
    data = read_deck_bytes(path, 1 << 30).data
    return data.count(b"\n") + (0 if data.endswith(b"\n") or not data else 1)


def check_result(result, cfg: Config) -> None:
    """The properties every run must have, whatever the input."""
    counts: dict[str, int] = {}
    for f in result.findings:
        assert not f.rule.startswith("internal/"), f"{f.rule}: {f.message}"
        assert f.severity in ("error", "warning", "note")
        if f.line is None:
            continue
        assert isinstance(f.line, int) and f.path, f
        if f.path not in counts:
            try:
                counts[f.path] = n_lines(f.path)
            except SourceError as exc:
                pytest.fail(f"{f.rule} gives a line in {f.path}, which cannot be read ({exc.message})")
        assert 1 <= f.line <= max(1, counts[f.path]), f"{f.rule} at {f.path}:{f.line} of {counts[f.path]}"
    render_all(result)


_SARIF_VALIDATOR = None


def sarif_validator():
    """The SARIF 2.1.0 validator (tests/sarif_schema.py): a missing schema fails, it never stops validating."""
    global _SARIF_VALIDATOR
    if _SARIF_VALIDATOR is None:
        from sarif_schema import validator

        _SARIF_VALIDATOR = validator()
    return _SARIF_VALIDATOR


def reporter_names() -> list[str]:
    from linter import reporters

    out = []
    for name in getattr(reporters, "names", lambda: [])():
        try:
            reporters.get(name)
        except ImportError:
            continue
        out.append(name)
    return out


def render_all(result) -> None:
    from linter import reporters

    for name in reporter_names():
        buf = io.StringIO()
        reporters.get(name)(result, buf, {"color": False, "width": 120})
        out = buf.getvalue()
        CASES[f"report:{name}"] += 1
        if name == "json":
            json.loads(out, parse_constant=lambda c: pytest.fail(f"JSON report holds {c}"))
        elif name == "sarif":
            doc = json.loads(out, parse_constant=lambda c: pytest.fail(f"SARIF report holds {c}"))
            sarif_validator().validate(doc)
        elif name == "line":
            assert "\x1b" not in out


def check_bytes(data: bytes, fmt: str, name: str | None = None) -> None:
    cfg = Config()
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, name or ("fuzz" + ext_of(fmt)))
        with open(path, "wb") as fh:
            fh.write(data)
        policy = make_policy([path], cfg)
        report = check_file(path, fmt, cfg, policy)
        from linter.findings import RunResult

        result = RunResult(files=[report])
        check_result(result, cfg)
        # and through the driver, which also detects the format
        check_result(check_paths([path], cfg), cfg)


# --------------------------------------------------------------------------- inputs

NUMBERS = st.sampled_from(["0", "-0", "1", "0.3", "0.5", "0.4999", "-1", "210000.", "2.1e5", "2.1D5",
                           "7.85-9", "1.+5", "1e400", "-1e400", "nan", "inf", "1.2.3", "--5", "", " ",
                           "1" * 40, "1e-320", "99999999999", "+", ".", "E", "0x10", "1_000"])

KEYWORD_CARDS = ["*NODE", "*NODE, NSET=N", "*ELEMENT, TYPE=C3D8, ELSET=E", "*ELEMENT, TYPE=C3D20R",
                 "*ELEMENT, TYPE=S4, ELSET=E", "*ELSET, ELSET=E", "*ELSET, ELSET=E, GENERATE", "*NSET, NSET=N",
                 "*MATERIAL, NAME=M", "*MATERIAL, NAME=M2", "*MATERIAL", "*ELASTIC", "*ELASTIC, TYPE=ORTHO",
                 "*ELASTIC, TYPE=ENGINEERING CONSTANTS", "*ELASTIC, TYPE=ANISO", "*DENSITY", "*EXPANSION",
                 "*PLASTIC", "*HYPERELASTIC, NEO HOOKE", "*HYPERELASTIC, OGDEN, N=2", "*HYPERFOAM",
                 "*CONDUCTIVITY", "*SPECIFIC HEAT", "*USER MATERIAL, CONSTANTS=2", "*DEFORMATION PLASTICITY",
                 "*SOLID SECTION, ELSET=E, MATERIAL=M", "*SHELL SECTION, ELSET=E, MATERIAL=M2",
                 "*BEAM SECTION, ELSET=E, MATERIAL=M, SECTION=RECT", "*ORIENTATION, NAME=O",
                 "*SOLID SECTION, ELSET=E, MATERIAL=M, ORIENTATION=O", "*STEP", "*STEP, NLGEOM", "*STATIC",
                 "*FREQUENCY", "*DYNAMIC", "*DYNAMIC, EXPLICIT", "*HEAT TRANSFER", "*COUPLED TEMPERATURE-DISPLACEMENT",
                 "*DLOAD", "*TEMPERATURE", "*INITIAL CONDITIONS, TYPE=TEMPERATURE", "*END STEP", "*MASS, ELSET=E",
                 "*INCLUDE, INPUT=missing.inp", "*INCLUDE, INPUT=/etc/passwd", "*INCLUDE", "*HEADING", "** comment",
                 "*", "*UNKNOWN KEYWORD, X=1", "*ELASTIC,"]
BULK_CARDS = ["SOL 101", "SOL 103", "SOL 400", "CEND", "BEGIN BULK", "ENDDATA", "GRID", "CHEXA", "CTETRA",
              "CPENTA", "CQUAD4", "CTRIA3", "CBAR", "CROD", "CONROD", "CSHEAR", "PSOLID", "PSHELL", "PCOMP",
              "PBAR", "PROD", "PSHEAR", "MAT1", "MAT2", "MAT8", "MAT9", "MATS1", "TABLES1", "MATT1", "CONM2",
              "GRAV", "TEMPD", "PARAM", "INCLUDE 'missing.bdf'", "INCLUDE '/etc/passwd'", "$ comment", "+", "*",
              "GRID*", "MAT1*", "SPC1", "FORCE", "EIGRL"]


@st.composite
def deck_lines(draw, fmt: str):
    """Deck-like text: cards of the format, each followed by a few lines of numbers."""
    cards = KEYWORD_CARDS if fmt == "keyword" else BULK_CARDS
    lines = []
    for _ in range(draw(st.integers(1, 25))):
        card = draw(st.sampled_from(cards))
        fields = draw(st.lists(NUMBERS, max_size=12))
        if fmt == "keyword":
            lines.append(card)
            for _ in range(draw(st.integers(0, 3))):
                lines.append(", ".join(draw(st.lists(NUMBERS, min_size=1, max_size=18))))
        else:
            sep = draw(st.sampled_from([",", "\t"]))
            lines.append(sep.join([card, *fields]) if draw(st.booleans()) else
                         card.ljust(8)[:8] + "".join(f.rjust(8)[:8] for f in fields[:8]))
    end = draw(st.sampled_from(["\n", "\r\n", ""]))
    return ("\n".join(lines) + end).encode("latin-1", "replace")


def corpus_subset() -> list[Path]:
    """A fixed, small, deterministic set of real decks: the smallest few of each folder, plus samples."""
    env = os.environ.get("DECKWARDEN_CORPUS")
    root = Path(env) if env else REPO.parent / "shared" / "corpus"
    picked: list[Path] = []
    if root.is_dir():
        for sub, pattern in (("keyword", "*.inp"), ("bulk", "*.DAT")):
            files = sorted((root / sub).glob(pattern), key=lambda p: (p.stat().st_size, p.name))
            small = [p for p in files if p.stat().st_size < 60_000]
            # about six evenly spaced among the small ones: spread over the kinds of deck, always the same
            picked += small[::max(1, len(small) // 6)][:6]
    if SAMPLES.is_dir():
        picked += sorted(p for p in SAMPLES.glob("*") if p.suffix.lower() in parsers.all_extensions())
    return picked


SEEDS = corpus_subset()


def seed_format(path: Path):
    try:
        head = path.read_bytes()[:65536]
    except OSError:
        return None
    fmt = parsers.detect(str(path), head)
    return fmt if fmt in FORMATS else None


NUM_RE = re.compile(rb"(?<![A-Za-z_])[-+]?(?:\d+\.?\d*|\.\d+)(?:[eEdD][-+]?\d+)?")


@st.composite
def mutation(draw, n_lines_: int):
    kind = draw(st.sampled_from(["delete", "duplicate", "swap", "truncate", "number", "number", "number"]))
    i = draw(st.integers(0, max(0, n_lines_ - 1)))
    j = draw(st.integers(0, max(0, n_lines_ - 1)))
    return kind, i, j, draw(NUMBERS), draw(st.integers(0, 200)), draw(st.integers(0, 40))


def mutate(data: bytes, muts) -> bytes:
    lines = data.split(b"\n")
    for kind, i, j, num, cut, which in muts:
        if not lines:
            break
        i, j = i % len(lines), j % len(lines)
        if kind == "delete":
            del lines[i]
        elif kind == "duplicate":
            lines.insert(i, lines[i])
        elif kind == "swap":
            lines[i], lines[j] = lines[j], lines[i]
        elif kind == "truncate":
            lines = lines[:i + 1]
            lines[-1] = lines[-1][:cut]
        else:
            # alter one number on the line i (or the next line holding one)
            for k in range(len(lines)):
                ln = lines[(i + k) % len(lines)]
                found = list(NUM_RE.finditer(ln))
                if found:
                    m = found[which % len(found)]
                    lines[(i + k) % len(lines)] = ln[:m.start()] + num.encode() + ln[m.end():]
                    break
    return b"\n".join(lines)


# --------------------------------------------------------------------------- tests


@pytest.mark.parametrize("fmt", FORMATS)
@settings(max_examples=200, **SETTINGS)
@given(data=st.binary(max_size=3000))
@example(data=b"=")          # a YAML scalar of a tag the safe loader cannot construct (once an internal error)
def test_arbitrary_bytes(fmt, data):
    CASES[f"bytes:{fmt}"] += 1
    check_bytes(data, fmt)


@pytest.mark.parametrize("fmt", FORMATS)
@settings(max_examples=200, **SETTINGS)
@given(data=st.data())
def test_deck_like_text(fmt, data):
    text = data.draw(deck_lines(fmt))
    CASES[f"decklike:{fmt}"] += 1
    check_bytes(text, fmt)


@pytest.mark.parametrize("seed", SEEDS, ids=lambda p: p.name)
@settings(max_examples=30, **SETTINGS)
@given(data=st.data())
def test_mutated_real_decks(seed, data):
    fmt = seed_format(seed)
    if fmt is None:
        pytest.skip(f"no importable parser for {seed.name}")
    raw = seed.read_bytes()
    muts = data.draw(st.lists(mutation(raw.count(b"\n") + 1), min_size=1, max_size=4))
    CASES[f"mutated:{fmt}"] += 1
    check_bytes(mutate(raw, muts), fmt, name=seed.name)


def test_unmutated_seeds_are_clean_of_internal_failures():
    """The seeds themselves, as they are (with their includes in place)."""
    ran = 0
    for seed in SEEDS:
        if seed_format(seed) is None:
            continue
        result = check_paths([str(seed)], Config())
        check_result(result, Config())
        assert result.files, seed
        ran += 1
    CASES["seeds"] += ran
    assert ran or not SEEDS


def test_mutate_does_what_it_says():
    data = b"a 1\nb 2.5\nc 3e4\n"
    assert mutate(data, [("delete", 0, 0, "", 0, 0)]) == b"b 2.5\nc 3e4\n"
    assert mutate(data, [("duplicate", 1, 0, "", 0, 0)]) == b"a 1\nb 2.5\nb 2.5\nc 3e4\n"
    assert mutate(data, [("swap", 0, 2, "", 0, 0)]) == b"c 3e4\nb 2.5\na 1\n"
    assert mutate(data, [("truncate", 1, 0, "", 2, 0)]) == b"a 1\nb "
    assert mutate(data, [("number", 2, 0, "nan", 0, 0)]) == b"a 1\nb 2.5\nc nan\n"


# --------------------------------------------------------------------------- reporters on arbitrary results

HOSTILE_TEXT = st.text(alphabet=st.one_of(
    st.characters(codec="utf-8"), st.sampled_from(list("\n\r\t\x1b\x07\x00\x0b\x0c\x85\u2028\u202e[]*_<>&|`#\\"))),
    max_size=40)
FLOATS = st.floats(allow_nan=True, allow_infinity=True)
DATA = st.recursive(st.one_of(st.none(), st.booleans(), st.integers(-2**70, 2**70), FLOATS, HOSTILE_TEXT),
                    lambda inner: st.one_of(st.lists(inner, max_size=3),
                                            st.dictionaries(HOSTILE_TEXT, inner, max_size=3)), max_leaves=8)


@st.composite
def run_results(draw):
    from linter.findings import FileReport, Finding, RunResult

    def finding(path):
        return Finding(rule=draw(st.sampled_from(["elastic/near-incompressible", "parse/malformed-data",
                                                  "internal/rule-failed", "acme/not-registered"])),
                       severity=draw(st.sampled_from(["error", "warning", "note"])),
                       message=draw(HOSTILE_TEXT), path=path,
                       line=draw(st.one_of(st.none(), st.integers(-3, 10**9))),
                       material=draw(st.one_of(st.none(), HOSTILE_TEXT)),
                       data=draw(st.dictionaries(HOSTILE_TEXT, DATA, max_size=4)))

    files = []
    for _ in range(draw(st.integers(0, 3))):
        path = draw(st.one_of(HOSTILE_TEXT.filter(bool), st.just("models/part.inp")))
        files.append(FileReport(
            path=path, format=draw(st.sampled_from(["keyword", "bulk", None])), dialect=None,
            materials=[{"name": draw(HOSTILE_TEXT), "path": path, "line": draw(st.one_of(st.none(), st.integers(-1, 99))),
                        "properties": draw(st.lists(HOSTILE_TEXT, max_size=3)),
                        "derived": draw(st.dictionaries(HOSTILE_TEXT, DATA, max_size=3))}
                       for _ in range(draw(st.integers(0, 2)))],
            unchecked=[{"what": draw(HOSTILE_TEXT), "path": path, "line": 1, "reason": draw(HOSTILE_TEXT),
                        "material": None}],
            findings=[finding(path) for _ in range(draw(st.integers(0, 4)))],
            unit_system=draw(st.one_of(st.none(), st.fixed_dictionaries({"name": HOSTILE_TEXT, "confidence": FLOATS}))),
            summary=draw(st.dictionaries(HOSTILE_TEXT, DATA, max_size=3)),
            incomplete=draw(st.booleans())))
    general = [finding(draw(st.one_of(st.none(), HOSTILE_TEXT))) for _ in range(draw(st.integers(0, 2)))]
    return RunResult(files=files, general=general, incomplete=draw(st.booleans()))


@settings(max_examples=150, **SETTINGS)
@given(result=run_results())
def test_reporters_on_arbitrary_results(result):
    CASES["results"] += 1
    render_all(result)
    if "line" in reporter_names():
        from linter import reporters

        buf = io.StringIO()
        reporters.get("line")(result, buf, {"color": False})
        # one finding, one line: no deck string can forge or hide a line
        assert buf.getvalue().count("\n") == len(result.findings)
        assert len(buf.getvalue().splitlines()) == len(result.findings)
