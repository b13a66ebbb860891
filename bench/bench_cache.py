"""Reruns from the candidate cache: prints figures, asserts nothing.

    python3 bench/bench_cache.py [CASE ...]

For each case (default: three demo cases), in one run: ``solve`` with an empty cache (generates
and fills it), then again with one IR band added to the case (soft evidence: the candidates are
read back and only scored), then the same changed case without the cache. The speed-up is the
no-cache time over the cached time, measured side by side.
"""

from __future__ import annotations

import io
import sys
import tempfile
import time
from pathlib import Path

from elucidate.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEFAULT = ["cases/cr-0509-i.yaml", "cases/cr-0502-h.yaml", "cases/cr-0611-j.yaml"]


def _timed(argv: list[str]) -> tuple[float, str]:
    out = io.StringIO()
    t0 = time.perf_counter()
    code = main(argv, stdout=out, stderr=io.StringIO())
    elapsed = time.perf_counter() - t0
    if code not in (0, 3):
        raise SystemExit(f"{' '.join(argv)}: exit {code}")
    return elapsed, out.getvalue()


def main_bench(cases: list[str]) -> None:
    print(f"{'case':>24} {'cold s':>8} {'cached s':>9} {'no-cache s':>10} {'speed-up':>9} {'same':>5}")
    for name in cases:
        with tempfile.TemporaryDirectory() as tmp:
            case = Path(tmp) / Path(name).name
            text = (ROOT / name).read_text(encoding="utf-8")
            case.write_text(text, encoding="utf-8")
            cache = str(Path(tmp) / "c.sqlite")
            common = ["solve", str(case), "--json", "--no-record"]
            cold, _ = _timed([*common, "--cache", cache])
            # soft evidence arrives: one more IR band (a new infrared section when there is none)
            head, band = "infrared:\n  bands:\n", "    - {at: 1380, strength: medium}\n"
            text = text.replace(head, head + band) if head in text else text + head + band
            case.write_text(text, encoding="utf-8")
            warm, out_cached = _timed([*common, "--cache", cache])
            fresh, out_fresh = _timed([*common, "--no-cache"])
            print(
                f"{Path(name).stem:>24} {cold:>8.2f} {warm:>9.2f} {fresh:>10.2f} {fresh / warm:>8.1f}x"
                f" {out_cached == out_fresh!s:>5}"
            )


if __name__ == "__main__":
    main_bench(sys.argv[1:] or DEFAULT)
