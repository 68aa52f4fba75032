"""OMM XML: the CCSDS 502.0-B NDM/XML layout, ``ndm/omm/body/segment`` with ``metadata``
and ``data/meanElements`` + ``data/tleParameters``.

Parsed with expat into a small tree that remembers each element's line, so that a message
points at the keyword's own line; a DOCTYPE declaration (and with it any entity
expansion) is refused.
"""

from __future__ import annotations

from xml.parsers import expat

from planner.elements.model import ElementSet
from planner.elements.omm import _clean_value, _omm_element_set
from planner.errors import UserError


class _Node:
    __slots__ = ("tag", "line", "children", "text")

    def __init__(self, tag: str, line: int):
        self.tag = tag
        self.line = line
        self.children: list[_Node] = []
        self.text = ""

    def child(self, tag: str) -> _Node | None:
        return next((c for c in self.children if c.tag == tag), None)

    def iter(self, tag: str):
        stack = [self]
        while stack:
            node = stack.pop()
            if node.tag == tag:
                yield node
            stack.extend(reversed(node.children))


def _local_name(name: str) -> str:
    return name.rsplit("}", 1)[-1].rsplit(":", 1)[-1]


def _parse_xml(text: str, label: str) -> _Node:
    parser = expat.ParserCreate(encoding="UTF-8")  # the text is decoded already, whatever it declares
    stack: list[_Node] = []
    roots: list[_Node] = []

    def start(name, _attributes):
        node = _Node(_local_name(name), parser.CurrentLineNumber)
        (stack[-1].children if stack else roots).append(node)
        stack.append(node)

    def end(_name):
        stack.pop()

    def characters(data):
        if stack:
            stack[-1].text += data

    def no_doctype(*_args):
        raise UserError(f"{label}:{parser.CurrentLineNumber}: OMM XML must not carry a DOCTYPE declaration; remove it")

    parser.StartElementHandler = start
    parser.EndElementHandler = end
    parser.CharacterDataHandler = characters
    parser.StartDoctypeDeclHandler = no_doctype
    try:
        parser.Parse(text.encode("utf-8"), True)
    except expat.ExpatError as exc:
        raise UserError(
            f"{label}:{exc.lineno}: not well-formed XML: {expat.ErrorString(exc.code)} (column {exc.offset + 1})"
        ) from None
    except RecursionError:  # pragma: no cover - expat builds no Python recursion
        raise UserError(f"{label}: not valid OMM XML: nested too deeply") from None
    return roots[0]


def _read_omm_xml(text: str, label: str) -> list[ElementSet]:
    root = _parse_xml(text, label)
    segments = list(root.iter("segment"))
    if not segments:
        raise UserError(
            f"{label}:{root.line}: no OMM segment found; expected CCSDS NDM/XML ndm/omm/body/segment with metadata and data"
        )
    element_sets = []
    for number, segment in enumerate(segments, start=1):
        where = f"{label}:{segment.line}: segment {number}"
        metadata = segment.child("metadata")
        data = segment.child("data")
        if metadata is None or data is None:
            missing = "metadata" if metadata is None else "data"
            raise UserError(
                f"{where}: <segment> has no <{missing}>; an OMM segment holds "
                "<metadata> and <data> (with <meanElements> and <tleParameters>)"
            )
        mean_elements = data.child("meanElements")
        if mean_elements is None:
            raise UserError(
                f"{label}:{data.line}: segment {number}: <data> has no <meanElements>; "
                "it holds EPOCH, MEAN_MOTION, ECCENTRICITY, ..."
            )
        fields: dict[str, str | None] = {}
        lines: dict[str, int] = {}
        for block in (metadata, mean_elements, data.child("tleParameters")):
            if block is None:
                continue
            for item in block.children:
                if item.tag.upper() == "COMMENT":
                    continue
                fields[item.tag.upper()] = _clean_value(item.text)
                lines[item.tag.upper()] = item.line
        try:
            element_sets.append(_omm_element_set(fields, where, f"{label}:{segment.line}"))
        except UserError as exc:
            # Point at the keyword's own line when the message names a keyword we saw.
            message = str(exc)
            for key, line in lines.items():
                if message.startswith(f"{where}: {key} "):
                    message = f"{label}:{line}: segment {number}: " + message[len(where) + 2 :]
                    break
            raise UserError(message) from None
    return element_sets
