"""Exposure classes as independent blocks of one PyMC model.

The deterioration fits of a site (chloride profiles, carbonation depths) give each
exposure class its own prior and its own class-level parameters (ageing exponent,
scatter of the readings). Rather than one model per class, which compiles and samples
once per class, the classes are blocks of one model: per-class parameters get the
dimension ``exposure`` and each zone and reading picks its class by an index. No
parameter is shared between blocks and no reading depends on two blocks, so the
joint posterior is the product of the classes' posteriors: each class's marginal
posterior is exactly the one its own model gives (a standard property of independent
blocks; e.g. Gelman et al. 2013, *Bayesian Data Analysis*, 3rd ed., ch. 5, from
memory). `split_posterior` takes one class's draws out again, with the names and
shapes its own model would have given.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping

import numpy as np

from assess.errors import InputError

CLASS_DIM = "exposure"
"""Name of the dimension of per-class variables."""


@dataclasses.dataclass(frozen=True)
class ClassBlocks:
    """Which class each zone and each reading belongs to, and the priors of each class.

    Attributes
    ----------
    names : tuple of str or None
        Class names; None for one class given as a single prior (scalar variables,
        no ``exposure`` dimension).
    priors : tuple
        Prior object of each class.
    zone_class : ndarray of int
        Class position of each zone [-].
    obs_class : ndarray of int
        Class position of each reading [-].
    """

    names: tuple | None
    priors: tuple
    zone_class: np.ndarray
    obs_class: np.ndarray

    @classmethod
    def build(cls, priors, zone_class, zones, obs_zone, prior_type, caller):
        """Check ``priors`` (one prior, or class name -> prior) and ``zone_class``.

        Raises
        ------
        InputError
            Priors of the wrong type, a zone without a known class, or a class
            without readings (its block would have nothing to fit).
        """
        n_zones, obs_zone = len(zones), np.asarray(obs_zone, dtype=int)
        if isinstance(priors, prior_type):
            if zone_class is not None:
                raise InputError(f"{caller}: 'zone_class' needs one prior per class (a dict "
                                 "class name -> priors).", column="zone_class")
            return cls(None, (priors,), np.zeros(n_zones, int), np.zeros(obs_zone.size, int))
        if not (isinstance(priors, Mapping) and priors
                and all(isinstance(p, prior_type) for p in priors.values())):
            raise InputError(f"The 'priors' parameter of {caller} must be a "
                             f"{prior_type.__name__} or a dict of class name -> "
                             f"{prior_type.__name__}.", column="priors")
        names = tuple(str(k) for k in priors)
        position = {name: i for i, name in enumerate(names)}
        classes = [] if zone_class is None else [str(c) for c in zone_class]
        if len(classes) != n_zones or any(c not in position for c in classes):
            raise InputError(f"{caller}: 'zone_class' must name one class of {list(names)} "
                             f"for each of the {n_zones} zones. Got {classes!r}.",
                             column="zone_class")
        by_zone = np.array([position[c] for c in classes], dtype=int)
        by_obs = by_zone[obs_zone]
        empty = [names[k] for k in range(len(names)) if not (by_obs == k).any()]
        if empty:
            raise InputError(f"{caller}: exposure class {empty[0]!r} has no readings; leave "
                             "it out of 'priors'.", column="zone_class")
        return cls(names, tuple(priors.values()), by_zone, by_obs)

    @property
    def multi(self) -> bool:
        """True when the classes are blocks (variables with dims ``exposure``)."""
        return self.names is not None

    @property
    def dims(self) -> dict:
        """Keyword arguments giving a per-class variable its dimension."""
        return {"dims": CLASS_DIM} if self.multi else {}

    @property
    def coords(self) -> dict:
        """Model coordinates of the class dimension."""
        return {CLASS_DIM: list(self.names)} if self.multi else {}

    def vec(self, value_of):
        """``value_of(k, priors_k)`` of every class: an array (classes), a float (one)."""
        values = np.array([value_of(k, p) for k, p in enumerate(self.priors)], dtype=float)
        return values if self.multi else float(values[0])

    def at_zone(self, value):
        """A per-class value (array or tensor) spread to the zones."""
        return value[self.zone_class] if self.multi else value

    def at_obs(self, value):
        """A per-class value (array or tensor) spread to the readings."""
        return value[self.obs_class] if self.multi else value


def split_posterior(idata, position: int, zones):
    """The draws of class ``position`` and its ``zones`` as its own model would name them.

    Per-class variables lose the ``exposure`` dimension, per-zone variables keep
    only the class's zones; the sample statistics (divergences, tree depth) are the
    joint run's. Returns an ``arviz.InferenceData`` with groups posterior and
    sample_stats.
    """
    import arviz as az

    post = idata.posterior
    if CLASS_DIM in post.dims:
        post = post.isel({CLASS_DIM: position}, drop=True)
    if "zone" in post.dims:
        post = post.sel(zone=list(zones))
    groups = {"posterior": post}
    if "sample_stats" in idata.groups():
        groups["sample_stats"] = idata.sample_stats
    return az.InferenceData(**groups)


__all__ = ["CLASS_DIM", "ClassBlocks", "split_posterior"]
