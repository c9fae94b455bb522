"""A wheel built from the checkout, installed (not editable) into a fresh virtual
environment, finds its schema and checks a spec from a folder outside the checkout."""

from __future__ import annotations

import shutil
import site
import subprocess
import sys
import sysconfig
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_wheel_in_a_fresh_venv_checks_a_spec(tmp_path: Path) -> None:
    source = tmp_path / "src"
    source.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copy(ROOT / name, source / name)
    for folder in ("compiler", "schemas"):
        shutil.copytree(ROOT / folder, source / folder,
                        ignore=shutil.ignore_patterns("__pycache__"))
    wheels = tmp_path / "wheels"
    subprocess.run([sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "-w", str(wheels),
                    str(source)], check=True, capture_output=True)
    wheel = next(wheels.glob("boresmith-*.whl"))

    venv = tmp_path / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(venv)], check=True)
    python = venv / "bin" / "python"
    purelib = subprocess.run([str(python), "-c", "import sysconfig; "
                              "print(sysconfig.get_paths()['purelib'])"],
                             capture_output=True, text=True, check=True).stdout.strip()
    # The wheel goes in alone; its run-time dependencies are borrowed from this environment
    # through a .pth file, so the test needs no network. The checkout itself is not on the path.
    subprocess.run([sys.executable, "-m", "pip", "install", "-q", "--no-deps", "--target",
                    purelib, str(wheel)], check=True, capture_output=True)
    borrowed = [p for p in {sysconfig.get_paths()["purelib"], sysconfig.get_paths()["platlib"],
                            *site.getsitepackages()} if Path(p).is_dir()]
    (Path(purelib) / "borrowed-deps.pth").write_text("\n".join(sorted(borrowed)) + "\n")

    spec = tmp_path / "elsewhere" / "tubes.yaml"
    spec.parent.mkdir()
    spec.write_text("boresmith: 1\ninstrument: Wheel test\nstock:\n"
                    "  alu: {material: aluminium, tube: {outside_diameter: 22 mm, wall: 1 mm}}\n"
                    "tube_sets:\n  - {id: t, family: open-tube, stock: alu, notes: C5..C6}\n")
    where = subprocess.run([str(python), "-c", "import compiler; print(compiler.__file__)"],
                           capture_output=True, text=True, check=True, cwd=spec.parent)
    assert where.stdout.startswith(purelib)
    done = subprocess.run([str(python), "-m", "compiler", "check", str(spec)],
                          capture_output=True, text=True, cwd=spec.parent, check=False)
    assert done.returncode == 0, done.stderr
    bad = spec.with_name("bad.yaml")
    bad.write_text(spec.read_text().replace("instrument:", "instrumnet:"))
    done = subprocess.run([str(python), "-m", "compiler", "check", str(bad)],
                          capture_output=True, text=True, cwd=spec.parent, check=False)
    assert done.returncode == 1
    assert f"{bad}:2:1: error: unknown key `instrumnet`" in done.stderr
    # every backend is in the wheel: a full build works from the installed package
    done = subprocess.run([str(python), "-m", "compiler", "build", str(spec), "-o", "built"],
                          capture_output=True, text=True, cwd=spec.parent, check=False)
    assert done.returncode == 0, done.stderr
    made = sorted(p.name for p in (spec.parent / "built" / "wheel-test").iterdir())
    assert made == ["build-sheet.pdf", "cut-list.csv", "manifest.json", "resolved.json"]
