"""analysis/explicit-time-step: the stable time increment each material allows in an explicit step.

dt ~ L_e / c_d per material (Belytschko, Liu & Moran 2000 ch. 6), with L_e the smallest edge of the material's elements
(``linter.physics.mesh``) and c_d the dilatational wave speed: sqrt(M/rho) from the isotropic elastic
row, or sqrt((K0 + 4 mu0/3)/rho) from ``Material.derived["hyper"]``. When connectivity or nodes are
not available, L_e is estimated as (bounding-box volume / element count)^(1/d) and marked as such.
"""
from __future__ import annotations

import math
from typing import Optional

import numpy as np

from linter.physics import dynamics as D
from linter.physics import mesh as M
from linter.registry import rule
from linter.rules.analysis import used_materials
from linter.usage import material_usage, resolve_set
from ._text import short

BLM = "Belytschko, Liu & Moran 2000 ch. 6"


def smallest_lengths(model, keys) -> dict:
    """{material key: smallest edge of its elements, or None when connectivity or nodes are missing}.

    On a large deck the node table may be read by a helper process (``Lazy.start``, ``linter.background``);
    the materials' connectivity is then read meanwhile and kept, compact, until the nodes come. Otherwise
    it is read block piece by block piece, keeping only a running minimum (bounded memory)."""
    out = {k: None for k in keys}
    nodes = model.geometry.nodes
    if nodes is None:
        return out
    uses = {k: _uses(model, k) for k in keys}
    held: dict = {}
    if not nodes.loaded and any(uses.values()) and nodes.start():
        try:
            held = {k: [(blk.type, _compact(c)) for blk, mask in u for c in _block_pieces(blk, mask)]
                    for k, u in uses.items() if u}
        finally:
            got = nodes.get()                   # also when reading failed: the helper is waited for
    else:
        got = nodes.get()
    if got is None:
        return out
    lookup, coords = _node_index(model, got)
    for k, u in uses.items():
        if not u:
            continue
        pieces = held[k] if k in held else ((blk.type, c) for blk, mask in u for c in _block_pieces(blk, mask))
        best = None
        for etype, conn in pieces:
            L = M.smallest_edge(conn, lookup, coords, etype)
            if L is not None and (best is None or L < best):
                best = L
        out[k] = best
    return out


def _node_index(model, got):
    """The node look-up and coordinate columns, made once per model."""
    lookup = model.derived.get("_node_lookup")
    if lookup is None:
        node_ids, coords = got
        lookup = model.derived["_node_lookup"] = M.NodeLookup(node_ids)
        model.derived["_node_columns"] = M.columns(coords)
    return lookup, model.derived["_node_columns"]


def _uses(model, key: str):
    """(block, element mask or None) of every block part the material is assigned to; None when one of
    those blocks has no connectivity (the length is then estimated)."""
    out = []
    for use in material_usage(model).get(key, ()):
        sel = resolve_set(model, use.section.elset)
        if not sel:
            continue
        for i, mask in sel.parts.items():
            blk = model.element_blocks[i]
            if blk.conn is None:
                return None
            out.append((blk, mask))
    return out


def _block_pieces(blk, mask):
    """The selected connectivity of a block, piece by piece when the block can give it so (bounded memory
    on large decks), else the loaded table."""
    if blk.pieces is not None and not blk.conn.loaded:
        at = 0
        for _ids, conn in blk.pieces():
            n = conn.shape[0]
            part = None if mask is None else mask[at:at + n]
            at += n
            if n and (part is None or part.any()):
                yield conn if part is None else conn[part]
        return
    conn = blk.conn.get()
    if conn is not None and np.size(conn):
        yield conn if mask is None else conn[mask]


def _compact(conn: np.ndarray) -> np.ndarray:
    """Node numbers as int32 when they fit (half the memory while they are held)."""
    if conn.size and -2**31 <= int(conn.min()) and int(conn.max()) < 2**31:
        return conn.astype(np.int32)
    return conn


def wave_speeds(mat) -> Optional[tuple[float, float, str]]:
    """(c_d, c_s, source) from the elastic or hyperelastic data and the density; None if not known."""
    dens = mat.first("density")
    if dens is None or not dens.rows:
        return None
    rho = float(dens.column("rho")[0])
    if not rho > 0:
        return None
    hyper = mat.derived.get("hyper") or {}
    if "mu0" in hyper and "K0" in hyper and hyper.get("mu0") and hyper["mu0"] > 0:
        cd = float(D.hyper_dilatational_speed(hyper["K0"], hyper["mu0"], rho))
        return cd, float(D.hyper_shear_speed(hyper["mu0"], rho)), "hyperelastic K0, mu0"
    el = mat.first("elastic")
    if el is None or el.form != "iso" or not el.rows:
        return None
    E, nu = el.column("E"), el.column("nu")
    ok = (E > 0) & np.isfinite(nu)
    if not ok.any():
        return None
    cd = D.dilatational_speed(E[ok], nu[ok], rho)
    k = int(np.argmax(cd))  # the fastest row sets the step
    return float(cd[k]), float(D.shear_speed(E[ok][k], nu[ok][k], rho)), "E, nu"


@rule("analysis/explicit-time-step", severity="note",
      escalation="warning when near-incompressibility makes the increment far smaller than the shear-wave estimate",
      title="Estimated stable time increment of an explicit dynamic step",
      rationale="The central-difference method is stable for dt <= L_e / c_d. Near-incompressible materials "
                "have a dilatational speed far above the shear speed, so their bulk stiffness, not their "
                "shear stiffness, sets (and shrinks) the step.",
      references=(BLM,), data="length, length_estimated, cd, cs, dt, dt_shear, ratio, source",
      thresholds=("analysis.explicit_ratio_warn",))
def explicit_time_step(model, ctx):
    explicit = [(s, p) for s, p in model.procedures() if p.kind == "dynamic-explicit"]
    if not explicit:
        return
    step, proc = explicit[0]
    limit = float(ctx.threshold("analysis.explicit_ratio_warn"))
    total = sum(b.count for b in model.element_blocks)
    guess = D.estimated_length(model.geometry.bbox_min, model.geometry.bbox_max, total)
    mats = [(mat, wave_speeds(mat)) for mat in used_materials(model)]
    lengths = smallest_lengths(model, [m.key for m, sp in mats if sp is not None and not math.isinf(sp[0])])
    for mat, speeds in mats:
        if speeds is None:
            continue
        cd, cs, source = speeds
        if math.isinf(cd):
            yield ctx.finding(f"material {mat.name} is incompressible ({source}): its dilatational wave speed is "
                              f"infinite, so explicit step {step.name} has no stable time increment; give it a "
                              "finite bulk modulus", mat.loc, material=mat.name, severity="warning",
                              data={"length": None, "length_estimated": False, "cd": cd, "cs": cs, "dt": 0.0,
                                    "dt_shear": None, "ratio": math.inf, "source": source})
            continue
        L = lengths.get(mat.key)
        estimated = L is None
        if estimated:
            L = guess
        if L is None:
            yield ctx.finding(f"material {mat.name}: c_d = {short(cd)}; the element size is not known, so the "
                              f"stable time increment of step {step.name} could not be estimated",
                              mat.loc, material=mat.name,
                              data={"length": None, "length_estimated": True, "cd": cd, "cs": cs, "dt": None,
                                    "dt_shear": None, "ratio": None, "source": source})
            continue
        dt = float(D.stable_time_step(L, cd))
        dts = float(D.stable_time_step(L, cs))
        ratio = dts / dt if dt > 0 else math.inf
        where = (f"estimated element length {short(L)} (bounding box over {total} elements; element lengths "
                 "not available)" if estimated else f"smallest element edge {short(L)}")
        msg = (f"material {mat.name} in explicit step {step.name}: stable time increment about {short(dt)} "
               f"({where}, dilatational wave speed {short(cd)} from {source}; deck units)")
        sev = None
        if ratio > limit:
            sev = "warning"
            msg += (f"; near-incompressibility makes it {short(ratio)} times smaller than the shear-wave "
                    f"estimate {short(dts)}")
        yield ctx.finding(msg, mat.loc, material=mat.name, severity=sev,
                          data={"length": L, "length_estimated": estimated, "cd": cd, "cs": cs, "dt": dt,
                                "dt_shear": dts, "ratio": ratio, "source": source})
