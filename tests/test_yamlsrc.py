"""The YAML reader: values as PyYAML's safe loader reads them, lines as its parser marks them.

Outside references: PyYAML's own ``yaml.safe_load`` (the values) and
``yaml.compose`` (the node tree, whose ``start_mark.line`` is 0-based) for
every shipped bin, spec and catalog file; the YAML 1.2 specification,
section 3.2.1.1 (mapping keys are unique: a repeated key is refused) and
section 6.9.1 / 10.3 (a tag such as ``!!python/object`` is not a core-schema
type, so a safe reader refuses it rather than building an object).
"""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from synth.errors import InputError
from synth.inventory import data_path, example_path
from synth.yamlsrc import MarkedDict, MarkedList, line_of, load_yaml, parse_yaml, parse_yaml_nodes

SHIPPED = sorted([*data_path("bins").glob("*.yaml"), *data_path("catalog").glob("*.yaml"),
                  *example_path().glob("*.yaml")])


def plain(value):
    if isinstance(value, dict):
        return {k: plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [plain(v) for v in value]
    return value


def marks(ours, node) -> list[tuple[int, int]]:
    """(our line, PyYAML's line + 1) for every mapping key and sequence item, recursively."""
    pairs = []
    if isinstance(node, yaml.MappingNode):
        assert isinstance(ours, MarkedDict)
        pairs.append((ours.line, node.start_mark.line + 1))
        for key_node, value_node in node.value:
            key = yaml.safe_load(yaml.serialize(key_node))
            pairs.append((ours.line_of(key), key_node.start_mark.line + 1))
            pairs += marks(ours[key], value_node)
    elif isinstance(node, yaml.SequenceNode):
        assert isinstance(ours, MarkedList)
        pairs.append((ours.line, node.start_mark.line + 1))
        for i, child in enumerate(node.value):
            pairs.append((ours.line_of(i), child.start_mark.line + 1))
            pairs += marks(ours[i], child)
    return pairs


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: f"{p.parent.name}/{p.name}")
def test_shipped_files_read_as_pyyaml_reads_them(path: Path):
    text = path.read_text(encoding="utf-8")
    ours = load_yaml(path)
    assert plain(ours) == yaml.safe_load(text)
    pairs = marks(ours, yaml.compose(text))
    assert pairs and all(a == b for a, b in pairs)


def test_lines_of_a_small_document():
    doc = parse_yaml("# a bin\nparts:\n  CD4011BE: 2\n  CD4040BE: 1\nresistors: [1k,\n  10k]\n")
    assert doc.line_of("parts") == 2 and doc["parts"].line_of("CD4040BE") == 4
    assert doc["resistors"].line_of(1) == 6
    assert line_of(doc, "resistors") == 5 and line_of({"plain": 1}, "plain") is None
    assert doc.line_of("missing") == doc.line            # an absent key points at its mapping


def test_a_repeated_key_is_refused_with_its_line():
    with pytest.raises(InputError) as caught:
        parse_yaml("parts:\n  CD4011BE: 1\n  CD4011BE: 2\n", "bin.yaml")
    assert caught.value.line == 3 and "duplicate key" in str(caught.value)
    assert str(caught.value).startswith("bin.yaml:3: ")


def test_python_tags_are_refused():
    with pytest.raises(InputError, match="YAML syntax"):
        parse_yaml("x: !!python/object/apply:os.system ['true']\n", "evil.yaml")


def test_syntax_error_names_file_and_line():
    with pytest.raises(InputError) as caught:
        parse_yaml("parts:\n  CD4011BE: [1\n  CD4040BE: 1\n", "broken.yaml")
    assert caught.value.file == "broken.yaml" and caught.value.line is not None
    assert caught.value.hint == "check indentation, colons and brackets"


def test_missing_and_unreadable_files(tmp_path):
    with pytest.raises(InputError, match="no such file"):
        load_yaml(tmp_path / "absent.yaml")
    latin = tmp_path / "latin.yaml"
    latin.write_bytes(b"name: caf\xe9\n")
    with pytest.raises(InputError, match="not UTF-8 text .byte 0xe9.") as caught:
        load_yaml(latin)
    assert caught.value.line == 1 and "save the file as UTF-8" in str(caught.value)


# ---------------------------------------------------------------- the two readings agree

def shape(value):
    """Values, types and every line mark, for comparing the two readings."""
    if isinstance(value, dict):
        return ("map", value.line, value.key_lines, [(k, shape(v)) for k, v in value.items()])
    if isinstance(value, list):
        return ("seq", value.line, value.item_lines, [shape(v) for v in value])
    return (type(value).__name__, repr(value))


def outcome(read, text):
    try:
        return ("value", shape(read(text, "f.yaml")))
    except InputError as exc:
        return ("error", str(exc), exc.line)


UNUSUAL = ["", "# only a comment\n", "---\n", "a: 1\n...\n", "a: 1\n---\nb: 2\n", "a: &x 1\nb: *x\n",
           "a: &x [1]\n", "a: !!str 1\n", "a: !custom 1\n", "<<: {a: 1}\n", "a: {<<: {b: 1}}\n",
           "a: 1\na: 2\n", "1: a\ntrue: b\n", "? [1, 2]\n: x\n", "? {a: 1}\n: x\n", "a: [1, 2\n",
           "a: b: c\n", "a:\n\t- x\n", "a: !!python/object/apply:os.system ['true']\n", "a: =\n",
           "a: 'x'\nb: \"1\"\nc: 1.5\nd: .inf\ne: ~\nf: 2001-12-14\ng: yes\nh: 0x1f\ni: 1_000\n",
           "a: |\n  text\n  more\nb: >\n  folded\n", "- a\n- b: c\n  d: e\n- - x\n  - y\n",
           "x: " + "[" * 100 + "]" * 100 + "\n", "null: 1\n~: 2\n", "{a: 1, a: 2}\n", "a: !!binary aGVsbG8=\n",
           "%YAML 1.1\n---\na: 1\n", "a:\n", "- \n- x\n", "'': 1\n"]


@pytest.mark.parametrize("text", UNUSUAL)
def test_the_event_reading_and_the_node_reading_agree_on_unusual_text(text):
    # the fast event reading hands anything unusual to the node reading: same values, lines, messages
    assert outcome(parse_yaml, text) == outcome(parse_yaml_nodes, text)


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: f"{p.parent.name}/{p.name}")
def test_the_two_readings_agree_on_every_shipped_file(path: Path):
    text = path.read_text(encoding="utf-8")
    assert shape(parse_yaml(text, path)) == shape(parse_yaml_nodes(text, path))
