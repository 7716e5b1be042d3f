"""Regenerate the invented constraint data of the "first correction" example.

INVENTED SCENARIO (demo data only): the numerators below are not physics; they
are computed from the invented integrand first_correction_truth.toml so that
the walkthrough of examples/README.md has a known answer.

    python examples/make_first_correction.py      # rewrites the two files below

* first_correction_poles.toml: [[pole]] tables for poles at s = n: at most
  4th order with numerators of degree <= n+1 at levels 0..8, the simple-pole
  numerators at levels 0..6 and the double-pole numerators at levels 1, 2
  (each computed exactly with lowenergy.spectrum.residues);
* first_correction_localization.toml: one invented "localization-type"
  relation c[2,0] + c[0,2] - c[1,1] = (value of the invented integrand).
"""

from __future__ import annotations

from pathlib import Path

from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import read_integrand
from lowenergy.spectrum.residues import residues

HERE = Path(__file__).resolve().parent
TRUTH = HERE / "first_correction_truth.toml"
STRUCTURE_LEVELS = range(0, 9)
SIMPLE_LEVELS = range(0, 7)
DOUBLE_LEVELS = (1, 2)

HEADER = """\
# INVENTED SCENARIO (demo data only, not from any publication).
# Written by examples/make_first_correction.py from the invented integrand
# first_correction_truth.toml (numerators by lowenergy.spectrum.residues:
# the coefficient R_m(t) of 1/(s-n)^m, no sign flipped).
"""


def poles_text() -> str:
    table = residues(read_integrand(TRUTH), max(STRUCTURE_LEVELS))
    out = [HEADER,
           'title = "Invented pole structure of the first correction"\n',
           'source = "invented for the lowenergy examples (no publication); see examples/make_first_correction.py"\n',
           "\n# poles at s = n of order at most 4, numerators of degree at most n+1\n",
           "[[pole]]\n", 'variable = "s"\n', f"levels = {list(STRUCTURE_LEVELS)}\n",
           "max_order = 4\n", 'max_degree = "n+1"\n']
    for order, levels in ((1, SIMPLE_LEVELS), (2, DOUBLE_LEVELS)):
        out.append(f"\n# the numerators of the order-{order} poles at levels {list(levels)}\n")
        out += ["[[pole]]\n", 'variable = "s"\n', f"levels = {list(levels)}\n", "max_order = 4\n",
                f"pole_order = {order}\n", "[pole.residues]\n"]
        for n in levels:
            out.append(f'{n} = "{table.residue_text(n, order)}"\n')
    return "".join(out)


def localization_text() -> str:
    e = expand(read_integrand(TRUTH), 2)
    value = e.value(2, 0) + e.value(0, 2) - e.value(1, 1)
    return (HEADER
            + 'title = "Invented localization-type relation for the first correction"\n'
            + 'source = "invented for the lowenergy examples (no publication); see examples/make_first_correction.py"\n\n'
            + "[[constraint]]\n"
            + 'name = "order-2 localization"\n'
            + 'relation = "c[2,0] + c[0,2] - c[1,1]"\n'
            + 'kind = "="\n'
            + f'rhs = "{value.to_text()}"\n')


def main() -> None:
    (HERE / "first_correction_poles.toml").write_text(poles_text(), encoding="utf-8")
    (HERE / "first_correction_localization.toml").write_text(localization_text(), encoding="utf-8")


if __name__ == "__main__":
    main()
