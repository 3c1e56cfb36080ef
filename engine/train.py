"""The train data model: arbors with wheels, meshes, pin-and-slot stages, crank, epoch, pointers.

These are plain frozen dataclasses built by :mod:`engine.loader` (or by hand, in a notebook).
Names are the file's own; every item remembers how the file calls it, for error messages.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction

from .defaults import FACE_M

FRAME = "frame"  # the name of the fixed frame, which every mount chain ends at

SET_MODES = ("sky", "mean", "angles")

PIVOTS_IN = ("both", "front", "back", "cocks")
"""``[arbors.NAME] pivots_in``: which of its mount's two plates hold an arbor's pivots: both
(the default), the front or the back alone (its other pivot in a cock or bridge, no hole
through that plate), or neither (both pivots in cocks or bridges)."""

PLATE_SIDES = ("front", "back")


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
    pivot_mm: float | None = None  # its own pivots' diameter, where the file gives one
    pivots_in: str = "both"  # PIVOTS_IN: the plates its pivots sit in
    plates: int | None = None  # a carrier's own plates, 1 or 2 (a cage), where the file says

    def pivoted_in(self, side: str) -> bool:
        """Whether its pivot on ``side`` (``"front"`` or ``"back"``) sits in its mount's plate
        there (else in a cock or bridge)."""
        return self.pivots_in in ("both", side)


@dataclass(frozen=True)
class Mesh:
    """Two wheels in mesh; ``ring`` names the internal wheel of an internal mesh."""

    index: int
    driver: str
    driven: str
    ring: str | None = None
    module_mm: float | None = None
    face_mm: float | None = None  # face width of the narrower wheel, where the file gives it

    @property
    def internal(self) -> bool:
        return self.ring is not None

    @property
    def label(self) -> str:
        return f"mesh {self.index} ({self.driver}–{self.driven})"

    @property
    def face_width_mm(self) -> float | None:
        """The face width the load and end-shake rules take: ``face_mm`` where the file gives
        it, else :data:`~engine.defaults.FACE_M` modules; None without a module."""
        if self.face_mm is not None:
            return self.face_mm
        return None if self.module_mm is None else FACE_M * self.module_mm


@dataclass(frozen=True)
class PinSlot:
    """A pin on one arbor riding in a slot on another arbor, which turns to face the pin.

    Either both arbors are on one mount (the frame or a carrier), their axes ``offset_mm``
    apart; or the pin arbor rides on a carrier (``carrier``) that turns on the slot arbor's
    mount, its axis ``arm_mm`` from the carrier's axis, and the slot arbor's axis is
    ``offset_mm`` from the carrier's axis (0: on the carrier's own axis, like a dial centre).

    Angles are in the slot arbor's mount's frame, from the reference direction ``offset_deg``
    (the direction from the pin arbor's axis — or the carrier's, when the pin is carried — to
    the slot arbor's axis): ``pin_deg`` is the pin's direction from its arbor's axis at the
    epoch, ``arm_deg`` the direction of the pin arbor's axis from the carrier's axis then.
    The slot arbor's angle is the direction from its axis to the pin, by plane geometry
    (:func:`engine.kinematics.pin_slot_lead_turns`); on average it turns with whichever of the
    carrier arm and the pin radius is the longer (:attr:`follows`).
    """

    name: str
    pin_arbor: str
    slot_arbor: str
    pin_radius_mm: float
    offset_mm: float
    offset_deg: float = 0.0
    pin_deg: float = 0.0
    pin_diameter_mm: float | None = None  # only the mechanical checks use it
    carrier: str | None = None  # the pin arbor's mount, when the pin rides on a carrier
    arm_mm: float = 0.0
    arm_deg: float = 0.0

    @property
    def follows(self) -> str:
        """``"carrier"`` when the carrier arm is longer than pin radius and offset together
        (the slot arbor goes round with the carrier), else ``"pin"`` (with the pin arbor)."""
        if self.carrier is not None and self.arm_mm > self.pin_radius_mm + self.offset_mm:
            return "carrier"
        return "pin"

    @property
    def followed_arbor(self) -> str:
        """The arbor whose mean turning the slot arbor shares."""
        return self.carrier if self.follows == "carrier" else self.pin_arbor


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
    # An eclipse-cycle dial (shows = "cycle"): its months marked for eclipses, 1..lunations,
    # {"solar": (...), "lunar": (...)}; None: derive the marks from the sky at the epoch.
    marks: dict[str, tuple[int, ...]] | None = None


@dataclass(frozen=True)
class EclipseSettings:
    """The train file's ``[eclipses]`` table: ecliptic limits (degrees of the Sun from a node)
    and whether penumbral lunar eclipses count; None means the default in engine.eclipses."""

    solar_limit_deg: float | None = None
    lunar_limit_deg: float | None = None
    penumbral: bool = False


@dataclass(frozen=True)
class Crank:
    arbor: str
    days_per_turn: Fraction


@dataclass(frozen=True)
class Epoch:
    jd_ut: float
    text: str
    set: str = "sky"
    ephemeris: str | None = None  # a named ephemeris the train is set and read against


EPHEMERIS_NAMES = ("de421", "de440", "de406")


TOOTH_FORMS = ("cycloidal", "involute")

CROSSINGS_AUTO = "auto"
"""``crossings = "auto"``: each wheel crossed out with as many crossings as its size asks,
pinions left solid (:func:`engine.drawing.crossing_count`)."""


@dataclass(frozen=True)
class WheelShop:
    """Workshop settings of one wheel (``[workshop.wheels.NAME]``); ``None`` takes the train's."""

    form: str | None = None
    bore_mm: float | None = None
    crossings: int | str | None = None  # a count, or CROSSINGS_AUTO
    rim_mm: float | None = None
    eccentricity_mm: float | None = None
    division: float | None = None


@dataclass(frozen=True)
class Workshop:
    """How the parts are to be cut and how well (``[workshop]``): defaults for every wheel,
    the plate's pivot holes, and the tolerances ``wheelwork play`` starts from. ``None`` means
    the tool's own default (see ``docs/workshop.md``)."""

    tooth_form: str = "cycloidal"
    bore_mm: float | None = None
    crossings: int | str = 0  # a count, or CROSSINGS_AUTO
    rim_mm: float | None = None
    pivot_mm: float = 1.0
    backlash_mm: float | None = None
    division: float | None = None
    eccentricity_mm: float | None = None
    end_shake_mm: float | None = None
    tilt_deg: float | None = None
    hole_mm: float | None = None  # largest error of a pivot hole's place (play)
    carrier_plate_mm: float | None = None  # a carrier plate's thickness (its balance)
    wheels: dict[str, WheelShop] = field(default_factory=dict)

    def wheel(self, name: str) -> WheelShop:
        return self.wheels.get(name, WheelShop())

    def form_of(self, name: str, default: str | None = None) -> str:
        """Wheel ``name``'s tooth form as it will be cut: its own ``form``, else ``default``
        (a form asked for on the command line), else the train's ``tooth_form``."""
        return self.wheel(name).form or default or self.tooth_form


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
    eclipses: EclipseSettings = field(default_factory=EclipseSettings)
    workshop: Workshop = field(default_factory=Workshop)

    def __repr__(self):
        return (f"Train({self.name!r} from {self.source}, {len(self.arbors)} arbors, "
                f"{len(self.meshes)} meshes, pointers: {', '.join(self.pointers)})")

    def pivot_of(self, arbor: str) -> float:
        """The diameter of an arbor's pivots: its own ``pivot_mm``, else ``[workshop]``'s."""
        own = self.arbors[arbor].pivot_mm
        return self.workshop.pivot_mm if own is None else own

    def mount_chain(self, arbor: str) -> list[str]:
        """The arbor, its carrier, that carrier's carrier... down to (excluding) the frame."""
        chain = []
        while arbor != FRAME:
            chain.append(arbor)
            arbor = self.arbors[arbor].mount
        return chain
