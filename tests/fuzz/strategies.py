"""Hypothesis strategies for the four readers (fuzzing).

Every strategy produces *text*: an integrand file, a constraint file, an MZV
expression or a coefficient table (CSV).  They start from the shipped
examples and constraint sets and apply grammar-aware mutations: tokens of
the expression grammar inserted, deleted or duplicated, numbers replaced by
huge ones, deep nesting, long G words, towers of powers, long sums and
products, and TOML values replaced by values of another type.

Used by tests/fuzz/test_fuzz_readers.py (a small sample in the default run,
10,000 per reader in the slow run) and bench/fuzz_readers.py (the outcome
table with time and memory limits).
"""

from __future__ import annotations

from pathlib import Path

from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parents[2]

READERS = ("integrand", "constraints", "expression", "csv")


def _read(*parts: str) -> str:
    return (ROOT.joinpath(*parts)).read_text(encoding="utf-8")


INTEGRAND_SEEDS = [
    _read("examples", "open_superstring.toml"),
    _read("examples", "curved_ansatz.toml"),
    'integrand = "x^(-s-1)*(1-x)^(-t-1)"\n',
    'integrand = "x^(-s-1)*(1-x)^(-t) * (1 + s*G(0,1; x) + zeta(3)*t^2*log(1-x)^2)"\n'
    'parameters = ["a"]\nvariables = ["s", "t"]\n',
    'title = "t"\nintegrand = """\nx^(-s-1)*(1-x)^(-t-1)\n  * Li(2, 1-x)\n"""\nintegration_variable = "x"\n',
]
CONSTRAINT_SEEDS = [
    _read("constraints", "open_superstring_order4.toml"),
    _read("constraints", "crossing_st_order6.toml"),
    _read("examples", "curved_constraints.toml"),
    _read("constraints", "localization_template.toml"),
]
CSV_SEEDS = [_read("examples", "curved_candidate.csv")]
EXPRESSION_SEEDS = [
    "zeta(5,3) + zeta(3,5)",
    "pi^4/90",
    "G(0,1,1; 1) - 2*zeta(3)",
    "-zeta(3)^2/3 + 0.25*zeta(2,2,3)",
    "(zeta(2) + zeta(3))^3 - zeta(1,2)",
    "zeta(3,1,3,1) - 2*pi^8/10!",
    "G(1,0; 1)*zeta(2)/(1/7)",
]

# Pieces of the expression grammar (and a few hostile ones).
TOKENS = [
    "+", "-", "*", "/", "^", "(", ")", ",", ";", "1", "0", "2", "64", "0.5", "x", "s", "t", "a1",
    "pi", "zeta(", "G(", "log(", "Li(", "svpolylog(", "1-x", "x^(", "(1-x)^(", "zeta(1,", "G(1,1,0;",
    "e5", "**", ".", "\t", "  ", "\n", "#", "[", "]", "c[2,0]", "sym[3,1]", "sigma[1,1]", "c[", "=", '"', "'",
    "1" * 50, "9" * 5000, "0." + "3" * 2000, "1e400", "NaN", "Infinity", "-0", "\u00e9", "\u2212", "\x00",
]


def _huge_number(n: int) -> str:
    return "9" * n


def _nested(depth: int, kind: int) -> str:
    if kind == 0:
        return "G(" * depth + "1" + ";1)" * depth
    if kind == 1:
        return "(" * depth + "zeta(3)" + ")" * depth
    if kind == 2:
        return "-" * depth + "1"
    if kind == 3:
        return "^".join(["x"] * depth)
    if kind == 4:
        return "zeta(" * depth + "2" + ")" * depth
    return "^".join(["(2^64)"] * depth)


def _long_word(ones: int, zeros: int, arg: str) -> str:
    return "G(" + ",".join(["1"] * ones + ["0"] * zeros) + "; " + arg + ")"


def _long_sum(n: int, piece: str) -> str:
    return "+".join([piece] * n)


# Building blocks that are hard on a reader, inserted as whole "tokens".
NASTY = st.one_of(
    st.integers(1, 6000).map(_huge_number),
    st.builds(_nested, st.integers(1, 400), st.integers(0, 5)),
    st.builds(_long_word, st.integers(0, 30), st.integers(0, 30), st.sampled_from(["1", "x", "1-x"])),
    st.builds(_long_sum, st.integers(1, 5000), st.sampled_from(["1", "s*t", "zeta(3)", "a1*x", "G(0,1;x)"])),
    st.builds(lambda k, e: f"(zeta(2)+zeta(3)+s+t+a1)^{e}" * k, st.integers(1, 3), st.integers(0, 70)),
    st.builds(lambda n: "zeta(" + ",".join(["1"] * n) + ",2)", st.integers(1, 40)),
    st.builds(lambda e: f"(1-x)^({e})*x^(-s-1)", st.sampled_from(["-t-1", "s^2", "1/2", "65", "-s-t", "x"])),
    st.sampled_from(["x^x^x^x^x^x", "pi^129", "pi^3", "0^-1", "1/0", "(1/3)^-64", "(64^64)^64^64"]),
)


@st.composite
def mutated(draw, seeds, extra=()):
    """A seed text with up to five grammar-aware mutations."""
    text = draw(st.sampled_from(list(seeds)))
    for _ in range(draw(st.integers(0, 5))):
        op = draw(st.integers(0, 5))
        pos = draw(st.integers(0, len(text)))
        if op == 0:  # insert a grammar token
            text = text[:pos] + draw(st.sampled_from(TOKENS + list(extra))) + text[pos:]
        elif op == 1:  # delete a span
            end = min(len(text), pos + draw(st.integers(1, 12)))
            text = text[:pos] + text[end:]
        elif op == 2:  # duplicate a span
            end = min(len(text), pos + draw(st.integers(1, 40)))
            text = text[:pos] + text[pos:end] * draw(st.integers(2, 50)) + text[pos:]
        elif op == 3:  # insert something hard
            text = text[:pos] + draw(NASTY) + text[pos:]
        elif op == 4:  # replace a digit run by a huge number
            digits = [i for i, ch in enumerate(text) if ch.isdigit()]
            if digits:
                i = digits[draw(st.integers(0, len(digits) - 1))]
                text = text[:i] + draw(st.integers(1, 6000).map(_huge_number)) + text[i + 1 :]
        else:  # one random character
            text = text[:pos] + draw(st.characters(codec="utf-8")) + text[pos:]
    return text


# TOML values of every type, for type confusion.
TOML_VALUES = st.one_of(
    st.sampled_from([
        "1", "-7", "3.5", "true", "false", "[]", '["s"]', '["s", "t", "u"]', "[1, 2]", "{}", '{a = "b"}',
        "1979-05-27", "07:32:00", "1979-05-27T07:32:00Z", "inf", "nan", '""', '"x^(-s-1)"', "'''raw'''",
        "[[1]]", "[" * 300 + "]" * 300, "9" * 5000, "0x" + "f" * 5000, "1e400", '"' + "a" * 2_000 + '"',
    ]),
    NASTY.map(lambda s: '"' + s.replace("\n", " ") + '"'),
)


@st.composite
def toml_confused(draw, seeds, keys):
    """A seed with the value of one key replaced by a value of another type."""
    text = draw(st.sampled_from(list(seeds)))
    key = draw(st.sampled_from(list(keys)))
    value = draw(TOML_VALUES)
    lines = text.split("\n")
    hits = [i for i, line in enumerate(lines) if line.strip().startswith(key + " =")]
    if hits:
        i = hits[draw(st.integers(0, len(hits) - 1))]
        lines[i] = f"{key} = {value}"
        # a multi-line string value leaves its tail behind: drop it
        return "\n".join(lines)
    return text + f"\n{key} = {value}\n"


INTEGRAND_KEYS = ("integrand", "title", "variables", "parameters", "integration_variable", "notes", "provenance", "extra")
CONSTRAINT_KEYS = ("relation", "rhs", "rhs_value", "kind", "name", "abs_tol", "rel_tol", "uncertainty", "source",
                   "template", "title", "note")


def integrand_texts():
    return st.one_of(
        mutated(INTEGRAND_SEEDS),
        toml_confused(INTEGRAND_SEEDS, INTEGRAND_KEYS),
        NASTY.map(lambda s: 'parameters = ["a1"]\nintegrand = "' + s.replace("\n", " ") + '"\n'),
        NASTY.map(lambda s: 'parameters = ["a1"]\nintegrand = "x^(-s-1)*(1-x)^(-t-1)*(' + s.replace("\n", " ") + ')"\n'),
    )


def constraint_texts():
    return st.one_of(
        mutated(CONSTRAINT_SEEDS),
        toml_confused(CONSTRAINT_SEEDS, CONSTRAINT_KEYS),
        NASTY.map(lambda s: 'source = "fuzz"\n[[constraint]]\nname = "n"\nrelation = "c[2,0] - ' + s.replace("\n", " ")
                  + '"\nkind = "="\nrhs = "zeta(3)"\n'),
        NASTY.map(lambda s: 'source = "fuzz"\n[[constraint]]\nname = "n"\nrelation = "c[2,0]"\nkind = "="\nrhs = "'
                  + s.replace("\n", " ") + '"\n'),
    )


def expression_texts():
    return st.one_of(
        mutated(EXPRESSION_SEEDS),
        NASTY,
        st.builds(lambda a, b, op: a + op + b, mutated(EXPRESSION_SEEDS), NASTY, st.sampled_from(["+", "*", "^", "-"])),
    )


_CELL_VALUES = st.one_of(
    st.sampled_from(["", "1", "-1", "NaN", "sNaN", "Infinity", "1e999999999", "1e-999999999", "1E+400", "0x1",
                     "1_000", "١٢٣", "--1", "1/0", '"', '""', "1,2", "\x00", "9" * 5000, "0." + "7" * 1500]),
    NASTY,
)


@st.composite
def csv_cell_mutated(draw):
    """The shipped table with one cell of one row (or a header value) replaced."""
    text = CSV_SEEDS[0]
    lines = text.split("\n")
    if draw(st.booleans()):
        header = [i for i, line in enumerate(lines) if line.startswith("# ") and ":" in line]
        i = header[draw(st.integers(0, len(header) - 1))]
        key = lines[i].split(":", 1)[0]
        value = draw(st.one_of(_CELL_VALUES, st.sampled_from(
            ['"' + "[" * 5000 + '"', "[" * 100_000, '"\\ud800"', "{}", '"a" "b"', "3" * 5000, "1e400"])))
        lines[i] = f"{key}: {value}"
        return "\n".join(lines)
    rows = [i for i, line in enumerate(lines) if line.startswith('"c[')]
    i = rows[draw(st.integers(0, len(rows) - 1))]
    import csv
    import io

    cells = next(csv.reader([lines[i]]))
    col = draw(st.integers(0, len(cells) - 1))
    cells[col] = draw(_CELL_VALUES)
    out = io.StringIO()
    csv.writer(out, lineterminator="").writerow(cells)
    lines[i] = out.getvalue()
    return "\n".join(lines)


@st.composite
def csv_many_rows(draw):
    """A table of many rows (repeats, or distinct coefficients at high order)."""
    n = draw(st.integers(1, 3000))
    exact = draw(st.sampled_from(["zeta(3)", "zeta(3,5)*zeta(2)^2", "1/3", "zeta(2,2,3,5)"]))
    numeric = draw(st.sampled_from(["", "1.2", "1." + "1" * 999]))
    head = ("# lowenergy coefficient table\n# format: 1\n# variables: s, t\n# parameters:\n"
            f"# order: {n + 2}\n# basis: monomial\nname,kind,i,j,label,order,param,weight,exact,numeric,note\n")
    rows = [f'"c[{k},1]",contact,{k},1,s,{k + 1},1,3,{exact},{numeric},' for k in range(n)]
    return head + "\n".join(rows) + "\n"


def csv_texts():
    return st.one_of(csv_cell_mutated(), mutated(CSV_SEEDS), csv_many_rows())


STRATEGIES = {
    "integrand": integrand_texts,
    "constraints": constraint_texts,
    "expression": expression_texts,
    "csv": csv_texts,
}


def run_reader(reader: str, text: str, workdir: Path | None = None):
    """Feed ``text`` to one reader; returns its result or raises."""
    if reader == "integrand":
        from lowenergy.integrand.reader import integrand_from_text

        return integrand_from_text(text, source="fuzz.toml")
    if reader == "constraints":
        from lowenergy.constraints import constraints_from_text

        return constraints_from_text(text, source="fuzz.toml")
    if reader == "expression":
        from lowenergy.zeta.expression import evaluate

        # odd lengths ask for a regularization, to reach that code too
        return evaluate(text, regularize=("shuffle", None, "stuffle")[len(text) % 3])
    if reader == "csv":
        import tempfile

        from lowenergy.tables import read_csv

        with tempfile.TemporaryDirectory(dir=workdir) as tmp:
            path = Path(tmp) / "fuzz.csv"
            path.write_text(text, encoding="utf-8", errors="surrogatepass")
            return read_csv(path)
    raise ValueError(reader)
