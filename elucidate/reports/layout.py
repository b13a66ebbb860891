"""What every report shares: the caution and plain-text table layout."""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["CAUTION", "text_table"]

CAUTION = (
    "Caution: an unknown may be toxic or reactive; handle it under your lab's safety rules. "
    "These candidates are hypotheses to confirm against a reference standard under the lab's own "
    "procedures, not an identification."
)


def text_table(rows: Sequence[Sequence[str]], right: Sequence[bool]) -> list[str]:
    """Rows as aligned text lines: columns padded to their widest cell, right-aligned where
    ``right`` says so, two spaces apart."""
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    out = []
    for r in rows:
        cells = [cell.rjust(w) if ra else cell.ljust(w) for cell, w, ra in zip(r, widths, right, strict=False)]
        out.append("  ".join(cells).rstrip())
    return out
