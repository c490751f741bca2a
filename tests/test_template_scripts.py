"""Every page script is an ES module and every module it imports exists (issue 11, item 7).

Read from the files, no server: each ``<script>`` in ``templates/`` is either a JSON data block, a vendored
bundle served from outside ``static/`` (plotly, Swagger UI, ReDoc: they are classic scripts by their own
design), or ``type="module"`` with a ``src`` under ``/static/js/``. Each module's relative ``import`` must
name a file that exists, followed transitively, and no module reads another one's internals through
``window`` (a vendored bundle's own global and ``window.print``/``location`` are fine).
"""

from __future__ import annotations

import re
from html.parser import HTMLParser
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
TEMPLATES = ROOT / "templates"
STATIC = ROOT / "static"
VENDOR_PREFIXES = ("/static-lib/", "/docs-assets/")  # third-party bundles, served as shipped
IMPORT = re.compile(
    r"""(?:^|[;\s])(?:import|export)\s[^'";]*?from\s*['"]([^'"]+)['"]|import\s*\(\s*['"]([^'"]+)['"]\s*\)|^import\s*['"]([^'"]+)['"]""",
    re.M,
)
# Window properties a module may touch: the browser's own and the vendored bundles' globals. ``leafcast``
# is the editor's read-only handle for tests and the benchmark; no page module may read it.
WINDOW_OK = {
    "print",
    "location",
    "addEventListener",
    "removeEventListener",
    "matchMedia",
    "scrollTo",
    "open",
    "confirm",
    "prompt",
    "alert",
    "devicePixelRatio",
    "innerWidth",
    "innerHeight",
    "SwaggerUIBundle",
    "Redoc",
    "Plotly",
    "getComputedStyle",
    "setTimeout",
    "clearTimeout",
    "requestAnimationFrame",
}


class _Scripts(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[dict[str, str | None]] = []

    def handle_starttag(self, tag, attrs):
        if tag == "script":
            self.tags.append(dict(attrs))


def _script_tags() -> list[tuple[str, dict[str, str | None]]]:
    out = []
    for path in sorted(TEMPLATES.glob("*.html")):
        parser = _Scripts()
        parser.feed(path.read_text(encoding="utf-8"))
        out += [(path.name, attrs) for attrs in parser.tags]
    return out


def _module_path(src: str) -> Path:
    assert src.startswith("/static/"), src
    return STATIC / src.removeprefix("/static/")


def _imports(path: Path) -> list[Path]:
    text = path.read_text(encoding="utf-8")
    found = []
    for m in IMPORT.finditer(text):
        spec = next(g for g in m.groups() if g)
        found.append(_module_path(spec) if spec.startswith("/static/") else (path.parent / spec).resolve())
    return found


def _all_modules() -> set[Path]:
    todo = [_module_path(a["src"]) for _, a in _script_tags() if a.get("type") == "module" and a.get("src")]
    seen: set[Path] = set()
    while todo:
        p = todo.pop()
        if p in seen or not p.exists():
            continue
        seen.add(p)
        todo += _imports(p)
    return seen


SCRIPT_TAGS = _script_tags()


def test_templates_have_scripts():
    # A guard for the test itself: a parser that found nothing would pass everything below.
    assert sum(1 for _, a in SCRIPT_TAGS if a.get("type") == "module") >= 8


@pytest.mark.parametrize(
    ("template", "attrs"), SCRIPT_TAGS, ids=[f"{t}:{a.get('src') or a.get('id')}" for t, a in SCRIPT_TAGS]
)
def test_every_page_script_is_a_module(template, attrs):
    src = attrs.get("src")
    if attrs.get("type") == "application/json":
        assert src is None, f"{template}: a JSON block has no src"
        return
    if src and src.startswith(VENDOR_PREFIXES):
        return
    assert attrs.get("type") == "module", f"{template}: <script src={src!r}> is a classic script, not a module"
    assert src and src.startswith("/static/js/"), f"{template}: module {src!r} is not under /static/js/"
    assert _module_path(src).is_file(), f"{template}: {src} does not exist"


def test_every_imported_path_exists():
    missing = []
    for mod in _all_modules():
        missing += [f"{mod.relative_to(STATIC)} imports {dep}" for dep in _imports(mod) if not dep.is_file()]
    assert not missing, missing
    assert len(_all_modules()) >= 20


def test_no_module_reads_another_through_window():
    bad = []
    for mod in sorted(_all_modules()):
        for m in re.finditer(r"\bwindow\.(\w+)", mod.read_text(encoding="utf-8")):
            if m.group(1) not in WINDOW_OK and not (
                mod.name == "main.js" and mod.parent.name == "editor" and m.group(1) == "leafcast"
            ):
                bad.append(f"{mod.relative_to(STATIC)}: window.{m.group(1)}")
    assert not bad, bad


def test_classic_units_script_is_gone():
    # static/units.js was the classic copy of the unit formatter; static/js/lib/units.js is the one left.
    assert not (STATIC / "units.js").exists()
    assert not any("units.js" in (a.get("src") or "") and "/lib/" not in (a.get("src") or "") for _, a in SCRIPT_TAGS)
