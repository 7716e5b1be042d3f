"""``lowenergy highenergy FILE...`` and ``lowenergy shifts FILE0 FILE1 [FILE2...]``."""

from __future__ import annotations

import json
import re
from fractions import Fraction
from typing import List, Optional

import typer

from ..cli import DEFAULT_DIGITS, _exit_codes, app, user_errors

_NUMBER = re.compile(r"[+-]?\d+(\.\d+)?(/\d+)?")


def _rational(text: str, what: str) -> Fraction:
    from ..errors import InputError

    text = text.strip()
    if len(text) > 60 or not _NUMBER.fullmatch(text):
        raise InputError(f"not a rational or decimal number in {what}: {text!r}", term=text,
                         hint="write e.g. 1/3 or 0.25")
    try:
        return Fraction(text)
    except (ValueError, ZeroDivisionError):
        raise InputError(f"not a rational or decimal number in {what}: {text!r}", term=text) from None


def _list(text: str, what: str) -> List[Fraction]:
    from ..errors import InputError

    items = [p for p in text.split(",") if p.strip()]
    if not items or len(items) > 200:
        raise InputError(f"{what} needs 1 to 200 comma-separated numbers, got {text!r}")
    return [_rational(p, what) for p in items]


def _direction(text: str, variables, saddle) -> Fraction:
    """``s=-1,t=-3`` -> x* of that direction (refused outside the interval)."""
    from ..errors import InputError

    point = {}
    for part in text.split(","):
        if "=" not in part:
            raise InputError(f"expected name=value in --direction, got {part.strip()!r}",
                             hint=f"write --direction {variables[0]}=-1,{variables[1]}=-3")
        name, value = (p.strip() for p in part.split("=", 1))
        if name not in variables:
            raise InputError(f"unknown variable {name!r} in --direction", hint=f"use {variables[0]} and {variables[1]}")
        point[name] = _rational(value, "--direction")
    if set(point) != set(variables):
        raise InputError("--direction needs both variables", hint=f"write --direction {variables[0]}=-1,{variables[1]}=-3")
    return saddle.saddle_of_direction(point[variables[0]], point[variables[1]])


def _assignments(items, what: str = "--set"):
    """``["b1=1/2", "b2=-3,b3=0.25"]`` -> {name: Fraction} (never evaluated)."""
    from ..errors import InputError

    values = {}
    for item in items or []:
        for part in item.split(","):
            if not part.strip():
                continue
            if "=" not in part:
                raise InputError(f"expected name=value in {what}, got {part.strip()!r}", term=part.strip()[:60],
                                 hint="write e.g. --set b1=1/2 --set b2=-3")
            name, value = (p.strip() for p in part.split("=", 1))
            if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]{0,40}", name):
                raise InputError(f"not a parameter name in {what}: {name!r}", term=name[:60])
            if name in values:
                raise InputError(f"parameter {name!r} is set twice in {what}", term=name)
            values[name] = _rational(value, what)
    return values


def _read_family(files, assignments):
    """Read the files and put the ``--set`` values into the parameters of each (exactly)."""
    from ..constraints.fix import substitute
    from ..errors import InputError
    from ..integrand.reader import read_integrand

    integrands = [read_integrand(f) for f in files]
    values = _assignments(assignments)
    known = set()
    for itg in integrands:
        known.update(itg.parameters)
    unknown = sorted(set(values) - known)
    if unknown:
        raise InputError(f"--set names parameters that no file has: {', '.join(unknown)}",
                         hint="the parameters are: " + (", ".join(sorted(known)) or "(none)"))
    out = []
    for itg in integrands:
        mine = {k: v for k, v in values.items() if k in itg.parameters}
        out.append(substitute(itg, mine) if mine else itg)
    return out


@app.command(epilog=_exit_codes("1 a relation or consistency check failed"))
@user_errors
def highenergy(
    files: List[str] = typer.Argument(..., help="integrand files: order 0 (flat), order 1, order 2, ..."),
    angles: str = typer.Option("0.1,0.2,0.3,0.4,0.5,0.6,0.7,0.8,0.9", "--angles", metavar="LIST",
                               help="grid of saddle points x* = s/(s+t), comma-separated, 0 < x* < 1"),
    direction: Optional[List[str]] = typer.Option(None, "--direction", metavar="S=..,T=..",
                                                  help="add the angle of a direction, e.g. s=-1,t=-3 (repeatable)"),
    relation: Optional[List[str]] = typer.Option(None, "--relation", metavar="RELATION",
                                                 help="relation between A1, A2, ... (order k over order 0), "
                                                 "e.g. 'A2 = A1^2/2'; default: A_k = A1^k/k!"),
    ray: Optional[str] = typer.Option(None, "--ray", metavar="X", help="quadrature on the ray of this x* (validation)"),
    s_values: str = typer.Option("-10,-20,-50,-100,-200", "--s-values", metavar="LIST", help="values of s on the ray"),
    csv: Optional[str] = typer.Option(None, "--csv", metavar="FILE", help="write the tables as CSV"),
    json_file: Optional[str] = typer.Option(None, "--json-file", metavar="FILE", help="write everything as JSON"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    plot: Optional[str] = typer.Option(None, "--plot", metavar="FILE", help="PNG: leading terms on the grid (and the ray ratios)"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="significant digits of the numbers"),
    assign: Optional[List[str]] = typer.Option(None, "--set", metavar="NAME=VALUE",
                                               help="value of a free parameter, exact rational (repeatable)"),
) -> None:
    """Fixed-angle high energy: exact saddle terms per order, exponentiation check, quadrature on a ray.

    Interval and sphere integrand files.  Free parameters need values (--set).
    Exit 0: all relations hold; 1: a relation fails; 2: bad input.
    """
    from ..errors import InputError
    from ..spectrum.highenergy import high_energy, saddle_for

    if digits < 4 or digits > 60:
        raise InputError(f"--digits must be between 4 and 60, got {digits}")
    if len(files) > 12:
        raise InputError("at most 12 files (orders 0..11)")
    integrands = _read_family(files, assign)
    saddle = saddle_for(integrands)
    grid = _list(angles, "--angles")
    for d in direction or []:
        grid.append(_direction(d, integrands[0].variables, saddle))
    grid = sorted(set(saddle.check_saddle(x) for x in grid))
    ray_x = saddle.check_saddle(_rational(ray, "--ray")) if ray else None
    svals = _list(s_values, "--s-values") if ray else []
    report = high_energy(integrands, grid=grid, relations=relation or None, ray=ray_x, s_values=svals,
                         digits=digits)
    # build every output before writing any file
    data = report.to_dict()
    if plot:
        _plot(report, plot)
    if csv:
        report.write(csv, "csv")
    if json_file:
        report.write(json_file, "json")
    if as_json:
        typer.echo(json.dumps(data, default=str))
    else:
        typer.echo(report.to_text())
    for path in (csv, json_file, plot):
        if path:
            typer.echo(f"wrote {path}", err=True)
    if not report.ok:
        raise typer.Exit(1)


def _plot(report, path) -> None:
    import numpy as np

    from ..spectrum.plots import _figure

    fig = _figure((7.0, 7.0) if report.rays else (7.0, 4.5))
    axes = fig.subplots(2 if report.rays else 1, 1)
    ax = axes[0] if report.rays else axes
    xs = np.array([float(x) for x in report.grid])
    for k, lt in enumerate(report.leading):
        if k == 0:
            continue
        base = [report.leading[0].leading.numeric(x, 12) for x in report.grid]
        vals = [float(lt.leading.numeric(x, 12) / b) for x, b in zip(report.grid, base)]
        ax.plot(xs, vals, "o-", label=f"A{k}: order {k}/order 0 (E^{lt.degree - report.leading[0].degree})")
    if len(report.leading) == 1:
        ax.plot(xs, [float(report.leading[0].leading.numeric(x, 12)) for x in report.grid], "o-", label="order 0")
    ax.set_xlabel("x* = saddle point")
    ax.set_ylabel("leading coefficient")
    ax.legend(fontsize=7)
    ax.set_title("leading saddle terms", fontsize=10)
    if report.rays:
        ax2 = axes[1]
        for k, pts in report.rays.items():
            sabs = np.array([abs(float(p.s)) for p in pts])
            ax2.plot(sabs, [float(p.ratio) for p in pts], "o", color=f"C{k}", label=f"order {k}: quadrature / leading")
            ax2.plot(sabs, [float(p.predicted) for p in pts], "-", lw=1, color=f"C{k}",
                     label=f"order {k}: 1 + next/(leading E)")
        ax2.axhline(1.0, color="grey", lw=0.5)
        ax2.set_xscale("log")
        ax2.set_xlabel("|s| on the ray")
        ax2.set_ylabel("ratio")
        ax2.legend(fontsize=7)
    fig.tight_layout()
    fig.savefig(path, format="png", dpi=100)


@app.command(epilog=_exit_codes("1 a consistency check failed"))
@user_errors
def shifts(
    files: List[str] = typer.Argument(..., help="integrand files of the orders ε⁰, ε¹ (and ε²)"),
    levels: int = typer.Option(5, "--levels", metavar="N", help="levels n = 1..LEVELS"),
    dim: str = typer.Option("10", "--dim", metavar="D", help="space-time dimension D of the partial waves"),
    csv: Optional[str] = typer.Option(None, "--csv", metavar="FILE", help="write the table as CSV"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    plot: Optional[str] = typer.Option(None, "--plot", metavar="FILE", help="PNG: <delta1> against n on a trajectory"),
    trajectory: int = typer.Option(0, "--trajectory", metavar="K", help="plot J = J_max(n) - K (0: leading trajectory)"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="significant digits of the numbers"),
    channel: Optional[str] = typer.Option(None, "--channel", metavar="VAR",
                                          help="pole variable: the first (s-channel, default) or the second (t-channel)"),
    assign: Optional[List[str]] = typer.Option(None, "--set", metavar="NAME=VALUE",
                                               help="value of a free parameter, exact rational (repeatable)"),
) -> None:
    """Mass shifts per level and spin: residue, <delta1>, variance, <delta2>, consistency residuals.

    Poles in the first variable by default; --channel t (the second variable's name) takes the
    poles in the second variable, with partial waves in the first.  Free parameters need values (--set).
    Exit 0: consistent; 1: a consistency residual is non-zero; 2: bad input.
    """
    from ..errors import InputError
    from ..spectrum.shifts import plot_shifts, spectrum_shifts

    if len(files) < 2:
        raise InputError("shifts needs at least two files: order ε⁰ and order ε¹")
    if levels < 1 or levels > 60:
        raise InputError(f"--levels must be between 1 and 60, got {levels}")
    if digits < 4 or digits > 60:
        raise InputError(f"--digits must be between 4 and 60, got {digits}")
    if trajectory < 0:
        raise InputError("--trajectory must be 0 or positive")
    dimension = _rational(dim, "--dim")
    integrands = _read_family(files, assign)
    first = integrands[0]
    for itg in integrands[1:]:
        if tuple(itg.variables) != tuple(first.variables):
            raise InputError(f"the variables differ between the files: {list(first.variables)} in {first.source} "
                             f"but {list(itg.variables)} in {itg.source}", source=itg.source,
                             hint="use the same variable names in every file of the family")
    var = 0
    if channel is not None:
        if channel not in first.variables:
            raise InputError(f"unknown --channel {channel!r}", term=channel[:60],
                             hint=f"use {first.variables[0]} (poles in the first variable) or "
                             f"{first.variables[1]} (poles in the second)")
        var = list(first.variables).index(channel)
    for itg in integrands:
        if itg.parameters:
            raise InputError(f"free parameters {list(itg.parameters)}: the shifts need numbers", source=itg.source,
                             hint="give their values with --set NAME=VALUE (exact rationals)")
    from ..cli import _residues_of  # interval or sphere

    tables = [_residues_of(itg, levels) for itg in integrands]
    table = spectrum_shifts(tables, dimension, var=var, levels=range(1, levels + 1), digits=digits)
    if plot:
        plot_shifts(table, plot, offset=trajectory)
    if csv:
        table.write(csv, "csv")
    if as_json:
        typer.echo(json.dumps(table.to_dict(), default=str))
    else:
        typer.echo(table.to_text())
    for path in (csv, plot):
        if path:
            typer.echo(f"wrote {path}", err=True)
    if not table.consistent:
        raise typer.Exit(1)
