"""Tests of the benchmarks' own inputs (the accuracy cases' truths)."""
