"""The pipeline in one readable function, and the atomic writing of an output folder.

load -> validate -> normalise (``compiler.spec``) -> resolve -> lay out -> emit.
Every backend writes into a fresh temporary folder beside the target; only when all of
them succeeded does that folder replace ``OUT/<instrument-slug>/``. A failed or killed
build leaves the previous output as it was.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import tempfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from types import ModuleType

from compiler.errors import Problem, SpecError
from compiler.geometry.model import Parts
from compiler.options import BuildOptions
from compiler.resolve.model import Resolved

Progress = Callable[[str], None]


def backends() -> dict[str, ModuleType]:
    """Backend name -> module with ``NAME`` and ``write(resolved, parts, options, out_dir)``."""
    from compiler.emit import cutlist_csv, dxf, pdf, resolved_json

    return {m.NAME: m for m in (resolved_json, dxf, pdf, cutlist_csv)}


@dataclass(frozen=True)
class Compiled:
    resolved: Resolved
    parts: Parts


def compile_text(text: str | bytes, filename: str, options: BuildOptions,
                 progress: Progress | None = None) -> Compiled:
    """Pure core: spec text -> resolved model and parts (no files written)."""
    from compiler.geometry.layout import layout
    from compiler.resolve.resolver import resolve
    from compiler.spec import load_spec

    say = progress or (lambda _msg: None)
    spec = load_spec(text, filename)
    say(f"resolving {sum(len(r.notes) for r in spec.ranks) + sum(len(t.notes) for t in spec.tube_sets) + len(spec.flutes)} pipes")  # noqa: E501
    resolved = resolve(spec)
    if options.strict and resolved.warnings:
        raise SpecError([Problem(n.position, n.message, "warnings are errors with --strict")
                         for n in resolved.warnings])
    say("laying out parts")
    parts = layout(resolved, options)
    return Compiled(resolved, parts)


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def emit_all(compiled: Compiled, options: BuildOptions, folder: Path,
             progress: Progress | None = None) -> list[Path]:
    """Run every backend into ``folder``, then write ``manifest.json``."""
    say = progress or (lambda _msg: None)
    written: list[Path] = []
    for name, backend in backends().items():
        say(f"writing {name}")
        written.extend(backend.write(compiled.resolved, compiled.parts, options, folder))
    files = sorted(p.relative_to(folder).as_posix() for p in written)
    manifest = {
        "instrument": compiled.resolved.instrument,
        "spec_file": compiled.resolved.spec_file,
        "spec_sha256": compiled.resolved.spec_sha256,
        "files": [{"path": f, "sha256": _sha256(folder / f), "bytes": (folder / f).stat().st_size}
                  for f in files],
    }
    (folder / "manifest.json").write_text(json.dumps(manifest, indent=2, sort_keys=True) + "\n",
                                          encoding="utf-8")
    return [folder / f for f in files] + [folder / "manifest.json"]


def _inside(base: Path, target: Path) -> bool:
    try:
        target.resolve().relative_to(base.resolve())
    except ValueError:
        return False
    return True


def build(text: str | bytes, filename: str, out_root: Path, options: BuildOptions,
          progress: Progress | None = None) -> Path:
    """Compile and write ``out_root/<slug>/`` atomically; return that folder."""
    compiled = compile_text(text, filename, options, progress)
    out_root.mkdir(parents=True, exist_ok=True)
    target = out_root / compiled.resolved.slug
    if not _inside(out_root, target):
        raise RuntimeError(f"refusing to write outside {out_root}: {target}")
    for stale in sorted(out_root.glob(f".{compiled.resolved.slug}.*")):
        # Left by a build that was killed; if it died while swapping folders, the previous
        # output sits in ``.<slug>.old-*/previous``: put it back before cleaning up.
        previous = stale / "previous"
        if previous.is_dir() and not target.exists():
            os.replace(previous, target)
        shutil.rmtree(stale, ignore_errors=True)
    work = Path(tempfile.mkdtemp(prefix=f".{compiled.resolved.slug}.building-", dir=out_root))
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(work, 0o777 & ~umask)  # mkdtemp makes it private; the output is the user's
    try:
        written = emit_all(compiled, options, work, progress)
        for path in written:
            if not _inside(work, path):
                raise RuntimeError(f"a backend wrote outside the build folder: {path}")
        old = None
        if target.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{compiled.resolved.slug}.old-", dir=out_root))
            os.replace(target, old / "previous")
        os.replace(work, target)
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise
    return target
