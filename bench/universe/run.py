#!/usr/bin/env python3
"""Benchmark of `hurdle universe` against a polars-lazy reference pipeline, in one session.

Generates the seeded synthetic universe when it is missing (bench/universe/generate.py), then
times, each in its own process under /usr/bin/time -v (wall clock, peak resident memory and,
for hurdle's runs, CPU time: steadier than the wall clock on a shared machine):
  - polars merely reading the long CSV and the long Parquet panel (pl.read_csv / read_parquet);
  - the reference pipeline (bench/universe/reference.py: returns, cov/var betas, Hamada,
    industry medians; no statistics);
  - `hurdle universe` on the long CSV, the long Parquet and the wide CSV (full statistics);
  - `hurdle universe` on a universe four times as large (20,000 securities, long CSV).
It checks that hurdle's industry medians (levered and unlevered) equal the reference's to 1e-9
and prints the ratios the targets are stated in. Python times are taken inside the process
after imports (in the reference's favour); hurdle's are the whole process, start to exit.

Each step runs --repeats times (default 3), interleaved with the others, and the fastest run
counts (the machine is shared, so the minimum is the least disturbed); the peak memory is the
largest of the runs.

Usage: run.py [--hurdle PATH] [--data DIR] [--data-4x DIR] [--skip-4x] [--repeats N]
"""

import argparse
import csv
import os
import pathlib
import re
import subprocess
import sys
import tempfile
import time

HERE = pathlib.Path(__file__).resolve().parent
REPO = HERE.parent.parent
TOLERANCE = 1e-9  # the agreement bound; both sides compute in f64 from the same decimals


def measured(command, env=None):
    """Runs `command` under /usr/bin/time -v; returns (wall seconds, peak MiB, stdout, CPU
    seconds: user plus system, over every thread)."""
    started = time.perf_counter()
    done = subprocess.run(
        ["/usr/bin/time", "-v", *command], capture_output=True, text=True, env=env
    )
    wall = time.perf_counter() - started
    if done.returncode != 0:
        sys.exit(f"failed: {' '.join(map(str, command))}\n{done.stdout}\n{done.stderr}")
    peak = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", done.stderr).group(1))
    cpu = sum(float(re.search(rf"{kind} time \(seconds\): ([0-9.]+)", done.stderr).group(1))
              for kind in ("User", "System"))
    return wall, peak / 1024, done.stdout, cpu


def python_read(path):
    """Seconds polars takes merely to read `path` (after imports), and the peak memory."""
    reader = "read_parquet" if path.suffix == ".parquet" else "read_csv"
    code = (
        "import time, polars as pl\n"
        f"t = time.perf_counter(); frame = pl.{reader}({str(path)!r})\n"
        "print('seconds', time.perf_counter() - t, frame.height)\n"
    )
    _, peak, out, _ = measured([sys.executable, "-c", code])
    return float(out.split()[1]), peak, None


def inner_seconds(stdout):
    return float(re.search(r"seconds ([0-9.]+)", stdout).group(1))


def reference(universe, scratch):
    """The reference pipeline's own time (after imports) and peak memory."""
    _, peak, out, _ = measured([sys.executable, str(HERE / "reference.py"), str(universe),
                                "--out", str(scratch / "reference.csv")])
    return inner_seconds(out), peak, None


def hurdle_run(hurdle, universe, out, *overrides):
    command = [hurdle, "universe", str(universe), "--out", str(out), "--quiet"]
    for assignment in overrides:
        command += ["--set", assignment]
    wall, peak, _, cpu = measured(command)
    return wall, peak, cpu


def read_table(path):
    with open(path, newline="") as handle:
        return {row["industry"]: row for row in csv.DictReader(handle)}


def compare(hurdle_csv, reference_csv):
    """Largest absolute difference of the two medians over all industries; counts must agree."""
    ours, theirs = read_table(hurdle_csv), read_table(reference_csv)
    if set(ours) != set(theirs):
        sys.exit(f"industries differ: {sorted(set(ours) ^ set(theirs))}")
    worst = 0.0
    for industry, ref in theirs.items():
        row = ours[industry]
        if int(row["estimated"]) != int(ref["estimated"]):
            sys.exit(f"{industry}: hurdle estimated {row['estimated']}, reference {ref['estimated']}")
        for column in ("median_beta", "median_unlevered_beta"):
            worst = max(worst, abs(float(row[column]) - float(ref[column])))
    return worst


def ensure(folder, securities, csv_only):
    if not (folder / "universe.toml").exists():
        command = [sys.executable, str(HERE / "generate.py"), "--out", str(folder),
                   "--securities", str(securities)]
        subprocess.run(command + (["--csv-only"] if csv_only else []), check=True)


def warm(folder):
    """Reads every file once so each timed run starts from the page cache alike."""
    for path in folder.iterdir():
        with open(path, "rb") as handle:
            while handle.read(1 << 24):
                pass


def best(runs):
    """The fastest time, the largest peak and the least CPU time of repeated (seconds, peak MiB,
    CPU seconds or None) runs. CPU time is given for hurdle's runs only: a Python step's would
    include its imports, which its own timing leaves out."""
    cpus = [r[2] for r in runs if r[2] is not None]
    return min(r[0] for r in runs), max(r[1] for r in runs), min(cpus) if cpus else None


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    target = pathlib.Path(os.environ.get("CARGO_TARGET_DIR", REPO / "target"))
    parser.add_argument("--hurdle", default=str(target / "release" / "hurdle"))
    parser.add_argument("--data", type=pathlib.Path, default=pathlib.Path("/tmp/hurdle-universe"))
    parser.add_argument("--data-4x", type=pathlib.Path,
                        default=pathlib.Path("/tmp/hurdle-universe-4x"))
    parser.add_argument("--skip-4x", action="store_true")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    binary = pathlib.Path(args.hurdle)
    if not binary.exists():
        sys.exit(f"no binary at {binary}: build it (cargo build --release) or pass --hurdle")
    newest = max(p.stat().st_mtime for p in (REPO / "src").rglob("*.rs"))
    if binary.stat().st_mtime < newest:
        print(f"warning: {binary} is older than the sources in src/: rebuild it, or set "
              "CARGO_TARGET_DIR to where it is built", file=sys.stderr)
    ensure(args.data, 5000, False)
    if not args.skip_4x:
        ensure(args.data_4x, 20000, True)
    universe = args.data / "universe.toml"
    runs = {}
    with tempfile.TemporaryDirectory() as scratch:
        scratch = pathlib.Path(scratch)
        steps = {
            "polars read_csv (long CSV)": lambda: python_read(args.data / "prices-long.csv"),
            "polars read_parquet (long Parquet)":
                lambda: python_read(args.data / "prices-long.parquet"),
            "reference pipeline (polars lazy)": lambda: reference(universe, scratch),
            "hurdle universe, long CSV": lambda: hurdle_run(args.hurdle, universe, scratch / "csv"),
            "hurdle universe, long Parquet": lambda: hurdle_run(
                args.hurdle, universe, scratch / "parquet", "panel.prices=prices-long.parquet"),
            "hurdle universe, wide CSV": lambda: hurdle_run(
                args.hurdle, universe, scratch / "wide", "panel.prices=prices-wide.csv",
                "panel.layout=wide"),
        }
        if not args.skip_4x:
            steps["hurdle universe, 4x (20,000) long CSV"] = lambda: hurdle_run(
                args.hurdle, args.data_4x / "universe.toml", scratch / "4x")
        for _ in range(args.repeats):
            for name, step in steps.items():
                warm(args.data_4x if "4x" in name else args.data)
                runs.setdefault(name, []).append(step())
        worst = compare(scratch / "csv" / "industries.csv", scratch / "reference.csv")
        worst_pq = compare(scratch / "parquet" / "industries.csv", scratch / "reference.csv")
    figures = {name: best(r) for name, r in runs.items()}
    size = (args.data / "prices-long.csv").stat().st_size / 1e6
    print(f"panel: {args.data}/prices-long.csv, {size:.0f} MB; {os.cpu_count()} cores; "
          f"load average {os.getloadavg()[0]:.1f}; best of {args.repeats}")
    print(f"{'step':44} {'seconds':>8} {'peak MiB':>9} {'CPU s':>7}")
    for name, (seconds, peak, cpu) in figures.items():
        shown = f"{cpu:7.2f}" if cpu is not None else f"{'-':>7}"
        print(f"{name:44} {seconds:8.3f} {peak:9.0f} {shown}")
    print(f"industry medians vs reference: max |difference| CSV {worst:.2e}, Parquet "
          f"{worst_pq:.2e} (bound {TOLERANCE:.0e})")
    read_csv = figures["polars read_csv (long CSV)"][0]
    ref = figures["reference pipeline (polars lazy)"][0]
    ours_csv, ours_csv_peak, _ = figures["hurdle universe, long CSV"]
    ours_pq = figures["hurdle universe, long Parquet"][0]
    checks = [
        ("reference / hurdle CSV", ref / ours_csv, ">= 3", ref / ours_csv >= 3),
        ("hurdle CSV / polars read_csv", ours_csv / read_csv, "<= 1.3", ours_csv / read_csv <= 1.3),
        ("hurdle Parquet / hurdle CSV", ours_pq / ours_csv, "<= 0.35", ours_pq / ours_csv <= 0.35),
        ("hurdle CSV peak MiB", ours_csv_peak, "<= 600", ours_csv_peak <= 600),
    ]
    if not args.skip_4x:
        ours_4x, ours_4x_peak, _ = figures["hurdle universe, 4x (20,000) long CSV"]
        checks += [
            ("hurdle 4x / hurdle 1x time", ours_4x / ours_csv, "about 4", ours_4x / ours_csv <= 4.6),
            ("hurdle 4x peak MiB", ours_4x_peak, "< 2560", ours_4x_peak < 2560),
        ]
    print(f"{'ratio':32} {'value':>8}  target")
    for name, value, goal, met in checks:
        print(f"{name:32} {value:8.2f}  {goal:8} {'met' if met else 'MISSED'}")
    agreed = worst <= TOLERANCE and worst_pq <= TOLERANCE
    print("medians agree" if agreed else "MEDIANS DISAGREE")
    sys.exit(0 if agreed else 1)


if __name__ == "__main__":
    main()
