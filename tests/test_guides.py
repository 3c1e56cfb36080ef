"""The guides a message names are on the machine: in the checkout's docs/, and inside the
wheel as package data (engine/docs/); ``wheelwork guide`` lists and prints them.

.ci/run builds the wheel, checks the guides are inside it and prints one from an install
outside the checkout; here the packaging configuration that puts them there is checked, and
the finder is run on a copy laid out as an installed package."""

from __future__ import annotations

import os
import re
import subprocess
import sys
import tomllib
from pathlib import Path

from engine.cli import main
from engine.guides import folder, guide_names, guide_path, pointer

ROOT = Path(__file__).parents[1]


def test_every_guide_goes_into_the_wheel():
    # the package engine.docs is the checkout's docs/, its *.md files its package data
    tool = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    assert "engine.docs" in tool["packages"]
    assert tool["package-dir"]["engine.docs"] == "docs"
    patterns = tool["package-data"]["engine.docs"]
    shipped = {p.name for pat in patterns for p in (ROOT / "docs").glob(pat)}
    assert shipped == {p.name for p in (ROOT / "docs").iterdir() if p.is_file()}, shipped
    assert len(shipped) >= 10


def test_a_checkout_finds_its_docs_folder():
    assert folder() == ROOT / "docs"
    assert "train-format" in guide_names() and guide_path("train-format.md") == (
        ROOT / "docs" / "train-format.md")
    assert guide_path("no-such-guide") is None


def test_an_installed_layout_finds_the_guides_inside_the_package(tmp_path):
    # as a wheel installs it: engine/docs/*.md beside the modules, no docs/ beside engine/
    pkg = tmp_path / "site" / "engine"
    (pkg / "docs").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "guides.py").write_text((ROOT / "engine" / "guides.py").read_text())
    (pkg / "docs" / "train-format.md").write_text("# The train file\n")
    env = {**os.environ, "PYTHONPATH": str(tmp_path / "site")}
    out = subprocess.run(
        [sys.executable, "-c", "from engine.guides import folder, pointer, title\n"
         "print(folder()); print(pointer()); print(title('train-format'))"],
        capture_output=True, text=True, env=env, cwd=tmp_path, check=True).stdout.splitlines()
    assert out == [str(pkg / "docs"), "wheelwork guide train-format (the file: "
                   f"{pkg / 'docs' / 'train-format.md'})", "The train file"], out


def test_an_empty_train_file_names_the_guide_where_it_is(tmp_path, capsys):
    path = tmp_path / "empty.toml"
    path.write_text("# nothing yet\n")
    assert main(["ratios", str(path)]) == 1
    err = capsys.readouterr().err
    assert pointer() in " ".join(err.split()), err
    named = Path(re.search(r"\(the file: (\S+\.md)\)", " ".join(err.split())).group(1))
    assert named.is_file() and named.read_text().startswith("# The train file")


def test_the_guide_command_lists_prints_and_answers_a_slip(capsys):
    assert main(["guide"]) == 0
    listed = capsys.readouterr().out
    for name in guide_names():
        assert re.search(rf"^{re.escape(name)} +\S", listed, re.M), listed
    assert "The train file" in listed and str(folder()) in listed
    assert main(["guide", "train-format"]) == 0
    out = capsys.readouterr().out
    assert out == (ROOT / "docs" / "train-format.md").read_text().rstrip("\n") + "\n"
    assert main(["guide", "sky", "--path"]) == 0
    assert capsys.readouterr().out.strip() == str(ROOT / "docs" / "sky.md")
    assert main(["guide", "trian-format"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "did you mean 'train-format'?" in err, err
    assert main(["--help"]) == 0
    assert "wheelwork guide train-format" in capsys.readouterr().out
