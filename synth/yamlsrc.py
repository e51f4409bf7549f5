"""YAML reading that remembers where each value came from.

Interface: ``load_yaml(path) -> object`` and ``parse_yaml(text, source)``, whose
mappings are ``MarkedDict`` and sequences ``MarkedList`` (``parse_yaml_nodes``:
the same, always by the node-by-node reading); ``line_of(container, key_or_index)`` gives the
1-based line of an entry; ``read_source(path) -> (bytes, text)`` (the checked
reading shared with the bin rewriter).  Errors in the YAML itself become
``InputError`` with file and line.  Only the safe loader is used: a spec or
bin is data.

Decisions:

- Aliases (``*name``) and merge keys (``<<``) are refused with the line of
  the anchored value.  A few hundred bytes of nested aliases expand to
  gigabytes once walked, and no spec or bin needs them; refusing them means
  no message and no check ever walks an expansion.
- A file is checked against ``limits.FILE_BYTES`` before it is read; bytes
  that are not UTF-8 and control characters YAML cannot hold are reported at
  their line, with the fix, never as codec text.
- Speed: a document is first built straight from libyaml's events (no node
  tree; each distinct scalar resolved and constructed once), which reads the
  catalog about twice as fast.  Anything unusual (an anchor, alias, tag,
  merge key, repeated or non-scalar key, deep nesting, a syntax error, more
  than one document) sends the text to the node-by-node reading below, which
  gives the values or the error message it always gave; both build the same
  values with the same lines (tests/test_yamlsrc.py checks both against PyYAML).
"""

from __future__ import annotations

import re
from pathlib import Path

import yaml
from yaml.events import (DocumentEndEvent, DocumentStartEvent, MappingEndEvent, MappingStartEvent,
                         ScalarEvent, SequenceEndEvent, SequenceStartEvent, StreamEndEvent)
from yaml.nodes import ScalarNode

from .errors import InputError
from .limits import check_file_size, os_reason, shown


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
    """SafeLoader that builds Marked containers and refuses aliases."""

    def construct_object(self, node, deep=False):
        """A node met a second time was reached through an alias: refuse it."""
        if node in self.constructed_objects or node in self.recursive_objects:
            raise yaml.constructor.ConstructorError(
                None, None, "this value is used again through an alias (*name), which binsynth "
                "does not read", node.start_mark)
        return super().construct_object(node, deep)


_MERGE_TAG = "tag:yaml.org,2002:merge"


def _construct_mapping(loader: _MarkedLoader, node: yaml.MappingNode) -> MarkedDict:
    for key_node, _ in node.value:
        if key_node.tag == _MERGE_TAG:
            raise yaml.constructor.ConstructorError(
                None, None, "a merge key (<<) copies another mapping, which binsynth does not read",
                key_node.start_mark)
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
                None, None, f"duplicate key {shown(key)}", key_node.start_mark)
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


class _Unusual(Exception):
    """The event reading met something only the node-by-node reading handles or reports."""


_CORE_TAGS = frozenset(f"tag:yaml.org,2002:{name}" for name in
                       ("str", "int", "float", "bool", "null", "timestamp"))
_FAST_MAX_DEPTH = 64      # deeper documents go the node-by-node way (and its RecursionError message)


class _EventReader:
    """Builds Marked containers straight from the parser's events (the common case)."""

    def __init__(self, loader: _MarkedLoader) -> None:
        self.loader = loader
        self.next_event = loader.get_event
        self.scalars: dict[tuple[str, bool], tuple[str, object]] = {}

    def document(self) -> object:
        self.next_event()                               # the stream's start
        event = self.next_event()
        if event.__class__ is StreamEndEvent:
            return None                                 # nothing but comments: as yaml.load
        if event.__class__ is not DocumentStartEvent:
            raise _Unusual
        value = self.value(self.next_event(), 0)
        if self.next_event().__class__ is not DocumentEndEvent or \
                self.next_event().__class__ is not StreamEndEvent:
            raise _Unusual                              # a second document: refused below
        return value

    def scalar(self, event: ScalarEvent) -> tuple[str, object]:
        """(resolved tag, value) of a plain or quoted scalar, as the safe loader builds it."""
        if event.anchor is not None or event.tag is not None:
            raise _Unusual
        key = (event.value, event.implicit[0])
        found = self.scalars.get(key)
        if found is None:
            tag = self.loader.resolve(ScalarNode, event.value, event.implicit)
            if tag not in _CORE_TAGS:
                raise _Unusual
            value = self.loader.yaml_constructors[tag](self.loader, ScalarNode(tag, event.value))
            found = self.scalars[key] = (tag, value)
        return found

    def value(self, event, depth: int) -> object:
        kind = event.__class__
        if kind is ScalarEvent:
            return self.scalar(event)[1]
        if event.anchor is not None or event.tag is not None or depth > _FAST_MAX_DEPTH:
            raise _Unusual
        if kind is MappingStartEvent:
            return self.mapping(event, depth)
        if kind is SequenceStartEvent:
            return self.sequence(event, depth)
        raise _Unusual

    def mapping(self, start: MappingStartEvent, depth: int) -> MarkedDict:
        result = MarkedDict()
        result.line = start.start_mark.line + 1
        lines = result.key_lines = {}
        while True:
            event = self.next_event()
            if event.__class__ is MappingEndEvent:
                return result
            if event.__class__ is not ScalarEvent:
                raise _Unusual
            tag, key = self.scalar(event)
            if tag == _MERGE_TAG or key in result:
                raise _Unusual
            result[key] = self.value(self.next_event(), depth + 1)
            lines[key] = event.start_mark.line + 1

    def sequence(self, start: SequenceStartEvent, depth: int) -> MarkedList:
        result = MarkedList()
        result.line = start.start_mark.line + 1
        lines = result.item_lines = []
        while True:
            event = self.next_event()
            if event.__class__ is SequenceEndEvent:
                return result
            lines.append(event.start_mark.line + 1)
            result.append(self.value(event, depth + 1))


def _read_events(text: str) -> object:
    """The document built from events; ``_Unusual`` when it needs the node-by-node reading."""
    loader = _MarkedLoader(text)
    try:
        return _EventReader(loader).document()
    except yaml.YAMLError:
        raise _Unusual from None
    finally:
        loader.dispose()


def parse_yaml(text: str, source: str | Path = "<string>") -> object:
    """Parse YAML text; syntax errors name the source and line."""
    _check_characters(text, source)
    try:
        return _read_events(text)
    except _Unusual:
        return parse_yaml_nodes(text, source)


def parse_yaml_nodes(text: str, source: str | Path = "<string>") -> object:
    """``parse_yaml`` node by node: the same values and lines, and every message."""
    _check_characters(text, source)
    try:
        return yaml.load(text, Loader=_MarkedLoader)  # noqa: S506 - a SafeLoader subclass
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        problem = exc.problem or exc.context or "cannot be read"
        if "alias" in problem or "merge key" in problem:
            raise InputError(problem, file=source, line=line,
                             hint="write the value out in full where it is used") from None
        raise InputError(f"YAML syntax: {problem}", file=source, line=line,
                         hint="check indentation, colons and brackets") from None
    except RecursionError:
        raise InputError("YAML nested too deeply to read", file=source,
                         hint="a spec or bin needs a few levels of nesting; remove extra brackets") from None
    except yaml.YAMLError as exc:
        raise InputError("YAML that cannot be read", file=source,
                         hint="check indentation, colons and brackets") from exc


# YAML's printable set (YAML 1.1, 5.1): anything else cannot appear in a file.
_UNPRINTABLE = re.compile("[^\x09\x0A\x0D\x20-\x7E\x85\xA0-\uD7FF\uE000-\uFFFD\U00010000-\U0010FFFF]")


def _check_characters(text: str, source: str | Path) -> None:
    """A control character is named with its line, not as a position in a stream."""
    bad = _UNPRINTABLE.search(text)
    if bad:
        line = text.count("\n", 0, bad.start()) + 1
        raise InputError(f"a control character (code {ord(bad.group()):#04x}) that a YAML file "
                         "cannot hold", file=source, line=line,
                         hint="delete it, or retype the line in a plain text editor")


def read_source(path: str | Path) -> tuple[bytes, str]:
    """A spec or bin file's bytes and text; every failure is one InputError in words."""
    path = Path(path)
    check_file_size(path)
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise InputError("no such file", file=path, hint="check the path") from None
    except OSError as exc:
        raise InputError(f"cannot read it: {os_reason(exc)}", file=path,
                         hint="check the path and its permissions") from None
    try:
        return data, data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        raise InputError(f"holds bytes that are not UTF-8 text (byte {data[exc.start]:#04x})",
                         file=path, line=line, hint="save the file as UTF-8") from None


def load_yaml(path: str | Path) -> object:
    """Read and parse a YAML file; a missing file is an InputError."""
    path = Path(path)
    return parse_yaml(read_source(path)[1], path)


def line_of(container: object, key: object) -> int | None:
    """The line of ``container[key]`` when the container came from YAML."""
    if isinstance(container, (MarkedDict, MarkedList)):
        return container.line_of(key)
    return None
