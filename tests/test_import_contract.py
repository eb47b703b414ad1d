"""The import contract, read from the source with ``ast`` (imports inside functions count too):

- no import circle anywhere in ``core/`` or ``app/``;
- ``core`` never imports ``app`` nor Qt;
- the Qt-free parts of ``app`` (the rooms ``cli/`` and ``export/``, the views' ``*_job`` and
  ``*_report`` helpers, and the modules in ``QT_FREE_MODULES``) never import Qt, and nothing they
  import at module level does.
"""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGES = {"core": "rungwise.core", "app": "rungwise.app"}
QT = ("PySide6", "shiboken6", "pyqtgraph", "PyQt5", "PyQt6")
QT_FREE_ROOMS = ("rungwise.app.cli", "rungwise.app.export")
QT_FREE_MODULES = {
    "rungwise.app", "rungwise.app.__main__",
    "rungwise.app.plots.specs", "rungwise.app.plots.decimate",
    "rungwise.app.window.comparison_state", "rungwise.app.window.recent_files",
    "rungwise.app.window.memory", "rungwise.app.window.autosave", "rungwise.app.window.texts",
    "rungwise.app.window.view_registry",
}


def _modules() -> dict[str, Path]:
    out = {}
    for top, pkg in PACKAGES.items():
        for path in (ROOT / top).rglob("*.py"):
            parts = list(path.relative_to(ROOT / top).with_suffix("").parts)
            if parts[-1] == "__init__":
                parts.pop()
            out[".".join([pkg, *parts])] = path
    return out


MODULES = _modules()


def _imports(name: str) -> list[tuple[str, bool]]:
    """(imported module, at module level?) for every import in module ``name``; a name taken from
    a package counts as its submodule when there is one."""
    path = MODULES[name]
    tree = ast.parse(path.read_text(encoding="utf-8"))
    top_level = {id(n) for n in tree.body}
    for node in tree.body:  # imports under a module-level `if`/`try` run at import time too
        if isinstance(node, ast.If | ast.Try):
            top_level |= {id(n) for n in ast.walk(node)}
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            targets = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = name.split(".") if path.name == "__init__.py" else name.split(".")[:-1]
                base = base[: len(base) - (node.level - 1)]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            subs = [f"{mod}.{a.name}" for a in node.names if f"{mod}.{a.name}" in MODULES]
            targets = subs if len(subs) == len(node.names) else [mod, *subs]
        else:
            continue
        found += [(t, id(node) in top_level) for t in targets]
    return found


def _ours(target: str) -> str | None:
    """The project module ``target`` names (or the package holding it), else None."""
    while target and target not in MODULES:
        target = target.rpartition(".")[0]
    return target or None


def _graph() -> dict[str, set[str]]:
    return {m: {o for t, _ in _imports(m) if (o := _ours(t)) and o != m} for m in MODULES}


def _circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected groups of more than one module (Tarjan, iterative)."""
    index, low, stack, on, out, counter = {}, {}, [], set(), [], [0]
    for root in graph:
        if root in index:
            continue
        work = [(root, iter(sorted(graph[root])))]
        index[root] = low[root] = counter[0]
        counter[0] += 1
        stack.append(root)
        on.add(root)
        while work:
            v, it = work[-1]
            w = next(it, None)
            if w is not None:
                if w not in index:
                    index[w] = low[w] = counter[0]
                    counter[0] += 1
                    stack.append(w)
                    on.add(w)
                    work.append((w, iter(sorted(graph[w]))))
                elif w in on:
                    low[v] = min(low[v], index[w])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                group = []
                while True:
                    w = stack.pop()
                    on.discard(w)
                    group.append(w)
                    if w == v:
                        break
                if len(group) > 1:
                    out.append(sorted(group))
    return out


def _is_qt(target: str) -> bool:
    return target.split(".")[0] in QT


def _qt_free(name: str) -> bool:
    leaf = name.rpartition(".")[2]
    return (name in QT_FREE_MODULES or name.startswith(QT_FREE_ROOMS)
            or (name.startswith("rungwise.app.views.") and leaf.endswith(("_job", "_report"))))


def test_the_reader_sees_the_project():
    assert len(MODULES) > 100
    graph = _graph()
    assert "rungwise.core.network" in graph["rungwise.core.solve"]
    # a function-level import is an edge too
    assert "rungwise.app.plots.export" in graph["rungwise.app.cli.export"]


def test_a_circle_is_found():
    assert _circles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]
    assert _circles({"a": {"b"}, "b": set()}) == []


def test_no_import_circle():
    assert _circles(_graph()) == []


def test_core_never_imports_app_or_qt():
    bad = [(m, t) for m in MODULES if m.startswith("rungwise.core") for t, _ in _imports(m)
           if t.startswith("rungwise.app") or _is_qt(t)]
    assert bad == []


def test_qt_free_rooms_never_import_qt():
    free = [m for m in MODULES if _qt_free(m)]
    assert "rungwise.app.cli.compute" in free
    assert "rungwise.app.views.stats_job" in free
    assert [(m, t) for m in free for t, _ in _imports(m) if _is_qt(t)] == []
    # nor through a module they import when they are imported
    for m in free:
        seen, todo = {m}, [m]
        while todo:
            for t, at_top in _imports(todo.pop()):
                assert not (at_top and _is_qt(t)), f"{m} imports Qt at import time via {t}"
                o = _ours(t)
                if at_top and o and o not in seen:
                    seen.add(o)
                    todo.append(o)
