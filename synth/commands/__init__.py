"""Sub-commands of ``binsynth``: one module each.

Every module defines ``NAME``, ``HELP``, ``add_arguments(parser)`` and
``run(args) -> int``.  Modules import their heavy dependencies inside ``run``
so that ``binsynth --help`` and each command start quickly.
"""

COMMANDS = ("parts", "bin", "decode", "plan", "substitute", "delay", "demo")
