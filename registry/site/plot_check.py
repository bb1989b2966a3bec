"""A drawn plot read back from the cache is published only if it is a plain drawing.

The cache folder is untrusted input (`incremental/store.py`): an entry can be well formed, carry a
correct checksum and still have been written by someone else. A plot is therefore accepted from the
cache only if its SVG text parses as XML and holds nothing that runs or fetches anything: no script,
foreignObject, iframe, embed or object element, no event-handler attribute (`on...`), no link or style
reference other than to an element of the same drawing (`#id`), no DOCTYPE with an internal subset or
entity declaration. Matplotlib's own SVG passes (`tests/test_hostile_cache.py` holds both ways);
anything else is drawn again.
"""
from __future__ import annotations

import re
import xml.etree.ElementTree as ElementTree

FORBIDDEN_ELEMENTS = {"script", "foreignobject", "iframe", "embed", "object", "handler", "listener"}
LINK_ATTRIBUTES = {"href", "src", "action", "formaction", "data"}
_URL = re.compile(r"url\s*\(\s*['\"]?\s*([^)'\"\s]*)", re.IGNORECASE)
_IMPORT = re.compile(r"@import|expression\s*\(|javascript:", re.IGNORECASE)


def local_name(name: str) -> str:
    """An XML name without its namespace, lower case: `{http://www.w3.org/1999/xlink}href` → `href`."""
    return name.rsplit("}", 1)[-1].lower()


def plain_svg(text: str) -> bool:
    """True when `text` is an SVG drawing that neither runs nor fetches anything (see the module)."""
    if not isinstance(text, str) or "<!ENTITY" in text or re.search(r"<!DOCTYPE[^>]*\[", text):
        return False
    try:
        root = ElementTree.fromstring(text)
    except (ElementTree.ParseError, ValueError):
        return False
    if local_name(root.tag) != "svg":
        return False
    for element in root.iter():
        if not isinstance(element.tag, str) or local_name(element.tag) in FORBIDDEN_ELEMENTS:
            return False
        for name, value in element.attrib.items():
            if not plain_attribute(local_name(name), value):
                return False
        if local_name(element.tag) == "style" and not plain_style(element.text or ""):
            return False
    return True


def plain_attribute(name: str, value: str) -> bool:
    if name.startswith("on"):
        return False
    if name in LINK_ATTRIBUTES and not value.strip().startswith("#"):
        return False
    return plain_style(value)


def plain_style(text: str) -> bool:
    """CSS (or an attribute value) that refers only to elements of the same drawing."""
    if _IMPORT.search(text):
        return False
    return all(target.startswith("#") for target in _URL.findall(text))
