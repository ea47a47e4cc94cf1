"""Keyword-deck (``.inp``) parser, CalculiX dialect.

The file is read once as bytes; keyword lines are found with a chunked numpy scan and
each keyword's data is handled as a byte range (``mesh`` for nodes and
elements, without a Python object per item). Includes are read in place, as the
solver does (``*INCLUDE`` text is inlined), with the included file's own path and
line numbers on everything read from it.

``DeckModel.extras`` written here: ``"encoding"`` (per file), ``"line_ends"`` (per file), ``"line_anchors"``
(per file: (line, byte offset) of every keyword line, to find a line of ``DeckModel.texts`` quickly),
``"mark_bytes"`` (per file: offsets of the bytes the suppression scan looks for, found in the first pass).
"""
from __future__ import annotations

import os
import re
from typing import Optional

import numpy as np

from ..includes import IncludeTracker
from ...model import DeckModel, Include, Loc, Material, Procedure, Unchecked, norm_key
from . import DEFAULT_DIALECT, FORMAT
from .. import buffers
from ..sources import SourceError, read_deck_bytes
from . import cards, keywords
from . import mesh
from .lex import KeywordLine, Reader, parse_keyword_line
from .materials import MATERIAL_CARDS, read_material_card
from .scan import SPECIAL_AT_START, special_lines

MAX_NAME = 80

#: candidate *INCLUDE lines (a literal newline first keeps the scan fast; the file start is tried apart)
_INCLUDE = re.compile(rb"\n[ \t]*\*[ \t]*[iI][ \t]*[nN][ \t]*[cC][^\n]*")
_INCLUDE_AT_START = re.compile(rb"[ \t]*\*[ \t]*[iI][ \t]*[nN][ \t]*[cC][^\n]*")

#: keywords ccx knows that carry nothing a material check needs: skipped without comment
KNOWN_SKIPPED = frozenset("""
HEADING NSET BOUNDARY BOUNDARYF CLOAD CFLUX DFLUX FILM RADIATE NODEPRINT ELPRINT NODEFILE ELFILE NODEOUTPUT
ELEMENTOUTPUT CONTACTPRINT CONTACTFILE CONTACTOUTPUT SECTIONPRINT FACEPRINT OUTPUT SURFACE SURFACEINTERACTION
SURFACEBEHAVIOR CONTACTPAIR CONTACTDAMPING FRICTION GAPCONDUCTANCE GAPHEATGENERATION TIE EQUATION EQUATIONF MPC
AMPLITUDE TRANSFORM TRANSFORMF CONTROLS TIMEPOINTS RESTART MODALDAMPING SELECTCYCLICSYMMETRYMODES
CYCLICSYMMETRYMODEL VIEWFACTOR RIGIDBODY PRE-TENSIONSECTION NODALTHICKNESS MODELCHANGE SPRING DASHPOT GAP
SUBMODEL RETAINEDNODALDOFS SUBSTRUCTUREMATRIXOUTPUT NORMAL CHANGESOLIDSECTION CHANGEPLASTIC CHANGEMATERIAL
CHANGEFRICTION CHANGECONTACTTYPE COUPLING DISTRIBUTING KINEMATIC DISTRIBUTION
DISTRIBUTINGCOUPLING CLEARANCE BASEMOTION INITIALSTRAININCREASE NETWORKMPC USERELEMENT DESIGNVARIABLES
CONSTRAINT OBJECTIVE FILTER GEOMETRICCONSTRAINT CORRELATEDLOADS ELEMENTOUTPUT HEATTRANSFERMODIFIED
MASSFLOW REFINEMESH STATICOUTPUT COUPLEDTEMPERATUREDISPLACEMENT
""".split())

_catalogue = None


def _load_catalogue():
    """The element catalogue, or None when it cannot be loaded (element types then go unchecked)."""
    global _catalogue
    if _catalogue is None:
        try:
            from ...catalogue import Catalogue

            _catalogue = Catalogue.load()
        except Exception:  # pragma: no cover - the catalogue ships with the package
            _catalogue = False
    return _catalogue or None


def sniff(head: bytes) -> float:
    """How much ``head`` looks like a keyword deck (0..1)."""
    for bom, enc in ((b"\xff\xfe", "utf-16-le"), (b"\xfe\xff", "utf-16-be")):
        if head.startswith(bom):
            head = head[2:len(head) - (len(head) % 2)].decode(enc, errors="ignore").encode("utf-8", "ignore")
    if head.startswith(b"\xef\xbb\xbf"):
        head = head[3:]
    if not head.strip():
        return 0.0
    lines = [ln.strip() for ln in head[:65536].splitlines()[:400]]
    kws = [ln for ln in lines if ln.startswith(b"*") and not ln.startswith(b"**")]
    if not kws:
        return 0.05 if any(ln.startswith(b"**") for ln in lines) else 0.0
    names = {re.sub(rb"[\s,].*", b"", k[1:].upper().replace(b" ", b"")) for k in kws}
    if not any(n.decode("latin-1") in keywords.CALCULIX_KEYWORDS for n in names):
        return 0.1           # lines that start with '*' but no keyword the solver knows: not a deck
    strong = {b"NODE", b"ELEMENT", b"MATERIAL", b"ELASTIC", b"STEP", b"HEADING", b"INCLUDE", b"SOLIDSECTION",
              b"NSET", b"ELSET", b"DENSITY", b"BOUNDARY", b"SHELLSECTION", b"STATIC"}
    hits = len(names & strong)
    score = 0.4 + 0.15 * hits
    upper = head.upper()
    if b"BEGIN BULK" in upper or b"ENDDATA" in upper or b"CEND" in upper:
        score -= 0.5
    return max(0.0, min(1.0, score))


def _display_base(path: str, options) -> str:
    pol = options.include
    if pol.solver_cwd:
        return pol.solver_cwd
    return os.path.dirname(path)


def _include_matches(data):
    """The candidate ``*INCLUDE`` lines of a file's text; a mapped file window by window, each given back."""
    head = _INCLUDE_AT_START.match(data)
    if head:
        yield head
    n = len(data)
    step = buffers.WINDOW if buffers.is_mapped(data) else max(n, 1)
    lo = 0
    while lo < n:               # windows end at a line end, which starts the next one (the pattern's '\n')
        hi = n if n - lo <= step else data.rfind(b"\n", lo + 1, lo + step)
        if hi <= lo:
            hi = data.find(b"\n", lo + step)
            hi = n if hi < 0 else hi
        yield from _INCLUDE.finditer(data, lo, hi)
        buffers.release(data, lo, hi)
        lo = hi


def includes_of(path: str, options) -> list[str]:
    """Resolved paths of the files ``path`` includes, recursively (a cheap scan)."""
    tracker = IncludeTracker(options.include)
    base = _display_base(options.display_path or path, options)
    out: list[str] = []

    def scan(p: str) -> None:
        try:       # a large file is mapped (CR line ends or other bytes do not matter to this scan)
            data = buffers.open_text(p, options.max_file_size, checked=False).data
        except SourceError:
            return
        tracker.stack.append(os.path.realpath(p))
        for m in _include_matches(data):
            kw = parse_keyword_line(m.group(0).lstrip(b"\n"), Loc(p, 0))
            if kw.key != "INCLUDE" or not kw.get("INPUT"):
                continue
            res = tracker.resolve(kw.get("INPUT"), base)
            if res.status == "ok" and res.path not in out:
                out.append(res.path)
                scan(res.path)
        tracker.stack.pop()

    scan(path)
    return out


class _Parser:
    def __init__(self, path: str, options):
        self.options = options
        self.display = options.display_path or path
        self.dialect = options.dialect or DEFAULT_DIALECT
        self.model = DeckModel(path=self.display, format=FORMAT, dialect=self.dialect)
        self.tracker = IncludeTracker(options.include)
        self.base = _display_base(self.display, options)
        self.catalogue = _load_catalogue()
        self.material: Optional[Material] = None
        self.step = None
        self.last_kw: Optional[KeywordLine] = None
        self.prev_kw: Optional[KeywordLine] = None
        self.modes_from: Optional[str] = None     # the kind of the last eigenmode step
        self.unknown: dict[str, list] = {}
        self.elsets_by_card: set[str] = set()
        self.model.extras["encoding"] = {}
        self.model.extras["line_ends"] = {}

    # -- files ------------------------------------------------------------------------

    def read_file(self, real_path: str, shown: str) -> None:
        src = buffers.open_text(real_path, self.options.max_file_size, checked=False)
        scan, marks = None, []
        if buffers.is_mapped(src.data):              # a large file mapped: the first scan checks it is plain
            scan = special_lines(src.data, plain=True, marks=marks)
            if scan is None:
                src, marks = read_deck_bytes(real_path, self.options.max_file_size), []
        model = self.model
        model.files.append(shown)
        model.extras["encoding"][shown] = src.encoding
        model.extras["line_ends"][shown] = src.line_ends
        rd = Reader(src.data if src.data[-1:] == b"\n" or not src.data else src.data + b"\n", shown,
                    model.issues)
        model.texts[shown] = rd.data
        if src.encoding in ("latin-1", "utf-16-le", "utf-16-be"):
            rd.issue("encoding", f"the file is encoded as {src.encoding}, not UTF-8", 1, encoding=src.encoding)
        self.tracker.stack.append(os.path.realpath(real_path))
        try:
            self._read(rd, scan, marks)
        finally:
            self.tracker.stack.pop()
            buffers.release(rd.data, 0, len(rd.data))    # a mapped file: whatever the cards touched goes back

    def _read(self, rd: Reader, scan=None, marks: Optional[list] = None) -> None:
        data = rd.data
        # one pass over the bytes: the start of every keyword, comment and blank line
        kws: list[tuple[int, int, int]] = []        # (start, end of line, line number)
        skipped: list[int] = [0]                     # comment/blank lines before each keyword, cumulative
        line = 1
        positions, linenos, before, total_nl = scan or special_lines(data, marks=marks)
        if marks is not None:                        # the suppression scan starts from these
            self.model.extras.setdefault("mark_bytes", {})[rd.path] = sorted(marks)
        first_is = 0                                 # the first line: a keyword (1), comment/blank (-1), data (0)
        if SPECIAL_AT_START.match(data):
            c2 = data[:4096].lstrip(b" \t")[:2]
            first_is = 1 if c2[:1] == b"*" and c2 != b"**" else -1
        if first_is == 1:
            positions.insert(0, 0)
            linenos.insert(0, 1)
            before = np.concatenate(([0], before))
        if first_is == -1:
            before = before + 1
        for k, (pos, pos_line) in enumerate(zip(positions, linenos)):
            line = pos_line
            eol = data.find(b"\n", pos)
            kws.append((pos, len(data) if eol < 0 else eol, line))
            skipped.append(int(before[k]))
        n_skip = int(before[-1])
        self.model.extras.setdefault("line_anchors", {})[rd.path] = [(ln, pos) for pos, _e, ln in kws]
        first = kws[0][0] if kws else len(data)
        pre = next(rd.lines(0, first, 1), None)
        if pre is not None and self.last_kw is not None and len(self.tracker.stack) > 1:
            # an included file that starts with data lines continues the card before the *INCLUDE
            # (ccx 2.20 run: *NODE followed by *INCLUDE of a file of node lines reads those nodes)
            n_pre = (kws[0][2] - 1 if kws else total_nl) - (skipped[1] if kws else n_skip)
            self.keyword(rd, self.last_kw, 0, first, 1, max(0, n_pre), continuation=True)
        elif pre is not None:
            rd.issue("data-without-keyword", "data line(s) before the first keyword are ignored", pre.loc.line)
        if not kws and pre is None:
            rd.issue("empty-file", "the file holds no keyword and no data (empty or comments only)", 1)
            return
        total_lines = total_nl - (line - 1) if kws else 0
        for i, (pos, eol, line) in enumerate(kws):
            start = eol + 1
            if i + 1 < len(kws):
                end, next_line = kws[i + 1][0], kws[i + 1][2]
                between = skipped[i + 2] - skipped[i + 1]
            else:
                end, next_line = len(data), line + total_lines
                between = n_skip - skipped[i + 1]
            kw = parse_keyword_line(data[pos:eol], Loc(rd.path, line))
            self.keyword(rd, kw, start, end, line + 1, max(0, next_line - line - 1 - between))

    # -- dispatch ---------------------------------------------------------------------

    def keyword(self, rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, nlines: int,
                continuation: bool = False) -> None:
        """Handle one keyword; its data is ``data[start:end]`` (``nlines`` data lines, from ``first_line``).

        ``continuation``: the data of ``kw`` goes on in an included file (``rd``)."""
        key = kw.key
        model = self.model
        self.prev_kw = self.last_kw if not continuation else self.prev_kw
        if key != "INCLUDE":
            self.last_kw = kw
        if continuation:
            self.continue_card(rd, kw, start, end, first_line, nlines)
            return
        if kw.continued:
            rd.issue("keyword-continuation", f"the keyword line {kw.written} ends with a comma; CalculiX does "
                     "not continue it and reads the next line as data", kw.loc.line)
        if key in MATERIAL_CARDS:
            if self.material is None:
                rd.issue("misplaced-card", f"{kw.written} outside a *MATERIAL block (CalculiX: it should be "
                         "preceded by a *MATERIAL card)", kw.loc.line)
                return
            read_material_card(rd, kw, start, end, first_line, self.material, model)
            return
        if key == "INCLUDE":                  # inlined by the solver: an open material block goes on
            self.include(rd, kw)
            return
        if self.material is not None and keywords.STRAY_DATA.match(key):
            pass          # a data line written with a leading '*': ccx skips it, the material stays open
        elif self.material is not None and self.dialect == "calculix" and not keywords.is_known(key) \
                and key not in KNOWN_SKIPPED:
            pass          # ccx skips a card it cannot interpret; later material cards still apply
        else:
            self.material = None
        if key == "MATERIAL":
            self.open_material(rd, kw)
        elif key == "NODE":
            mesh.read_node(rd, kw, start, end, model, nlines)
        elif key == "ELEMENT":
            mesh.read_element(rd, kw, start, end, first_line, self.dialect, self.catalogue, model, nlines)
        elif key == "ELSET":
            mesh.read_elset(rd, kw, start, end, first_line, model, self.elsets_by_card)
        elif key in cards.SECTION_CARDS:
            cards.read_section(rd, kw, start, end, first_line, model)
        elif key == "ORIENTATION":
            cards.read_orientation(rd, kw, start, end, first_line, model)
        elif key == "STEP":
            if self.step is not None:
                rd.issue("misplaced-card", f"*STEP inside the step opened at {self.step.loc} (no *END STEP)",
                         kw.loc.line)
            self.step = cards.open_step(kw, model)
        elif key == "ENDSTEP":
            if self.step is None:
                rd.issue("misplaced-card", "*END STEP without an open *STEP", kw.loc.line)
            self.step = None
        elif key in cards.PROCEDURE_CARDS:
            self.procedure(rd, kw, start, end, first_line)
        elif key == "DLOAD":
            if self.step is None:
                rd.issue("misplaced-card", "*DLOAD outside a step", kw.loc.line)
            else:
                cards.read_dload(rd, kw, start, end, first_line, self.step)
        elif key == "TEMPERATURE":
            if self.step is None:
                rd.issue("misplaced-card", "*TEMPERATURE outside a step", kw.loc.line)
            else:
                cards.read_temperatures(rd, kw, start, end, first_line, self.step.loads)
        elif key == "INITIALCONDITIONS":
            if kw.upper("TYPE") == "TEMPERATURE":
                cards.read_temperatures(rd, kw, start, end, first_line, model.initial_temperatures)
        elif key == "MASS":
            cards.read_mass(rd, kw, start, end, first_line, model)
        elif key == "PHYSICALCONSTANTS":
            cards.read_physical_constants(rd, kw, model)
        elif key not in KNOWN_SKIPPED:
            self.unknown_keyword(rd, kw, rd.data[rd.data.rfind(b"\n", 0, max(0, start - 1)) + 1:max(0, start - 1)])
            seen = self.unknown.get(key)
            if seen is None:
                entry = Unchecked(what=kw.written.upper(), loc=kw.loc, reason="")
                self.unknown[key] = [entry, 1]
                model.unchecked.append(entry)
            else:
                seen[1] += 1

    def unknown_keyword(self, rd: Reader, kw: KeywordLine, raw: bytes) -> None:
        keywords.report_unknown(rd, kw, raw, self.prev_kw, self.model.issues, self.dialect,
                                self.material.name if self.material else None)

    def continue_card(self, rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int,
                      nlines: int) -> None:
        key = kw.key
        if key in MATERIAL_CARDS and self.material is not None:
            mat = self.material
            n_before, n_unchecked = len(mat.blocks), len(self.model.unchecked)
            read_material_card(rd, kw, start, end, first_line, mat, self.model)
            if len(mat.blocks) > n_before and n_before and mat.blocks[n_before - 1].loc == kw.loc:
                more = mat.blocks.pop()                 # the same card: its rows go on
                mat.blocks[-1].rows.extend(more.rows)
                del self.model.unchecked[n_unchecked:]
            return
        if key == "ELSET" and kw.get("ELSET"):
            self.elsets_by_card.discard(norm_key(kw.get("ELSET")))
        saved = kw.continued
        kw.continued = False
        self.keyword(rd, kw, start, end, first_line, nlines)
        kw.continued = saved

    def open_material(self, rd: Reader, kw: KeywordLine) -> None:
        name = kw.get("NAME")
        if not name:
            rd.issue("malformed-data", "*MATERIAL without NAME= (the material name is required)", kw.loc.line)
            return
        name = name.strip()
        if len(norm_key(name)) > MAX_NAME:
            rd.issue("malformed-data", f"material name has {len(norm_key(name))} characters; CalculiX allows "
                     f"at most {MAX_NAME} (material name too long)", kw.loc.line, material=name)
        mat = Material(name=name, key=norm_key(name), loc=kw.loc, after_step=self.model.first_step is not None)
        if mat.key in self.model.materials:
            self.model.duplicate_materials.append(mat)
        else:
            self.model.materials[mat.key] = mat
        self.material = mat

    def procedure(self, rd: Reader, kw: KeywordLine, start: int = 0, end: int = 0, first_line: int = 0) -> None:
        if self.step is None:
            rd.issue("misplaced-card", f"{kw.written} outside a *STEP ... *END STEP block", kw.loc.line)
            return
        opts = {k: kw.params[k] for k in kw.order}
        kind = cards.procedure_kind(kw)
        if kind in ("frequency", "complex-frequency", "heat-frequency"):
            self.modes_from = kind
        elif kind in ("modal-dynamic", "steady-state-dynamics") and self.modes_from == "heat-frequency":
            kind = "scalar-modal"   # works on the modes of the scalar field (ccx: acoustic analogy)
        if kind in cards.TIMED_KINDS and end > start:
            opts.update(cards.step_times(rd, start, end, first_line))
        self.step.procedures.append(Procedure(kind, kw.written, kw.loc, opts))

    def include(self, rd: Reader, kw: KeywordLine) -> None:
        written = kw.get("INPUT")
        if not written:
            rd.issue("malformed-data", "*INCLUDE without INPUT= (the file name is required)", kw.loc.line)
            return
        res = self.tracker.resolve(written, self.base)
        inc = Include(path=written, resolved=res.path, loc=kw.loc, status=res.status)
        self.model.includes.append(inc)
        code = {"missing": "missing-include", "refused": "include-refused", "cycle": "include-cycle",
                "too-deep": "include-too-deep", "directory": "include-directory"}.get(res.status)
        if code:
            rd.issue(code, res.message, kw.loc.line, include=written)
            return
        try:
            self.read_file(res.path, res.path)
        except SourceError as exc:
            inc.status = "unreadable"
            rd.issue("include-unreadable", f"included file '{written}' cannot be read: {exc.message}",
                     kw.loc.line, include=written)

    def finish(self) -> DeckModel:
        for entry, count in self.unknown.values():
            entry.reason = (f"keyword not read by deckwarden; skipped ({count} card{'s' if count > 1 else ''})")
        return self.model


def parse(path: str, options) -> DeckModel:
    """Parse a keyword deck and its includes. Raises :class:`SourceError` only when ``path`` cannot be read."""
    p = _Parser(path, options)
    p.read_file(path, p.display)
    return p.finish()
