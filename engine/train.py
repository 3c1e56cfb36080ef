"""The train data model: arbors with wheels, meshes, pin-and-slot stages, crank, epoch, pointers.

These are plain frozen dataclasses built by :mod:`engine.loader` (or by hand, in a notebook).
Names are the file's own; every item remembers how the file calls it, for error messages.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction

FRAME = "frame"  # the name of the fixed frame, which every mount chain ends at

SET_MODES = ("sky", "mean", "angles")


@dataclass(frozen=True)
class Wheel:
    """A toothed wheel or pinion (leaves) fixed on an arbor."""

    name: str
    arbor: str
    teeth: int


@dataclass(frozen=True)
class Arbor:
    """A shaft (or tube, or carrier plate) with the wheels fast on it.

    ``mount`` is what carries its axis: the frame, or a carrier arbor. ``fixed`` arbors do not
    turn relative to their mount (wheels fixed to the frame or to a carrier).
    """

    name: str
    wheels: tuple[str, ...] = ()
    mount: str = FRAME
    fixed: bool = False
    at_mm: tuple[float, float] | None = None
    axis_with: str | None = None


@dataclass(frozen=True)
class Mesh:
    """Two wheels in mesh; ``ring`` names the internal wheel of an internal mesh."""

    index: int
    driver: str
    driven: str
    ring: str | None = None
    module_mm: float | None = None

    @property
    def internal(self) -> bool:
        return self.ring is not None

    @property
    def label(self) -> str:
        return f"mesh {self.index} ({self.driver}–{self.driven})"


@dataclass(frozen=True)
class PinSlot:
    """A pin on one arbor riding in a slot on another arbor whose axis is offset from it.

    Both arbors are mounted on the same carrier (or the frame). ``offset_deg`` is the direction
    from the pin arbor's axis to the slot arbor's axis, in the mount's frame; ``pin_deg`` is the
    pin's angle from that direction at the epoch.
    """

    name: str
    pin_arbor: str
    slot_arbor: str
    pin_radius_mm: float
    offset_mm: float
    offset_deg: float = 0.0
    pin_deg: float = 0.0
    pin_diameter_mm: float | None = None  # only the mechanical checks use it


@dataclass(frozen=True)
class Pointer:
    """A hand, disc or ball that shows an astronomical quantity on a dial."""

    name: str
    shows: str
    arbor: str
    relative_to: str | None = None
    per_turn: Fraction = Fraction(1)
    reversed: bool = False
    set_deg: float | None = None


@dataclass(frozen=True)
class Crank:
    arbor: str
    days_per_turn: Fraction


@dataclass(frozen=True)
class Epoch:
    jd_ut: float
    text: str
    set: str = "sky"


@dataclass(frozen=True)
class Train:
    """A whole train as described by one file."""

    name: str
    source: str
    arbors: dict[str, Arbor]
    wheels: dict[str, Wheel]
    meshes: tuple[Mesh, ...]
    pin_slots: dict[str, PinSlot]
    crank: Crank
    epoch: Epoch
    pointers: dict[str, Pointer]
    dial: str = "equinox"
    about: str = ""
    warnings: tuple[str, ...] = field(default=())

    def arbor_of(self, wheel: str) -> Arbor:
        return self.arbors[self.wheels[wheel].arbor]

    def mount_chain(self, arbor: str) -> list[str]:
        """The arbor, its carrier, that carrier's carrier... down to (excluding) the frame."""
        chain = []
        while arbor != FRAME:
            chain.append(arbor)
            arbor = self.arbors[arbor].mount
        return chain
