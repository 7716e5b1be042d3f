"""``lowenergy ansatz``: write an integrand file with an ansatz of independent functions."""

from __future__ import annotations

import json
from typing import Optional

import typer

from ..cli import app, user_errors

__all__ = ["ansatz"]


@app.command()
@user_errors
def ansatz(
    weight: int = typer.Option(..., "--weight", help="largest total weight W of (MZV constant) x function"),
    family: str = typer.Option("sv", "--family", help="'sv' (svpolylog(w; x), single-valued) or 'mpl' (G(w; x))"),
    mzv: bool = typer.Option(False, "--mzv", help="also multiply by canonical MZV basis monomials of lower weight"),
    uniform: bool = typer.Option(False, "--uniform", help="only total weight exactly W (default: every weight 0..W)"),
    degree: int = typer.Option(0, "--degree", help="N: polynomial degree in s, t attached to each function"),
    degree_rule: str = typer.Option(
        "fixed", "--degree-rule", help="fixed: i+j <= N; falling: i+j <= N+W-w; rising: i+j <= N+w (w: weight)"
    ),
    exact_degree: bool = typer.Option(False, "--exact-degree", help="only monomials of exactly that degree"),
    symmetry: str = typer.Option("none", "--symmetry", help="none | symmetric | antisymmetric under x<->1-x, s<->t"),
    x_shift: int = typer.Option(0, "--x-shift", help="p in x^(-s-1+p)"),
    y_shift: int = typer.Option(0, "--y-shift", help="q in (1-x)^(-t-1+q)"),
    prefix: str = typer.Option("a", "--prefix", help="parameters are named PREFIX1, PREFIX2, ..."),
    domain: str = typer.Option("line", "--domain",
                               help="integration domain: 'line' (0 < x < 1) or 'sphere' (closed strings, d^2z/pi)"),
    title: str = typer.Option("", "--title", help="title of the file (default: a description of the ansatz)"),
    write: Optional[str] = typer.Option(None, "--write", help="write the integrand file here (else print it)"),
    as_json: bool = typer.Option(False, "--json", help="print the counts as one JSON object"),
) -> None:
    """Generate an ansatz: independent polylogarithms of x times polynomials in s, t, as an integrand file."""
    from ..ansatz.generate import AnsatzSpec, generate
    from ..tables.export import _atomic_write

    spec = AnsatzSpec(
        weight=weight, family=family, mzv=mzv, uniform=uniform, degree=degree, degree_rule=degree_rule,
        exact_degree=exact_degree, symmetry=symmetry, x_shift=x_shift, y_shift=y_shift, prefix=prefix,
        domain=domain, title=title,
    )
    result = generate(spec)
    text = result.to_toml()
    if write:
        _atomic_write(write, text)
    if as_json:
        out = result.to_dict()
        out["file"] = write
        typer.echo(json.dumps(out))
        return
    if write:
        typer.echo(
            f"{len(result.terms)} parameters on {result.independent_functions} independent functions "
            f"(of {result.functions} candidates); wrote {write}"
        )
    else:
        typer.echo(text, nl=False)
