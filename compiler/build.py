"""The pipeline in one readable function, and the atomic writing of an output folder.

load -> validate -> normalise (``compiler.spec``) -> resolve -> lay out -> emit.
Every backend writes into a fresh temporary folder beside the target; only when all of
them succeeded does that folder replace ``OUT/<instrument-slug>/``. A failed or killed
build leaves the previous output as it was.

Rebuilds are incremental: a build whose spec, options and program are unchanged, and
whose output is intact, is skipped at once; otherwise groups, DXF files and the PDF whose
inputs did not change come from the cache (``compiler.cache``). Large builds render the
PDF in a second process while the main one writes the rest.
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import os
import shutil
import tempfile
from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path
from types import ModuleType
from typing import Any

from compiler.cache import FOLDER as CACHE_FOLDER
from compiler.cache import Cache, key_of, memo
from compiler.errors import Note, Position, in_order, refuse_if_strict
from compiler.geometry.model import Parts
from compiler.ir import Resolved
from compiler.options import BuildOptions, Overrides
from compiler.spec.model import Spec

Progress = Callable[[str], None]
Warn = Callable[[Note], None]
PARALLEL_MIN_PIPES = 100
"""From this many pipes on, the PDF is rendered in a second process (2 cores)."""
LAST_BUILDS = "last-builds.json"


def backends() -> dict[str, ModuleType]:
    """Backend name -> module with ``NAME`` and ``write(resolved, parts, options, out_dir,
    cache=None) -> list[Path]``."""
    from compiler.emit import cutlist_csv, dxf, pdf, resolved_json

    return {m.NAME: m for m in (resolved_json, dxf, pdf, cutlist_csv)}


@dataclass(frozen=True)
class BuildInputs:
    """What a whole build's output depends on, and so the key an up-to-date output is found
    by: the spec's bytes, its file name (outputs name the spec file, never its folder), which
    spec file it is (``spec_origin``, kept in the manifest) and the command line's choices
    (the options settle from these and the spec)."""

    spec: bytes
    file_name: str
    spec_origin: str
    overrides: Overrides


def spec_origin(filename: str, out_root: Path) -> str:
    """Which spec file an output was built from, as the manifest keeps it: the sha256 of the
    spec's path relative to the output root (``../specs/A/spec.yaml``).

    The file's path, not its content, is what stays the same while a maker edits a spec, and
    what differs between ``A/spec.yaml`` and ``B/spec.yaml`` with the same instrument name.
    Relative to the output root, it is the same for a project checked out anywhere (a
    manifest kept in git does not change from one machine to the next); hashed, the output
    carries neither an absolute path nor the names of the spec's folders."""
    spec = Path(filename).resolve()
    try:
        where = os.path.relpath(spec, out_root.resolve())
    except ValueError:  # another drive (Windows): no relative path exists
        where = str(spec)
    return hashlib.sha256(Path(where).as_posix().encode("utf-8")).hexdigest()


@dataclass(frozen=True)
class Compiled:
    resolved: Resolved
    parts: Parts
    options: BuildOptions
    """The command line's choices merged with the spec's, once: what the backends read."""


def _quiet(_message: str) -> None:
    return None


def compile_text(text: str | bytes, filename: str, overrides: Overrides,
                 progress: Progress | None = None, cache: Cache | None = None) -> Compiled:
    """Pure core: spec text -> resolved model and parts (no files written but the cache)."""
    from compiler.spec import load_spec

    return compile_spec(load_spec(text, filename), overrides, progress, cache)


def compile_spec(spec: Spec, overrides: Overrides, progress: Progress | None = None,
                 cache: Cache | None = None) -> Compiled:
    """Resolve and lay out a loaded spec; with ``strict``, its warnings are errors."""
    from compiler.geometry.layout import layout
    from compiler.resolve.resolver import resolve

    say = progress or _quiet
    count = sum(len(r.notes) for r in spec.ranks) + sum(len(t.notes) for t in spec.tube_sets)
    say(f"resolving {count + len(spec.flutes) + len(spec.surveys)} pipes")
    resolved = resolve(spec, memo(cache, "group"))
    lost = _unprintable_names(spec)
    if lost:  # the build sheet's warning, kept with the model's (cover, manifest, --strict)
        resolved = replace(resolved, warnings=in_order([*resolved.warnings, *lost]))
    options = overrides.settle(resolved.fabrication)
    refuse_if_strict(resolved.warnings, options.strict)
    say("laying out parts")
    parts = layout(resolved, options, memo(cache, "parts"))
    return Compiled(resolved, parts, options)


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _run_backend(name: str, compiled: Compiled, folder: Path,
                 cache_folder: Path | None) -> tuple[list[Path], set[str]]:
    """One backend, in this process or a worker; returns its files and the cache keys used."""
    cache = Cache(cache_folder)
    written = backends()[name].write(compiled.resolved, compiled.parts, compiled.options,
                                     folder, cache=cache)
    return list(written), cache.used


def _die_with_parent() -> None:
    """Linux: have the kernel end this worker when the build process dies (a killed build
    must not leave a worker writing into its abandoned folder)."""
    try:
        import ctypes
        import signal

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, int(signal.SIGKILL), 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        return


def _pdf_worker(send: Any, compiled: Compiled, folder: Path, cache_folder: Path | None,
                parent: int) -> None:
    _die_with_parent()
    if os.getppid() != parent:  # the parent died before the line above took effect
        os._exit(1)
    try:
        files, used = _run_backend("pdf", compiled, folder, cache_folder)
        send.send(("ok", files, used))
    except BaseException as exc:  # reported by the parent, which raises
        send.send((f"{type(exc).__name__}: {exc}", [], set()))
    finally:
        send.close()


def emit_all(compiled: Compiled, folder: Path, progress: Progress | None = None,
             cache: Cache | None = None, build_key: str = "", origin: str = "") -> list[Path]:
    """Run every backend into ``folder``, then write ``manifest.json`` (with the spec's
    warnings, which a rebuild that finds the output up to date reports again, and the
    ``origin`` of the spec, ``spec_origin``)."""
    say = progress or _quiet
    store = cache or Cache(None)
    names = list(backends())
    written: list[Path] = []
    worker = None
    parallel = (len(compiled.resolved.pipes) >= PARALLEL_MIN_PIPES and (os.cpu_count() or 1) > 1
                and "fork" in multiprocessing.get_all_start_methods())
    if parallel:
        # A forked worker starts with the compiled model already in memory (nothing to
        # pickle); it sends back only its file names and the cache entries it used.
        context = multiprocessing.get_context("fork")
        receive, send = context.Pipe(duplex=False)
        worker = context.Process(target=_pdf_worker,
                                 args=(send, compiled, folder, store.folder, os.getpid()))
        worker.start()
        send.close()
        names.remove("pdf")
    try:
        for name in names:
            say(f"writing {name}")
            files, used = _run_backend(name, compiled, folder, store.folder)
            written += files
            store.used |= used
        if worker is not None:
            say("waiting for the pdf")
            try:
                status, files, used = receive.recv()
            except EOFError:
                status, files, used = "died", [], set()
            worker.join()
            if status != "ok":
                raise RuntimeError(f"the PDF worker failed: {status}")
            written += files
            store.used |= used
    finally:
        if worker is not None and worker.is_alive():
            worker.kill()
            worker.join()
    names_written = sorted(p.relative_to(folder).as_posix() for p in written)
    manifest = {
        "instrument": compiled.resolved.instrument,
        "spec_file": compiled.resolved.spec_file,
        "spec_origin_sha256": origin,
        "spec_sha256": compiled.resolved.spec_sha256,
        "build_key": build_key,
        "warnings": [n.shown() for n in compiled.resolved.warnings],
        "files": [{"path": f, "sha256": _sha256(folder / f), "bytes": (folder / f).stat().st_size}
                  for f in names_written],
    }
    (folder / "manifest.json").write_text(json.dumps(manifest, indent=2, sort_keys=True) + "\n",
                                          encoding="utf-8")
    return [folder / f for f in names_written] + [folder / "manifest.json"]


def _inside(base: Path, target: Path) -> bool:
    try:
        target.resolve().relative_to(base.resolve())
    except ValueError:
        return False
    return True


class OutputError(Exception):
    """The output folder cannot be written safely (a usage problem, not a spec one)."""


def _clean_leftovers(out_root: Path, slug_name: str) -> None:
    """Remove the temporary folders of builds that were killed. If one died while swapping
    folders, the previous output sits in ``.<slug>.old-*/previous``: put it back first."""
    target = out_root / slug_name
    for stale in sorted(out_root.glob(f".{slug_name}.*")):
        previous = stale / "previous"
        if previous.is_dir() and not target.exists():
            os.replace(previous, target)
        shutil.rmtree(stale, ignore_errors=True)


def _up_to_date(out_root: Path, build_key: str) -> tuple[Path, dict[str, Any]] | None:
    """The output folder of an identical earlier build and its manifest, if still intact."""
    try:
        last = json.loads((out_root / CACHE_FOLDER / LAST_BUILDS).read_text(encoding="utf-8"))
        target = out_root / str(last[build_key])
        manifest = json.loads((target / "manifest.json").read_text(encoding="utf-8"))
    except (OSError, ValueError, KeyError, TypeError):
        return None
    if manifest.get("build_key") != build_key or not _inside(out_root, target):
        return None
    listed = {f["path"] for f in manifest["files"]} | {"manifest.json"}
    present = {p.relative_to(target).as_posix() for p in target.rglob("*") if p.is_file()}
    if listed != present:
        return None
    for entry in manifest["files"]:
        if _sha256(target / entry["path"]) != entry["sha256"]:
            return None
    return target, manifest


def _remember(out_root: Path, build_key: str, slug: str) -> None:
    path = out_root / CACHE_FOLDER / LAST_BUILDS
    try:
        last = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        last = {}
    last = {k: v for k, v in last.items() if v != slug}
    last[build_key] = slug
    path.parent.mkdir(parents=True, exist_ok=True)
    temp = path.with_suffix(".tmp")
    temp.write_text(json.dumps(last, indent=2, sort_keys=True) + "\n", encoding="utf-8")
    os.replace(temp, path)


def _replacing_another_spec(target: Path, spec: Spec, resolved: Resolved,
                            origin: str) -> list[Note]:
    """A warning when the output about to be replaced was built from another spec file that
    names the same instrument (two specs would keep overwriting each other's output), at
    the spec's `instrument`. Another file is another ``spec_origin``: the same file edited
    is not (a manifest without one, from an older build, is compared by file name)."""
    try:
        manifest = json.loads((target / "manifest.json").read_text(encoding="utf-8"))
        before = str(manifest["spec_file"])
        before_origin = str(manifest.get("spec_origin_sha256") or "")
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return []
    same = before_origin == origin if before_origin else before == resolved.spec_file
    if same:
        return []
    other = f"{before} in another folder" if before == resolved.spec_file else before
    return [Note(spec.where.get("instrument", Position(spec.file, 1, 1)),
                 f"replacing {target}, the output of {other}: both specs name the instrument "
                 f"`{resolved.instrument}`; give one of them another `instrument:` name to "
                 "keep both outputs")]


def _unprintable_names(spec: Spec) -> list[Note]:
    """A warning at each name the build sheet cannot print whole (the instrument, a
    material, a hole's label): its embedded font has no glyph for some of its characters
    (Chinese, Japanese, Korean...), which it prints as ``?``."""
    from compiler.emit.pdf.style import unprintable

    named: list[tuple[str, str, Position]] = [
        ("the instrument's name", spec.instrument,
         spec.where.get("instrument", Position(spec.file, 1, 1)))]
    named += [(f"the material of stock `{s.name}`", s.material, s.position) for s in spec.stock]
    holes = [(f.id, f.holes) for f in spec.flutes] + [(v.id, v.holes) for v in spec.surveys]
    named += [(f"the label of a hole of `{owner}`", h.label, h.position)
              for owner, owned in holes for h in owned if h.label]
    named += [(f"the material of survey `{v.id}`", v.material,
               v.where.get("material", v.position)) for v in spec.surveys if v.material]
    notes = []
    for what, text, where in named:
        lost = unprintable(text)
        if lost:
            notes.append(Note(where, f"{what}, `{text}`, has characters the build sheet's "
                                     f"font cannot print ({' '.join(lost)}): they are printed "
                                     "as `?`; write it in Latin, Greek or Cyrillic letters to "
                                     "see it whole"))
    return notes


def _quiet_note(_note: Note) -> None:
    return None


def build(text: str | bytes, filename: str, out_root: Path, overrides: Overrides,
          progress: Progress | None = None, use_cache: bool = True,
          warn: Warn | None = None) -> Path:
    """Compile and write ``out_root/<slug>/`` atomically; return that folder.

    ``warn`` receives each warning, in order, before anything is written (with ``strict``
    they are errors instead); when the build was up to date, the warnings its manifest
    keeps."""
    say = progress or _quiet
    tell = warn or _quiet_note
    data = text.encode("utf-8") if isinstance(text, str) else text
    origin = spec_origin(filename, out_root)
    build_key = key_of(BuildInputs(data, Path(filename).name, origin, overrides))
    if use_cache:
        done = _up_to_date(out_root, build_key)
        if done is not None:
            target, manifest = done
            _clean_leftovers(out_root, target.name)
            say("up to date")
            for line in manifest.get("warnings", []):
                # The manifest names the spec file without its folder: put back the path
                # the user gave, so the warning still leads to the file.
                tell(Note.from_shown(str(line), filename))
            return target
    from compiler.resolve.resolver import slug
    from compiler.spec import load_spec

    spec = load_spec(data, filename)
    slug_name = slug(spec.instrument)
    cache = Cache(out_root / CACHE_FOLDER / slug_name if use_cache else None)
    compiled = compile_spec(spec, overrides, progress, cache)
    out_root.mkdir(parents=True, exist_ok=True)
    target = out_root / slug_name
    if not _inside(out_root, target):
        raise OutputError(f"refusing to write outside {out_root}: {target} leads elsewhere "
                          "(a symbolic link?); choose another output folder with -o")
    _clean_leftovers(out_root, slug_name)
    notes = in_order([*compiled.resolved.warnings,
                      *_replacing_another_spec(target, spec, compiled.resolved, origin)])
    refuse_if_strict(notes, compiled.options.strict)
    for note in notes:
        tell(note)
    work = Path(tempfile.mkdtemp(prefix=f".{slug_name}.building-", dir=out_root))
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(work, 0o777 & ~umask)  # mkdtemp makes it private; the output is the user's
    try:
        written = emit_all(compiled, work, progress, cache, build_key, origin)
        for path in written:
            if not _inside(work, path):
                raise OutputError(f"a backend wrote outside the build folder: {path}")
        old = None
        if target.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{slug_name}.old-", dir=out_root))
            os.replace(target, old / "previous")
        os.replace(work, target)
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise
    if use_cache:
        cache.prune()
        _remember(out_root, build_key, slug_name)
    return target
