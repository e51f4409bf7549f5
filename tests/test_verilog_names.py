"""The one list of Verilog keywords, against the standard and against Icarus Verilog.

Sources: IEEE Std 1364-2001, Annex B "List of keywords" (123 words, written
out below from memory of the annex), and IEEE Std 1364-2005, which added
exactly one keyword, ``uwire`` (from memory).  Icarus Verilog (Debian package
``iverilog``) is the outside check: it must refuse every listed word as a net
name under ``-g2005``, and accept ordinary names and SystemVerilog-only words
that Verilog-2005 leaves free.
"""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from synth import netlist, spec
from synth.verilog_names import VERILOG_KEYWORDS, verilog_module_name

IEEE_1364_2001_ANNEX_B = """
always and assign automatic begin buf bufif0 bufif1 case casex casez cell cmos config
deassign default defparam design disable edge else end endcase endconfig endfunction
endgenerate endmodule endprimitive endspecify endtable endtask event for force forever
fork function generate genvar highz0 highz1 if ifnone incdir include initial inout input
instance integer join large liblist library localparam macromodule medium module nand
negedge nmos nor noshowcancelled not notif0 notif1 or output parameter pmos posedge
primitive pull0 pull1 pulldown pullup pulsestyle_onevent pulsestyle_ondetect rcmos real
realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1 scalared showcancelled
signed small specify specparam strong0 strong1 supply0 supply1 table task time tran
tranif0 tranif1 tri tri0 tri1 triand trior trireg unsigned use vectored wait wand
weak0 weak1 while wire wor xnor xor
""".split()
ADDED_BY_1364_2005 = ["uwire"]


def test_the_list_is_the_2001_annex_plus_the_2005_addition():
    assert len(IEEE_1364_2001_ANNEX_B) == len(set(IEEE_1364_2001_ANNEX_B)) == 123
    assert VERILOG_KEYWORDS == frozenset(IEEE_1364_2001_ANNEX_B + ADDED_BY_1364_2005)


def test_spec_reader_and_netlist_use_the_same_list():
    assert spec.VERILOG_KEYWORDS is VERILOG_KEYWORDS
    assert netlist.VERILOG_KEYWORDS is VERILOG_KEYWORDS


@pytest.mark.parametrize("name, expected", [
    ("uwire", "uwire_"), ("always", "always_"), ("4-phase", "m_4_phase"), ("wires", "wires")])
def test_module_names_avoid_every_keyword(name, expected):
    assert verilog_module_name(name) == expected


def _refused_names(words: list[str], generation: str) -> set[str]:
    """The words Icarus Verilog refuses as a wire name (one module per word, one compile)."""
    source = "".join(f"module m{i};\n  wire {w};\nendmodule\n" for i, w in enumerate(words))
    result = subprocess.run(["iverilog", generation, "-o", "/dev/null", "/dev/stdin"],
                            input=source, capture_output=True, text=True, check=False)
    lines = {int(n) for n in re.findall(r":(\d+):", result.stderr)}
    return {words[(n - 2) // 3] for n in lines if n >= 2 and (n - 2) % 3 == 0}


@pytest.mark.skipif(shutil.which("iverilog") is None, reason="Icarus Verilog is not installed")
def test_icarus_refuses_every_keyword_and_accepts_plain_names():
    plain = ["clk", "q_4", "logic_out", "bit", "int", "always_ff"]   # SystemVerilog words are free in 2005
    words = sorted(VERILOG_KEYWORDS) + plain
    refused = _refused_names(words, "-g2005")
    assert refused == set(VERILOG_KEYWORDS)
