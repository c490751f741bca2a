"""Code size limits (issue 11): no Python module over about 400 lines, no function over about 80, and no
ES module under static/js/ over about 300 lines.

The limits are the project's own house rule ("small modules whose names say what they hold"; common practice,
no source). An exception is listed in ALLOWED with its current size and why it stays; the list can
only shrink: an allowed item that now fits, or that has grown beyond its recorded size, fails, so whoever
shortens one removes it and nobody grows one quietly.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent

PY_MODULE_MAX_LINES = 400
PY_FUNCTION_MAX_LINES = 80
JS_MODULE_MAX_LINES = 300

# key -> (recorded size in lines, reason). Keys: "app/x.py" for a module, "app/x.py::outer.inner" for a function,
# "static/js/x.js" for an ES module.
# Empty since the December 2026 splits (roomfile, analysis, photometry, budget, bench): every module and function
# fits. An exception added here must give its size and reason, and can then only shrink.
ALLOWED: dict[str, tuple[int, str]] = {}


def _line_count(text: str) -> int:
    return len(text.splitlines())


def function_lengths(source: str) -> dict[str, int]:
    """Every function and method in `source` with its length in lines (end_lineno - lineno + 1, decorators not
    counted). A nested function or a method is named by its enclosing names ("Class.method", "outer.inner") and
    counted on its own; its lines also count towards the function that holds it."""
    lengths: dict[str, int] = {}

    def visit(node: ast.AST, prefix: str) -> None:
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef):
                name = f"{prefix}{child.name}"
                lengths[name] = child.end_lineno - child.lineno + 1
                visit(child, f"{name}.")
            elif isinstance(child, ast.ClassDef):
                visit(child, f"{prefix}{child.name}.")
            else:
                visit(child, prefix)

    visit(ast.parse(source), "")
    return lengths


def measured_sizes(root: Path = ROOT) -> dict[str, tuple[int, int]]:
    """key -> (size in lines, limit) for every Python module under app/, every function in it and every ES module
    under static/js/."""
    sizes: dict[str, tuple[int, int]] = {}
    for path in sorted((root / "app").rglob("*.py")):
        rel = path.relative_to(root).as_posix()
        text = path.read_text(encoding="utf-8")
        sizes[rel] = (_line_count(text), PY_MODULE_MAX_LINES)
        for name, length in function_lengths(text).items():
            sizes[f"{rel}::{name}"] = (length, PY_FUNCTION_MAX_LINES)
    for path in sorted((root / "static" / "js").rglob("*.js")):
        rel = path.relative_to(root).as_posix()
        sizes[rel] = (_line_count(path.read_text(encoding="utf-8")), JS_MODULE_MAX_LINES)
    return sizes


def size_problems(sizes: dict[str, tuple[int, int]], allowed: dict[str, tuple[int, str]]) -> list[str]:
    problems = []
    for key, (size, limit) in sorted(sizes.items()):
        if size > limit and key not in allowed:
            problems.append(f"{key}: {size} lines, over the limit of {limit}")
    for key, (recorded, _reason) in sorted(allowed.items()):
        if key not in sizes:
            problems.append(f"{key}: allowed but no longer exists; remove it from ALLOWED")
            continue
        size, limit = sizes[key]
        if size <= limit:
            problems.append(f"{key}: now {size} lines, within the limit of {limit}; remove it from ALLOWED")
        elif size > recorded:
            problems.append(f"{key}: grew to {size} lines, beyond its recorded {recorded}; shorten it")
    return problems


def test_code_within_size_limits():
    problems = size_problems(measured_sizes(), ALLOWED)
    assert not problems, "\n".join(problems)


def test_allowed_items_give_a_reason():
    for key, (recorded, reason) in ALLOWED.items():
        assert recorded > 0 and reason.strip(), key


# --- self-tests of the walker and the rules ---

_SAMPLE = """
def short():
    return 1


class Box:
    def method(self):
        x = 1
        return x


def outer():
    def inner():
{inner_body}
    return inner
"""


def _sample(inner_lines: int) -> str:
    body = "\n".join(f"        v{i} = {i}" for i in range(inner_lines - 2)) + "\n        return 0"
    return _SAMPLE.replace("{inner_body}", body)


def test_walker_measures_functions_methods_and_nested_functions():
    lengths = function_lengths(_sample(inner_lines=90))
    assert lengths["short"] == 2
    assert lengths["Box.method"] == 3
    # inner: its def line plus 89 body lines; outer holds inner plus its own def and return.
    assert lengths["outer.inner"] == 90
    assert lengths["outer"] == 92


def test_rules_find_an_over_long_function_and_stale_allowances():
    long_fn = function_lengths(_sample(inner_lines=90))["outer.inner"]
    sizes = {"app/x.py": (30, 400), "app/x.py::outer.inner": (long_fn, 80), "app/x.py::short": (2, 80)}
    assert size_problems(sizes, {}) == ["app/x.py::outer.inner: 90 lines, over the limit of 80"]
    assert size_problems(sizes, {"app/x.py::outer.inner": (90, "why")}) == []
    grown = size_problems(sizes, {"app/x.py::outer.inner": (85, "why")})
    assert len(grown) == 1 and "grew to 90" in grown[0]
    stale = size_problems(sizes, {"app/x.py::outer.inner": (90, "why"), "app/x.py::short": (2, "why")})
    assert len(stale) == 1 and "app/x.py::short" in stale[0] and "within the limit" in stale[0]
    gone = size_problems(sizes, {"app/x.py::outer.inner": (90, "why"), "app/y.py": (500, "why")})
    assert len(gone) == 1 and "no longer exists" in gone[0]


@pytest.mark.parametrize("inner_lines", [80, 81])
def test_limit_is_inclusive(inner_lines):
    sizes = {"app/x.py::outer.inner": (function_lengths(_sample(inner_lines))["outer.inner"], 80)}
    assert bool(size_problems(sizes, {})) == (inner_lines > 80)
