"""The structure DEVELOPERS.md promises, checked on the source itself: no import cycles (imports
inside functions count too), no module over 600 lines, one hand-written LRU and no thread
started in server/, model/ importing only numpy and scipy, and layouts/ importing no server or
model code beyond the view-spec types."""

from __future__ import annotations

import ast
import pathlib
import sys

ROOT = pathlib.Path(__file__).resolve().parents[2]
PACKAGES = ("model", "server", "layouts")
MAX_LINES = 600


def _modules() -> dict[str, pathlib.Path]:
    out = {}
    for package in PACKAGES:
        for path in (ROOT / package).rglob("*.py"):
            parts = path.relative_to(ROOT).with_suffix("").parts
            out[".".join(parts[:-1] if parts[-1] == "__init__" else parts)] = path
    return out


def _imports(name: str, path: pathlib.Path, modules: dict) -> set[str]:
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[:len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            subs = {f"{target}.{a.name}" for a in node.names if f"{target}.{a.name}" in modules}
            found.update(subs or {target})
    return found - {name}


def test_no_import_cycles():
    modules = _modules()
    graph = {m: {i for i in _imports(m, p, modules) if i in modules} for m, p in modules.items()}
    sys.setrecursionlimit(10_000)
    index, low, stack, on, cycles = {}, {}, [], set(), []

    def visit(v):  # Tarjan's strongly connected components
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in graph[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                cycles.append(sorted(component))

    for v in graph:
        if v not in index:
            visit(v)
    assert cycles == []


def test_no_module_is_over_600_lines():
    long = {str(p.relative_to(ROOT)): n for p in _modules().values()
            if (n := len(p.read_text().splitlines())) > MAX_LINES}
    assert long == {}


def test_model_imports_only_numpy_scipy_and_the_standard_library():
    modules = _modules()
    allowed = {"numpy", "scipy"} | set(sys.stdlib_module_names)
    for name, path in modules.items():
        if not name.startswith("model"):
            continue
        outside = {i.split(".")[0] for i in _imports(name, path, modules) if not i.startswith("model")}
        assert outside <= allowed, (name, outside - allowed)


def test_server_has_one_hand_written_lru_and_starts_no_thread():
    sources = {p: p.read_text() for p in (ROOT / "server").rglob("*.py")}
    lrus = [p.name for p, text in sources.items() if "OrderedDict(" in text]
    assert lrus == ["cache.py"]
    assert not any("Thread(" in text or "ThreadPool" in text for text in sources.values())


def test_layouts_use_no_server_or_model_code():
    modules = _modules()
    for name, path in modules.items():
        if name.startswith("layouts"):
            used = {i for i in _imports(name, path, modules) if i.startswith(("server", "model"))}
            assert used == set(), (name, used)
