"""Strict, located reading of YAML documents (case files and knowledge tables).

``yaml.safe_load`` loses line numbers and silently accepts duplicate keys, so documents are first
composed into a node tree (with the safe loader) and then turned into :class:`Located` values that
remember the file, line and dotted key path of every value. The helpers below read one typed value
each and raise :class:`~elucidate.errors.ElucidateError` with a message saying what was expected.
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from .errors import ElucidateError

__all__ = [
    "MAX_YAML_BYTES",
    "Located",
    "as_bool",
    "as_choice",
    "as_int",
    "as_list",
    "as_number",
    "as_range",
    "as_str",
    "check_gap",
    "mapping",
    "parse_range_text",
    "parse_yaml",
    "read_text_file",
    "read_yaml_file",
]

_MAX_NODES = 200_000
_RANGE = re.compile(r"([0-9]+)\s*(?:-\s*([0-9]+))?", re.ASCII)
_MAX_DEPTH = 60
_KEY_PART = re.compile(r"([^.\[\]]+)|\[(\d+)\]")


@dataclass(frozen=True)
class Located:
    """A YAML value with the place it came from.

    ``value`` is a scalar (str, int, float, bool, None, date), a ``dict`` mapping plain keys to
    :class:`Located`, or a ``list`` of :class:`Located`.
    """

    value: Any
    file: str
    line: int
    key: str
    flow_gap: bool = False  # a key in a {...} mapping written without a value

    def error(self, message: str) -> ElucidateError:
        return ElucidateError(message, file=self.file, line=self.line, key=self.key or None)

    def child_key(self, name: object) -> str:
        return f"{self.key}.{name}" if self.key else str(name)

    @property
    def is_missing(self) -> bool:
        return self.value is None

    def find(self, key: str) -> Located:
        """The deepest value along a dotted key path such as ``rules[3].smarts`` (the path is
        relative to this value; parts the document does not have are ignored)."""
        node = self
        for name, index in _KEY_PART.findall(key):
            child: Located | None = None
            position = index or (name if name.isdigit() else "")
            if name and isinstance(node.value, dict):
                child = next((v for k, v in node.value.items() if str(k) == name), None)
            elif position and isinstance(node.value, list) and int(position) < len(node.value):
                child = node.value[int(position)]
            if child is None:
                break
            node = child
        return node


#: the largest case file read (a case file is a few kB; this leaves room for long notes)
MAX_YAML_BYTES = 1_000_000


def read_text_file(path: str | Path, *, max_bytes: int | None = None) -> str:
    """The UTF-8 text of a file (a byte-order mark dropped), refused above ``max_bytes``
    before it is read; never modifies it."""
    name = str(path)
    try:
        size = Path(path).stat().st_size
    except OSError:
        size = 0  # the read below says what is wrong
    if max_bytes is not None and size > max_bytes:
        raise ElucidateError(
            f"the file is {size:,} bytes; a case file is read up to {max_bytes:,} bytes (move long notes or "
            "spectra out of it: elucidate import reads spectra from their own files)",
            file=name,
        )
    try:
        data = Path(path).read_bytes()
    except FileNotFoundError as exc:
        raise ElucidateError("file not found", file=name) from exc
    except IsADirectoryError as exc:
        raise ElucidateError("is a directory, expected a text file", file=name) from exc
    except OSError as exc:
        raise ElucidateError(f"cannot read file: {exc.strerror}", file=name) from exc
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise ElucidateError("not UTF-8 text (save the file as UTF-8)", file=name, line=line) from exc


def read_yaml_file(path: str | Path, *, table: bool = False) -> Located:
    """Read and compose a YAML file of at most :data:`MAX_YAML_BYTES`; never modifies it.
    ``table``: a knowledge table (:func:`parse_yaml`'s ``fast``)."""
    return parse_yaml(read_text_file(path, max_bytes=MAX_YAML_BYTES), file=str(path), fast=table)


#: PyYAML's safe loader on libyaml, when PyYAML was built with it
_FAST_LOADER: type[yaml.SafeLoader] | None = getattr(yaml, "CSafeLoader", None)


def parse_yaml(text: str, *, file: str = "<text>", fast: bool = False) -> Located:
    """Compose ``text`` with the safe loader and convert it to a :class:`Located` tree.
    ``fast``: compose with libyaml when PyYAML has it (the knowledge tables: a tenth of the time,
    the same nodes, lines and values); a text libyaml cannot compose is composed again by the
    Python loader, so its error reads as it always does. Case files keep the Python loader: its
    reading of unusual text is the one their checks were written for."""
    if fast and _FAST_LOADER is not None:
        root = None  # when libyaml cannot compose the text, it is read again below for the message
        try:
            quick = _FAST_LOADER(text)
        except (yaml.YAMLError, ValueError):
            quick = None
        if quick is not None:
            try:
                root = quick.get_single_node()
            except (yaml.YAMLError, ValueError, RecursionError):
                root = None
            try:
                if root is not None:
                    return _Converter(quick, file).convert(root, "", 0)
            finally:
                quick.dispose()
    try:
        loader = yaml.SafeLoader(text)
    except yaml.reader.ReaderError as exc:
        line = text[: exc.position].count("\n") + 1
        raise ElucidateError(
            f"not valid YAML: character #x{exc.character:04x} is not allowed in YAML text", file=file, line=line
        ) from exc
    try:
        try:
            root = loader.get_single_node()
        except yaml.MarkedYAMLError as exc:
            mark = exc.problem_mark or exc.context_mark
            problem = exc.problem or exc.context or "invalid YAML"
            raise ElucidateError(
                f"not valid YAML: {problem}", file=file, line=mark.line + 1 if mark is not None else None
            ) from exc
        except yaml.reader.ReaderError as exc:
            line = text[: exc.position].count("\n") + 1
            raise ElucidateError(
                f"not valid YAML: character #x{exc.character:04x} is not allowed in YAML text",
                file=file,
                line=line,
            ) from exc
        except yaml.YAMLError as exc:
            raise ElucidateError(f"not valid YAML: {exc}", file=file) from exc
        except RecursionError as exc:  # the YAML composer recurses once per nesting level
            raise ElucidateError(
                f"values nested too deeply to read (a case file needs a few levels; more than {_MAX_DEPTH} "
                "are refused)",
                file=file,
            ) from exc
        if root is None:
            raise ElucidateError("the file is empty, expected a YAML mapping", file=file, line=1)
        converter = _Converter(loader, file)
        return converter.convert(root, "", 0)
    finally:
        loader.dispose()


class _Converter:
    def __init__(self, loader: yaml.SafeLoader, file: str) -> None:
        self.loader = loader
        self.file = file
        self.count = 0
        self.active: set[int] = set()

    def convert(self, node: yaml.Node, key: str, depth: int, flow_gap: bool = False) -> Located:
        line = node.start_mark.line + 1
        self.count += 1
        if self.count > _MAX_NODES or depth > _MAX_DEPTH:
            raise ElucidateError(
                "document too large or too deeply nested (aliases expanding?)",
                file=self.file,
                line=line,
                key=key or None,
            )
        if id(node) in self.active:
            raise ElucidateError("recursive alias", file=self.file, line=line, key=key or None)
        if isinstance(node, yaml.ScalarNode):
            return Located(self._scalar(node, key), self.file, line, key, flow_gap)
        self.active.add(id(node))
        try:
            if isinstance(node, yaml.SequenceNode):
                items = [self.convert(child, f"{key}[{i}]", depth + 1) for i, child in enumerate(node.value)]
                return Located(items, self.file, line, key)
            if isinstance(node, yaml.MappingNode):
                return Located(self._mapping(node, key, depth), self.file, line, key)
        finally:
            self.active.discard(id(node))
        raise ElucidateError("unsupported YAML node", file=self.file, line=line, key=key or None)

    def _mapping(self, node: yaml.MappingNode, key: str, depth: int) -> dict[Any, Located]:
        out: dict[Any, Located] = {}
        for key_node, value_node in node.value:
            kline = key_node.start_mark.line + 1
            if key_node.tag == "tag:yaml.org,2002:merge":
                raise ElucidateError(
                    "merge keys ('<<') are not supported in case files; write the keys out",
                    file=self.file,
                    line=kline,
                    key=key or None,
                )
            if not isinstance(key_node, yaml.ScalarNode):
                raise ElucidateError(
                    "a mapping key must be a plain value, not a list or mapping",
                    file=self.file,
                    line=kline,
                    key=key or None,
                )
            k = self._scalar(key_node, key)
            if not isinstance(k, (str, int, float, bool)) or k is None:
                k = key_node.value
            path = f"{key}.{k}" if key else str(k)
            if k in out:
                raise ElucidateError(
                    f"duplicate key {k!r} (first given on line {out[k].line})",
                    file=self.file,
                    line=kline,
                    key=path,
                )
            gap = bool(
                node.flow_style
                and isinstance(value_node, yaml.ScalarNode)
                and value_node.tag == "tag:yaml.org,2002:null"
                and value_node.value == ""
            )
            out[k] = self.convert(value_node, path, depth + 1, gap)
        return out

    def _scalar(self, node: yaml.ScalarNode, key: str) -> Any:
        try:
            value = self.loader.construct_object(node, deep=True)
        except (yaml.YAMLError, ValueError, OverflowError, TypeError) as exc:
            raise ElucidateError(
                f"cannot read value {_shown(node.value)}",
                file=self.file,
                line=node.start_mark.line + 1,
                key=key or None,
            ) from exc
        return value


# ---------------------------------------------------------------- typed readers


#: characters of a value echoed in a message; a longer one is shortened and its length given
_SHOWN = 60
#: characters that look like a hyphen or minus but are not, named in messages
_DASHES = {
    "\u2010": "HYPHEN",
    "\u2011": "NON-BREAKING HYPHEN",
    "\u2012": "FIGURE DASH",
    "\u2013": "EN DASH",
    "\u2014": "EM DASH",
    "\u2212": "MINUS SIGN",
    "\ufe63": "SMALL HYPHEN-MINUS",
    "\uff0d": "FULLWIDTH HYPHEN-MINUS",
}


def _shown(value: Any) -> str:
    try:
        text = repr(value)
    except ValueError:  # an integer past Python's digit limit for str()
        return "a number of thousands of digits"
    if len(text) <= _SHOWN:
        return text
    return f"{text[: _SHOWN - 10]}...{text[-6:]} ({len(str(value)):,} characters)"


def _dash_hint(value: Any) -> str:
    """Names a dash character that is not the ASCII hyphen-minus a range needs."""
    if not isinstance(value, str):
        return ""
    for char in value:
        if char in _DASHES:
            return (
                f" (the character {char!r} is U+{ord(char):04X} {_DASHES[char]}, not the hyphen-minus '-': write 0-20)"
            )
    return ""


def _describe(value: Any) -> str:
    if value is None:
        return "nothing"
    if isinstance(value, bool):
        return f"{str(value).lower()} (a yes/no value)"
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    return _shown(value)


def _comma_hint(value: Any) -> str:
    if isinstance(value, str) and "," in value:
        return " (a comma is not a decimal point or separator here; write 2.7, not 2,7)"
    return ""


def mapping(
    loc: Located,
    allowed: Sequence[str],
    *,
    required: Iterable[str] = (),
    what: str = "a mapping",
) -> dict[str, Located]:
    """Check ``loc`` is a mapping whose keys are all in ``allowed``; return it."""
    if not isinstance(loc.value, dict):
        raise loc.error(f"expected {what} with keys {', '.join(allowed)}; got {_describe(loc.value)}")
    result: dict[str, Located] = {}
    for k, v in loc.value.items():
        check_gap(v)
        if not isinstance(k, str) or k not in allowed:
            close = difflib.get_close_matches(str(k), list(allowed), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise ElucidateError(
                f"unknown key {str(k)!r}{hint}; valid keys here: {', '.join(allowed)}",
                file=loc.file,
                line=v.line,
                key=loc.child_key(k),
            )
        result[k] = v
    missing = [k for k in required if k not in result]
    if missing:
        raise loc.error(f"missing required key {missing[0]!r}")
    return result


def check_gap(loc: Located) -> None:
    """Raise if ``loc`` is a key written without a value inside a ``{...}`` mapping."""
    if loc.flow_gap:
        name = loc.key.rsplit(".", 1)[-1]
        raise loc.error(
            f"{name!r} has no value. In a {{...}} mapping a comma separates entries, so a comma "
            "inside a value splits it (write 2.7, not 2,7; 0-40, not 0,40)"
        )


def as_bool(loc: Located) -> bool:
    check_gap(loc)
    if not isinstance(loc.value, bool):
        raise loc.error(f"expected true or false; got {_describe(loc.value)}")
    return loc.value


def as_str(loc: Located, *, what: str = "text", allow_empty: bool = False) -> str:
    check_gap(loc)
    value = loc.value
    if isinstance(value, bool) or value is None or isinstance(value, (dict, list)):
        raise loc.error(f"expected {what}; got {_describe(value)}")
    text = str(value)
    if not allow_empty and not text.strip():
        raise loc.error(f"expected {what}; got an empty value")
    return text


def as_number(
    loc: Located,
    *,
    minimum: float | None = None,
    maximum: float | None = None,
    what: str = "a number",
    exclusive_minimum: bool = False,
) -> float:
    check_gap(loc)
    value = loc.value
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise loc.error(f"expected {what}; got {_describe(value)}{_comma_hint(value)}")
    try:
        number = float(value)
    except OverflowError:  # an integer beyond any float (hundreds of digits)
        raise loc.error(f"expected {what}; got {_shown(value)}") from None
    if not math.isfinite(number):
        raise loc.error(f"expected {what}; got {_shown(value)}")
    too_low = minimum is not None and (number <= minimum if exclusive_minimum else number < minimum)
    if too_low or (maximum is not None and number > maximum):
        raise loc.error(f"expected {what}; got {_shown(value)}")
    return number


def as_int(
    loc: Located,
    *,
    minimum: int | None = None,
    maximum: int | None = None,
    what: str = "a whole number",
) -> int:
    check_gap(loc)
    value = loc.value
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, bool) or not isinstance(value, int):
        raise loc.error(f"expected {what}; got {_describe(value)}{_comma_hint(value)}")
    if (minimum is not None and value < minimum) or (maximum is not None and value > maximum):
        raise loc.error(f"expected {what}; got {_shown(value)}")
    return value


def parse_range_text(text: str) -> tuple[int, int] | None:
    """``'3'`` -> (3, 3); ``'0-40'`` -> (0, 40); anything else -> None."""
    match = _RANGE.fullmatch(text.strip())
    if match is None:
        return None
    low = int(match.group(1))
    return low, int(match.group(2)) if match.group(2) is not None else low


def as_range(loc: Located, *, what: str = "a count or range such as 0-40") -> tuple[int, int]:
    """A whole number ``n`` or a text range ``low-high`` of non-negative whole numbers."""
    check_gap(loc)
    value = loc.value
    if isinstance(value, int) and not isinstance(value, bool):
        if value < 0:
            raise loc.error(f"expected {what}; got {_shown(value)} (counts cannot be negative)")
        return value, value
    parsed = parse_range_text(value) if isinstance(value, str) else None
    if parsed is None:
        raise loc.error(f"expected {what}; got {_describe(value)}{_dash_hint(value)}")
    low, high = parsed
    if low > high:
        raise loc.error(f"range {value!r}: the low end {low} exceeds the high end {high}")
    return low, high


def as_list(loc: Located, *, what: str = "a list") -> list[Located]:
    check_gap(loc)
    if not isinstance(loc.value, list):
        raise loc.error(f"expected {what}; got {_describe(loc.value)}")
    return list(loc.value)


def as_choice(loc: Located, choices: Sequence[str], *, what: str = "one of") -> str:
    check_gap(loc)
    value = loc.value
    text = str(value) if isinstance(value, (str, int, float)) and not isinstance(value, bool) else None
    if text is None or text not in choices:
        starts = [c for c in choices if text and c.lower().startswith(text.lower())]
        hint = f" (did you mean {starts[0]!r}?)" if len(starts) == 1 else ""
        raise loc.error(f"expected {what} {', '.join(choices)}; got {_describe(value)}{hint}")
    return text
