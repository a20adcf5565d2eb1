"""Priors for concrete cover and section dimensions.

Source: JCSS Probabilistic Model Code, Part 3.10 "Dimensions".
"""

from __future__ import annotations

from assess.errors import InputError
from assess.priors.distribution import Prior

_COVER_SOURCE = "JCSS PMC Part 3.10 (dimensions), cover deviations, first approximation"

#: Deviation of the cover from its nominal value, Y = c - c_nom [mm], by
#: (member kind, face). Each entry: (mean, std, JCSS range of mean, JCSS range of std).
#: Defaults are the midpoints of the JCSS ranges, except slab top steel, where JCSS
#: states that top cover of slabs is on average about 10 mm larger than nominal
#: with sigma about 10 mm.
COVER_DEVIATIONS: dict[tuple[str, str], tuple[float, float, tuple, tuple]] = {
    ("column", "any"): (2.5, 7.5, (0, 5), (5, 10)),
    ("wall", "any"): (2.5, 7.5, (0, 5), (5, 10)),
    ("slab", "bottom"): (5.0, 7.5, (0, 10), (5, 10)),
    ("slab", "top"): (10.0, 10.0, (0, 10), (5, 15)),
    ("beam", "bottom"): (-5.0, 7.5, (-10, 0), (5, 10)),
    ("beam", "side"): (-5.0, 7.5, (-10, 0), (5, 10)),
    ("beam", "top"): (5.0, 12.5, (0, 10), (10, 15)),
}


def cover_prior(nominal_cover_mm: float, member_kind: str, face: str = "any", *,
                distribution: str = "lognormal") -> Prior:
    """Prior for the concrete cover to the reinforcement [mm].

    Parameters
    ----------
    nominal_cover_mm : float
        Nominal (drawing) cover [mm].
    member_kind : str
        ``"slab"``, ``"beam"``, ``"column"`` or ``"wall"``.
    face : str
        ``"top"``, ``"bottom"``, ``"side"`` (beams) or ``"any"`` (columns, walls).
    distribution : str
        ``"lognormal"`` (default) or ``"gamma"``. Cover is bounded below, so JCSS
        advises against a normal model.

    Returns
    -------
    Prior
        Mean = nominal + mean deviation, std = deviation std (table
        `COVER_DEVIATIONS`, JCSS PMC 3.10). Measured covers (cover-meter survey)
        should replace this prior.
    """
    if distribution not in ("lognormal", "gamma"):
        raise InputError(f"cover distribution must be 'lognormal' or 'gamma', got {distribution!r}")
    if not nominal_cover_mm > 0:
        raise InputError(f"nominal cover must be positive [mm], got {nominal_cover_mm!r}")
    kind = str(member_kind).strip().lower()
    side = str(face).strip().lower()
    if kind in ("column", "wall"):
        side = "any"
    key = (kind, side)
    if key not in COVER_DEVIATIONS:
        raise InputError(f"no cover model for member kind {member_kind!r}, face {face!r}; "
                         f"known: {sorted(COVER_DEVIATIONS)}")
    mean_dev, std_dev, mean_range, std_range = COVER_DEVIATIONS[key]
    mean = nominal_cover_mm + mean_dev
    if mean <= 0:
        raise InputError(f"nominal cover {nominal_cover_mm} mm with mean deviation {mean_dev} mm "
                         "gives a non-positive mean cover")
    return Prior(distribution, mean, std_dev, source=f"{_COVER_SOURCE}: {kind} {side}", unit="mm",
                 note=(f"deviation mean {mean_dev:+g} mm (JCSS range {mean_range}), std "
                       f"{std_dev:g} mm (JCSS range {std_range})"))


def dimension_deviation(nominal_mm: float) -> tuple[float, float]:
    """Mean and std of the deviation of an external RC section dimension [mm].

    JCSS PMC 3.10: 0 <= mu_Y = 0.003 X_nom <= 3 mm, sigma_Y = 4 mm + 0.006 X_nom
    <= 10 mm, normal; valid for X_nom up to about 1000 mm.
    """
    if not nominal_mm > 0:
        raise InputError(f"nominal dimension must be positive [mm], got {nominal_mm!r}")
    return min(0.003 * nominal_mm, 3.0), min(4.0 + 0.006 * nominal_mm, 10.0)


def section_dimension_prior(nominal_mm: float) -> Prior:
    """Normal prior for an external dimension (slab depth, beam width) [mm] (JCSS PMC 3.10)."""
    mean_dev, std_dev = dimension_deviation(nominal_mm)
    note = "" if nominal_mm <= 1000 else "JCSS model stated for dimensions up to about 1000 mm"
    return Prior("normal", nominal_mm + mean_dev, std_dev, unit="mm", note=note,
                 source="JCSS PMC Part 3.10: external dimensions of RC sections")
