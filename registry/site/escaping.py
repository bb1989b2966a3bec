"""HTML escaping for the templates: markupsafe's `escape`, with a quicker way for the values pages print
most (plain text, numbers, text already marked safe).

A large build's pages print tens of thousands of values an aircraft, and Jinja escapes every one with
`markupsafe.escape`: a Python function around markupsafe's C routine, which builds its `Markup` through
the Python-level `Markup.__new__` and asks each value for `__html__`. For a `str`, an `int`, a `float` or
a `Markup` this does the same work directly (a `Markup` is returned as it is: it is immutable); anything
else (a value with its own `__html__`, `None`, a `bool`, a subclass of `str`) goes to `markupsafe.escape`.
`tests/test_escaping.py` holds the two to the same output. The compiled templates call it through
`environment.SiteEnvironment` (`code_generator_class`).
"""
from __future__ import annotations

from typing import Any

import markupsafe
from markupsafe import Markup

try:  # the C routine `markupsafe.escape` wraps (MarkupSafe 3.0); without it, markupsafe's own escape
    from markupsafe._speedups import _escape_inner
except ImportError:  # pragma: no cover - MarkupSafe without its C extension, or a later layout
    _escape_inner = None

_new = str.__new__


def quick_escape(value: Any) -> Markup:
    """`markupsafe.escape(value)`: the same text, as `Markup`."""
    kind = type(value)
    if kind is str:
        return _new(Markup, _escape_inner(value))
    if kind is Markup:
        return value
    if kind is float or kind is int:
        return _new(Markup, str(value))  # digits, a sign, a dot, "e", "inf" or "nan": nothing to escape
    return markupsafe.escape(value)


escape = quick_escape if _escape_inner is not None else markupsafe.escape
