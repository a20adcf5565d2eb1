"""Remaining life: reliability index over time of deteriorating members.

- `corrosion_inputs`: per-zone distributions of corrosion initiation time and
  corrosion rate (posterior from break-outs and half-cell surveys, or prior).
- `projection`: annual beta(t) per member, mode and member system with common
  random numbers, and the remaining life against the annual target.
"""


def site_life_summary(site, update, **options):
    """Remaining life of every member (see `assess.life.site_summary.site_life_summary`)."""
    from assess.life.site_summary import site_life_summary as compute

    return compute(site, update, **options)
