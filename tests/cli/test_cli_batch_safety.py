"""Batches that never lose their place, never stop silently and never overwrite an input.

Every case here is invented. Each test reproduces a finding of an adversarial run and failed
before the fix it guards.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.case.model import Case
from notegen.cli import batch as batch_module
from notegen.cli.app import app
from notegen.cli.batch import run_batch, write_atomically
from notegen.errors import UsageError
from notegen.pipeline import Drafter, DraftOptions

runner = CliRunner()
GOOD = "case: {label}\ngas: {{sample: arterial, ph: 7.49, pco2: 48, hco3: 36}}\n"
COMMAND = "import sys; from notegen.cli.app import main; sys.exit(main())"  # as the console script runs it


def _line(label: str, **sections: object) -> str:
    case: dict[str, object] = {"case": label, "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36}}
    case.update(sections)
    return json.dumps(case)


def _ward(folder: Path, *labels: str) -> Path:
    folder.mkdir(exist_ok=True)
    for label in labels:
        (folder / f"{label}.yaml").write_text(GOOD.format(label=label), encoding="utf-8")
    return folder


# --- JSON Lines keep their place --------------------------------------------------------------------

def test_mixed_lines_on_standard_input_give_one_result_per_line_in_order() -> None:
    lines = [
        _line("bed 1"),
        "{not json",
        _line("bed 3", chem={"k": 25}),
        _line("bed \ud800 4"),  # JSON's escape for an unpaired surrogate
        _line("bed 5"),
        '["a list"]',
        _line("bed 7", context={"meds": ["furo\udcffsemide"]}),
    ]
    result = runner.invoke(app, ["draft", "--jsonl", "-", "--format", "json"], input="\n".join(lines) + "\n")
    assert result.exit_code == 2
    stdout = result.stdout_bytes.decode("utf-8")  # valid UTF-8: no surrogate written raw
    rows = [json.loads(row) for row in stdout.splitlines()]
    assert len(rows) == len(lines)
    assert [row["input"]["line"] for row in rows] == [1, 2, 3, 4, 5, 6, 7]
    assert all(row["input"]["file"] == "<stdin>" for row in rows)
    assert [row["input"]["label"] for row in rows] == ["bed 1", None, "bed 3", None, "bed 5", None, "bed 7"]
    assert ["error" in row for row in rows] == [False, True, True, True, False, True, True]
    assert rows[0]["case"]["label"] == "bed 1" and rows[4]["case"]["label"] == "bed 5"
    assert rows[2]["error"]["field"] == "chem.k" and rows[2]["error"]["line"] == 3
    assert rows[3]["error"]["field"] == "case" and "unpaired surrogate" in rows[3]["error"]["message"]
    assert rows[6]["error"]["field"] == "context.meds[0]"
    for row in rows:
        if "error" in row:  # the same message on standard error
            assert f"notegen: {row['error']['message']}" in result.stderr
    assert result.stderr.endswith("notegen: 2 drafted, 5 rejected\n")


def test_a_batch_of_files_on_standard_output_names_each_input(tmp_path: Path) -> None:
    ward = _ward(tmp_path / "ward", "bed01", "bed03")
    (ward / "bed02.yaml").write_text("case: bed02\nchem: {k: 25}\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", str(ward), "--format", "json"])
    assert result.exit_code == 2
    rows = [json.loads(row) for row in result.stdout.splitlines()]
    assert [row["input"] for row in rows] == [
        {"file": f"{ward}/bed01.yaml", "line": None, "label": "bed01"},
        {"file": f"{ward}/bed02.yaml", "line": None, "label": None},
        {"file": f"{ward}/bed03.yaml", "line": None, "label": "bed03"},
    ]
    assert rows[1]["error"]["field"] == "chem.k"


# --- A batch never stops silently ------------------------------------------------------------------

def test_a_directory_where_a_note_should_go_is_that_case_only(tmp_path: Path) -> None:
    ward = _ward(tmp_path / "ward", "bed01", "bed02", "bed03")
    out = tmp_path / "notes"
    (out / "bed02.md").mkdir(parents=True)
    result = runner.invoke(app, ["draft", str(ward), "--out", str(out)])
    assert result.exit_code == 2
    assert f"notegen: {ward}/bed02.yaml: drafted, but cannot write {out}/bed02.md" in result.stderr
    assert result.stderr.endswith("notegen: 2 drafted, 0 rejected, 1 not written\n")
    assert (out / "bed01.md").is_file() and (out / "bed03.md").is_file()


def test_a_full_disk_fails_each_case_and_every_case_is_attempted(tmp_path: Path,
                                                                   monkeypatch: pytest.MonkeyPatch) -> None:
    ward = _ward(tmp_path / "ward", *(f"bed{i:02}" for i in range(1, 9)))
    out = tmp_path / "notes"
    real = batch_module._write_atomically
    calls: list[Path] = []

    def filling(path: Path, text: str) -> None:
        calls.append(path)
        if len(calls) > 3:
            raise UsageError(f"cannot write {path}: No space left on device")
        real(path, text)

    monkeypatch.setattr(batch_module, "_write_atomically", filling)
    result = runner.invoke(app, ["draft", str(ward), "--out", str(out)])
    assert result.exit_code == 2
    assert len(calls) == 8  # every case attempted
    assert sorted(p.name for p in out.iterdir()) == ["bed01.md", "bed02.md", "bed03.md"]
    assert result.stderr.count("No space left on device") == 5
    assert result.stderr.endswith("notegen: 3 drafted, 0 rejected, 5 not written\n")


class _Interrupting(Drafter):
    def __init__(self, on: str, signum: int | None = None) -> None:
        super().__init__()
        self.on = on
        self.signum = signum

    def draft(self, case: Case, options: DraftOptions | None = None) -> str:
        if case.label == self.on:
            if self.signum is None:
                raise KeyboardInterrupt
            os.kill(os.getpid(), self.signum)
        return super().draft(case, options)


@pytest.mark.parametrize("signum", [None, signal.SIGTERM], ids=["ctrl-c", "sigterm"])
def test_a_stopped_batch_prints_its_summary_and_leaves_no_temporary_file(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], signum: int | None
) -> None:
    ward = _ward(tmp_path / "ward", "bed01", "bed02", "bed03")
    out = tmp_path / "notes"
    status = run_batch([str(ward)], _Interrupting("bed02", signum), DraftOptions(), out_dir=out, jsonl=False,
                       window_hours=24.0)
    assert status == (130 if signum is None else 143)
    why = "interrupted" if signum is None else "terminated"
    assert capsys.readouterr().err.splitlines()[-1] == (
        f"notegen: 1 drafted, 0 rejected; stopped during {ward}/bed02.yaml ({why}): "
        "that case and any after it were not drafted")
    assert sorted(p.name for p in out.iterdir()) == ["bed01.md"]
    assert signal.getsignal(signal.SIGTERM) is signal.SIG_DFL  # the handler is put back


@pytest.mark.parametrize("signum", [signal.SIGINT, signal.SIGTERM], ids=["sigint", "sigterm"])
def test_a_signal_during_a_write_arrives_after_it(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                  signum: int) -> None:
    target = tmp_path / "note.md"
    real_replace = os.replace

    def replace_after_a_signal(source: str, destination: Path) -> None:
        os.kill(os.getpid(), signum)  # arrives while the temporary file exists
        real_replace(source, destination)

    monkeypatch.setattr(batch_module.os, "replace", replace_after_a_signal)
    previous = signal.signal(signal.SIGTERM, signal.default_int_handler)
    try:
        with pytest.raises(KeyboardInterrupt):
            write_atomically(target, "the note\n")
    finally:
        signal.signal(signal.SIGTERM, previous)
    assert [p.name for p in tmp_path.iterdir()] == ["note.md"]  # written whole, no .part left
    assert target.read_text(encoding="utf-8") == "the note\n"


# --- Never overwrite an input ------------------------------------------------------------------------

def test_a_note_is_never_written_over_its_own_case(tmp_path: Path) -> None:
    case = tmp_path / "self.json"
    text = json.dumps({"case": "self", "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36}})
    case.write_text(text, encoding="utf-8")
    result = runner.invoke(app, ["draft", str(case), "-o", str(case), "--format", "json"])
    assert result.exit_code == 2 and result.stdout == ""
    assert "would overwrite that input" in result.stderr
    assert case.read_text(encoding="utf-8") == text


def test_an_out_folder_holding_the_cases_takes_no_case_file_extension(tmp_path: Path) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    bed = ward / "bed01.json"
    text = _line("bed 1")
    bed.write_text(text, encoding="utf-8")
    result = runner.invoke(app, ["draft", str(ward), "--out", str(ward), "--format", "json"])
    assert result.exit_code == 2
    assert f"--output-folder {ward} holds the input" in result.stderr
    assert bed.read_text(encoding="utf-8") == text
    markdown = runner.invoke(app, ["draft", str(ward), "--out", str(ward)])  # .md notes cannot be case files
    assert markdown.exit_code == 0 and (ward / "bed01.md").is_file()
    assert bed.read_text(encoding="utf-8") == text


def test_an_out_folder_reached_another_way_is_still_the_input_folder(tmp_path: Path) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    case = ward / "bed01.json"
    text = _line("bed 1")
    case.write_text(text, encoding="utf-8")
    (tmp_path / "notes").symlink_to(ward)
    for arguments in ([str(case)], [str(ward)], [str(case), str(case)]):
        result = runner.invoke(app, ["draft", *arguments, "--out", str(tmp_path / "notes"), "--format", "json"])
        assert result.exit_code == 2 and "holds the input" in result.stderr
        assert case.read_text(encoding="utf-8") == text


# --- No stale and no skipped files ----------------------------------------------------------------

def test_a_refused_case_leaves_no_note_of_an_earlier_run(tmp_path: Path) -> None:
    ward = _ward(tmp_path / "ward", "bed01", "bed02")
    out = tmp_path / "notes"
    assert runner.invoke(app, ["draft", str(ward), "--out", str(out)]).exit_code == 0
    assert sorted(p.name for p in out.iterdir()) == ["bed01.md", "bed02.md"]
    (ward / "bed02.yaml").write_text("case: bed02\nchem: {k: 25}\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", str(ward), "--out", str(out)])
    assert result.exit_code == 2
    assert sorted(p.name for p in out.iterdir()) == ["bed01.md"]
    assert f"notegen: the earlier note {out}/bed02.md was removed" in result.stderr


def test_a_line_now_refused_or_blank_leaves_no_note_of_an_earlier_run(tmp_path: Path) -> None:
    out = tmp_path / "notes"
    first = "\n".join([_line("a"), _line("b"), _line("c")]) + "\n"
    assert runner.invoke(app, ["draft", "--jsonl", "-", "--out", str(out)], input=first).exit_code == 0
    assert sorted(p.name for p in out.iterdir()) == ["stdin-1.md", "stdin-2.md", "stdin-3.md"]
    second = "\n".join([_line("a"), "", '{"case": "c", "chem": {"k": 25}}']) + "\n"
    result = runner.invoke(app, ["draft", "--jsonl", "-", "--out", str(out)], input=second)
    assert result.exit_code == 2
    assert sorted(p.name for p in out.iterdir()) == ["stdin-1.md"]


def test_every_case_like_entry_of_a_folder_is_drafted_or_reported(tmp_path: Path) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    (ward / "a.YAML").write_text(GOOD.format(label="upper"), encoding="utf-8")
    (ward / "b.Json").write_text(_line("mixed"), encoding="utf-8")
    (ward / "c.yml").write_text(GOOD.format(label="short"), encoding="utf-8")
    (ward / "d.yaml").symlink_to(ward / "missing.yaml")
    (ward / "e.yaml").symlink_to(ward / "e.yaml")
    (ward / "older").mkdir()
    (ward / "notes.txt").write_text("not a case", encoding="utf-8")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(ward), "--out", str(out)])
    assert result.exit_code == 2
    assert sorted(p.name for p in out.iterdir()) == ["a.md", "b.md", "c.md"]
    assert f"notegen: {ward}: subfolders are not read (give them as folders of their own): older" in result.stderr
    assert f"notegen: {ward}/d.yaml: looks like a case file but cannot be read (a symbolic link)" in result.stderr
    assert f"notegen: {ward}/e.yaml: looks like a case file but cannot be read (a symbolic link)" in result.stderr
    assert result.stderr.endswith("notegen: 3 drafted, 2 rejected\n")


# --- Standard output and numeric options --------------------------------------------------------------

def test_standard_output_is_utf8_whatever_the_locale(tmp_path: Path) -> None:
    case = tmp_path / "bed.yaml"
    case.write_text(GOOD.format(label="bed"), encoding="utf-8")
    env = {**os.environ, "PYTHONIOENCODING": "ascii", "LC_ALL": "C", "PYTHONUTF8": "0"}
    done = subprocess.run([sys.executable, "-c", COMMAND, "draft", str(case)], capture_output=True, env=env,
                          timeout=120, check=False)
    assert done.returncode == 0, done.stderr
    assert "–".encode() in done.stdout  # the range dash of the paragraph, in UTF-8


def test_a_closed_pipe_ends_quietly(tmp_path: Path) -> None:
    ward = _ward(tmp_path / "ward", *(f"bed{i:02}" for i in range(1, 40)))
    with subprocess.Popen([sys.executable, "-c", COMMAND, "draft", str(ward)], stdout=subprocess.PIPE,
                          stderr=subprocess.PIPE) as process:
        assert process.stdout is not None and process.stderr is not None
        process.stdout.readline()
        process.stdout.close()  # as `| head -1` does
        status = process.wait(timeout=120)
        errors = process.stderr.read().decode()
    assert status == 141
    assert "unexpected error" not in errors and "Traceback" not in errors and "Exception ignored" not in errors
    assert "(standard output was closed)" in errors


@pytest.mark.parametrize("value", ["inf", "nan", "1e300"])
def test_a_window_that_is_not_a_finite_number_of_hours_is_a_usage_error(tmp_path: Path, value: str) -> None:
    case = tmp_path / "bed.yaml"
    case.write_text(GOOD.format(label="bed"), encoding="utf-8")
    result = runner.invoke(app, ["draft", str(case), "--window-hours", value])
    assert result.exit_code == 2 and result.stdout == ""
    assert "--window-hours" in result.stderr and "Traceback" not in result.stderr


@pytest.mark.parametrize(("signum", "status", "why"), [(signal.SIGTERM, 143, "terminated"),
                                                        (signal.SIGINT, 130, "interrupted")], ids=["term", "int"])
def test_a_resident_batch_stopped_by_a_signal_prints_its_summary(tmp_path: Path, signum: int, status: int,
                                                                 why: str) -> None:
    out = tmp_path / "notes"
    with subprocess.Popen([sys.executable, "-c", COMMAND, "draft", "--jsonl", "-", "--out", str(out)],
                          stdin=subprocess.PIPE, stderr=subprocess.PIPE, text=True) as process:
        assert process.stdin is not None and process.stderr is not None
        process.stdin.write(_line("bed 1") + "\n" + _line("bed 2") + "\n")
        process.stdin.flush()
        deadline = 120.0
        started = time.monotonic()
        while len(list(out.glob("*.md"))) < 2 and time.monotonic() - started < deadline:
            time.sleep(0.05)
        time.sleep(0.5)  # the second note is counted, and the process waits for the next line
        process.send_signal(signum)
        assert process.wait(timeout=deadline) == status
        errors = process.stderr.read()
    summary = f"notegen: 2 drafted, 0 rejected; stopped ({why}): any cases after these were not drafted"
    assert errors.splitlines()[-1] == summary
    assert sorted(p.name for p in out.iterdir()) == ["stdin-1.md", "stdin-2.md"]  # no temporary file left
