"""Integrands: the safe reader of integrand files and the term model."""
