"""One `notegen draft --jsonl - --format json` process kept open by a pipeline: each result comes back
as soon as its case is written, before standard input is closed.

A pipe is block-buffered, so without a flush per result the reader would wait for the buffer to fill
or for the end of input; these tests would then time out instead of reading a line.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import threading
from queue import Empty, Queue
from typing import IO

import pytest

CASES = [
    {"case": "first", "gas": {"sample": "arterial", "ph": 7.52, "pco2": 47, "hco3": 37}},
    {"case": "second", "gas": {"sample": "arterial", "ph": 7.30, "pco2": 30, "hco3": 14}},
]
COMMAND = "import sys; from notegen.cli.app import main; sys.exit(main())"  # as the console script runs it
WAIT = 60.0  # seconds for one result: generous for a busy 2-core machine; the first includes start-up


def _lines(stream: IO[str], into: Queue[str | None]) -> None:
    for line in stream:
        into.put(line)
    into.put(None)


def _next(lines: Queue[str | None]) -> str | None:
    try:
        return lines.get(timeout=WAIT)
    except Empty:
        pytest.fail(f"no result within {WAIT:g} s although the case was written: output held back")


def test_each_result_arrives_before_the_next_case_is_written() -> None:
    with subprocess.Popen(
        [sys.executable, "-c", COMMAND, "draft", "--jsonl", "-", "--format", "json"],
        stdin=subprocess.PIPE,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env={k: v for k, v in os.environ.items() if k != "PYTHONUNBUFFERED"},  # a pipe is block-buffered, as usual
    ) as process:
        assert process.stdin is not None and process.stdout is not None and process.stderr is not None
        lines: Queue[str | None] = Queue()
        reader = threading.Thread(target=_lines, args=(process.stdout, lines), daemon=True)
        reader.start()
        try:
            for case in CASES:
                process.stdin.write(json.dumps(case) + "\n")
                process.stdin.flush()
                line = _next(lines)
                assert line is not None and line.endswith("\n")
                result = json.loads(line)
                assert result["case"]["label"] == case["case"]  # the answer to this case, not another
                assert process.poll() is None, "the process stays open for the next case"
            process.stdin.write("{not json\n")  # a bad line gets a result too, and the process goes on
            process.stdin.flush()
            refused = _next(lines)
            assert refused is not None and json.loads(refused)["error"]["line"] == 3
            process.stdin.close()
            assert _next(lines) is None  # then the end of output
            assert process.wait(timeout=WAIT) == 2
            assert "2 drafted, 1 rejected" in process.stderr.read()
        finally:
            if process.poll() is None:
                process.kill()
            reader.join(timeout=WAIT)
