"""A build killed part-way leaves the previous output exactly as it was.

The 610-pipe example is built once; then a changed copy of it (the same instrument, so the
same output folder, but warmer air, so every file would change) is built by a real
``python -m compiler build`` process that is killed with SIGKILL at several moments:
early (resolving), later (laying out, writing), and just after it created its temporary
folder. After each kill the previous output must be byte for byte what it was, also once
any helper process of the killed build has ended; the next normal build must succeed and
remove the temporary folders the killed ones left.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

from compiler.build import build
from compiler.cache import FOLDER as CACHE_FOLDER
from compiler.options import Overrides

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "specs_examples" / "practice-organ-610.yaml"
SMALL = ROOT / "specs_examples" / "blown-stopped-tubes.yaml"
POLL_S = 0.005


def _tree(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def _complete(files: dict[str, bytes]) -> bool:
    """The files are one whole build: the manifest lists exactly them, with their digests."""
    manifest = json.loads(files["manifest.json"])
    listed = {f["path"]: f["sha256"] for f in manifest["files"]}
    return set(listed) == set(files) - {"manifest.json"} and all(
        hashlib.sha256(files[name]).hexdigest() == digest for name, digest in listed.items())


def _temporary(out: Path, slug: str) -> list[str]:
    return sorted(p.name for p in out.glob(f".{slug}.*"))


def _start(spec: Path, out: Path) -> subprocess.Popen[bytes]:
    # A session of its own, so that any helper process it forks can be found (and, at the
    # end, stopped) by the process group, which is this build's id.
    return subprocess.Popen([sys.executable, "-m", "compiler", "build", str(spec), "-o", str(out)],
                            cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            start_new_session=True)


def _group_alive(pgid: int) -> bool:
    try:
        os.killpg(pgid, 0)
    except ProcessLookupError:
        return False
    return True


def _end_group(pgid: int, timeout_s: float) -> None:
    """Let what is left of a killed build's process group end by itself, then stop it."""
    deadline = time.monotonic() + timeout_s
    while _group_alive(pgid) and time.monotonic() < deadline:
        time.sleep(0.05)
    if _group_alive(pgid):
        os.killpg(pgid, signal.SIGKILL)


def _kill_when(proc: subprocess.Popen[bytes], moment: float | str, out: Path,
               slug: str) -> bool:
    """SIGKILL the build at ``moment`` (seconds after its start, or "writing": as soon as its
    temporary folder appears); False if it finished first."""
    if moment == "writing":
        before = set(_temporary(out, slug))
        while proc.poll() is None and not {
                n for n in _temporary(out, slug) if ".building-" in n} - before:
            time.sleep(POLL_S)
    else:
        assert isinstance(moment, float)
        try:
            proc.wait(timeout=moment)
        except subprocess.TimeoutExpired:
            pass
    if proc.poll() is not None:
        return False
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    return True


def test_killed_builds_leave_the_previous_output_intact(tmp_path: Path) -> None:
    out = tmp_path / "out"
    started = time.monotonic()
    folder = build(EXAMPLE.read_bytes(), str(EXAMPLE), out, Overrides())
    duration = time.monotonic() - started
    slug = folder.name
    previous = _tree(folder)
    original = previous
    assert _complete(previous)
    changed = tmp_path / EXAMPLE.name
    text = EXAMPLE.read_text(encoding="utf-8")
    assert "temperature: 19 C" in text
    changed.write_text(text.replace("temperature: 19 C", "temperature: 23 C"), encoding="utf-8")

    # Kill moments scale with this machine's speed (the subprocess also pays its imports).
    moments: list[float | str] = [0.1 * duration, 0.35 * duration, 0.7 * duration, "writing"]
    kills = 0
    groups: list[int] = []
    try:
        for moment in moments:
            shutil.rmtree(out / CACHE_FOLDER, ignore_errors=True)  # no shortcut: real work
            proc = _start(changed, out)
            groups.append(proc.pid)
            killed = _kill_when(proc, moment, out, slug)
            if not killed:  # finished first: then it must have replaced the output whole
                assert proc.returncode == 0, f"the build failed on its own at {moment}"
                previous = _tree(folder)
                assert _complete(previous)
                continue
            kills += 1
            assert _tree(folder) == previous, f"output changed by a build killed at {moment}"
            # A helper process (the PDF renderer) may outlive the killed build for a moment:
            # it must not touch the output either.
            _end_group(proc.pid, timeout_s=20.0)
            assert _tree(folder) == previous, f"output changed after the kill at {moment}"
        assert kills >= 3, "too few builds were caught before they finished"
        assert any(".building-" in n for n in _temporary(out, slug))  # leftovers to clean

        final = subprocess.run([sys.executable, "-m", "compiler", "build", str(changed),
                                "-o", str(out)], cwd=ROOT, capture_output=True, timeout=300)
        assert final.returncode == 0, final.stderr.decode()
        assert _temporary(out, slug) == []
        rebuilt = _tree(folder)
        # The warmer air moved every pipe. (On a slow or busy machine a build may finish
        # before its kill moment and replace the output whole: compare with the original.)
        assert _complete(rebuilt) and rebuilt != original
    finally:
        for pgid in groups:
            if _group_alive(pgid):
                os.killpg(pgid, signal.SIGKILL)


def test_up_to_date_build_also_removes_leftovers_of_killed_builds(tmp_path: Path) -> None:
    out = tmp_path / "out"
    folder = build(SMALL.read_bytes(), str(SMALL), out, Overrides())
    # What a build killed while writing leaves behind: its temporary folder, half full.
    leftover = out / f".{folder.name}.building-k1lled"
    leftover.mkdir()
    (leftover / "resolved.json").write_text("{", encoding="utf-8")
    again = build(SMALL.read_bytes(), str(SMALL), out, Overrides())
    assert again == folder
    assert _temporary(out, folder.name) == []
