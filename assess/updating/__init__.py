"""Bayesian updating: PyMC models, convergence gate, the normal-gamma family and the path into reliability."""

from assess.updating.compile_cache import place_compile_cache

# before PyMC is first imported (every model in the tool is built through this package):
# PyTensor's compiled modules go to the user's cache folder (compile_cache.py)
place_compile_cache()
