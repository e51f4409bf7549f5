"""YAML reading that remembers where each value came from.

Interface: ``load_yaml(path) -> object`` whose mappings are ``MarkedDict`` and
sequences ``MarkedList``; ``line_of(container, key_or_index)`` gives the
1-based line of an entry.  Errors in the YAML itself become ``InputError``
with file and line.  Only the safe loader is used: a spec or bin is data.
"""

from __future__ import annotations

from pathlib import Path

import yaml

from .errors import InputError


class MarkedDict(dict):
    """A mapping with the line of itself and of each key."""

    line: int = 0
    key_lines: dict

    def line_of(self, key) -> int:
        return self.key_lines.get(key, self.line)


class MarkedList(list):
    """A sequence with the line of itself and of each item."""

    line: int = 0
    item_lines: list

    def line_of(self, index: int) -> int:
        return self.item_lines[index] if 0 <= index < len(self.item_lines) else self.line


# libyaml's C parser when PyYAML was built with it (5-10x faster on the
# catalog), else the pure-Python one; both are the safe loader.
_SafeBase = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


class _MarkedLoader(_SafeBase):
    """SafeLoader that builds Marked containers."""


def _construct_mapping(loader: _MarkedLoader, node: yaml.MappingNode) -> MarkedDict:
    loader.flatten_mapping(node)
    result = MarkedDict()
    result.line = node.start_mark.line + 1
    result.key_lines = {}
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        try:
            hash(key)
        except TypeError:
            raise yaml.constructor.ConstructorError(
                None, None, "expected a plain key, got a list or mapping", key_node.start_mark)
        if key in result:
            raise yaml.constructor.ConstructorError(
                None, None, f"duplicate key {key!r}", key_node.start_mark)
        result[key] = loader.construct_object(value_node, deep=True)
        result.key_lines[key] = key_node.start_mark.line + 1
    return result


def _construct_sequence(loader: _MarkedLoader, node: yaml.SequenceNode) -> MarkedList:
    result = MarkedList(loader.construct_object(child, deep=True) for child in node.value)
    result.line = node.start_mark.line + 1
    result.item_lines = [child.start_mark.line + 1 for child in node.value]
    return result


_MarkedLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _construct_mapping)
_MarkedLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_SEQUENCE_TAG, _construct_sequence)


def parse_yaml(text: str, source: str | Path = "<string>") -> object:
    """Parse YAML text; syntax errors name the source and line."""
    try:
        return yaml.load(text, Loader=_MarkedLoader)  # noqa: S506 - a SafeLoader subclass
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        problem = exc.problem or exc.context or "cannot be read"
        raise InputError(f"YAML syntax: {problem}", file=source, line=line,
                         hint="check indentation, colons and brackets") from exc
    except yaml.YAMLError as exc:
        raise InputError(f"YAML syntax: {exc}", file=source) from exc


def load_yaml(path: str | Path) -> object:
    """Read and parse a YAML file; a missing file is an InputError."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("no such file", file=path, hint="check the path") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read: {exc}", file=path) from exc
    return parse_yaml(text, path)


def line_of(container: object, key: object) -> int | None:
    """The line of ``container[key]`` when the container came from YAML."""
    if isinstance(container, (MarkedDict, MarkedList)):
        return container.line_of(key)
    return None
