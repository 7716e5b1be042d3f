"""lowenergy: exact low-energy expansions of worldsheet integrands.

The public surface is small; see the README for the tour.  ``import
lowenergy`` loads nothing heavy: :func:`expand` and :class:`Expansion` are
imported from :mod:`lowenergy.api` on first use.
"""

__all__ = ["__version__", "expand", "Expansion"]

__version__ = "0.1.0"

_LAZY = {"expand": "api", "Expansion": "api"}


def __getattr__(name):
    if name in _LAZY:
        import importlib

        value = getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'lowenergy' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(__all__))
