"""Comparing two builds, by the names the command line, the build and the site use (`diff.compare`,
`diff.read_side`...). The work lives in:

- `output.comparison`: what changed, as data (`Comparison` and its change records, `Tolerance`);
- `output.compare`: comparing two build records (`compare`);
- `output.compare_text`: the comparison for the terminal and as JSON (`as_text`, `as_json`);
- `output.display`: how a value reads there and on the site;
- `output.sides`: reading a side: a built site, a record file, a registry folder or `git:REV` (`read_side`);
- `site.changes`: the site's changes page (`changes_page`).

This module only re-exports those names, for registry/cli.py, registry/pipeline.py, registry/site/render.py
and the tests, which still say `diff.<name>`; new code imports from the modules above.
"""
from __future__ import annotations

from registry.output.compare import compare
from registry.output.compare_text import as_json, as_text, summary_line, to_dict
from registry.output.comparison import (DEFAULT_ABS_TOL, DEFAULT_REL_TOL, Comparison, DiscrepancyChange, FieldChange,
                                        FigureChange, InstallationChange, ItemChange, SideInfo, Tolerance)
from registry.output.sides import GIT_PREFIX, Side, read_side, side_kind
from registry.site.changes import changes_page

__all__ = ["DEFAULT_ABS_TOL", "DEFAULT_REL_TOL", "GIT_PREFIX", "Comparison", "DiscrepancyChange", "FieldChange",
           "FigureChange", "InstallationChange", "ItemChange", "Side", "SideInfo", "Tolerance", "as_json", "as_text",
           "changes_page", "compare", "read_side", "side_kind", "summary_line", "to_dict"]
