"""Sub-commands of ``binsynth``: one module each.

Every module defines ``NAME``, ``HELP``, ``add_arguments(parser)`` and
``run(args) -> int``.  Modules import what they use at the top (``plan`` and
``demo`` still import inside ``run``; tests/test_structure.py counts such
imports); the heavy third-party libraries (rich, pyeda, pysat) load only
where they are used, so ``binsynth --help`` still starts quickly.
"""

COMMANDS = ("parts", "bin", "decode", "plan", "substitute", "delay", "demo")
