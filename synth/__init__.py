"""binsynth: waveforms in clock ticks + the chips on hand -> a circuit you can build.

The package follows the data: ``spec`` and ``inventory`` read the user's files,
``counter`` picks counter stages, ``minimize`` derives decode logic, ``mapper``
covers it with the bin's gates, ``packing`` puts gates into chips, ``timing``
checks the result, and ``exports`` write it out.  ``cli`` ties them together.
"""

__all__ = ["__version__"]
__version__ = "0.1.0"
