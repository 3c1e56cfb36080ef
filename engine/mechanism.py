"""A mechanism: a train file loaded, solved and set at its epoch — ready to turn and read."""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from .demos import default_train
from .errors import SkyError, TrainError
from .kinematics import Kinematics, solve
from .loader import load_train
from .readout import Readout, backward_warnings, epoch_values, unread_angles
from .train import Train

DEFAULT_TRAIN = default_train()  # the bundled tide office dial


@dataclass(frozen=True)
class Mechanism:
    """A set train: ``train`` (as read), ``kin`` (solved), ``readout`` (pointers set at the
    epoch) and ``warnings`` (one line each, already naming file and item)."""

    train: Train
    kin: Kinematics
    readout: Readout
    warnings: tuple[str, ...]

    def __repr__(self):
        return (f"Mechanism({self.train.name!r}, {len(self.train.arbors)} arbors, "
                f"pointers: {', '.join(self.train.pointers)})")


def train_and_kin(what, kin: Kinematics | None = None) -> tuple[Train, Kinematics]:
    """``(train, kin)`` from a :class:`Mechanism`, or from a :class:`Train` and its solved
    ``kin`` (solved here when not given): what the report functions take first."""
    if isinstance(what, Mechanism):
        return what.train, kin or what.kin
    if isinstance(what, Train):
        return what, kin or solve(what)
    raise TypeError(f"wanted a Mechanism (open_train) or a Train (load_train), not "
                    f"{type(what).__name__}")


def need_sky(sky, what: str):
    """``sky`` when it is a sky (what ``Sky(...)`` makes), else a one-line ``TypeError``
    saying what is wanted: a name or path given for the sky is shown as the call it wants."""
    if hasattr(sky, "at") and hasattr(sky, "check_span"):
        return sky
    example = (f"Sky({str(sky)!r})" if isinstance(sky, (str, os.PathLike))
               else "Sky() or Sky('de406')")
    raise TypeError(f"{what}: wanted a Sky for the sky, e.g. {example}; got "
                    f"{type(sky).__name__} {str(sky)[:40]!r}")


def need_mechanism(mech, what: str) -> Mechanism:
    """``mech`` when it is a :class:`Mechanism`, else a one-line ``TypeError``."""
    if isinstance(mech, Mechanism):
        return mech
    raise TypeError(f"{what}: wanted a Mechanism, e.g. open_train(path); got "
                    f"{type(mech).__name__} {str(mech)[:40]!r}")


def sky_for(train: Train, ephemeris=None):
    """The sky to set and read ``train`` against: ``ephemeris`` when given (a command's
    ``--ephemeris``), else the one its ``[epoch] ephemeris`` names, else the bundled DE421."""
    from .sky import Sky  # only the sky module touches skyfield

    if ephemeris is not None or train.epoch.ephemeris is None:
        return Sky(ephemeris)
    try:
        return Sky(train.epoch.ephemeris)
    except SkyError as exc:  # the file asked for it: say which file and key
        raise TrainError(train.source, "[epoch] ephemeris", str(exc)) from None


def wider_sky(sky, jd_first: float, jd_last: float, what: str = "the span runs past",
              use: str = "compared with"):
    """When ``sky`` (the bundled one, nothing named) does not cover ``jd_first`` ..
    ``jd_last`` (UT): ``(Sky, note)`` for the narrowest installed long-span ephemeris of
    :data:`engine.sky.LONG_SPANS` that does, and the note saying so; ``None`` when ``sky``
    covers them or none installed does (the span check then says how to reach them).
    ``use`` says what is done with it: "compared with" (a train against the sky), "read
    from" (the sky alone, ``wheelwork sky``)."""
    import importlib.util

    from .sky import LONG_SPANS, Sky

    first, last = min(jd_first, jd_last), max(jd_first, jd_last)
    lo, hi = sky.span_jd
    if lo <= first and last <= hi:
        return None
    for name, _, package, span, _, a, b in sorted(LONG_SPANS, key=lambda row: row[4]):
        if a <= first and last <= b and importlib.util.find_spec(package) is not None:
            wide = Sky(name)
            return wide, (f"{what} {sky.name} ({sky.span_text}): {use} "
                          f"{wide.name} ({span}, installed) instead; --ephemeris chooses")
    return None


def sky_reaching(train: Train | None, ephemeris, jd_first: float, jd_last: float,
                 what: str = "the span runs past", use: str = "compared with"):
    """``(sky, note)``: the one rule every command and the interface choose their sky by.
    The sky is ``ephemeris`` when given, else the one ``train``'s ``[epoch] ephemeris`` names
    (:func:`sky_for`; ``train`` None: the sky alone), else the bundled DE421 — and when nothing
    was named and DE421 does not cover ``jd_first`` .. ``jd_last`` (UT), the narrowest
    installed long-span one that does (:func:`wider_sky`), with ``note`` saying so. ``note``
    is None when no other sky was taken; when none installed reaches the dates, the bundled
    sky comes back and reading it there raises the error that says how to reach them — or,
    for a train whose epoch the bundled sky cannot reach, the widest installed one that can,
    so that the error names the part of the span past it."""
    from .sky import Sky

    sky = Sky(ephemeris) if train is None else sky_for(train, ephemeris)
    if ephemeris is None and (train is None or train.epoch.ephemeris is None):
        wide = wider_sky(sky, jd_first, jd_last, what, use)
        if wide is not None:
            return wide
        if train is not None:
            wide = _widest_at_epoch(sky, train.epoch.jd_ut, use)
            if wide is not None:
                return wide
    return sky, None


def _widest_at_epoch(sky, epoch_jd: float, use: str):
    """When no installed sky reaches all the dates asked and ``sky`` (the bundled one) does not
    reach the train's epoch: ``(Sky, note)`` for the widest installed one that does, so that
    what is refused next is the part of the span past it, named as such — not the epoch, with
    a hint to take a sky that reaches the epoch (a train set in 200 BC run for 5,000 years
    was told to use DE406, which then refused the 1,800 years past AD 3000). None otherwise."""
    import importlib.util

    from .sky import LONG_SPANS, Sky

    lo, hi = sky.span_jd
    if lo <= epoch_jd <= hi:
        return None
    for name, _, package, span, _, a, b in sorted(LONG_SPANS, key=lambda row: -row[4]):
        if a <= epoch_jd <= b and importlib.util.find_spec(package) is not None:
            wide = Sky(name)
            return wide, (f"the epoch lies outside {sky.name} ({sky.span_text}) and no "
                          f"installed ephemeris reaches all the dates: {use} {wide.name} "
                          f"({span}, installed), the widest; --ephemeris chooses")
    return None


def _named_elsewhere(train: Train, sky) -> str:
    """When a sky given in place of the one the file's ``[epoch] ephemeris`` names cannot
    reach the epoch: the words saying so, and how to use the file's own."""
    eph = train.epoch.ephemeris
    if not eph or str(eph).lower() in str(getattr(sky, "name", "")).lower():
        return ""
    return (f"; the file names ephemeris = \"{eph}\" in [epoch], and the sky given takes its "
            f"place: leave --ephemeris out (from Python, open_train(path) without a sky, or "
            f"Sky('{eph}'))")


def _name_it(train: Train) -> str:
    """When a file naming no ephemeris is set at a date the bundled one cannot reach: how to
    name, in the file, one that can (so every command and the bench read it so): the
    long-span ephemerides of ``engine.sky.LONG_SPANS`` whose span holds the epoch."""
    from .sky import LONG_SPANS  # the sky is loaded by now: its error is why we are here

    if train.epoch.ephemeris:
        return ""
    jd = train.epoch.jd_ut
    fits = [f'ephemeris = "{name}" ({span})' for name, _, _, span, _, lo, hi in LONG_SPANS
            if lo <= jd <= hi]
    if not fits:
        return ""
    return f"; or name it under [epoch] in the file: {' or '.join(fits)}"


def build(train: Train, sky=None) -> Mechanism:
    """Solve ``train`` and set its pointers as its ``[epoch] set`` says.

    ``sky`` is an :class:`engine.sky.Sky`; one is made (:func:`sky_for`) when the epoch
    needs the sky.
    """
    given = sky is not None
    if given:
        need_sky(sky, "build")
    kin = solve(train)
    if sky is None and train.epoch.set != "angles":
        sky = sky_for(train)
    try:
        values = epoch_values(train, sky)
    except SkyError as exc:  # the epoch itself cannot be looked up: say which file says so
        raise TrainError(train.source, "[epoch] date", f"the pointers were set at a date the "
                         f"sky cannot be computed for: {exc}"
                         + (_named_elsewhere(train, sky) if given else "")
                         + _name_it(train)) from None
    return Mechanism(train, kin, Readout(kin, values),
                     tuple(backward_warnings(train, kin) + unread_angles(train)))


def open_train(path: str | Path | None = None, sky=None) -> Mechanism:
    """Load, solve and set a train file (the bundled tide office dial when ``path`` is None)."""
    if sky is not None:
        need_sky(sky, "open_train")
    return build(load_train(path or DEFAULT_TRAIN), sky)
