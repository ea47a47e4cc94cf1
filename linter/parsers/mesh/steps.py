"""The ``analysis:`` section: steps with a procedure kind of the neutral model, gravity, temperatures.

Each item is ``{kind: static, name: ..., gravity: [gx, gy, gz], temperature: {initial: T0, final: T1},
nlgeom: false}``; ``kind`` is one of ``linter.model.PROCEDURES``. ``temperature: T`` (a number) is
the final temperature. An initial temperature goes to ``DeckModel.initial_temperatures``, a final one
is a temperature load of the step, gravity a gravity load (magnitude and vector).
"""
from __future__ import annotations

import math

from yaml.nodes import MappingNode, Node

from ...model import PROCEDURES, Load, Procedure, Step
from .yamldoc import Doc

STEP_KEYS = ("kind", "name", "gravity", "temperature", "nlgeom")


def read_analysis(doc: Doc, node: Node) -> None:
    items = doc.sequence(node, "analysis")
    model = doc.model
    for i, snode in enumerate(items or ()):
        where = f"analysis[{i + 1}]"
        fields = doc.mapping(snode, where, STEP_KEYS)
        if fields is None:
            continue
        got = {k: vn for k, _kn, vn in fields}
        name = doc.text(got["name"], f"{where}.name") if "name" in got else None
        step = Step(name=name or f"analysis {i + 1}", loc=doc.loc(snode))
        if "kind" in got:
            kind = doc.text(got["kind"], f"{where}.kind")
            if kind is not None and kind.lower() not in PROCEDURES:
                doc.issue("malformed-data", f"{where}: kind {kind!r} is not one of {', '.join(PROCEDURES)}",
                          got["kind"], field="kind", value=kind)
            elif kind is not None:
                step.procedures.append(Procedure(kind.lower(), kind.lower(), doc.loc(got["kind"])))
        else:
            doc.issue("malformed-data", f"{where} has no kind: (one of {', '.join(PROCEDURES)})", snode, field="kind")
        if "nlgeom" in got:
            step.nlgeom = bool(doc.flag(got["nlgeom"], f"{where}.nlgeom"))
        if "gravity" in got:
            g = doc.vector(got["gravity"], f"{where}.gravity", 3)
            if g is not None:
                step.loads.append(Load("gravity", math.sqrt(sum(x * x for x in g)), doc.loc(got["gravity"]),
                                       vector=g))
        if "temperature" in got:
            _temperature(doc, step, got["temperature"], where)
        model.steps.append(step)
        if model.first_step is None:
            model.first_step = step.loc


def _temperature(doc: Doc, step: Step, node: Node, where: str) -> None:
    model = doc.model
    if not isinstance(node, MappingNode):
        value = doc.number(node, f"{where}.temperature")
        if value is not None:
            step.loads.append(Load("temperature", value, doc.loc(node)))
        return
    for key, _kn, vnode in doc.mapping(node, f"{where}.temperature", ("initial", "final")) or ():
        value = doc.number(vnode, f"{where}.temperature.{key}")
        if value is None:
            continue
        if key == "initial":
            model.initial_temperatures.append(Load("temperature", value, doc.loc(vnode)))
        else:
            step.loads.append(Load("temperature", value, doc.loc(vnode)))
