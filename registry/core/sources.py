"""The registry line a value came from, as the `file:line` text figures and discrepancies carry."""
from __future__ import annotations


def where(obj, field: str) -> str:
    """`file:line` of `field` in a model object (the object's own line when the field is not written)."""
    src = obj.where(field)
    return f"{src.path}:{src.line}"
