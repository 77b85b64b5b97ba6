"""The package's layers: no import loops between files or folders, and a core that knows
nothing of the page, the sheet or the command line.

Every ``import`` counts, also the ones inside functions (a lazy import is still a
dependency). The rules are the architecture's (DEVELOPERS.md); there is no outside source
for them.  # common practice, no source
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "server" / "phasorbench"
#: Folders of the shells over the core, and the floor under the page and the sheet.
SHELLS = {"web", "sheet", "cli"}
PRESENTATION = "presentation"


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _imports() -> dict[str, set[str]]:
    """Module → the project modules (and outside top-level packages) it imports."""
    found: dict[str, set[str]] = {}
    for path in PACKAGE.rglob("*.py"):
        name = _module_name(path)
        package = name if path.name == "__init__.py" else name.rpartition(".")[0]
        targets: set[str] = set()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                targets.update(alias.name for alias in node.names)
            elif isinstance(node, ast.ImportFrom):
                if node.level:
                    base = package.split(".")
                    base = base[: len(base) - (node.level - 1)]
                    stem = ".".join(base + ([node.module] if node.module else []))
                else:
                    stem = node.module or ""
                targets.add(stem)
                # ``from . import x`` may name a module.
                targets.update(f"{stem}.{alias.name}" for alias in node.names)
        found[name] = targets
    modules = set(found)
    return {name: {t for t in targets if t in modules or not t.startswith("phasorbench")}
            for name, targets in found.items()}


IMPORTS = _imports()


def _project_edges(group) -> dict[str, set[str]]:
    edges: dict[str, set[str]] = {}
    for name, targets in IMPORTS.items():
        for target in targets:
            if target.startswith("phasorbench") and target in IMPORTS:
                a, b = group(name), group(target)
                if a != b:
                    edges.setdefault(a, set()).add(b)
    return edges


def _cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components of more than one node (Tarjan)."""
    index, low, stack, on_stack, out = {}, {}, [], set(), []

    def visit(v):
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in edges.get(v, ()):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            part = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                part.append(w)
                if w == v:
                    break
            if len(part) > 1:
                out.append(sorted(part))

    for v in list(edges):
        if v not in index:
            visit(v)
    return out


def _folder(module: str) -> str:
    """The sub-package a module lives in; a module at the package's top is its own node."""
    parts = module.split(".")
    return parts[1] if len(parts) > 2 or (len(parts) == 2 and
                                          (PACKAGE / parts[1]).is_dir()) else module


def _is_package(module: str) -> bool:
    return (PACKAGE.parent / module.replace(".", "/") / "__init__.py").is_file()


def test_no_module_is_in_an_import_loop():
    # A package's __init__ re-exporting its own modules is not a loop between files.
    edges = {a: {b for b in targets if not (_is_package(a) and b.startswith(a + "."))
                 and not (_is_package(b) and a.startswith(b + "."))}
             for a, targets in _project_edges(lambda m: m).items()}
    assert _cycles(edges) == []


def test_no_folder_is_in_an_import_loop():
    assert _cycles(_project_edges(_folder)) == []


def _layer(module: str) -> str:
    if module == "phasorbench.__main__":       # ``python -m phasorbench`` is the command line
        return "cli"
    folder = _folder(module)
    return folder if folder in SHELLS | {PRESENTATION} else "core"


# The presentation floor reads contract dicts only, so every layer may stand on it (the
# core's tools write their messages with its number formatter) and it stands on nothing.
@pytest.mark.parametrize("layer, forbidden", [
    ("core", SHELLS),
    (PRESENTATION, SHELLS | {"core"}),
])
def test_layers_import_only_downwards(layer, forbidden):
    wrong = sorted(f"{name} imports {target}" for name, targets in IMPORTS.items()
                   if _layer(name) == layer for target in targets
                   if target.startswith("phasorbench") and _layer(target) in forbidden)
    assert wrong == []


@pytest.mark.parametrize("layer", ["core", PRESENTATION])
def test_core_and_presentation_import_no_web_framework_or_templates(layer):
    frameworks = ("fastapi", "starlette", "uvicorn", "jinja2", "pydantic")
    wrong = sorted(f"{name} imports {target}" for name, targets in IMPORTS.items()
                   if _layer(name) == layer for target in targets
                   if target.split(".")[0] in frameworks)
    assert wrong == []


def test_the_rules_see_the_whole_package():
    # Guards the tests above against passing vacuously on an empty or moved package.
    assert {"phasorbench.solver", "phasorbench.presentation.display",
            "phasorbench.cli.common", "phasorbench.web.app"} <= set(IMPORTS)
    assert "phasorbench.presentation.formatting" in IMPORTS["phasorbench.presentation.display"]
