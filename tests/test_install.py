"""A real (non-editable) install: build the wheel, install it into a fresh folder and run the
command line from there, away from the source tree."""

from __future__ import annotations

import subprocess
import sys
import sysconfig
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_wheel_installs_and_runs(tmp_path):
    wheels = tmp_path / "wheels"
    build = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w",
                            str(wheels), str(ROOT)], capture_output=True, text=True)
    assert build.returncode == 0, build.stderr[-2000:]
    wheel = next(wheels.glob("rungwise-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    for folder in ("core", "app"):
        for py in (ROOT / folder).rglob("*.py"):
            rel = py.relative_to(ROOT / folder).as_posix()
            assert f"rungwise/{folder}/{rel}" in names, f"{folder}/{rel} missing from the wheel"
    entry = next(n for n in names if n.endswith("entry_points.txt"))
    assert "rungwise = rungwise.app.__main__:main" in zipfile.ZipFile(wheel).read(entry).decode()

    target = tmp_path / "site"
    inst = subprocess.run([sys.executable, "-m", "pip", "install", "--no-deps", "-q", "--target",
                           str(target), str(wheel)], capture_output=True, text=True)
    assert inst.returncode == 0, inst.stderr[-2000:]
    deps = sysconfig.get_paths()["purelib"]
    # -S: no site processing, so the editable install of the source tree is not on the path
    code = (f"import sys; sys.path[:0] = [{str(target)!r}, {deps!r}];"
            "import rungwise.core, rungwise.app;"
            f"assert rungwise.core.__file__.startswith({str(target)!r}), rungwise.core.__file__;"
            "from rungwise.app.__main__ import main;"
            "sys.exit(main(['compute', '--format', 'csv', '--set', 'bits=4']))")
    run = subprocess.run([sys.executable, "-S", "-c", code], capture_output=True, text=True,
                         cwd=tmp_path)
    assert run.returncode == 0, run.stderr[-2000:]
    assert run.stdout.startswith("metric,")
    assert "max_abs_dnl" in run.stdout
