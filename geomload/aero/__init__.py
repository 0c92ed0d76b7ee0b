"""Aerodynamics stage: ISA atmosphere, vortex lattice on the mean surface, linear solution.

Submodules import numpy only at import time; scipy is imported inside AeroModel.
"""
