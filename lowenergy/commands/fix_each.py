"""``lowenergy fix-each``: one ansatz fixed against several constraint sets, each on its own.

Where ``lowenergy fix A C1 C2`` solves the files together, ``fix-each A C1
C2`` solves every file separately (a scan over alternative constraint sets).
The integrand is read and expanded once, to the highest order any set needs,
and its pole parts computed once, to the highest level any set needs; each
set then gets them cut to its own order and levels (so its report is the one
``fix`` gives for it alone), and the fixes run one per set, as Dask tasks with ``--workers``/``--scheduler``
(the expansion and pole table are sent to each worker once).  Every file is
read before any work: a bad one is one error line and exit code 2.
"""

from __future__ import annotations

import json
from typing import List, Optional

import typer

from ..cli import SCHEDULER_HELP, WORKERS_HELP, _exit_codes, app, user_errors

__all__ = ["fix_each", "fix_each_set"]


def _truncated_expansion(expansion, order: int):
    """The expansion to a lower total order (the coefficients kept do not
    depend on the order an expansion was made to)."""
    from dataclasses import replace

    if order >= expansion.order:
        return expansion
    return replace(
        expansion,
        order=order,
        coefficients={k: v for k, v in expansion.coefficients.items() if sum(k) <= order},
        u_poles={k: v for k, v in expansion.u_poles.items() if sum(k) <= order},
    )


def _truncated_poles(table, levels: int):
    """The pole table restricted to ``|location| ≤ levels`` (None for no levels)."""
    from dataclasses import replace

    if levels < 0 or table is None:
        return None
    if levels >= table.levels:
        return table
    return replace(table, levels=levels, poles={k: v for k, v in table.poles.items() if abs(k[1]) <= levels})


def fix_each_set(constraint_set, expansion, poles):
    """The fix report of one constraint set (one task): exactly ``fix`` with this
    set alone, from an expansion and pole table made for all sets (cut to the
    order and levels this set needs)."""
    from ..constraints import fix as run_fix
    from ..constraints import required_order
    from ..constraints.model import pole_levels_needed

    mine = _truncated_expansion(expansion, max(required_order([constraint_set]), 0))
    table = _truncated_poles(poles, pole_levels_needed([constraint_set]))
    return run_fix(mine, [constraint_set], poles=table)


@app.command("fix-each", epilog=_exit_codes("1 at least one set is inconsistent"),
             short_help="Fix an ansatz against each constraint file separately.")
@user_errors
def fix_each(
    integrand_file: str = typer.Argument(..., metavar="INTEGRAND", help="integrand file with free parameters"),
    constraints_files: List[str] = typer.Argument(..., metavar="CONSTRAINTS...",
                                                  help="constraint files (TOML), each solved on its own"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    workers: Optional[int] = typer.Option(None, "--workers", metavar="N", help=WORKERS_HELP),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", metavar="ADDRESS", help=SCHEDULER_HELP),
) -> None:
    """Fix the free parameters of an integrand against every constraint file on its own
    (exit 0: no set inconsistent, 1: at least one inconsistent, 2: bad input)."""
    from ..cli import _expand_with_progress, _pole_table
    from ..cluster import cluster_client, run_all
    from ..constraints import read_constraints, required_order
    from ..errors import InputError
    from ..integrand.reader import read_integrand

    sets = [read_constraints(f) for f in constraints_files]
    integrand = read_integrand(integrand_file)
    if not integrand.parameters:
        raise InputError(f"{integrand_file} has no free parameters to fix", hint="declare them with parameters = [...]")
    table = _pole_table(integrand, sets)
    expansion = _expand_with_progress(integrand, max(required_order(sets), 0))
    with cluster_client(workers, scheduler) as client:
        if client is not None:
            expansion, table = client.scatter([expansion, table], broadcast=True)
        reports = run_all(client, fix_each_set, sets, expansion, table)
    if as_json:
        typer.echo(json.dumps({"sets": [{"constraints": f, **r.to_dict()} for f, r in zip(constraints_files, reports)]}))
    else:
        blocks = [f"== {f}\n{r.to_text()}" for f, r in zip(constraints_files, reports)]
        typer.echo("\n\n".join(blocks))
    if any(r.status == "inconsistent" for r in reports):
        raise typer.Exit(1)
