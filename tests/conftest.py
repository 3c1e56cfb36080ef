"""Shared for every test: the interface keeps its recent files under the user's config folder,
so each test gets a config folder of its own (never the real one in the home folder)."""

import pytest


@pytest.fixture(autouse=True)
def _own_config_folder(tmp_path_factory, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path_factory.mktemp("config")))
