"""The ``lowenergy`` command line.

Every user error (a :class:`~lowenergy.errors.LowEnergyError`) becomes one
line on standard error and exit code 2, without a traceback and without a
partial output file.
"""

from __future__ import annotations

import functools
import json
import sys
from typing import Optional

import typer

from .errors import LowEnergyError

__all__ = ["app", "main"]

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Exact low-energy expansions of worldsheet integrals in multiple zeta values.",
)
tables_app = typer.Typer(no_args_is_help=True, help="Build and inspect the cached MZV reduction tables.")
app.add_typer(tables_app, name="tables")


def user_errors(func):
    """Map LowEnergyError to one message and exit code 2."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            return func(*args, **kwargs)
        except LowEnergyError as err:
            typer.echo(f"error: {err}", err=True)
            raise typer.Exit(2)

    return wrapper


def _check_digits(digits: int) -> None:
    from .errors import InputError

    if digits < 1 or digits > 10000:
        raise InputError(f"--digits must be between 1 and 10000, got {digits}")


@app.command()
@user_errors
def reduce(
    expression: str = typer.Argument(..., help="e.g. 'zeta(5,3) + zeta(3,5)' or 'pi^4/90'"),
    basis: str = typer.Option("conventional", "--basis", help="'conventional' (ζ-monomials) or 'f' (f-alphabet)"),
    digits: int = typer.Option(30, "--digits", help="significant digits of the numeric value"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    regularize: Optional[str] = typer.Option(
        None, "--regularize", help="'shuffle' or 'stuffle': allow divergent zeta(1,...)"
    ),
    pi: bool = typer.Option(False, "--pi", help="show powers of ζ(2) as powers of π"),
) -> None:
    """Reduce an MZV expression to its canonical form and evaluate it."""
    import mpmath

    from .errors import InputError
    from .zeta.expression import evaluate
    from .zeta.falphabet import f_to_text

    if basis not in ("conventional", "f"):
        raise InputError(f"unknown basis {basis!r}", hint="use --basis conventional or --basis f")
    if regularize not in (None, "shuffle", "stuffle"):
        raise InputError(f"unknown regularization {regularize!r}", hint="use shuffle or stuffle")
    _check_digits(digits)
    value = evaluate(expression, regularize=regularize)
    exact = value.to_text(pi=pi)
    f_text = f_to_text(value.f_alphabet())
    numeric = mpmath.nstr(value.numeric(digits), digits, min_fixed=-5, max_fixed=5)
    if as_json:
        out = {
            "expression": expression,
            "exact": exact,
            "numeric": numeric,
            "weight": value.weight,
            "weights": sorted(value.weights()),
            "basis": basis,
            "f_alphabet": f_text,
            "latex": value.to_text(style="latex", pi=pi),
        }
        typer.echo(json.dumps(out))
        return
    typer.echo(f_text if basis == "f" else exact)
    typer.echo(f"≈ {numeric}")


@tables_app.command("build")
@user_errors
def tables_build(
    weight: int = typer.Option(12, "--weight", help="build all weights up to this one"),
    rebuild: bool = typer.Option(False, "--rebuild", help="recompute weights already cached"),
) -> None:
    """Build the MZV reduction tables (cached in the user's cache directory)."""
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from .errors import InputError
    from .zeta.table import build_tables, default_store

    if weight < 2 or weight > 18:
        raise InputError(f"--weight must be between 2 and 18, got {weight}")
    store = default_store()
    with Progress(
        TextColumn("[bold]MZV tables[/bold]"),
        BarColumn(),
        TextColumn("weight {task.completed:.0f}/{task.total:.0f}"),
        TextColumn("{task.description}"),
        TimeElapsedColumn(),
        transient=False,
    ) as bar:
        task = bar.add_task("", total=weight, completed=1)

        def progress(w: int, message: str) -> None:
            if message in ("done", "cached"):
                bar.update(task, completed=w, description=message)
            else:
                bar.update(task, description=message)

        build_tables(weight, store, rebuild=rebuild, progress=progress)
    typer.echo(f"tables up to weight {weight} in {store.directory}")


@tables_app.command("info")
@user_errors
def tables_info() -> None:
    """Show which weights are built, their dimensions and generators."""
    from .zeta.table import default_store

    store = default_store()
    built = store.built_weight()
    typer.echo(f"directory: {store.directory}")
    if built < 2:
        typer.echo("no tables built yet; run `lowenergy tables build --weight 12`")
        return
    for w in range(2, built + 1):
        gens = ", ".join("ζ(" + ",".join(map(str, g)) + ")" for g in store.generators(w))
        stats = store.stats(w)
        secs = stats.get("total_s")
        timing = f"  [{secs:.2f} s]" if secs is not None else ""
        typer.echo(f"weight {w:2d}: dimension {store.dimension(w):3d}  new generators: {gens or '-'}{timing}")


@app.command()
@user_errors
def demo() -> None:
    """Build the tables to weight 12 if needed and show a few reductions."""
    from .zeta.expression import evaluate
    from .zeta.falphabet import f_to_text
    from .zeta.table import build_tables, default_store

    store = default_store()
    if store.built_weight() < 12:
        typer.echo("building MZV tables up to weight 12 (once; cached) ...")
        build_tables(12, store)
    for text in ["zeta(2,1)", "zeta(5,3)", "zeta(3,1,3,1)", "pi^8", "zeta(2,2,3,5) - zeta(3,9)"]:
        value = evaluate(text)
        typer.echo(f"{text:28s} = {value}")
        typer.echo(f"{'':28s}   f-alphabet: {f_to_text(value.f_alphabet())}")


def main() -> None:
    """Console entry point."""
    app(prog_name="lowenergy")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
