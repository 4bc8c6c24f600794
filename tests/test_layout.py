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


# module-level containers that may stay mutable types: genuinely constant data that nothing writes to (each checked
# by hand; new constant data should be a tuple, a frozenset or a MappingProxyType instead)
CONSTANT_DATA = {
    "cli.COMMANDS": "command names and their one-line help",
    "waveform.conditioning.ROUTES": "approximant -> conditioning route",
    "waveform.models.fd_modes.PRECESSING": "approximant names",
    "waveform.models.lal_modes.DROP_MEMORY_MODES": "approximant names",
    "inputs.release_layout.PLACES": "setting -> where a release file keeps it",
    "inputs.population.POPULATION_SCHEMA": "the population file's schema",
    "inputs.population.NETWORK_REDSHIFT": "network -> redshift reach",
    "inputs.config.EVIDENCE_SCHEMA": "the evidence file's schema",
    "inputs.detectors.NOISE_CURVES": "noise curve -> file and description",
    "inputs.detectors.NETWORKS": "network -> detectors and their noise curves",
    "inputs.release_list.BUILT_IN_DEFAULTS": "the catalog's default settings",
    "inputs.campaign_config.CAMPAIGN_SCHEMA": "the campaign file's schema",
    "inputs.checks.ZERO_DEFAULTS": "parameters that default to zero",
    "inputs.checks.PRIOR_RANGES": "parameter -> allowed range",
    "commands.report.PAGES": "result kind -> reader and page",
    "commands.demo.EVENTS": "the demo's simulated events",
    "commands.catalog_demo.DEMO_EVENTS": "the catalog demo's simulated events",
    "commands.catalog_demo.SKY": "the catalog demo's sky position",
}
MUTABLE_LITERALS = (ast.Dict, ast.List, ast.Set, ast.DictComp, ast.ListComp, ast.SetComp)
MUTABLE_TYPES = {"dict", "list", "set", "defaultdict", "OrderedDict", "Counter", "deque", "bytearray"}


def _mutable(value, annotation=None) -> bool:
    """Whether a module-level assignment's value (or its annotation) is a mutable container."""
    if isinstance(value, MUTABLE_LITERALS):
        return True
    if isinstance(value, ast.Call):
        func = value.func
        if (func.attr if isinstance(func, ast.Attribute) else getattr(func, "id", "")) in MUTABLE_TYPES:
            return True
    return annotation is not None and ast.unparse(annotation).split("[")[0].lower() in MUTABLE_TYPES


def mutable_containers(module: str, source: str) -> list:
    """Module-level names bound to a dict, list or set (literal, comprehension or constructor), whatever the
    name's case: a registry filled at import time, or a constant that a caller could change for everyone.
    Dunder names (``__all__``) and ``CONSTANT_DATA`` are exempt."""
    found = []
    for node in ast.parse(source).body:
        if isinstance(node, ast.Assign):
            targets, value, annotation = node.targets, node.value, None
        elif isinstance(node, ast.AnnAssign):
            targets, value, annotation = [node.target], node.value, node.annotation
        else:
            continue
        for target in targets:
            name = getattr(target, "id", "")
            if name and not name.startswith("__") and _mutable(value, annotation) \
                    and f"{module}.{name}" not in CONSTANT_DATA:
                found.append(f"{module} (line {node.lineno}): module-level mutable container '{name}'")
    return found


def test_no_module_level_mutable_container():
    found = problems_in(mutable_containers)
    assert not found, "\n".join(found)


@pytest.mark.parametrize("line", [
    "DESCRIPTIONS: dict = {}\n", "registry = {}\n", "NAMES = [name for name in 'ab']\n", "SEEN = set()\n",
    "TABLE = dict(a=1)\n", "from collections import defaultdict\nBY_KIND = defaultdict(list)\n",
    "STRATEGIES: list = make()\n",
])
def test_the_mutable_container_check_catches_each_kind(line):
    assert mutable_containers("results.probe", line)


def test_the_mutable_container_check_passes_frozen_constants():
    source = ("from types import MappingProxyType\nNAMES = ('a', 'b')\nKINDS = frozenset({'a'})\n"
              "TABLE = MappingProxyType({'a': 1})\n__all__ = ['NAMES']\n")
    assert not mutable_containers("results.probe", source)


# names imported from another stage and not used by the importing module, because callers import them from it
RE_EXPORTS = {"campaign.config": {"load_campaign_settings"}}


def unused_imports(module: str, path: str, source: str | None = None) -> list:
    """Imports of another stage of the package whose names the module never uses: an import for its side
    effects (filling a registry, say), which hides a dependency the stage order cannot see. A package's
    ``__init__`` re-exports, and ``RE_EXPORTS`` are exempt."""
    if path.endswith("__init__.py"):
        return []
    tree = ast.parse(open(path).read() if source is None else source)
    used = {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)}
    package = [p for p in package_of(module, path) if p != "__init__"]
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            bound = [(alias.asname or alias.name.split(".")[0], alias.name[len("memory_infer."):])
                     for alias in node.names if alias.name.startswith("memory_infer.")]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - (node.level - 1)] if node.level > 1 else package
                target = ".".join(base + ([node.module] if node.module else []))
            elif node.module and node.module.startswith("memory_infer"):
                target = node.module[len("memory_infer"):].strip(".")
            else:
                continue
            bound = [(alias.asname or alias.name, f"{target}.{alias.name}".strip(".")) for alias in node.names]
        else:
            continue
        for name, target in bound:
            if target.split(".")[0] != module.split(".")[0] and name not in used \
                    and name not in RE_EXPORTS.get(module, ()):
                found.append(f"{module} (line {node.lineno}) imports {target} without using it")
    return found


def test_no_module_imports_another_stage_only_for_its_side_effects():
    found = []
    for module, path in modules():
        found += unused_imports(module, path)
    assert not found, "\n".join(found)


@pytest.mark.parametrize("line", [
    "from ..inference import methods as registered_methods  # noqa: F401\n",
    "import memory_infer.inference.methods  # noqa: F401\n",
    "from ..inference.methods import STRATEGIES\n",
])
def test_the_side_effect_import_check_catches_an_unused_import(line, tmp_path):
    path = tmp_path / "probe.py"
    path.write_text(line + "\n\ndef report():\n    return 1\n")
    assert unused_imports("reports.probe", str(path))
    path.write_text(line + "\n\ndef report():\n    return memory_infer, registered_methods, STRATEGIES\n")
    assert not unused_imports("reports.probe", str(path))


def private_imports(module: str, path: str) -> list:
    """Names starting with an underscore that ``path`` imports from another module of the package."""
    found = []
    for node in ast.walk(ast.parse(open(path).read())):
        if isinstance(node, ast.ImportFrom) and (node.level or (node.module or "").startswith("memory_infer")):
            found += [f"{module} (line {node.lineno}) imports the private name {alias.name}"
                      for alias in node.names if alias.name.startswith("_") and not alias.name.startswith("__")]
    return found


def test_no_module_imports_another_modules_private_name():
    found = []
    for module, path in modules():
        found += private_imports(module, path)
    assert not found, "\n".join(found)


def test_the_private_import_check_catches_one(tmp_path):
    path = tmp_path / "probe.py"
    path.write_text("from .readers import release_group, _scalar_text\nfrom __future__ import annotations\n")
    assert private_imports("inputs.probe", str(path)) == ["inputs.probe (line 1) imports the private name _scalar_text"]


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


# ---------------------------------------------------------------- settings, caches, randomness, logging

BELOW_INPUTS = ("results", "inference", "catalog", "campaign", "reports")  # stages that take settings objects
BELOW_COMMANDS = ("common", "waveform", "inputs", "results", "inference", "catalog", "campaign", "reports")
# what hands out the configuration mapping (checked TOML as a dict) rather than settings objects
MAPPING_SOURCES = {"evidence_config", "apply_schema", "load_toml", "EVIDENCE_SCHEMA", "CAMPAIGN_SCHEMA"}
HIDDEN_KEYS = {"_directory", "_given", "_origins", "_envelopes"}


def _schema_keys() -> dict:
    from memory_infer.inputs.campaign_config import CAMPAIGN_SCHEMA
    from memory_infer.inputs.config import EVIDENCE_SCHEMA

    sections = {}
    for schema in (EVIDENCE_SCHEMA, CAMPAIGN_SCHEMA):
        for section, keys in schema.items():
            sections.setdefault(section, set()).update(k for k in keys if k != "*")
    return sections


def _key(node):
    """The string key of ``x["key"]`` or ``x.get("key", ...)`` being read, else None."""
    if isinstance(node, ast.Subscript) and isinstance(node.ctx, ast.Load) and isinstance(node.slice, ast.Constant) \
            and isinstance(node.slice.value, str):
        return node.slice.value, node.value
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and node.func.attr in ("get", "pop") \
            and node.args and isinstance(node.args[0], ast.Constant) and isinstance(node.args[0].value, str):
        return node.args[0].value, node.func.value
    return None


def configuration_reads(module: str, source: str) -> list:
    """Where ``source`` (a module below the inputs stage) reads the configuration mapping instead of settings: a
    mapping source imported from the inputs stage, a parameter or attribute named ``config``, a hidden key, a
    section then key subscript (``x["evidence"]["methods"]``), or a section read from a plain name
    (``config["evidence"]``, ``cfg.get("model")``)."""
    sections, found = _schema_keys(), []
    tree = ast.parse(source)
    for node in ast.walk(tree):
        where = f"{module} (line {getattr(node, 'lineno', '?')})"
        if isinstance(node, ast.ImportFrom) and any(a.name in MAPPING_SOURCES for a in node.names):
            found.append(f"{where} imports the configuration mapping's source")
        elif isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda)):
            names = [a.arg for a in node.args.args + node.args.kwonlyargs + node.args.posonlyargs]
            found += [f"{where} takes a parameter '{n}'" for n in names if n in ("config", "configuration", "cfg")]
        elif isinstance(node, ast.Attribute) and node.attr == "config":
            found.append(f"{where} reads an attribute 'config'")
        key = _key(node)
        if key is None:
            continue
        name, base = key
        if name in HIDDEN_KEYS:
            found.append(f"{where} reads the hidden key '{name}'")
        inner = _key(base)
        if inner is not None and inner[0] in sections and name in sections[inner[0]]:
            found.append(f"{where} reads [{inner[0]}] {name} from a mapping")
        elif name in sections and isinstance(base, ast.Name) and module.split(".")[0] not in ("results", "reports"):
            found.append(f"{where} reads the section '{name}' from '{base.id}'")
    return found


def problems_in(check, stages=None) -> list:
    """``check(module, source)`` over every package module (or only those of ``stages``), findings joined."""
    found = []
    for module, path in modules():
        if stages is None or module.split(".")[0] in stages:
            found += check(module, open(path).read())
    return found


def test_no_code_below_inputs_reads_the_configuration_mapping():
    found = problems_in(configuration_reads, BELOW_INPUTS)
    assert not found, "\n".join(found)


@pytest.mark.parametrize("line", [
    "def run(setup):\n    return setup.config['evidence']['methods']\n",
    "def run(state):\n    sampler = state.settings['sampler']['live_points']\n",
    "def run(config):\n    return 1\n",
    "def run(options):\n    evidence = options['evidence']\n",
    "def run(task):\n    return task['settings'].get('_directory')\n",
    "from ..inputs.config import evidence_config\n",
])
def test_the_configuration_check_catches_each_kind_of_read(line):
    assert configuration_reads("inference.probe", line)


def test_the_configuration_check_passes_settings_reads():
    assert not configuration_reads("inference.probe", "def run(setup):\n    return setup.settings.evidence.methods\n")


def cached_functions(source: str) -> list:
    """(name, line, what it returns) of every function decorated with ``lru_cache``/``cache`` in ``source``."""
    tree = ast.parse(source)
    out = []
    for node in ast.walk(tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            for decorator in node.decorator_list:
                target = decorator.func if isinstance(decorator, ast.Call) else decorator
                name = target.attr if isinstance(target, ast.Attribute) else getattr(target, "id", "")
                if name in ("lru_cache", "cache"):
                    returned = [ast.unparse(n.value) for n in ast.walk(node) if isinstance(n, ast.Return) and n.value]
                    out.append((node.name, node.lineno, " ".join(returned)))
    return out


# every cache in the package and what it returns: numbers, or arrays and tables its callers only read; a new
# cache must be added here deliberately, and none may hold a bilby object (its state would be shared by callers)
CACHES = {
    "waveform.sphere.wigner_3j": "a float",
    "waveform.sphere.coupling_table": "coupling coefficients (arrays, read only)",
    "waveform.sphere.direction_tables": "a harmonic set and its table (read only)",
    "waveform.source._harmonic_set": "a harmonic set (read only)",
    "waveform.models.refine._lagrange_weights": "interpolation weights (an array, read only)",
    "waveform.memory._mirror_plan": "row indices (read only)",
    "waveform.memory._leading_order_projection": "coefficients (a table of floats, read only)",
    "common.performance.tune_allocator": "a bool (once per process)",
    "inference.methods.fast._legendre": "quadrature nodes and weights (arrays, read only)",
    "inputs.detectors.known_detectors": "detector names (a table of strings, read only)",
    "waveform.flux.harmonic_set": "a harmonic set (read only)",
    "waveform.flux.flux_tables": "stacking keys and coupling tables (arrays, read only)",
    "waveform.flux.pair_tables": "stacking keys and coupling tables on the form's pairs (arrays, read only)",
    "waveform.source._half_hann": "a taper's window (an array, read only)",
    "waveform.models.lal_modes.approximant_number": "an int",
    "waveform.models.lal_call.lal_modules": "the lal and lalsimulation modules",
    "waveform.flux._mirror_layout": "mode keys and signs (tuples, an array, read only)",
    "waveform.models.refine._interpolation_layout": "mode keys, orders, signs and row placement (read only)",
    "catalog.amplitude_spread.weight_table": "truncated-normal weights on a grid (an array, read only)",
    "waveform.models.pyseobnr_modes._generator": "pyseobnr's GenerateWaveform class (or None)",
    "waveform.models.precessing_twist.default_precession_version": "an int",
    "waveform.sphere.wigner_terms": "Wigner-d terms (a tuple of floats and ints)",
    "waveform.models.precessing_twist.twist_terms": "mode keys and term tables (a tuple, arrays, read only)",
}
BILBY_BUILDERS = ("bilby", "waveform_generator", "network_detectors", "configured_detectors", "empty_detectors",
                  "InterferometerList", "MemoryWaveformGenerator", "MemoryTransient")


def cache_problems(module: str, source: str) -> list:
    found = []
    for name, line, returned in cached_functions(source):
        if any(word in returned for word in BILBY_BUILDERS):
            found.append(f"{module}.{name} (line {line}) caches a bilby object, shared by every caller")
        elif f"{module}.{name}" not in CACHES:
            found.append(f"{module}.{name} (line {line}) is a cache not reviewed in tests/test_layout.py CACHES")
    return found


def test_no_module_level_cache_of_mutable_bilby_objects():
    found = problems_in(cache_problems)
    assert not found, "\n".join(found)


def test_the_cache_check_catches_a_cached_generator():
    probe = ("from functools import lru_cache\n\n@lru_cache(maxsize=4)\ndef cached_generator(duration):\n"
             "    from ..waveform.generator import waveform_generator\n    return waveform_generator(duration)\n")
    assert cache_problems("campaign.probe", probe)
    assert cache_problems("campaign.probe", "import functools\n\n@functools.cache\ndef table():\n    return {}\n")


def randomness_problems(module: str, source: str) -> list:
    """Global seeding, unseeded generators, draws from numpy's global state, a swap of bilby's generator outside
    its one helper, and bilby's log level: none of them below the command layer."""
    found = []
    for node in ast.walk(ast.parse(source)):
        where = f"{module} (line {getattr(node, 'lineno', '?')})"
        if isinstance(node, ast.Call):
            text = ast.unparse(node.func)
            if text.endswith("random.seed") or text == "seed" or text.endswith(".seed"):
                found.append(f"{where} seeds a global generator ({text})")
            elif text.endswith("default_rng") and not node.args and not node.keywords:
                found.append(f"{where} makes an unseeded generator")
            elif text.startswith(("np.random.", "numpy.random.")) and text.split("random.", 1)[1].split("(")[0] \
                    .split(".")[0] not in ("default_rng", "SeedSequence", "Generator", "PCG64"):
                found.append(f"{where} draws from numpy's global generator ({text})")
            elif "getLogger" in text and node.args and isinstance(node.args[0], ast.Constant) \
                    and node.args[0].value in ("bilby", "dynesty"):
                found.append(f"{where} touches {node.args[0].value}'s logger")
            elif text.endswith("setup_logger"):
                found.append(f"{where} sets bilby's logger")
        elif isinstance(node, ast.Assign):
            for target in node.targets:
                if ast.unparse(target).endswith("Generator.rng") and module != "inputs.event_data":
                    found.append(f"{where} replaces bilby's generator (only inputs.event_data.bilby_draws_from may)")
    return found


def test_randomness_and_bilby_logging_are_set_only_at_the_command_layer():
    found = problems_in(randomness_problems, BELOW_COMMANDS)
    assert not found, "\n".join(found)


@pytest.mark.parametrize("line", [
    "import bilby\nbilby.core.utils.random.seed(3)\n",
    "import numpy as np\nnp.random.seed(3)\n",
    "import numpy as np\nrng = np.random.default_rng()\n",
    "import numpy as np\nx = np.random.normal(0, 1)\n",
    "import logging\nlogging.getLogger('bilby').setLevel(logging.ERROR)\n",
    "from bilby.core.utils import random\nrandom.Generator.rng = None\n",
])
def test_the_randomness_check_catches_each_kind(line):
    assert randomness_problems("campaign.probe", line)
