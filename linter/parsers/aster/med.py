"""MED meshes of a study, read with meshio through the mesh package's guarded reader (the ``mesh`` extra
installs h5py, which meshio needs for MED). The cells become :class:`~.mail.Cells` by code_aster cell type,
the MED groups (families of cell tags) become GROUP_MA index arrays. MED cells have no names, so
``MAILLE=`` cannot be followed on them.
"""
from __future__ import annotations

import numpy as np

import contextlib
import io
import os

from ..mesh.meshfile import OPTIONAL_MODULES, MeshReadError, _reader, read_mesh
from .mail import Cells, Mesh, MeshIssue

#: meshio cell type -> code_aster cell type
CELL_TYPES = {"vertex": "POI1", "line": "SEG2", "line3": "SEG3", "line4": "SEG4", "triangle": "TRIA3",
              "triangle6": "TRIA6", "triangle7": "TRIA7", "quad": "QUAD4", "quad8": "QUAD8", "quad9": "QUAD9",
              "tetra": "TETRA4", "tetra10": "TETRA10", "hexahedron": "HEXA8", "hexahedron20": "HEXA20",
              "hexahedron27": "HEXA27", "wedge": "PENTA6", "wedge15": "PENTA15", "wedge18": "PENTA18",
              "pyramid": "PYRAM5", "pyramid13": "PYRAM13"}


def read_med(path: str, shown: str, max_size: int) -> Mesh:
    """The mesh, or MeshReadError (missing h5py, unreadable file) for the caller to report."""
    m = read_mesh(path, max_size)[0] if path.lower().endswith(".med") else _read_as_med(path, max_size)
    mesh = Mesh(shown)
    pts = np.asarray(m.points, dtype=float)
    mesh.node_count = len(pts)
    mesh.dim = pts.shape[1] if pts.ndim == 2 else 0
    if len(pts):
        full = np.zeros((len(pts), 3))
        full[:, :pts.shape[1]] = pts[:, :3]
        mesh.bbox = (full.min(axis=0), full.max(axis=0))
    tags = (m.cell_data or {}).get("cell_tags")
    families = getattr(m, "cell_tags", {}) or {}
    first, members = 0, {}
    for i, block in enumerate(m.cells):
        atype = CELL_TYPES.get(block.type)
        n = len(block.data)
        if atype is None:
            mesh.issues.append(MeshIssue("unknown-option", f"MED cells of type {block.type} are not read", 1))
            continue
        c = Cells(atype, block.data.shape[1] if block.data.ndim == 2 else 0, b"", 0, 0, 1, n, first)
        mesh.cells.append(c)
        if tags is not None and i < len(tags):
            t = np.asarray(tags[i])
            for fam in np.unique(t):
                for g in families.get(fam, families.get(int(fam), ())):
                    members.setdefault(str(g), []).append(np.flatnonzero(t == fam) + first)
        first += n
    mesh.group_index = {g: np.unique(np.concatenate(parts)) for g, parts in members.items()}
    mesh.groups = {g: [] for g in mesh.group_index}
    return mesh


def _read_as_med(path: str, max_size: int):
    """meshio's MED reader on a file named otherwise (``.mmed``, ``NAME.20``), contained like read_mesh."""
    if os.path.getsize(path) > max_size:
        raise MeshReadError(f"the mesh file {path} is over the size limit (max_file_size_mb); it was not opened")
    out = io.StringIO()
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(out):
            return _reader("med")(path)
    except ImportError as exc:
        missing = (getattr(exc, "name", None) or "").split(".")[0]
        extra = OPTIONAL_MODULES.get(missing, "mesh")
        raise MeshReadError(f"reading MED meshes needs the optional package {missing or 'h5py'}: install the extra "
                            f"'{extra}'") from None
    except (Exception, SystemExit) as exc:
        raise MeshReadError(f"meshio cannot read {path} as MED ({(str(exc).strip() or type(exc).__name__)[:200]})") \
            from None


__all__ = ["read_med", "MeshReadError"]
