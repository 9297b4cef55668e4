"""Volumetric GIIP (deterministic and Monte Carlo) and portfolio aggregation."""
