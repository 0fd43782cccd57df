"""The package as a clinic gets it: an sdist with the tests, the guide, the demo data and the licence, and a
wheel that installs into a fresh virtual environment and runs from there, demo included."""

from __future__ import annotations

import os
import subprocess
import sys
import sysconfig
import tarfile
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def dist(tmp_path_factory) -> Path:
    """The sdist, and the wheel built from that sdist (as `python -m build` does): a file the sdist
    lacks for building shows here too."""
    out = tmp_path_factory.mktemp("dist")
    subprocess.run([sys.executable, "-m", "build", "--outdir", str(out), str(ROOT)], check=True,
                   capture_output=True, timeout=600)
    return out


@pytest.fixture(scope="module")
def installed(dist, tmp_path_factory) -> Path:
    """A fresh virtual environment holding the wheel, the dependencies reached from this one's
    site-packages (by path only: this environment's editable install of the source is not seen)."""
    venv = tmp_path_factory.mktemp("venv")
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(venv)], check=True, timeout=120)
    python = venv / "bin" / "python"
    site = subprocess.run([python, "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                          check=True, capture_output=True, text=True).stdout.strip()
    wheel = next(dist.glob("caseload-*.whl"))
    subprocess.run([sys.executable, "-m", "pip", "--python", str(python), "install", "-q", "--no-deps", str(wheel)],
                   check=True, capture_output=True, timeout=300)
    # Only now, so that pip does not take this environment's caseload for the one to install.
    Path(site, "outer.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    return venv


def run_installed(venv: Path, *args: str, home: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "HOME": str(home), "XDG_DATA_HOME": str(home / "data"), "PYTHONPATH": ""}
    env.pop("CASELOAD_DB", None)
    return subprocess.run([venv / "bin" / "caseload", *args], capture_output=True, text=True, cwd=home, env=env,
                          stdin=subprocess.DEVNULL, timeout=300)


def test_the_sdist_holds_the_tests_the_guide_the_demo_data_and_the_licence(dist):
    sdist = next(dist.glob("caseload-*.tar.gz"))
    with tarfile.open(sdist) as tar:
        names = {name.split("/", 1)[1] for name in tar.getnames() if "/" in name}
    for needed in ("LICENSE", "DEVELOPERS.md", "README.md", "pyproject.toml", "caseload/seed_data/clinic.json",
                   "caseload/seed_data/entries.csv", "tests/conftest.py", "tests/store/test_db.py",
                   "tools/bench/build.py", "caseload/py.typed"):
        assert needed in names, needed


def test_the_wheel_holds_the_package_its_data_and_the_licence(dist):
    wheel = next(dist.glob("caseload-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    assert "caseload/py.typed" in names and "caseload/exports/templates/summary.html.j2" in names
    assert any(n.endswith(".tcss") for n in names) and "caseload/seed_data/clinic.json" in names
    assert any(n.endswith("licenses/LICENSE") for n in names)
    metadata = zipfile.ZipFile(wheel).read(next(n for n in names if n.endswith("/METADATA"))).decode()
    assert "License-Expression: MIT" in metadata
    assert not any(n.startswith("tests/") for n in names)


def test_the_installed_wheel_runs_from_its_own_environment(installed, tmp_path):
    where = subprocess.run([installed / "bin" / "python", "-c", "import caseload; print(caseload.__file__)"],
                           capture_output=True, text=True, cwd=tmp_path, check=True).stdout
    assert where.startswith(str(installed))  # the wheel's copy, not this checkout
    version = run_installed(installed, "--version", home=tmp_path)
    assert version.returncode == 0, version.stderr
    assert version.stdout.strip() == "caseload, version 0.1.0"


def test_the_installed_wheel_builds_and_lists_the_demo(installed, tmp_path):
    demo = run_installed(installed, "demo", "--no-ui", home=tmp_path)
    assert demo.returncode == 0, demo.stderr
    assert "Built the demo caseload of" in demo.stdout
    assert (tmp_path / "data" / "caseload" / "demo.db").is_file()
    again = run_installed(installed, "demo", "--no-ui", home=tmp_path)  # the README's first command, run twice
    assert again.returncode == 0, again.stderr
    assert again.stdout.startswith("Opening the demo as you left it (")
