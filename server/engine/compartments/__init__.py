"""Compartments: multi-tank balance and its fit, wells against the field trend."""
