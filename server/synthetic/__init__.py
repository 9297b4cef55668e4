"""Forward tank simulators that generate synthetic field histories.

They exist for the demo portfolio and as independent forward models in the tests:
they are written separately from the engine's estimators and share only the z-factor
correlation with them. Like the engine, they import only numpy, scipy and the engine's
PVT module.
"""
