"""Shared fixtures: the demo registry built once per test session."""
from __future__ import annotations

from pathlib import Path

import pytest

DEMO_DATA = Path(__file__).resolve().parent.parent / "fleet_data"


@pytest.fixture(scope="session", autouse=True)
def cache_outside_the_checkout(tmp_path_factory):
    """`build.py check` and `build` keep a cache folder by default: in a test session, one temporary
    folder instead of `.aerialbook-cache` in the working directory, and the key its entries are signed
    with (`incremental/signing.py`) in a temporary folder instead of the user's ~/.config."""
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("AERIALBOOK_CACHE_DIR", str(tmp_path_factory.mktemp("cache")))
        patch.setenv("XDG_CONFIG_HOME", str(tmp_path_factory.mktemp("config")))
        patch.delenv("AERIALBOOK_CACHE_KEY", raising=False)
        yield


@pytest.fixture(scope="session")
def demo_data() -> Path:
    return DEMO_DATA


@pytest.fixture(scope="session")
def demo_fleet():
    from registry import pipeline

    return pipeline.load(DEMO_DATA)


@pytest.fixture(scope="session")
def demo_site(tmp_path_factory) -> Path:
    """The demo fleet's site, built once through the whole pipeline."""
    from registry import pipeline

    out = tmp_path_factory.mktemp("demo") / "site"
    pipeline.build(DEMO_DATA, out)
    return out
