"""Prior for the in-situ compressive strength of concrete from design information.

Source: JCSS Probabilistic Model Code, Part 3.1 "Concrete properties", table of
prior parameters for ln f_c "no specific information" (JCSS cites Kersken-Bradley &
Rackwitz 1991 and Rackwitz 1983).
"""

from __future__ import annotations

import re
import warnings

from assess.errors import InputError
from assess.priors.normal_gamma import NormalGamma

_JCSS_SOURCE = "JCSS PMC Part 3.1 (concrete properties), prior table for ln f_c"

#: Normal-gamma prior parameters for ln f_c (f_c in MPa) by production and class.
#: Keys: production -> class number -> (m', n', s', nu'). Override by passing your
#: own table to `concrete_prior(..., table=...)` or by building a `NormalGamma`.
#: The JCSS text does not say whether "C25" is the cylinder or the cube class; the
#: medians e^m' (38.5 MPa for C25) lie above EN 1992-1-1 f_cm = f_ck + 8 = 33 MPa for
#: a cylinder class C25/30, so check against local production records.
CONCRETE_PRIORS: dict[str, dict[int, tuple[float, float, float, float]]] = {
    "ready-mixed": {
        15: (3.40, 3.0, 0.14, 10.0),
        25: (3.65, 3.0, 0.12, 10.0),
        35: (3.85, 3.0, 0.09, 10.0),
        45: (3.98, 3.0, 0.07, 10.0),
    },
    "precast": {
        25: (3.80, 3.0, 0.09, 10.0),
        35: (3.95, 3.0, 0.08, 10.0),
        45: (4.08, 4.0, 0.07, 10.0),
        55: (4.15, 4.0, 0.05, 10.0),
    },
}

_PRODUCTION_ALIASES = {"readymixed": "ready-mixed", "ready-mix": "ready-mixed",
                       "readymix": "ready-mixed", "precast": "precast", "pre-cast": "precast"}


def parse_concrete_class(concrete_class) -> int:
    """Class number from ``"C25"``, ``"C25/30"``, ``"c 25"`` or ``25`` [MPa].

    For an EN 206 label ``C25/30`` the first number (cylinder f_ck) is used.
    """
    if isinstance(concrete_class, (int, float)) and not isinstance(concrete_class, bool):
        return int(round(concrete_class))
    match = re.fullmatch(r"\s*[cC]?\s*(\d{1,3})(?:\s*/\s*\d{1,3})?\s*", str(concrete_class))
    if not match:
        raise InputError(
            f"concrete class must look like 'C25', 'C25/30' or 25, got {concrete_class!r}")
    return int(match.group(1))


def _normalise_production(production: str, table: dict) -> str:
    key = str(production).strip().lower().replace("_", "-").replace(" ", "-")
    key = _PRODUCTION_ALIASES.get(key.replace("-", ""), _PRODUCTION_ALIASES.get(key, key))
    if key not in table:
        raise InputError(f"production must be one of {sorted(table)}, got {production!r} "
                         "(see assess.priors.CONCRETE_PRIORS)")
    return key


def concrete_prior(concrete_class, production: str = "ready-mixed", *,
                   table: dict | None = None) -> NormalGamma:
    """Normal-gamma prior (m', n', s', nu') for ln f_c, f_c in MPa.

    Parameters
    ----------
    concrete_class : str or int
        Specified class, e.g. ``"C25"`` or ``"C25/30"`` (first number used).
    production : str
        ``"ready-mixed"`` or ``"precast"``.
    table : dict, optional
        Replacement for `CONCRETE_PRIORS` (same layout), e.g. regional values.

    Returns
    -------
    NormalGamma
        Prior parameters for ln f_c [ln MPa], with their source.

    Notes
    -----
    Classes between two table rows are interpolated linearly in the class number
    for m' and s', taking the smaller n' and nu' of the two rows (less prior
    weight), and the source says so (a stated step, not a warning: C30, the
    template's class, lies between two rows); classes outside the table take the
    nearest row and warn, since that can overestimate the strength.
    The JCSS table does not state whether its classes are cylinder or cube
    classes; give the class in the same convention as your
    production records, and override the table where they disagree.
    """
    table = CONCRETE_PRIORS if table is None else table
    key = _normalise_production(production, table)
    number = parse_concrete_class(concrete_class)
    rows = table[key]
    classes = sorted(rows)
    source = f"{_JCSS_SOURCE}, {key} C{number}"
    if number in rows:
        m, n, s, nu = rows[number]
        return NormalGamma.from_jcss(m, n, s, nu, source=source)
    if number < classes[0] or number > classes[-1]:
        nearest = classes[0] if number < classes[0] else classes[-1]
        side = ("overestimates the strength (unconservative)" if number < nearest
                else "underestimates the strength (conservative)")
        warnings.warn(
            f"concrete class C{number} ({key}) is not in the JCSS prior table; using the "
            f"nearest row C{nearest}, which {side}. Give a prior from local records if you can.",
            stacklevel=2)
        m, n, s, nu = rows[nearest]
        return NormalGamma.from_jcss(m, n, s, nu,
                                     source=f"{_JCSS_SOURCE}, {key} C{nearest} used for C{number}")
    lower = max(c for c in classes if c < number)
    upper = min(c for c in classes if c > number)
    w = (number - lower) / (upper - lower)
    lo, hi = rows[lower], rows[upper]
    return NormalGamma.from_jcss(
        (1 - w) * lo[0] + w * hi[0], min(lo[1], hi[1]), (1 - w) * lo[2] + w * hi[2],
        min(lo[3], hi[3]),
        source=f"{_JCSS_SOURCE}, {key}, interpolated between C{lower} and C{upper}")
