"""YAML reading (elucidate.yamlnodes): the knowledge tables are composed with libyaml when PyYAML
has it; the tree, its lines and values, and every error must be those of PyYAML's Python loader
(the reference: PyYAML's own two loaders of the same YAML 1.1 text)."""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from elucidate.errors import ElucidateError
from elucidate.yamlnodes import parse_yaml

TABLES = sorted((Path(__file__).resolve().parent.parent / "constraints").glob("*.yaml"))

needs_libyaml = pytest.mark.skipif(not getattr(yaml, "__with_libyaml__", False), reason="PyYAML built without libyaml")


@needs_libyaml
@pytest.mark.parametrize("path", TABLES, ids=[p.name for p in TABLES])
def test_every_table_reads_the_same_with_libyaml(path: Path) -> None:
    text = path.read_text(encoding="utf-8")
    assert parse_yaml(text, file=path.name, fast=True) == parse_yaml(text, file=path.name)


BAD = [
    ("a: 1\na: 2\n", "duplicate key"),  # found while converting the composed nodes
    ("a: [1, 2\n", "not valid YAML"),  # libyaml cannot compose it: read again for the message
    ("a: 1\n  b: 2\n", "not valid YAML"),
    ("<<: {a: 1}\n", "merge keys"),
    ("a: !!int x\n", "cannot read value"),
    ("", "the file is empty"),
]


@needs_libyaml
@pytest.mark.parametrize("text,said", BAD, ids=[s for _, s in BAD])
def test_a_bad_table_gets_the_message_the_python_loader_gives(text: str, said: str) -> None:
    with pytest.raises(ElucidateError) as slow:
        parse_yaml(text, file="t.yaml")
    with pytest.raises(ElucidateError) as quick:
        parse_yaml(text, file="t.yaml", fast=True)
    assert said in str(slow.value)
    assert str(quick.value) == str(slow.value)
