"""Single-valued polylogarithms and the single-valued map on MZVs.

* :mod:`.svmap` — Brown's ``sv`` on the f-alphabet and on :class:`~lowenergy.zeta.element.MZV`.
* :mod:`.construct` — Brown's ``L_w(z)`` as exact combinations of
  ``G(u; z) G(v; z̄)``, and their restrictions to ``0 < x < 1``.
* :mod:`.numeric` — ``L_w(z)`` and ``G(w; z)`` at complex ``z`` to any precision.
"""

from .construct import real_line_restriction, sv_polylog, sv_table, sv_value_at_one
from .numeric import g_numeric_complex, sv_polylog_numeric
from .svmap import sv, sv_falphabet

__all__ = [
    "sv",
    "sv_falphabet",
    "sv_polylog",
    "sv_table",
    "real_line_restriction",
    "sv_value_at_one",
    "sv_polylog_numeric",
    "g_numeric_complex",
]
