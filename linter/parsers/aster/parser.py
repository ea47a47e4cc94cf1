"""The reader of code_aster studies: the run profile (``.export``), the command file (``.comm``) and its meshes.

A study is read from its ``.export`` (lines ``F comm NAME.comm D 1``, ``F mail NAME.mail D 20``,
``F mmed NAME.med D 20``; paths relative to the ``.export``), which pairs the command file with
the mesh on each logical unit. A ``.comm`` given alone is read with the mesh of the same base
name (``NAME.mail``, else ``NAME.med``), and a note says which. The command file is read as data
with :mod:`ast` (``commands.py``, ``evaluate.py``), never run; the native mesh with numpy over byte
ranges (``mail.py``); MED meshes are not read (listed as unchecked).
"""
from __future__ import annotations

import os
import re
from typing import Optional

from ...model import DeckModel, Include, Issue, Loc, Unchecked
from ..sources import SourceError, read_deck_bytes, text
from . import DEFAULT_DIALECT, FORMAT
from .cells import MeshUse
from .commands import read_program
from .mail import read_mail
from .mapped import open_mesh
from .study import StudyBuilder, mesh_path

#: command files above this size are not parsed (a study's command file is a few hundred kB at most)
MAX_COMMAND_BYTES = 8 << 20
_EXPORT_LINE = re.compile(rb"(?m)^[ \t]*[PFAR][ \t]+\S+")
_COMMANDS = re.compile(rb"\b(DEBUT|POURSUITE|DEFI_MATERIAU|LIRE_MAILLAGE|AFFE_MODELE|AFFE_MATERIAU)\s*\(")


def sniff(head: bytes) -> float:
    if re.search(rb"(?m)^[ \t]*F[ \t]+comm[ \t]+\S+", head):
        return 0.95
    if _COMMANDS.search(head):
        return 0.8
    return 0.0


def _export_entries(data: bytes) -> list[tuple[str, str, str, int, int]]:
    """(type, path, flags, unit, line) of every ``F`` line of an export."""
    out = []
    for i, raw in enumerate(data.split(b"\n"), start=1):
        parts = text(raw).split()
        if len(parts) >= 5 and parts[0] == "F":
            try:
                unit = int(parts[-1])
            except ValueError:
                unit = 0
            out.append((parts[1], " ".join(parts[2:-2]), parts[-2], unit, i))
    return out


def _resolve(folder: str, written: str) -> str:
    return written if os.path.isabs(written) else os.path.normpath(os.path.join(folder, written))


def includes_of(path: str, options) -> list[str]:
    """The files an export names (command files and meshes), so a folder walk lints the study once."""
    if not path.lower().endswith(".export"):
        return []
    try:
        src = read_deck_bytes(path, options.max_file_size)
    except SourceError:
        return []
    folder = os.path.dirname(path)
    return [_resolve(folder, p) for kind, p, flags, _u, _l in _export_entries(src.data)
            if "D" in flags and kind in ("comm", "mail", "mmed")]


def parse(path: str, options) -> DeckModel:
    display = options.display_path or path
    src = read_deck_bytes(path, options.max_file_size)
    model = DeckModel(path=display, format=FORMAT, dialect=options.dialect or DEFAULT_DIALECT)
    model.files.append(display)
    folder, dfolder = os.path.dirname(path), os.path.dirname(display)
    units: dict[int, tuple[str, str, int, str]] = {}   # unit -> (real path, display path, export line, type)
    comm: Optional[tuple[str, str]] = None
    if path.lower().endswith(".export"):
        for kind, written, flags, unit, line in _export_entries(src.data):
            if "D" not in flags:
                continue
            real, shown = _resolve(folder, written), _resolve(dfolder, written)
            if kind == "comm" and comm is None:
                comm = (real, shown, line)
            elif kind == "comm":
                model.unchecked.append(Unchecked("command file", Loc(display, line),
                                                 f"{written}: only the first command file of a study is read"))
            else:
                units.setdefault(unit, (real, shown, line, kind))
        if comm is None:
            model.issues.append(Issue("missing-include", "the export names no command file (no 'F comm' line)",
                                      Loc(display, 1), data={"include": ""}))
            return model
        try:
            csrc = read_deck_bytes(comm[0], MAX_COMMAND_BYTES)
        except SourceError as exc:
            code = "missing-include" if not os.path.exists(comm[0]) else "include-unreadable"
            model.issues.append(Issue(code, f"command file {comm[1]}: {exc.message}", Loc(display, comm[2]),
                                      data={"include": comm[1]}))
            model.includes.append(Include(comm[1], comm[0], Loc(display, comm[2]), "missing"))
            return model
        model.includes.append(Include(comm[1], comm[0], Loc(display, comm[2])))
        model.files.append(comm[1])
        comm_display = comm[1]
    else:
        if len(src.data) > MAX_COMMAND_BYTES:
            raise SourceError("file-too-large", f"command file of {len(src.data) >> 20} MiB, over the "
                              f"{MAX_COMMAND_BYTES >> 20} MiB read as data")
        csrc, comm_display = src, display
        base = os.path.splitext(os.path.basename(path))[0]
        found = mesh_path(folder, base)
        if found:
            shown = os.path.join(dfolder, os.path.basename(found))
            units[20] = (found, shown, 1, "mail" if found.lower().endswith(".mail") else "mmed")
            model.issues.append(Issue("paired-mesh", f"no .export given: the command file is checked with the mesh "
                                      f"{shown} (same base name) on logical unit 20", Loc(display, 1)))
    _study(model, csrc, comm_display, units, options)
    return model


def _study(model: DeckModel, csrc, comm_display: str, units: dict, options) -> None:
    if csrc.encoding not in ("utf-8", "utf-8-sig"):
        model.issues.append(Issue("encoding", f"{comm_display} is read as {csrc.encoding}, not UTF-8",
                                  Loc(comm_display, 1)))
    prog = read_program(text(csrc.data))
    for note in prog.notes:
        loc = Loc(comm_display, max(1, note.line))
        if note.code == "unchecked":
            model.unchecked.append(Unchecked(note.what or "statement", loc, note.message))
        else:
            model.issues.append(Issue(note.code, note.message, loc))
    for line, why in prog.skipped_materials:
        model.unchecked.append(Unchecked("DEFI_MATERIAU", Loc(comm_display, line), f"not read: {why}"))
    loaded: dict[int, MeshUse] = {}

    def mesh_for_unit(unit: int, fmt: Optional[str], line: int) -> Optional[MeshUse]:
        if unit in loaded:
            return loaded[unit]
        entry = units.get(unit)
        if entry is None:
            model.issues.append(Issue("missing-include", f"LIRE_MAILLAGE reads logical unit {unit}, which no mesh "
                                      "file is given on", Loc(comm_display, line), data={"include": f"unit {unit}"}))
            model.includes.append(Include(f"unit {unit}", None, Loc(comm_display, line), "missing"))
            return None
        real, shown, _eline, kind = entry
        if _lfs_pointer(real):
            model.issues.append(Issue("include-unreadable", f"mesh {shown} is a Git LFS pointer file, not the mesh "
                                      "itself (the large-file object was not fetched)", Loc(comm_display, line),
                                      data={"include": shown}))
            model.includes.append(Include(shown, real, Loc(comm_display, line), "unreadable"))
            return None
        if fmt is None:   # LIRE_MAILLAGE FORMAT defaults to MED; a native mesh on the unit is read as one
            fmt = "ASTER" if kind == "mail" else "MED"
        if fmt == "MED":
            return _med(model, real, shown, Loc(comm_display, line), options, loaded, unit)
        if fmt != "ASTER":
            model.unchecked.append(Unchecked("mesh", Loc(comm_display, line),
                                             f"{shown}: {fmt} meshes are not read; elements and groups not checked"))
            model.includes.append(Include(shown, real, Loc(comm_display, line)))
            return None
        try:
            mdata = open_mesh(real, options.max_file_size)
        except SourceError as exc:
            code = "missing-include" if not os.path.exists(real) else "include-unreadable"
            model.issues.append(Issue(code, f"mesh {shown}: {exc.message}", Loc(comm_display, line),
                                      data={"include": shown}))
            model.includes.append(Include(shown, real, Loc(comm_display, line), "missing"))
            return None
        model.includes.append(Include(shown, real, Loc(comm_display, line)))
        model.files.append(shown)
        mesh = read_mail(mdata, shown)
        for mi in mesh.issues:
            model.issues.append(Issue(mi.code, f"{mi.message}", Loc(shown, mi.line)))
        _geometry(model, mesh)
        loaded[unit] = MeshUse("", mesh)
        return loaded[unit]

    StudyBuilder(model, prog, comm_display, mesh_for_unit).run()


def _lfs_pointer(path: str) -> bool:
    try:
        with open(path, "rb") as fh:
            return fh.read(64).startswith(b"version https://git-lfs")
    except OSError:
        return False


def _med(model: DeckModel, real: str, shown: str, loc: Loc, options, loaded: dict, unit: int):
    """A MED mesh through meshio (the ``mesh`` extra); a mesh that cannot be read is reported, not guessed."""
    from .med import MeshReadError, read_med

    if not os.path.exists(real):
        model.issues.append(Issue("missing-include", f"mesh {shown}: file not found", loc, data={"include": shown}))
        model.includes.append(Include(shown, real, loc, "missing"))
        return None
    try:
        mesh = read_med(real, shown, options.max_file_size)
    except MeshReadError as exc:
        model.issues.append(Issue("include-unreadable", f"MED mesh {shown}: {exc.message}", loc,
                                  data={"include": shown}))
        model.includes.append(Include(shown, real, loc, "unreadable"))
        return None
    model.includes.append(Include(shown, real, loc))
    model.files.append(shown)
    for mi in mesh.issues:
        model.issues.append(Issue(mi.code, mi.message, Loc(shown, mi.line)))
    _geometry(model, mesh)
    loaded[unit] = MeshUse("", mesh)
    return loaded[unit]


def _geometry(model: DeckModel, mesh) -> None:
    import numpy as np

    g = model.geometry
    g.node_count += mesh.node_count
    if mesh.bbox is not None:
        lo, hi = mesh.bbox
        g.bbox_min = lo if g.bbox_min is None else np.minimum(g.bbox_min, lo)
        g.bbox_max = hi if g.bbox_max is None else np.maximum(g.bbox_max, hi)
    if not mesh.bbox_exact:
        g.exact = False
        g.note = "bounding box estimated from a sample of the node lines"
