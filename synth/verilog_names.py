"""Verilog's reserved words and the simple identifiers binsynth makes from names.

Interface: ``VERILOG_KEYWORDS`` (frozenset) and ``verilog_module_name(name)``.

One list serves both places that need it: the spec reader refuses a signal
named after a keyword, and the Verilog export escapes or renames one.  The
list is IEEE Std 1364-2001 Annex B ("List of keywords", 123 words) plus
``uwire``, the one word IEEE Std 1364-2005 added, so a model stays legal for
tools that read either edition (from memory of both annexes; the tests also
check every word against Icarus Verilog, which refuses each as a name).
"""

from __future__ import annotations

import re

VERILOG_KEYWORDS = frozenset("""
always and assign automatic begin buf bufif0 bufif1 case casex casez cell cmos config
deassign default defparam design disable edge else end endcase endconfig endfunction
endgenerate endmodule endprimitive endspecify endtable endtask event for force forever
fork function generate genvar highz0 highz1 if ifnone incdir include initial inout input
instance integer join large liblist library localparam macromodule medium module nand
negedge nmos nor noshowcancelled not notif0 notif1 or output parameter pmos posedge
primitive pull0 pull1 pulldown pullup pulsestyle_onevent pulsestyle_ondetect rcmos real
realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1 scalared showcancelled
signed small specify specparam strong0 strong1 supply0 supply1 table task time tran
tranif0 tranif1 tri tri0 tri1 triand trior trireg unsigned use uwire vectored wait wand
weak0 weak1 while wire wor xnor xor
""".split())

def verilog_module_name(name: str) -> str:
    """A legal Verilog-2001 simple identifier made from a spec name.

    Letters, digits and ``_`` only, never a leading digit, never a keyword
    (IEEE 1364-2001 section 3.7; from memory).

    >>> verilog_module_name("sh-bench")
    'sh_bench'
    >>> verilog_module_name("4-phase stepper")
    'm_4_phase_stepper'
    >>> verilog_module_name("module"), verilog_module_name("--")
    ('module_', 'binsynth_plan')
    """
    text = re.sub(r"[^A-Za-z0-9_]+", "_", name.strip()).strip("_")
    if not text:
        return "binsynth_plan"
    if text[0].isdigit():
        text = f"m_{text}"
    if text in VERILOG_KEYWORDS:
        text += "_"
    return text
