"""A new case file: a commented template, optionally filled from a nominal mass or a peak list.

The text is built here and checked by the case loader before it is written (a template that
would not load is a bug, not the user's problem); the command line refuses to overwrite a file.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from .case import parse_case
from .errors import ElucidateError

__all__ = ["case_template"]

_ID = re.compile(r"^[a-z0-9][a-z0-9._-]{0,63}$")


def _peaks(peaks: Mapping[int, float]) -> str:
    return "{" + ", ".join(f"{mz}: {i:g}" for mz, i in sorted(peaks.items(), reverse=True)) + "}"


def case_template(
    case_id: str,
    *,
    title: str = "",
    molecular_ion: int | None = None,
    peaks: Mapping[int, float] | None = None,
    bands: tuple[tuple[float, str], ...] = (),
    source: str | None = None,
) -> str:
    """The text of a new case file. ``peaks`` (m/z -> % of base peak) and ``bands``
    ((cm-1, strength), ...) come from an imported spectrum (``source`` names it); with neither
    peaks nor a molecular ion the mass-spectrum section is left for the chemist to fill in."""
    if not _ID.match(case_id):
        raise ElucidateError(f"id {case_id!r}: 1-64 characters of a-z 0-9 . _ -, starting with a letter or digit")
    title_text = title or "(what the unknown is, where it came from)"
    lines = [
        "# Case file for elucidate, schema 1 (docs/case-format.md). Lines after # are comments.",
        "# Keep the id when evidence is added: each saved state is a revision of this unknown.",
        "# Caution: an unknown may be toxic or reactive; the shortlist is a hypothesis to confirm",
        "# against a reference standard under the lab's own procedures.",
        "schema: 1",
        f"id: {case_id}",
        f"title: {_quoted(title_text)}",
        'notes: ""',
    ]
    if source:
        lines.append(f"# spectrum imported from {source}")
    if molecular_ion is not None or peaks:
        m = "unknown" if molecular_ion is None else str(molecular_ion)
        shown = dict(peaks or {})
        if molecular_ion is not None and molecular_ion not in shown:
            shown[molecular_ion] = 100.0 if not shown else 1.0
        if not shown:
            shown = {molecular_ion or 0: 100.0}
        lines += [
            "mass_spec:",
            "  ionization: EI",
            f"  molecular_ion: {m}            # nominal m/z of M+.; unknown when not seen",
            f"  peaks: {_peaks(shown)}   # m/z: % of base peak",
        ]
    else:
        lines += [
            "# mass_spec:                    # fill in, then remove the # signs",
            "#   ionization: EI",
            "#   molecular_ion: 134          # nominal m/z of M+.; unknown when not seen",
            "#   peaks: {134: 35, 135: 3.6, 119: 100, 91: 60}   # m/z: % of base peak",
        ]
    lines += [
        "formula:",
        "  elements: {C: 0-30, H: 0-60, N: 0-4, O: 0-6}   # add S, Cl, Br ... when the cluster calls for them",
    ]
    if bands:
        lines += ["infrared:", "  bands:"]
        lines += [f"    - {{at: {at:g}, strength: {strength}}}" for at, strength in bands]
        lines.append("  # require: [ketone]            # groups you are sure of (elucidate isomers --list-groups)")
    else:
        lines += [
            "# infrared:",
            "#   bands:",
            "#     - {at: 1715, strength: strong}",
            "#   require: [ketone]             # groups you are sure of: hard constraints",
        ]
    lines += [
        "# uv_vis:",
        "#   lambda_max: 246",
        "#   solvent: ethanol",
        "# nmr:",
        "#   c13:",
        "#     - {ppm: 197.8, type: C}",
        "#   carbon_types: {CH3: 2, CH2: 0, CH: 4, C: 3}   # hard",
        "# structure:",
        '#   suspects: ["CC(=O)c1ccc(C)cc1"]',
    ]
    text = "\n".join(lines) + "\n"
    parse_case(text, file="<new case>")  # the template itself must load
    return text


def _quoted(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'
