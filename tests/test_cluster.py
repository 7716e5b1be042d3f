"""Work on a Dask cluster gives the serial results exactly.

One local cluster of two worker processes (one thread each) is shared by the
module.  Checked:

* tables: weights ≤ 9 built on the cluster equal the serial build file by
  file (every reduction, generator, f-alphabet image; only the timings in
  ``stats`` differ), with the coaction route from weight 3 (``method=
  "motivic"``) and from weight 5; and both equal the independent
  double-shuffle tables of the test session (Ihara, Kaneko, Zagier 2006,
  "Derivation and double shuffle relations for multiple zeta values");
* a batch of expansions (examples and invented integrands, interval and
  sphere) equals the serial batch, and the Beta function's coefficient of t
  is ζ(2) (A&S 6.1.33 via Γ(-s)Γ(1-t)/Γ(1-s-t));
* ``lowenergy fix-each ANSATZ C1 C2`` on the cluster prints the serial
  reports, and each set's report is the one ``lowenergy fix ANSATZ Ck``
  gives for that set alone;
* ``lowenergy expand FILE... --out-dir DIR --workers 2`` writes the same CSV
  files as the serial batch; a bad file stops it with one line, exit code 2
  and no output directory, whether the error is found on reading or on a
  worker; the cluster options are checked.
"""

from __future__ import annotations

import json
import sqlite3
from pathlib import Path

import pytest
from typer.testing import CliRunner

from lowenergy.batch import expand_many
from lowenergy.cli import app
from lowenergy.cluster import ClusterError, cluster_client, worker_count
from lowenergy.integrand.reader import integrand_from_text, read_integrand
from lowenergy.zeta.element import zeta
from lowenergy.zeta.table import TableStore, build_tables, default_store

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@pytest.fixture(scope="module")
def client():
    with cluster_client(workers=2) as c:
        yield c


def _task_names(client, run):
    """Names of the tasks that ran on the cluster while ``run()`` ran."""
    from dask.utils import key_split
    from distributed import get_task_stream

    with get_task_stream(client) as stream:
        run()
    return {key_split(item["key"]) for item in stream.data}


def _table_files(directory: Path, max_weight: int):
    out = {}
    for w in range(2, max_weight + 1):
        meta = directory / f"weight-{w}.meta.json"
        data = json.loads(meta.read_text())
        data.pop("stats")  # timings
        out[meta.name] = data
        with sqlite3.connect(directory / f"weight-{w}.sqlite") as conn:  # the reductions, row by row
            out[f"weight-{w}.sqlite"] = [
                conn.execute(f"SELECT * FROM {table} ORDER BY 1").fetchall() for table in ("info", "basis", "reductions")
            ]
    return out


def test_the_fixture_is_two_worker_processes(client):
    assert worker_count(client) == 2
    assert len(client.scheduler_info()["workers"]) == 2
    pids = client.run(__import__("os").getpid)
    assert len(set(pids.values())) == 2 and __import__("os").getpid() not in pids.values()


@pytest.mark.parametrize("options", [{"method": "motivic"}, {"method": "auto", "shuffle_max_weight": 4}])
def test_tables_built_on_the_cluster_equal_the_serial_build(client, tmp_path, options):
    serial_dir, cluster_dir = tmp_path / "serial", tmp_path / "cluster"
    build_tables(9, TableStore(serial_dir), **options)
    names = _task_names(client, lambda: build_tables(9, TableStore(cluster_dir), client=client, **options))
    assert {"prime_delta", "reconstruct_chunk", "top_coefficients_packed"} <= names  # key_split drops the "_"
    serial, distributed = _table_files(serial_dir, 9), _table_files(cluster_dir, 9)
    assert len(serial) == 16
    assert distributed == serial
    # and both equal the independent double-shuffle route of the session tables
    store, ref = TableStore(cluster_dir, auto_build=False), default_store()
    first = 3 if options["method"] == "motivic" else 5
    for w in range(first, 10):
        assert store.stats(w)["method"] == "motivic"
        assert store.generators(w) == ref.generators(w)
        for loaded in (store, ref):
            loaded.reduction((w - 1, 1))  # load the weight
        assert dict(store._reductions[w]) == dict(ref._reductions[w]), w


BATCH = [
    ("beta", 'integrand = "x^(-s-1)*(1-x)^(-t)"'),
    ("word", 'integrand = "x^(-s-1)*(1-x)^(-t-1)*G(0,1,1; x)"'),
    ("shifted, parameters", 'parameters = ["a", "b"]\nintegrand = "x^(1-s)*(1-x)^(-t-1)*(a*Li(2,x) + b*s*log(1-x))"'),
]


def test_a_batch_of_expansions_on_the_cluster_equals_the_serial_batch(client):
    integrands = [integrand_from_text(text, source=name) for name, text in BATCH]
    integrands += [read_integrand(EXAMPLES / name) for name in ("open_superstring.toml", "curved_ansatz.toml", "sphere_ansatz.toml")]
    serial = expand_many(integrands, 5)
    distributed = []
    names = _task_names(client, lambda: distributed.extend(expand_many(integrands, 5, client=client)))
    assert names == {"expand_one"}
    assert len(distributed) == len(serial) == 6
    for a, b in zip(serial, distributed):
        assert type(a) is type(b)
        assert b.coefficients == a.coefficients
        assert vars(b) == vars(a)
    # A&S 6.1.33: Γ(-s)Γ(1-t)/Γ(1-s-t) = -1/s + ζ(2) t + ..., coefficient of t is ζ(2)
    assert distributed[0].coefficient(0, 1) == zeta(2)
    assert distributed[0].coefficient(-1, 0) == -1


def _invoke(args):
    return CliRunner().invoke(app, args)


def test_cli_batch_on_two_workers_writes_the_serial_tables(tmp_path):
    files = [str(EXAMPLES / "open_superstring.toml"), str(EXAMPLES / "closed_string.toml")]
    serial = _invoke(["expand", *files, "--order", "4", "--out-dir", str(tmp_path / "serial")])
    assert serial.exit_code == 0, serial.output
    cluster = _invoke(["expand", *files, "--order", "4", "--out-dir", str(tmp_path / "cluster"), "--workers", "2"])
    assert cluster.exit_code == 0, cluster.output
    for name in ("open_superstring.csv", "closed_string.csv"):
        assert (tmp_path / "cluster" / name).read_text() == (tmp_path / "serial" / name).read_text()
    single = _invoke(["expand", files[0], "--order", "4", "--csv", str(tmp_path / "one.csv")])
    assert single.exit_code == 0, single.output
    assert (tmp_path / "one.csv").read_text() == (tmp_path / "serial" / "open_superstring.csv").read_text()


@pytest.mark.parametrize(
    "text, where",
    [
        ('integrand = "x^(-s-1)*(1-x)^(-t-1)*foo(x)"', "line 1, column"),  # found on reading
        ('integrand = "x^(-2-s)*(1-x)^(-t-1)"', "negative shifts"),  # found on a worker
    ],
)
def test_cli_batch_bad_file_one_line_exit_2_no_output(client, tmp_path, text, where):
    bad = tmp_path / "bad.toml"
    bad.write_text(text + "\n")
    out = tmp_path / "out"
    result = _invoke(["expand", str(EXAMPLES / "open_superstring.toml"), str(bad), "--order", "3",
                      "--out-dir", str(out), "--scheduler", client.scheduler.address])
    assert result.exit_code == 2
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: ") and str(bad) in lines[0] and where in lines[0]
    assert "Traceback" not in result.output
    assert not out.exists()


@pytest.mark.parametrize(
    "args, message",
    [
        (["--workers", "0"], "--workers must be at least 1"),
        (["--workers", "2", "--scheduler", "tcp://127.0.0.1:9"], "not both"),
        ([], "need --out-dir"),
        (["--out-dir", "OUT", "--csv", "x.csv"], "--csv writes the table of one file"),
    ],
)
def test_cli_batch_option_errors(tmp_path, args, message):
    files = [str(EXAMPLES / "open_superstring.toml"), str(EXAMPLES / "closed_string.toml")]
    args = [a.replace("OUT", str(tmp_path / "out")) for a in args]
    if "--out-dir" not in args and message != "need --out-dir":
        args += ["--out-dir", str(tmp_path / "out")]
    result = _invoke(["expand", *files, "--order", "2", *args])
    assert result.exit_code == 2, result.output
    assert message in result.output and len(result.output.strip().splitlines()) == 1
    assert not (tmp_path / "out").exists()


def test_unreachable_scheduler_is_a_user_error():
    # port 9 (discard) on the loopback: nothing listens there in the test environment
    with pytest.raises(ClusterError, match="cannot reach the Dask scheduler at tcp://127.0.0.1:9"):
        with cluster_client(scheduler="tcp://127.0.0.1:9", connect_timeout=1):
            pass


def test_scheduler_address_connects_to_a_running_cluster(client, tmp_path):
    # --scheduler ADDRESS: here the module's cluster, reached through its address
    address = client.scheduler.address
    with cluster_client(scheduler=address) as other:
        assert worker_count(other) == 2
    files = [str(EXAMPLES / "open_superstring.toml"), str(EXAMPLES / "closed_string.toml")]
    serial = _invoke(["expand", *files, "--order", "3", "--out-dir", str(tmp_path / "serial")])
    remote = _invoke(["expand", *files, "--order", "3", "--out-dir", str(tmp_path / "remote"), "--scheduler", address])
    assert serial.exit_code == 0 and remote.exit_code == 0, remote.output
    for name in ("open_superstring.csv", "closed_string.csv"):
        assert (tmp_path / "remote" / name).read_text() == (tmp_path / "serial" / name).read_text()


def test_fix_each_on_the_cluster_equals_serial_and_fix_per_set(client, tmp_path):
    ansatz = tmp_path / "fc2.toml"
    made = _invoke(["ansatz", "--weight", "2", "--family", "sv", "--mzv", "--degree", "1",
                    "--symmetry", "symmetric", "--write", str(ansatz)])
    assert made.exit_code == 0, made.output
    sets = [str(EXAMPLES / f) for f in ("first_correction_poles.toml", "first_correction_localization.toml")]
    serial = _invoke(["fix-each", str(ansatz), *sets, "--json"])
    remote = _invoke(["fix-each", str(ansatz), *sets, "--json", "--scheduler", client.scheduler.address])
    assert serial.exit_code == remote.exit_code
    assert json.loads(remote.stdout) == json.loads(serial.stdout)
    reports = json.loads(serial.stdout)["sets"]
    assert [r["constraints"] for r in reports] == sets
    assert [r["status"] for r in reports] == ["inconsistent", "underdetermined"]
    assert serial.exit_code == 1  # at least one set is inconsistent
    for path, report in zip(sets, reports):
        alone = _invoke(["fix", str(ansatz), path, "--json"])
        assert json.loads(alone.stdout) == {k: v for k, v in report.items() if k != "constraints"}, path


def test_fix_each_bad_constraint_file_is_one_line_exit_2(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[[constraint]]\nname = 1\n")
    result = _invoke(["fix-each", str(EXAMPLES / "curved_ansatz.toml"), str(EXAMPLES / "curved_constraints.toml"),
                      str(bad), "--workers", "2"])
    assert result.exit_code == 2
    assert len(result.output.strip().splitlines()) == 1 and str(bad) in result.output


def test_a_cut_expansion_equals_the_expansion_made_to_that_order():
    from lowenergy.commands.fix_each import _truncated_expansion

    integrand = read_integrand(EXAMPLES / "curved_ansatz.toml")
    high, low = expand_many([integrand, integrand], 6)[0], expand_many([integrand], 3)[0]
    cut = _truncated_expansion(high, 3)
    assert cut.order == 3 and vars(cut) == vars(low)
    assert _truncated_expansion(high, 9) is high
