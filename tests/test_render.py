"""The text renderer: plain aligned text when piped, rich tables in a terminal, JSON for scripts.

Outside references: Python's ``json`` module reads back what ``print_json``
writes (RFC 8259 text, non-ASCII kept as UTF-8); the rich library (the
general-purpose terminal renderer) draws the terminal form, which must hold
every cell.
"""

from __future__ import annotations

import io
import json

from synth.render import Table, Text, print_json, show, to_plain


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


TABLE = Table("chips", ("ref", "part", "pins"), [("U1", "4011", 14), ("U10", "74HC4040", 16)])


def test_plain_table_is_aligned_under_its_header():
    text = to_plain([TABLE])
    assert text == ("chips\n"
                    "ref  part      pins\n"
                    "---  --------  ----\n"
                    "U1   4011      14\n"
                    "U10  74HC4040  16\n")


def test_blocks_are_separated_by_one_blank_line_and_text_keeps_its_spacing():
    drawing = " 1 -|    |- 14\n 7 -|____|- 8"
    assert to_plain([Text("head"), Text(drawing)]) == f"head\n\n{drawing}\n"


def test_an_untitled_table_has_no_title_line():
    assert to_plain([Table("", ("a",), [("x",)])]) == "a\n-\nx\n"


def test_piped_output_is_the_plain_text():
    out = io.StringIO()
    show([Text("hello"), TABLE], out)
    assert out.getvalue() == to_plain([Text("hello"), TABLE])


def test_a_terminal_gets_rich_tables_with_every_cell():
    out = Terminal()
    show([Text("hello"), TABLE], out)
    drawn = out.getvalue()
    assert drawn != to_plain([Text("hello"), TABLE])
    for cell in ("hello", "chips", "ref", "U10", "74HC4040", "16"):
        assert cell in drawn


def test_json_reads_back_in_order_with_unicode_kept():
    out = io.StringIO()
    print_json({"z": 1, "a": "4.7 kΩ", "list": [1, 2]}, out)
    text = out.getvalue()
    assert json.loads(text) == {"z": 1, "a": "4.7 kΩ", "list": [1, 2]}
    assert list(json.loads(text)) == ["z", "a", "list"] and "kΩ" in text and text.endswith("}\n")
