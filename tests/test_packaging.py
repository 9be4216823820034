"""Demo data and packaging: what a plain (non-editable) install carries.

What is checked, and against what:
- the shipped demo designs (package data) and the repository's ``designs/`` copies are the same
  bytes, and ``ir.demo_design`` loads exactly what ``ir.load_design`` loads from the file;
- a wheel built from the sources (setuptools, ``pip wheel --no-build-isolation``) holds every
  subpackage that exists in the source tree, the design files and the LICENSE, and its metadata
  carries the SPDX license expression (core metadata 2.4 ``License-Expression``, PEP 639);
- installed into a fresh venv, outside the repository, the README's core example runs with
  ``ir.demo_design`` and the package is imported from that venv, not from the source tree.
"""

import email
import os
import re
import shutil
import subprocess
import sys
import sysconfig
import zipfile
from pathlib import Path

import numpy as np
import pytest

import inertia_review as ir

ROOT = Path(__file__).resolve().parents[1]
DATA = ROOT / "inertia_review" / "data" / "designs"


def test_demo_designs_listed_and_top_level_copies_identical():
    names = ir.demo_designs()
    assert names == tuple(sorted(p.stem for p in DATA.glob("*.toml")))
    assert {"kestrel_a", "kestrel_b", "kestrel_c", "kestrel_wall", "sorter_planar"} <= set(names)
    top = sorted(p.name for p in (ROOT / "designs").glob("*.toml"))
    assert top == sorted(f"{n}.toml" for n in names)
    for name in names:                        # keep designs/ as plain copies of the package data
        assert (ROOT / "designs" / f"{name}.toml").read_bytes() == \
            ir.demo_design_path(name).read_bytes(), f"designs/{name}.toml differs from the package copy"


def test_demo_design_equals_load_design_of_its_file():
    q = np.deg2rad([[0.0, 30.0, -60.0], [45.0, 60.0, -90.0]])
    a = ir.demo_design("kestrel_a")
    b = ir.load_design(ROOT / "designs" / "kestrel_a.toml")
    np.testing.assert_array_equal(a.mass_matrix(q), b.mass_matrix(q))


@pytest.mark.parametrize("bad", ["kestrel_z", "", None, "kestrel_a.toml"])
def test_unknown_demo_design_names_the_choices(bad):
    with pytest.raises(ValueError, match="no design named .*kestrel_a"):
        ir.demo_design(bad)


def _readme_core_example():
    text = (ROOT / "README.md").read_text()
    section = text.split("## Using the core", 1)[1]
    block = re.search(r"```python\n(.*?)```", section, re.S).group(1)
    assert "ir.demo_design(" in block
    return block


@pytest.fixture(scope="module")
def wheel(tmp_path_factory):
    """Build the wheel from a copy of the sources (keeps build/ and egg-info out of the tree)."""
    src = tmp_path_factory.mktemp("src")
    for name in ("pyproject.toml", "README.md", "LICENSE"):
        shutil.copy(ROOT / name, src / name)
    shutil.copytree(ROOT / "inertia_review", src / "inertia_review",
                    ignore=shutil.ignore_patterns("__pycache__"))
    out = tmp_path_factory.mktemp("dist")
    subprocess.run([sys.executable, "-m", "pip", "wheel", "-q", "--no-deps",
                    "--no-build-isolation", "-w", str(out), str(src)],
                   check=True, capture_output=True, text=True, timeout=120)
    (whl,) = out.glob("inertia_review-*.whl")
    return whl


def test_wheel_holds_every_subpackage_data_and_license(wheel):
    with zipfile.ZipFile(wheel) as z:
        names = set(z.namelist())
        meta_name = next(n for n in names if n.endswith(".dist-info/METADATA"))
        meta = email.message_from_bytes(z.read(meta_name))
    for init in (ROOT / "inertia_review").rglob("__init__.py"):
        rel = init.relative_to(ROOT).as_posix()
        assert rel in names, f"{rel} missing from the wheel"
    for design in DATA.glob("*.toml"):
        assert design.relative_to(ROOT).as_posix() in names
    for data in (ROOT / "inertia_review" / "data").glob("*.toml"):
        assert data.relative_to(ROOT).as_posix() in names
    assert any(n.endswith(".dist-info/licenses/LICENSE") for n in names)
    assert meta["License-Expression"] == "MIT"
    requires = " ".join(meta.get_all("Requires-Dist"))
    assert "pillow" in requires


@pytest.mark.slow
def test_readme_core_example_runs_from_installed_wheel(wheel, tmp_path):
    env_dir = tmp_path / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(env_dir)],
                   check=True, timeout=60)
    py = env_dir / "bin" / "python"
    # the dependencies come from this test's environment through a plain path entry, which does
    # not process that environment's .pth files (so no editable install of the source tree)
    site = Path(subprocess.run([str(py), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                               check=True, capture_output=True, text=True).stdout.strip())
    (site / "deps.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    clean = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}   # no source tree
    subprocess.run([sys.executable, "-m", "pip", "--python", str(py), "install", "-q",
                    "--no-deps", "--no-index", str(wheel)],
                   check=True, capture_output=True, text=True, timeout=120, env=clean)
    script = _readme_core_example() + (
        "\nimport pathlib, inertia_review\n"
        "print('FROM', pathlib.Path(inertia_review.__file__).resolve())\n"
        "print('SHAPE', arm.mass_matrix(q).shape)\n"
        "print('NAMES', ','.join(ir.demo_designs()))\n"
        "print('MARGIN', ir.torque_headroom(arm, q, accel_mps2=2.0).min_margin.tolist())\n")
    run = subprocess.run([str(py), "-I", "-c", script], cwd=tmp_path, capture_output=True,
                         text=True, timeout=120, env={"PATH": "/usr/bin:/bin", "MPLBACKEND": "Agg"})
    assert run.returncode == 0, run.stderr
    lines = dict(line.split(" ", 1) for line in run.stdout.splitlines() if " " in line)
    assert Path(lines["FROM"]).is_relative_to(env_dir.resolve())
    assert not Path(lines["FROM"]).is_relative_to(ROOT)
    assert lines["SHAPE"] == "(2, 3, 3)"
    assert "kestrel_a" in lines["NAMES"].split(",")
    expected = ir.torque_headroom(ir.demo_design("kestrel_a"),
                                  np.deg2rad([[0, 30, -60], [45, 60, -90]]), accel_mps2=2.0)
    np.testing.assert_allclose(eval(lines["MARGIN"]), expected.min_margin, rtol=1e-12)
