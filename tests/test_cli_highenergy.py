"""`lowenergy highenergy` and `lowenergy shifts` on the invented example family and on bad inputs."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app

EX = Path(__file__).resolve().parents[1] / "examples"
FAMILY = [EX / "shift_flat.toml", EX / "shift_first.toml", EX / "shift_second.toml"]
runner = CliRunner()
KN = "x^(-s-1)*(1-x)^(-t-1)"


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def write(tmp_path, name, body, extra=""):
    f = tmp_path / name
    f.write_text(extra + f'integrand = "{body}"\n')
    return f


def test_shifts_on_the_example_family():
    # B(-s/(1+εc), -t) has poles at s = n(1 + εc), c = 1/2 (A&S 6.2.2 with Γ's poles):
    # δ1 = n/2 on every level and spin, δ2 = 0, no degeneracy
    res = run("shifts", *FAMILY, "--levels", 4, "--json")
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    assert out["consistent"]
    assert len(out["rows"]) == 13       # spins 0..n at levels 1..4 except the vanishing ones
    for row in out["rows"]:
        n = int(row["level"])
        assert row["mean_delta1"] == (f"{n}/2" if n % 2 else str(n // 2))
        assert row["variance_delta1"] == "0" and row["mean_delta2"] == "0"


def test_shifts_plot_and_csv(tmp_path):
    res = run("shifts", *FAMILY[:2], "--levels", 3, "--plot", tmp_path / "d1.png", "--csv", tmp_path / "d1.csv")
    assert res.exit_code == 0, res.output
    assert (tmp_path / "d1.png").stat().st_size > 1000
    assert "mean_delta1" in (tmp_path / "d1.csv").read_text()


def test_highenergy_on_the_example_family(tmp_path):
    res = run("highenergy", *FAMILY, "--angles", "0.5", "--json", "--csv", tmp_path / "he.csv",
              "--plot", tmp_path / "he.png")
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    # order 1: (s/2) log x at s = -E x*, times 1/(x(1-x)): -log(x)/(2(1-x)) per E^1 (by hand)
    assert out["exact"][1]["leading"] == "-1/2*(1-x)^(-1)*log(x)" and out["exact"][1]["degree"] == 1
    assert out["relations"][0]["holds"] and out["relations"][0]["relation"] == "A2 = A1^2/2"
    assert (tmp_path / "he.png").stat().st_size > 1000 and (tmp_path / "he.csv").exists()


def test_highenergy_failing_relation_exits_1(tmp_path):
    second = write(tmp_path, "bad.toml", f"{KN}*s^2*log(x)^2/4")   # twice the exponentiated value
    res = run("highenergy", FAMILY[0], FAMILY[1], second, "--angles", "0.5")
    assert res.exit_code == 1
    assert "FAILS" in res.stdout


def test_highenergy_ray(tmp_path):
    res = run("highenergy", FAMILY[0], "--angles", "0.5", "--ray", "0.5", "--s-values=-20,-80", "--json")
    assert res.exit_code == 0, res.output
    ray = json.loads(res.stdout)["ray"]
    # B(-s,-t)/K at s = t = -20 (E = 40) is 1 + 1/(4·40) + O(E^-2) (Stirling, A&S 6.1.41; see test_highenergy)
    assert abs(float(ray[0]["ratio"]) - 1 - 1 / 160) < 2e-4


@pytest.mark.parametrize("files, extra, message", [
    (["flat", "other_vars"], [], "variables differ"),
    (["ambiguous"], [], "ambiguous"),
    (["flat"], ["--direction", "s=1,t=-2"], "outside the interval"),
    (["flat"], ["--angles", "0.5,1.5"], "outside the interval"),
    (["flat"], ["--relation", "A2 = A1^2/2"], "unknown name"),
    (["flat", "flat"], ["--relation", "A1 = open('x')"], "relation"),
])
def test_highenergy_bad_inputs_exit_2(tmp_path, files, extra, message):
    bodies = {
        "flat": (KN, ""),
        "other_vars": ("x^(-S-1)*(1-x)^(-T-1)", 'variables = ["S", "T"]\n'),
        "ambiguous": (f"(s*(1-x) - t*x)*{KN}", ""),
    }
    paths = [write(tmp_path, f"{i}_{n}.toml", *bodies[n]) for i, n in enumerate(files)]
    out = tmp_path / "out.csv"
    res = run("highenergy", *paths, *extra, "--csv", out)
    assert res.exit_code == 2, res.output
    assert message in res.stderr and "Traceback" not in res.output
    assert not out.exists()


def test_shifts_bad_inputs_exit_2(tmp_path):
    a = write(tmp_path, "a.toml", KN)
    b = write(tmp_path, "b.toml", "x^(-S-1)*(1-x)^(-T-1)*S*log(x)", 'variables = ["S", "T"]\n')
    res = run("shifts", a, b)
    assert res.exit_code == 2 and "variables differ" in res.stderr
    res = run("shifts", a)
    assert res.exit_code == 2


def test_examples_readme_shows_the_current_output():
    # the expected output printed in examples/README.md is what the commands print now
    readme = (EX / "README.md").read_text()
    res = run("shifts", *FAMILY, "--levels", 3, "--digits", 10)
    assert res.exit_code == 0 and res.stdout.strip() in readme
    res = run("highenergy", *FAMILY, "--angles", "0.2,0.5,0.8", "--digits", 10)
    assert res.exit_code == 0
    sphere = [EX / f"shift_sphere_{k}.toml" for k in ("flat", "first", "second")]
    res2 = run("highenergy", *sphere, "--angles", "0.2,0.5,0.8", "--digits", 10)
    assert res2.exit_code == 0
    assert "examples/shift_sphere_second.toml --angles 0.2,0.5,0.8 --digits 10" in readme
    for line in res.stdout.splitlines() + res2.stdout.splitlines():
        line = line.replace(str(EX.parent) + "/", "")       # the README runs from the repository root
        assert line.rstrip() in readme, line


# ---------------------------------------------------------------------------
# t-channel shifts, --set, sphere files
# ---------------------------------------------------------------------------

T_FAMILY = [KN, f"{KN}*t*log(1-x)/2", f"{KN}*(t^2*log(1-x)^2/8 - t*log(1-x)/4)"]


def test_shifts_in_the_t_channel(tmp_path):
    # invented: B(-s, -t/(1+εc)), c = 1/2, expanded in ε like examples/shift_*.toml with s <-> t, x <-> 1-x:
    # the poles sit at t = n(1 + εc) (Γ(-t') has its poles at t' = n, A&S 6.1.3), so δ1 = n/2, δ2 = 0
    files = [write(tmp_path, f"t{k}.toml", body) for k, body in enumerate(T_FAMILY)]
    res = run("shifts", *files, "--levels", 3, "--channel", "t", "--json")
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    assert out["variable"] == "t" and out["consistent"]
    assert len(out["rows"]) == 8
    for row in out["rows"]:
        n = int(row["level"])
        assert row["mean_delta1"] == (f"{n}/2" if n % 2 else str(n // 2))
        assert row["variance_delta1"] == "0" and row["mean_delta2"] == "0"
    # the s-channel of the same family has unshifted poles: δ1 = 0 on every level
    res = run("shifts", *files[:2], "--levels", 2, "--json")
    assert res.exit_code == 0
    assert {row["mean_delta1"] for row in json.loads(res.stdout)["rows"]} == {"0"}
    text = run("shifts", *files[:2], "--levels", 1, "--channel", "t").stdout
    assert text.startswith("poles in t = n + eps*delta1")
    bad = run("shifts", *files[:2], "--channel", "u")
    assert bad.exit_code == 2 and "unknown --channel" in bad.stderr


def test_set_gives_parameters_values(tmp_path):
    flat = write(tmp_path, "f.toml", KN)
    first = write(tmp_path, "p.toml", f"{KN}*b1*t*log(1-x)", 'parameters = ["b1"]\n')
    # refused without values, with a hint naming --set
    res = run("highenergy", flat, first, "--angles", "0.5")
    assert res.exit_code == 2 and "--set" in res.stderr
    res = run("shifts", flat, first, "--levels", 1, "--channel", "t")
    assert res.exit_code == 2 and "--set" in res.stderr
    # b1 = 1/2 is the T_FAMILY order 1: same shifts (δ1 = n/2) and the same saddle terms
    res = run("shifts", flat, first, "--levels", 2, "--channel", "t", "--set", "b1=1/2", "--json")
    assert res.exit_code == 0, res.output
    assert [r["mean_delta1"] for r in json.loads(res.stdout)["rows"]] == ["1/2", "1/2", "1", "1", "1"]
    fixed = write(tmp_path, "q.toml", T_FAMILY[1])
    a = json.loads(run("highenergy", flat, first, "--angles", "0.3", "--set", "b1=1/2", "--json").stdout)
    b = json.loads(run("highenergy", flat, fixed, "--angles", "0.3", "--json").stdout)
    assert a["exact"][1]["leading"] == b["exact"][1]["leading"] and a["grid"][1]["leading"] == b["grid"][1]["leading"]
    for bad, msg in ((["--set", "b2=1"], "no file has"), (["--set", "b1=x"], "not a rational"),
                     (["--set", "b1"], "name=value"), (["--set", "b1=1,b1=2"], "set twice")):
        res = run("highenergy", flat, first, "--angles", "0.5", *bad)
        assert res.exit_code == 2 and msg in res.stderr and "Traceback" not in res.output


SPH = 'domain = "sphere"\nvariables = ["S", "T"]\n'
SKN = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"


def test_highenergy_on_sphere_files(tmp_path):
    files = [write(tmp_path, "s0.toml", SKN, SPH),
             write(tmp_path, "s1.toml", f"{SKN}*S*T*log(abs(z))*log(abs(1-z))", SPH),
             write(tmp_path, "s2.toml", f"{SKN}*S^2*T^2*log(abs(z))^2*log(abs(1-z))^2/2", SPH)]
    res = run("highenergy", *files, "--angles", "0.5", "--json")
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    assert out["saddle"] == "z* = S/(S + T)" and out["relations"][0]["holds"]
    # flat factor at z* = 1/2: 1/(z*(1-z*))^2 = 16 (see tests/spectrum/test_highenergy_sphere.py)
    assert float(out["grid"][0]["leading"]) == 16.0
    out_csv = tmp_path / "o.csv"
    res = run("highenergy", files[0], "--ray", "0.5", "--csv", out_csv)
    assert res.exit_code == 2 and "no quadrature check on the sphere" in res.stderr
    assert not out_csv.exists()
    interval = write(tmp_path, "i.toml", "x^(-S-1)*(1-x)^(-T-1)", 'variables = ["S", "T"]\n')
    res = run("highenergy", files[0], interval)
    assert res.exit_code == 2 and "domains differ" in res.stderr
