"""Imports follow the pipeline (DEVELOPERS.md, "Layout: the pipeline"): spec -> acoustics ->
resolve -> geometry -> emit, each stage reading only the small model the one before hands
it. Checked on every module's source, including imports made inside functions, so a
shortcut back up the pipeline fails here before it tangles the layout; and DEVELOPERS.md,
which describes that layout, must name every module where its stage is described."""

from __future__ import annotations

import ast
import re
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "compiler"

ORCHESTRATION = {"build", "cli", "diff", "recordings", "starters", "__main__"}
"""Top-level modules that drive the stages: no stage imports them."""

FORBIDDEN = {
    "spec": {"acoustics", "resolve", "geometry", "emit", "ir", "options", "cache"},
    "acoustics": {"spec", "resolve", "geometry", "emit", "ir", "options", "cache"},
    "resolve": {"geometry", "emit", "options", "cache"},
    "geometry": {"spec", "acoustics", "resolve", "emit", "cache"},
    "emit": {"spec", "acoustics", "resolve"},
}
"""Stage -> the parts of ``compiler`` it must not import (besides ``ORCHESTRATION``)."""


def _imports(path: Path) -> list[tuple[int, str]]:
    """(line, absolute module name) of every import in ``path``."""
    found: list[tuple[int, str]] = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found += [(node.lineno, alias.name) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            assert node.level == 0, f"{path}:{node.lineno}: use an absolute import"
            assert node.module is not None
            found.append((node.lineno, node.module))
            if node.module == "compiler":  # ``from compiler import emit``
                found += [(node.lineno, f"compiler.{alias.name}") for alias in node.names]
    return found


def test_imports_follow_the_pipeline() -> None:
    wrong = []
    modules = sorted(PACKAGE.rglob("*.py"))
    assert len(modules) > 60
    for path in modules:
        parts = path.relative_to(PACKAGE).parts
        stage = parts[0] if len(parts) > 1 else None
        banned = FORBIDDEN.get(stage or "", set()) | (ORCHESTRATION if stage else set())
        for line, name in _imports(path):
            pieces = name.split(".")
            if pieces[0] == "compiler" and len(pieces) > 1 and pieces[1] in banned:
                wrong.append(f"{path.relative_to(PACKAGE.parent)}:{line} imports {name}")
    assert not wrong, "imports against the pipeline:\n" + "\n".join(wrong)


def test_the_check_sees_a_wrong_import(tmp_path: Path) -> None:
    source = tmp_path / "m.py"
    source.write_text("def f():\n    from compiler.emit import dxf\n    import compiler.spec\n")
    assert _imports(source) == [(2, "compiler.emit"), (3, "compiler.spec")]
    source.write_text("from compiler import emit, ir\n")
    assert _imports(source) == [(1, "compiler"), (1, "compiler.emit"), (1, "compiler.ir")]


def _guide_chunks() -> list[str]:
    """DEVELOPERS.md cut into paragraphs, table rows and list items."""
    text = (PACKAGE.parent / "DEVELOPERS.md").read_text(encoding="utf-8")
    chunks: list[list[str]] = [[]]
    for line in text.splitlines():
        if not line.strip() or line.startswith(("|", "- ")):
            chunks.append([])
        chunks[-1].append(line)
    return [" ".join(chunk) for chunk in chunks if chunk]


def test_the_developers_guide_names_every_module() -> None:
    """DEVELOPERS.md's layout is the package's: each module is named where its stage is
    described (a stage's module beside its folder), and every file it names exists."""
    chunks = _guide_chunks()
    missing = []
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = path.relative_to(PACKAGE).parts
        if path.name in ("__init__.py", "__main__.py"):
            continue
        folder = f"`compiler/{parts[0]}/" if len(parts) > 1 else "`"
        if not any(f"`{path.name}`" in c or f"/{path.name}`" in c for c in chunks
                   if folder in c):
            missing.append(path.relative_to(PACKAGE.parent).as_posix())
    assert not missing, "modules DEVELOPERS.md does not name beside their stage: " + \
        ", ".join(missing)
    files = [p.relative_to(PACKAGE.parent).as_posix()
             for p in PACKAGE.parent.glob("[ct]*/**/*.py") if p.parts[-2:-1] != ("fonts",)]
    named = set(re.findall(r"`([\w/]+\.py)`", " ".join(chunks)))
    unknown = sorted(n for n in named if not any(f == n or f.endswith("/" + n) for f in files))
    assert not unknown, "DEVELOPERS.md names files that do not exist: " + ", ".join(unknown)
