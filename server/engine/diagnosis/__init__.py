"""Diagnosis: model comparison, flags and their rules, the one call that runs them."""
