"""The package's shape: folders by pipeline stage with imports running one way, no import cycles, no
module-level mutable state, and one test file per module that has logic."""
import ast
import os

import pytest

ROOT = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "memory_infer")
TESTS = os.path.dirname(os.path.abspath(__file__))
# the pipeline's stages in order; a module may import from its own stage or an earlier one
STAGES = ["common", "waveform", "inputs", "results", "inference", "catalog", "campaign", "reports", "commands"]
TOP = {"cli": len(STAGES), "__init__": len(STAGES)}  # the command line and the public API sit on top


def modules():
    for folder, _, files in os.walk(ROOT):
        for name in files:
            if name.endswith(".py"):
                path = os.path.join(folder, name)
                parts = os.path.relpath(path, ROOT)[:-3].split(os.sep)
                yield ".".join(parts), path


def stage_of(module: str) -> int:
    first = module.split(".")[0]
    return STAGES.index(first) if first in STAGES else TOP[first]


def package_of(module: str, path: str) -> list:
    parts = module.split(".")
    return parts if path.endswith("__init__.py") else parts[:-1]


def imported(module: str, path: str):
    """Modules of memory_infer imported by ``path`` (relative imports resolved), with line numbers."""
    tree = ast.parse(open(path).read())
    package = [p for p in package_of(module, path) if p != "__init__"]
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - (node.level - 1)] if node.level > 1 else package
                target = ".".join(base + ([node.module] if node.module else []))
            elif node.module and node.module.startswith("memory_infer"):
                target = node.module[len("memory_infer."):]
            else:
                continue
            names = [target] if node.module else [f"{target}.{a.name}".strip(".") for a in node.names]
            for name in names:
                yield name.strip("."), node.lineno
        elif isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.startswith("memory_infer."):
                    yield alias.name[len("memory_infer."):], node.lineno


def test_imports_run_one_way_from_earlier_stages():
    wrong = []
    for module, path in modules():
        if module == "__init__":
            continue
        own = stage_of(module)
        for target, line in imported(module, path):
            if target and stage_of(target) > own:
                wrong.append(f"{module} (line {line}) imports {target}, a later stage")
    assert not wrong, "\n".join(wrong)


def test_the_check_catches_an_import_from_a_later_stage(tmp_path):
    # the rule can fail: a waveform module importing the catalog stage is flagged
    path = tmp_path / "probe.py"
    path.write_text("from ..catalog.combine import combine\n")
    targets = [t for t, _ in imported("waveform.probe", str(path))]
    assert targets == ["catalog.combine"]
    assert stage_of(targets[0]) > stage_of("waveform.probe")


def _graph():
    names = {m for m, _ in modules()}
    graph = {}
    for module, path in modules():
        edges = set()
        for target, _ in imported(module, path):
            while target and target not in names and f"{target}.__init__" not in names:
                target = target.rpartition(".")[0]
            if target:
                edges.add(target if target in names else f"{target}.__init__")
        graph[module] = edges - {module}
    return graph


def test_no_import_cycles():
    graph, state, cycles = _graph(), {}, []

    def visit(node, trail):
        state[node] = "open"
        for nxt in graph.get(node, ()):
            if nxt.endswith("__init__"):
                continue  # a package's __init__ re-exports its own modules; that is not a cycle of logic
            if state.get(nxt) == "open":
                cycles.append(" -> ".join(trail + [nxt]))
            elif nxt not in state:
                visit(nxt, trail + [nxt])
        state[node] = "done"

    for node in graph:
        if node not in state:
            visit(node, [node])
    assert not cycles, "\n".join(cycles)


def test_no_module_level_mutable_state():
    found = []
    for module, path in modules():
        tree = ast.parse(open(path).read())
        for node in ast.walk(tree):
            if isinstance(node, ast.Global):
                found.append(f"{module}: 'global {', '.join(node.names)}'")
        for node in tree.body:
            if isinstance(node, (ast.Assign, ast.AnnAssign)):
                targets = node.targets if isinstance(node, ast.Assign) else [node.target]
                for target in targets:
                    name = getattr(target, "id", "")
                    if name and not name.isupper() and not name.startswith("__") and name != "logger":
                        found.append(f"{module}: module-level variable '{name}'")
    assert not found, "\n".join(found)


def has_logic(path: str) -> bool:
    tree = ast.parse(open(path).read())
    return any(isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)) for node in ast.walk(tree))


def test_every_module_with_logic_has_its_test_file():
    missing = []
    for module, path in modules():
        if not has_logic(path):
            continue
        parts = module.split(".")
        if parts == ["__init__"]:  # the public API
            expected = os.path.join(TESTS, "test_memory_infer.py")
        elif parts[-1] == "__init__":  # a package with logic: tests/<package>/test_<package>.py
            expected = os.path.join(TESTS, *parts[:-1], f"test_{parts[-2]}.py")
        else:
            expected = os.path.join(TESTS, *parts[:-1], f"test_{parts[-1]}.py")
        if not os.path.isfile(expected):
            missing.append(f"{module} -> {os.path.relpath(expected, TESTS)}")
    assert not missing, "modules without their test file:\n" + "\n".join(missing)


def test_public_api_resolves():
    import memory_infer

    assert memory_infer.__all__ == sorted(memory_infer.__all__)
    for name in memory_infer.__all__:
        assert getattr(memory_infer, name) is not None
    with pytest.raises(AttributeError):
        memory_infer.no_such_name
