"""Spectrum import (elucidate.spectra) on spectra synthesised here.

Formats: JCAMP-DX 4.24 (McDonald & Wilks, Appl. Spectrosc. 42, 151 (1988); IUPAC) with
##XYDATA=(X++(Y..Y)) in AFFN and ##PEAK TABLE=(XY..XY); two-column CSV (RFC 4180). The expected
bands and peaks are the positions the test puts in (Lorentzian IR bands, Gaussian MS profiles);
absorbance A = -log10(T) (Beer–Lambert). s/m/w thresholds are common practice.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from elucidate.case import load_case
from elucidate.errors import ElucidateError
from elucidate.spectra import pick, read_spectrum

#: (cm-1, absorbance at the band centre, half width) of the synthetic IR spectrum
IR_BANDS = [(2955.0, 0.35, 12.0), (1715.0, 1.2, 9.0), (1365.0, 0.3, 8.0), (1160.0, 0.08, 8.0)]
#: (m/z, % of base) of the synthetic EI spectrum
MS_PEAKS = {134: 35.0, 135: 3.6, 119: 100.0, 91: 60.0, 65: 15.0, 43: 10.0}


def _ir_absorbance(x: np.ndarray) -> np.ndarray:
    a = np.full_like(x, 0.02)
    for centre, height, width in IR_BANDS:
        a += height / (1 + ((x - centre) / width) ** 2)
    return a


def _jcamp_xydata(x: np.ndarray, y: np.ndarray, *, data_type: str, yunits: str) -> str:
    """An AFFN (X++(Y..Y)) JCAMP-DX file: each line an x then up to 8 y values."""
    dx = float(x[1] - x[0])
    lines = [
        "##TITLE= synthetic test spectrum",
        "##JCAMP-DX= 4.24",
        f"##DATA TYPE= {data_type}",
        "##XUNITS= 1/CM" if "INFRARED" in data_type else "##XUNITS= M/Z",
        f"##YUNITS= {yunits}",
        f"##FIRSTX= {x[0]:.4f}",
        f"##LASTX= {x[-1]:.4f}",
        f"##DELTAX= {dx:.6f}",
        "##XFACTOR= 1.0",
        "##YFACTOR= 0.000001",
        f"##NPOINTS= {len(x)}",
        "##XYDATA= (X++(Y..Y))",
    ]
    for start in range(0, len(x), 8):
        ys = " ".join(str(round(v * 1e6)) for v in y[start : start + 8])
        lines.append(f"{x[start]:.4f} {ys}")
    lines.append("##END=")
    return "\n".join(lines) + "\n"


def _check_ir(bands: tuple[tuple[float, str], ...]) -> None:
    found = dict(bands)
    assert len(found) == len(IR_BANDS)
    for centre, _, _ in IR_BANDS:
        assert any(abs(at - centre) <= 2 for at in found), (centre, found)
    by_centre = {min(found, key=lambda at: abs(at - c)): c for c, _, _ in IR_BANDS}
    strength = {by_centre[at]: s for at, s in found.items()}
    assert strength == {2955.0: "medium", 1715.0: "strong", 1365.0: "medium", 1160.0: "weak"}


def test_ir_in_transmittance_from_jcamp(tmp_path: Path) -> None:
    x = np.arange(400.0, 4000.0, 2.0)
    t = 100.0 * 10 ** (-_ir_absorbance(x))  # %T
    path = tmp_path / "ir.jdx"
    path.write_text(_jcamp_xydata(x, t, data_type="INFRARED SPECTRUM", yunits="TRANSMITTANCE"))
    trace = read_spectrum(path)
    assert trace.kind == "ir" and trace.y_units == "transmittance"
    spectrum = pick(trace, source=str(path))
    _check_ir(spectrum.bands)
    assert [b[0] for b in spectrum.bands] == sorted((b[0] for b in spectrum.bands), reverse=True)


def test_ir_in_absorbance_from_csv_without_units(tmp_path: Path) -> None:
    x = np.arange(4000.0, 400.0, -1.0)  # descending, as many instruments write it
    path = tmp_path / "ir.csv"
    path.write_text("wavenumber (cm-1),A\n" + "".join(f"{a:.1f},{b:.6f}\n" for a, b in zip(x, _ir_absorbance(x))))
    spectrum = pick(read_spectrum(path), source=str(path))
    _check_ir(spectrum.bands)


def test_ms_profile_is_centroided_to_nominal_peaks(tmp_path: Path) -> None:
    x = np.arange(30.0, 150.0, 0.05)
    y = np.zeros_like(x)
    for mz, height in MS_PEAKS.items():
        y += 1000 * height * np.exp(-0.5 * ((x - (mz + 0.03)) / 0.12) ** 2)
    path = tmp_path / "ms.jdx"
    path.write_text(_jcamp_xydata(x, y, data_type="MASS SPECTRUM", yunits="RELATIVE ABUNDANCE"))
    spectrum = pick(read_spectrum(path), source=str(path))
    assert set(spectrum.peaks) == set(MS_PEAKS)
    for mz, height in MS_PEAKS.items():
        assert spectrum.peaks[mz] == pytest.approx(height, abs=0.5)


def test_ms_peak_table_from_jcamp_and_csv(tmp_path: Path) -> None:
    table = tmp_path / "ms.jdx"
    table.write_text(
        "##TITLE= synthetic\n##JCAMP-DX= 4.24\n##DATA TYPE= MASS SPECTRUM\n##DATA CLASS= PEAK TABLE\n"
        "##XUNITS= M/Z\n##YUNITS= RELATIVE ABUNDANCE\n##NPOINTS= 4\n##PEAK TABLE= (XY..XY)\n"
        "77,460 112,1000\n114,324 30,0.5\n##END=\n"
    )
    spectrum = pick(read_spectrum(table), source=str(table))
    assert spectrum.peaks == {77: 46.0, 112: 100.0, 114: 32.4}  # 30 at 0.05 % is below 0.1 %
    csv_path = tmp_path / "ms.csv"
    csv_path.write_text("m/z;intensity\n77;460\n112;1000\n114;324\n")
    assert pick(read_spectrum(csv_path), source="x").peaks == {77: 46.0, 112: 100.0, 114: 32.4}


def test_import_prints_lines_to_paste_and_writes_a_case(cli, tmp_path: Path) -> None:
    csv_path = tmp_path / "ms.csv"
    csv_path.write_text("m/z,intensity\n77,46\n112,100\n113,6.6\n114,32.4\n")
    res = cli("import", str(csv_path))
    assert res.code == 0, res.err
    assert "  peaks: {114: 32.4, 113: 6.6, 112: 100, 77: 46}" in res.out
    case = tmp_path / "lot-9.yaml"
    assert cli("import", str(csv_path), "-o", str(case)).code == 0
    loaded = load_case(case)
    assert loaded.id == "lot-9" and loaded.mass_spec is not None
    assert dict(loaded.mass_spec.peaks) == {77: 46.0, 112: 100.0, 113: 6.6, 114: 32.4}
    again = cli("import", str(csv_path), "-o", str(case))
    assert again.code == 1 and "already exists" in again.err
    new = tmp_path / "lot-10.yaml"
    assert cli("new", str(new), "--from", str(csv_path), "--kind", "ms").code == 0
    assert cli("check", str(new)).code == 0


@pytest.mark.parametrize(
    ("name", "content", "message"),
    [
        ("missing.jdx", None, "file not found"),
        ("bad.jdx", "this is not a spectrum\n", "not a JCAMP-DX file"),
        ("one.csv", "1\n2\n", "expected two columns"),
        ("words.csv", "x,y\n1,2\nthree,4\n", "expected two numbers"),
        ("plain.csv", "1,2\n3,4\n", "give --kind ir or --kind ms"),
        ("odd.xyz", "1,2\n", "unknown spectrum file type '.xyz'"),
    ],
)
def test_bad_spectrum_files_name_the_file_and_the_problem(cli, tmp_path: Path, name, content, message) -> None:
    path = tmp_path / name
    if content is not None:
        path.write_text(content)
    res = cli("import", str(path))
    assert res.code == 1 and message in res.err and str(path) in res.err
    assert "Traceback" not in res.err
    with pytest.raises(ElucidateError):
        read_spectrum(path)
