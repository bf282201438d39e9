"""Codes and limits shared by every ray solver: point kinds, end reasons, reflection
boundaries, eigenray path kinds, safety limits.

One place for the integers the compiled kernels write and the Datasets document (numba
reads module-level ``int`` / ``float`` constants as compile-time constants, so the kernels
import them from here instead of keeping copies in step by comments).

The codes are part of the files the package writes (``point_kind``, ``end_reason``,
``reflection_boundary``, ``path_kind``): never renumber them. numba's on-disk cache keys a kernel on its own source file, not on this
one: after changing a limit used by a kernel (``RIDE_*``, ``MAX_STEPS``) clear the cache
(``seaprofile._jitcache.user_cache_dir()``) or touch the kernel modules.
"""

from __future__ import annotations

from .._validate import SeaprofileError

__all__ = [
    "DEFAULT_MAX_BOUNCES",
    "END_REASONS",
    "MAX_STEPS",
    "MAX_STORED_POINTS",
    "MEMORY_LIMIT",
    "PADDING",
    "PATH_KINDS",
    "POINT_KINDS",
    "PROGRESS_RAYS",
    "PROGRESS_RAYS_INTEGRATED",
    "REFLECTION_BOUNDARIES",
    "check_memory",
]

# --- point kinds: what happens at a stored point of a ray -----------------------------
NO_POINT = -1  # padding after the ray's last point
START = 0
LAYER_CROSSING = 1
TURNING_POINT = 2
SURFACE_REFLECTION = 3
BOTTOM_REFLECTION = 4
RANGE_SAMPLE = 5
END = 6

#: point_kind code -> meaning (padding, -1, listed separately as :data:`PADDING`).
POINT_KINDS = {
    START: "start",
    LAYER_CROSSING: "layer_crossing",
    TURNING_POINT: "turning_point",
    SURFACE_REFLECTION: "surface_reflection",
    BOTTOM_REFLECTION: "bottom_reflection",
    RANGE_SAMPLE: "range_sample",
    END: "end",
}
#: meaning of point_kind -1: no point (padding after the ray's last point).
PADDING = "no_point"

# --- end reasons: why a ray stopped ---------------------------------------------------
RANGE_REACHED = 0
ABSORBED = 1  # more than max_bounces surface + bottom reflections
LEFT_DOMAIN = 2  # e.g. turned back in range or left through a boundary
STEP_LIMIT = 3  # safety stop of the stepping loop

#: end_reason code -> meaning.
END_REASONS = {
    RANGE_REACHED: "range_reached",
    ABSORBED: "absorbed",
    LEFT_DOMAIN: "left_domain",
    STEP_LIMIT: "step_limit_reached",
}

# --- reflection boundaries: where a reflection of the ray record happens --------------
NO_REFLECTION = -1  # padding after the ray's last reflection
AT_SURFACE = 0
AT_BOTTOM = 1
#: reflection_boundary code -> meaning (padding, -1: :data:`NO_REFLECTION_MEANING`).
REFLECTION_BOUNDARIES = {AT_SURFACE: "surface", AT_BOTTOM: "bottom"}
NO_REFLECTION_MEANING = "no_reflection"
#: Reflections a sampled fan keeps per ray at first (at most max_bounces + 1, so with the
#: default limit never too few); a fan with more is traced again with room for all of them
#: (their count is known after the first pass).
FIRST_REFLECTIONS_KEPT = 128
#: Bytes per kept reflection: range, grazing angle (2 x 8) and boundary (1).
REFLECTION_BYTES = 17

# --- path kinds: which boundaries an eigenray met (from its reflection counts) ---------
#: path_kind code -> meaning; the code is (surface reflections > 0) + 2 (bottom ones > 0).
PATH_KINDS = {
    0: "refracted",
    1: "surface_reflected",
    2: "bottom_reflected",
    3: "surface_and_bottom_reflected",
}

# --- limits ---------------------------------------------------------------------------
#: Reflections after which a ray is stopped ("absorbed") unless the caller says otherwise.
DEFAULT_MAX_BOUNCES = 100
#: Safety stop of every stepping loop, per ray (pieces of arc or trial integration steps).
MAX_STEPS = 20_000_000
#: Most path points kept per array of a fan without range_step (320 MB of float64).
MAX_STORED_POINTS = 40_000_000
#: Fans of at least this many rays show a progress bar when asked (``progress=True`` on a
#: terminal) and are then traced in groups of rays; smaller fans stay one compiled call.
#: The exact layered solver traces 2000 rays to 100 km through 100 layers in 0.06-0.16 s
#: on a shared 2-core machine (``benchmarks/bench_progress.py``), so this is about a
#: second of work. Below it a bar would barely show, and each extra call of the parallel
#: kernel costs about 0.5-1 ms of CPU (thread scheduling and dispatch; more wall time
#: on a loaded machine), which is a few percent of a short fan cut in ten.
PROGRESS_RAYS = 20_000
#: The same for the range-dependent integrator (:mod:`.integrate`), which takes 0.4-1 s
#: for 1000 rays to 100 km (same benchmark): about a second of work or more.
PROGRESS_RAYS_INTEGRATED = 2000
#: A ray trapped at a sound-speed minimum node, or against the surface / bottom by a
#: layer that bends it straight back, so flat that it would never move more than this (m)
#: away from it, runs along it (the eigenray depth tolerance, 1 micrometre). Without this
#: a near-horizontal ray there is traced as ~1e6 tiny arcs or bounces per km.
RIDE_DEPTH = 1e-6
#: ... and only when its sine is below this: setting it to 0 changes cos(theta) / c by at
#: most 5e-11 relative (Snell's invariant stays exact to that). Both solvers use the rule.
RIDE_SINE = 1e-5
#: Largest memory (bytes) one call may ask for; estimated before allocating.
MEMORY_LIMIT = 4_000_000_000
#: Bytes per (ray, point) of a stored fan: the kernel's rows (range, depth, time, angle,
#: c, q, p: 7 x 8, kind: 1) and the copies the integrator makes of them.
FAN_POINT_BYTES = 120


def check_memory(nbytes, argument, what, remedy):
    """Refuse a request whose estimated memory exceeds :data:`MEMORY_LIMIT`.

    Parameters
    ----------
    nbytes : float
        Estimated bytes the call would allocate.
    argument : str
        The argument(s) that set the size, named in the message.
    what : str
        What would be allocated (e.g. ``"1000 rays x 1e8 range samples"``).
    remedy : str
        How to ask for less (e.g. ``"use a coarser range_step or fewer angles"``).

    Raises
    ------
    SeaprofileError
        When ``nbytes`` exceeds the limit; the message names the argument and the memory.
    """
    if not nbytes <= MEMORY_LIMIT:
        raise SeaprofileError(
            f"{argument}: {what} would need about {nbytes / 1e9:.3g} GB of memory, more "
            f"than the {MEMORY_LIMIT / 1e9:g} GB allowed; {remedy}"
        )
