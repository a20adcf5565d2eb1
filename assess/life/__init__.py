"""Remaining life: reliability index over time of deteriorating members.

- `projection`: annual beta(t) per member, mode and member system with common
  random numbers, and the remaining life against the annual target.
- `crossing`: the time at which a beta(t) curve crosses the target.

The site's corrosion inputs (initiation time and rate per zone) come from
`assess.site.corrosion`.
"""
