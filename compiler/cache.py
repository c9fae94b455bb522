"""A content-addressed store that lets a rebuild skip work whose inputs did not change.

Every key is the sha256 of the program's own fingerprint (its source files, schemas and
fonts, and the versions of Python, zlib and the libraries that compute and write the
output) and of the ``repr`` of the inputs (frozen dataclasses, whose reprs are
deterministic), so a new version of boresmith, or of a library under it, never reads an
old entry. Entries are plain files under ``OUT/.boresmith-cache/<instrument>/``; after
each build the entries it did not use are removed, so the cache stays about one build's
size.
"""

from __future__ import annotations

import hashlib
import os
import pickle
import platform
import tempfile
import zlib
from collections.abc import Callable
from functools import lru_cache
from importlib import metadata
from pathlib import Path
from typing import Any, TypeVar

T = TypeVar("T")
FOLDER = ".boresmith-cache"

LIBRARIES = ("pyyaml", "jsonschema", "numpy", "ezdxf", "reportlab", "shapely", "soundfile")
"""The distributions boresmith depends on (``pyproject.toml``): another version of one may
compute or write other bytes (ezdxf the DXF files, reportlab the PDF and the page bodies
a rebuild replays, numpy and shapely the numbers and outlines)."""


def runtime() -> str:
    """The versions of Python, zlib (the PDF's compressed streams) and ``LIBRARIES``."""
    lines = [f"{platform.python_implementation()} {platform.python_version()}",
             f"zlib {zlib.ZLIB_RUNTIME_VERSION}"]
    for name in LIBRARIES:
        try:
            version = metadata.version(name)
        except metadata.PackageNotFoundError:
            version = "not installed"
        lines.append(f"{name} {version}")
    return "\n".join(lines)


@lru_cache(maxsize=1)
def fingerprint() -> str:
    """sha256 over boresmith's own source, schema and font files and the ``runtime`` (a
    change empties the cache: a cached rebuild must give a cold build's bytes)."""
    package = Path(__file__).resolve().parent
    digest = hashlib.sha256(runtime().encode())
    roots = [package, package / "schemas", package.parent / "schemas"]
    files = sorted({p for root in roots if root.is_dir() for p in root.rglob("*")
                    if p.suffix in (".py", ".json", ".ttf") and "__pycache__" not in p.parts})
    for path in files:
        digest.update(path.name.encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()


def key_of(*inputs: object) -> str:
    """The cache key of some inputs: sha256 of the fingerprint and their reprs."""
    digest = hashlib.sha256(fingerprint().encode())
    for item in inputs:
        digest.update(b"\x00")
        digest.update(repr(item).encode("utf-8"))
    return digest.hexdigest()


def content_digest(value: object) -> str:
    """sha256 of a frozen value's ``repr`` alone, without the program's fingerprint: the
    same content gives the same digest in every version of boresmith (for identifiers
    written into the output, which must not change when only the program did)."""
    return hashlib.sha256(repr(value).encode("utf-8")).hexdigest()


class Cache:
    """Bytes or pickled values by key, in ``folder``; ``Cache(None)`` keeps nothing."""

    def __init__(self, folder: Path | None) -> None:
        self.folder = folder
        self.used: set[str] = set()

    def _path(self, kind: str, key: str) -> Path | None:
        return None if self.folder is None else self.folder / f"{kind}-{key}"

    def data(self, kind: str, key: str, make: Callable[[], bytes]) -> bytes:
        """The stored bytes for ``key``, or ``make()`` stored for next time."""
        path = self._path(kind, key)
        if path is None:
            return make()
        self.used.add(path.name)
        try:
            return path.read_bytes()
        except OSError:
            pass
        made = make()
        self._store(path, made)
        return made

    def value(self, kind: str, key: str, make: Callable[[], T]) -> T:
        """Like ``data`` for any picklable value (only ever read back by this program)."""
        raw = self.data(kind, key, lambda: pickle.dumps(make(), protocol=pickle.HIGHEST_PROTOCOL))
        result: T = pickle.loads(raw)
        return result

    def _store(self, path: Path, data: bytes) -> None:
        path.parent.mkdir(parents=True, exist_ok=True)
        handle, temp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-")
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
        os.replace(temp, path)

    def forget(self, kind: str, key: str) -> None:
        """Drop one entry (made, but not fit to be reused)."""
        path = self._path(kind, key)
        if path is not None:
            self.used.discard(path.name)
            path.unlink(missing_ok=True)

    def prune(self, keep: set[str] | None = None) -> None:
        """Remove the entries this build did not use (and ``keep`` names)."""
        if self.folder is None or not self.folder.is_dir():
            return
        wanted = self.used | (keep or set())
        for entry in self.folder.iterdir():
            if entry.name not in wanted:
                entry.unlink(missing_ok=True)


def memo(cache: Cache | None, kind: str) -> Callable[[Any, Callable[[], T]], T]:
    """A ``memo(inputs, make)`` function for pure stages: cached when ``cache`` is given."""

    def run(inputs: Any, make: Callable[[], T]) -> T:
        if cache is None or cache.folder is None:
            return make()
        return cache.value(kind, key_of(inputs), make)

    return run
