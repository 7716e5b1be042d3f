"""lowenergy: exact low-energy expansions of worldsheet integrands.

The public surface is small; see the README for the tour.
"""

__all__ = ["__version__"]

__version__ = "0.1.0"
