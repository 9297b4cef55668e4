"""Aquifer influx: dimensionless solutions, Laplace inversion, influx models, the aquifer history match."""
