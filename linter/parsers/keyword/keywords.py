"""The keywords CalculiX reads, squeezed (upper case, no blanks), and the nearest one to a misspelling.

Source: the keyword cards CalculiX 2.20 recognises (its input routines compare the card image with
these names; read from the keyword strings of the ccx 2.20 solver and the CalculiX CrunchiX User's
Manual, section "Input deck format"). A keyword not in this set is skipped by the solver with the
warning "card image cannot be interpreted", together with its data lines.
"""
from __future__ import annotations

import difflib
import re
from typing import Optional

#: a "keyword" that is a number (``*5e8,0``): a data line written with a leading '*'
STRAY_DATA = re.compile(r"[-+.]?\d")

CALCULIX_KEYWORDS = frozenset("""
AMPLITUDE BASEMOTION BEAMGENERALSECTION BEAMSECTION BOUNDARY BOUNDARYF BUCKLE CFD CFLUX CHANGECONTACTTYPE
CHANGEFRICTION CHANGEMATERIAL CHANGEPLASTIC CHANGESOLIDSECTION CHANGESURFACEBEHAVIOR CLEARANCE CLOAD
COMPLEXFREQUENCY CONDUCTIVITY CONSTRAINT CONTACTDAMPING CONTACTFILE CONTACTOUTPUT CONTACTPAIR CONTACTPRINT
CONTROLS CORRELATEDLOADS CORRELATIONLENGTH COUPLEDTEMPERATURE-DISPLACEMENT COUPLING CRACKPROPAGATION CREEP
CYCLICHARDENING CYCLICSYMMETRYMODEL DAMPING DASHPOT DEFORMATIONPLASTICITY DENSITY DEPVAR DESIGNRESPONSE
DESIGNVARIABLES DFLUX DISTRIBUTING DISTRIBUTINGCOUPLING DISTRIBUTION DISTRIBUTIONTABLE DLOAD DSLOAD DYNAMIC
ELASTIC ELECTRICALCONDUCTIVITY ELECTROMAGNETICS ELEMENT ELEMENTOUTPUT ELFILE ELPRINT ELSET ENDSTEP EQUATION
EQUATIONF EXPANSION FACEPRINT FEASIBLEDIRECTION FILM FILTER FLUIDCONSTANTS FLUIDSECTION FREQUENCY FRICTION GAP
GAPCONDUCTANCE GAPHEATGENERATION GEOMETRICCONSTRAINT GEOMETRICTOLERANCE GREEN HCF HEADING HEATTRANSFER
HEATTRANSFERMODIFIED HYPERELASTIC HYPERFOAM INCLUDE INITIALCONDITIONS INITIALSTRAININCREASE KINEMATIC
MAGNETICPERMEABILITY MASS MASSFLOW MATERIAL MEMBRANESECTION MODALDAMPING MODALDYNAMIC MODELCHANGE MPC
NETWORKMPC NOANALYSIS NODALTHICKNESS NODE NODEFILE NODEOUTPUT NODEPRINT NORMAL NSET OBJECTIVE ORIENTATION
OUTPUT PHYSICALCONSTANTS PLASTIC PRE-TENSIONSECTION RADIATE RANDOMFIELD REFINEMESH RESTART
RETAINEDNODALDOFS RIGIDBODY ROBUSTDESIGN SECTIONPRINT SELECTCYCLICSYMMETRYMODES SENSITIVITY SHELLSECTION
SOLIDSECTION SPECIFICGASCONSTANT SPECIFICHEAT SPRING STATIC STATICOUTPUT STEADYSTATEDYNAMICS STEP SUBMODEL
SUBSTRUCTUREGENERATE SUBSTRUCTUREMATRIXOUTPUT SURFACE SURFACEBEHAVIOR SURFACEINTERACTION TEMPERATURE TIE
TIMEPOINTS TRANSFORM TRANSFORMF UNCOUPLEDTEMPERATURE-DISPLACEMENT USERELEMENT USERMATERIAL USERSECTION
VALUESATINFINITY VIEWFACTOR VISCO
""".split())

#: the written form of each squeezed keyword that has blanks in the manual (for the suggestion)
_SPACED = {k.replace(" ", ""): k for k in """
BASE MOTION|BEAM GENERAL SECTION|BEAM SECTION|CHANGE CONTACT TYPE|CHANGE FRICTION|CHANGE MATERIAL|CHANGE PLASTIC|
CHANGE SOLID SECTION|CHANGE SURFACE BEHAVIOR|COMPLEX FREQUENCY|CONTACT DAMPING|CONTACT FILE|CONTACT OUTPUT|
CONTACT PAIR|CONTACT PRINT|CORRELATED LOADS|CORRELATION LENGTH|COUPLED TEMPERATURE-DISPLACEMENT|CRACK PROPAGATION|
CYCLIC HARDENING|CYCLIC SYMMETRY MODEL|DEFORMATION PLASTICITY|DESIGN RESPONSE|DESIGN VARIABLES|
DISTRIBUTING COUPLING|DISTRIBUTION TABLE|ELECTRICAL CONDUCTIVITY|ELEMENT OUTPUT|EL FILE|EL PRINT|END STEP|
FACE PRINT|FEASIBLE DIRECTION|FLUID CONSTANTS|FLUID SECTION|GAP CONDUCTANCE|GAP HEAT GENERATION|
GEOMETRIC CONSTRAINT|GEOMETRIC TOLERANCE|HEAT TRANSFER|INITIAL CONDITIONS|INITIAL STRAIN INCREASE|
MAGNETIC PERMEABILITY|MASS FLOW|MEMBRANE SECTION|MODAL DAMPING|MODAL DYNAMIC|MODEL CHANGE|NETWORK MPC|
NO ANALYSIS|NODAL THICKNESS|NODE FILE|NODE OUTPUT|NODE PRINT|PHYSICAL CONSTANTS|PRE-TENSION SECTION|RANDOM FIELD|
REFINE MESH|RETAINED NODAL DOFS|RIGID BODY|ROBUST DESIGN|SECTION PRINT|SELECT CYCLIC SYMMETRY MODES|SHELL SECTION|
SOLID SECTION|SPECIFIC GAS CONSTANT|SPECIFIC HEAT|STEADY STATE DYNAMICS|SUBSTRUCTURE GENERATE|
SUBSTRUCTURE MATRIX OUTPUT|SURFACE BEHAVIOR|SURFACE INTERACTION|TIME POINTS|UNCOUPLED TEMPERATURE-DISPLACEMENT|
USER ELEMENT|USER MATERIAL|USER SECTION|VALUES AT INFINITY""".replace("\n", "").split("|")}


def written(key: str) -> str:
    """``*SOLID SECTION`` for ``SOLIDSECTION``."""
    return "*" + _SPACED.get(key, key)


def is_known(key: str) -> bool:
    return key in CALCULIX_KEYWORDS


def closest(key: str) -> Optional[str]:
    """The known keyword nearest to ``key`` (squeezed), or None when none is near."""
    near = difflib.get_close_matches(key, CALCULIX_KEYWORDS, n=1, cutoff=0.75)
    return near[0] if near else None


def report_unknown(rd, kw, raw: bytes, prev, issues: list, dialect: str, material: Optional[str]) -> None:
    """A keyword the solver does not know: a data line with a stray '*' (reported at its own line, folding
    the "no data line" of the card above it), or a misspelling (with the nearest known keyword)."""
    if STRAY_DATA.match(kw.key):
        before = ""
        if prev is not None and issues and issues[-1].code == "malformed-data" \
                and issues[-1].loc == prev.loc and "has no data line" in issues[-1].message:
            issues.pop()          # the card above lacks its data because of this line: one finding
            before = f"; {prev.written} (line {prev.loc.line}) is left without data"
        text = raw.decode("latin-1").strip()[:60]
        rd.issue("malformed-data", f"the line '{text}' starts with '*', so the solver reads it as a keyword "
                 f"it does not know and skips it{before}: a data line must not start with '*'", kw.loc.line,
                 line_text=text)
        return
    if dialect != "calculix" or is_known(kw.key):
        return
    near = closest(kw.key)
    hint = f"; did you mean {written(near)}?" if near else ""
    rd.issue("unknown-keyword", f"{kw.written} is not a CalculiX keyword: the solver skips it and its data "
             f"lines{hint}", kw.loc.line, material=material, keyword=kw.written,
             closest=written(near) if near else None)
