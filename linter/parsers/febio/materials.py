"""FEBio ``<material>`` elements -> neutral :class:`~linter.model.Material` blocks.

Conventions (FEBio User's Manual 4.0, chapter 4 "Materials"; sections named beside each law):

* ``isotropic elastic`` and ``neo-Hookean`` (4.1.3.x, coupled): E, v -> ("elastic", "iso").
* ``Mooney-Rivlin`` (4.1.2.x, uncoupled): W = c1 (I1~ - 3) + c2 (I2~ - 3) + U(J), U = k/2 (ln J)^2,
  so C10 = c1, C01 = c2 and K0 = k, D1 = 2/k -> ("hyperelastic", "mooney-rivlin").
* ``Ogden`` (uncoupled): W = sum c_i/m_i^2 (l1~^m_i + l2~^m_i + l3~^m_i - 3) + U(J). The neutral Ogden
  form is sum 2 mu_i/alpha_i^2 (...), so mu_i = c_i / 2, alpha_i = m_i; terms with c_i = 0 are dropped.
* ``Ogden unconstrained`` (coupled): the same terms with - m_i ln J, plus c_p/2 (J - 1)^2: K0 = c_p + sum c_i/3.
* ``orthotropic elastic``: E1..E3, v12, v23, v31, G12, G23, G31. The neutral engineering layout holds nu13;
  reciprocity nu13/E1 = nu31/E3 gives nu13 = v31 E1/E3.
* uncoupled laws also give a ("other", "uncoupled-bulk") block (k, mu0) for the penalty checks.
* laws the checks do not read (fibres, rigid bodies, permeability, ...) give a ("user", <FEBio type>) block so
  the model knows the material has a mechanical law, and an ``Unchecked`` entry with its line.
"""
from __future__ import annotations

import math
from typing import Optional

from ...model import Loc, Material, PropertyBlock, Row, Unchecked
from .xmltree import Node

#: laws FEBio derives from its uncoupled base class (deviatoric/volumetric split, bulk modulus k)
UNCOUPLED = {"Mooney-Rivlin", "Ogden", "trans iso Mooney-Rivlin", "trans iso Veronda-Westmann",
             "Veronda-Westmann", "uncoupled solid mixture", "Arruda-Boyce", "Holzapfel-Gasser-Ogden",
             "muscle material", "tendon material", "Mooney-Rivlin von Mises Fibers", "EFD Mooney-Rivlin",
             "EFD Veronda-Westmann", "uncoupled elastic damage", "uncoupled reactive viscoelastic",
             "uncoupled prestrain elastic", "2D trans iso Mooney-Rivlin", "2D trans iso Veronda-Westmann",
             "uncoupled active contraction", "fiber-exp-pow-uncoupled", "fiber-pow-linear-uncoupled"}
#: multiphase laws: their elastic part is the <solid> child (biphasic theory, FEBio User's Manual 4.6-4.9)
MULTIPHASE = {"biphasic", "biphasic-solute", "triphasic", "multiphasic", "biphasic-FSI", "fluid-FSI",
              "fluid-solutes", "multiphasic-multigeneration"}
#: wrappers whose elastic part is a child element of this tag
WRAPPER_CHILD = {"viscoelastic": "elastic", "reactive viscoelastic": "elastic",
                 "uncoupled reactive viscoelastic": "elastic", "reactive plasticity": "elastic",
                 "reactive plastic damage": "elastic", "elastic damage": "elastic",
                 "uncoupled elastic damage": "elastic", "prestrain elastic": "elastic",
                 "uncoupled prestrain elastic": "elastic", "kinematic growth": "elastic",
                 "reactive fatigue": "elastic", "multigeneration": "generation"}
MIXTURES = {"solid mixture", "uncoupled solid mixture"}
#: tags of sub-elements that hold a component material (read recursively)
COMPONENT_TAGS = {"solid", "elastic", "fluid", "generation"}


def is_uncoupled(ftype: str) -> bool:
    return ftype in UNCOUPLED or ftype.startswith("uncoupled ")


class MaterialReader:
    """Reads one top-level material (and its components) into a :class:`Material`."""

    def __init__(self, path: str, unchecked: list, issues: list):
        self.path, self.unchecked, self.issues = path, unchecked, issues

    def loc(self, node: Node) -> Loc:
        return Loc(self.path, node.line)

    # ------------------------------------------------------------------ parameters

    def param(self, mat: Material, node: Node, name: str, where: str) -> Optional[float]:
        """The number in child ``name`` of ``node``; None when absent or not a plain number (then unchecked)."""
        child = node.find(name)
        if child is None:
            return None
        text = child.text
        how = None
        if "lc" in child.attrib:
            how = f"scaled by load controller {child.attrib['lc'][:40]}"
        elif child.attrib.get("type") in ("math", "map", "mapped") or (text.startswith("=")):
            how = f"given as {child.attrib.get('type') or 'an expression'} ({text[:60]!r})"
        if how is None:
            try:
                value = float(text)
            except ValueError:
                how = f"not a plain number ({text[:60]!r}: an expression or mapped data)"
            else:
                if not math.isfinite(value):
                    self.issues.append(("value-not-finite", f"material {mat.name}: {where}{name} = {text[:40]} "
                                                           "is not a finite number", child.line, mat.name))
                    return None
                return value
        self.unchecked.append(Unchecked(f"{where}{name}", self.loc(child), f"{how}: not checked",
                                        material=mat.name))
        return None

    def params(self, mat, node, names, where) -> Optional[list[float]]:
        vals = [self.param(mat, node, n, where) for n in names]
        return None if any(v is None for v in vals) else vals

    # ------------------------------------------------------------------ blocks

    def block(self, mat, kind, form, values, node, card, **options) -> PropertyBlock:
        blk = PropertyBlock(kind, form, [Row(tuple(float(v) for v in values), None, self.loc(node))],
                            self.loc(node), card=card, options=options)
        mat.blocks.append(blk)
        return blk

    def opaque(self, mat, node, ftype, where, reason="law not checked") -> None:
        mat.blocks.append(PropertyBlock("user", ftype or "febio", [], self.loc(node), card=ftype,
                                        options={"febio_type": ftype}))
        self.unchecked.append(Unchecked(f"{where}{ftype}", self.loc(node), reason, material=mat.name))

    def read(self, node: Node, name: str) -> Material:
        mat = Material(name=name, key=name, loc=self.loc(node))
        ftype = node.get("type", "")
        self.densities: list[tuple[int, Node]] = []        # (rank, node): 0 own, 1 fluid, 2 other component
        self.density(mat, node, 0)
        self.component(mat, node, ftype, "", bulk=None)
        self.choose_density(mat)
        return mat

    def density(self, mat, node, rank) -> None:
        if node.find("density") is not None:
            self.densities.append((rank, node))

    def choose_density(self, mat) -> None:
        """The material's own density; else a fluid constituent's; else the first component's.

        A density of 0 is FEBio's massless material (e.g. the mesh of a fluid-FSI solid): it is
        recorded as unchecked, not as a density block, so that only an analysis that needs mass
        reports it (analysis/missing-density); a negative density is kept for property/nonpositive.
        """
        zero = None
        for _rank, node in sorted(self.densities, key=lambda t: t[0]):
            rho = self.param(mat, node, "density", "")
            if rho is None:
                return                  # given by a load curve or expression: unchecked already
            if rho != 0:
                self.block(mat, "density", "iso", (rho,), node.find("density"), "density")
                return
            zero = zero or node
        if zero is not None:
            self.unchecked.append(Unchecked("density", self.loc(zero.find("density")),
                                            "density 0: a massless material", material=mat.name))

    def component(self, mat: Material, node: Node, ftype: str, where: str, bulk: Optional[float]) -> None:
        """Blocks for one law; ``bulk`` is the k of an enclosing uncoupled mixture (children give k = 0)."""
        card = where + ftype
        if ftype in ("isotropic elastic", "neo-Hookean", "coupled neo-Hookean"):
            vals = self.params(mat, node, ("E", "v"), where)
            if vals is not None:
                self.block(mat, "elastic", "iso", vals, node, card)
        elif ftype == "orthotropic elastic":
            names = ("E1", "E2", "E3", "v12", "v23", "v31", "G12", "G23", "G31")
            vals = self.params(mat, node, names, where)
            if vals is not None:
                e1, e2, e3, v12, v23, v31, g12, g23, g31 = vals
                nu13 = v31 * e1 / e3 if e3 != 0 else math.nan
                self.block(mat, "elastic", "engineering", (e1, e2, e3, v12, nu13, v23, g12, g31, g23), node, card,
                           febio={"v31": v31})
        elif ftype in ("Mooney-Rivlin", "trans iso Mooney-Rivlin", "coupled Mooney-Rivlin",
                       "coupled trans-iso Mooney-Rivlin", "2D trans iso Mooney-Rivlin"):
            self.mooney_rivlin(mat, node, ftype, where, bulk)
        elif ftype in ("Ogden", "Ogden unconstrained"):
            self.ogden(mat, node, ftype, where, bulk)
        elif ftype in ("Veronda-Westmann", "trans iso Veronda-Westmann", "2D trans iso Veronda-Westmann"):
            c1, c2 = self.param(mat, node, "c1", where), self.param(mat, node, "c2", where)
            if c1 is not None and c2 is not None:
                self.uncoupled_bulk(mat, node, card, c1 * c2, where, bulk)
            self.opaque(mat, node, ftype, where, "exponential law: initial shear modulus c1 c2 and bulk "
                                                 "modulus checked, stability not checked")
        elif ftype == "rigid body":
            self.opaque(mat, node, ftype, where, "rigid body: only the density is used (no elastic checks)")
        elif ftype == "fluid":
            k = self.param(mat, node, "k", where)
            if k is not None:
                self.block(mat, "other", "fluid", (k,), node.find("k"), card)
            self.opaque(mat, node, ftype, where, "fluid: bulk modulus k read; viscosity not checked")
        elif ftype in MIXTURES:
            k = self.param(mat, node, "k", where) if ftype == "uncoupled solid mixture" else None
            before = len(mat.blocks)
            for child in node.findall("solid"):
                self.density(mat, child, 2)
                self.component(mat, child, child.get("type", ""), f"{card}/", k if k is not None else bulk)
            if ftype == "uncoupled solid mixture" and k is not None:
                self.merge_bulk(mat, before, k, node, card)
        elif ftype in MULTIPHASE or ftype in WRAPPER_CHILD:
            if is_uncoupled(ftype) and node.find("k") is not None:
                k = self.param(mat, node, "k", where)
                inner = k if k is not None else bulk
            else:
                k, inner = None, bulk
            before, found = len(mat.blocks), False
            for child in node.children:
                if child.tag == "fluid" and "type" not in child.attrib:
                    found = True            # the fluid constituent of fluid-FSI / biphasic-FSI (no type)
                    self.density(mat, child, 1)
                    self.component(mat, child, "fluid", f"{card}/", bulk)
                elif child.tag in COMPONENT_TAGS and "type" in child.attrib:
                    found = True
                    self.density(mat, child, 2)
                    self.component(mat, child, child.get("type", ""), f"{card}/{child.tag}:", inner)
                elif "type" in child.attrib:
                    self.unchecked.append(Unchecked(f"{card}/{child.tag}:{child.get('type')[:60]}",
                                                    self.loc(child), "constituent not checked", material=mat.name))
            if k is not None:
                self.merge_bulk(mat, before, k, node, card)
            if not found:
                self.opaque(mat, node, ftype, where)
        else:
            self.opaque(mat, node, ftype or "(no type)", where)

    def merge_bulk(self, mat, before: int, k: float, node, card) -> None:
        """One penalty block (k, sum of the components' mu0) for an uncoupled mixture or wrapper."""
        mus = [b.rows[0].values[1] for b in mat.blocks[before:] if b.form == "uncoupled-bulk"]
        mat.blocks[before:] = [b for b in mat.blocks[before:] if b.form != "uncoupled-bulk"]
        self.block(mat, "other", "uncoupled-bulk", (k, sum(mus) if mus else math.nan), node, card,
                   mu_known=bool(mus))

    def uncoupled_bulk(self, mat, node, card, mu0, where, bulk) -> Optional[float]:
        """The k that applies (own, or the mixture's) and, for a top-level law, the penalty block."""
        given = node.find("k") is not None
        k = (self.param(mat, node, "k", where) if given else 0.0) if bulk is None else bulk
        if bulk is None and k is not None:
            # an absent k is the solver's default, 0 (FEBio User's Manual 4.0, 4.1.2 "Uncoupled materials")
            self.block(mat, "other", "uncoupled-bulk", (k, mu0), node.find("k") or node, card, mu_known=True,
                       given=given)
        elif bulk is not None:
            # inside an uncoupled mixture: the mixture's k applies; its block collects mu0 (see MIXTURES)
            self.block(mat, "other", "uncoupled-bulk", (bulk, mu0), node, card, mu_known=True)
        return k

    def mooney_rivlin(self, mat, node, ftype, where, bulk) -> None:
        c1, c2 = self.param(mat, node, "c1", where), self.param(mat, node, "c2", where)
        if c1 is None:
            return
        c2 = c2 or 0.0
        coupled = ftype.startswith("coupled")
        k = self.param(mat, node, "k", where) if coupled else self.uncoupled_bulk(
            mat, node, where + ftype, 2 * (c1 + c2), where, bulk)
        if ftype != "Mooney-Rivlin" and ftype != "coupled Mooney-Rivlin":
            self.unchecked.append(Unchecked(f"{where}{ftype} fibre terms", self.loc(node),
                                            "fibre parameters (c3, c4, c5, lam_max) not checked", material=mat.name))
        d1 = _d_from_k(k)
        self.block(mat, "hyperelastic", "mooney-rivlin", (c1, c2, d1), node, where + ftype, febio_k=k)

    def ogden(self, mat, node, ftype, where, bulk) -> None:
        terms = []
        for i in range(1, 7):
            c, m = self.param(mat, node, f"c{i}", where), self.param(mat, node, f"m{i}", where)
            if c is not None and m is not None and c != 0:
                terms.append((c / 2.0, m))       # mu_i = c_i / 2 (see the module docstring)
        if not terms:
            return
        if ftype == "Ogden":
            k = self.uncoupled_bulk(mat, node, where + ftype, sum(t[0] for t in terms), where, bulk)
        else:
            cp = self.param(mat, node, "cp", where)
            k = None if cp is None else cp + sum(2 * mu for mu, _a in terms) / 3.0
        if len(terms) > 3:
            self.unchecked.append(Unchecked(f"{where}{ftype}", self.loc(node), f"{len(terms)} Ogden terms: the "
                                            "checks read the first three", material=mat.name))
            terms = terms[:3]
        d1 = _d_from_k(k)
        values = [v for mu, a in terms for v in (mu, a)] + [d1] + [0.0] * (len(terms) - 1)
        self.block(mat, "hyperelastic", f"ogden-{len(terms)}", values, node, where + ftype, febio_k=k)


def _d_from_k(k: Optional[float]) -> float:
    """D1 = 2/k; k = 0 (no volumetric stiffness) gives D1 = inf (K0 = 0); no k: incompressible (D1 = 0)."""
    if k is None:
        return 0.0
    return math.inf if k == 0 else 2.0 / k
