"""Reading a mesh file with meshio, contained: size limit first, no output, no exit, clear errors.

meshio's ``read`` prints reader errors to standard output and may call ``sys.exit``; the readers
are called here one by one instead (the format from the extension, as meshio itself chooses it,
Gmsh before ANSYS for ``.msh``), with meshio's messages captured. meshio's XML readers (VTU, XDMF
...) use the standard library's parser: they are outside deckwarden's defusedxml guarantee, which
is why the size limit is applied before meshio opens the file.
"""
from __future__ import annotations

import contextlib
import io
import os
from pathlib import Path
from typing import Any

#: modules some meshio formats import when reading, and the extra that installs them
OPTIONAL_MODULES = {"h5py": "mesh", "netCDF4": "mesh"}
EXTRA_HINT = "pip install 'deckwarden[mesh]'"


class MeshReadError(Exception):
    """The mesh cannot be read; ``message`` says why (for a finding)."""

    def __init__(self, message: str, code: str = "include-unreadable"):
        super().__init__(message)
        self.message = message
        self.code = code


def candidate_formats(path: str) -> list[str]:
    import meshio

    try:
        from meshio._helpers import _filetypes_from_path
        fmts = list(_filetypes_from_path(Path(path)))
    except Exception:
        fmts = list(meshio.extension_to_filetypes.get(os.path.splitext(path)[1].lower(), ()))
    if "gmsh" in fmts:  # a .msh is far more often Gmsh than ANSYS
        fmts.remove("gmsh")
        fmts.insert(0, "gmsh")
    return fmts


def _reader(fmt: str):
    try:
        from meshio._helpers import reader_map
        return reader_map[fmt]
    except Exception:  # pragma: no cover - meshio without the private map: its public read
        import meshio
        return lambda p: meshio.read(p, file_format=fmt)


def read_mesh(path: str, max_size: int) -> tuple[Any, str, str]:
    """(meshio.Mesh, format name, meshio's own messages) or :class:`MeshReadError`."""
    try:
        size = os.path.getsize(path)
    except OSError as exc:
        raise MeshReadError(f"cannot read the mesh file {path} ({exc.strerror or exc})") from None
    if size > max_size:
        raise MeshReadError(f"the mesh file {path} is {size / 2**20:.1f} MB, over the size limit of "
                            f"{max_size / 2**20:.0f} MB (max_file_size_mb); it was not opened")
    try:
        import meshio  # noqa: F401
    except ImportError:  # pragma: no cover - meshio is a declared dependency
        raise MeshReadError("meshio is not installed; it reads the mesh formats") from None
    fmts = candidate_formats(path)
    if not fmts:
        raise MeshReadError(f"meshio knows no mesh format with the extension of {os.path.basename(path)}")
    errors = []
    for fmt in fmts:
        out, err = io.StringIO(), io.StringIO()
        try:
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                mesh = _reader(fmt)(path)
            return mesh, fmt, (out.getvalue() + err.getvalue()).strip()
        except ImportError as exc:
            missing = (getattr(exc, "name", None) or "").split(".")[0]
            if missing in OPTIONAL_MODULES:
                raise MeshReadError(f"reading {fmt.upper()} meshes needs the optional package {missing}: install "
                                    f"the extra '{OPTIONAL_MODULES[missing]}' ({EXTRA_HINT})",
                                    code="include-unreadable") from None
            errors.append(f"{fmt}: {type(exc).__name__}: {exc}")
        except (Exception, SystemExit) as exc:  # meshio readers raise many kinds on bad input
            text = str(exc).strip() or type(exc).__name__
            errors.append(f"{fmt}: {text[:300]}")
    raise MeshReadError(f"meshio cannot read the mesh file {path} ({'; '.join(errors)})")
