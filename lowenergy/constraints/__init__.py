"""Constraints on Wilson coefficients: read constraint files, check expansions
against them, and fix free parameters from them.

* :mod:`lowenergy.constraints.model` -- the TOML file format (documented
  there), :func:`read_constraints`, :func:`required_order`;
* :mod:`lowenergy.constraints.check` -- :func:`check` an expansion,
  :class:`CheckReport`;
* :mod:`lowenergy.constraints.fix` -- :func:`fix` free parameters exactly,
  :func:`substitute`, :func:`write_fixed_integrand`.

Shipped constraint sets live in the ``constraints/`` directory of the
repository.
"""

from .check import CheckReport, ConstraintResult, check
from .fix import FixReport, fix, substitute, write_fixed_integrand
from .model import Constraint, ConstraintSet, CoefficientRef, constraints_from_text, read_constraints, required_order

__all__ = [
    "Constraint",
    "ConstraintSet",
    "CoefficientRef",
    "read_constraints",
    "constraints_from_text",
    "required_order",
    "check",
    "CheckReport",
    "ConstraintResult",
    "fix",
    "FixReport",
    "substitute",
    "write_fixed_integrand",
]
