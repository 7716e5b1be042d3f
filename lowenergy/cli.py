"""The ``lowenergy`` command line.

Every user error (a :class:`~lowenergy.errors.LowEnergyError`) becomes one
line on standard error and exit code 2, without a traceback and without a
partial output file.  An internal failure (:class:`~lowenergy.errors.InternalError`
or any other unexpected exception) becomes one line ``internal error: ...
please report`` and exit code 70 (set ``LOWENERGY_DEBUG=1`` for the
traceback).  Missing MZV tables are built on first use with a progress bar on
standard error (one line per weight when standard error is not a terminal).
"""

from __future__ import annotations

import functools
import json
import sys
from typing import Optional

import typer

from .errors import INTERNAL_EXIT_CODE, InternalError, LowEnergyError

__all__ = ["app", "main", "DEFAULT_DIGITS"]

#: The one default of ``--digits`` (significant digits of numeric values and
#: comparisons) for every command.
DEFAULT_DIGITS = 30


def _exit_codes(*extra: str) -> str:
    """The ``Exit codes`` paragraph of a command's help."""
    lines = ["0 success"] + list(extra) + [
        "2 bad input or unusable file/directory (one line on stderr)",
        f"{INTERNAL_EXIT_CODE} internal error (a bug: please report it)",
    ]
    return "\b\nExit codes:\n" + "\n".join("  " + line for line in lines)

app = typer.Typer(
    add_completion=False,
    rich_markup_mode=None,
    no_args_is_help=True,
    help="Exact low-energy expansions of worldsheet integrals in multiple zeta values.",
    epilog="\b\nExit codes (every command; details in COMMAND --help):\n"
    "  0 success\n  1 a check failed (check, verify, fix)\n"
    "  2 bad input or unusable file/directory (one line on stderr)\n"
    "  70 internal error (a bug: please report it)\n"
    "Missing MZV tables are built on first use and cached.",
)
def _plain_argument_help() -> None:
    """Show positional arguments as ``FILE`` in help (typer >= 0.20 writes
    ``{FILE}`` in the usage line and ``FILE <str>`` in the list); the plain
    help of ``rich_markup_mode=None`` already shows flags as flags."""
    from typer.core import TyperArgument

    if hasattr(TyperArgument, "display_type_rich"):
        TyperArgument.display_type_rich = lambda self, ctx: None
    if hasattr(TyperArgument, "_usage_display_name"):
        TyperArgument._usage_display_name = lambda self: self.display_name_raw + (
            "..." if self.nargs != 1 and self.metavar is None else ""
        )


_plain_argument_help()


tables_app = typer.Typer(no_args_is_help=True, rich_markup_mode=None, help="Build and inspect the cached MZV reduction tables.")
app.add_typer(tables_app, name="tables")


#: Exit code of ``check`` when no constraint failed but some depend on free parameters.
EXIT_UNDECIDED = 3


def _version_callback(value: bool) -> None:
    if value:
        from importlib.metadata import PackageNotFoundError, version

        try:
            typer.echo(f"lowenergy {version('lowenergy')}")
        except PackageNotFoundError:  # pragma: no cover - running from a bare checkout
            typer.echo("lowenergy (version unknown: not installed)")
        raise typer.Exit()


@app.callback()
def _main_options(
    version: bool = typer.Option(
        False, "--version", is_eager=True, callback=_version_callback, help="Print the version and exit."
    ),
) -> None:
    """Exact low-energy expansions of worldsheet integrals in multiple zeta values."""


class _TableBuildReporter:
    """Shows on-demand MZV table builds on stderr: a progress bar on a
    terminal, otherwise one line per weight."""

    def __init__(self) -> None:
        self.bar = None
        self.task = None
        self.started = 0.0
        self.last = 0.0

    def __call__(self, weight: int, target: int, message: str) -> None:
        import time

        console = _stderr_console()
        if message == "start":
            from .zeta.table import cache_dir

            self.started = self.last = time.perf_counter()
            if console.is_terminal:
                from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

                self.bar = Progress(
                    TextColumn("[bold]building MZV tables[/bold] (once; cached)"), BarColumn(),
                    TextColumn("weight {task.fields[weight]}/{task.total:.0f}"), TextColumn("{task.description}"),
                    TimeElapsedColumn(), console=console, transient=True,
                )
                self.bar.start()
                self.task = self.bar.add_task("", total=target, completed=weight - 1, weight=weight)
            else:
                typer.echo(f"building MZV tables of weights {weight}-{target} in {cache_dir()} (once; cached)", err=True)
        elif message == "done":
            now = time.perf_counter()
            if self.bar is not None:
                self.bar.update(self.task, completed=weight, weight=min(weight + 1, target), description="")
            else:
                typer.echo(f"  MZV tables: weight {weight}/{target} done ({now - self.last:.1f} s)", err=True)
            self.last = now
        elif message == "finished":
            self.close()
            typer.echo(
                f"MZV tables up to weight {target} ready ({time.perf_counter() - self.started:.1f} s)", err=True
            )
        elif self.bar is not None:
            self.bar.update(self.task, description=message[:40])

    def close(self) -> None:
        if self.bar is not None:
            self.bar.stop()
            self.bar = None


def user_errors(func):
    """Map LowEnergyError to one message and exit code 2, internal failures
    to ``internal error ... please report`` and exit code 70; report
    on-demand MZV table builds on stderr while the command runs."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        import os

        import click

        from .zeta.table import build_progress

        reporter = _TableBuildReporter()
        try:
            with build_progress(reporter):
                return func(*args, **kwargs)
        except LowEnergyError as err:
            reporter.close()
            # one line, whatever the offending text contained
            typer.echo("error: " + " ".join(str(err).split("\n")).replace("\r", " "), err=True)
            raise typer.Exit(2)
        except (typer.Exit, typer.Abort, click.exceptions.Exit, click.exceptions.Abort, click.ClickException):
            raise
        except Exception as err:  # an InternalError or a bug: never dressed as a user error
            reporter.close()
            if os.environ.get("LOWENERGY_DEBUG"):
                raise
            what = str(err) if isinstance(err, InternalError) else f"{type(err).__name__}: {err}"
            typer.echo(
                f"internal error: {what}; this is a bug in lowenergy, please report it with the command you ran "
                "(LOWENERGY_DEBUG=1 shows the traceback)",
                err=True,
            )
            raise typer.Exit(INTERNAL_EXIT_CODE)
        finally:
            reporter.close()

    return wrapper


#: Largest expression read from standard input or a file (bytes).
MAX_EXPRESSION_BYTES = 1_000_000


def _expression_text(argument: str):
    """The expression itself, or read from stdin (``-``) or a file (``@FILE``).

    Returns ``(text, source)``; line breaks become blanks and ``#`` starts a
    comment to the end of its line, so long expressions can be laid out in a file.
    """
    from .errors import InputError

    if argument == "-":
        raw = sys.stdin.read(MAX_EXPRESSION_BYTES + 1)
        source = "<stdin>"
    elif argument.startswith("@") and len(argument) > 1:
        source = argument[1:]
        try:
            with open(source, encoding="utf-8") as fh:
                raw = fh.read(MAX_EXPRESSION_BYTES + 1)
        except (OSError, UnicodeDecodeError) as err:
            reason = getattr(err, "strerror", None) or type(err).__name__
            raise InputError(f"cannot read the expression file: {reason}", source=source) from None
    else:
        return argument, None
    if len(raw) > MAX_EXPRESSION_BYTES:
        raise InputError(f"the expression is longer than {MAX_EXPRESSION_BYTES} characters", source=source)
    text = " ".join(line.split("#", 1)[0] for line in raw.splitlines()).strip()
    if not text:
        raise InputError("no expression given", source=source, hint="write e.g. -zeta(3) + zeta(2,1)")
    return text, source


def _check_output(path: Optional[str], option: str) -> None:
    """Refuse an output path that cannot be written, before any computation."""
    import os
    from pathlib import Path

    from .errors import InputError

    if not path:
        return
    target = Path(path)
    parent = target.parent if str(target.parent) else Path(".")
    reason = None
    if target.is_dir():
        reason = "it is a directory"
    elif not parent.is_dir():
        reason = f"the directory {parent} does not exist" if not parent.exists() else f"{parent} is not a directory"
    elif not os.access(parent, os.W_OK | os.X_OK):
        reason = f"the directory {parent} is not writable"
    elif target.exists() and not os.access(target, os.W_OK):
        reason = "the file is not writable"
    if reason:
        raise InputError(f"cannot write {option} {path}: {reason}", hint=f"choose another path for {option}")


#: Help of the two options that hand work to Dask (see lowenergy.cluster).
WORKERS_HELP = "run on N local worker processes (Dask); default: serial in this process"
SCHEDULER_HELP = "run on a running Dask cluster, e.g. tcp://host:8786 (see README)"


def _check_digits(digits: int) -> None:
    from .errors import InputError

    if digits < 1 or digits > 10000:
        raise InputError(f"--digits must be between 1 and 10000, got {digits}")


@app.command(epilog=_exit_codes())
@user_errors
def reduce(
    expression: str = typer.Argument(
        ..., metavar="EXPRESSION",
        help="e.g. 'zeta(5,3) + zeta(3,5)' or 'pi^4/90'; '-' reads standard input, '@FILE' a file",
    ),
    basis: str = typer.Option("conventional", "--basis", metavar="NAME", help="'conventional' (ζ-monomials) or 'f' (f-alphabet)"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="significant digits of the numeric value"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    regularize: Optional[str] = typer.Option(
        None, "--regularize", metavar="NAME", help="'shuffle' or 'stuffle': allow divergent zeta(1,...)"
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
    expression, source = _expression_text(expression)
    value = evaluate(expression, regularize=regularize, source=source)
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


@tables_app.command("build", epilog=_exit_codes())
@user_errors
def tables_build(
    weight: int = typer.Option(12, "--weight", metavar="W", help="build all weights up to this one (2-20)"),
    rebuild: bool = typer.Option(False, "--rebuild", help="recompute weights already cached"),
    method: str = typer.Option(
        "auto", "--method", metavar="NAME", help="auto (double shuffle to 12, coaction above) | double-shuffle | motivic"
    ),
    rows: bool = typer.Option(True, "--rows/--no-rows", help="also cache the word values the expansion engine uses"),
    workers: Optional[int] = typer.Option(None, "--workers", metavar="N", help=WORKERS_HELP),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", metavar="ADDRESS", help=SCHEDULER_HELP),
) -> None:
    """Build the MZV reduction tables ahead of time (commands build missing ones on first use).

    With --workers or --scheduler the coaction weights (above 12, or all with
    --method motivic) run as Dask tasks: one per prime for the coaction and
    chunks of words for the numerical top coefficients; the tables are the
    same.  Double-shuffle weights and the word values (--rows) are computed
    in this process."""
    from .cluster import cluster_client
    from .errors import InputError
    from .zeta.table import MAX_WEIGHT, default_store

    if weight < 2 or weight > MAX_WEIGHT:
        raise InputError(f"--weight must be between 2 and {MAX_WEIGHT}, got {weight}")
    if method not in ("auto", "double-shuffle", "motivic"):
        raise InputError(f"unknown table method {method!r}", hint="use auto, double-shuffle or motivic")
    store = default_store()
    store.check_writable()
    with cluster_client(workers, scheduler) as client:
        _build_with_bar(store, weight, rebuild, method, rows, client)
    typer.echo(f"tables up to weight {weight} in {store.directory}")


def _build_with_bar(store, weight: int, rebuild: bool, method: str, rows: bool, client) -> None:
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from .zeta.table import build_tables

    with Progress(
        TextColumn("[bold]MZV tables[/bold]"),
        BarColumn(),
        TextColumn("weight {task.completed:.0f}/{task.total:.0f}"),
        TextColumn("{task.description}"),
        TimeElapsedColumn(),
        transient=False,
        console=_stderr_console(),
    ) as bar:
        task = bar.add_task("", total=weight, completed=1)

        def progress(w: int, message: str) -> None:
            if message in ("done", "cached"):
                bar.update(task, completed=w, description=message)
            else:
                bar.update(task, description=message)

        build_tables(weight, store, rebuild=rebuild, progress=progress, method=method, client=client)
        if rows:
            from .expansion.values import EXACT_MAX_WEIGHT, prepare_rows

            if weight > EXACT_MAX_WEIGHT:
                bar.update(task, completed=EXACT_MAX_WEIGHT, description="word values for the engine")
                prepare_rows(weight, store, progress=lambda w: bar.update(task, completed=w))


@tables_app.command("info", epilog=_exit_codes())
@user_errors
def tables_info() -> None:
    """Show which weights are built, their dimensions and generators."""
    from .zeta.table import default_store

    store = default_store()
    built = store.built_weight()
    typer.echo(f"directory: {store.directory}")
    if built < 2:
        typer.echo("no tables built yet (commands build them on first use; `lowenergy tables build --weight 12` builds ahead)")
        return
    for w in range(2, built + 1):
        gens = ", ".join("ζ(" + ",".join(map(str, g)) + ")" for g in store.generators(w))
        stats = store.stats(w)
        secs = stats.get("total_s")
        timing = f"  [{secs:.2f} s]" if secs is not None else ""
        typer.echo(f"weight {w:2d}: dimension {store.dimension(w):3d}  new generators: {gens or '-'}{timing}")


def _parse_point(text: str) -> dict:
    """``s=-0.1,t=1/20,a=2`` -> {name: Fraction}; safe (Fraction parsing only)."""
    from fractions import Fraction

    from .errors import InputError

    point = {}
    for part in text.split(","):
        if not part.strip():
            continue
        if "=" not in part:
            raise InputError(f"expected name=value in --at, got {part.strip()!r}", hint="write --at s=-0.1,t=-0.05")
        name, value = (x.strip() for x in part.split("=", 1))
        import re

        if len(value) > 60 or not re.fullmatch(r"[+-]?\d+(\.\d+)?(/\d+)?", value):
            raise InputError(f"not a rational or decimal number: {value!r}", term=part.strip(),
                             hint="write e.g. s=-0.1 or t=-1/20")
        try:
            point[name] = Fraction(value)
        except (ValueError, ZeroDivisionError):
            raise InputError(f"not a rational or decimal number: {value!r}", term=part.strip()) from None
    if not point:
        raise InputError("empty --at", hint="write --at s=-0.1,t=-0.05")
    return point


def _basis_spec(basis: str, user_basis: list):
    from .errors import InputError

    if user_basis:
        pairs = []
        for item in user_basis:
            if "=" not in item:
                raise InputError(f"--user-basis expects NAME=POLYNOMIAL, got {item!r}", hint="e.g. --user-basis 'A=s^2+t^2'")
            name, poly = item.split("=", 1)
            pairs.append((name.strip(), poly.strip()))
        return pairs
    if basis == "sv":
        return basis
    if basis not in ("monomial", "symmetric", "sigma"):
        raise InputError(f"unknown basis {basis!r}", hint="use monomial, symmetric, sigma or --user-basis NAME=POLY")
    return basis


def _expand_with_progress(integrand, order: int):
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from .expansion.engine import check_order, expand
    from .zeta.table import default_store

    if getattr(integrand, "domain", "interval") == "sphere":
        from .svpolylog.sphere import expand_sphere as expand
    else:
        # refuse an order beyond the buildable tables up front, then build the
        # missing tables (own progress display) before the expansion's bar starts
        default_store().ensure(check_order(integrand, order))
    n = max(len(integrand.terms), 1)
    console = _stderr_console()
    with Progress(
        TextColumn("[bold]expanding[/bold]"), BarColumn(), TextColumn("{task.description}"),
        TimeElapsedColumn(), transient=True, console=console, disable=not console.is_terminal,
    ) as bar:
        task = bar.add_task("", total=n)

        def progress(msg: str) -> None:
            bar.update(task, advance=1, description=msg)

        return expand(integrand, order, progress=progress)


def _stderr_console():
    from rich.console import Console

    return Console(stderr=True)


@app.command(epilog=_exit_codes(), short_help="Expand an integrand into exact Wilson coefficients.")
@user_errors
def expand(
    files: list[str] = typer.Argument(..., metavar="FILE...", help="integrand file(s) (TOML); several need --out-dir"),
    order: int = typer.Option(..., "--order", metavar="N", help="keep every s^i t^j with i + j <= N"),
    csv: Optional[str] = typer.Option(None, "--csv", metavar="FILE", help="write the table as CSV (lossless)"),
    latex: Optional[str] = typer.Option(None, "--latex", metavar="FILE", help="write a LaTeX tabular"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    basis: str = typer.Option("monomial", "--basis", metavar="NAME", help="monomial | symmetric | sigma | sv (single-valued generators)"),
    user_basis: Optional[list[str]] = typer.Option(None, "--user-basis", metavar="NAME=POLY", help="a basis element, a polynomial in s, t (repeat)"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="significant digits of the numeric column (the terminal table shows fewer when it must fit)"),
    pi: bool = typer.Option(False, "--pi", help="LaTeX/terminal: powers of ζ(2) as powers of π"),
    out_dir: Optional[str] = typer.Option(
        None, "--out-dir", metavar="DIR", help="batch: write DIR/NAME.csv for every FILE (NAME.toml); nothing on the terminal"
    ),
    workers: Optional[int] = typer.Option(None, "--workers", metavar="N", help=WORKERS_HELP),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", metavar="ADDRESS", help=SCHEDULER_HELP),
) -> None:
    """Expand an integrand at low energy into exact Wilson coefficients.

    Several files (a batch) need --out-dir: every file is read first, then
    all are expanded (with --workers or --scheduler one Dask task per file),
    and the CSV tables are written only when all have succeeded."""
    from .errors import InputError
    from .integrand.reader import read_integrand
    from .tables import to_csv_text, to_json_dict, to_latex, to_terminal, write_csv, write_latex

    _check_digits(digits)
    if order < 0:
        raise InputError(f"--order must be a non-negative integer, got {order}")
    spec = _basis_spec(basis, user_basis or [])
    if out_dir is not None or len(files) > 1:
        _expand_batch(files, order, out_dir, spec, digits, workers, scheduler,
                      single_outputs={"--csv": csv, "--latex": latex, "--json": as_json, "--pi": pi})
        return
    file = files[0]
    if spec == "sv" and (csv or latex):
        raise InputError("--basis sv is shown on the terminal and in --json only",
                         hint="CSV and LaTeX keep the conventional MZV basis (lossless); drop --basis sv for them")
    _check_output(csv, "--csv")
    _check_output(latex, "--latex")
    integrand = read_integrand(file)
    if workers is None and scheduler is None:
        expansion = _expand_with_progress(integrand, order)
    else:
        from .batch import expand_many
        from .cluster import cluster_client

        with cluster_client(workers, scheduler) as client:
            (expansion,) = expand_many([integrand], order, client=client)
    if spec == "sv":
        _print_sv_basis(expansion, digits, as_json)
        return
    # build every output in memory first: a failure writes no file
    outputs = []
    if csv:
        to_csv_text(expansion, basis=spec, digits=digits)
        outputs.append(("csv", csv))
    if latex:
        to_latex(expansion, basis=spec, digits=digits, pi=pi)
        outputs.append(("latex", latex))
    if as_json:
        typer.echo(json.dumps(to_json_dict(expansion, digits=digits, basis=spec)))
    else:
        from rich.console import Console

        console = Console()  # width: the terminal's, else COLUMNS, else 80
        console.print(to_terminal(expansion, basis=spec, digits=digits, pi=pi, width=console.width), crop=False)
    for kind, path in outputs:
        if kind == "csv":
            write_csv(expansion, path, basis=spec, digits=digits)
        else:
            write_latex(expansion, path, basis=spec, digits=digits, pi=pi)
        typer.echo(f"wrote {path}", err=True)


def _expand_batch(files, order, out_dir, spec, digits, workers, scheduler, single_outputs) -> None:
    """``expand FILE... --out-dir DIR``: one CSV table per file, all or none."""
    import os
    from pathlib import Path

    from .batch import expand_many
    from .cluster import cluster_client
    from .errors import InputError
    from .integrand.reader import read_integrand
    from .tables import to_csv_text
    from .tables.export import _atomic_write

    if out_dir is None:
        raise InputError(f"{len(files)} files need --out-dir DIR (one CSV table per file)",
                         hint="add e.g. --out-dir tables")
    given = [name for name, value in single_outputs.items() if value]
    if given:
        raise InputError(f"{given[0]} writes the table of one file; a batch writes CSV files to --out-dir",
                         hint=f"drop {given[0]}, or expand one file without --out-dir")
    if spec == "sv":
        raise InputError("--basis sv is shown on the terminal and in --json only",
                         hint="a batch writes CSV in the conventional MZV basis (lossless); drop --basis sv")
    directory = Path(out_dir)
    if directory.exists() and not directory.is_dir():
        raise InputError(f"cannot write to --out-dir {out_dir}: it is not a directory")
    parent = directory if directory.exists() else directory.parent
    if not parent.is_dir() or not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(f"cannot write to --out-dir {out_dir}: "
                         + ("it is not writable" if parent == directory else f"the directory {parent} does not exist or is not writable"),
                         hint="choose another --out-dir")
    targets = {}
    for file in files:
        target = directory / (Path(file).stem + ".csv")
        if target in targets.values():
            raise InputError(f"two input files would both write {target}", source=file,
                             hint="give the files different names")
        targets[file] = target
    if directory.is_dir():
        for target in targets.values():
            _check_output(str(target), "--out-dir")
    integrands = [read_integrand(file) for file in files]  # every input is checked before any work
    with cluster_client(workers, scheduler) as client:
        expansions = expand_many(integrands, order, client=client)
    texts = [to_csv_text(e, basis=spec, digits=digits) for e in expansions]  # all in memory first
    directory.mkdir(exist_ok=True)
    for file, text, expansion in zip(files, texts, expansions):
        _atomic_write(targets[file], text)
        typer.echo(f"wrote {targets[file]} ({len(expansion.coefficients)} coefficients)", err=True)


def _print_sv_basis(expansion, digits: int, as_json: bool) -> None:
    """The monomial table with every coefficient written in single-valued
    generators (ζ(3), ζ(5), ... and sv images of depth ≥ 2 generators)."""
    from .svpolylog.svbasis import sv_text
    from .tables import table_rows, to_json_dict

    _, rows = table_rows(expansion, "monomial", digits)
    texts = {}
    for r in rows:
        try:
            texts[(r.name, r.param)] = sv_text(r.value)
        except LowEnergyError as err:
            raise err.located(term=r.name)
    if as_json:
        data = to_json_dict(expansion, digits=digits, basis="monomial")
        data["basis"] = "sv"
        by_name: dict = {}
        for r in rows:
            by_name.setdefault(r.name, []).append(r)
        for term in data["terms"]:
            group = by_name[term["name"]]
            term["exact_conventional"] = term["exact"]
            term["exact"] = " + ".join(
                f"({texts[(r.name, r.param)]})" + ("" if r.param == "1" else f"*{r.param}") for r in group
            ) if len(group) > 1 or group[0].param != "1" else texts[(group[0].name, group[0].param)]
        typer.echo(json.dumps(data))
        return
    from rich.console import Console
    from rich.table import Table

    table = Table(title="low-energy expansion (single-valued generators)")
    for col in ("coefficient", "kind", "element", "param", "exact (sv basis)", "numeric"):
        table.add_column(col)
    for r in rows:
        table.add_row(r.name, r.kind, r.label, r.param, texts[(r.name, r.param)], r.numeric)
    Console().print(table)


@app.command(epilog=_exit_codes("1 series and quadrature disagree"),
             short_help="Compare the series with direct quadrature at a point.")
@user_errors
def verify(
    file: str = typer.Argument(..., metavar="FILE", help="integrand file (TOML)"),
    at: str = typer.Option(..., "--at", metavar="POINT", help="the point, e.g. s=-0.1,t=-0.07 (and parameters)"),
    order: int = typer.Option(8, "--order", metavar="N", help="order of the series compared"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="working digits of the quadrature and the series"),
) -> None:
    """Compare the truncated series with direct (continued) quadrature at a point."""
    from .errors import InputError
    from .expansion.verify import verify as run_verify
    from .integrand.reader import read_integrand

    _check_digits(digits)
    if order < 0:
        raise InputError(f"--order must be a non-negative integer, got {order}")
    point = _parse_point(at)
    integrand = read_integrand(file)
    expansion = _expand_with_progress(integrand, order)
    if integrand.domain == "sphere":
        from .svpolylog.sphere_verify import verify_sphere

        report = verify_sphere(integrand, expansion, point, digits=min(digits, 15))
    else:
        report = run_verify(integrand, expansion, point, digits=digits)
    typer.echo(report.summary())
    if not report.consistent:
        raise typer.Exit(1)


def _load_candidate(source: str, constraints):
    from pathlib import Path

    from .constraints import required_order
    from .tables import read_csv

    if Path(source).suffix.lower() == ".csv":
        return read_csv(source, numeric=True)
    from .integrand.reader import read_integrand

    integrand = read_integrand(source)
    return _expand_with_progress(integrand, max(required_order(constraints), 0))


def _pole_table(integrand_or_source, sets):
    """The integrand's pole parts to the level the [[pole]]/[crossing] tables need (None if none)."""
    from pathlib import Path

    from .constraints.model import pole_levels_needed
    from .errors import InputError

    need = pole_levels_needed(sets)
    if need < 0:
        return None
    if isinstance(integrand_or_source, str):
        if Path(integrand_or_source).suffix.lower() == ".csv":
            raise InputError(
                "[[pole]] and [crossing] tables need the pole parts of an integrand, not a coefficient table",
                source=integrand_or_source,
                hint="check the integrand file (TOML) instead of the CSV table",
            )
        from .integrand.reader import read_integrand

        integrand_or_source = read_integrand(integrand_or_source)
    table = _residues_of(integrand_or_source, need)
    from .constraints.poles import refuse_u_tables

    refuse_u_tables([p for cs in sets for p in cs.poles], table)  # before any expansion work
    return table


def _residues_of(integrand, levels: int):
    """Pole parts of an interval or sphere integrand."""
    if getattr(integrand, "domain", "interval") == "sphere":
        from .svpolylog.sphere_residues import sphere_residues

        return sphere_residues(integrand, levels)
    from .spectrum.residues import residues as compute_residues

    return compute_residues(integrand, levels)


@app.command(epilog=_exit_codes("1 a constraint fails"), short_help="Check coefficients against a constraint set.")
@user_errors
def check(
    source: str = typer.Argument(..., metavar="SOURCE", help="integrand file (TOML) or coefficient table (CSV)"),
    constraints_file: str = typer.Argument(..., metavar="CONSTRAINTS", help="constraint file (TOML)"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="significant digits of numeric comparisons"),
    verbose: bool = typer.Option(False, "--verbose", help="show left and right sides in full"),
) -> None:
    """Check coefficients against a constraint set.

    Exit code 0: every constraint passed; 1: at least one failed; 3: undecided
    (none failed, some depend on free parameters); 2: bad input.
    """
    from .constraints import check as run_check
    from .constraints import read_constraints

    _check_digits(digits)
    cs = read_constraints(constraints_file)
    table = _pole_table(source, [cs])
    candidate = _load_candidate(source, cs)
    report = run_check(candidate, cs, digits=digits, poles=table)
    if as_json:
        typer.echo(json.dumps(report.to_dict()))
    else:
        typer.echo(report.to_text(verbose=verbose))
    if report.verdict != "passed":
        raise typer.Exit(EXIT_UNDECIDED if report.verdict == "undecided" else 1)


def _refuse_existing(path: str, input_file: str) -> None:
    """--write never replaces a file (least of all the input) unless --force is given."""
    import os

    from .errors import InputError

    if not os.path.lexists(path):
        return
    try:
        same = os.path.samefile(path, input_file)
    except OSError:
        same = False
    what = "it is the input file" if same else "the file exists"
    raise InputError(
        f"refusing to overwrite {path}: {what}",
        hint="choose a new file name, or add --force to replace it",
    )


@app.command(epilog=_exit_codes("1 the constraints are inconsistent"),
             short_help="Fix free rational parameters from exact constraints.")
@user_errors
def fix(
    integrand_file: str = typer.Argument(..., metavar="INTEGRAND", help="integrand file with free parameters"),
    constraints_files: list[str] = typer.Argument(..., metavar="CONSTRAINTS...",
                                                  help="one or more constraint files (TOML), solved together"),
    write: Optional[str] = typer.Option(None, "--write", metavar="FILE", help="write the fixed integrand file here (a new file)"),
    as_json: bool = typer.Option(False, "--json", help="print one JSON object"),
    force: bool = typer.Option(False, "--force", help="let --write replace an existing file (even the input)"),
) -> None:
    """Fix the free rational parameters of an integrand from exact Wilson-coefficient,
    pole and crossing constraints (one or several files)."""
    from pathlib import Path

    from .constraints import fix as run_fix
    from .constraints import read_constraints, required_order, write_fixed_integrand
    from .errors import InputError
    from .integrand.reader import read_integrand

    if write and not force:
        _refuse_existing(write, integrand_file)
    sets = [read_constraints(f) for f in constraints_files]
    integrand = read_integrand(integrand_file)
    if not integrand.parameters:
        raise InputError(f"{integrand_file} has no free parameters to fix", hint="declare them with parameters = [...]")
    table = _pole_table(integrand, sets)
    expansion = _expand_with_progress(integrand, max(required_order(sets), 0))
    report = run_fix(expansion, sets, poles=table)
    text = None
    if write:
        if report.status == "inconsistent":
            raise InputError("the constraints are inconsistent; no fixed integrand written")
        text = write_fixed_integrand(Path(integrand_file).read_text(encoding="utf-8"), report, source=integrand_file)
    if as_json:
        typer.echo(json.dumps(report.to_dict()))
    else:
        typer.echo(report.to_text())
    if write and text is not None:
        from .tables.export import _atomic_write

        _atomic_write(write, text)
        typer.echo(f"wrote {write}", err=True)
    if report.status == "inconsistent":
        raise typer.Exit(1)


def _negativity_line(table) -> str:
    """How many partial-wave coefficients are negative -- or that it is not decided."""
    entries = table.entries()
    negative = table.negatives()
    undecided = [w for w in entries if w.sign is None]
    if not undecided:
        return f"{len(negative)} negative partial-wave coefficient(s)" + (" (unitarity violation)" if negative else "")
    names = ", ".join(table.parameters)
    text = (
        f"{len(undecided)} of {len(entries)} partial-wave coefficients depend on the free parameters {names}: "
        "their sign is not decided (give values with --at "
        + ",".join(f"{p}=..." for p in table.parameters) + ")"
    )
    decided = len(entries) - len(undecided)
    if decided:
        text += f"; of the other {decided}, {len(negative)} negative" + (" (unitarity violation)" if negative else "")
    return text


@app.command(epilog=_exit_codes(), short_help="Exact poles at the massive levels; partial waves.")
@user_errors
def residues(
    file: str = typer.Argument(..., metavar="FILE", help="integrand file (TOML)"),
    levels: int = typer.Option(..., "--levels", metavar="N", help="poles at s = n and t = n for 1 <= n <= N"),
    waves: bool = typer.Option(False, "--waves", help="Gegenbauer partial waves of the simple poles in s"),
    dim: str = typer.Option("10", "--dim", metavar="D", help="space-time dimension for --waves (rational)"),
    sign: int = typer.Option(1, "--sign", metavar="±1", help="+1: decompose Res, -1: decompose -Res (see README)"),
    csv: Optional[str] = typer.Option(None, "--csv", metavar="FILE", help="write the residue (or wave) table as CSV"),
    as_json: bool = typer.Option(False, "--json", help="print the rows as JSON"),
    plot: Optional[str] = typer.Option(None, "--plot", metavar="FILE", help="with --waves: spectrum plot (PNG; needs matplotlib)"),
    divide_by: Optional[str] = typer.Option(
        None, "--divide-by", metavar="POLY", help="poles in s of I/f(t) for a polynomial f in t, e.g. '-t'"
    ),
    digits: int = typer.Option(DEFAULT_DIGITS, "--digits", metavar="D", help="significant digits of the numeric column"),
    at: Optional[str] = typer.Option(
        None, "--at", metavar="VALUES", help="values of the free parameters, e.g. a1=1,a2=-1/2 (signs of --waves then decided)"
    ),
) -> None:
    """Exact pole coefficients at the massive levels (and partial waves)."""
    from fractions import Fraction

    from .errors import InputError
    from .integrand.reader import read_integrand
    from .spectrum import partial_waves

    _check_digits(digits)
    if levels < 0 or levels > 200:
        raise InputError(f"--levels must be between 0 and 200, got {levels}")
    try:
        dimension = Fraction(dim)
    except (ValueError, ZeroDivisionError):
        raise InputError(f"--dim must be a rational number, got {dim!r}") from None
    if sign not in (1, -1):
        raise InputError("--sign must be 1 or -1")
    if plot and not waves:
        raise InputError("--plot needs --waves")
    _check_output(csv, "--csv")
    _check_output(plot, "--plot")
    if plot:
        from .spectrum.plots import require_matplotlib

        require_matplotlib()
    integrand = read_integrand(file)
    if at:
        from .constraints import substitute

        integrand = substitute(integrand, _parse_point(at))
    table = _residues_of(integrand, levels)
    if divide_by:
        from .tables.bases import parse_polynomial

        poly = parse_polynomial(divide_by, integrand.variables, source="--divide-by")
        if any(i != 0 for (i, _j) in poly):
            raise InputError(
                f"--divide-by needs a polynomial in {integrand.variables[1]} only", term=divide_by
            )
        table = table.divided({j: c for (_i, j), c in poly.items()}, strict=False)
        skipped = table.meta.get("not_divisible", [])
        if skipped:
            typer.echo(f"not divisible (left out): s = {', '.join(str(x) for x in skipped)}", err=True)
    result = partial_waves(table, dimension, sign=sign) if waves else table
    rows = result.to_rows(digits=digits) if hasattr(result, "to_rows") else result.to_dataframe(digits).to_dict("records")
    if plot:
        from .spectrum.plots import plot_spectrum

        plot_spectrum(result, plot)
    if csv:
        result.write(csv, "csv", digits=digits)
    if as_json:
        typer.echo(json.dumps(rows, default=str))
    else:
        df = result.to_dataframe(digits)
        typer.echo(df.to_string(index=False))
        if waves:
            typer.echo(_negativity_line(result))
    for path in (csv, plot):
        if path:
            typer.echo(f"wrote {path}", err=True)


@app.command(epilog=_exit_codes(), short_help="A two-minute tour: reductions, an expansion, a check.")
@user_errors
def demo() -> None:
    """A two-minute tour: MZV reductions, an expansion, a constraint check."""
    from rich.console import Console

    from .constraints import check as run_check
    from .constraints import constraints_from_text
    from .expansion.engine import expand as run_expand
    from .integrand.reader import integrand_from_text
    from .tables import to_terminal
    from .zeta.expression import evaluate
    from .zeta.falphabet import f_to_text
    from .zeta.table import default_store

    import re
    import shutil
    import textwrap

    default_store().ensure(12)  # built on first use, reported on stderr
    width = max(60, shutil.get_terminal_size((80, 24)).columns)

    def say(line: str, indent: int) -> None:
        """Echo ``line`` wrapped to the terminal width, continuation lines
        indented by ``indent``; sums break before a `` + `` or `` - `` so that
        every continuation line starts with its sign."""
        chunks = re.split(r" (?=[+-] )", line)
        if len(chunks) == 1:
            typer.echo(textwrap.fill(line, width=width, subsequent_indent=" " * indent,
                                     break_long_words=False, break_on_hyphens=False))
            return
        out = chunks[0]
        current = len(out)
        for chunk in chunks[1:]:
            if current + 1 + len(chunk) > width:
                out += "\n" + " " * indent + chunk
                current = indent + len(chunk)
            else:
                out += " " + chunk
                current += 1 + len(chunk)
        typer.echo(out)

    typer.echo("\n1. Canonical MZV reductions (first index on the largest summation variable):")
    # each line must say something: an input that is already canonical would
    # print as "x = x", which is no identity, so it is labelled instead
    for text in ["zeta(2,1)", "zeta(5,3)", "zeta(3,1,3,1)", "pi^8", "zeta(5,7)"]:
        value = evaluate(text)
        if value.to_text().replace(" ", "") == text.replace(" ", ""):
            typer.echo(f"   {text:28s}   (already canonical: a basis element)")
        else:
            say(f"   {text:28s} = {value}", 34)
        say(f"   {'':28s}   f-alphabet: {f_to_text(value.f_alphabet())}", 46)
    typer.echo("\n2. The open-superstring factor x^(-s-1)(1-x)^(-t) expanded to order 4:")
    integrand = integrand_from_text(
        'title = "open superstring"\nintegrand = "x^(-s-1)*(1-x)^(-t)"\n', source="<demo>"
    )
    expansion = run_expand(integrand, 4)
    Console().print(to_terminal(expansion, digits=12))
    typer.echo("3. Checked against values from the Gamma-function closed form")
    typer.echo("   Γ(-s)Γ(1-t)/Γ(1-s-t) (Abramowitz & Stegun 6.1.33):")
    cs = constraints_from_text(
        'source = "A&S 6.1.33, expanded by hand"\n'
        '[[constraint]]\nname = "c[0,1]"\nrelation = "c[0,1]"\nkind = "="\nrhs = "pi^2/6"\n'
        '[[constraint]]\nname = "c[2,2]"\nrelation = "c[2,2]"\nkind = "="\nrhs = "2*zeta(5) - zeta(2)*zeta(3)"\n'
        '[[constraint]]\nname = "c[1,2]"\nrelation = "c[1,2]"\nkind = "="\nrhs = "pi^4/360"\n',
        source="<demo>",
    )
    report = run_check(expansion, cs)
    for line in report.to_text().splitlines():
        say("   " + line, 5)
    typer.echo("\nNext: lowenergy --help, README.md, examples/README.md")


# Commands that live in their own modules (``lowenergy/commands/<name>.py``):
# each module imports ``app`` and ``user_errors`` from here and registers its
# command on import.  One import line per module, in alphabetical order.
from .commands import _registry  # noqa: E402,F401


def main() -> None:
    """Console entry point."""
    app(prog_name="lowenergy")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
