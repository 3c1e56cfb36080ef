"""Shared for every test: the interface keeps its recent files under the user's config folder,
so each test gets a config folder of its own (never the real one in the home folder); and the
skies most test files read, one of each a module."""

import pytest


@pytest.fixture(autouse=True)
def _own_config_folder(tmp_path_factory, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path_factory.mktemp("config")))


@pytest.fixture(scope="module")
def sky():
    """The default sky (JPL DE421)."""
    from engine.sky import Sky

    return Sky()


@pytest.fixture(scope="module")
def sky406():
    """JPL DE406, skipped where the 'ancient' extra is not installed."""
    pytest.importorskip("de406", reason="the 'ancient' extra (de406) is not installed")
    from engine.sky import Sky

    return Sky("de406")
