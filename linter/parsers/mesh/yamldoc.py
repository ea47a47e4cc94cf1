"""Typed access to the nodes of a material file, with the line of every value.

The file is composed into YAML nodes by the guarded loader (``linter.safe_yaml``), so every
value keeps its 1-based line. Wrong types and unknown keys become :class:`~linter.model.Issue`
objects on the model (never exceptions); the getters return None for a value they refused.
"""
from __future__ import annotations

import difflib
import math
from typing import Any, Iterable, Optional

from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from ...model import DeckModel, Issue, Loc
from ...safe_yaml import scalar_value

_KIND_WORDS = {MappingNode: "a mapping", SequenceNode: "a list", ScalarNode: "a single value"}


class Doc:
    """One material file being read: its path (as displayed) and the model it fills."""

    def __init__(self, path: str, model: DeckModel):
        self.path = path
        self.model = model

    # ----------------------------------------------------------------------------- locations

    def loc(self, node: Optional[Node]) -> Loc:
        return Loc(self.path, node.start_mark.line + 1 if node is not None else 1)

    def issue(self, code: str, message: str, node: Optional[Node], material: Optional[str] = None,
              **data: Any) -> None:
        self.model.issues.append(Issue(code, message, self.loc(node), material=material, data=data))

    # ----------------------------------------------------------------------------- shapes

    def kind_word(self, node: Node) -> str:
        if isinstance(node, ScalarNode):
            value = scalar_value(node)
            return "nothing" if value is None else f"the value {node.value!r}"
        return _KIND_WORDS.get(type(node), "something else")

    def wrong(self, node: Node, what: str, expected: str, material: Optional[str] = None) -> None:
        self.issue("malformed-data", f"{what} must be {expected}, not {self.kind_word(node)}", node,
                   material=material, field=what, expected=expected)

    def mapping(self, node: Node, what: str, allowed: Optional[Iterable[str]] = None,
                material: Optional[str] = None) -> Optional[list[tuple[str, Node, Node]]]:
        """(key, key node, value node) of a mapping, in file order; None (and an issue) if not a mapping.

        With ``allowed``, every other key is reported as ``unknown-key`` and left out.
        """
        if not isinstance(node, MappingNode):
            self.wrong(node, what, "a mapping", material)
            return None
        allowed = None if allowed is None else tuple(allowed)
        out = []
        for knode, vnode in node.value:
            key = knode.value if isinstance(knode, ScalarNode) else None
            if key is None:
                self.issue("malformed-data", f"{what}: a key must be a plain name", knode, material=material)
                continue
            key = str(key)
            if allowed is not None and key not in allowed:
                close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
                hint = f" (did you mean {close[0]}?)" if close else f" (known: {', '.join(allowed)})"
                self.issue("unknown-key", f"{what}: unknown key {key!r}{hint}; it is ignored", knode,
                           material=material, key=key, where=what)
                continue
            out.append((key, knode, vnode))
        return out

    def sequence(self, node: Node, what: str, material: Optional[str] = None) -> Optional[list[Node]]:
        if not isinstance(node, SequenceNode):
            self.wrong(node, what, "a list", material)
            return None
        return list(node.value)

    # ----------------------------------------------------------------------------- scalars

    def number(self, node: Node, what: str, material: Optional[str] = None) -> Optional[float]:
        """A finite number. Plain scalars such as ``2.1e5`` (a string to YAML 1.1) are read as numbers."""
        if not isinstance(node, ScalarNode):
            self.wrong(node, what, "a number", material)
            return None
        value = scalar_value(node)
        if isinstance(value, bool) or value is None:
            self.wrong(node, what, "a number", material)
            return None
        if isinstance(value, str):
            if node.style is not None:  # quoted: the author wrote text
                self.wrong(node, what, "a number", material)
                return None
            try:
                value = float(value)
            except ValueError:
                self.wrong(node, what, "a number", material)
                return None
        value = float(value)
        if not math.isfinite(value):
            self.issue("value-not-finite", f"{what} = {node.value} is not a finite number", node,
                       material=material, field=what, value=node.value)
            return None
        return value

    def text(self, node: Node, what: str, material: Optional[str] = None) -> Optional[str]:
        if not isinstance(node, ScalarNode):
            self.wrong(node, what, "a name", material)
            return None
        value = scalar_value(node)
        if value is None or isinstance(value, bool) or str(value).strip() == "":
            self.wrong(node, what, "a name", material)
            return None
        return str(node.value).strip()

    def flag(self, node: Node, what: str) -> Optional[bool]:
        value = scalar_value(node) if isinstance(node, ScalarNode) else None
        if not isinstance(value, bool):
            self.wrong(node, what, "true or false")
            return None
        return value

    def integer(self, node: Node, what: str) -> Optional[int]:
        value = scalar_value(node) if isinstance(node, ScalarNode) else None
        if isinstance(value, bool) or not isinstance(value, int):
            self.wrong(node, what, "a whole number")
            return None
        return value

    def vector(self, node: Node, what: str, size: int) -> Optional[tuple[float, ...]]:
        items = self.sequence(node, what)
        if items is None:
            return None
        if len(items) != size:
            self.issue("malformed-data", f"{what} must have {size} components, not {len(items)}", node,
                       field=what)
            return None
        out = [self.number(n, f"{what}[{i}]") for i, n in enumerate(items)]
        return None if any(v is None for v in out) else tuple(out)  # type: ignore[arg-type]
