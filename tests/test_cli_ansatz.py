"""``lowenergy ansatz``: file, JSON counts, bad options, and a fix round trip."""

from __future__ import annotations

import json

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.integrand.reader import read_integrand

runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_writes_a_readable_file_and_reports_counts(tmp_path):
    out = tmp_path / "a.toml"
    res = run("ansatz", "--weight", 2, "--family", "sv", "--degree", 1, "--write", out, "--json")
    assert res.exit_code == 0, res.stderr
    info = json.loads(res.stdout)
    # 1 + 2 + 4 words; on the real line L_01 = L_10 (both 2 log x log(1-x)), so 6 independent; 3 monomials each
    assert info["functions"] == 7 and info["independent_functions"] == 6 and info["parameters"] == 18
    assert info["file"] == str(out)
    itg = read_integrand(out)
    assert len(itg.parameters) == 18
    assert "--weight 2 --family sv --degree 1" in itg.provenance


def test_prints_the_file_without_write():
    res = run("ansatz", "--weight", 1, "--family", "mpl")
    assert res.exit_code == 0, res.stderr
    assert 'parameters = ["a1", "a2", "a3"]' in res.stdout
    assert "G(0; x)" in res.stdout and "G(1; x)" in res.stdout


@pytest.mark.parametrize(
    "args, message",
    [
        (["--weight", "-1"], "--weight must be"),
        (["--weight", "9"], "--weight must be"),
        (["--weight", "2", "--family", "Lsv"], "unknown --family"),
        (["--weight", "2", "--degree", "-2"], "--degree must be"),
        (["--weight", "2", "--degree-rule", "sideways"], "unknown --degree-rule"),
        (["--weight", "2", "--symmetry", "yes"], "unknown --symmetry"),
        (["--weight", "2", "--x-shift", "-1"], "--x-shift must be"),
        (["--weight", "2", "--symmetry", "symmetric", "--y-shift", "1"], "needs equal --x-shift"),
        (["--weight", "2", "--prefix", "zeta"], "reserved"),
        (["--weight", "2", "--prefix", "2a"], "--prefix must be letters"),
        (["--weight", "2", "--domain", "disc"], "unknown --domain"),
        (["--weight", "2", "--domain", "sphere", "--family", "mpl"], "multivalued on the sphere"),
    ],
)
def test_bad_options_write_nothing(tmp_path, args, message):
    out = tmp_path / "never.toml"
    res = run("ansatz", *args, "--write", out)
    assert res.exit_code == 2
    assert message in res.stderr
    assert len(res.stderr.strip().splitlines()) == 1 and "Traceback" not in res.stderr
    assert not out.exists()
