"""The short Python API for notebooks and scripts: :func:`expand`.

``lowenergy.expand`` takes an integrand file, the text of one, or just the
integrand expression, and returns an :class:`Expansion` that knows how to
show itself (``repr``, a formula in Jupyter) and how to become a table
(:meth:`Expansion.to_dataframe`, :meth:`Expansion.to_latex`).  It sits on top
of the layers (it uses the tables layer), beside the command line.

>>> import lowenergy
>>> e = lowenergy.expand("x^(-s-1)*(1-x)^(-t)", order=2)   # Γ(-s)Γ(1-t)/Γ(1-s-t)
>>> e.coefficient(-1, 0)                                     # the massless pole -1/s
MZV('-1')
>>> e.coefficient(0, 1) == lowenergy.zeta.element.zeta(2)    # A&S 6.1.33: ζ(2)
True
"""

from __future__ import annotations

import json
import os
import re
from typing import Sequence, Union

from .expansion.result import Expansion as _Expansion

__all__ = ["expand", "Expansion"]

_TOML_KEY = re.compile(r"\s*[A-Za-z_][A-Za-z0-9_-]*\s*=")


class Expansion(_Expansion):
    """An :class:`lowenergy.expansion.result.Expansion` with table exports.

    ``coefficient(i, j)`` is the coefficient of ``s^i t^j``: an
    :class:`~lowenergy.zeta.element.MZV` when the integrand has no free
    parameters, otherwise a dict ``{parameter exponents: MZV}`` with the
    exponents in the order of :attr:`parameters`.
    """

    def to_dataframe(self, basis="monomial", digits: int = 20):
        """The coefficient table as a pandas DataFrame (see :func:`lowenergy.tables.to_dataframe`)."""
        from .tables import to_dataframe

        return to_dataframe(self, basis=basis, digits=digits)

    def to_latex(self, basis="monomial", digits: int = 20, pi: bool = False) -> str:
        """The coefficient table as a LaTeX ``tabular`` (see :func:`lowenergy.tables.to_latex`)."""
        from .tables import to_latex

        return to_latex(self, basis=basis, digits=digits, pi=pi)

    def to_csv(self, path, basis="monomial", digits: int = 20):
        """Write the lossless CSV table (:func:`lowenergy.tables.write_csv`)."""
        from .tables import write_csv

        return write_csv(self, path, basis=basis, digits=digits)


def _integrand(path_or_text, parameters: Sequence[str] | None):
    from .errors import InputError
    from .integrand.reader import integrand_from_text, read_integrand

    if isinstance(path_or_text, os.PathLike):
        kind = "file"
    elif isinstance(path_or_text, str):
        text = path_or_text
        if "\n" in text or _TOML_KEY.match(text):
            kind = "toml"
        elif text.strip().lower().endswith(".toml") or os.path.isfile(text):
            kind = "file"
        else:
            kind = "expression"
    else:
        raise InputError(
            f"expand() takes a path or a string, got {type(path_or_text).__name__}",
            hint='e.g. lowenergy.expand("examples/open_superstring.toml", order=4)',
        )
    if parameters and kind != "expression":
        raise InputError(
            "parameters= is only for a bare integrand expression",
            hint="an integrand file declares its own: parameters = [...]",
        )
    if kind == "file":
        return read_integrand(path_or_text)
    if kind == "toml":
        return integrand_from_text(path_or_text, source="<text>")
    # a bare expression: wrap it as the one-line file it stands for (a JSON
    # string literal is a valid TOML basic string)
    lines = [f"integrand = {json.dumps(path_or_text)}"]
    if parameters:
        lines.append("parameters = [" + ", ".join(json.dumps(str(p)) for p in parameters) + "]")
    return integrand_from_text("\n".join(lines) + "\n", source="<expression>")


def expand(
    path_or_text: Union[str, "os.PathLike[str]"],
    order: int,
    *,
    parameters: Sequence[str] | None = None,
) -> Expansion:
    """Expand an integrand at low energy; every coefficient exact.

    Parameters
    ----------
    path_or_text:
        An integrand file (``str`` path ending in ``.toml`` or any
        ``os.PathLike``), the TOML text of one (``'integrand = "..."'``,
        may span lines), or a bare integrand expression such as
        ``"x^(-s-1)*(1-x)^(-t-1)"`` (expansion variables ``s``, ``t``,
        integration variable ``x``).
    order:
        Keep every ``s^i t^j`` with ``i + j <= order`` (poles included).
    parameters:
        Names of free rational parameters in a bare expression.

    Returns
    -------
    Expansion
        ``coefficient(i, j)`` gives an MZV (a dict ``{parameter exponents:
        MZV}`` when there are free parameters); ``to_dataframe()``,
        ``to_latex()``, ``to_csv(path)`` give tables.

    Raises
    ------
    lowenergy.errors.LowEnergyError
        For unreadable or unsupported input (one message naming the term).
    """
    from .errors import InputError
    from .expansion.engine import expand as run_expand

    if isinstance(order, bool) or not isinstance(order, int) or not 0 <= order <= 60:
        raise InputError(f"order must be an integer between 0 and 60, got {order!r}")
    integrand = _integrand(path_or_text, parameters)
    if getattr(integrand, "domain", "interval") == "sphere":
        from .svpolylog.sphere import expand_sphere as run_expand
    base = run_expand(integrand, order)
    return Expansion(
        variables=base.variables,
        parameters=base.parameters,
        order=base.order,
        coefficients=base.coefficients,
        title=base.title,
        source=base.source,
        meta=base.meta,
        u_poles=base.u_poles,
        domain=base.domain,
    )
