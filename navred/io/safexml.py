"""XML from an untrusted file, streamed quickly with no entity ever expanded.

Edge code. A GPX track or a spreadsheet's sheet has no use for a document type declaration, and
it is the only place XML can declare an entity (the "billion laughs" and external entities that
defusedxml documents). So a document that declares one is refused outright, before it is parsed,
as defusedxml's ``forbid_dtd`` does; what remains can hold only the five predefined entities
and character references, and is parsed by the standard library's C parser (expat through
``xml.etree.ElementTree.XMLPullParser``), several times quicker than defusedxml's pure-Python
parser on a track of a million points or a sheet of a million cells (docs/speed.md).
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from typing import BinaryIO

from ..errors import NavredError

#: Bytes read at a time from the stream (small pieces keep the parser's events few at a time: quicker).
CHUNK_BYTES = 1 << 16
#: The prolog (declaration, comments, processing instructions) a document may have before its first element.
MAX_PROLOG_BYTES = 1 << 16
_FIRST_ELEMENT = re.compile(rb"<[A-Za-z_:]")


class XmlRefused(NavredError):
    """An XML document navred will not parse (it declares a document type), or one that is not well formed."""


def _check_prolog(head: bytes, what: str) -> None:
    found = _FIRST_ELEMENT.search(head)
    prolog = head[:found.start()] if found else head
    if b"<!DOCTYPE" in prolog or b"<!ENTITY" in prolog:
        raise XmlRefused(f"{what} declares XML entities or a document type, which it does not need (an XML bomb?): "
                         "refused")
    if found is None and len(head) >= MAX_PROLOG_BYTES:
        raise XmlRefused(f"{what} has no element in its first {MAX_PROLOG_BYTES // 1024} KiB: not a document navred "
                         "reads")


def iterparse(stream: BinaryIO, what: str, events: tuple[str, ...] = ("end",)) -> Iterator[tuple[str, object]]:
    """(event, element) of an XML stream, as ``xml.etree.ElementTree.iterparse`` gives them, after refusing a
    document type declaration; ``what`` names the document in a refusal. Elements are the caller's to clear."""
    from xml.etree.ElementTree import ParseError, XMLPullParser

    parser = XMLPullParser(events=events)
    head = b""
    checked = False
    try:
        while True:
            chunk = stream.read(CHUNK_BYTES)
            if not checked:
                head += chunk
                if _FIRST_ELEMENT.search(head) is None and chunk and len(head) < MAX_PROLOG_BYTES:
                    continue
                _check_prolog(head[:MAX_PROLOG_BYTES], what)
                checked = True
                chunk, head = head, b""
            if not chunk:
                break
            parser.feed(chunk)
            yield from parser.read_events()
        parser.close()
        yield from parser.read_events()
    except ParseError as exc:
        raise XmlRefused(f"{what} is not well-formed XML: {exc}") from None


def parse_with(stream: BinaryIO, what: str, start, end, text) -> None:
    """Parse an XML stream with expat and these handlers (``start(name, attributes)``, ``end(name)``,
    ``text(data)``; names are 'namespace local'), refusing a document type or an entity declaration, as
    defusedxml does, the moment one appears; ``what`` names the document in a refusal."""
    from xml.parsers import expat

    def refuse(*_args):
        raise XmlRefused(f"{what} declares XML entities or a document type, which it does not need (an XML bomb?): "
                         "refused")

    parser = expat.ParserCreate(namespace_separator=" ")
    parser.StartDoctypeDeclHandler = refuse
    parser.EntityDeclHandler = refuse
    parser.UnparsedEntityDeclHandler = refuse
    parser.ExternalEntityRefHandler = refuse
    parser.StartElementHandler = start
    parser.EndElementHandler = end
    parser.CharacterDataHandler = text
    parser.buffer_text = True
    try:
        while True:
            chunk = stream.read(CHUNK_BYTES)
            parser.Parse(chunk, not chunk)
            if not chunk:
                break
    except expat.ExpatError as exc:
        raise XmlRefused(f"{what} is not well-formed XML: {exc}") from None


__all__ = ["iterparse", "parse_with", "XmlRefused", "MAX_PROLOG_BYTES"]
