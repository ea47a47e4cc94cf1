"""Unit-system inference: score every candidate system by how plausible the model's values are in it.

Definitions (all numbers in ``linter/data/units.yaml``):

* **Quantity misfit** d_q(s, c): how many decades the value of quantity q, converted from system s to
  SI, lies outside the band of material class c (0 inside the band; nu is scored linearly in steps of
  ``nu_step``). Capped at ``quantity_cap``. Derived invariants (c0 = sqrt(E/rho), cd = sqrt(M/rho),
  a = k/(rho c), rho c) are scored the same way with weight ``derived_weight``; quantities the
  analyses do not read get weight ``unused_weight``.
* **Material misfit** M(s) = min over classes c of [prior_c + name_c + sum_q w_q d_q(s, c) + t(s)]: every
  material is judged against every class and the best is kept, so a soft rubber is read as a rubber, not
  as a slip. Unusual classes (rubber, foam) carry a prior, so that a slip in a metal is not explained away
  as a foam of another system. name_c: a material name that says its class (``names`` in units.yaml,
  ``names.py``) adds ``name_weight`` to every other class and waives the named class's prior. t(s): an
  explicit dynamic step whose period is shorter than ``explicit_min_increments`` stable increments
  L_e / c_d (c_d of the material read in s) costs ``explicit_time_weight`` per decade.
* **Model score** T(s) = prior_s + sum_m u_m min(R_m(s), material_cap) + gravity, mesh-size and
  absolute-zero misfits, where R_m = M_m, except for a material that no single system explains: then
  R_m(s) = min(M_m(s), slip_penalty + misfit with one or more non-modulus groups read in another system),
  counting only slips that explain the material (misfit <= material_tol) and move values that lie at least
  ``slip_min_decades`` outside every band as written (of the named class, when the name says one); each
  further group costs ``slip_extra_group``, the moduli ``moduli_slip_extra`` (they usually anchor the
  system). A density read as a weight density costs ``weight_density_penalty`` (``_bulk`` for a bulk RHO
  without PARAM,WTMASS) instead of slip_penalty. Slip readings are also tried when no system fits the
  material within ``clean_fit``. u_m = 1, or ``unused_weight`` for a material no element uses.
* The inferred system is argmin T. Systems that scale every quantity present in the evidence the same
  way are *equivalent* (the evidence cannot tell them apart); the **margin** is T of the best
  non-equivalent system minus T of the best, and **confidence** = margin / (1 + margin) (0: a tie, 0.5:
  one decade ahead, -> 1: far ahead). With no dimensional evidence at all the confidence is 0.
"""
from __future__ import annotations

import functools
import itertools
import math
from dataclasses import dataclass, field, replace
from importlib import resources
from typing import Optional

import numpy as np

from ...physics import units as U
from ...safe_yaml import load_package_yaml
from .evidence import GROUPS, QUANTITY_DIMENSION, MaterialEvidence, ModelEvidence
from .names import name_classes

BASE = ("E", "K", "yield", "rho", "k", "c", "alpha")
DERIVED = ("c0", "cd", "a", "rhoc")
DERIVED_FROM = {"c0": ("E", "rho"), "cd": ("E", "nu", "rho"), "a": ("k", "rho", "c"), "rhoc": ("rho", "c")}


@dataclass(frozen=True)
class UnitData:
    systems: tuple[U.UnitSystem, ...]
    class_names: tuple[str, ...]
    class_prior: np.ndarray
    lo: dict[str, np.ndarray]     # quantity -> (C,) lower bounds (nan: no band)
    hi: dict[str, np.ndarray]
    model: dict
    scoring: dict
    #: group -> indices of the systems a slip of that group may come from
    slip_sources: dict = field(default_factory=dict)
    #: class index -> name entries that say a material is of that class (units.yaml ``names``)
    names: dict = field(default_factory=dict)
    #: dimension -> scale factors (filled on first use by ``scales``)
    _scales: dict = field(default_factory=dict, compare=False, repr=False)

    def index(self, name: str) -> Optional[int]:
        n = name.strip().lower().replace(" ", "")
        for i, s in enumerate(self.systems):
            if n == s.name or n in s.aliases:
                return i
        return None

    def band(self, cls: str, quantity: str) -> tuple[float, float]:
        """(lo, hi) in SI of ``quantity`` for material class ``cls`` (nan, nan when the class has none)."""
        i = self.class_names.index(cls)
        return float(self.lo[quantity][i]), float(self.hi[quantity][i])

    def scales(self, dim: str) -> np.ndarray:
        """Scale factors to SI of ``dim`` for every system (read-only; computed once per dimension)."""
        sc = self._scales.get(dim)
        if sc is None:
            sc = self._scales[dim] = U.scale_vector(dim, self.systems)
            sc.setflags(write=False)
        return sc


@functools.cache
def load_data() -> UnitData:
    text = resources.files("linter").joinpath("data/units.yaml").read_text(encoding="utf-8")
    raw = load_package_yaml(text)
    systems = []
    for name, d in raw["systems"].items():
        L, T = float(d["length_m"]), float(d["time_s"])
        M = float(d["mass_kg"]) if "mass_kg" in d else U.mass_from_force(float(d["force_n"]), L, T)
        systems.append(U.UnitSystem(name=name, length=L, mass=M, time=T, temperature=float(d["temperature_k"]),
                                    temperature_scale=d.get("temperature_scale", "K/C"),
                                    labels=tuple(d.get("labels", {}).items()),
                                    aliases=tuple(a.lower() for a in d.get("aliases", ())),
                                    prior=float(d.get("prior", 0.0))))
    classes = raw["classes"]
    names = tuple(classes)
    lo, hi = {}, {}
    for q in BASE + DERIVED + ("nu",):
        lo[q] = np.array([classes[c].get(q, [np.nan, np.nan])[0] for c in names], dtype=float)
        hi[q] = np.array([classes[c].get(q, [np.nan, np.nan])[1] for c in names], dtype=float)
    prior = np.array([float(classes[c].get("prior", 0.0)) for c in names])
    index = {s.name: i for i, s in enumerate(systems)}
    sources = {g: tuple(index[n] for n in raw.get("slip_sources", {}).get(g, index)) for g in GROUPS}
    hints = {names.index(c): tuple(str(w).lower() for w in ws) for c, ws in (raw.get("names") or {}).items()
             if c in names}
    return UnitData(tuple(systems), names, prior, lo, hi, raw["model"], raw["scoring"], sources, hints)


# --------------------------------------------------------------------------- material scoring


def si_values(ev: MaterialEvidence, data: UnitData, moved: dict[str, int] | None = None) -> dict[str, np.ndarray]:
    """Each quantity in SI for every system (shape (S,)); quantities in ``moved`` are read in that system."""
    out = {}
    for q, v in ev.values.items():
        dim = QUANTITY_DIMENSION[q]
        if dim is None:
            out[q] = np.full(len(data.systems), v)
            continue
        sc = data.scales(dim)
        out[q] = v * (np.full_like(sc, sc[moved[q]]) if moved and q in moved else sc)
    return out


def derived_quantities(si: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
    out = {}
    if "E" in si and "rho" in si:
        out["c0"] = U.bar_speed(si["E"], si["rho"])
        if "nu" in si:
            out["cd"] = U.bar_speed(U.p_wave_modulus(si["E"], si["nu"]), si["rho"])
    if "rho" in si and "c" in si:
        out["rhoc"] = si["rho"] * si["c"]
        if "k" in si:
            out["a"] = U.diffusivity(si["k"], si["rho"], si["c"])
    return out


def quantity_terms(ev: MaterialEvidence, si: dict[str, np.ndarray], data: UnitData) -> dict[str, np.ndarray]:
    """Weighted, capped misfit of every quantity: q -> (C, S) array."""
    sc = data.scoring
    cap, unused = float(sc["quantity_cap"]), float(sc["unused_weight"])
    terms = {}
    allq = dict(si)
    allq.update(derived_quantities(si))
    for q, x in allq.items():
        lo, hi = data.lo[q][:, None], data.hi[q][:, None]
        if q == "nu":
            d = np.minimum(U.linear_outside(x[None, :], lo, hi, float(sc["nu_step"])), float(sc["nu_cap"]))
        else:
            d = U.decades_outside(x[None, :], lo, hi)
        nob = np.isnan(lo) & np.ones_like(d, dtype=bool)
        d = np.where(nob, float(sc["missing_band"]) if q not in DERIVED else 0.0, d)
        d = np.minimum(np.nan_to_num(d, nan=0.0), cap)
        parts = DERIVED_FROM.get(q, (q,))
        w = float(sc["derived_weight"]) if q in DERIVED else 1.0
        if not all(ev.used.get(p, True) for p in parts if p in ev.values):
            w *= unused
        terms[q] = w * d
    return terms


def class_misfit(ev, data, moved=None) -> np.ndarray:
    """(C, S): prior of the class + name evidence + sum of quantity terms + explicit-step time."""
    si = si_values(ev, data, moved)
    terms = quantity_terms(ev, si, data)
    total = np.zeros((len(data.class_names), len(data.systems))) + data.class_prior[:, None]
    hinted = name_classes(ev.name)
    if hinted:   # the name says the class: the others cost name_weight, the named one loses its prior
        other = np.ones(len(data.class_names), dtype=bool)
        other[list(hinted)] = False
        total[other] += float(data.scoring["name_weight"])
        total[~other] -= data.class_prior[~other][:, None]
    for t in terms.values():
        total += t
    total += explicit_misfit(ev, si, data)[None, :]
    return total


def explicit_misfit(ev, si: dict, data) -> np.ndarray:
    """(S,): an explicit step whose period is shorter than ``explicit_min_increments`` stable increments
    (L_e / c_d, with c_d from the material read in each system) costs ``explicit_time_weight`` per decade."""
    period, length = ev.notes.get("explicit_period"), ev.notes.get("explicit_length")
    if not period or not length or "E" not in si or "rho" not in si:
        return np.zeros(len(data.systems))
    nu = si.get("nu", np.full(len(data.systems), 0.3))
    cd = U.bar_speed(U.p_wave_modulus(si["E"], nu), si["rho"])
    with np.errstate(divide="ignore", invalid="ignore"):
        n = period * data.scales("time") * cd / (length * data.scales("length"))
    need = float(data.model["explicit_min_increments"])
    d = np.where(np.isfinite(n) & (n > 0), np.maximum(0.0, np.log10(need / np.where(n > 0, n, 1.0))), 0.0)
    return float(data.scoring["explicit_time_weight"]) * np.minimum(d, float(data.scoring["quantity_cap"]))


@dataclass
class MaterialScore:
    ev: MaterialEvidence
    per_class: np.ndarray            # (C, S)
    misfit: np.ndarray               # (S,) min over classes
    best_class: np.ndarray           # (S,) class index
    reading: np.ndarray              # (S,) R_m used in the model score
    consistent: bool                 # some single system explains the material
    dims: frozenset = field(default_factory=frozenset)


def score_material(ev: MaterialEvidence, data: UnitData) -> MaterialScore:
    pc = class_misfit(ev, data)
    mis = pc.min(axis=0)
    tol = float(data.scoring["material_tol"])
    consistent = bool(np.nanmin(mis) <= tol) if ev.values else True
    reading = mis.copy()
    if not consistent or np.nanmin(mis) > float(data.scoring["clean_fit"]):
        # no single system explains the material: in each system s, read it as carrying a unit slip in
        # a group other than the moduli (the moduli anchor the system) when that explains it fully
        # (misfit <= material_tol) and the slipped values are far outside every band; cost slip_penalty
        pen = float(data.scoring["slip_penalty"])
        bad = slip_bad(ev, data)
        moduli_may_slip = "E" in bad
        # the moduli anchor the system, unless they fit no class at all as written (psi typed into a Pa
        # model): then they may be the slipped group too (only a value far outside every band moves)
        groups = [g for g in GROUPS if (g != "moduli" or moduli_may_slip) and any(q in ev.values for q in GROUPS[g])]
        best = np.full_like(mis, np.inf)
        for subset in group_subsets(groups):
            qs = [q for g in subset for q in GROUPS[g] if q in ev.values]
            ok = np.all([np.any([bad[q] for q in GROUPS[g] if q in bad], axis=0) for g in subset], axis=0)
            for alt in set.intersection(*(set(data.slip_sources[g]) for g in subset)):
                m = class_misfit(ev, data, {q: alt for q in qs}).min(axis=0)
                extra = float(data.scoring["slip_extra_group"]) * (len(subset) - 1) + \
                    (float(data.scoring["moduli_slip_extra"]) if "moduli" in subset else 0.0)
                best = np.where(ok & (m <= tol), np.minimum(best, m + extra), best)
        reading = np.minimum(mis, best + pen)
        if "rho" in ev.values:
            # a weight density taken as mass density (bulk RHO without PARAM,WTMASS): rho / g of the system
            wpen = weight_density_penalty(ev, data)
            g_sys = float(data.model["gravity"]) / data.scales("acceleration")
            for i in np.flatnonzero(bad["rho"]):
                trial = replace(ev, values={**ev.values, "rho": ev.values["rho"] / g_sys[i]})
                m = float(class_misfit(trial, data)[:, i].min())
                if m <= tol:
                    reading[i] = min(reading[i], m + wpen)
    dims = frozenset(QUANTITY_DIMENSION[q] for q in ev.values if QUANTITY_DIMENSION[q])
    return MaterialScore(ev, pc, mis, pc.argmin(axis=0), reading, consistent, dims)


def weight_density_penalty(ev: MaterialEvidence, data: UnitData) -> float:
    """Cost of reading the density as a weight density: low for a bulk RHO without PARAM,WTMASS."""
    sc = data.scoring
    bulk_plain = "RHO" in ev.notes and ev.notes.get("WTMASS", 1.0) == 1.0
    return float(sc["weight_density_penalty_bulk"] if bulk_plain else sc["weight_density_penalty"])


def slip_bad(ev: MaterialEvidence, data: UnitData) -> dict[str, np.ndarray]:
    """q -> (S,): the value of q read in system s lies ``slip_min_decades`` outside every class that has a
    band for every quantity given."""
    qtol = float(data.scoring["slip_min_decades"])
    fit = np.all([~np.isnan(data.lo[q]) for q in ev.values], axis=0)
    hinted = name_classes(ev.name)
    if hinted:          # a name that says the class: judged against that class only
        named = np.zeros_like(fit)
        named[list(hinted)] = True
        fit = fit & named if (fit & named).any() else fit
    si = si_values(ev, data)
    return {q: np.all(U.decades_outside(si[q][None, :], data.lo[q][fit][:, None], data.hi[q][fit][:, None]) > qtol,
                      axis=0) for q in si if q != "nu"}


def group_subsets(groups):
    """Every non-empty combination of ``groups``, smallest first (the quantity groups a slip may move)."""
    for r in range(1, len(groups) + 1):
        yield from itertools.combinations(groups, r)


# --------------------------------------------------------------------------- model scoring


def _model_terms(evd: ModelEvidence, data: UnitData) -> tuple[np.ndarray, set]:
    md, sc = data.model, data.scoring
    cap = float(sc["quantity_cap"])
    total = np.array([s.prior for s in data.systems])
    dims = set()
    g0, gtol = float(md["gravity"]), float(md["gravity_rel_tol"])
    acc = data.scales("acceleration")
    lf = md["load_factor"]
    for g, _loc in evd.gravity:
        d = U.decades_outside(g * acc, g0 * (1 - gtol), g0 * (1 + gtol))
        if np.any(d == 0):       # standard gravity in some system: strong evidence
            total = total + float(sc["gravity_weight"]) * np.minimum(d, cap)
        else:                    # a load factor times g, or arbitrary: only the load-factor band
            d = U.decades_outside(g * acc, g0 * float(lf[0]), g0 * float(lf[1]))
            total = total + float(sc["load_factor_weight"]) * np.minimum(d, cap)
        dims.add("acceleration")
    length = data.scales("length")
    for value, band in ((evd.model_size, md["model_size"]), (evd.element_size, md["element_size"])):
        if value:
            total = total + float(sc["geometry_weight"]) * np.minimum(
                U.decades_outside(value * length, band[0], band[1]), cap)
            dims.add("length")
    if evd.absolute_zero is not None:
        scale = U.temperature_scale_of(evd.absolute_zero)
        if scale in ("C", "F"):
            fits = np.array([(s.temperature_scale == "F") == (scale == "F") for s in data.systems])
            total = total + float(sc["absolute_zero_weight"]) * (~fits)
            dims.add("temperature")
    return total, dims


def equivalent(data: UnitData, i: int, j: int, dims) -> bool:
    """Systems i and j scale every dimension in ``dims`` identically."""
    for d in dims:
        a, b = data.systems[i].scale(d), data.systems[j].scale(d)
        if not math.isclose(a, b, rel_tol=1e-9):
            return False
    return True


def margin_of(scores: np.ndarray, best: int, data: UnitData, dims) -> tuple[float, Optional[int]]:
    """Score difference to the best system that reads the evidence differently (inf: none)."""
    others = [j for j in range(len(scores)) if not equivalent(data, best, j, dims)]
    if not others:
        return math.inf, None
    j = min(others, key=lambda k: scores[k])
    return float(scores[j] - scores[best]), j


def confidence_of(margin: float) -> float:
    if math.isinf(margin):
        return 1.0
    return max(0.0, margin) / (1.0 + max(0.0, margin))


@dataclass
class Inference:
    data: UnitData
    evidence: ModelEvidence
    materials: list[MaterialScore]
    scores: np.ndarray
    best: Optional[int]
    ref: Optional[int]               # declared system, else best
    declared: bool
    declared_unknown: Optional[str]
    margin: float
    runner_up: Optional[int]
    confidence: float
    dims: set
    without: dict[str, np.ndarray] = field(default_factory=dict)   # material key -> T without it


def infer(evd: ModelEvidence, declared: Optional[str] = None) -> Inference:
    data = load_data()
    cache: dict[tuple, MaterialScore] = {}
    scores_m = []
    for ev in evd.materials:
        sig = ev.signature()
        base = cache.get(sig)
        if base is None:
            base = cache[sig] = score_material(ev, data)
        scores_m.append(MaterialScore(ev, base.per_class, base.misfit, base.best_class, base.reading,
                                      base.consistent, base.dims))
    total, dims = _model_terms(evd, data)
    mcap, unused = float(data.scoring["material_cap"]), float(data.scoring["unused_weight"])
    contrib = []
    for ms in scores_m:
        dims |= ms.dims
        u = 1.0 if ms.ev.assigned else unused
        contrib.append(u * np.minimum(ms.reading, mcap))
        total = total + contrib[-1]
    without = {ms.ev.key: total - c for ms, c in zip(scores_m, contrib)}
    best = int(np.argmin(total)) if dims else None
    margin, runner = (margin_of(total, best, data, dims) if best is not None else (0.0, None))
    conf = confidence_of(margin) if best is not None else 0.0
    ref, is_declared, unknown = best, False, None
    if declared:
        idx = data.index(declared)
        if idx is None:
            unknown = declared
        else:
            ref, is_declared = idx, True
    return Inference(data, evd, scores_m, total, best, ref, is_declared, unknown, margin, runner, conf,
                     dims, without)


def material_system(ms: MaterialScore, data: UnitData, prefer: Optional[int]) -> tuple[Optional[int], float]:
    """The system that best explains one material on its own (ties go to ``prefer``), and its confidence."""
    if not ms.dims:
        return None, 0.0
    mis = ms.misfit
    best = int(np.argmin(mis))
    if prefer is not None and mis[prefer] <= mis[best] + 1e-9:
        best = prefer
    margin, _ = margin_of(mis, best, data, ms.dims)
    return best, confidence_of(margin)
