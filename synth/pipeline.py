"""The main job's earlier home, kept so existing imports keep working.

Interface (each the same object as in its owner): ``make_plan`` and
``Settings`` / ``Sequencer`` (``synth.flow``, the sequencer), ``Design``
(``synth.model``), and the stage steps ``switch_polarity``,
``reserved_chips``, ``mapping_inputs``, ``map_decode``,
``async_reset_names`` (``synth.stages``).  New code imports from those
modules; nothing in ``synth/`` imports this one.
"""

from __future__ import annotations

from .flow import Sequencer, Settings, make_plan
from .model import Design
from .stages import async_reset_names, map_decode, mapping_inputs, reserved_chips, switch_polarity

__all__ = ["make_plan", "Settings", "Sequencer", "Design", "switch_polarity", "reserved_chips",
           "mapping_inputs", "map_decode", "async_reset_names"]
