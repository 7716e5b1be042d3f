"""Tables of exact Wilson coefficients and their exports.

* :mod:`lowenergy.tables.bases` -- the coefficient naming scheme (``c[i,j]``,
  ``sym[i,j]``, ``sigma[a,b]``, user names) and the bases of contact terms
  (monomial, symmetric, sigma, user) with exact remainders;
* :mod:`lowenergy.tables.export` -- DataFrame, CSV (lossless, with
  :func:`read_csv`), JSON, LaTeX ``tabular`` and rich terminal tables.

Names (details in :mod:`lowenergy.tables.bases`): ``c[i,j]`` is the
coefficient of ``s^i t^j`` (poles ``c[-1,0]``, ...); ``sym[i,j]`` the
coefficient of ``s^i t^j + s^j t^i`` (``s^i t^i`` if ``i = j``);
``sigma[a,b]`` that of ``σ2^a σ3^b`` with ``σk = s^k + t^k + u^k``,
``u = -s-t``; user basis elements keep their names.  With free parameters
a row is ``(name, parameter monomial)``, e.g. ``(c[2,0], a1^2*a2)``.

Typical use::

    from lowenergy.tables import to_dataframe, write_csv, read_csv
    df = to_dataframe(expansion, basis="sigma", digits=20)
    write_csv(expansion, "veneziano.csv")
    assert read_csv("veneziano.csv").coefficients == expansion.coefficients
"""

from .bases import (
    BASES,
    BasisElement,
    Decomposition,
    UserBasis,
    coefficient_name,
    contact_part,
    decompose,
    decompose_monomial,
    decompose_sigma,
    decompose_symmetric,
    decompose_user,
    element_name,
    lies_in_basis,
    parse_element_name,
    parse_polynomial,
    pole_part,
    sigma_polynomial,
)
from .export import (
    COLUMNS,
    Row,
    param_text,
    read_csv,
    table_rows,
    to_csv_text,
    to_dataframe,
    to_json_dict,
    to_latex,
    to_terminal,
    write_csv,
    write_json,
    write_latex,
)

__all__ = [
    "BASES",
    "BasisElement",
    "Decomposition",
    "UserBasis",
    "coefficient_name",
    "contact_part",
    "decompose",
    "decompose_monomial",
    "decompose_sigma",
    "decompose_symmetric",
    "decompose_user",
    "element_name",
    "lies_in_basis",
    "parse_element_name",
    "parse_polynomial",
    "pole_part",
    "sigma_polynomial",
    "COLUMNS",
    "Row",
    "param_text",
    "read_csv",
    "table_rows",
    "to_csv_text",
    "to_dataframe",
    "to_json_dict",
    "to_latex",
    "to_terminal",
    "write_csv",
    "write_json",
    "write_latex",
]
