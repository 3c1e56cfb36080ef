"""Well over a hundred malformed train files (tests/bad_trains.py) against the loader and solver,
and against every command that reads a train, each in a subprocess with a time limit: every one
is refused with one line naming the file — no traceback, no hang, nothing accepted."""

from __future__ import annotations

import json
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from engine.errors import TrainError
from engine.kinematics import solve
from engine.loader import load_train
from tests.bad_trains import make_cases

ROOT = Path(__file__).resolve().parent.parent
MIN_CASES = 150


def test_loader_and_solver_refuse_every_bad_file(tmp_path):
    cases = make_cases(tmp_path / "cases")
    assert len(cases) >= MIN_CASES
    wrong = []

    def hung(signum, frame):
        raise TimeoutError("no answer in 20 s")

    old = signal.signal(signal.SIGALRM, hung)
    try:
        for label, path in cases:
            signal.alarm(20)
            try:
                solve(load_train(path))
                wrong.append(f"{label}: accepted")
            except TrainError as exc:
                msg = str(exc)
                if "\n" in msg or not msg.startswith(f"{path}: "):
                    wrong.append(f"{label}: {msg!r}")
                elif any(ord(ch) < 32 or ch in "\x7f\u202e" for ch in msg):
                    wrong.append(f"{label}: control characters echoed: {msg!r}")
            except BaseException as exc:  # noqa: BLE001 - exactly what must never happen
                wrong.append(f"{label}: {type(exc).__name__}: {str(exc)[:200]}")
            finally:
                signal.alarm(0)
    finally:
        signal.signal(signal.SIGALRM, old)
    assert not wrong, "\n".join(wrong)


@pytest.mark.parametrize("command", [
    ["ratios"], ["ratios", "--json"], ["check"], ["drift", "--years", "1"],
    ["eclipses", "--years", "1"], ["cut", "--out", "{out}"], ["play"],
])
def test_every_command_refuses_every_bad_file_in_one_line(command, tmp_path):
    extra = [a.replace("{out}", str(tmp_path / "out{i}")) for a in command[1:]]
    run = subprocess.run([sys.executable, "-m", "tests.bad_trains", command[0],
                          str(tmp_path / "cases"), *extra], capture_output=True, text=True,
                         timeout=600, cwd=ROOT)
    assert run.returncode == 0, run.stderr[-2000:]
    results = [json.loads(line) for line in run.stdout.splitlines()]
    assert len(results) >= MIN_CASES
    wrong = []
    for r in results:
        err = r["stderr"].strip()
        if r["exception"]:
            wrong.append(f"{r['label']}: {r['exception']}")
        elif r["code"] != 1 or len(err.splitlines()) != 1:
            wrong.append(f"{r['label']}: exit {r['code']}, stderr {err[:300]!r}")
        elif not err.startswith(f"wheelwork: error: {r['path']}: ") or "Traceback" in err:
            wrong.append(f"{r['label']}: {err[:300]!r}")
    assert not wrong, "\n".join(wrong)
    assert not list(tmp_path.glob("out*")), "a refused train wrote cutting files"
