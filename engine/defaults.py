"""Defaults and bounds the commands offer on their command lines, and the engine's functions
default to. No imports: ``wheelwork CMD --help`` reads them without loading numpy (each engine
module that uses one imports it from here, so the name still lives there too)."""

# --- checks (engine/checks.py) ---------------------------------------------------------------

DEFAULT_CRANK_RPM = 60.0
"""Highest crank speed evaluated: one turn a second, a brisk hand crank (common practice, no
source). A clock-driven train never gets near it; it is the speed of someone setting by hand."""

DEFAULT_EFFICIENCY = 0.98
"""Efficiency of one mesh of cut spur gears, a common rule (common practice, no source)."""

# --- workshop tolerances (engine/play.py) ----------------------------------------------------

DEFAULT_DIVISION = 0.01
"""Random tooth-division error, one standard deviation, as a fraction of the pitch: teeth cut
with a good dividing plate by hand (common practice, no source)."""

DEFAULT_ECCENTRICITY_MM = 0.02
"""Largest eccentricity of a wheel on its arbor: a wheel turned true on its arbor in a small
lathe (common practice, no source)."""

DEFAULT_END_SHAKE_MM = 0.08
"""Axial play of an arbor between its pivots (common practice, no source)."""

DEFAULT_TILT_DEG = 0.25
"""Tilt of an arbor in its pivot holes (side shake), degrees (common practice, no source)."""

DEFAULT_HOLE_MM = 0.02
"""Largest error of a pivot hole's place in its plate, in any direction: holes marked out and
drilled with care, or bored on a mill's handwheels (common practice, no source). Two holes
each that far off open or close a mesh's centre distance by up to twice it."""

LEVER_MM = 10.0
"""How far a wheel sits from the pivot about which its arbor tilts (our assumption)."""

FACE_M = 3.0
"""Face width of a wheel, in modules, where a mesh gives no ``face_mm`` (clock wheels run a
few modules wide; common practice, no source): the check's load index and play's end-shake
rule."""

# --- search (engine/search.py) ---------------------------------------------------------------

SEARCH_MAX_TOP = 200  # trains listed at most: more is a table nobody reads, and costs minutes
SEARCH_MAX_TEETH = 10_000  # keeps every product of four counts inside int64

# --- eclipses (engine/eclipses.py) -----------------------------------------------------------

ECLIPSE_METHODS = ("pointers", "cycle")  # by the pointers (node hand...) or the cycle dial
