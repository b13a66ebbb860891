"""Reports of a run (elucidate.reports.documents): HTML checked in headless Chromium, Markdown,
CSV read back with Python's csv module (RFC 4180), SDF read back with RDKit's SDMolSupplier
(CTfile format), structures compared by InChIKey (RDKit's InChI, IUPAC).

The HTML test loads the page in Debian's Chromium (installed by .ci/run): no console error, no
network request possible (no external resource in the page), a screenshot that is not blank.
"""

from __future__ import annotations

import csv
import io
import os
import re
import shutil
import struct
import subprocess
import zlib
from pathlib import Path

import pytest

from elucidate._rdkit import Chem
from elucidate.runs import read_record

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "cr-0509-i.yaml"


@pytest.fixture(scope="module")
def run(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """One recorded run of the README demo case."""
    from elucidate.cli import main

    place = tmp_path_factory.mktemp("report")
    case = place / "unknown.yaml"
    shutil.copy(DEMO, case)
    runs = place / "runs"
    code = main(
        ["solve", str(case), "--runs", str(runs), "--no-cache", "--top", "5"],
        stdout=io.StringIO(),
        stderr=io.StringIO(),
    )
    assert code == 0
    [record] = runs.glob("*.json")
    return record


def test_html_is_self_contained_and_complete(cli, run, tmp_path):
    out = tmp_path / "r.html"
    res = cli("report", str(run), "-o", str(out))
    assert res.code == 0, res.err
    page = out.read_text(encoding="utf-8")
    assert page.startswith("<!DOCTYPE html>")
    # no network resource: no src/href to anything, no script
    assert not re.search(r"""(src|href)\s*=\s*["'](?!#)""", page)
    assert "<script" not in page.lower() and "@import" not in page
    for section in ("Evidence", "Formulas", "Elimination funnel", "Shortlist", "Evidence per candidate",
                    "Mass spectrum against predicted ions", "Suspects", "Provenance"):  # fmt: skip
        assert f"<h2>{section}" in page
    assert "hypotheses to confirm against a reference standard" in page
    assert page.count("<svg") >= 5 + 1 + 3  # 5 structures, an isotope plot, 3 spectra
    record = read_record(run)
    assert record.case_sha256 in page and record.shortlist[0]["inchikey"] in page


def test_markdown_csv_and_sdf_carry_the_shortlist(cli, run, tmp_path):
    record = read_record(run)
    shortlist = record.shortlist
    md = cli("report", str(run), "--format", "markdown").out
    assert md.startswith(f"# {record.case_id}:") and "## Shortlist" in md and record.case_sha256 in md
    assert f"`{shortlist[0]['smiles']}`" in md
    rows = list(csv.DictReader(io.StringIO(cli("report", str(run), "--format", "csv").out)))
    assert [r["smiles"] for r in rows] == [c["smiles"] for c in shortlist]
    assert float(rows[0]["score"]) == pytest.approx(shortlist[0]["score"])
    assert rows[0]["score_infrared"] != ""
    sdf = tmp_path / "r.sdf"
    assert cli("report", str(run), "-o", str(sdf)).code == 0
    mols = list(Chem.SDMolSupplier(str(sdf)))
    assert len(mols) == len(shortlist)
    for mol, c in zip(mols, shortlist):
        assert Chem.MolToInchiKey(mol) == c["inchikey"]
        assert mol.GetProp("rank") == c["rank_label"]


def test_report_of_a_case_uses_its_last_run_and_bad_targets_are_refused(cli, run, tmp_path):
    case = run.parents[1] / "unknown.yaml"
    res = cli("report", str(case), "--runs", str(run.parent), "--format", "csv")
    assert res.code == 0 and res.out.startswith("rank,smiles")
    res = cli("report", str(run), "-o", str(tmp_path / "r.yaml"))
    assert res.code == 1 and "unknown report suffix '.yaml'" in res.err
    res = cli("report", str(tmp_path / "missing.json"))
    assert res.code == 1 and "run record not found" in res.err


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        found = shutil.which(name)
        if found:
            return found
    return None


def _png_pixels(data: bytes) -> bytes:
    """The decompressed image data of a PNG (ISO/IEC 15948: chunks, IDAT, zlib)."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    pos, idat = 8, b""
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos : pos + 4])
        kind = data[pos + 4 : pos + 8]
        if kind == b"IDAT":
            idat += data[pos + 8 : pos + 8 + length]
        pos += 12 + length
    return zlib.decompress(idat)


def test_html_loads_in_headless_chromium_without_errors(cli, run, tmp_path):
    browser = _chromium()
    if browser is None:
        if os.environ.get("CI", "").lower() in ("1", "true", "yes"):
            pytest.fail("Chromium is missing: .ci/run installs Debian's chromium")
        pytest.skip("no Chromium on this machine (CI installs it)")
    page = tmp_path / "r.html"
    assert cli("report", str(run), "-o", str(page)).code == 0
    shot = tmp_path / "shot.png"
    flags = [
        browser,
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        f"--user-data-dir={tmp_path / 'profile'}",
        "--enable-logging=stderr",
        "--v=0",
        "--window-size=1200,1800",
    ]
    shown = subprocess.run([*flags, f"--screenshot={shot}", page.as_uri()], capture_output=True, text=True, timeout=180)
    assert shot.exists(), shown.stderr[-2000:]
    console = [line for line in shown.stderr.splitlines() if "CONSOLE" in line or "Uncaught" in line]
    assert console == []
    pixels = _png_pixels(shot.read_bytes())
    assert len(set(pixels)) > 20  # not one flat colour
    assert sum(1 for b in pixels[::7] if b < 200) > len(pixels[::7]) // 200  # some dark ink: text, bonds
    dom = subprocess.run([*flags, "--dump-dom", page.as_uri()], capture_output=True, text=True, timeout=180)
    assert "Elimination funnel" in dom.stdout and "Provenance" in dom.stdout
