"""notegen's benchmark: cold start, batch speed, rule-pack load, memory of a streamed batch, scaling.

    python bench/run.py            # about two minutes; every figure below comes from this one run
    python bench/run.py --quick    # fewer repeats, for trying a change
    python bench/run.py --large    # the memory under --output-folder measured at 100,000 cases too (a few minutes more)

Not a test: the figures depend on the machine and on what else it is doing. Cold starts are
interleaved (floor, note, floor, note, ...) so that a busy moment costs both sides alike, and
medians are reported. How each figure is defined is in bench/README.md.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

BENCH = Path(__file__).resolve().parent
ROOT = BENCH.parent
sys.path[:0] = [str(BENCH), str(ROOT)]

from cases import generate  # noqa: E402
from scale import report as scale_report  # noqa: E402

SAMPLE = ROOT / "samples" / "gastric_suction.yaml"
FLOOR = "import pydantic, jinja2, yaml"
# The same imports, then what any program that validates with pydantic pays before its own code: the
# first model class (pydantic's `import pydantic` alone is lazy and loads almost nothing of it).
FLOOR_WITH_MODEL = FLOOR + "\nfrom pydantic import BaseModel\nclass M(BaseModel):\n    x: int\nM(x=1)"
# The floor, then reading and validating the sample case as `notegen draft` does and nothing after:
# a lower bound of any note drafted from that file with the design as it is (issue 18).
FLOOR_WITH_CASE = (
    FLOOR + "\nfrom pathlib import Path\nfrom notegen.intake.read import read_case\nread_case(Path({sample!r}))"
)


def _child_environment(pycache: Path) -> dict[str, str]:
    """Children keep compiled bytecode (as an installed wheel has), in a scratch folder, not in the checkout."""
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPYCACHEPREFIX"] = str(pycache)
    return env


def _notegen_command() -> list[str]:
    script = Path(sys.executable).with_name("notegen")
    if script.is_file():
        return [str(script)]  # the console script a user runs
    return [sys.executable, "-c", "import sys; from notegen.cli.app import main; sys.argv[0] = 'notegen'; main()"]


def _run(command: Sequence[str], env: dict[str, str]) -> tuple[float, float]:
    """Wall seconds and CPU seconds (user + system, from the child's rusage) of one run."""
    started = time.perf_counter()
    with open(os.devnull, "wb") as sink:
        process = subprocess.Popen(command, env=env, cwd=ROOT, stdout=sink, stderr=subprocess.PIPE)
        _, status, usage = os.wait4(process.pid, 0)
    wall = time.perf_counter() - started
    process.returncode = os.waitstatus_to_exitcode(status)
    errors = process.stderr.read().decode() if process.stderr else ""
    if process.returncode != 0:
        raise RuntimeError(f"{' '.join(command)} exited with {process.returncode}: {errors}")
    return wall, usage.ru_utime + usage.ru_stime


def _installed(env: dict[str, str]) -> str:
    """Which notegen the commands run: a wheel ships its templates precompiled, a checkout compiles them."""
    code = (
        "import notegen, notegen.resources as r; "
        "from notegen.knowledge.packs import load_rule_pack, pack_dirs; "
        "from notegen.knowledge.prepared_pack import load_prepared_pack; "
        "ready = load_prepared_pack('alkalosis', pack_dirs('alkalosis')[0], r.prepared_packs_dir()) is not None; "
        "print(notegen.__file__, 'yes' if ready else 'no', "
        "'yes' if r.compiled_templates_dir() else 'no (compiled in every process)')"
    )
    output = subprocess.run(
        [sys.executable, "-c", code], env=env, cwd=BENCH, check=True, capture_output=True, text=True
    ).stdout.split()
    return (
        f"notegen under test: {Path(output[0]).parent}; shipped rule pack prepared at build time and matching: "
        f"{output[1]}; shipped templates precompiled: {' '.join(output[2:])}"
    )


def cold_start(runs: int, env: dict[str, str]) -> dict[str, float]:
    """Medians of wall and CPU time, floor and note interleaved."""
    floor = [sys.executable, "-c", FLOOR]
    model = [sys.executable, "-c", FLOOR_WITH_MODEL]
    case = [sys.executable, "-c", FLOOR_WITH_CASE.format(sample=str(SAMPLE.relative_to(ROOT)))]
    draft = [*_notegen_command(), "draft", str(SAMPLE.relative_to(ROOT)), "--format", "text"]
    commands = (("floor", floor), ("model", model), ("case", case), ("draft", draft))
    for _ in range(2):  # compile bytecode, warm the file cache
        for _, command in commands:
            _run(command, env)
    times: dict[str, list[float]] = {name: [] for name, _ in commands}
    times.update({f"{name} cpu": [] for name, _ in commands})
    for _ in range(runs):
        for name, command in commands:
            wall, cpu = _run(command, env)
            times[name].append(wall)
            times[f"{name} cpu"].append(cpu)
    return {name: statistics.median(values) for name, values in times.items()}


def cold_stages(runs: int, env: dict[str, str]) -> dict[str, float]:
    """Median milliseconds of each start-up step (bench/cold_stages.py), each run in a fresh interpreter."""
    command = [sys.executable, str(BENCH / "cold_stages.py"), str(SAMPLE.relative_to(ROOT))]
    samples: dict[str, list[float]] = {}
    for _ in range(runs):
        output = subprocess.run(command, env=env, cwd=ROOT, check=True, capture_output=True, text=True).stdout
        for name, value in json.loads(output).items():
            samples.setdefault(name, []).append(value)
    return {name: statistics.median(values) for name, values in samples.items()}


def _best_per_case(action: Callable[[Any], object], items: Sequence[Any], rounds: int) -> float:
    """CPU seconds per item, best of `rounds`: the time of one core, whatever else the machine runs."""
    best = float("inf")
    for _ in range(rounds):
        started = time.process_time()
        for item in items:
            action(item)
        best = min(best, time.process_time() - started)
    return best / len(items)


def batch(count: int, rounds: int) -> dict[str, dict[str, float]]:
    """Seconds per note: the whole pipeline, and validating and rendering alone (see README)."""
    from notegen.acidbase.calculations import compute_calculations
    from notegen.case.validation import validate_case
    from notegen.intake.files import parse_json
    from notegen.note.writer import complete_assessment, render_note
    from notegen.pipeline import Drafter, DraftOptions

    lines = [json.dumps(case) for case in generate(count)]
    drafter = Drafter()
    # The baseline renders the same assessments, computed beforehand, with the paragraph and the
    # management considerations taken out so that rendering writes them again.
    bare = [
        drafter.assess(validate_case(parse_json(line, "bench"))).model_copy(update={"paragraph": "", "management": ()})
        for line in lines
    ]
    jobs = list(zip(lines, bare, strict=True))
    markdown = DraftOptions(output_format="markdown")
    figures: dict[str, dict[str, float]] = {}

    def full_markdown(job: tuple[str, Any]) -> object:
        return drafter.draft(validate_case(parse_json(job[0], "bench")), markdown)

    def render_markdown_only(job: tuple[str, Any]) -> object:
        validate_case(parse_json(job[0], "bench"))
        return render_note(job[1], markdown)

    def full_json(job: tuple[str, Any]) -> object:
        return drafter.draft_json_line(validate_case(parse_json(job[0], "bench")))

    def render_json_only(job: tuple[str, Any]) -> object:
        validate_case(parse_json(job[0], "bench"))
        return complete_assessment(job[1]).model_dump_json(by_alias=True) + "\n"

    def calculate_and_render_json(job: tuple[str, Any]) -> object:
        # everything but the acid-base reading and the rule walk (the calculations computed, as the note shows them)
        compute_calculations(validate_case(parse_json(job[0], "bench")), drafter.settings)
        return complete_assessment(job[1]).model_dump_json(by_alias=True) + "\n"

    def calculate_and_render_markdown(job: tuple[str, Any]) -> object:
        compute_calculations(validate_case(parse_json(job[0], "bench")), drafter.settings)
        return render_note(job[1], markdown)

    for name, full, alone, calculated in (
        ("json lines", full_json, render_json_only, calculate_and_render_json),
        ("markdown", full_markdown, render_markdown_only, calculate_and_render_markdown),
    ):
        full(jobs[0])
        alone(jobs[0])
        calculated(jobs[0])
        figures[name] = {"full": float("inf"), "alone": float("inf"), "calculated": float("inf")}
        for _ in range(rounds):  # interleaved, best of each
            figures[name]["full"] = min(figures[name]["full"], _best_per_case(full, jobs, 1))
            figures[name]["alone"] = min(figures[name]["alone"], _best_per_case(alone, jobs, 1))
            figures[name]["calculated"] = min(figures[name]["calculated"], _best_per_case(calculated, jobs, 1))
    return figures


def cli_batch(path: Path, env: dict[str, str]) -> float:
    """Wall seconds of `notegen draft --jsonl FILE --format json`, start-up included."""
    return _run([*_notegen_command(), "draft", "--jsonl", str(path), "--format", "json"], env)[0]


def resident_pipe(count: int, env: dict[str, str]) -> dict[str, float]:
    """Seconds per result when one `notegen draft --jsonl - --format json` process is kept open.

    The sample case is written as one JSON line at a time and its result read back before the next
    is written, as a dictation pipeline would; the first result includes the process's start-up.
    """
    from notegen.intake.files import parse_yaml

    line = json.dumps(parse_yaml(SAMPLE.read_text(encoding="utf-8"), SAMPLE.name), default=str) + "\n"
    command = [*_notegen_command(), "draft", "--jsonl", "-", "--format", "json"]
    times: list[float] = []
    started = time.perf_counter()
    with subprocess.Popen(
        command, env=env, cwd=ROOT, stdin=subprocess.PIPE, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL
    ) as process:
        assert process.stdin is not None and process.stdout is not None
        for _ in range(count + 1):
            process.stdin.write(line.encode())
            process.stdin.flush()
            if not process.stdout.readline():
                raise RuntimeError(f"{' '.join(command)} ended early")
            now = time.perf_counter()
            times.append(now - started)
            started = now
        process.stdin.close()
        process.wait()
    warm = sorted(times[1:])
    return {"first": times[0], "median": statistics.median(warm), "p95": warm[int(len(warm) * 0.95)]}


def pack_load(env: dict[str, str], repeats: int) -> dict[str, float]:
    """Milliseconds to read, validate, check and compile the shipped pack (and read the settings)."""
    code = f"""
import json, statistics, time
from pathlib import Path
from notegen.engine import load_pack
from notegen.knowledge import ALKALOSIS_PACK
from notegen.knowledge.packs import pack_dirs
from notegen.knowledge.settings import load_acid_base_settings
dirs = pack_dirs(ALKALOSIS_PACK)
started = time.perf_counter(); load_pack(dirs); first = time.perf_counter() - started
times = []
for _ in range({repeats}):
    started = time.perf_counter(); load_pack(dirs); times.append(time.perf_counter() - started)
settings = []
for _ in range({repeats}):
    started = time.perf_counter(); load_acid_base_settings(); settings.append(time.perf_counter() - started)
print(json.dumps({{"first": first * 1e3, "again": statistics.median(times) * 1e3,
                  "settings": statistics.median(settings) * 1e3}}))
"""
    output = subprocess.run(
        [sys.executable, "-c", code], env=env, cwd=ROOT, check=True, capture_output=True, text=True
    ).stdout
    return dict(json.loads(output))


_SHIPPED_PACK = """
import time
started = time.perf_counter()
from notegen.knowledge.packs import load_rule_pack
load_rule_pack("alkalosis")
print((time.perf_counter() - started) * 1e3)
"""


def shipped_pack_load(env: dict[str, str], runs: int) -> dict[str, float]:
    """Milliseconds to import the engine and load the shipped pack in a fresh process, as a note does:
    prepared at build time, and from the YAML (`NOTEGEN_PREPARED_PACK=0`); medians of interleaved runs."""
    found: dict[str, list[float]] = {"prepared": [], "yaml": []}
    for _ in range(runs):
        for name, setting in (("prepared", "1"), ("yaml", "0")):
            output = subprocess.run(
                [sys.executable, "-c", _SHIPPED_PACK],
                env={**env, "NOTEGEN_PREPARED_PACK": setting},
                cwd=BENCH,
                check=True,
                capture_output=True,
                text=True,
            ).stdout
            found[name].append(float(output))
    return {name: statistics.median(values) for name, values in found.items()}


_LAUNCHER = """
import os, subprocess, sys
with open(os.devnull, "wb") as sink:
    process = subprocess.Popen(sys.argv[1:], stdout=sink, stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(process.pid, 0)
print(os.waitstatus_to_exitcode(status), usage.ru_maxrss)
"""


def peak_rss(path: Path, env: dict[str, str]) -> int:
    """Peak resident memory (KiB) of `notegen draft --jsonl FILE --format json`, from the child's rusage.

    A small launcher process starts it: a child forked from this (large) process would count this
    process's pages in its peak before it execs.
    """
    command = [*_notegen_command(), "draft", "--jsonl", str(path), "--format", "json"]
    output = subprocess.run(
        [sys.executable, "-c", _LAUNCHER, *command], env=env, cwd=ROOT, check=True, capture_output=True, text=True
    ).stdout
    status, kibibytes = (int(word) for word in output.split())
    if status != 0:
        raise RuntimeError(f"{' '.join(command)} exited with {status}")
    return kibibytes  # KiB on Linux


def _scaled_case(kind: str, size: int) -> dict[str, Any]:
    case: dict[str, Any] = {
        "case": f"{size} {kind}",
        "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36},
        "chem": {"na": 137, "k": 3.2, "cl": 91, "creatinine": 1.0},
        "urine": {"na": 35, "k": 40, "cl": 20, "creatinine": 120},
        "context": {"volume": "low"},
    }
    names = ("furosemide", "hydrochlorothiazide", "prednisone", "lisinopril", "an unlisted tablet")
    if kind == "medications":
        case["context"]["meds"] = [{"name": names[i % 5], "last_dose_hours": 1 + i % 40} for i in range(size)]
    elif kind == "findings":
        words = ("vomiting", "edema", "hypertension", "an unlisted finding")
        case["context"]["findings"] = [words[i % 4] for i in range(size)]
    else:  # serial results, an hour apart, all within the window
        start = datetime.datetime(2026, 3, 1)
        gases = []
        for i in range(size):
            when = (start + datetime.timedelta(minutes=i)).isoformat(timespec="minutes")
            gases.append({"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36, "taken_at": when})
        case["gas"] = gases
        case["chem"]["taken_at"] = case["urine"]["taken_at"] = gases[-1]["taken_at"]
    return case


def scaling(rounds: int) -> dict[str, tuple[int, int, float]]:
    """How the time of one note grows when a list in the case grows fourfold (4.0 = linear)."""
    from notegen.case.validation import validate_case
    from notegen.pipeline import Drafter, DraftOptions

    drafter = Drafter()
    options = DraftOptions(output_format="markdown")
    found: dict[str, tuple[int, int, float]] = {}
    for kind, small in (("medications", 50), ("findings", 500), ("serial gases", 250)):
        times = []
        for size in (small, small * 4):
            data = _scaled_case(kind, size)
            times.append(_best_per_case(lambda d: drafter.draft(validate_case(d), options), [data], rounds))
        found[kind] = (small, small * 4, times[1] / times[0])
    return found


def main(argv: Sequence[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer repeats and cases")
    parser.add_argument("--large", action="store_true", help="memory under --output-folder at 100,000 cases too")
    args = parser.parse_args(argv)
    runs, rounds, count = (15, 2, 500) if args.quick else (21, 5, 2000)
    print(f"notegen benchmark, {datetime.date.today().isoformat()}")
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} CPUs (nproc {len(os.sched_getaffinity(0))}), "
        f"{platform.python_implementation()} {platform.python_version()}, {platform.system()} {platform.release()}"
    )
    with tempfile.TemporaryDirectory(prefix="notegen-bench-") as scratch:
        folder = Path(scratch)
        env = _child_environment(folder / "pycache")
        print(_installed(env))

        cold = cold_start(runs, env)
        print(f"\ncold start, median of {runs} interleaved runs (bytecode compiled, as installed):")
        print(f"  floor  python -c {FLOOR!r}: {cold['floor'] * 1e3:7.1f} ms")
        print(f"  notegen draft {SAMPLE.relative_to(ROOT)} --format text: {cold['draft'] * 1e3:7.1f} ms")
        print(f"  ratio {cold['draft'] / cold['floor']:.2f} (target <= 1.8)")
        print(
            f"  the floor plus one pydantic model (BaseModel, one class, one validation): {cold['model'] * 1e3:.1f} ms,"
            f" ratio {cold['model'] / cold['floor']:.2f} before any notegen code"
        )
        print(
            f"  the floor plus reading and validating that case file, nothing after: {cold['case'] * 1e3:.1f} ms,"
            f" ratio {cold['case'] / cold['floor']:.2f} (a lower bound of the note)"
        )
        print(
            f"  CPU time (user + system), less sensitive to a busy machine: floor {cold['floor cpu'] * 1e3:.1f} ms, "
            f"note {cold['draft cpu'] * 1e3:.1f} ms, ratio {cold['draft cpu'] / cold['floor cpu']:.2f}"
        )
        stages = cold_stages(runs, env)
        print(f"  where the time goes, median of {runs} fresh interpreters (bench/cold_stages.py), ms:")
        for name, value in stages.items():
            print(f"    {value:6.1f}  {name}")
        print(f"    {sum(stages.values()):6.1f}  total in-process (the interpreter's own start is not in it)")

        figures = batch(count, rounds)
        print(f"\nbatch in one process and thread, {count} invented cases, CPU time, best of {rounds} rounds:")
        for name, seconds in figures.items():
            ratio = seconds["full"] / seconds["alone"]
            print(
                f"  {name:>10}: {1 / seconds['full']:7.0f} notes/s ({seconds['full'] * 1e3:.2f} ms/note); "
                f"validate+render only {seconds['alone'] * 1e3:.2f} ms/note; ratio {ratio:.2f} (target <= 2)"
            )
            print(
                f"  {'':>10}  with the calculations in the baseline (all but the reading and the walk): "
                f"{seconds['calculated'] * 1e3:.2f} ms/note; ratio {seconds['full'] / seconds['calculated']:.2f}"
            )
        census = folder / f"cases-{count}.jsonl"
        census.write_text("".join(json.dumps(case) + "\n" for case in generate(count)), encoding="utf-8")
        wall = cli_batch(census, env)
        print(
            f"  command line: notegen draft --jsonl ({count} lines) --format json: {wall:.2f} s, "
            f"{count / wall:.0f} notes/s with start-up (target >= 1000)"
        )

        pipe = resident_pipe(200 if not args.quick else 50, env)
        print("\none process kept open, one case written at a time (notegen draft --jsonl - --format json):")
        print(
            f"  first result, start-up included: {pipe['first'] * 1e3:.1f} ms; each later result: median "
            f"{pipe['median'] * 1e3:.2f} ms, 95th percentile {pipe['p95'] * 1e3:.2f} ms "
            f"(import floor {cold['floor'] * 1e3:.1f} ms)"
        )

        load = pack_load(env, 20)
        print("\nrule pack (read, validate, check, compile):")
        shipped = shipped_pack_load(env, runs)
        print(
            f"  the shipped pack as a note loads it (engine import included), median of {runs} fresh processes: "
            f"prepared at build time {shipped['prepared']:.1f} ms, from the YAML {shipped['yaml']:.1f} ms"
        )
        print(
            f"  from the YAML, the first time in that process: {load['first']:.1f} ms; "
            f"later loads {load['again']:.1f} ms "
            f"(median of 20); acid-base settings {load['settings']:.1f} ms"
        )

        print("\npeak RSS of notegen draft --jsonl FILE --format json (streamed):")
        rss = {}
        for size in (1000, 10000):
            path = folder / f"stream-{size}.jsonl"
            with path.open("w", encoding="utf-8") as stream:
                for case in generate(size, seed=7):
                    stream.write(json.dumps(case) + "\n")
            rss[size] = peak_rss(path, env)
            print(f"  {size:6,} cases: {rss[size] / 1024:6.1f} MiB")
        print(f"  growth 1,000 -> 10,000: {(rss[10000] - rss[1000]) / 1024:+.1f} MiB")

        memory_sizes = (1000, 10000, 100000) if args.large else (1000, 10000)
        scale_report(
            _notegen_command(), env, folder, count=count, runs=3 if args.quick else 5, memory_sizes=memory_sizes
        )

    print("\nscaling, time of one note when a list grows fourfold (4 = linear, 16 = quadratic):")
    for kind, (small, large, ratio) in scaling(rounds + 2).items():
        print(f"  {kind:>12}: {small} -> {large}: x{ratio:.1f}")


if __name__ == "__main__":
    main()
