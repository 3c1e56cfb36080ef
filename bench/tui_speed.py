"""Interface speed as a person sees it: keys typed into a pseudo-terminal, screen updates read
back from it.

Runs the real ``wheelwork`` command (the default demo train) in a pseudo-terminal at 80×24 and
160×50, the way a user runs it, answers the terminal queries Textual makes (so the app uses
synchronized output: every screen update arrives between ``ESC[?2026h`` and ``ESC[?2026l``),
writes keys to it and reads the terminal output back. Beside it, in the same run and the same
terminal, a peer: the smallest Textual app that answers the same keys by changing one line of
text — the floor any Textual interface of that size pays for a screen update.

* keystroke → finished screen update: from writing the key's bytes to the end of the last
  synchronized-update frame it causes (the output then stays quiet for QUIET_S); p50 and p95;
  goal p95 ≤ 50 ms at both sizes;
* continuous cranking (space, at 300 turns/s): complete screen updates per second over
  RUN_S seconds and the longest gap between them; backlog: how long the screen keeps changing
  after the key that stops the crank (a queue of late frames would keep painting); goal ≥ 20
  updates/s and no backlog (updates stop within BACKLOG_S);
* processor time per screen update (user + system time of the app's process, read from
  /proc, over the keystrokes and over the running window): what an update costs whatever
  else the machine is doing, where the wall times above grow with its load;
* an edit, for every demo train in ``engine/trains/``: ``w`` opens the parts screen, the
  first wheel is picked (shift+tab to the list, ↓, Enter), its teeth typed one more (then
  back), Enter; from that Enter to the end of the last frame it causes — the train solved
  again, its ratio rows (file → now) and the readings at the date on the bench redrawn.
  p50 and p95; goal p95 ≤ 100 ms. The output after each Enter must show the "changed"
  line, or the edit counts as failed.

The machine may be shared: the figures move with its load, the ratios to the peer much less.
Run: ``python bench/tui_speed.py`` (about two minutes); ``--edits`` measures only the edits,
``--crank`` only the keys and cranking. ``TUI_BENCH_KEYS`` (default 60) and
``TUI_BENCH_EDITS`` (default 12 per train) set the counts.
"""

from __future__ import annotations

import fcntl
import os
import pty
import select
import shutil
import signal
import statistics
import struct
import sys
import tempfile
import termios
import threading
import time
from pathlib import Path

TRAINS = Path(__file__).resolve().parent.parent / "engine" / "trains"

SYNC_START = b"\x1b[?2026h"
SYNC_END = b"\x1b[?2026l"
QUERY_SYNC = b"\x1b[?2026$p"
QUIET_S = 0.08  # no output for this long: the update is finished
BACKLOG_S = 0.15  # after the stop key, screen updates must end within this
RUN_S = 4.0
EDIT_GOAL_MS = 100.0
KEYS_GOAL_MS = 50.0

# keys as a terminal sends them, and what they do on the bench (moves that cancel out)
KEYS = [("→", b"\x1b[C"), ("←", b"\x1b[D"), ("↑", b"\x1b[A"), ("↓", b"\x1b[B"), ("t", b"t"),
        ("t", b"t"), ("]", b"]"), ("[", b"["), ("o", b"o"), ("o", b"o")]

PEER = r'''
from textual.app import App
from textual.binding import Binding
from textual.widgets import Footer, Static

class Peer(App):
    BINDINGS = [Binding(k, "bump", k) for k in
                ("right", "left", "up", "down", "t", "o", "left_square_bracket",
                 "right_square_bracket", "space", "full_stop", "q")]
    n = 0
    def compose(self):
        yield Static("0", id="n")
        yield Footer()
    def action_bump(self):
        self.n += 1
        self.query_one("#n", Static).update(str(self.n))
    def key_q(self):
        self.exit()

Peer().run()
'''


class Terminal:
    """A program in a pseudo-terminal of ``cols`` × ``rows``; a thread reads its output and
    notes when each synchronized-update frame ends."""

    def __init__(self, argv: list[str], cols: int, rows: int):
        self.frames: list[float] = []  # times at which a frame ended
        self.last_output = time.perf_counter()
        self.bytes = 0
        self._tail = b""
        #: when not None, every byte of output is appended here (see ``capture``)
        self.captured: bytearray | None = None
        pid, fd = pty.fork()
        if pid == 0:  # the child: the program, with a terminal of this size
            os.environ.update(TERM="xterm-256color", COLUMNS=str(cols), LINES=str(rows),
                              COLORTERM="truecolor")
            os.environ.pop("TEXTUAL", None)
            # the app keeps recent trains in its config folder: give it one of its own,
            # so a bench run leaves the user's list alone
            os.environ["XDG_CONFIG_HOME"] = tempfile.mkdtemp(prefix="wheelwork-bench-")
            try:
                os.execvp(argv[0], argv)
            finally:
                os._exit(127)
        self.pid, self.fd = pid, fd
        fcntl.ioctl(fd, termios.TIOCSWINSZ, struct.pack("HHHH", rows, cols, 0, 0))
        self._stop = False
        self._thread = threading.Thread(target=self._read, daemon=True)
        self._thread.start()

    def _read(self) -> None:
        while not self._stop:
            ready, _, _ = select.select([self.fd], [], [], 0.05)
            if not ready:
                continue
            try:
                data = os.read(self.fd, 65536)
            except OSError:
                return
            if not data:
                return
            now = time.perf_counter()
            self.last_output = now
            self.bytes += len(data)
            if self.captured is not None:
                self.captured += data
            buf = self._tail + data
            if QUERY_SYNC in buf:  # say we support synchronized output, as modern terminals do
                os.write(self.fd, b"\x1b[?2026;2$y")
            self.frames += [now] * buf.count(SYNC_END)
            self._tail = buf[-16:].replace(SYNC_END, b"").replace(QUERY_SYNC, b"")

    def send(self, data: bytes) -> float:
        t = time.perf_counter()
        os.write(self.fd, data)
        return t

    def cpu_s(self) -> float:
        """Processor time (user + system) the program has used so far, in seconds."""
        try:
            with open(f"/proc/{self.pid}/stat", "rb") as f:
                fields = f.read().rsplit(b")", 1)[1].split()
        except OSError:
            return float("nan")
        return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")

    def settle(self, quiet_s: float = QUIET_S, timeout_s: float = 10.0) -> None:
        """Wait until the output has been quiet for ``quiet_s``."""
        end = time.perf_counter() + timeout_s
        while time.perf_counter() < end:
            if time.perf_counter() - self.last_output >= quiet_s:
                return
            time.sleep(0.005)

    def wait_frames(self, n: int, timeout_s: float = 30.0) -> bool:
        end = time.perf_counter() + timeout_s
        while time.perf_counter() < end:
            if len(self.frames) >= n:
                return True
            time.sleep(0.01)
        return False

    def close(self) -> None:
        try:
            os.kill(self.pid, signal.SIGTERM)
        except ProcessLookupError:
            pass
        for _ in range(100):
            done, _ = os.waitpid(self.pid, os.WNOHANG)
            if done:
                break
            time.sleep(0.02)
        else:
            os.kill(self.pid, signal.SIGKILL)
            os.waitpid(self.pid, 0)
        self._stop = True
        self._thread.join(1.0)
        os.close(self.fd)


def pct(values: list[float], q: float) -> float:
    values = sorted(values)
    return values[min(int(round(q / 100 * (len(values) - 1))), len(values) - 1)]


def keystrokes(term: Terminal, n: int) -> tuple[list[float], int, float]:
    """Per key: ms from writing it to the end of the last frame it caused; keys that caused
    none; processor ms per key (from before the first key to the end of the last update)."""
    times, missed = [], 0
    term.settle()
    cpu0 = term.cpu_s()
    for i in range(n):
        term.settle()
        before = len(term.frames)
        t0 = term.send(KEYS[i % len(KEYS)][1])
        end = time.perf_counter() + 3.0
        while len(term.frames) == before and time.perf_counter() < end:
            time.sleep(0.001)
        if len(term.frames) == before:
            missed += 1
            continue
        term.settle()
        times.append((term.frames[-1] - t0) * 1000)
    return times, missed, (term.cpu_s() - cpu0) * 1000 / max(n, 1)


def running(term: Terminal, speed_keys: bytes) -> dict:
    term.settle()
    term.send(speed_keys)
    term.settle()
    term.send(b" ")
    time.sleep(0.5)  # settle into the rhythm
    n0, t0, cpu0 = len(term.frames), time.perf_counter(), term.cpu_s()
    time.sleep(RUN_S)
    t1, cpu1 = time.perf_counter(), term.cpu_s()
    window = [t for t in term.frames[n0:] if t <= t1]
    gaps = [(b - a) * 1000 for a, b in zip(window, window[1:], strict=False)]
    stop = term.send(b" ")
    term.settle(quiet_s=0.3)
    after = [t for t in term.frames if t > stop]
    tail_ms = (after[-1] - stop) * 1000 if after else 0.0
    return {"fps": len(window) / (t1 - t0), "longest_gap_ms": max(gaps, default=float("nan")),
            "tail_ms": tail_ms, "run_cpu_ms": (cpu1 - cpu0) * 1000 / max(len(window), 1),
            "run_cpu_share": (cpu1 - cpu0) / (t1 - t0)}


def measure(argv: list[str], size: tuple[int, int], n_keys: int,
            speed_keys: bytes | None) -> dict:
    term = Terminal(argv, *size)
    try:
        if not term.wait_frames(1):
            raise SystemExit(f"{argv[0]}: no screen update within 30 s")
        term.settle(quiet_s=0.5)
        keys, missed, cpu_ms = keystrokes(term, n_keys)
        run = running(term, speed_keys) if speed_keys is not None else {}
    finally:
        term.close()
    return {"keys": keys, "missed": missed, "cpu_ms": cpu_ms, **run}


def line(name: str, r: dict) -> str:
    k = r["keys"]
    return (f"  {name:<10} key → screen: p50 {statistics.median(k):5.1f} ms  p95 {pct(k, 95):5.1f}"
            f" ms  max {max(k):5.1f} ms;  cpu {r['cpu_ms']:4.1f} ms a key"
            + (f"  ({r['missed']} keys without an update)" if r["missed"] else "")
            + (f"\n  {'':<10} running: {r['fps']:5.1f} screen updates/s, longest gap "
               f"{r['longest_gap_ms']:5.1f} ms, updates {r['tail_ms']:4.0f} ms after the stop key;"
               f"\n  {'':<10}          cpu {r['run_cpu_ms']:4.1f} ms an update "
               f"({r['run_cpu_share'] * 100:.0f}% of a core)"
               if "fps" in r else ""))


# --- an edit: keystroke to the train solved again and its rows redrawn ---------------------
SHIFT_TAB, DOWN, ENTER, BACKSPACE = b"\x1b[Z", b"\x1b[B", b"\r", b"\x7f"


def press(term: Terminal, keys: bytes, timeout_s: float = 5.0) -> bool:
    """Write keys and wait for the screen update they cause to finish; False if none came."""
    before = len(term.frames)
    term.send(keys)
    end = time.perf_counter() + timeout_s
    while len(term.frames) == before and time.perf_counter() < end:
        time.sleep(0.002)
    term.settle()
    return len(term.frames) > before


def first_wheel(path: Path) -> tuple[str, int]:
    """The first wheel of a train file and its teeth (what the parts list shows first after
    the crank), read with the engine's loader."""
    from engine.loader import load_train

    wheel = next(iter(load_train(path).wheels.values()))
    return wheel.name, wheel.teeth


def edits(exe: str, path: Path, size: tuple[int, int], n: int) -> dict:
    """Open ``path`` on the bench, go to the parts screen, and change its first wheel's teeth
    ``n`` times (one more, then back): per edit, ms from the Enter that confirms it to the end
    of the last frame it causes, and processor ms."""
    name, teeth = first_wheel(path)
    term = Terminal([exe, "crank", str(path)], *size)
    times, cpu, failed = [], [], 0
    try:
        if not term.wait_frames(1):
            raise SystemExit(f"{exe} crank {path.name}: no screen update within 30 s")
        term.settle(quiet_s=0.5)
        for keys in (b"w", SHIFT_TAB, SHIFT_TAB, DOWN, ENTER):  # to the parts list, wheel 1
            if not press(term, keys):
                raise SystemExit(f"{path.name}: no screen update after {keys!r} on the way "
                                 "to the parts list")
        term.settle(quiet_s=0.3)
        shown = teeth
        for i in range(n):
            new = teeth + 1 if i % 2 == 0 else teeth
            for key in [BACKSPACE] * len(str(shown)) + [c.encode() for c in str(new)]:
                press(term, key)  # one key at a time, as typed
            term.settle(quiet_s=0.2)
            term.captured = bytearray()
            before = len(term.frames)
            cpu0 = term.cpu_s()
            t0 = term.send(ENTER)
            end = time.perf_counter() + 5.0
            while len(term.frames) == before and time.perf_counter() < end:
                time.sleep(0.001)
            term.settle()
            out, term.captured = bytes(term.captured), None
            if len(term.frames) == before or b"changed" not in out:
                failed += 1
                continue
            shown = new
            times.append((term.frames[-1] - t0) * 1000)
            cpu.append((term.cpu_s() - cpu0) * 1000)
    finally:
        term.close()
    return {"train": path.stem, "wheel": f"{name} {teeth}→{teeth + 1}", "times": times,
            "cpu": cpu, "failed": failed}


def edit_line(r: dict) -> str:
    t = r["times"]
    if not t:
        return f"  {r['train']:<20} no edit was shown ({r['failed']} tried, {r['wheel']})"
    p95 = pct(t, 95)
    return (f"  {r['train']:<20} {r['wheel']:<22} p50 {statistics.median(t):5.1f} ms  "
            f"p95 {p95:5.1f} ms  cpu {statistics.median(r['cpu']):5.1f} ms  "
            f"{'ok' if p95 <= EDIT_GOAL_MS else 'SLOW'}"
            + (f"  ({r['failed']} edits not shown)" if r["failed"] else ""))


def cpu_load() -> str:
    try:
        with open("/proc/loadavg") as f:
            one = float(f.read().split()[0])
    except OSError:
        return "load unknown"
    return f"load average {one:.2f} on {os.cpu_count()} cores"


def main() -> None:
    exe = shutil.which("wheelwork") or str(Path(sys.executable).with_name("wheelwork"))
    n_keys = int(os.environ.get("TUI_BENCH_KEYS", "60"))
    n_edits = int(os.environ.get("TUI_BENCH_EDITS", "12"))
    which = set(sys.argv[1:]) or {"--crank", "--edits"}
    print("wheelwork interface speed through a pseudo-terminal, beside an idle Textual app\n"
          "answering the same keys; the machine may be shared with other work, so wall times\n"
          f"move with its load (at the start: {cpu_load()}); processor time per update much less\n")
    if "--crank" in which:
        print("keys and continuous cranking (default demo train)\n")
        for size in ((80, 24), (160, 50)):
            ours = measure([exe], size, n_keys, b"...")
            peer = measure([sys.executable, "-c", PEER], size, n_keys, None)
            p95, fps = pct(ours["keys"], 95), ours["fps"]
            backlog = ours["tail_ms"] > BACKLOG_S * 1000
            print(f"{size[0]}×{size[1]}")
            print(line("wheelwork", ours))
            print(line("peer", peer))
            print(f"  p95 {p95:.1f} ms (goal ≤ {KEYS_GOAL_MS:.0f}: "
                  f"{'ok' if p95 <= KEYS_GOAL_MS else 'SLOW'}), "
                  f"{pct(ours['keys'], 95) / pct(peer['keys'], 95):.1f}× the peer's p95, "
                  f"cpu {ours['cpu_ms'] / max(peer['cpu_ms'], 1e-9):.1f}× the peer's a key; "
                  f"running {fps:.1f} updates/s (goal ≥ 20: {'ok' if fps >= 20 else 'SLOW'}), "
                  f"backlog: {'YES' if backlog else 'none'}\n")
    if "--edits" in which:
        print(f"an edit (parts screen: a wheel's teeth, Enter) to its ratio rows and readings "
              f"redrawn, 160×50, {n_edits} edits a train; goal p95 ≤ {EDIT_GOAL_MS:.0f} ms")
        for path in sorted(TRAINS.glob("*.toml")):
            print(edit_line(edits(exe, path, (160, 50), n_edits)), flush=True)
        print(f"  (at the end: {cpu_load()})")


if __name__ == "__main__":
    main()
