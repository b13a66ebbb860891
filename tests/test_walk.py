"""The README's walk of one demo unknown through the working loop, command by command:
new (from the imported mass spectrum) -> solve (MS only) -> import the IR and declare groups ->
solve -> add UV and a 13C count -> solve (from the cache) -> diff -> report -> next -> history.

The answer checked at the end is 4'-methylacetophenone, the compound the invented demo data of
cases/cr-0509-i.yaml was made from (its spectra in cases/spectra/ are invented too); the
structure comparison is by RDKit canonical SMILES.
"""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SPECTRA = ROOT / "cases" / "spectra"


def test_the_readme_walk(cli, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    case = tmp_path / "unknown.yaml"
    res = cli("new", "unknown.yaml", "--from", str(SPECTRA / "cr-0509-i-ms.csv"), "--molecular-ion", "134")
    assert res.code == 0, res.err
    assert "peaks: {136: 0.2, 135: 3.6, 134: 35" in case.read_text()

    ms_only = cli("solve", "unknown.yaml", "--json")
    assert ms_only.code in (0, 4), ms_only.err  # MS alone: formulas, and advice for the large spaces
    assert ms_only.json()["formulas"][0]["formula"] == "C9H10O"

    bands = cli("import", str(SPECTRA / "cr-0509-i-ir.jdx"))
    assert bands.code == 0 and "{at: 1682, strength: strong}" in bands.out
    pasted = "".join(line + "\n" for line in bands.out.splitlines() if not line.startswith("#"))
    text = case.read_text()
    case.write_text(text + "infrared:\n" + pasted + "  require: [ketone, aromatic_ring]\n")
    with_ir = cli("solve", "unknown.yaml", "--json")
    assert with_ir.code == 0, with_ir.err

    case.write_text(case.read_text() + "uv_vis:\n  lambda_max: 252\nnmr:\n  c13_signals: 7\n")
    import elucidate.generator as generator

    def refuse(*args: object, **kwargs: object) -> None:
        raise AssertionError("generated again: the cache should have served this rerun")

    with monkeypatch.context() as patched:
        patched.setattr(generator, "isomer_smiles", refuse)
        cached = cli("solve", "unknown.yaml", "--json")
    assert cached.code == 0, cached.err
    assert cached.json()["candidates"][0]["smiles"] == "CC(=O)c1ccc(C)cc1"

    diff = cli("diff", "unknown.yaml", "--json")
    assert diff.code == 0, diff.err
    added = {e["path"] for e in diff.json()["evidence"] if e["kind"] == "added"}
    assert added == {"uv_vis.lambda_max", "nmr.c13_signals"}

    report = cli("report", "unknown.yaml", "-o", "unknown.html")
    assert report.code == 0 and (tmp_path / "unknown.html").read_text().count("<svg") > 3

    advice = cli("next", "unknown.yaml", "--json")
    assert advice.code == 0, advice.err
    names = [m["measurement"] for m in advice.json()["measurements"]]
    assert names and "a 13C spectrum (signal count)" not in names  # the case holds a 13C count

    history = cli("history", "unknown.yaml", "--json").json()["runs"]
    assert [r["revision"] for r in history] == [1, 2, 3]
    assert history[-1]["top"]["smiles"] == "CC(=O)c1ccc(C)cc1"
