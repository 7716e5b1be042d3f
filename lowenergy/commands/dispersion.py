"""``lowenergy dispersion``: low-energy coefficients rebuilt from the residues.

Each coefficient of ``s^k t^j`` (k ≥ 1) is summed as a fixed-t dispersion
sum over the poles at the massive levels
(:func:`lowenergy.spectrum.dispersion.check_dispersion`) and printed beside
the exact coefficient from the expansion, with the number of agreeing digits.
Sphere integrands sum the S-channel poles at S = n and the U-channel poles
at U = n (S = -T-n) level by level (formula and validity in the module
docstring of :mod:`lowenergy.spectrum.dispersion`).
"""

from __future__ import annotations

import json
from typing import Optional

import typer

from ..cli import DEFAULT_DIGITS, _exit_codes, app, user_errors

__all__ = ["dispersion"]


@app.command(epilog=_exit_codes("1 a rebuilt coefficient disagrees with the exact one"))
@user_errors
def dispersion(
    file: str = typer.Argument(..., help="integrand file (TOML)"),
    order: int = typer.Option(4, "--order", metavar="N", help="rebuild every v^k w^j with 1 <= k, k + j <= ORDER"),
    levels: int = typer.Option(40, "--levels", metavar="N", help="pole locations summed before the tail is extrapolated"),
    var: Optional[str] = typer.Option(None, "--var", metavar="NAME",
                                      help="the pole variable v of the dispersion sums, by name (default: the first, s or S)"),
    method: str = typer.Option("auto", "--method", metavar="NAME", help="tail extrapolation: auto | fit | richardson | none"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="working digits of the sums"),
    at: Optional[str] = typer.Option(None, "--at", metavar="VALUES", help="values of the free parameters, e.g. a1=1,a2=-1/2"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
) -> None:
    """Rebuild low-energy coefficients as dispersive sums over the residues and compare
    them with the exact expansion (exit 0 all agree, 1 any disagrees, 2 bad input)."""
    import mpmath

    from ..cli import _check_digits, _parse_point, _residues_of
    from ..errors import InputError
    from ..expansion.engine import expand
    from ..integrand.reader import read_integrand
    from ..spectrum.dispersion import check_dispersion

    _check_digits(digits)
    if digits > 200:
        raise InputError(f"--digits must be at most 200 for dispersion sums, got {digits}")
    if not 1 <= order <= 20:
        raise InputError(f"--order must be between 1 and 20, got {order}")
    if not 4 <= levels <= 200:
        raise InputError(f"--levels must be between 4 and 200, got {levels}")
    if method not in ("auto", "fit", "richardson", "none"):
        raise InputError(f"unknown method {method!r}", hint="auto, fit, richardson or none")
    integrand = read_integrand(file)
    if at:
        from ..constraints import substitute

        integrand = substitute(integrand, _parse_point(at))
    if integrand.parameters:
        names = ", ".join(integrand.parameters)
        raise InputError(
            f"{file} has free parameters ({names}): dispersive sums need numbers",
            hint="give their values with --at " + ",".join(f"{p}=..." for p in integrand.parameters),
        )
    if var is None:
        var = integrand.variables[0]
    if var not in integrand.variables:
        raise InputError(f"--var must be one of {', '.join(integrand.variables)}, got {var!r}")
    v = integrand.variables.index(var)
    other = integrand.variables[1 - v]
    table = _residues_of(integrand, levels)  # interval, or sphere (S, T and U channels)
    if integrand.domain == "sphere":
        from ..svpolylog.sphere import expand_sphere

        expansion = expand_sphere(integrand, order)
    else:
        expansion = expand(integrand, order)
    rows = []
    for total in range(1, order + 1):
        for k in range(total, 0, -1):
            j = total - k
            r = check_dispersion(
                integrand, k, j, levels=levels, var=var, method=method, digits=digits,
                table=table, expansion=expansion,
            )
            with mpmath.workdps(digits + 10):
                diff = abs(r.value - r.exact_value)
                agrees = bool(diff <= 10 * r.error + mpmath.mpf(10) ** (5 - digits) * abs(r.exact_value))
            rows.append({
                "monomial": "*".join(x if e == 1 else f"{x}^{e}" for x, e in ((var, k), (other, j)) if e),
                "k": k,
                "j": j,
                "exact": r.exact.to_text() if r.exact is not None else "0",
                "exact_value": mpmath.nstr(r.exact_value, 15),
                "dispersive_sum": mpmath.nstr(r.value, 15),
                "error_estimate": mpmath.nstr(r.error, 3),
                "digits": round(min(r.digits, digits), 1),
                "method": r.method,
                "agrees": agrees,
            })
    ok = all(row["agrees"] for row in rows)
    if as_json:
        typer.echo(json.dumps({"variable": var, "levels": levels, "order": order, "rows": rows, "ok": ok}))
    else:
        import pandas

        df = pandas.DataFrame(rows, columns=[
            "monomial", "exact", "dispersive_sum", "error_estimate", "digits", "agrees"])
        df["agrees"] = df["agrees"].map({True: "yes", False: "NO"})
        channels = f"{var} and {'U' if 'U' not in integrand.variables else 'u_'} = -{'-'.join(integrand.variables)}" \
            if integrand.domain == "sphere" else var
        typer.echo(f"dispersive sums over the poles in {channels} at {levels} locations, tail extrapolated ({method})")
        typer.echo(df.to_string(index=False))
        bad = [row["monomial"] for row in rows if not row["agrees"]]
        typer.echo("all agree with the expansion" if ok else f"disagree: {', '.join(bad)}")
    if not ok:
        raise typer.Exit(1)
