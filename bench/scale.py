"""Batch figures at scale, for bench/run.py: a folder against JSON Lines, --jobs 2 against --jobs 1, memory
under --output-folder.

Every figure is a ratio of commands run side by side, interleaved (a, b, a, b, ...), medians of
wall time, so that a busy moment on a shared machine costs both sides alike. CPU time (user +
system of the command and its worker processes, from rusage) is printed beside the wall time.
"""

from __future__ import annotations

import json
import os
import shutil
import statistics
import subprocess
import sys
import time
from collections.abc import Callable, Sequence
from pathlib import Path

import yaml
from cases import generate


def write_folder(folder: Path, count: int, seed: int = 2026) -> None:
    """The invented cases as YAML case files, one per case, named in input order."""
    folder.mkdir(parents=True, exist_ok=True)
    for index, case in enumerate(generate(count, seed=seed)):
        text = yaml.safe_dump(case, sort_keys=False, allow_unicode=True)
        (folder / f"case{index:07d}.yaml").write_text(text, encoding="utf-8")


def write_jsonl(path: Path, count: int, seed: int = 2026) -> None:
    with path.open("w", encoding="utf-8") as stream:
        for case in generate(count, seed=seed):
            stream.write(json.dumps(case) + "\n")


def _timed(command: Sequence[str], env: dict[str, str], cwd: Path) -> tuple[float, float]:
    """Wall seconds, and CPU seconds of the command with every process it waited for."""
    started = time.perf_counter()
    before = os.times()
    with open(os.devnull, "wb") as sink:
        process = subprocess.run(command, env=env, cwd=cwd, stdout=sink, stderr=subprocess.PIPE, check=False)
    wall = time.perf_counter() - started
    after = os.times()
    if process.returncode != 0:
        raise RuntimeError(f"{' '.join(command)} exited with {process.returncode}: {process.stderr.decode()[-500:]}")
    cpu = (after.children_user - before.children_user) + (after.children_system - before.children_system)
    return wall, cpu


def interleaved(
    commands: dict[str, Callable[[Path], list[str]]], runs: int, env: dict[str, str], scratch: Path
) -> dict[str, dict[str, float]]:
    """Median and spread (min, max) of wall and CPU seconds of each command, run in turn `runs` times.

    Each command gets a fresh, empty output folder for every run (the path handed to it).
    """
    walls: dict[str, list[float]] = {name: [] for name in commands}
    cpus: dict[str, list[float]] = {name: [] for name in commands}
    for _ in range(runs):
        for name, make in commands.items():
            out = scratch / "out"
            shutil.rmtree(out, ignore_errors=True)
            wall, cpu = _timed(make(out), env, scratch)
            walls[name].append(wall)
            cpus[name].append(cpu)
    shutil.rmtree(scratch / "out", ignore_errors=True)
    return {
        name: {
            "wall": statistics.median(walls[name]),
            "low": min(walls[name]),
            "high": max(walls[name]),
            "cpu": statistics.median(cpus[name]),
        }
        for name in commands
    }


_LAUNCHER = """
import os, subprocess, sys
with open(os.devnull, "wb") as sink:
    process = subprocess.Popen(sys.argv[1:], stdout=sink, stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(process.pid, 0)
print(os.waitstatus_to_exitcode(status), usage.ru_maxrss)
"""


def peak_rss(command: Sequence[str], env: dict[str, str], cwd: Path) -> int:
    """Peak resident memory (KiB) of `command`, started from a small launcher (see run.py's peak_rss)."""
    output = subprocess.run(
        [sys.executable, "-c", _LAUNCHER, *command], env=env, cwd=cwd, check=True, capture_output=True, text=True
    ).stdout
    status, kibibytes = (int(word) for word in output.split())
    if status != 0:
        raise RuntimeError(f"{' '.join(command)} exited with {status}")
    return kibibytes


def report(
    notegen: list[str], env: dict[str, str], scratch: Path, *, count: int, runs: int, memory_sizes: Sequence[int]
) -> None:
    """Print the folder, jobs and memory figures (bench/README.md defines them)."""
    folder, lines = scratch / "cases", scratch / "cases.jsonl"
    write_folder(folder, count)
    write_jsonl(lines, count)
    draft = [*notegen, "draft"]
    commands: dict[str, Callable[[Path], list[str]]] = {
        "folder": lambda out: [*draft, str(folder), "--output-folder", str(out), "--format", "json"],
        "json lines": lambda out: [*draft, "--jsonl", str(lines), "--output-folder", str(out), "--format", "json"],
        "folder to stdout": lambda out: [*draft, str(folder), "--format", "json"],
        "json lines to stdout": lambda out: [*draft, "--jsonl", str(lines), "--format", "json"],
        "folder --jobs 2": lambda out: [
            *draft, str(folder), "--output-folder", str(out), "--format", "json", "--jobs", "2"
        ],
    }
    found = interleaved(commands, runs, env, scratch)
    cores = len(os.sched_getaffinity(0))
    print(f"\nbatches of {count:,} invented cases as commands, start-up included, median of {runs} interleaved runs:")
    for name, figure in found.items():
        print(
            f"  {name:>22}: {count / figure['wall']:6.0f} notes/s ({figure['wall']:.2f} s, "
            f"spread {figure['low']:.2f}-{figure['high']:.2f} s; CPU {figure['cpu']:.2f} s)"
        )
    folder_ratio = found["json lines"]["wall"] / found["folder"]["wall"]
    print(f"  folder rate / JSON Lines rate, both --output-folder FOLDER: {folder_ratio:.2f} (target >= 0.70)")
    stdout_ratio = found["json lines to stdout"]["wall"] / found["folder to stdout"]["wall"]
    print(f"  folder rate / JSON Lines rate, both to standard output (one JSON line per case): {stdout_ratio:.2f}")
    mixed = found["json lines to stdout"]["wall"] / found["folder"]["wall"]
    print(f"  folder --output-folder FOLDER / JSON Lines to standard output: {mixed:.2f} "
          "(a file per note against one stream)")
    jobs_ratio = found["folder"]["wall"] / found["folder --jobs 2"]["wall"]
    print(
        f"  --jobs 2 / --jobs 1 (folder): {jobs_ratio:.2f} times the rate (target >= 1.7 with both cores free; "
        f"{cores} cores, load average {os.getloadavg()[0]:.1f} at the end)"
    )

    print("\npeak RSS of notegen draft --jsonl FILE --output-folder FOLDER --format json (one note file per case):")
    rss: dict[int, int] = {}
    for size in memory_sizes:
        path = scratch / f"memory-{size}.jsonl"
        write_jsonl(path, size, seed=7)
        out = scratch / "memory-out"
        shutil.rmtree(out, ignore_errors=True)
        command = [*draft, "--jsonl", str(path), "--output-folder", str(out), "--format", "json"]
        rss[size] = peak_rss(command, env, scratch)
        shutil.rmtree(out, ignore_errors=True)
        path.unlink()
        print(f"  {size:8,} cases: {rss[size] / 1024:6.1f} MiB")
    small, large = min(rss), max(rss)
    if small != large:
        print(f"  growth {small:,} -> {large:,}: {(rss[large] - rss[small]) / 1024:+.1f} MiB (target within 5 MiB)")


def main() -> None:
    """`python bench/scale.py 1000 100000`: only the memory under --output-folder, for the sizes given."""
    import argparse
    import tempfile

    from run import _child_environment, _notegen_command

    parser = argparse.ArgumentParser(description=main.__doc__)
    parser.add_argument("sizes", nargs="+", type=int)
    sizes = parser.parse_args().sizes
    with tempfile.TemporaryDirectory(prefix="notegen-bench-") as scratch:
        folder = Path(scratch)
        env = _child_environment(folder / "pycache")
        draft = [*_notegen_command(), "draft"]
        print("peak RSS of notegen draft --jsonl FILE --output-folder FOLDER --format json (one note file per case):")
        for size in sizes:
            path = folder / f"memory-{size}.jsonl"
            write_jsonl(path, size, seed=7)
            out = folder / "memory-out"
            rss = peak_rss([*draft, "--jsonl", str(path), "--output-folder", str(out), "--format", "json"], env, folder)
            shutil.rmtree(out, ignore_errors=True)
            print(f"  {size:8,} cases: {rss / 1024:6.1f} MiB")


if __name__ == "__main__":
    sys.path.insert(0, str(Path(__file__).resolve().parent))
    main()
