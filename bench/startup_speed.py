"""Whole-process speed of the commands a user waits for: start-up included.

Each command runs as its own process, in turn with ``python -c pass`` (the floor: the
interpreter alone), so a change of load hits both alike; the median of ``--repeat`` runs
(default 5) is shown, wall seconds and processor seconds (user + system, the operating
system's own accounting of the finished child), and the ratio to the floor taken pair by pair.
Two more floors show what the libraries alone cost: ``import numpy`` and
``import skyfield.api``. Goals (whole process, wall): ``wheelwork --help`` and a command's own
``--help`` (``drift`` and ``sky`` are timed) at most 0.25 s;
``wheelwork drift tide_office --from 1900-01-01 --years 150 --step 6h --json`` at most
1.0 s. On a shared machine wall time runs long; processor time is the figure to trust then,
and both are judged.

Before timing, the engine's and the interface's bytecode is compiled (as an installation
does), so no run pays for compiling source. The same run then checks what the drift command
imported: none of sympy, mpmath, textual, matplotlib, ezdxf or tomlkit; and what each
command's ``--help`` imported: none of those, nor numpy, skyfield or rich (the command's
computation is imported when it runs).

    python bench/startup_speed.py [--repeat N]
"""

from __future__ import annotations

import argparse
import compileall
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PY = sys.executable
WHEELWORK = [PY, "-m", "engine"]
DRIFT = ["drift", "tide_office", "--from", "1900-01-01", "--years", "150", "--step", "6h",
         "--json"]
FLOOR = [PY, "-c", "pass"]
# (label, command, goal in seconds or None for a floor)
CASES = [
    ("wheelwork --help", [*WHEELWORK, "--help"], 0.25),
    ("wheelwork drift --help", [*WHEELWORK, "drift", "--help"], 0.25),
    ("wheelwork sky --help", [*WHEELWORK, "sky", "--help"], 0.25),
    ("wheelwork drift ... 150 years at 6h --json", [*WHEELWORK, *DRIFT], 1.0),
    ("python -c 'import numpy'", [PY, "-c", "import numpy"], None),
    ("python -c 'import skyfield.api'", [PY, "-c", "import skyfield.api"], None),
]
NOT_FOR_DRIFT = ("sympy", "mpmath", "textual", "matplotlib", "ezdxf", "tomlkit")
NOT_FOR_HELP = ("numpy", "skyfield", "rich", *NOT_FOR_DRIFT)


def _process(cmd: list[str]) -> tuple[float, float]:
    """(wall s, processor s) of one whole process, its output thrown away."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            stdin=subprocess.DEVNULL, cwd=ROOT)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)}: exit {proc.returncode}")
    return wall, usage.ru_utime + usage.ru_stime


def _med(xs):
    return sorted(xs)[len(xs) // 2]


def _drift_imports() -> list[str]:
    """Top-level packages of NOT_FOR_DRIFT that the drift command imports (none expected)."""
    code = ("import sys, io, contextlib\n"
            "from engine.cli import main\n"
            f"with contextlib.redirect_stdout(io.StringIO()): main({DRIFT!r})\n"
            "print(' '.join(sorted({m.split('.')[0] for m in sys.modules})))")
    out = subprocess.run([PY, "-c", code], capture_output=True, text=True, check=True, cwd=ROOT)
    return sorted(set(out.stdout.split()) & set(NOT_FOR_DRIFT))


def _help_imports() -> dict[str, list[str]]:
    """Each command's ``--help``: which of NOT_FOR_HELP it imported (none expected)."""
    code = ("import sys, io, contextlib\n"
            "from engine.cli import COMMANDS, main\n"
            "name = sys.argv[1]\n"
            "with contextlib.redirect_stdout(io.StringIO()): main([name, '--help'])\n"
            "print(' '.join(sorted({m.split('.')[0] for m in sys.modules})))")
    from engine.cli import COMMANDS

    found = {}
    for name in [*COMMANDS, "crank"]:
        out = subprocess.run([PY, "-c", code, name], capture_output=True, text=True, check=True,
                             cwd=ROOT)
        found[name] = sorted(set(out.stdout.split()) & set(NOT_FOR_HELP))
    return found


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="timed runs of each (median shown)")
    args = ap.parse_args()
    for pkg in ("engine", "tui"):
        compileall.compile_dir(ROOT / pkg, quiet=1)
    print(f"whole process, median of {args.repeat}, each in turn with `python -c pass` "
          f"(os.cpu_count() = {os.cpu_count()}, load average "
          f"{os.getloadavg()[0]:.1f}):")
    print(f"  {'command':44s} {'wall s':>7s} {'cpu s':>7s} {'/floor wall':>11s} "
          f"{'/floor cpu':>10s}  goal")
    for label, cmd, goal in CASES:
        _process(cmd), _process(FLOOR)  # warm the file cache
        runs, floors = [], []
        for _ in range(args.repeat):
            runs.append(_process(cmd))
            floors.append(_process(FLOOR))
        wall, cpu = _med([r[0] for r in runs]), _med([r[1] for r in runs])
        rw = _med([a[0] / b[0] for a, b in zip(runs, floors, strict=True)])
        rc = _med([a[1] / max(b[1], 1e-3) for a, b in zip(runs, floors, strict=True)])
        verdict = ""
        if goal is not None:
            verdict = (f"<= {goal} s: {'ok' if wall <= goal else 'over'} by wall, "
                       f"{'ok' if cpu <= goal else 'over'} by processor time")
        print(f"  {label:44s} {wall:7.3f} {cpu:7.3f} {rw:11.2f} {rc:10.2f}  {verdict}")
        fw, fc = _med([f[0] for f in floors]), _med([f[1] for f in floors])
        print(f"  {'  floor beside it: python -c pass':44s} {fw:7.3f} {fc:7.3f}")
    print("  (a loaded machine stretches wall time; processor time is the figure to trust then)")
    found = _drift_imports()
    print(f"drift command imports none of {', '.join(NOT_FOR_DRIFT)}: "
          + ("ok" if not found else f"NO ({', '.join(found)})"))
    helps = _help_imports()
    bad = {k: v for k, v in helps.items() if v}
    print(f"each command's --help ({', '.join(helps)}) imports none of "
          f"{', '.join(NOT_FOR_HELP)}: "
          + ("ok" if not bad else "NO (" + "; ".join(f"{k}: {', '.join(v)}"
                                                     for k, v in bad.items()) + ")"))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
