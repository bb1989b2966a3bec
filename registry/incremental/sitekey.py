"""The key of a whole published site: everything its bytes depend on, hashed.

A build whose key equals the one recorded in the published site's marker file would write exactly the
same files (builds are reproducible), so it leaves the site as it is. The key covers every file under the
data folder (hidden ones such as .git aside), the tool's own code, data and templates, the versions of
Python and of the libraries that shape the output, the as-of date, the build information shown in the
footer and the compared build's record. (A naive build keeps nothing, so it has no key.)
"""
from __future__ import annotations

from datetime import date
from pathlib import Path

from registry.incremental.keys import content_parts, key_of


def site_key(data_dir: Path, as_of: date, build_info: object, baseline_text: str) -> str:
    """Key of the site a build of `data_dir` would publish. `build_info` is shown in every footer (its
    repr is hashed); `baseline_text` is the compared build's record as JSON text, "" without one."""
    return key_of(str(Path(data_dir).resolve()), as_of.isoformat(), repr(build_info),
                  baseline_text, *content_parts(Path(data_dir)))
