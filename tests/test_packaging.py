"""The install layout: every folder with Python code is a listed package; README and CI agree."""

from __future__ import annotations

import re
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _listed() -> dict[str, str]:
    cfg = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    assert sorted(cfg["packages"]) == sorted(cfg["package-dir"])
    return cfg["package-dir"]


def test_every_code_folder_is_a_listed_package():
    mapping = _listed()
    on_disk = set()
    for top, name in (("core", "rungwise.core"), ("app", "rungwise.app")):
        for init in (ROOT / top).rglob("__init__.py"):
            rel = init.parent.relative_to(ROOT / top)
            on_disk.add(".".join([name, *rel.parts]) if rel.parts else name)
        for py in (ROOT / top).rglob("*.py"):
            assert (py.parent / "__init__.py").exists(), f"{py.parent} has code but no __init__.py"
    assert on_disk == set(mapping)
    for pkg, folder in mapping.items():
        assert (ROOT / folder / "__init__.py").exists(), pkg


def _fenced_commands() -> list[str]:
    text = (ROOT / "README.md").read_text()
    return re.findall(r"```sh\n(.+?)\n```", text)


def test_ci_runs_the_readme_test_command():
    commands = _fenced_commands()
    test_cmd = next(c for c in commands if "pytest" in c)
    ci = (ROOT / ".ci" / "run").read_text()
    assert test_cmd.strip() in ci


def test_core_never_imports_qt():
    code = ("import sys, rungwise.core, rungwise.core.evaluate, rungwise.core.solve;"
            "import rungwise.core.designfile;"
            "bad=[m for m in sys.modules if m.split('.')[0] in "
            "('PySide6','shiboken6','pyqtgraph','PyQt5','PyQt6') or m.startswith('rungwise.app')];"
            "print(bad); sys.exit(1 if bad else 0)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert out.returncode == 0, out.stdout + out.stderr


def test_command_line_never_imports_qt():
    code = ("import sys; from rungwise.app.__main__ import main;"
            "rc = main(['compute', '--format', 'json']);"
            "bad=[m for m in sys.modules if m.split('.')[0] in ('PySide6','shiboken6','pyqtgraph')];"
            "print(bad, file=sys.stderr); sys.exit(10 + rc if bad else rc)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    assert '"results"' in out.stdout


def _tracked_links() -> dict[str, str]:
    """Every tracked file that is a symbolic link → its target as stored (git mode 120000)."""
    listing = subprocess.run(["git", "-C", str(ROOT), "ls-files", "-s", "-z"], capture_output=True,
                             check=True).stdout.decode("utf-8", "surrogateescape")
    links = {}
    for entry in filter(None, listing.split("\0")):
        meta, path = entry.split("\t", 1)
        mode, blob, _stage = meta.split()
        if mode == "120000":
            target = subprocess.run(["git", "-C", str(ROOT), "cat-file", "blob", blob],
                                    capture_output=True, check=True).stdout.decode()
            links[path] = target
    return links


def _leaves(path: str, target: str) -> bool:
    """Whether a link at ``path`` (repository-relative) pointing at ``target`` leaves the repository."""
    if target.startswith(("/", "\\")) or re.match(r"^[A-Za-z]:", target):
        return True
    depth = 0
    for part in [*Path(path).parent.parts, *re.split(r"[/\\]", target)]:
        depth += -1 if part == ".." else 0 if part in ("", ".") else 1
        if depth < 0:
            return True
    return False


def test_no_tracked_link_leaves_the_repository():
    if not (ROOT / ".git").exists():
        pytest.skip("not a git checkout")
    leaving = {p: t for p, t in _tracked_links().items() if _leaves(p, t)}
    assert leaving == {}, "tracked links into one machine's folders"


def test_a_link_out_of_the_repository_is_recognised():
    assert _leaves(".venv-main", "/work/main/.venv")
    assert _leaves("docs/x", "../../elsewhere")
    assert _leaves("x", "C:\\Users\\me")
    assert not _leaves("docs/x", "../assets/icon.svg")
    assert not _leaves("a/b/c", "../d/../e")
