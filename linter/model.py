"""The neutral model: what every parser fills and every rule reads.

The model is format-independent. Parsers (``linter.parsers.*``) build one
:class:`DeckModel` per top-level deck (its includes merged in); rules in
``linter.rules`` read only these dataclasses. Every item carries a
:class:`Loc` (source file as given/resolved and 1-based line).

Conventions that parsers must follow (rules rely on them):

* Names: ``name`` is the spelling as written (for display); ``key`` is the
  normalised form used for look-ups (see :func:`norm_key`).
* Property blocks (:class:`PropertyBlock`) keep the solver's own data order in
  ``rows[i].values`` for their ``form``; the layout of every (kind, form) pair
  is listed in ``BLOCK_LAYOUTS`` below. Temperature is kept separately in
  ``Row.temperature`` (``None`` when the row has no temperature).
* Large arrays (element ids, connectivity, node coordinates) are never held as
  Python objects per item: they are numpy arrays, loaded lazily through
  :class:`Lazy` where a parser defers the work.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Callable, Iterator, Optional

import numpy as np


def norm_key(name: str) -> str:
    """Normalise a user-defined name the way keyword solvers do: upper case, no blanks."""
    return "".join(name.split()).upper()


@dataclass(frozen=True, slots=True)
class Loc:
    """A source location: the file (as the user named it, or as resolved for includes) and 1-based line."""

    path: str
    line: int

    def __str__(self) -> str:  # pragma: no cover - trivial
        return f"{self.path}:{self.line}"


class Lazy:
    """A value computed on first use (e.g. element ids parsed from a recorded byte range).

    ``Lazy(fn)``: ``fn()`` is called once when ``get()`` is first called. A
    Lazy can also be made from a ready value with ``Lazy.of(value)``.
    """

    __slots__ = ("_fn", "_value", "_done", "_early", "_pending")

    def __init__(self, fn: Callable[[], Any], early: Optional[Callable[[], Any]] = None):
        self._fn = fn
        self._value = None
        self._done = False
        self._early = early          # starts the work in a helper process (``linter.background``), or None
        self._pending = None

    @classmethod
    def of(cls, value: Any) -> "Lazy":
        lazy = cls(lambda: value)
        lazy._value, lazy._done = value, True
        return lazy

    def get(self) -> Any:
        if not self._done:
            got = self._pending.result() if self._pending is not None else None
            self._value = self._fn() if got is None else got
            self._done = True
            self._fn = self._early = self._pending = None
        return self._value

    def start(self) -> bool:
        """Begin computing the value in a helper process, when the maker said how and one may start
        (``linter.background``); ``get()`` then collects it. True when a helper is at work."""
        if not self._done and self._pending is None and self._early is not None:
            self._pending = self._early()
            self._early = None
        return self._pending is not None

    @property
    def loaded(self) -> bool:
        return self._done


# --------------------------------------------------------------------------- materials

#: Data layout of ``Row.values`` for every (kind, form). Parsers convert their
#: cards to one of these; physics functions in ``linter.physics`` take them.
BLOCK_LAYOUTS: dict[tuple[str, str], tuple[str, ...]] = {
    ("elastic", "iso"): ("E", "nu"),
    # keyword ORTHO, ccx order
    ("elastic", "ortho"): ("D1111", "D1122", "D2222", "D1133", "D2233", "D3333", "D1212", "D1313", "D2323"),
    ("elastic", "engineering"): ("E1", "E2", "E3", "nu12", "nu13", "nu23", "G12", "G13", "G23"),
    # keyword ANISO: upper triangle, column by column, order (11,22,33,12,13,23)
    ("elastic", "aniso"): (
        "D1111", "D1122", "D2222", "D1133", "D2233", "D3333", "D1112", "D2212", "D3312", "D1212",
        "D1113", "D2213", "D3313", "D1213", "D1313", "D1123", "D2223", "D3323", "D1223", "D1323", "D2323"),
    # bulk MAT9: upper triangle, row by row, order (x,y,z,xy,yz,zx)
    ("elastic", "mat9"): (
        "G11", "G12", "G13", "G14", "G15", "G16", "G22", "G23", "G24", "G25", "G26",
        "G33", "G34", "G35", "G36", "G44", "G45", "G46", "G55", "G56", "G66"),
    # bulk MAT2 (2D anisotropic), order (x, y, xy); G13/G23/G33 per card
    ("elastic", "mat2"): ("G11", "G12", "G13", "G22", "G23", "G33"),
    # bulk MAT8 (orthotropic lamina); blank G1Z/G2Z -> nan (= rigid, see options)
    ("elastic", "lamina"): ("E1", "E2", "nu12", "G12", "G1Z", "G2Z"),
    ("density", "iso"): ("rho",),
    ("expansion", "iso"): ("alpha",),
    ("expansion", "ortho"): ("a11", "a22", "a33"),
    ("expansion", "aniso"): ("a11", "a22", "a33", "a12", "a13", "a23"),
    ("conductivity", "iso"): ("k",),
    ("conductivity", "ortho"): ("k11", "k22", "k33"),
    ("conductivity", "aniso"): ("k11", "k22", "k33", "k12", "k13", "k23"),
    ("specific_heat", "iso"): ("c",),
    # hardening table: one row per point; temperature groups by Row.temperature
    ("plastic", "iso"): ("stress", "plastic_strain"),
    ("deformation_plasticity", "iso"): ("E", "nu", "sigma0", "n", "alpha"),
    # hyperelastic forms: constants in the ccx order (CalculiX User's Manual *HYPERELASTIC); D's included
    ("hyperelastic", "neo-hooke"): ("C10", "D1"),
    ("hyperelastic", "mooney-rivlin"): ("C10", "C01", "D1"),
    ("hyperelastic", "polynomial-1"): ("C10", "C01", "D1"),
    ("hyperelastic", "polynomial-2"): ("C10", "C01", "C20", "C11", "C02", "D1", "D2"),
    ("hyperelastic", "polynomial-3"): (
        "C10", "C01", "C20", "C11", "C02", "C30", "C21", "C12", "C03", "D1", "D2", "D3"),
    ("hyperelastic", "reduced-polynomial-1"): ("C10", "D1"),
    ("hyperelastic", "reduced-polynomial-2"): ("C10", "C20", "D1", "D2"),
    ("hyperelastic", "reduced-polynomial-3"): ("C10", "C20", "C30", "D1", "D2", "D3"),
    ("hyperelastic", "yeoh"): ("C10", "C20", "C30", "D1", "D2", "D3"),
    ("hyperelastic", "ogden-1"): ("mu1", "alpha1", "D1"),
    ("hyperelastic", "ogden-2"): ("mu1", "alpha1", "mu2", "alpha2", "D1", "D2"),
    ("hyperelastic", "ogden-3"): ("mu1", "alpha1", "mu2", "alpha2", "mu3", "alpha3", "D1", "D2", "D3"),
    ("hyperelastic", "arruda-boyce"): ("mu", "lambda_m", "D"),
    ("hyperelastic", "van-der-waals"): ("mu", "lambda_m", "a", "beta", "D"),
    ("hyperfoam", "hyperfoam-1"): ("mu1", "alpha1", "nu1"),
    ("hyperfoam", "hyperfoam-2"): ("mu1", "alpha1", "mu2", "alpha2", "nu1", "nu2"),
    ("hyperfoam", "hyperfoam-3"): ("mu1", "alpha1", "mu2", "alpha2", "mu3", "alpha3", "nu1", "nu2", "nu3"),
}

#: Property kinds. Anything a parser reads but no rule checks goes to
#: ``DeckModel.unchecked`` *and* may still be kept as a block (kind "other").
PROPERTY_KINDS = (
    "elastic", "density", "expansion", "conductivity", "specific_heat", "plastic",
    "deformation_plasticity", "creep", "hyperelastic", "hyperfoam", "user", "damping", "other",
)


@dataclass(slots=True)
class Row:
    """One data row of a property: the values in the layout of its block, and its temperature."""

    values: tuple[float, ...]
    temperature: Optional[float]
    loc: Loc
    #: indices (into ``values``) of fields that were empty in the deck and read as the solver reads them
    blanks: tuple[int, ...] = ()


@dataclass(slots=True)
class PropertyBlock:
    """One property card of a material (``*ELASTIC``, ``MAT1`` elastic part, ``*DENSITY`` ...).

    ``options`` holds card parameters in normalised form (upper-case keys as in the
    deck for keyword cards, e.g. ``{"TYPE": "ORTHO"}``, ``{"N": 2}``, ``{"ZERO": 20.0}``;
    bulk parsers use documented keys such as ``{"card": "MAT1", "G": 8.1e4,
    "given": ("E", "NU")}``). ``card`` is the card name as written.
    """

    kind: str
    form: str
    rows: list[Row]
    loc: Loc
    card: str = ""
    options: dict[str, Any] = field(default_factory=dict)

    @property
    def layout(self) -> tuple[str, ...]:
        return BLOCK_LAYOUTS.get((self.kind, self.form), ())

    def column(self, name: str) -> np.ndarray:
        """The values of one named column over all rows (nan where a row is short)."""
        idx = self.layout.index(name)
        return np.array([r.values[idx] if idx < len(r.values) else np.nan for r in self.rows], dtype=float)

    def temperatures(self) -> np.ndarray:
        return np.array([np.nan if r.temperature is None else r.temperature for r in self.rows], dtype=float)


@dataclass(slots=True)
class Material:
    name: str
    key: str
    loc: Loc
    blocks: list[PropertyBlock] = field(default_factory=list)
    #: defined after the first analysis step (keyword decks), which the solver refuses
    after_step: bool = False
    #: filled by ``linter.derived`` (e.g. {"elastic": [...rows of G, K, lambda, M...], "hyper": {...}})
    derived: dict[str, Any] = field(default_factory=dict)

    def find(self, kind: str) -> list[PropertyBlock]:
        return [b for b in self.blocks if b.kind == kind]

    def first(self, kind: str) -> Optional[PropertyBlock]:
        """The block of that kind the solver uses (the last one given wins in keyword decks)."""
        found = self.find(kind)
        return found[-1] if found else None

    def has(self, kind: str) -> bool:
        return any(b.kind == kind for b in self.blocks)


# --------------------------------------------------------------------------- sections & elements


@dataclass(slots=True)
class MaterialRef:
    """A section's reference to a material, with the role it plays.

    Roles: "solid", "shell", "membrane", "beam", "truss", "ply" (composite layer),
    and for bulk shells "membrane", "bending", "transverse-shear", "coupling",
    "rod", "shear-panel", "thermal".
    """

    role: str
    name: str
    key: str
    loc: Loc


@dataclass(slots=True)
class Section:
    """A property/section card that ties a set of elements to materials.

    ``kind``: solid, shell, composite-shell, membrane, beam, truss, rod, shear,
    or the bulk card name lower-cased where no better kind exists.
    ``elset``: the key of the element set it applies to (bulk decks: ``"PID <n>"``).
    """

    kind: str
    card: str
    elset: str
    elset_name: str
    materials: list[MaterialRef]
    loc: Loc
    orientation: Optional[str] = None
    options: dict[str, Any] = field(default_factory=dict)


@dataclass(slots=True)
class ElementBlock:
    """Elements of one type read from one card (``*ELEMENT`` block, or all bulk elements of a type and PID).

    ``type`` is the catalogue key (upper case; bulk solids carry their node count, e.g. ``CHEXA8``).
    ``ids`` and ``conn`` are :class:`Lazy` numpy arrays (int64; ``conn`` shape (count, nodes)).
    ``pieces`` (optional): a function that yields (ids, conn) of consecutive parts of the block, in order,
    so that a rule can go over a large block with bounded memory without loading ``conn``.
    """

    type: str
    type_as_written: str
    count: int
    loc: Loc
    elset: Optional[str] = None
    nodes: int = 0
    ids: Optional[Lazy] = None
    conn: Optional[Lazy] = None
    pieces: Optional[Callable] = None


@dataclass(slots=True)
class ElementSet:
    """A named element set: whole blocks, explicit ids, generated ranges and nested sets."""

    name: str
    key: str
    loc: Loc
    blocks: list[int] = field(default_factory=list)          # indices into DeckModel.element_blocks
    ids: list[np.ndarray] = field(default_factory=list)      # explicit ids (int64 arrays)
    nested: list[str] = field(default_factory=list)          # keys of sets included by name
    #: every place the set was (re)opened; a set defined twice keeps adding
    defined_at: list[Loc] = field(default_factory=list)


@dataclass(slots=True)
class Orientation:
    name: str
    key: str
    loc: Loc
    system: str = "RECTANGULAR"
    values: tuple[float, ...] = ()


# --------------------------------------------------------------------------- analysis


#: Normalised procedure kinds and what they need. Parsers map their step cards / SOL numbers to these.
PROCEDURES: dict[str, dict[str, bool]] = {
    # kind:                   structural, needs_mass, thermal, transient_thermal
    "static":                 {"structural": True,  "mass": False, "thermal": False, "transient_thermal": False},
    "buckle":                 {"structural": True,  "mass": False, "thermal": False, "transient_thermal": False},
    "frequency":              {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "complex-frequency":      {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "modal-dynamic":          {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "steady-state-dynamics":  {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "frequency-response":     {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "dynamic-implicit":       {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "dynamic-explicit":       {"structural": True,  "mass": True,  "thermal": False, "transient_thermal": False},
    "visco":                  {"structural": True,  "mass": False, "thermal": False, "transient_thermal": False},
    "heat-steady":            {"structural": False, "mass": False, "thermal": True,  "transient_thermal": False},
    "heat-transient":         {"structural": False, "mass": False, "thermal": True,  "transient_thermal": True},
    "coupled-steady":         {"structural": True,  "mass": False, "thermal": True,  "transient_thermal": False},
    "coupled-transient":      {"structural": True,  "mass": False, "thermal": True,  "transient_thermal": True},
    "uncoupled-transient":    {"structural": True,  "mass": False, "thermal": True,  "transient_thermal": True},
    # *HEAT TRANSFER, FREQUENCY: eigenmodes of the scalar (heat / acoustic-analogy) field: needs rho*c
    "heat-frequency":         {"structural": False, "mass": False, "thermal": True,  "transient_thermal": True},
    # modal dynamics / steady-state dynamics on the modes of a heat-frequency step: no stiffness needed
    "scalar-modal":           {"structural": False, "mass": False, "thermal": True,  "transient_thermal": True},
    "other":                  {"structural": False, "mass": False, "thermal": False, "transient_thermal": False},
}


@dataclass(slots=True)
class Load:
    """A load that matters to material checks: gravity, centrifugal, or a temperature field.

    ``kind``: "gravity" | "centrifugal" | "temperature".
    ``value``: magnitude (gravity: acceleration magnitude; centrifugal: omega^2; temperature: the value).
    ``target``: set key (or None for the whole model).
    """

    kind: str
    value: Optional[float]
    loc: Loc
    target: Optional[str] = None
    vector: tuple[float, ...] = ()


@dataclass(slots=True)
class Procedure:
    kind: str
    card: str
    loc: Loc
    options: dict[str, Any] = field(default_factory=dict)

    @property
    def needs(self) -> dict[str, bool]:
        return PROCEDURES.get(self.kind, PROCEDURES["other"])


@dataclass(slots=True)
class Step:
    name: str
    loc: Loc
    procedures: list[Procedure] = field(default_factory=list)
    loads: list[Load] = field(default_factory=list)
    nlgeom: bool = False


@dataclass(slots=True)
class MassSource:
    """A source of mass other than material density: point masses (``*MASS``, CONM2), non-structural mass (NSM)."""

    kind: str
    loc: Loc
    target: Optional[str] = None       # element-set key or bulk "PID <n>"
    value: Optional[float] = None


@dataclass(slots=True)
class Geometry:
    """Summary of the mesh geometry. Bounding box is ``None`` when no node was read."""

    node_count: int = 0
    bbox_min: Optional[np.ndarray] = None
    bbox_max: Optional[np.ndarray] = None
    #: False when the box was estimated from a sample of the nodes (large decks), or coordinate systems were not applied
    exact: bool = True
    note: str = ""
    #: lazily loaded (ids, coords) arrays, when the parser can provide them
    nodes: Optional[Lazy] = None

    @property
    def size(self) -> Optional[float]:
        """Diagonal of the bounding box."""
        if self.bbox_min is None or self.bbox_max is None:
            return None
        return float(np.linalg.norm(np.asarray(self.bbox_max) - np.asarray(self.bbox_min)))


# --------------------------------------------------------------------------- parse-level facts


@dataclass(slots=True)
class Issue:
    """A problem the parser saw while reading; the ``parse/*`` rules turn these into findings.

    ``code`` is the rule name without family (e.g. "malformed-data", "missing-include",
    "number-truncated", "keyword-continuation", "unknown-option", "unknown-element-type",
    "include-refused", "file-unreadable", "encoding").
    """

    code: str
    message: str
    loc: Loc
    material: Optional[str] = None
    data: dict[str, Any] = field(default_factory=dict)


@dataclass(slots=True)
class Unchecked:
    """Something read but not checked by any rule (a gate must say what it did not check)."""

    what: str
    loc: Loc
    reason: str = ""
    material: Optional[str] = None


@dataclass(slots=True)
class Include:
    path: str            # as written in the deck
    resolved: Optional[str]
    loc: Loc
    status: str = "ok"   # ok | missing | refused | cycle | too-deep | unreadable | directory


@dataclass
class DeckModel:
    path: str
    format: str
    dialect: str
    materials: dict[str, Material] = field(default_factory=dict)
    #: every later definition of an already defined material name (after normalisation)
    duplicate_materials: list[Material] = field(default_factory=list)
    sections: list[Section] = field(default_factory=list)
    element_blocks: list[ElementBlock] = field(default_factory=list)
    element_sets: dict[str, ElementSet] = field(default_factory=dict)
    orientations: dict[str, Orientation] = field(default_factory=dict)
    steps: list[Step] = field(default_factory=list)
    #: initial temperatures (``*INITIAL CONDITIONS, TYPE=TEMPERATURE``, TEMPD/TEMP(INIT))
    initial_temperatures: list[Load] = field(default_factory=list)
    mass_sources: list[MassSource] = field(default_factory=list)
    geometry: Geometry = field(default_factory=Geometry)
    issues: list[Issue] = field(default_factory=list)
    unchecked: list[Unchecked] = field(default_factory=list)
    includes: list[Include] = field(default_factory=list)
    #: every file read for this deck (top deck first)
    files: list[str] = field(default_factory=list)
    #: model-wide parameters: e.g. {"WTMASS": 0.00259, "ABSOLUTE_ZERO": -273.15, "SOL": "103"}
    params: dict[str, Any] = field(default_factory=dict)
    #: loc of the first analysis step (keyword decks), or None
    first_step: Optional[Loc] = None
    #: results of model-wide derivations (``linter.derived``), e.g. {"unit_system": {...}}
    derived: dict[str, Any] = field(default_factory=dict)
    #: format-specific extras a format's own rules may read (documented by each parser)
    extras: dict[str, Any] = field(default_factory=dict)
    #: the text a parser read, per file as named in ``files`` (bytes or a read-only mmap, ``\n`` line ends):
    #: the suppression scan and the fingerprints read it instead of the file (``linter/parsers/buffers.py``)
    texts: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    # -- convenience -------------------------------------------------------------------

    def all_materials(self) -> Iterator[Material]:
        yield from self.materials.values()

    def procedures(self) -> Iterator[tuple[Step, Procedure]]:
        for step in self.steps:
            for proc in step.procedures:
                yield step, proc
