"""Bayesian updating: PyMC models, convergence gate, the normal-gamma family and the path into reliability."""
