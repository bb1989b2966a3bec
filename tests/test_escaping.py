"""The templates' quicker escape gives markupsafe's output exactly (the reference is the library itself,
MarkupSafe 3.0's `markupsafe.escape`, from the package registry), and the site's templates use it."""
from __future__ import annotations

import math

import markupsafe
import pytest
from markupsafe import Markup

from registry.site import escaping
from registry.site.environment import environment


class Html:
    def __html__(self):
        return "<b>already safe</b>"


class Text(str):
    pass


VALUES = ["", "plain", "a < b & c > d", "\"quoted\" and 'single'", "<script>alert(1)</script>",
          "&amp; already", "ünïcödé — 50 Ω ±2 %", "\x00\x1b[31m", Markup("<i>safe</i>"), Markup(""),
          0, -7, 10**30, True, False, None, 3.5, -0.0, 1e300, 1e-300, math.inf, -math.inf, math.nan,
          Html(), Text("<sub>"), ("tuple", "<x>"), ["<list>"], 2 + 3j]


@pytest.mark.parametrize("value", VALUES, ids=[repr(v)[:30] for v in VALUES])
def test_quick_escape_equals_markupsafe(value):
    quick = escaping.escape(value)
    reference = markupsafe.escape(value)
    assert type(quick) is Markup
    assert str(quick) == str(reference)


def test_site_templates_escape_through_it_and_still_escape_hostile_text():
    env = environment()
    template = env.from_string("{{ text }}|{{ number }}|{{ safe }}")
    out = template.render(text='<img src=x onerror="alert(1)">', number=-1.5, safe=Markup("<br>"))
    assert out == "&lt;img src=x onerror=&#34;alert(1)&#34;&gt;|-1.5|<br>"
    compiled = env.compile(env.loader.get_source(env, "base.html")[0], name="base.html", raw=True)
    assert "from registry.site.escaping import escape" in compiled.splitlines()[-1]
