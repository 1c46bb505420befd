"""A plain (non-editable) install works from any folder: wheel -> fresh venv -> scan the demo elsewhere.

The wheel is built from a copy of the package sources, installed into a new virtual
environment and run from a temporary folder, so nothing can be found through the
repository. By default the new environment borrows the already installed dependencies
through a ``.pth`` file (quick); with ``PITFALLS_INSTALL_TEST=full`` (set by ``.ci/run``)
pip installs the wheel with its declared dependencies, as a user's ``pip install`` does.
"""
from __future__ import annotations

import importlib.util
import json
import os
import pathlib
import shutil
import subprocess
import sys
import venv
import zipfile

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
DEPENDENCIES = ("numpy", "scipy", "segyio", "rich", "yaml")
FULL = os.environ.get("PITFALLS_INSTALL_TEST", "") == "full"


def _run(command: list[str], cwd: pathlib.Path, timeout: float = 600.0) -> subprocess.CompletedProcess:
    environment = {key: value for key, value in os.environ.items() if key not in ("PYTHONPATH", "PYTHONHOME")}
    environment["PYTHONNOUSERSITE"] = "1"
    return subprocess.run(command, cwd=cwd, env=environment, capture_output=True, text=True, timeout=timeout)


def _copy_sources(target: pathlib.Path) -> None:
    """The files a wheel is built from, and nothing else from the checkout."""
    target.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copy2(ROOT / name, target / name)
    shutil.copytree(ROOT / "pitfalls", target / "pitfalls",
                    ignore=shutil.ignore_patterns("__pycache__", "*.pyc", "*.egg-info"))


def _build_wheel(sources: pathlib.Path, wheels: pathlib.Path, cwd: pathlib.Path) -> pathlib.Path:
    command = [sys.executable, "-m", "pip", "wheel", str(sources), "--no-deps", "--quiet", "-w", str(wheels)]
    if not FULL and all(importlib.util.find_spec(name) is not None for name in ("setuptools", "wheel")):
        command.append("--no-build-isolation")  # the quick path reuses this environment's setuptools
    built = _run(command, cwd)
    assert built.returncode == 0, built.stderr
    found = sorted(wheels.glob("pitfalls-*.whl"))
    assert len(found) == 1, found
    return found[0]


def _site_packages(environment: pathlib.Path) -> pathlib.Path:
    found = [path for path in environment.glob("lib*/python*/site-packages")] or \
        [environment / "Lib" / "site-packages"]
    return found[0]


def _fresh_environment(folder: pathlib.Path, wheel: pathlib.Path, cwd: pathlib.Path) -> pathlib.Path:
    """A new venv holding the wheel; returns its bin (Scripts) folder."""
    venv.EnvBuilder(with_pip=FULL, clear=True).create(folder)
    bin_folder = folder / ("Scripts" if os.name == "nt" else "bin")
    python = bin_folder / ("python.exe" if os.name == "nt" else "python")
    if FULL:
        installed = _run([str(python), "-m", "pip", "install", "--quiet", str(wheel)], cwd, timeout=1200.0)
    else:
        homes = []
        for name in DEPENDENCIES:
            spec = importlib.util.find_spec(name)
            assert spec is not None and spec.origin, name
            home = str(pathlib.Path(spec.origin).resolve().parents[1])
            if home not in homes:
                homes.append(home)
        (_site_packages(folder) / "_borrowed_dependencies.pth").write_text("\n".join(homes) + "\n")
        installed = _run([sys.executable, "-m", "pip", "--python", str(python), "install", "--quiet", "--no-deps",
                          "--no-index", str(wheel)], cwd)
    assert installed.returncode == 0, installed.stderr
    return bin_folder


@pytest.mark.install
def test_a_wheel_installed_in_a_fresh_environment_scans_the_demo_from_another_folder(tmp_path):
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    sources = tmp_path / "sources"
    _copy_sources(sources)
    wheel = _build_wheel(sources, tmp_path / "wheels", elsewhere)

    with zipfile.ZipFile(wheel) as archive:
        names = set(archive.namelist())
        assert "pitfalls/data/report.schema.json" in names
        assert archive.read("pitfalls/data/default_rules.yaml") == (ROOT / "rules" / "default.yaml").read_bytes()
    assert not any(name.startswith(("rules/", "tests/", "demo_data/")) for name in names)

    bin_folder = _fresh_environment(tmp_path / "environment", wheel, elsewhere)
    python = str(bin_folder / ("python.exe" if os.name == "nt" else "python"))
    where = _run([python, "-c", "import pitfalls; print(pitfalls.__file__)"], elsewhere)
    assert where.returncode == 0, where.stderr
    assert pathlib.Path(where.stdout.strip()).resolve().is_relative_to((tmp_path / "environment").resolve())

    for name in ("OT25-117.sgy", "OT25-117_picks.csv"):
        shutil.copy2(ROOT / "demo_data" / name, elsewhere / name)
    command = str(bin_folder / "pitfalls")
    scanned = _run([command, "scan", "OT25-117.sgy", "--picks", "OT25-117_picks.csv", "--format", "json"], elsewhere)
    assert scanned.returncode == 1 and not scanned.stderr, scanned.stderr  # 1: planted mistakes reach the gate
    report = json.loads(scanned.stdout)
    assert report["summary"]["high"] >= 1
    assert report["rules"]["path"] == "built-in defaults"
    assert report["section"]["path"] == "OT25-117.sgy"
    assert report["findings"] and report["caution"]
    assert str(tmp_path) not in scanned.stdout  # no path the user did not type

    active = _run([command, "rules"], elsewhere)
    assert active.returncode == 0, active.stderr
    assert active.stdout.startswith("# active rules: built-in defaults\n")
    assert "water_velocity_m_s: 1500.0" in active.stdout
