"""The interface's state: a mechanism, the sky, the crank position and the viewing choices.

Plain Python (no Textual), so tests and benchmarks can drive it directly. Every number shown
comes from the engine: readings and errors from :func:`engine.drift.pointer_errors`, the sky
from :meth:`engine.sky.Sky.at`, arbor angles from the kinematics.
"""

from __future__ import annotations

import contextlib
import os
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from fractions import Fraction
from pathlib import Path

import numpy as np

from engine.dates import YEAR_LIMIT, format_jd, jd_now, turn_days_text
from engine.drift import pointer_errors, whole_months_off
from engine.eclipses import (
    EclipseNow,
    EclipseWatch,
    cycle_pointer,
    cycle_position,
    limit_arcs,
    syzygy_months,
)
from engine.eclipses import limits as eclipse_limits
from engine.errors import DateError, SkyError, WheelworkError
from engine.exact import Turns
from engine.figures import figure
from engine.kinds import FRAMES, next_frame, sky_at
from engine.mechanism import Mechanism, sky_reaching
from engine.periods import era_spread_ppm
from engine.ratios import pointer_ratios
from engine.readout import Readout, mean_values
from engine.sky import Site, Sky, SkyState
from engine.view import arbor_turns

#: Observer used when the command line names none (shown on screen as such).
DEFAULT_SITE = Site(51.48, -0.01, 45.0)
DEFAULT_SITE_NAME = "default site"

#: Continuous cranking speeds, crank turns per second.
SPEEDS = (0.25, 1.0, 3.0, 10.0, 30.0, 100.0, 300.0, 1000.0, 3000.0)
DEFAULT_SPEED = 3
#: frames a second of continuous cranking
FPS = 25
#: the most the fastest pointer may turn in one frame at a train's default speed: well under
#: the half turn at which a hand seems to stand still or run backwards (strobing)
MAX_DEFAULT_TURNS_PER_FRAME = 1 / 6


def default_speed_index(mech: Mechanism) -> int:
    """The default run speed for a train: the fastest of SPEEDS up to DEFAULT_SPEED at which
    its fastest pointer turns at most MAX_DEFAULT_TURNS_PER_FRAME a frame (the slowest speed
    if none does). A train whose crank turns once a year gets a slow default; one turned
    once a day keeps DEFAULT_SPEED."""
    fastest = max((abs(float(m.cycles_per_turn)) for m in mech.readout.motions.values()),
                  default=0.0)
    best = 0
    for i, speed in enumerate(SPEEDS[: DEFAULT_SPEED + 1]):
        if fastest * speed / FPS <= MAX_DEFAULT_TURNS_PER_FRAME:
            best = i
    return best

FRAME_NAMES = FRAMES  # dial frame -> plain words
#: what a re-set turns the pointers to, in plain words
RESET_TO = {"sky": "the true sky", "mean": "mean positions"}
#: the largest step of + and −, in crank turns: a step of 31 years on the fastest crank a file
#: may give (100 turns a second, a motor's shaft), exact in the int64 whole turns
MAX_STEP_TURNS = 10**11
#: while running faster than this (days of the train per frame), the eclipse readout waits
ECLIPSE_MAX_DAYS_PER_FRAME = 40.0


@dataclass(frozen=True)
class CycleNow:
    """An eclipse-cycle dial at the current date: its pointer ``name``, ``lunations`` N, where
    its pointer stands in months (0..N), the marked months (``{"solar": ..., "lunar": ...}``)
    and ``month`` (1..N): the month the nearest syzygy falls in, the engine's
    (``engine.eclipses.syzygy_months``, as its prediction reads it), None with no syzygy."""

    name: str
    lunations: int
    position: float
    marks: dict
    month: int | None = None


@dataclass(frozen=True)
class PointerNow:
    """One pointer at the current crank position (degrees; ``error_deg`` wrapped ±180)."""

    name: str
    shows: str
    train_deg: float
    sky_deg: float
    error_deg: float
    error_days: float | None
    worst_deg: float
    drift_deg_per_century: float | None
    #: a cycle dial's whole months from the real lunation count (positive: ahead), which
    #: ``error_deg`` (within the month) does not show; None for other pointers
    months_off: int | None = None
    #: for a Jupiter or Saturn pointer, how far the mean of 3000 BC-AD 3000 moves the
    #: 1800-2050 mean period its drift is judged against (ppm, engine.periods.era_spread_ppm:
    #: the great inequality); None for others
    era_spread_ppm: float | None = None


@dataclass(frozen=True)
class Now:
    """Everything the screen shows for one crank position."""

    turns: Turns
    jd_ut: float
    date_text: str
    sky: SkyState  # one-element arrays
    pointers: dict[str, PointerNow]
    angles_turns: dict[str, float]  # every arbor's angle, 0..1
    arbor_turns: dict[str, float]  # every arbor's turns since the epoch
    moved_turns: float  # crank turns since the previous frame (for "too fast" arbors)
    frame: str
    site: Site | None
    #: the nearest new or full moon: what the train predicts there and what the sky has
    #: (None while cranking too fast to follow, or at the ephemeris' edge)
    eclipse: EclipseNow | None = None
    #: arcs of longitude within the ecliptic limits of the true nodes: (kind, start°, end°)
    limit_arcs: tuple = ()
    cycle: CycleNow | None = None

    @property
    def delta_t_s(self) -> float:
        return float(self.sky.delta_t_s.reshape(-1)[0])

    @property
    def delta_t_sigma_s(self) -> float:
        """One standard error of ΔT at this date (grows to many minutes in antiquity)."""
        return float(self.sky.delta_t_sigma_s.reshape(-1)[0])

    @property
    def turns_text(self) -> str:
        whole = int(np.asarray(self.turns.whole).reshape(-1)[0])
        frac = float(np.asarray(self.turns.frac).reshape(-1)[0])
        if frac < 5e-7 or frac > 1 - 5e-7:
            return f"{whole + round(frac):+,d}"
        return f"{whole + frac:+,.3f}"


def _one(a) -> float:
    return float(np.asarray(a).reshape(-1)[0])


class _LastSky:
    """The sky, remembering its last answer: one frame asks the ephemeris once, even though
    both the readout comparison and the phase/ΔT display need that date's sky."""

    def __init__(self, sky: Sky):
        self._sky = sky
        self._key = None
        self._state = None

    def at(self, jd_ut, frame: str = "equinox", site: Site | None = None, **kw) -> SkyState:
        jd = np.asarray(jd_ut, dtype=float)
        key = (jd.shape, jd.tobytes(), frame, site, tuple(sorted(kw.items())))
        if key != self._key:
            self._state = self._sky.at(jd, frame=frame, site=site, **kw)
            self._key = key
        return self._state

    def __getattr__(self, name):
        return getattr(self._sky, name)


@dataclass
class Session:
    """A train on the bench: crank it, jump, re-set its pointers, change frame and observer."""

    mech: Mechanism
    sky: Sky
    site: Site = DEFAULT_SITE
    site_name: str = DEFAULT_SITE_NAME
    turns: Turns = field(default_factory=lambda: Turns.of(0))
    step: Fraction = Fraction(1)
    #: the step as a length of time (days) when it was given so; it is turned into crank
    #: turns again when the train on the bench changes its days per turn
    step_days: Fraction | None = None
    step_label: str = ""
    #: which way continuous cranking runs: +1 forwards, -1 backwards
    direction: int = 1
    frame: str = ""
    topocentric: bool = False
    speed_index: int | None = None  # None: default_speed_index(mech)
    #: what the engine finds wrong with a train (backwards pointers, mechanical checks), as
    #: (level, item, message, fix); worked out for the train on the bench when first shown,
    #: so an edit does not wait for checks only the bench shows
    findings_of: Callable[[Mechanism], list] | None = None
    _findings: list | None = None
    #: the ratio report's mean drift (°/cy) per pointer, by frame; filled on first use
    drift_by_frame: dict[str, dict[str, float]] = field(default_factory=dict)
    #: per pointer whose mean period other eras move (Jupiter's, Saturn's), by how much (ppm)
    era_by_frame: dict[str, dict[str, float]] = field(default_factory=dict)
    #: largest |error| per pointer since the start or the last change of frame, observer or
    #: pointer setting (re-set or undo): what it is measured against has changed then
    worst_deg: dict[str, float] = field(default_factory=dict)
    _undo: list[Readout] = field(default_factory=list)
    _moved: float = 0.0
    _watch: EclipseWatch | None = None
    #: the train on the bench as first set (from its file, or as adopted): a cycle dial with
    #: no marks in its file has them read off the sky with this setting, once, as a maker
    #: paints them; a re-set (r, R, m) or undo turns the pointer, not the marks
    _painted: Mechanism | None = None
    #: set by the interface while it cranks continuously (the eclipse readout may then wait)
    running: bool = False
    #: the train's edits and file (an :class:`engine.edit.TrainEditor`), when it can be changed
    editor: object | None = None
    #: the ``--ephemeris`` the bench was started with (it then reads every train); None: each
    #: train is read against the ephemeris its ``[epoch] ephemeris`` names
    ephemeris_given: str | None = None
    #: skies already opened, by the name a train file gives (None: none) and the file the
    #: sky reads: a file naming none takes DE421, or a longer one for an epoch before it
    skies: dict = field(default_factory=dict)
    #: the note saying the first train's sky was taken in place of the bundled one (its epoch
    #: lies outside it: :func:`engine.mechanism.sky_reaching`), None when it was not
    sky_note: str | None = None
    #: such notes by the key of :attr:`skies`, shown with the findings of a train read so
    _sky_notes: dict = field(default_factory=dict)

    def __post_init__(self):
        self.frame = self.frame or self.mech.train.dial
        self._painted = self.mech
        if self.speed_index is None:
            self.speed_index = default_speed_index(self.mech)
        self._last_sky = _LastSky(self.sky)
        if self.ephemeris_given is None:  # the first train's sky, under the name it gave
            key = (self.mech.train.epoch.ephemeris, getattr(self.sky, "path", None))
            self.skies.setdefault(key, self.sky)
            if self.sky_note:
                self._sky_notes[key] = self.sky_note

    def sky_for_train(self, train) -> Sky:
        """The sky ``train`` is read against on this bench: the ``--ephemeris`` given, else
        the one its file names, else the bundled one or — for an epoch outside it — an
        installed longer one (the rule every command follows), opened once per file."""
        if self.ephemeris_given is not None:
            return self.sky
        jd = train.epoch.jd_ut
        sky, note = sky_reaching(train, None, jd, jd, what="the epoch lies outside")
        key = (train.epoch.ephemeris, sky.path)
        if note:
            self._sky_notes[key] = note
        return self.skies.setdefault(key, sky)

    def use_sky(self, sky: Sky) -> None:
        """Read the train on the bench against ``sky`` from now on (another train's own)."""
        if sky is not self.sky:
            self.sky = sky
            self._last_sky = _LastSky(sky)
            self._watch = None

    @property
    def findings(self) -> list:
        """The engine's findings for the train on the bench (worked out once per train)."""
        if self._findings is None:
            found = [] if self.findings_of is None else self.findings_of(self.mech)
            key = (self.mech.train.epoch.ephemeris, getattr(self.sky, "path", None))
            note = None if self.ephemeris_given is not None else self._sky_notes.get(key)
            self._findings = ([("note", "ephemeris", note, "")] if note else []) + found
        return self._findings

    @findings.setter
    def findings(self, items: list) -> None:
        self._findings = list(items)

    def drift_per_century(self, frame: str | None = None) -> dict[str, float]:
        """Mean drift per pointer (degrees per Julian century) judged in ``frame`` (default:
        the current one), from :func:`engine.ratios.pointer_ratios`; computed once per frame."""
        frame = frame or self.frame
        if frame not in self.drift_by_frame:
            rows = pointer_ratios(self.mech.train, self.mech.kin, frame=frame)
            self.drift_by_frame[frame] = {r.pointer: r.drift_deg_per_century for r in rows}
            self.era_by_frame[frame] = {r.pointer: ppm for r in rows
                                        if (ppm := era_spread_ppm(r.target_key)) is not None}
        return self.drift_by_frame[frame]

    def era_spread(self, frame: str | None = None) -> dict[str, float]:
        """Per pointer whose mean period is JPL's 1800-2050 mean of Jupiter or Saturn, how far
        the 3000 BC-AD 3000 mean moves it (ppm, :func:`engine.periods.era_spread_ppm`)."""
        self.drift_per_century(frame)
        return self.era_by_frame[frame or self.frame]

    def adopt(self, mech: Mechanism) -> None:
        """Put a changed (or another) train on the bench, at the date shown now when it can
        (else at its epoch); its pointers set as its file says. An empty ``frame`` takes the
        new train's dial."""
        jd = self.jd_now()
        self.mech = self._painted = mech
        self.frame = self.frame or mech.train.dial
        self._findings = None  # found again when next shown
        self.drift_by_frame = {}
        self.era_by_frame = {}
        self.worst_deg = {}
        self._undo.clear()
        if self.step_days is not None:
            self.step = self.step_days / Fraction(mech.train.crank.days_per_turn)
            if self.step > MAX_STEP_TURNS:  # a time too long for this crank: one turn
                self.step, self.step_days, self.step_label = Fraction(1), None, ""
        try:
            self.go_to(jd)
        except WheelworkError:
            self.turns = Turns.of(0)
        self._moved = 0.0

    # --- what the crank and dials do -------------------------------------------------------
    @property
    def readout(self) -> Readout:
        return self.mech.readout

    @property
    def observer(self) -> Site | None:
        return self.site if self.topocentric else None

    @property
    def speed_turns_per_s(self) -> float:
        return SPEEDS[self.speed_index]

    def jd_now(self) -> float:
        return float(np.asarray(self.readout.jd_at(self.turns)).reshape(-1)[0])

    def _check_jd(self, jd: float) -> None:
        lo, hi = self.sky.span_jd
        if not (np.isfinite(jd) and lo <= jd <= hi):
            way = self.sky.hint_for(jd, jd) if np.isfinite(jd) else self.sky.longer_hint
            try:
                when = format_jd(jd)
            except DateError:  # beyond any calendar date: no Julian Date in e-notation
                when = (f"a date beyond the years wheelwork handles (-{YEAR_LIMIT:,} to "
                        f"{YEAR_LIMIT:,})")
            raise SkyError(f"{when} is outside the "
                           f"ephemeris {self.sky.name} ({self.sky.span_text}); {way} (give it "
                           "when opening the bench)")

    def crank(self, n: Fraction | int | float) -> None:
        """Turn the crank ``n`` turns (negative: backwards). Refuses to leave the ephemeris."""
        new = self.turns + Turns.of(n)
        self._check_jd(float(np.asarray(self.readout.jd_at(new)).reshape(-1)[0]))
        self.turns = new
        self._moved = float(n)

    def go_to(self, jd_ut: float) -> None:
        """Turn the crank to the position that shows this UT Julian date."""
        self._check_jd(jd_ut)
        new = self.readout.turns_at(jd_ut)
        self._moved = float((new - self.turns).to_float())
        self.turns = new

    def go_to_now(self, clock=None) -> float:
        """Turn the crank to this moment (UT, by the computer's clock); its Julian Date."""
        jd = jd_now(clock)
        self.go_to(jd)
        return jd

    def to_epoch(self) -> None:
        self._moved = float(self.turns.to_float())
        self.turns = Turns.of(0)

    def set_step(self, step: Fraction | int, days: Fraction | None = None,
                 label: str = "") -> None:
        """The step of + and −, in crank turns; ``days`` when it was given as a time (what
        :func:`engine.dates.parse_crank_step` returns), ``label`` as the user wrote it."""
        step = Fraction(step)
        if step <= 0 or step > MAX_STEP_TURNS:
            what = (f"{label or self.days_text(days)} = {float(step):,.6g} turns" if days
                    else f"{step} turns")
            raise WheelworkError(f"step {what}: choose more than 0 and at most "
                                 f"{MAX_STEP_TURNS:,} turns")
        self.step = step
        self.step_days = None if days is None else Fraction(days)
        self.step_label = " ".join(label.split()) if days is not None else ""

    @staticmethod
    def days_text(days: Fraction) -> str:
        return turn_days_text(days, short=True).removeprefix("1 turn = ").replace(" ", "")

    @property
    def step_text(self) -> str:
        """The step as the user gave it, with its unit: ``"3 turns"``, ``"1 turn"``,
        ``"1/24 turn"`` or ``"1y = 12.37 turns"`` (whole turns thousands separated:
        ``"1y = 3,155,760,000 turns"`` on a motor shaft)."""
        turns = self.step
        if self.step_days is None:
            shown = f"{turns.numerator:,}" if turns.denominator == 1 else str(turns)
            return f"{shown} turn{'' if abs(turns) <= 1 else 's'}"
        shown = f"{turns.numerator:,}" if turns.denominator == 1 else figure(float(turns), 6)
        return f"{self.step_label or self.days_text(self.step_days)} = {shown} turns"

    @property
    def turn_days(self) -> str:
        """``"1 turn = 29.53 days"``: what one crank turn stands for on this train."""
        return turn_days_text(self.mech.train.crank.days_per_turn)

    def set_direction(self, direction: int) -> None:
        self.direction = 1 if direction >= 0 else -1

    def faster(self) -> None:
        self.speed_index = min(self.speed_index + 1, len(SPEEDS) - 1)

    def slower(self) -> None:
        self.speed_index = max(self.speed_index - 1, 0)

    def toggle_frame(self) -> None:
        self.frame = next_frame(self.frame)
        self.worst_deg = {}

    def toggle_observer(self) -> None:
        self.topocentric = not self.topocentric
        self.worst_deg = {}

    def reset_pointers(self, names=None, to: str = "sky") -> list[str]:
        """Turn pointers by hand (all, or those ``names``) to the true sky at the current date
        (``to="sky"``) or to their mean positions (``to="mean"``: each kind's mean value,
        :func:`engine.readout.mean_values`); undoable. The names re-set."""
        if to not in RESET_TO:
            raise WheelworkError(f"re-set to {to!r}: choose one of {', '.join(RESET_TO)}")
        names = list(self.mech.train.pointers) if names is None else list(names)
        unknown = [n for n in names if n not in self.mech.train.pointers]
        if unknown:
            raise WheelworkError(f"no pointer called {unknown[0]!r} on this train")
        if to == "sky":
            errors = self._errors()
            values = {n: _one(errors[n].sky_deg) for n in names}
        else:
            values = mean_values(self.mech.train, self.jd_now(), self._last_sky, self.frame,
                                 names)
        self._undo.append(self.mech.readout)
        self.mech = replace(self.mech, readout=self.readout.reset_to(self.turns, values))
        for n in names:  # what those are measured against has changed
            self.worst_deg.pop(n, None)
        return names

    def undo_reset(self) -> bool:
        """Put the pointers back as they were before the last re-set; False if none. The
        worst errors start again: those seen before the re-set were for dates since visited
        with another setting, so they no longer describe this one."""
        if not self._undo:
            return False
        self.mech = replace(self.mech, readout=self._undo.pop())
        self.worst_deg = {}
        return True

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    # --- eclipses -----------------------------------------------------------------------
    @property
    def eclipse_watch(self) -> EclipseWatch:
        """The train's eclipse predictions against the sky, kept while the pointers' setting
        stays (a re-set or undo makes a new one); a cycle dial's marks read off the sky stay
        where the first setting put them (:attr:`_painted`)."""
        if self._watch is None or self._watch.mech.readout is not self.mech.readout:
            painted = self._painted if self._painted.train is self.mech.train else None
            self._watch = EclipseWatch(self.mech, self.sky, painted)
        return self._watch

    def jump_to_eclipse(self, direction: int = 1) -> float:
        """Turn the crank to the next (or previous) real eclipse; its date (UT)."""
        jd = self.eclipse_watch.next_real(self.jd_now(), direction)
        if jd is None:
            raise SkyError(f"no {'later' if direction > 0 else 'earlier'} eclipse inside "
                           f"{self.sky.name} ({self.sky.span_text})")
        self.go_to(jd)
        return jd

    def jump_to_predicted(self, direction: int = 1) -> float:
        """Turn the crank to the next syzygy the train predicts an eclipse at; its date."""
        watch = self.eclipse_watch
        if watch.method is None:
            raise WheelworkError("this train predicts no eclipses: it has no node hand, "
                                 "draconic or eclipse-year dial, nor an eclipse-cycle dial")
        jd = watch.next_predicted(self.jd_now(), direction)
        if jd is None:
            raise SkyError(f"no later predicted eclipse inside {self.sky.name} "
                           f"({self.sky.span_text})")
        self.go_to(jd)
        return jd

    def _eclipse_parts(self, jd: float, state: SkyState, moved_turns: float):
        node = _one(state.node_deg)
        arcs = tuple(limit_arcs(node, eclipse_limits(self.mech.train)))
        days = abs(moved_turns) * float(self.mech.train.crank.days_per_turn)
        if self.running and days > ECLIPSE_MAX_DAYS_PER_FRAME:
            return None, arcs, None
        watch = self.eclipse_watch
        ecl = watch.at(jd)
        cycle = None
        name = cycle_pointer(self.mech.train)
        if name is not None:
            n = int(self.mech.train.pointers[name].per_turn)
            # the ribbon's month is the one the panel's syzygy is read in (a new moon just
            # before the boundary the dial shows is the next month's: the panel said month 28
            # of the 2024-04-08 eclipse while the ribbon, floor of the position, said 27)
            month = None if ecl is None else int(syzygy_months(
                self.mech, name, np.array([ecl.jd_syzygy]), np.array([ecl.kind == "lunar"]))[0])
            cycle = CycleNow(name, n, _one(cycle_position(self.mech, name, np.array([jd]))),
                             watch.marks, month)
        return ecl, arcs, cycle

    # --- reading ---------------------------------------------------------------------------
    def _errors(self, jd: float | None = None) -> dict:
        jd = self.jd_now() if jd is None else jd
        return pointer_errors(self.mech, self._last_sky, np.array([jd]), frame=self.frame,
                              site=self.observer)

    def now(self) -> Now:
        """Read the train and the sky at the current crank position (updates the worst errors)."""
        jd = self.jd_now()
        self._check_jd(jd)
        errors = self._errors(jd)
        shows = [p.shows for p in self.mech.train.pointers.values()]  # as pointer_errors asks
        state = sky_at(self._last_sky, np.array([jd]), shows, frame=self.frame, site=self.observer)
        drift = self.drift_per_century()
        era = self.era_spread()
        pointers = {}
        for name, e in errors.items():
            err = _one(e.error_deg)
            worst = max(self.worst_deg.get(name, 0.0), abs(err))
            self.worst_deg[name] = worst
            days = e.error_days
            shows = self.mech.train.pointers[name].shows
            months = (int(whole_months_off(self.readout, name, self.frame, np.array([jd]),
                                           np.asarray(e.error_deg, float))[0])
                      if shows == "cycle" else None)
            pointers[name] = PointerNow(
                name=name, shows=self.mech.train.pointers[name].shows,
                train_deg=_one(e.train_deg), sky_deg=_one(e.sky_deg),
                error_deg=err,
                error_days=None if days is None else _one(days),
                worst_deg=worst, drift_deg_per_century=drift.get(name), months_off=months,
                era_spread_ppm=era.get(name))
        angles = {n: float(np.asarray(v).reshape(-1)[0])
                  for n, v in self.mech.kin.angles_turns(self.turns).items()}
        moved, self._moved = self._moved, 0.0
        ecl, arcs, cycle = self._eclipse_parts(jd, state, moved)
        return Now(self.turns, jd, format_jd(jd), state, pointers, angles,
                   arbor_turns(self.mech.kin.rates, self.turns), moved, self.frame,
                   self.observer, ecl, arcs, cycle)


# --- files opened or saved, kept across runs ---------------------------------------------------

#: how many recent files the open screen lists
MAX_RECENT = 8
#: the most of the recent-files file read (a longer one is someone else's: only its start counts)
MAX_RECENT_BYTES = 64 * 1024
#: in this run, newest first: what the open screen shows even when the file cannot be written
#: (for the one recent-files file it was read from)
_RECENT: list[Path] = []
_RECENT_FROM: list[Path | None] = [None]


def recent_path() -> Path:
    """The file that keeps the recent trains: ``$XDG_CONFIG_HOME/wheelwork/recent``, else the
    system's user config folder (``~/.config`` on Linux)."""
    base = os.environ.get("XDG_CONFIG_HOME", "").strip()
    if base and Path(base).is_absolute():
        return Path(base) / "wheelwork" / "recent"
    from platformdirs import user_config_path

    return user_config_path("wheelwork", appauthor=False) / "recent"


def _read_recent() -> list[Path]:
    try:
        with open(recent_path(), "rb") as fh:
            raw = fh.read(MAX_RECENT_BYTES)
    except OSError:
        return []
    out: list[Path] = []
    for line in raw.decode("utf-8", errors="replace").splitlines():
        line = line.strip()
        if line and not line.startswith("#") and Path(line).is_absolute() \
                and "\ufffd" not in line and "\x00" not in line:
            p = Path(line)
            if p not in out:
                out.append(p)
    return out[:MAX_RECENT]


def recent_files() -> list[Path]:
    """Train files opened or saved, newest first, this run's and earlier runs' (those that
    still exist)."""
    where = recent_path()
    if _RECENT_FROM[0] != where:
        _RECENT_FROM[0] = where
        _RECENT[:] = _read_recent()
    return [p for p in _RECENT if p.is_file()][:MAX_RECENT]


def remember(path: Path | str | None) -> None:
    """Put ``path`` first among the recent files and keep the list for the next run (a file
    that cannot be written is passed over in silence: the list still serves this run)."""
    if path is None:
        return
    recent_files()  # the earlier runs' list first, so it is kept
    path = Path(path).resolve()
    if path in _RECENT:
        _RECENT.remove(path)
    _RECENT.insert(0, path)
    del _RECENT[MAX_RECENT:]
    target = recent_path()
    part = target.with_name(f".{target.name}.{os.getpid()}.part")
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        part.write_text("".join(f"{p}\n" for p in _RECENT if "\n" not in str(p)),
                        encoding="utf-8")
        os.replace(part, target)
    except OSError:
        with contextlib.suppress(OSError):
            part.unlink()
