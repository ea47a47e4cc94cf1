"""Small decks built around the unit slips analysts make, each with the fix it expects, and the
measure of how many the unit checks catch (recall) and how many of those suggest the right value.

Run it as a script to print the figures::

    python tests/units/slip_decks.py [--list]

Handbook values (SI) of the materials the decks are made of:

* steel S355: E = 210000 N/mm^2, nu = 0.3 (EN 1993-1-1, 3.2.6); rho = 7850 kg/m^3 (EN 1991-1-1, Table A.4)
* aluminium 6061-T6: E = 68.9 GPa, nu = 0.33, rho = 2700 kg/m^3 (ASM Handbook Vol. 2, properties of
  wrought aluminium alloys; EN 1999-1-1, 3.2.5 gives E = 70000 N/mm^2 and rho = 2700 kg/m^3)
* concrete C30/37: Ecm = 33 GPa (EN 1992-1-1, Table 3.1), nu = 0.2 (EN 1992-1-1, 3.1.3),
  rho = 2400 kg/m^3 (EN 1991-1-1, Table A.1, plain normal-weight concrete)
* natural rubber (about 50 Shore A): E = 5 MPa, nu = 0.49, rho = 1100 kg/m^3 (from memory: rubber
  handbooks give E 2-10 MPa and 930-1200 kg/m^3 for filled natural rubber)

Unit factors: 1 psi = 6894.757 Pa, 1 lbf = 4.4482216 N, 1 in = 0.0254 m (NIST SP 811, appendix B);
standard gravity 9.80665 m/s^2 = 386.089 in/s^2 (CGPM 1901; NIST SP 811).
"""
from __future__ import annotations

import argparse
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Optional

PSI = 6894.757293168
LBF = 4.4482216152605
INCH = 0.0254
G0 = 9.80665
#: lbf s^2/in^4 in kg/m^3 (mass unit of in-lbf-s: lbf s^2/in)
IN_LBF_S_DENSITY = LBF / INCH / INCH ** 3

#: name, E (Pa), nu, rho (kg/m^3), a material name that says what it is
MATERIALS = {
    "steel": (210e9, 0.30, 7850.0, "S355_BRACKET"),
    "aluminium": (68.9e9, 0.33, 2700.0, "ALU_6061_T6"),
    "concrete": (33e9, 0.20, 2400.0, "BETON_C30_37"),
    "rubber": (5e6, 0.49, 1100.0, "EPDM_SEAL"),
}


@dataclass
class SlipDeck:
    name: str
    text: str
    ext: str
    material: str            # material name in the deck (bulk: the MAT1 id)
    quantity: str            # the quantity whose value is wrong: "rho" or "E"
    expected: float          # the value to write in the deck's system
    slip: str


def _mm_keyword(mat: str, E: str, nu: float, rho: str, step: str) -> str:
    """A 200 x 50 x 50 mm block of two C3D8 elements, in mm / N / MPa / t/mm^3."""
    nodes = []
    k = 0
    for x in (0.0, 100.0, 200.0):
        for y, z in ((0.0, 0.0), (50.0, 0.0), (50.0, 50.0), (0.0, 50.0)):
            k += 1
            nodes.append(f"{k}, {x}, {y}, {z}")
    return ("*HEADING\nPV40 pump bracket\n*NODE, NSET=NALL\n" + "\n".join(nodes) + "\n"
            "*ELEMENT, TYPE=C3D8, ELSET=EALL\n1, 1, 5, 6, 2, 4, 8, 7, 3\n2, 5, 9, 10, 6, 8, 12, 11, 7\n"
            f"*MATERIAL, NAME={mat}\n*ELASTIC\n{E}, {nu}\n*DENSITY\n{rho}\n"
            f"*SOLID SECTION, ELSET=EALL, MATERIAL={mat}\n*BOUNDARY\n1, 1, 3\n2, 1, 3\n3, 1, 3\n4, 1, 3\n"
            f"*STEP\n{step}\n*END STEP\n")


def _m_keyword(mat: str, E: str, nu: float, rho: str) -> str:
    """The same block in metres (m / N / Pa / kg/m^3) under gravity 9.81 m/s^2."""
    nodes = []
    k = 0
    for x in (0.0, 0.1, 0.2):
        for y, z in ((0.0, 0.0), (0.05, 0.0), (0.05, 0.05), (0.0, 0.05)):
            k += 1
            nodes.append(f"{k}, {x}, {y}, {z}")
    return ("*HEADING\nPV40 pump bracket\n*NODE, NSET=NALL\n" + "\n".join(nodes) + "\n"
            "*ELEMENT, TYPE=C3D8, ELSET=EALL\n1, 1, 5, 6, 2, 4, 8, 7, 3\n2, 5, 9, 10, 6, 8, 12, 11, 7\n"
            f"*MATERIAL, NAME={mat}\n*ELASTIC\n{E}, {nu}\n*DENSITY\n{rho}\n"
            f"*SOLID SECTION, ELSET=EALL, MATERIAL={mat}\n*BOUNDARY\n1, 1, 3\n2, 1, 3\n3, 1, 3\n4, 1, 3\n"
            "*STEP\n*STATIC\n*DLOAD\nEALL, GRAV, 9.81, 0., 0., -1.\n*END STEP\n")


def _in_bulk(E: float, nu: float, rho: float) -> str:
    """An 8 x 2 x 2 in block of two CHEXA, SOL 103, MAT1 in psi with RHO as written, no PARAM,WTMASS."""
    grids = []
    k = 0
    for x in (0.0, 4.0, 8.0):
        for y, z in ((0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)):
            k += 1
            grids.append(f"GRID,{k},,{x},{y},{z}")
    return ("SOL 103\nCEND\nTITLE = PV40 pump bracket\nMETHOD = 1\nSPC = 1\nBEGIN BULK\nEIGRL,1,,,6\n"
            + "\n".join(grids) + "\n"
            "CHEXA,1,1,1,5,6,2,4,8,+H1\n+H1,7,3\nCHEXA,2,1,5,9,10,6,8,12,+H2\n+H2,11,7\n"
            "PSOLID,1,1\n"
            f"MAT1,1,{E:.5g},,{nu},{rho:.5g}\n"
            "SPC1,1,123456,1,2,3,4\nENDDATA\n")


def _g(x: float) -> str:
    return f"{x:.4g}"


def generate() -> list[SlipDeck]:
    """40 decks: 4 materials x 5 slips x (a name that says the material, or a neutral name)."""
    out = []
    steps = {"frequency": "*FREQUENCY\n6", "gravity": "*STATIC\n*DLOAD\nEALL, GRAV, 9810., 0., 0., -1.",
             "explicit": "*DYNAMIC, EXPLICIT\n1e-7, 1e-3"}
    for key, (E, nu, rho, said) in MATERIALS.items():
        for named in (True, False):
            mat = said if named else f"PV40_M{len(out) + 1}"
            tag = f"{key}-{'named' if named else 'plain'}"
            right = rho * 1e-12                       # t/mm^3
            E_mpa = _g(E / 1e6)
            # density in kg/mm^3 where t/mm^3 belongs (x 1e3 too large)
            out.append(SlipDeck(f"kg-mm3-{tag}", _mm_keyword(mat, E_mpa, nu, _g(rho * 1e-9), steps["frequency"]),
                                ".inp", mat, "rho", right, "kg/mm^3 in mm-t-s"))
            # density in g/cm^3 (x 1e9)
            out.append(SlipDeck(f"g-cm3-{tag}", _mm_keyword(mat, E_mpa, nu, _g(rho / 1000.0), steps["explicit"]),
                                ".inp", mat, "rho", right, "g/cm^3 in mm-t-s"))
            # density in kg/m^3 (x 1e12)
            out.append(SlipDeck(f"kg-m3-{tag}", _mm_keyword(mat, E_mpa, nu, _g(rho), steps["gravity"]),
                                ".inp", mat, "rho", right, "kg/m^3 in mm-t-s"))
            # moduli in psi beside an SI density, in a metre model under gravity
            out.append(SlipDeck(f"psi-si-{tag}", _m_keyword(mat, _g(E / PSI), nu, _g(rho)), ".inp", mat, "E", E,
                                "psi moduli in m-kg-s"))
            if named:
                # weight density (lbf/in^3) as RHO without PARAM,WTMASS in an in-lbf-s bulk deck
                weight = rho * G0 / (LBF / INCH ** 3)
                out.append(SlipDeck(f"weight-{key}", _in_bulk(E / PSI, nu, weight), ".bdf", "1", "rho",
                                    rho / IN_LBF_S_DENSITY, "weight density without WTMASS"))
                out.append(SlipDeck(f"weight-freq-{key}", _in_bulk(E / PSI, nu, weight).replace("EIGRL,1,,,6",
                                    "EIGRL,1,,,12"), ".bdf", "1", "rho", rho / IN_LBF_S_DENSITY,
                                    "weight density without WTMASS"))
    return out


@dataclass
class Outcome:
    deck: SlipDeck
    raised: bool
    right_fix: bool
    got: Optional[float]
    message: str


def evaluate(decks: list[SlipDeck], folder: Path) -> list[Outcome]:
    from linter.check import check_paths
    from linter.config import Config

    out = []
    for d in decks:
        p = folder / (d.name + d.ext)
        p.write_text(d.text, encoding="utf-8")
        res = check_paths([str(p)], Config())
        hits = [f for f in res.findings if f.rule in ("units/mismatch", "units/implausible")
                and f.severity in ("error", "warning") and str(f.material) == d.material]
        got = None
        for f in hits:
            w = (f.data or {}).get("write") or {}
            if d.quantity in w:
                got = float(w[d.quantity])
                break
        right = got is not None and abs(got - d.expected) <= 0.02 * abs(d.expected)
        out.append(Outcome(d, bool(hits), right, got, hits[0].message if hits else ""))
    return out


def figures(outcomes: list[Outcome]) -> tuple[float, float]:
    """(recall, share of right fixes among all decks)."""
    n = len(outcomes)
    return sum(o.raised for o in outcomes) / n, sum(o.right_fix for o in outcomes) / n


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--list", action="store_true", help="one line per deck")
    args = ap.parse_args(argv)
    decks = generate()
    with tempfile.TemporaryDirectory() as tmp:
        res = evaluate(decks, Path(tmp))
    if args.list:
        for o in res:
            print(f"{o.deck.name:28s} raised={o.raised!s:5s} right={o.right_fix!s:5s} expected={o.deck.expected:.4g} "
                  f"got={o.got if o.got is None else f'{o.got:.4g}'}  {o.message[:120]}")
    recall, right = figures(res)
    print(f"{len(res)} decks: recall {recall:.1%} ({sum(o.raised for o in res)}), right fixes {right:.1%} "
          f"({sum(o.right_fix for o in res)})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
