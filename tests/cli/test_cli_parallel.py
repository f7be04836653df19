"""`draft --jobs N`: the same notes, messages, counts and files as one process, in input order.

Every test compares a pooled run with the single-process run of the same input; nothing here is timed.
"""

from __future__ import annotations

import json
import pickle
import shutil
from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli import outputs, parallel
from notegen.cli.app import _plain_draft_arguments, app
from notegen.cli.outputs import NoteFolder
from notegen.cli.parallel import job_count
from notegen.errors import InputError, UsageError

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
runner = CliRunner()
GOOD = "case: good\ngas: {sample: arterial, ph: 7.49, pco2: 48, hco3: 36}\nchem: {na: 136, k: 3.2, cl: 91}\n"
forked = pytest.mark.skipif(
    parallel.start_context().get_start_method() != "fork",
    reason="the workers see this test's changes only when forked",
)


@pytest.fixture(autouse=True)
def small_chunks(monkeypatch: pytest.MonkeyPatch) -> None:
    # one case per task, two in flight per worker: neighbouring cases land on different workers
    monkeypatch.setattr(parallel, "CHUNK", 1)
    monkeypatch.setattr(parallel, "IN_FLIGHT_PER_WORKER", 2)


@pytest.fixture
def ward(tmp_path: Path) -> Path:
    """The samples, and cases that are refused, among them a pair that would write one note."""
    folder = tmp_path / "ward"
    folder.mkdir()
    for path in SAMPLES:
        shutil.copy(path, folder / path.name)
    (folder / "bed02.yaml").write_text("gas: {ph: 7.49, pco2: [48\n", encoding="utf-8")
    (folder / "bed04.yaml").write_text("chem: {k: 25}\n", encoding="utf-8")
    (folder / "bed05.yml").write_bytes(b"case: \xff\n")
    (folder / "bed06.yaml").write_text(GOOD, encoding="utf-8")
    (folder / "bed06.json").write_text(json.dumps({"case": "other", "gas": {"ph": 7.3, "pco2": 30}}), encoding="utf-8")
    (folder / "bed07.yaml").write_text("gas: &g {ph: 7.5}\nchem: *g\n", encoding="utf-8")
    return folder


def _jsonl(tmp_path: Path) -> Path:
    lines = [json.dumps({"case": f"line {i}", "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36}})
             for i in range(30)]
    lines[4] = "{not json"
    lines[9] = json.dumps({"gas": {"ph": 9.9, "pco2": 40}})
    lines[12] = ""
    lines[20] = json.dumps({"chem": {"k": 25}})
    path = tmp_path / "cases.jsonl"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _run(args: list[str], jobs: int) -> tuple[int, str, str]:
    result = runner.invoke(app, ["draft", *args, "--jobs", str(jobs)])
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    return result.exit_code, result.stdout, result.stderr


def _files(folder: Path) -> dict[str, str]:
    return {p.name: p.read_text(encoding="utf-8") for p in sorted(folder.iterdir())}


@pytest.mark.parametrize("output_format", ["markdown", "json", "text"])
def test_a_folder_to_standard_output_is_the_same_on_two_workers(ward: Path, output_format: str) -> None:
    single = _run([str(ward), "--format", output_format], 1)
    assert single[0] == 2 and single[1].count("demo ") >= len(SAMPLES)  # every sample's label
    assert _run([str(ward), "--format", output_format], 2) == single
    assert _run([str(ward), "--format", output_format], 3) == single


@pytest.mark.parametrize("output_format", ["markdown", "json", "html"])
def test_a_folder_into_a_folder_is_the_same_on_two_workers(ward: Path, tmp_path: Path, output_format: str) -> None:
    single = _run([str(ward), "--out", str(tmp_path / "one"), "--format", output_format], 1)
    pooled = _run([str(ward), "--out", str(tmp_path / "two"), "--format", output_format], 2)
    assert pooled == single
    assert _files(tmp_path / "two") == _files(tmp_path / "one")
    assert len(_files(tmp_path / "one")) == len(SAMPLES) + 1  # bed06 once; the refusals write nothing


def test_errors_are_counted_once_and_the_collision_is_caught_across_workers(ward: Path, tmp_path: Path) -> None:
    code, _, stderr = _run([str(ward), "--out", str(tmp_path / "notes")], 2)
    lines = stderr.splitlines()
    assert code == 2
    assert lines[-1] == f"notegen: {len(SAMPLES) + 1} drafted, 5 rejected"
    collisions = [line for line in lines if "would overwrite" in line]
    assert collisions == [
        f"notegen: {ward}/bed06.yaml: its note would overwrite the note of {ward}/bed06.json (bed06.md); "
        "rename one of the two cases"
    ]
    assert "other" in (tmp_path / "notes" / "bed06.md").read_text(encoding="utf-8")


@pytest.mark.parametrize("output_format", ["json", "markdown"])
def test_json_lines_stay_one_result_per_input_in_order(tmp_path: Path, output_format: str) -> None:
    source = _jsonl(tmp_path)
    single = _run(["--jsonl", str(source), "--format", output_format], 1)
    pooled = _run(["--jsonl", str(source), "--format", output_format], 2)
    assert pooled == single
    if output_format == "json":
        # one result per input line, each naming its line; a refused or blank line has an `error` object
        results = [json.loads(line) for line in pooled[1].splitlines()]
        assert [result["input"]["line"] for result in results] == list(range(1, 31))
        refused = [number for number, result in enumerate(results) if "error" in result]
        assert refused == [4, 9, 12, 20]
        assert [results[i]["input"]["label"] for i in range(30) if i not in refused] == [
            f"line {i}" for i in range(30) if i not in refused
        ]
        # a refusal's field crosses from the worker whole (its class and fields, not only its message)
        assert results[9]["error"]["field"] is not None and results[20]["error"]["field"] is not None


def test_json_lines_into_a_folder_are_the_same_on_two_workers(tmp_path: Path) -> None:
    source = _jsonl(tmp_path)
    single = _run(["--jsonl", str(source), "--out", str(tmp_path / "one")], 1)
    assert _run(["--jsonl", str(source), "--out", str(tmp_path / "two")], 2) == single
    assert _files(tmp_path / "two") == _files(tmp_path / "one")


def test_json_lines_from_standard_input_on_two_workers(tmp_path: Path) -> None:
    text = _jsonl(tmp_path).read_text(encoding="utf-8")
    single = runner.invoke(app, ["draft", "--jsonl", "-", "--format", "json"], input=text)
    pooled = runner.invoke(app, ["draft", "--jsonl", "-", "--format", "json", "--jobs", "2"], input=text)
    assert (pooled.exit_code, pooled.stdout, pooled.stderr) == (single.exit_code, single.stdout, single.stderr)


def test_a_case_on_standard_input_among_files_is_read_once(tmp_path: Path) -> None:
    args = ["draft", str(SAMPLES[0]), "-", str(SAMPLES[1]), "--format", "json"]
    single = runner.invoke(app, args, input=GOOD)
    pooled = runner.invoke(app, [*args, "--jobs", "2"], input=GOOD)
    assert single.exit_code == 0
    assert (pooled.exit_code, pooled.stdout, pooled.stderr) == (single.exit_code, single.stdout, single.stderr)


@forked
def test_an_unexpected_error_in_a_worker_is_reported_as_in_one_process(
    ward: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    from notegen.pipeline import Drafter

    original = Drafter.draft

    class Unpicklable(Exception):  # a local class: cannot travel back from a worker as it is
        pass

    def broken(self: Drafter, case: object, options: object) -> str:
        label = getattr(case, "label", None)
        if label == "good":
            raise Unpicklable("the pickle jar is empty")
        if label == "other":
            raise RuntimeError("a plain bug")
        return original(self, case, options)  # type: ignore[arg-type]

    monkeypatch.setattr(Drafter, "draft", broken)
    single = _run([str(ward), "--format", "text"], 1)
    assert single[0] == 1
    assert "unexpected error (Unpicklable): the pickle jar is empty" in single[2]
    assert "unexpected error (RuntimeError): a plain bug" in single[2]
    assert _run([str(ward), "--format", "text"], 2) == single


@forked
def test_an_interrupted_batch_leaves_only_whole_notes(
    ward: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    _run([str(ward), "--out", str(tmp_path / "whole")], 1)
    from notegen.cli import batch

    written: list[Path] = []
    original = batch.write_atomically

    def interrupted(path: Path, text: str) -> None:
        if len(written) == 3:
            raise KeyboardInterrupt
        original(path, text)
        written.append(path)

    monkeypatch.setattr(batch, "write_atomically", interrupted)
    result = runner.invoke(app, ["draft", str(ward), "--out", str(tmp_path / "cut"), "--jobs", "2"])
    assert result.exit_code == 130
    cut = _files(tmp_path / "cut")
    assert len(cut) == 3  # no temporary file, no markers' folder, no partial note
    whole = _files(tmp_path / "whole")
    assert all(cut[name] == whole[name] for name in cut)


def test_the_markers_live_on_disk_and_go_when_the_run_ends(tmp_path: Path) -> None:
    with NoteFolder(tmp_path) as notes:
        assert notes.markers is not None and notes.markers.parent == tmp_path
        assert notes.markers.name.startswith(outputs.MARKERS_PREFIX)
        assert notes.claim("a.md", "cases/a.yaml") == tmp_path / "a.md"
        assert notes.claim("b.md", "cases/b.yaml") == tmp_path / "b.md"
        with pytest.raises(InputError, match=r"cases/a\.json: its note would overwrite the note of cases/a\.yaml"):
            notes.claim("a.md", "cases/a.json")
    assert list(tmp_path.iterdir()) == []


def test_markers_without_hard_links(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    def no_links(source: object, target: object) -> None:
        raise PermissionError(1, "Operation not permitted")

    monkeypatch.setattr(outputs.os, "link", no_links)
    with NoteFolder(tmp_path) as notes:
        notes.claim("a.md", "cases/a.yaml")
        with pytest.raises(InputError, match=r"the note of cases/a\.yaml \(a\.md\)"):
            notes.claim("a.md", "cases/a.json")


def test_a_label_with_a_line_break_is_named_whole(tmp_path: Path) -> None:
    with NoteFolder(tmp_path) as notes:
        notes.claim("b.md", "cases/b\nc.yaml")
        notes.claim("a.md", "cases/a.yaml")
        with pytest.raises(InputError, match=r"the note of cases/b\nc\.yaml \(b\.md\)"):
            notes.claim("b.md", "cases/b.json")


def test_a_note_from_an_earlier_run_is_replaced_not_refused(tmp_path: Path) -> None:
    out = tmp_path / "notes"
    first = _run([str(SAMPLES[0]), str(SAMPLES[1]), "--out", str(out)], 2)
    again = _run([str(SAMPLES[0]), str(SAMPLES[1]), "--out", str(out)], 2)
    assert first == again and first[0] == 0
    assert sorted(_files(out)) == sorted(f"{p.stem}.md" for p in SAMPLES[:2])


def test_job_count() -> None:
    assert job_count(3) == 3
    assert job_count(0) >= 1
    with pytest.raises(UsageError):
        job_count(-1)


def test_jobs_is_read_alike_by_both_parsers(tmp_path: Path) -> None:
    assert _plain_draft_arguments(["draft", "a.yaml", "--jobs", "4"])["jobs"] == 4  # type: ignore[index]
    assert _plain_draft_arguments(["draft", "a.yaml", "-j", "0"])["jobs"] == 0  # type: ignore[index]
    assert _plain_draft_arguments(["draft", "a.yaml", "--jobs", "-1"]) is None  # typer refuses it
    result = runner.invoke(app, ["draft", str(SAMPLES[0]), str(SAMPLES[1]), "--jobs", "-1"])
    assert result.exit_code == 2 and "--jobs" in result.stderr


def test_a_stand_in_error_travels_with_its_name() -> None:
    error = pickle.loads(pickle.dumps(parallel.stand_in("LocalError", "went wrong")))
    assert type(error).__name__ == "LocalError" and str(error) == "went wrong"


def test_the_markers_are_removed_without_listing_them_all_at_once(tmp_path: Path) -> None:
    import tracemalloc

    folder = tmp_path / "markers"
    folder.mkdir()
    (folder / "seed").touch()
    for index in range(5000):
        (folder / f"note-{index:05d}.md").hardlink_to(folder / "seed")
    tracemalloc.start()
    try:
        outputs._remove_streaming(folder)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert not folder.exists()
    assert peak < 200_000, f"peak {peak:,} bytes"  # a list of 5,000 entries (shutil.rmtree's way) is far more


def test_workers_started_by_a_fork_server_give_the_same_notes(
    ward: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # the start method of Python 3.12 and later: workers load notegen themselves, nothing inherited
    import multiprocessing

    if "forkserver" not in multiprocessing.get_all_start_methods():
        pytest.skip("no fork server on this platform")
    single = _run([str(ward), "--out", str(tmp_path / "one"), "--format", "json"], 1)
    monkeypatch.setattr(parallel, "start_context", lambda: multiprocessing.get_context("forkserver"))
    assert _run([str(ward), "--out", str(tmp_path / "two"), "--format", "json"], 2) == single
    assert _files(tmp_path / "two") == _files(tmp_path / "one")


# --- The batch's own guards hold whichever process drafted the case ------------------------------------


def test_a_refused_case_or_blank_line_removes_its_stale_note_on_two_workers(ward: Path, tmp_path: Path) -> None:
    out = tmp_path / "notes"
    for name in ("bed02.md", "bed04.md", "bed06.md"):  # notes of an earlier run; bed02 and bed04 are now refused
        (out / name).parent.mkdir(exist_ok=True)
        (out / name).write_text("an earlier run's note\n", encoding="utf-8")
    code, _, stderr = _run([str(ward), "--output-folder", str(out)], 2)
    assert code == 2
    assert not (out / "bed02.md").exists() and not (out / "bed04.md").exists()
    assert f"notegen: the earlier note {out}/bed02.md was removed" in stderr
    assert "other" in (out / "bed06.md").read_text(encoding="utf-8")  # written this run: kept, not removed
    lines = _jsonl(tmp_path)
    first = tmp_path / "lines"
    assert _run(["--jsonl", str(lines), "--output-folder", str(first)], 1)[0] == 2
    stale = {name: first / name for name in ("cases-5.md", "cases-13.md")}  # a line refused, a blank line
    for path in stale.values():
        path.write_text("an earlier run's note\n", encoding="utf-8")
    assert _run(["--jsonl", str(lines), "--output-folder", str(first)], 2)[0] == 2
    assert not any(path.exists() for path in stale.values())


def test_a_note_that_cannot_be_written_is_that_case_only_on_two_workers(ward: Path, tmp_path: Path) -> None:
    single_out, pooled_out = tmp_path / "one", tmp_path / "two"
    for out in (single_out, pooled_out):
        (out / "bed06.md").mkdir(parents=True)  # a folder where bed06.json's note should go
    single = _run([str(ward), "--output-folder", str(single_out)], 1)
    pooled = _run([str(ward), "--output-folder", str(pooled_out)], 2)
    assert pooled[0] == single[0] == 2
    assert pooled[2].replace(str(pooled_out), "OUT") == single[2].replace(str(single_out), "OUT")
    assert f"{ward}/bed06.json: drafted, but cannot write {pooled_out}/bed06.md" in pooled[2]
    assert pooled[2].endswith(f"notegen: {len(SAMPLES)} drafted, 4 rejected, 2 not written\n")
    # bed06.json's note was not written, so bed06.yaml (the next with that name) may claim it; it cannot
    # write there either
    assert f"{ward}/bed06.yaml: drafted, but cannot write" in pooled[2]


def test_a_released_name_may_be_claimed_again(tmp_path: Path) -> None:
    with NoteFolder(tmp_path) as notes:
        notes.claim("a.md", "cases/a.yaml")
        assert notes.claimed("a.md") and not notes.claimed("b.md")
        notes.release("a.md")
        assert not notes.claimed("a.md")
        assert notes.claim("a.md", "cases/a.json") == tmp_path / "a.md"


def test_sigterm_during_a_pooled_batch_prints_the_summary(
    ward: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import os
    import signal

    from notegen.cli import batch

    written: list[Path] = []
    original = batch.write_atomically

    def terminated(path: Path, text: str) -> None:
        if len(written) == 2:
            os.kill(os.getpid(), signal.SIGTERM)
        original(path, text)
        written.append(path)

    monkeypatch.setattr(batch, "write_atomically", terminated)
    code, _, stderr = _run([str(ward), "--output-folder", str(tmp_path / "cut")], 2)
    assert code == 143
    last = stderr.splitlines()[-1]
    assert last.startswith("notegen: 2 drafted, ") and "(terminated): that case and any after it" in last
    assert sorted(p.name for p in (tmp_path / "cut").iterdir()) == sorted(p.name for p in written)


@pytest.mark.parametrize("jobs", [1, 2])
def test_a_note_is_never_written_over_an_input_reached_through_a_hard_link(tmp_path: Path, jobs: int) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    texts = {f"bed0{i}.json": json.dumps({"case": f"bed {i}", "gas": {"sample": "arterial", "ph": 7.49,
                                                                      "pco2": 48, "hco3": 36}}) for i in (1, 2)}
    for name, text in texts.items():
        (ward / name).write_text(text, encoding="utf-8")
    out = tmp_path / "notes"
    out.mkdir()
    (out / "bed01.json").hardlink_to(ward / "bed01.json")  # the note's file is the first case itself
    code, _, stderr = _run([str(ward), "--output-folder", str(out), "--format", "json"], jobs)
    assert code == 2
    assert f"notegen: {ward}/bed01.json: its note {out}/bed01.json would overwrite an input file" in stderr
    assert (ward / "bed01.json").read_text(encoding="utf-8") == texts["bed01.json"]  # neither written nor removed
    assert json.loads((out / "bed02.json").read_text(encoding="utf-8"))["case"]["label"] == "bed 2"
