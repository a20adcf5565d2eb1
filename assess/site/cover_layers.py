"""Cover where it was measured: populations of ln c per bar layer (member and face).

Cover readings carry a zone, usually a member and a face (top, bottom, side). The
cover of the top bars of a deck says little about the cover of its bottom bars, so
the readings are pooled per *cell* = (zone, face), never across faces, and within
a cell per member with partial pooling (Gelman et al. 2013, *Bayesian Data
Analysis*, 3rd ed., ch. 5):

    ln c_i ~ N(mu_l(i), sigma_k)                       reading i of layer l in cell k
    mu_l = B_l + delta_k + tau eps_l,  eps_l ~ N(0, 1) layer (member, face) with readings
    delta_k = z_k sigma_k,  z_k ~ N(0, 1/n'_k),  1/sigma_k^2 ~ Gamma(nu'_k/2, nu'_k s'_k^2/2)
    tau ~ HalfNormal(COVER_TAU_SCALE)                  spread of member means in a cell

B_l is the centre of the layer's design prior (ln of the JCSS PMC 3.10 median for
its nominal cover, `assess.site.knowledge.cover_layer_priors`); delta_k is the
shift of the cell (the contractor's bias on that face of that zone, with the
cell's normal-gamma design prior); readings with no member observe the cell
mean B_k + delta_k. A member with few readings borrows from the others of the
cell through tau; a member of the zone with no readings on that face gets
B_l + delta_k + tau eps_new with a new eps_new ~ N(0, 1) (the predictive of a
new member), and ``(None, face)`` the same about the cell's centre B_k.

Readings without a face take the tension face of their member (site file), or,
without a member either, the most common tension face of the zone's members (a tie
goes to the first of them in the site file).
Every zone has one cell at least: its *main face* (most readings; without
readings the most common tension face), whose population is the zone-level
``cover`` (``<cover>::mu`` and ``sigma`` with dims ``group``) that code not yet
aware of faces reads.
"""

from __future__ import annotations

import dataclasses
from collections import Counter

import numpy as np
import pandas as pd

from assess.priors.normal_gamma import NormalGamma
from assess.site.knowledge import _no_member_cover, cover_layer_priors
from assess.updating.models import with_error

#: Half-normal scale of the spread of member mean covers within a zone and face, on
#: ln c [-] (judgement: members of one face and zone differ by some 5-10 % in mean
#: cover; JCSS PMC 3.10 gives no between-member figure).
COVER_TAU_SCALE = 0.10


@dataclasses.dataclass(frozen=True)
class CoverLayout:
    """Cells, layers and readings of the cover model of a site.

    Attributes
    ----------
    zones : list of str
    cells : list of (zone, face)
    main_cell : dict
        zone -> index into ``cells`` of the zone's main face.
    layers : list of (zone, member_id, face)
        Layers (member and face) with readings.
    values : ndarray
        ln of every reading [ln mm].
    cell_of_reading, layer_of_reading : ndarray of int
        Cell and layer (-1 = no member) of every reading.
    before_local : dict
        zone -> {(member_id or None, face): {"cover": NormalGamma}} design priors.
    """

    zones: list
    cells: list
    main_cell: dict
    layers: list
    values: np.ndarray
    cell_of_reading: np.ndarray
    layer_of_reading: np.ndarray
    before_local: dict

    def cell_prior(self, k: int) -> NormalGamma:
        zone, face = self.cells[k]
        return self.before_local[zone][(None, face)]["cover"]

    def layer_prior(self, zone, member, face) -> NormalGamma:
        return self.before_local[zone][(member, face)]["cover"]

    def main_face(self, zone) -> str:
        return self.cells[self.main_cell[zone]][1]

    def payload(self) -> dict:
        """What identifies the model (for the posterior's content hash)."""
        return {
            "cells": [list(c) for c in self.cells],
            "layers": [list(layer) for layer in self.layers],
            "cell_of_reading": self.cell_of_reading.tolist(),
            "layer_of_reading": self.layer_of_reading.tolist(),
        }


def _zone_tension_face(site, zone) -> str:
    faces = Counter(m.tension_face for m in site.members.values() if m.zone == zone)
    return faces.most_common(1)[0][0] if faces else "bottom"


def assign_layers(site, frame: pd.DataFrame) -> pd.DataFrame:
    """Readings with their member (None if not a member of the site file) and face."""
    out = frame.copy()
    members = site.members
    known = [
        m if isinstance(m, str) and m in members and members[m].zone == z else None
        for m, z in zip(out.get("member", pd.Series([None] * len(out))), out["zone"])
    ]
    out["member"] = pd.Series(known, index=out.index, dtype=object)
    faces = []
    for m, z, f in zip(out["member"], out["zone"], out.get("face", [None] * len(out))):
        if isinstance(f, str) and f:
            faces.append(f)
        elif m is not None:
            faces.append(members[m].tension_face)
        else:
            faces.append(_zone_tension_face(site, z))
    out["face"] = pd.Series(faces, index=out.index, dtype=object)
    return out


def cover_layout(site, frame: pd.DataFrame) -> CoverLayout:
    """Cells, layers, readings and design priors of the cover model (see the module text)."""
    frame = assign_layers(site, frame) if len(frame) else frame.assign(member=[], face=[])
    zones = list(site.zones)
    extra: dict[str, list] = {z: [] for z in zones}
    for m, z, f in zip(frame["member"], frame["zone"], frame["face"]):
        extra[z].append((m, f))
    before_local = {
        z: {k: {"cover": ng} for k, ng in cover_layer_priors(site, z, extra[z]).items()}
        for z in zones
    }
    cells: list = []
    main_cell = {}
    for z in zones:
        counts = Counter(frame.loc[frame["zone"] == z, "face"])
        faces = [f for f, _ in counts.most_common()] or [_zone_tension_face(site, z)]
        main_cell[z] = len(cells)
        cells.extend((z, f) for f in faces)
    for z, f in cells:  # a zone without members: the generic cover prior
        before_local[z].setdefault((None, f), {"cover": _no_member_cover(site)})
    cell_index = {c: i for i, c in enumerate(cells)}
    layers = list(
        dict.fromkeys(
            (z, m, f) for z, m, f in zip(frame["zone"], frame["member"], frame["face"]) if m
        )
    )
    layer_index = {layer: i for i, layer in enumerate(layers)}
    values = np.log(frame["value"].to_numpy(dtype=float))
    cell_of = np.array([cell_index[(z, f)] for z, f in zip(frame["zone"], frame["face"])], int)
    layer_of = np.array(
        [
            layer_index.get((z, m, f), -1)
            for z, m, f in zip(frame["zone"], frame["member"], frame["face"])
        ],
        int,
    )
    return CoverLayout(zones, cells, main_cell, layers, values, cell_of, layer_of, before_local)


def add_cover_model(
    pm, layout: CoverLayout, name: str = "cover", measurement_sd: float = 0.0
) -> None:
    """Add the cover sub-model (variables ``<name>::...``) to the open PyMC model.

    A reading is the true cover plus the cover meter's error, of sd ``measurement_sd``
    on ln c [-] (`assess.updating.measurement_error`), so ``sigma`` excludes it.

    Deterministics: ``mu`` and ``sigma`` (dims ``group``: the zone-level population of
    the main face, for a new member), ``layer_mu`` (one per layer with readings) and
    ``cell_sigma``, ``cell_shift`` (one per cell).
    """
    k_cells = len(layout.cells)
    priors = [layout.cell_prior(k) for k in range(k_cells)]
    shape = np.array([p.shape for p in priors])
    rate = np.array([p.rate for p in priors])
    z_std = np.array([p.z_std for p in priors])
    cell_center = np.array([p.center for p in priors])
    layer_center = np.array([layout.layer_prior(z, m, f).center for z, m, f in layout.layers])
    layer_cell = np.array([layout.cells.index((z, f)) for z, _, f in layout.layers], dtype=int)
    main = np.array([layout.main_cell[z] for z in layout.zones], dtype=int)
    with pm.Model(name=name):
        precision = pm.Gamma("precision", alpha=shape, beta=rate, shape=k_cells)
        sigma_k = pm.Deterministic("cell_sigma", 1.0 / pm.math.sqrt(precision))
        z_k = pm.Normal("zloc", mu=0.0, sigma=z_std, shape=k_cells)
        delta = pm.Deterministic("cell_shift", z_k * sigma_k)
        tau = pm.HalfNormal("tau", sigma=COVER_TAU_SCALE)
        eps_new = pm.Normal("eps_new", 0.0, 1.0, dims="group")
        pm.Deterministic("mu", cell_center[main] + delta[main] + tau * eps_new, dims="group")
        pm.Deterministic("sigma", sigma_k[main], dims="group")
        reading_mu = cell_center[layout.cell_of_reading] + delta[layout.cell_of_reading]
        if layout.layers:
            eps = pm.Normal("eps", 0.0, 1.0, shape=len(layout.layers))
            layer_mu = pm.Deterministic("layer_mu", layer_center + delta[layer_cell] + tau * eps)
            has_layer = layout.layer_of_reading >= 0
            reading_mu = pm.math.switch(
                has_layer, layer_mu[np.maximum(layout.layer_of_reading, 0)], reading_mu
            )
        if layout.values.size:
            pm.Normal(
                "y",
                mu=reading_mu,
                sigma=with_error(pm, sigma_k[layout.cell_of_reading], float(measurement_sd)),
                observed=layout.values,
            )


def cover_after_local(idata, layout: CoverLayout, *, seed: int, source: str, name: str = "cover"):
    """Posterior populations of ln c per bar layer: zone -> {(member or None, face): {"cover": NG}}.

    Layers with readings use their ``layer_mu``; the other layers of a face with a cell
    get B_l + delta_k + tau eps_new (a new member of the cell), ``(None, face)`` the same
    about the cell centre; faces without a cell keep their design prior.
    """
    post = idata.posterior
    p = f"{name}::"

    def flat(var):
        values = post[p + var].values
        return values.reshape(values.shape[0] * values.shape[1], *values.shape[2:])

    sigma = flat("cell_sigma")
    delta = flat("cell_shift")
    tau = flat("tau")
    layer_mu = flat("layer_mu") if layout.layers else None
    rng = np.random.default_rng(seed)
    after: dict = {}
    for zone in layout.zones:
        after[zone] = {}
        for (member, face), pops in layout.before_local[zone].items():
            if (zone, face) not in layout.cells:
                after[zone][(member, face)] = dict(pops)
                continue
            k = layout.cells.index((zone, face))
            if layer_mu is not None and (zone, member, face) in layout.layers:
                mu = layer_mu[:, layout.layers.index((zone, member, face))]
                what = f"{member} {face} readings"
            else:
                center = pops["cover"].center
                mu = center + delta[:, k] + tau * rng.standard_normal(tau.size)
                what = f"{'member ' + member if member else 'a member'} on the {face} face, "
                what += "no readings of its own"
            after[zone][(member, face)] = {
                "cover": NormalGamma.fit_draws(
                    mu, sigma[:, k], source=f"{source}; cover ({what}), zone {zone}"
                )
            }
    return after


__all__ = [
    "COVER_TAU_SCALE",
    "CoverLayout",
    "add_cover_model",
    "assign_layers",
    "cover_after_local",
    "cover_layout",
]
