"""elucidate batch: many unknowns, atomic per-case results, resume, failures, Dask.

The cases are the first small literature unknowns of
tests/benchmarks/data/unknowns.toml (sources are named in that file).  The
checks are about bookkeeping: the same bytes whatever the input format,
each case solved once, a killed run resumed with nothing lost or repeated.
"""

from __future__ import annotations

import csv
import json
import os
import signal
import subprocess
import sys
import time
import tomllib
from pathlib import Path

import pytest

from elucidate.batch import (
    SUMMARY_COLUMNS,
    BatchSettings,
    default_out_dir,
    read_cases,
    run_batch,
    toml_text,
)
from elucidate.errors import InputError

DATA = Path(__file__).parent / "benchmarks" / "data" / "unknowns.toml"
#: Small, fast cases (ethanol ... propanal, the first five of the benchmark).
NAMES = ("ethanol", "1,1-dichloroethane", "1,2-dichloroethane", "acetone", "propanal")
TIME_LIMIT = "60"
SETTINGS = BatchSettings(top=10, time_limit_s=60.0)


def _cases(names=NAMES) -> list[dict]:
    all_cases = {c["name"]: c for c in tomllib.loads(DATA.read_text(encoding="utf-8"))["case"]}
    return [dict(all_cases[n]) for n in names]


def _write_multi(path: Path, cases: list[dict]) -> Path:
    path.write_text("".join("[[case]]\n" + toml_text(c) + "\n" for c in cases), encoding="utf-8")
    return path


def _cli(*args: str, timeout: float = 600) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "elucidate", "batch", *args],
        capture_output=True, text=True, timeout=timeout,
    )


def _jsons(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.glob("*.json"))}


def _summary(folder: Path) -> list[dict[str, str]]:
    with open(folder / "summary.csv", encoding="utf-8", newline="") as fh:
        return list(csv.DictReader(fh))


@pytest.fixture(scope="module")
def reference(tmp_path_factory) -> dict[str, bytes]:
    """An uninterrupted CLI run over the small cases: the bytes every other run must match."""
    root = tmp_path_factory.mktemp("reference")
    src = _write_multi(root / "cases.toml", _cases())
    run = _cli(str(src), "--time-limit", TIME_LIMIT)
    assert run.returncode == 0, run.stderr
    out = _jsons(root / "cases-results")
    assert len(out) == len(NAMES)
    return out


# ------------------------------------------------------------------ reading


def test_toml_text_round_trips_every_benchmark_case():
    for case in tomllib.loads(DATA.read_text(encoding="utf-8"))["case"]:
        assert tomllib.loads(toml_text(case)) == case


def test_multi_case_toml_ignores_extra_keys_and_hashes_the_solver_input(tmp_path):
    cases = _cases()
    batch = read_cases(_write_multi(tmp_path / "b.toml", cases))
    assert [c.name for c in batch.cases] == list(NAMES)
    assert [c.stem for c in batch.cases][:3] == ["ethanol", "1-1-dichloroethane", "1-2-dichloroethane"]
    assert batch.ignored_keys == ("group", "smiles", "source")
    # the source line is not solver input: same hash; a changed peak list: new hash
    cases[0]["source"] = "changed"
    again = read_cases(_write_multi(tmp_path / "c.toml", cases))
    assert again.cases[0].input_sha256 == batch.cases[0].input_sha256
    cases[0]["h1"] = cases[0]["h1"].replace("3.72", "3.70")
    changed = read_cases(_write_multi(tmp_path / "d.toml", cases))
    assert changed.cases[0].input_sha256 != batch.cases[0].input_sha256
    assert changed.cases[1].input_sha256 == batch.cases[1].input_sha256


def test_hash_includes_the_content_of_referenced_files(tmp_path):
    folder = tmp_path / "cases"
    folder.mkdir()
    (folder / "peaks.txt").write_text("2.17 (s, 6H)", encoding="utf-8")
    (folder / "acetone.toml").write_text('formula = "C3H6O"\nh1 = "@peaks.txt"\n', encoding="utf-8")
    first = read_cases(folder).cases[0]
    (folder / "peaks.txt").write_text("2.16 (s, 6H)", encoding="utf-8")
    assert read_cases(folder).cases[0].input_sha256 != first.input_sha256


@pytest.mark.parametrize(
    "name, text, message",
    [
        ("missing.toml", None, "not found"),
        ("b.toml", 'title = "x"\n', "top-level key 'title'"),
        ("b.toml", "[[case]\n", "not valid TOML"),
        ("b.csv", "name,solvent\nx,CDCl3\n", "no 'formula' column"),
        ("b.txt", "x", "expected a folder"),
    ],
)
def test_unusable_inputs_are_one_clear_error(tmp_path, name, text, message):
    path = tmp_path / name
    if text is not None:
        path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=message):
        read_cases(path)


def test_default_out_dir_is_beside_the_input(tmp_path):
    assert default_out_dir(tmp_path / "x" / "unknowns.toml") == tmp_path / "x" / "unknowns-results"


# ------------------------------------------------------- formats, resume


def test_folder_toml_and_csv_give_identical_results(tmp_path, reference):
    cases = _cases(NAMES[:3])
    folder = tmp_path / "folder"
    folder.mkdir()
    for i, c in enumerate(cases):
        (folder / f"{i:02d}.toml").write_text(toml_text(c), encoding="utf-8")
    manifest = tmp_path / "manifest.csv"
    with open(manifest, "w", encoding="utf-8", newline="") as fh:
        writer = csv.DictWriter(fh, fieldnames=["name", "formula", "h1", "c13", "solvent", "smiles"])
        writer.writeheader()
        for c in cases:
            writer.writerow({k: c.get(k, "") for k in writer.fieldnames})
    for src in (folder, manifest):
        out = tmp_path / f"{src.name}-out"
        report = run_batch(read_cases(src), out, SETTINGS)
        assert report.ok and report.solved == 3
        got = {p.stem: p.read_bytes() for p in out.glob("*.json")}
        by_name = {json.loads(b)["case"]["name"]: b for b in got.values()}
        ref = {json.loads(b)["case"]["name"]: b for b in reference.values()}
        for name in NAMES[:3]:
            assert by_name[name] == ref[name], (src.name, name)


def test_second_run_skips_done_cases_and_reruns_a_changed_one(tmp_path):
    cases = _cases(NAMES[:3])
    src = _write_multi(tmp_path / "b.toml", cases)
    out = tmp_path / "out"
    first = run_batch(read_cases(src), out, SETTINGS)
    assert (first.solved, first.skipped) == (3, 0)
    stamps = {p.name: (p.stat().st_ino, p.stat().st_mtime_ns) for p in out.glob("*.json")}
    again = run_batch(read_cases(src), out, SETTINGS)
    assert (again.solved, again.skipped) == (0, 3)
    assert {p.name: (p.stat().st_ino, p.stat().st_mtime_ns) for p in out.glob("*.json")} == stamps
    rows = _summary(out)
    assert [r["case"] for r in rows] == list(NAMES[:3])
    assert all(r["time_s"] for r in rows)  # times kept from the first run
    cases[1]["h1"] = cases[1]["h1"].replace("2.06", "2.05")
    third = run_batch(read_cases(_write_multi(src, cases)), out, SETTINGS)
    assert (third.solved, third.skipped) == (1, 2)
    # other settings: everything is solved again
    fourth = run_batch(read_cases(src), out, BatchSettings(top=3, time_limit_s=60.0))
    assert fourth.solved == 3


def test_summary_columns_and_report_pages(tmp_path):
    src = _write_multi(tmp_path / "b.toml", _cases(NAMES[:2]))
    out = tmp_path / "out"
    run_batch(read_cases(src), out, BatchSettings(time_limit_s=60.0, report=True))
    with open(out / "summary.csv", encoding="utf-8") as fh:
        assert fh.readline().strip().split(",") == list(SUMMARY_COLUMNS)
    row = _summary(out)[0]
    assert (row["case"], row["formula"], row["best_smiles"], row["complete"], row["error"]) == (
        "ethanol", "C2H6O", "CCO", "true", ""
    )
    index = (out / "index.html").read_text(encoding="utf-8")
    assert 'href="ethanol.html"' in index and 'href="1-1-dichloroethane.html"' in index
    assert "hypotheses" in index  # the caution
    assert (out / "ethanol.html").read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert not list(out.glob(".*.tmp"))


# ------------------------------------------------------------- failures


def test_a_failing_case_is_recorded_and_the_batch_goes_on(tmp_path):
    cases = _cases(NAMES[:2])
    bad_formula = {"name": "bad formula", "formula": "C2H6Q", "h1": "1.0 (s, 6H)"}
    no_h1 = {"name": "no peaks", "formula": "C2H6O"}
    src = _write_multi(tmp_path / "b.toml", [cases[0], bad_formula, no_h1, cases[1]])
    run = _cli(str(src), "--time-limit", TIME_LIMIT)
    assert run.returncode == 1, run.stderr
    assert "Traceback" not in run.stderr
    rows = {r["case"]: r for r in _summary(tmp_path / "b-results")}
    assert list(rows) == ["ethanol", "bad formula", "no peaks", "1,1-dichloroethane"]
    assert "C2H6Q" in rows["bad formula"]["error"] and "\n" not in rows["bad formula"]["error"]
    assert "1H" in rows["no peaks"]["error"]
    assert rows["ethanol"]["error"] == "" and rows["1,1-dichloroethane"]["best_smiles"] == "CC(Cl)Cl"
    doc = json.loads((tmp_path / "b-results" / "bad-formula.json").read_text(encoding="utf-8"))
    assert doc["case"]["error"] == rows["bad formula"]["error"]
    # the recorded failures are not repeated, and the exit code still says so
    again = _cli(str(src), "--time-limit", TIME_LIMIT)
    assert again.returncode == 1 and "4 already done" in again.stderr


def test_a_bad_manifest_row_fails_alone(tmp_path):
    manifest = tmp_path / "m.csv"
    manifest.write_text(
        'name,formula,h1,field\nacetone,C3H6O,"2.17 (s, 6H)",400\nodd,C3H6O,"2.17 (s, 6H)",fast\n',
        encoding="utf-8",
    )
    report = run_batch(read_cases(manifest), tmp_path / "out", SETTINGS)
    assert report.failed == ["odd"] and report.solved == 2
    assert "field 'fast'" in _summary(tmp_path / "out")[1]["error"]


def test_cli_usage_errors_are_one_line(tmp_path):
    run = _cli(str(tmp_path / "nothing.toml"))
    assert run.returncode == 2 and run.stderr.count("\n") == 1 and "not found" in run.stderr
    src = _write_multi(tmp_path / "b.toml", _cases(NAMES[:1]))
    run = _cli(str(src), "--workers", "2", "--cluster", "tcp://127.0.0.1:1")
    assert run.returncode == 2 and "not both" in run.stderr


# ------------------------------------------------------------ kill, resume


def test_killed_run_resumes_with_nothing_lost_or_repeated(tmp_path, reference):
    src = _write_multi(tmp_path / "cases.toml", _cases())
    out = tmp_path / "out"
    proc = subprocess.Popen(
        [sys.executable, "-m", "elucidate", "batch", str(src), "--out", str(out), "--time-limit", TIME_LIMIT],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
    )
    try:
        deadline = time.monotonic() + 300
        while time.monotonic() < deadline and not list(out.glob("*.json")) and proc.poll() is None:
            time.sleep(0.02)
    finally:
        proc.send_signal(signal.SIGKILL)
        proc.wait()
    before = {p.name: (p.stat().st_ino, p.stat().st_mtime_ns, p.read_bytes()) for p in out.glob("*.json")}
    assert 1 <= len(before) < len(NAMES), "the kill should land mid-way"
    for blob in before.values():
        json.loads(blob[2])  # every file there is complete
    time.sleep(1.5)  # the orphaned worker notices its parent is gone and stops
    run = _cli(str(src), "--out", str(out), "--time-limit", TIME_LIMIT)
    assert run.returncode == 0, run.stderr
    assert f"{len(before)} already done" in run.stderr
    assert f"{len(NAMES) - len(before)} solved now" in run.stderr
    after = {p.name: p for p in out.glob("*.json")}
    assert set(after) == set(reference)
    for name, (ino, mtime, blob) in before.items():  # done once: not rewritten
        st = after[name].stat()
        assert (st.st_ino, st.st_mtime_ns) == (ino, mtime)
    assert _jsons(out) == reference
    assert [r["case"] for r in _summary(out)] == list(NAMES)
    assert not list(out.glob(".*.tmp"))


# ------------------------------------------------------------------- Dask


def test_cluster_gives_identical_result_files(tmp_path, reference):
    distributed = pytest.importorskip("dask.distributed", reason="dask[distributed] is not installed")
    src = _write_multi(tmp_path / "cases.toml", _cases())
    with distributed.LocalCluster(
        n_workers=1, threads_per_worker=1, processes=False, dashboard_address=None
    ) as cluster:
        report = run_batch(read_cases(src), tmp_path / "out", SETTINGS, cluster=cluster.scheduler_address)
    assert report.ok and report.solved == len(NAMES)
    assert _jsons(tmp_path / "out") == reference


def test_progress_lines_without_a_terminal():
    import io

    from elucidate.report.batch import BatchProgress

    stream = io.StringIO()
    bar = BatchProgress(stream)
    bar.begin(2, 1)
    bar.started("a")
    bar.finished("a", None, 0.25)
    bar.started("b")
    bar.finished("b", "formula 'X': bad", 0.1)
    bar.end()
    lines = stream.getvalue().splitlines()
    assert lines == [
        "1 case(s) already solved with the same input: skipped",
        "[1/2] a: ok (0.2 s)",
        "[2/2] b: failed: formula 'X': bad (0.1 s)",
    ]
    _ = os
