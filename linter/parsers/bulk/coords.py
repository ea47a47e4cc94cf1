"""Coordinate systems of a bulk deck (CORD2R/C/S, CORD1R) and GRID positions given in them.

NASTRAN-95 User's Manual (BULK.TXT, CORD2R remarks), as summarised in common practice:
A = origin, B on the z axis, C in the xz plane.
"""
from __future__ import annotations

import math

import numpy as np

from .fields import FieldError, real


def _r(text: str) -> float:
    try:
        v = real(text)
    except FieldError:
        return math.nan
    return 0.0 if v is None else v


def cord_systems(cards, grid_lookup) -> tuple[dict[int, tuple[str, np.ndarray, np.ndarray]], list[str]]:
    """cid -> (type R/C/S, origin (3,), rotation (3,3) local->basic), and the ids that could not be resolved."""
    raw: dict[int, tuple] = {}
    for c in cards:
        try:
            cid = int(c.s(2))
        except ValueError:
            continue
        if c.name == "CORD1R":
            raw[cid] = ("R", None, [c.s(3), c.s(4), c.s(5)], c)
        else:
            pts = [_r(c.s(n)) for n in range(4, 13)]
            raw[cid] = (c.name[-1], c.s(3), pts, c)
    done: dict[int, tuple] = {0: ("R", np.zeros(3), np.eye(3))}
    failed: list[str] = []

    def to_basic(cid: int, p: np.ndarray) -> np.ndarray:
        t, o, rot = done[cid]
        with np.errstate(invalid="ignore", over="ignore"):     # a non-finite point stays so: solve() rejects it
            return o + rot @ local_to_rect(t, p[None, :])[0]

    def solve(cid: int, depth: int = 0) -> bool:
        if cid in done:
            return True
        if cid not in raw or depth > 20:
            return False
        typ, ref, pts, card = raw[cid]
        if ref is None:  # CORD1R: three grids in the basic system
            xyz = [grid_lookup(g) for g in pts]
            if any(x is None for x in xyz):
                return False
            a, b, cpt = xyz
        else:
            rid = int(ref) if ref.strip().lstrip("-").isdigit() else 0
            if not solve(rid, depth + 1):
                return False
            a, b, cpt = (to_basic(rid, np.array(pts[i:i + 3])) for i in (0, 3, 6))
        z = b - a
        if not np.all(np.isfinite(z)) or np.linalg.norm(z) == 0:
            return False
        z = z / np.linalg.norm(z)
        y = np.cross(z, cpt - a)
        if np.linalg.norm(y) == 0:
            return False
        y = y / np.linalg.norm(y)
        x = np.cross(y, z)
        done[cid] = (typ, a, np.column_stack((x, y, z)))
        return True

    for cid in raw:
        if not solve(cid):
            failed.append(str(cid))
    return done, failed


def local_to_rect(typ: str, p: np.ndarray) -> np.ndarray:
    if typ == "C":
        r, th, z = p[:, 0], np.radians(p[:, 1]), p[:, 2]
        return np.column_stack((r * np.cos(th), r * np.sin(th), z))
    if typ == "S":
        r, th, ph = p[:, 0], np.radians(p[:, 1]), np.radians(p[:, 2])
        return np.column_stack((r * np.sin(th) * np.cos(ph), r * np.sin(th) * np.sin(ph), r * np.cos(th)))
    return p


def apply_systems(cp: np.ndarray, xyz: np.ndarray, systems) -> tuple[np.ndarray, list[int]]:
    """Basic coordinates of grid points given in systems ``cp``; also the CP ids that are not defined."""
    out = xyz.copy()
    missing = []
    for c in np.unique(cp):
        c = int(c)
        if c == 0:
            continue
        sel = cp == c
        if c not in systems:
            missing.append(c)
            continue
        t, o, rot = systems[c]
        out[sel] = o + local_to_rect(t, xyz[sel]) @ rot.T
    return out, missing
