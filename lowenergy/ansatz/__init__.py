"""Generating integrand ansätze (:mod:`.generate`): independent polylogarithms of x,
multiple or single-valued, times polynomials in s and t, written as integrand files."""

from .generate import AnsatzSpec, Ansatz, FAMILIES, generate, independent_subset

__all__ = ["AnsatzSpec", "Ansatz", "FAMILIES", "generate", "independent_subset"]
