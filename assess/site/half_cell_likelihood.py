"""Which likelihood of a half-cell reading each zone uses: the site's own or the published one.

A reading E [mV vs CSE] enters the corrosion update through f(E | active) and
f(E | passive) (`assess.deterioration.halfcell`). For each zone:

- **site-calibrated**: the zone's ``[zones.<id>.half_cell_calibration]`` table in the site
  file (means and sds of the potentials of corroding and passive steel, found by the
  engineer on this structure, e.g. from break-outs opened at surveyed grid points, and the
  ``basis`` saying so);
- **published ranges by condition** otherwise: the RILEM TC 154-EMC typical potential
  ranges of the condition that matches the zone's exposure
  (`assess.deterioration.halfcell.EXPOSURE_CONDITION`: exposed deck -> wet,
  chloride-contaminated; sheltered soffit -> humid, carbonated; internal -> dry).

Readings taken against a calomel or silver/silver-chloride electrode are converted to
CSE when they are read (`inspection_io.units`), so one table per condition serves every
electrode. The report warns while any zone with readings uses the published ranges
(`assess.site.corrosion.warn_half_cell`).

References
----------
.. [1] B. Elsener et al., "Half-cell potential measurements - Potential mapping on
   reinforced concrete structures," RILEM TC 154-EMC recommendations, *Materials and
   Structures* 36, pp. 461-471, 2003 (the table of ranges from memory).
"""

from __future__ import annotations

import dataclasses
from types import MappingProxyType
from typing import Mapping

from assess.deterioration.halfcell import (
    EXPOSURE_CONDITION,
    HALF_CELL_CONDITIONS,
    condition_likelihood,
)
from assess.errors import InputError


@dataclasses.dataclass(frozen=True)
class HalfCellLikelihood:
    """Per-zone likelihood parameters of half-cell readings and where they come from.

    Attributes
    ----------
    params : mapping
        zone -> {``active_mean_mv``, ``active_sd_mv``, ``passive_mean_mv``,
        ``passive_sd_mv``} [mV vs CSE].
    calibrated : tuple of str
        Zones whose parameters the site file gives (site-calibrated).
    sources : mapping
        zone -> plain text of the source (the site file's ``basis`` or the published
        condition).
    """

    params: Mapping[str, Mapping[str, float]]
    calibrated: tuple[str, ...]
    sources: Mapping[str, str]

    def all_calibrated(self, zones) -> bool:
        """Whether every zone of ``zones`` is site-calibrated (True for no zone)."""
        return all(zone in self.calibrated for zone in zones)


def zone_condition(zone) -> str:
    """Concrete condition of `HALF_CELL_CONDITIONS` for a zone of the site file."""
    exposure = str(getattr(zone, "exposure", ""))
    if exposure not in EXPOSURE_CONDITION:
        raise InputError(
            f"zone {getattr(zone, 'zone_id', '?')!r} has exposure {exposure!r}; the half-cell "
            f"conditions are known for {', '.join(EXPOSURE_CONDITION)}",
            column=f"zones.{getattr(zone, 'zone_id', '?')}.exposure",
        )
    return EXPOSURE_CONDITION[exposure]


def zone_half_cell_likelihood(site, zones=None) -> HalfCellLikelihood:
    """Likelihood parameters of half-cell readings for the zones of a site [mV vs CSE].

    Parameters
    ----------
    site : inspection_io.site.Site
    zones : sequence of str, optional
        Zone ids (default every zone of the site).
    """
    zones = tuple(site.zones) if zones is None else tuple(zones)
    params, sources, calibrated = {}, {}, []
    for zone_id in zones:
        zone = site.zones[zone_id]
        own = getattr(zone, "half_cell_calibration", None)
        if own is not None:
            params[zone_id] = MappingProxyType(
                {
                    f"{state}_{kind}_mv": float(own[f"{state}_{kind}"])
                    for state in ("active", "passive")
                    for kind in ("mean", "sd")
                }
            )
            sources[zone_id] = f"site-calibrated ({own['basis']})"
            calibrated.append(zone_id)
        else:
            condition = zone_condition(zone)
            params[zone_id] = MappingProxyType(condition_likelihood(condition))
            sources[zone_id] = f"published ranges for {condition} concrete (RILEM TC 154-EMC)"
    return HalfCellLikelihood(
        params=MappingProxyType(params),
        calibrated=tuple(calibrated),
        sources=MappingProxyType(sources),
    )


__all__ = [
    "HALF_CELL_CONDITIONS",
    "HalfCellLikelihood",
    "zone_condition",
    "zone_half_cell_likelihood",
]
