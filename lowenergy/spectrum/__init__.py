"""The spectrum behind a low-energy expansion: poles, partial waves, dispersion.

* :func:`residues` — exact pole parts at ``s = n`` and ``t = n`` (all orders)
  from the end points of the integral (METHOD.md §6);
* :func:`partial_waves` — Gegenbauer decomposition of the simple-pole
  residues in D dimensions (default D = 10), negative coefficients flagged;
* :func:`check_dispersion` / :func:`dispersive_sum` — low-energy coefficients
  rebuilt from the residues by a fixed-t dispersion sum with tail extrapolation;
* :mod:`lowenergy.spectrum.plots` — PNG plots (matplotlib, Agg canvas only),
  imported on demand so that matplotlib stays optional.

Tables: ``ResidueTable.to_dataframe()/write()`` and
``PartialWaveTable.to_dataframe()/write()`` (CSV, JSON, LaTeX).
"""

from .dispersion import DispersiveSum, check_dispersion, dispersive_sum
from .partial_waves import PartialWaveTable, partial_waves, unitarity_scan
from .residues import ResidueTable, residues

__all__ = [
    "residues",
    "ResidueTable",
    "partial_waves",
    "PartialWaveTable",
    "unitarity_scan",
    "dispersive_sum",
    "check_dispersion",
    "DispersiveSum",
]
