"""A code_aster study (command file + meshes) into the neutral model.

Commands are taken in file order. Materials come from ``DEFI_MATERIAU`` (named after the Python
variable they are bound to), meshes from ``LIRE_MAILLAGE`` (logical unit -> file, from the
``.export`` or the base name), formulations from ``AFFE_MODELE``, material assignments from
``AFFE_MATERIAU`` (sections on groups), shell and beam data from ``AFFE_CARA_ELEM``, analyses
from the solver commands listed in ``ANALYSES`` with the loads of their ``EXCIT``.
"""
from __future__ import annotations

import os
from typing import Callable, Optional

import numpy as np

from ...model import Issue, Load, Loc, MassSource, PropertyBlock, MaterialRef, Procedure, Section, Step, Unchecked, norm_key
from .cells import MeshUse, ModelBuilder, element_set, group_ops, names, occurrences, select
from .commands import Program
from .evaluate import Command, Keywords, number
from .materials import MaterialReader, finish_traction, material_key

#: commands whose result is certainly not a material (a MATER naming one is an error)
NOT_MATERIAL = ("DEFI_FONCTION", "DEFI_CONSTANTE", "DEFI_NAPPE", "FORMULE", "LIRE_MAILLAGE", "AFFE_MODELE",
                "AFFE_CHAR_MECA", "AFFE_CHAR_THER", "DEFI_LIST_REEL", "DEFI_LIST_INST", "CREA_CHAMP",
                "AFFE_CARA_ELEM", "AFFE_MATERIAU", "CALC_FONCTION")
#: analysis commands -> procedure kind (refined in _procedure_kind)
ANALYSES = {"MECA_STATIQUE": "static", "STAT_NON_LINE": "static", "DYNA_NON_LINE": "dynamic-implicit",
            "DYNA_LINE": "dynamic-implicit", "DYNA_VIBRA": "modal-dynamic", "CALC_MODES": "frequency",
            "MODE_ITER_SIMULT": "frequency", "MODE_ITER_INV": "frequency", "THER_LINEAIRE": "heat-steady",
            "THER_NON_LINE": "heat-steady", "CALC_MODES_MULT": "frequency", "MACRO_MODE_MECA": "frequency"}
#: element ids are model number << MODEL_ID_SHIFT plus the global cell index
MODEL_ID_SHIFT = 40
#: material entries of one model told apart by the bits of an int64 (more: plain id sets)
MAX_BITS = 50
#: constitutive relations that use no elastic constants (NORTON_HOFF: rigid-viscoplastic limit analysis,
#: from memory)
NO_ELASTICITY = ("NORTON_HOFF",)
MESH_COMMANDS = ("CREA_MAILLAGE", "ASSE_MAILLAGE", "MODI_MAILLAGE", "PROJ_MAILLAGE", "RAFF_XFEM")


class StudyBuilder:
    def __init__(self, model, prog: Program, path: str, mesh_for_unit: Callable[[int, str, int], Optional[MeshUse]]):
        self.model, self.prog, self.path = model, prog, path
        self.mesh_for_unit = mesh_for_unit
        self.meshes: dict[str, MeshUse] = {}       # variable -> mesh
        self.models: dict[str, tuple[MeshUse, list[int], int]] = {}
        self.chams: dict[int, tuple] = {}          # id(AFFE_MATERIAU) -> (cmd, mesh, entries, temperature loads)
        self.pairs: dict[int, set] = {}            # id(AFFE_MATERIAU) -> names of the models used with it
        self.mat_of: dict[int, str] = {}           # id(DEFI_MATERIAU command) -> material key
        self.loads: dict[int, list[Load]] = {}     # id(AFFE_CHAR_*) -> loads
        self.builder = ModelBuilder(model)
        self._extra_ids: dict[int, list] = {}
        #: where material axes are given (AFFE_CARA_ELEM MASSIF/COQUE ANGL_REP ...), read as applying to the model
        self.oriented: Optional[str] = None
        self.notes: list = []
        self.next_offset = 0

    def loc(self, line: int) -> Loc:
        return Loc(self.path, line)

    def run(self) -> None:
        reader = MaterialReader(self.path, self.model.unchecked)
        taken: set = set()
        for cmd in self.prog.commands:
            name = cmd.name
            if name == "DEFI_MATERIAU":
                self._material(cmd, reader, taken)
            elif name == "LIRE_MAILLAGE":
                self._read_mesh(cmd)
            elif name in MESH_COMMANDS or name == "DEFI_GROUP":
                self._mesh_command(cmd)
            elif name == "AFFE_MODELE":
                self._affe_modele(cmd)
            elif name == "AFFE_MATERIAU":
                self._affe_materiau(cmd)
            elif name == "AFFE_CARA_ELEM":
                self._cara(cmd)
            elif name in ("AFFE_CHAR_MECA", "AFFE_CHAR_MECA_F"):
                self._char(cmd)
            if name in ANALYSES:
                self._analysis(cmd)
            if name not in ("AFFE_MATERIAU", "AFFE_MODELE"):
                self._pair(cmd)
        for mat in self.model.materials.values():
            finish_traction(mat)
        self._sections()
        for code, message, line in self.notes:
            if code == "unchecked":
                self.model.unchecked.append(Unchecked(message.split(":")[0], self.loc(line), message))
            else:
                self.model.issues.append(Issue("malformed-data", message, self.loc(line)))

    # ------------------------------------------------------------------------------ materials

    def _material(self, cmd: Command, reader: MaterialReader, taken: set) -> None:
        if cmd.target is None:
            self.model.unchecked.append(Unchecked("DEFI_MATERIAU", self.loc(cmd.line),
                                                  "result not bound to a name: no command can use it"))
            return
        reuse = cmd.keywords.get("reuse")
        key = material_key(cmd.target, taken if not isinstance(reuse, Command) else set())
        taken.add(key)
        mat = reader.read(cmd, cmd.target, key)
        if isinstance(reuse, Command) and id(reuse) in self.mat_of:
            old = self.model.materials.get(self.mat_of[id(reuse)])
            if old is not None:
                old.blocks.extend(mat.blocks)
                self.mat_of[id(cmd)] = old.key
                return
        self.model.materials[key] = mat
        self.mat_of[id(cmd)] = key

    # ------------------------------------------------------------------------------ meshes and models

    def _read_mesh(self, cmd: Command) -> None:
        if cmd.target is None:
            return
        fmt = cmd.keywords.get("FORMAT")
        unit = number(cmd.keywords.get("UNITE", 20))
        use = self.mesh_for_unit(int(unit) if unit is not None else 20,
                                 fmt if isinstance(fmt, str) or fmt is None else "?", cmd.line)
        if use is None:
            use = MeshUse(cmd.target, None, exact=False, why_inexact="mesh not read")
        use.var, use.offset = cmd.target, self.next_offset
        self.next_offset += use.mesh.cell_count if use.mesh else 0
        self.meshes[cmd.target] = use

    def _mesh_of(self, kw: Keywords) -> Optional[MeshUse]:
        m = kw.get("MAILLAGE")
        if isinstance(m, Command) and m.target in self.meshes:
            return self.meshes[m.target]
        mo = kw.get("MODELE")
        if isinstance(mo, Command) and mo.target in self.models:
            return self.models[mo.target][0]
        return None

    def _mesh_command(self, cmd: Command) -> None:
        src = self._mesh_of(cmd.keywords)
        if src is None:
            return
        if cmd.name == "DEFI_GROUP":
            group_ops(src, cmd, self.notes)
        elif cmd.name != "MODI_MAILLAGE":
            src.exact, src.why_inexact = False, f"mesh changed by {cmd.name} on line {cmd.line}"
            self.notes.append(("unchecked", f"{cmd.name}: the mesh it makes is read as the mesh it starts from",
                               cmd.line))
        if cmd.target and cmd.target not in self.meshes:
            self.meshes[cmd.target] = src

    def _affe_modele(self, cmd: Command) -> None:
        use = self._mesh_of(cmd.keywords)
        if use is None or use.mesh is None:
            self.notes.append(("unchecked", "AFFE_MODELE: its mesh is not read", cmd.line))
            return
        forms = self.builder.add(use, cmd, self.notes)
        if forms is not None:
            self.models[cmd.target or f"@{cmd.line}"] = (use, forms, (len(self.models) + 1) << MODEL_ID_SHIFT)

    def _affe_materiau(self, cmd: Command) -> None:
        """Material assignments, kept until the end: which models use this field decides the elements."""
        use = self._mesh_of(cmd.keywords)
        entries = []
        for occ in occurrences(cmd.keywords.get("AFFE")):
            mats = occ.get("MATER")
            refs = list(mats) if isinstance(mats, tuple) else [mats]
            state, idx, what = select(use, occ) if use is not None and use.mesh is not None else ("unknown", None, "")
            if state == "unknown":
                self.model.unchecked.append(Unchecked("AFFE_MATERIAU", self.loc(occ.line),
                                                      f"material on cells that are not followed ({what or 'mesh not read'})"))
                continue
            line = occ.line_of("MATER")
            materials, opaque = [], False
            for r in refs:
                if isinstance(r, Command) and id(r) in self.mat_of:
                    key = self.mat_of[id(r)]
                    materials.append(MaterialRef("solid", self.model.materials[key].name, key, self.loc(line)))
                elif isinstance(r, Command) and r.name in NOT_MATERIAL:
                    materials.append(MaterialRef("solid", r.target or r.name, norm_key(r.target or r.name) + "?",
                                                 self.loc(line)))
                elif isinstance(r, Command) and r.name == "DEFI_COMPOSITE":   # shell layers: their materials
                    for layer in occurrences(r.keywords.get("COUCHE")):
                        m = layer.get("MATER")
                        if isinstance(m, Command) and id(m) in self.mat_of:
                            key = self.mat_of[id(m)]
                            materials.append(MaterialRef("ply", self.model.materials[key].name, key,
                                                         self.loc(layer.line_of("MATER"))))
                    opaque = True
                else:
                    opaque = True
                    self.model.unchecked.append(Unchecked("AFFE_MATERIAU MATER", self.loc(line),
                                                          getattr(r, "why", f"{getattr(r, 'name', 'a value')} is "
                                                                  "not read as a material")))
            if materials or opaque:   # a material not read still covers its cells (no unassigned-element finding)
                entries.append((occ, state, idx, what, materials))
        temps = []
        for occ in occurrences(cmd.keywords.get("AFFE_VARC")):
            if occ.get("NOM_VARC") != "TEMP":
                continue
            ref = number(occ.get("VALE_REF"))
            for *_x, materials in entries:
                for r in materials:
                    mat = self.model.materials.get(r.key)
                    blk = mat.first("expansion") if mat else None
                    if blk is not None and ref is not None:
                        blk.options["ZERO"] = ref
            temps.extend(self._temperature(occ))
        self.chams[id(cmd)] = (cmd, use, entries, temps)

    def _paired_models(self, cid: int, use) -> list[str]:
        paired = self.pairs.get(cid)
        if not paired:   # a field no command pairs with a model: the models no other field is used with
            mine = {name for name, m in self.models.items() if m[0] is use}
            taken = set().union(*self.pairs.values()) if self.pairs else set()
            paired = (mine - taken) or mine
        return [m for m in sorted(paired) if m in self.models and self.models[m][0] is use]

    def _sections(self) -> None:
        """Element blocks of every model, split by the material entries that cover their cells, and one
        section per entry on the blocks it covers (sets hold whole blocks: no id look-ups)."""
        sets: dict[int, list[int]] = {}                 # entry number -> block indices
        entries = []                                    # (cham cmd, occ, state, idx, what, materials)
        for cid, (cmd, use, found, _t) in self.chams.items():
            for e in found:
                entries.append((cid, use, cmd) + tuple(e))
        for name, (use, forms, base) in self.models.items():
            mine = [i for i, e in enumerate(entries) if e[4] != "missing" and e[1] is use
                    and name in self._paired_models(e[0], use)]
            bitted, rest = mine[:MAX_BITS], mine[MAX_BITS:]
            cover = np.zeros(use.mesh.cell_count, np.int64)
            for bit, i in enumerate(bitted):
                cover[entries[i][5]] |= np.int64(1) << np.int64(bit)
            for blk, bits in self.builder.blocks(forms, base, cover):
                for bit, i in enumerate(bitted):
                    if bits >> bit & 1:
                        sets.setdefault(i, []).append(blk)
            for i in rest:   # beyond the bits of one integer: plain id sets
                sets.setdefault(i, [])
                self._extra_ids.setdefault(i, []).append(base + use.offset + entries[i][5])
        for i, (_cid, use, cmd, occ, state, idx, what, materials) in enumerate(entries):
            if state == "missing":
                key, name = norm_key(what), what
            else:
                name = "TOUT='OUI'" if occ.get("TOUT") == "OUI" else what
                key = f"{norm_key(name)}@{cmd.target or cmd.line}:{occ.line}"
                extra = self._extra_ids.get(i)
                element_set(self.model, key, name, self.loc(occ.line), blocks=sets.get(i, []),
                            ids=np.concatenate(extra) if extra else None)
                if not sets.get(i) and not extra:
                    self.model.unchecked.append(Unchecked(
                        "AFFE_MATERIAU", self.loc(occ.line),
                        f"material on {name}, where the models used with this field have no finite element"))
                    continue
            self.model.sections.append(Section(kind="solid", card="AFFE_MATERIAU", elset=key, elset_name=name,
                                               materials=materials, loc=self.loc(occ.line),
                                               orientation=self.oriented))

    def _pair(self, cmd: Command) -> None:
        """Remember which models a material field is used with (MODELE= and CHAM_MATER= of one command)."""
        cham, mod = _find(cmd, "CHAM_MATER"), _find(cmd, "MODELE")
        if cham is not None and mod is not None and mod.name == "AFFE_MODELE":
            self.pairs.setdefault(id(cham), set()).add(mod.target or f"@{mod.line}")

    def _temperature(self, occ: Keywords) -> list[Load]:
        field = occ.get("CHAM_GD")
        values = []
        if isinstance(field, Command) and field.name == "CREA_CHAMP":
            for a in occurrences(field.keywords.get("AFFE")):
                vals = a.get("VALE")
                vals = vals if isinstance(vals, tuple) else (vals,)
                values += [number(v) for v in vals if number(v) is not None]
        loc = self.loc(occ.line)
        return [Load("temperature", v, loc) for v in values] or [Load("temperature", None, loc)]

    def _cara(self, cmd: Command) -> None:
        cara = self.model.extras.setdefault("aster_cara", [])
        for occ in occurrences(cmd.keywords.get("COQUE")):
            cara.append({"kind": "shell", "groups": names(occ.get("GROUP_MA")), "thickness": number(occ.get("EPAIS")),
                         "line": occ.line})
        for occ in occurrences(cmd.keywords.get("POUTRE")):
            vals = occ.get("VALE")
            cara.append({"kind": "beam", "groups": names(occ.get("GROUP_MA")), "section": occ.get("SECTION"),
                         "cara": names(occ.get("CARA")),
                         "values": [number(v) for v in (vals if isinstance(vals, tuple) else (vals,))],
                         "line": occ.line})
        for occ in occurrences(cmd.keywords.get("MASSIF")) + occurrences(cmd.keywords.get("COQUE")):
            if any(occ.get(k) is not None for k in ("ANGL_REP", "ANGL_EULER", "VECTEUR", "ANGL_AXE")):
                self.oriented = f"AFFE_CARA_ELEM line {occ.line}"
        for occ in occurrences(cmd.keywords.get("DISCRET")) + occurrences(cmd.keywords.get("DISCRET_2D")):
            if isinstance(occ.get("CARA"), str) and occ.get("CARA").startswith("M_"):
                self.model.mass_sources.append(MassSource("discrete", self.loc(occ.line_of("CARA")), None,
                                                          None))
        by_group = {norm_key(g): c for c in cara for g in c["groups"]}
        for sec in self.model.sections:
            c = by_group.get(sec.elset)
            if c:
                sec.options.setdefault("cara", c)

    # ------------------------------------------------------------------------------ loads and analyses

    def _char(self, cmd: Command) -> None:
        out = []
        for occ in occurrences(cmd.keywords.get("PESANTEUR")):
            g = number(occ.get("GRAVITE"))
            d = occ.get("DIRECTION")
            vec = tuple(number(x) or 0.0 for x in d) if isinstance(d, tuple) else ()
            out.append(Load("gravity", g, self.loc(occ.line_of("GRAVITE")), vector=vec))
        for occ in occurrences(cmd.keywords.get("ROTATION")):
            w = number(occ.get("VITESSE"))
            out.append(Load("centrifugal", w * w if w is not None else None, self.loc(occ.line)))
        self.loads[id(cmd)] = out

    def _analysis(self, cmd: Command) -> None:
        kw = cmd.keywords
        kind = _procedure_kind(cmd)
        options = {}
        rel = []
        for occ in occurrences(kw.get("COMPORTEMENT")):
            r = occ.get("RELATION", "ELAS")
            rel.append({"relation": r if isinstance(r, str) else None, "groups": names(occ.get("GROUP_MA")),
                        "line": occ.line_of("RELATION")})
        if rel:
            options["COMPORTEMENT"] = rel
        step = Step(name=f"{cmd.target or cmd.name} (line {cmd.line})", loc=self.loc(cmd.line),
                    procedures=[Procedure(kind, cmd.name, self.loc(cmd.line), options)])
        step.nlgeom = any(isinstance(o.get("DEFORMATION"), str) and o.get("DEFORMATION") != "PETIT"
                          for o in occurrences(kw.get("COMPORTEMENT")))
        for occ in occurrences(kw.get("EXCIT")):
            ch = occ.get("CHARGE")
            if isinstance(ch, Command):
                step.loads.extend(self.loads.get(id(ch), ()))
        cham = _find(cmd, "CHAM_MATER")
        if cham is not None and id(cham) in self.chams:
            _c, _u, entries, temps = self.chams[id(cham)]
            options["materials"] = sorted({r.key for e in entries for r in e[4]})
            if any(r["relation"] in NO_ELASTICITY for r in rel):
                # a rigid-plastic law (limit analysis) takes no elasticity: its materials are not without behaviour
                for key in options["materials"]:
                    mat = self.model.materials.get(key)
                    if mat is not None and not mat.has("user"):
                        mat.blocks.append(PropertyBlock("user", "unread", [], self.loc(cmd.line),
                                                        card="NORTON_HOFF"))
                        for blk in mat.find("plastic"):   # SY is the flow stress of the law, not a hardening
                            blk.kind = "other"
            if step.procedures[0].needs.get("structural"):
                step.loads.extend(temps)
        if self.model.first_step is None:
            self.model.first_step = step.loc
        self.model.steps.append(step)


def _find(cmd: Command, key: str, depth: int = 0) -> Optional[Command]:
    """The command given to ``key`` by ``cmd`` or, a few levels down, by the commands it uses
    (CALC_MODES -> ASSE_MATRICE -> CALC_MATR_ELEM -> CHAM_MATER)."""
    val = cmd.keywords.get(key)
    if isinstance(val, Command):
        return val
    if depth >= 3:
        return None
    for v in cmd.keywords.values.values():
        for sub in (v if isinstance(v, tuple) else (v,)):
            if isinstance(sub, Command) and sub.name not in ("DEFI_MATERIAU", "LIRE_MAILLAGE"):
                found = _find(sub, key, depth + 1)
                if found is not None:
                    return found
            elif isinstance(sub, Keywords):
                inner = sub.get(key)
                if isinstance(inner, Command):
                    return inner
    return None


def _procedure_kind(cmd: Command) -> str:
    kw = cmd.keywords
    name = cmd.name
    if name == "DYNA_NON_LINE":
        schema = next((o.get("SCHEMA") for o in occurrences(kw.get("SCHEMA_TEMPS"))), None)
        return "dynamic-explicit" if schema in ("DIFF_CENTRE", "TCHAMWA") else "dynamic-implicit"
    if name in ("DYNA_VIBRA", "DYNA_LINE"):
        if kw.get("TYPE_CALCUL") == "HARM":
            return "steady-state-dynamics"
        return "modal-dynamic" if kw.get("BASE_CALCUL") == "GENE" else "dynamic-implicit"
    if ANALYSES[name] == "frequency" and kw.get("TYPE_RESU") == "MODE_FLAMB":
        return "buckle"
    if name in ("THER_LINEAIRE", "THER_NON_LINE"):
        # a list of instants makes the computation transient (a first stationary instant or not)
        return "heat-transient" if kw.get("INCREMENT") is not None else "heat-steady"
    return ANALYSES[name]


def mesh_path(folder: str, base: str) -> Optional[str]:
    for ext in (".mail", ".MAIL", ".med", ".mmed"):
        p = os.path.join(folder, base + ext)
        if os.path.isfile(p):
            return p
    return None

