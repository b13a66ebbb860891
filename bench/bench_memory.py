"""Peak memory while streaming many isomers: prints figures, asserts nothing.

    python3 bench/bench_memory.py [N]

Runs `elucidate isomers C10H12O --limit 1e8` in a child process with stdout to /dev/null, stops
it after N SMILES lines (default 1,000,000) by reading them through a pipe, and prints the
child's peak resident memory (goal: under 300 MB) next to the memory of the same child after
the first 10,000 lines, so growth is visible.
"""

from __future__ import annotations

import subprocess
import sys
import time


def peak_rss_mb(pid: int) -> float:
    with open(f"/proc/{pid}/status") as fh:
        for line in fh:
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024
    return float("nan")


def main() -> None:
    target = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    cmd = [sys.executable, "-m", "elucidate", "isomers", "C10H12O", "--limit", "1e8"]
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
    assert proc.stdout is not None
    early = None
    count = 0
    for _ in proc.stdout:
        count += 1
        if count == 10_000:
            early = peak_rss_mb(proc.pid)
        if count >= target:
            break
    peak = peak_rss_mb(proc.pid)
    proc.kill()
    proc.wait()
    seconds = time.perf_counter() - t0
    print(f"streamed {count:,} SMILES of C10H12O in {seconds:.0f} s ({count / seconds:,.0f} per s)")
    print(f"peak RSS after 10,000: {early:.0f} MB; after {count:,}: {peak:.0f} MB (goal < 300 MB)")


if __name__ == "__main__":
    main()
