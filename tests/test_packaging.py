"""The knowledge tables are found from an installed wheel, not only from a checkout."""

from __future__ import annotations

import json
import subprocess
import sys
import zipfile

import pytest


@pytest.mark.slow
def test_wheel_ships_tables_and_runs_outside_the_checkout(tmp_path, project_root):
    wheels = tmp_path / "wheels"
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", str(project_root), "--no-deps", "-q", "-w", str(wheels)],
        check=True,
        capture_output=True,
        text=True,
    )
    (wheel,) = wheels.glob("elucidate-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    for table in sorted(p.name for p in (project_root / "constraints").glob("*.yaml")):
        assert f"elucidate/_constraints/{table}" in names
    assert "elucidate/py.typed" in names
    for module in sorted((project_root / "elucidate").rglob("*.py")):  # every subpackage ships
        assert module.relative_to(project_root).as_posix() in names
    venv = tmp_path / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--system-site-packages", str(venv)], check=True)
    python = venv / "bin" / "python"
    subprocess.run(
        [str(python), "-m", "pip", "install", "-q", "--no-deps", str(wheel)], check=True, capture_output=True
    )
    workdir = tmp_path / "elsewhere"
    workdir.mkdir()
    proc = subprocess.run(
        [str(python), "-c", "import elucidate.tables as t; print(t.tables_dir())"],
        cwd=workdir,
        capture_output=True,
        text=True,
        check=True,
    )
    assert "_constraints" in proc.stdout and str(project_root) not in proc.stdout
    proc = subprocess.run(
        [
            str(venv / "bin" / "elucidate"),
            "formulas",
            "112",
            "--peaks",
            "112:100 113:6.6 114:32",
            "--json",
            "--top",
            "1",
        ],
        cwd=workdir,
        capture_output=True,
        text=True,
        check=False,
    )
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)[0]["formula"] == "C6H5Cl"
    case = workdir / "demo.yaml"
    case.write_text((project_root / "cases" / "cr-0509-i.yaml").read_text())
    proc = subprocess.run(
        [str(venv / "bin" / "elucidate"), "solve", str(case), "--json", "--top", "1"],
        cwd=workdir,
        capture_output=True,
        text=True,
        check=False,
    )
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["candidates"][0]["smiles"] == "CC(=O)c1ccc(C)cc1"
