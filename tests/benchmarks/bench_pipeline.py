"""Benchmark: check, resolve and build on the bundled examples, cold and incremental.

Run: ``python tests/benchmarks/bench_pipeline.py`` (prints a table; asserts nothing).
Each figure is the best wall time of a few runs of the real command in a fresh process
(``python -m compiler ...``, so start-up and imports count, as for a user), with the peak
resident memory of that process. A 61-pipe rank is cut from the 610-pipe example.

Targets on a 2-core machine: check of a 61-pipe rank < 0.2 s; build of a 61-pipe rank
< 1.5 s; the 610-pipe set < 10 s; a rebuild with no change < 0.5 s.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "specs_examples"
RUNS = 3


def run(args: list[str]) -> tuple[float, float]:
    """Wall seconds and peak resident MiB of one ``python -m compiler ARGS`` process."""
    started = time.perf_counter()
    # Byte-code caching on, as for a user (some shells set PYTHONDONTWRITEBYTECODE; without
    # .pyc files every start recompiles the sources, which costs more than the work).
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    proc = subprocess.Popen([sys.executable, "-m", "compiler", *args], cwd=ROOT, env=env,
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    elapsed = time.perf_counter() - started
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode != 0:
        assert proc.stderr is not None
        raise SystemExit(f"failed: {args}\n{proc.stderr.read().decode()}")
    return elapsed, usage.ru_maxrss / 1024


def best(args: list[str], before: object = None) -> tuple[float, float]:
    results = []
    for _ in range(RUNS):
        if callable(before):
            before()
        results.append(run(args))
    return min(r[0] for r in results), max(r[1] for r in results)


def one_rank(tmp: Path) -> Path:
    """The first rank (61 pipes) of the 610-pipe example, as a spec of its own."""
    text = (EXAMPLES / "practice-organ-610.yaml").read_text()
    head, ranks = text.split("\nranks:\n", 1)
    first = "  - id:" + ranks.split("  - id:")[1]
    spec = tmp / "rank-61.yaml"
    spec.write_text(head + "\nranks:\n" + first)
    return spec


def main() -> None:
    tmp = Path(tempfile.mkdtemp(prefix="boresmith-bench-"))
    try:
        rank = one_rank(tmp)
        specs = [("rank-61 (61 pipes)", rank)] + [
            (p.stem, p) for p in sorted(EXAMPLES.glob("*.yaml"))]
        print(f"{'spec':32} {'step':24} {'seconds':>8} {'peak MiB':>9}")
        for label, spec in specs:
            out = tmp / "out" / spec.stem
            rows = [("check", best(["check", str(spec)])),
                    ("resolve", best(["resolve", "--json", str(spec)]))]
            rows.append(("build, cold", best(["build", str(spec), "-o", str(out)],
                                             before=lambda o=out: shutil.rmtree(o, True))))
            rows.append(("rebuild, no change", best(["build", str(spec), "-o", str(out)])))
            # Edits in place, as a maker does: the spec file keeps its name, so positions
            # (file:line:col) stay the same and what did not change comes from the cache.
            work = tmp / "work" / spec.name
            work.parent.mkdir(exist_ok=True)
            text = spec.read_text()

            def edited(new_text: str, work: Path = work, text: str = text,
                       out: Path = out) -> None:
                work.write_text(text)
                run(["build", str(work), "-o", str(out)])
                work.write_text(new_text)

            # A note added at the end: the spec's hash (on every PDF page) changes, nothing
            # else does, so groups, parts and DXF sheets come from the cache.
            rows.append(("rebuild, note added", best(
                ["build", str(work), "-o", str(out)],
                before=lambda t=text: edited(t + "# a note added after a workshop visit\n"))))
            if "diameter: 40 mm}, halving_interval: 16}" in text:
                # One rank of the ten rescaled: only its pipes and sheets are redone.
                rows.append(("rebuild, one rank changed", best(
                    ["build", str(work), "-o", str(out)],
                    before=lambda t=text: edited(t.replace(
                        "diameter: 40 mm}, halving_interval: 16}",
                        "diameter: 38 mm}, halving_interval: 16}")))))
            for step, (seconds, mib) in rows:
                print(f"{label:32} {step:24} {seconds:8.3f} {mib:9.1f}")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    main()
