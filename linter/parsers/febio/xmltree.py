"""A small element tree with line numbers, read through defusedxml's SAX parser.

Only the skeleton of a model file comes here (the mesh blocks are cut out beforehand by
:mod:`linter.parsers.febio.scan`), so a plain Python object per element is fine. Entity
declarations, external entities and DTD references to other files are refused by defusedxml;
nesting deeper than :data:`MAX_DEPTH` is refused here. Every refusal is an :class:`XmlRefused`
with the line where it happened, never another exception.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterator, Optional

#: deeper nesting than this is refused (real models nest fewer than 12 levels)
MAX_DEPTH = 64
#: more elements than this in the skeleton are refused (real skeletons hold a few thousand)
MAX_ELEMENTS = 2_000_000


class XmlRefused(Exception):
    """The XML was not read: ``code`` is the parse rule (xml-refused, xml-malformed, xml-unavailable)."""

    def __init__(self, code: str, message: str, line: int = 1):
        super().__init__(message)
        self.code, self.message, self.line = code, message, line


@dataclass(slots=True)
class Node:
    tag: str
    attrib: dict
    line: int
    text: str = ""
    children: list = field(default_factory=list)
    parent: Optional["Node"] = None

    def find(self, tag: str) -> Optional["Node"]:
        for c in self.children:
            if c.tag == tag:
                return c
        return None

    def findall(self, tag: str) -> list["Node"]:
        return [c for c in self.children if c.tag == tag]

    def iter(self, tag: Optional[str] = None) -> Iterator["Node"]:
        stack = [self]
        while stack:
            n = stack.pop()
            if tag is None or n.tag == tag:
                yield n
            stack.extend(reversed(n.children))

    def get(self, key: str, default=None):
        return self.attrib.get(key, default)


def _handler_class():
    from xml.sax.handler import ContentHandler

    class _Builder(ContentHandler):
        def __init__(self):
            super().__init__()
            self.root: Optional[Node] = None
            self.stack: list[Node] = []
            self.texts: list[list[str]] = []
            self.sizes: list[int] = []
            self.count = 0
            self.locator = None

        def setDocumentLocator(self, locator):
            self.locator = locator

        def _line(self) -> int:
            return self.locator.getLineNumber() if self.locator is not None else 0

        def startElement(self, name, attrs):
            self.count += 1
            if len(self.stack) >= MAX_DEPTH:
                raise XmlRefused("xml-refused", f"elements are nested more than {MAX_DEPTH} levels deep "
                                                f"(<{name[:40]}>): refused", self._line())
            if self.count > MAX_ELEMENTS:
                raise XmlRefused("xml-refused", f"more than {MAX_ELEMENTS} elements outside the mesh blocks: "
                                                "refused", self._line())
            node = Node(name, dict(attrs.items()), self._line(), parent=self.stack[-1] if self.stack else None)
            if self.stack:
                self.stack[-1].children.append(node)
            else:
                self.root = node
            self.stack.append(node)
            self.texts.append([])
            self.sizes.append(0)

        def endElement(self, name):
            node = self.stack.pop()
            self.sizes.pop()
            node.text = "".join(self.texts.pop()).strip()

        def characters(self, content):
            if self.texts and self.sizes[-1] < 1 << 20:     # a parameter value is short; keep at most 1 MiB
                if not self.texts[-1] and content.isspace():
                    return                                  # indentation before children or text
                self.texts[-1].append(content)
                self.sizes[-1] += len(content)

    return _Builder


def parse_bytes(data: bytes) -> Node:
    """The element tree of ``data``; raises :class:`XmlRefused` for anything unsafe or malformed."""
    try:
        import defusedxml.sax as dsax
        from defusedxml import DefusedXmlException
    except ImportError:
        raise XmlRefused("xml-unavailable", "reading FEBio models needs the defusedxml package, which is not "
                                            "installed (pip install defusedxml)") from None
    from xml.sax import SAXParseException

    builder = _handler_class()()
    try:
        dsax.parseString(data, builder, forbid_dtd=False, forbid_entities=True, forbid_external=True)
    except XmlRefused:
        raise
    except DefusedXmlException as exc:
        line = builder._line() or 1
        what = type(exc).__name__
        why = {"EntitiesForbidden": "declares entities (an entity-expansion attack, or a file that depends on "
                                    "them): refused, no entity was expanded",
               "ExternalReferenceForbidden": "refers to an external entity or document: refused, nothing was "
                                             "fetched",
               "DTDForbidden": "has a document type declaration: refused"}.get(what, f"is unsafe XML ({what})")
        raise XmlRefused("xml-refused", f"the XML {why}", line) from None
    except SAXParseException as exc:
        raise XmlRefused("xml-malformed", f"the XML is not well-formed: {exc.getMessage()} "
                                          f"(column {exc.getColumnNumber()})", exc.getLineNumber() or 1) from None
    except LookupError as exc:  # an encoding name in the XML declaration that Python does not know
        raise XmlRefused("xml-malformed", f"the XML declares an encoding that cannot be read ({exc})", 1) from None
    except (RecursionError, MemoryError, ValueError, UnicodeError) as exc:
        raise XmlRefused("xml-malformed", f"the XML cannot be read ({type(exc).__name__})",
                         builder._line() or 1) from None
    if builder.root is None:
        raise XmlRefused("xml-malformed", "the file holds no XML element", 1)
    return builder.root
