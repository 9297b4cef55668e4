"""Tankbook's numerical engine: pure functions over floats and numpy arrays.

Only the standard library, numpy, scipy and numba (the optional compiled kernels of
:mod:`.accel`) may be imported here (a test parses every module's imports to keep it that
way). Inputs and outputs carry their units in their names; results are frozen dataclasses.
"""

#: Bumped whenever a change can alter a computed number; stored with every estimate.
ENGINE_VERSION = "0.6.10"
