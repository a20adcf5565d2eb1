"""The one posterior cache: a stored fit is read back through the gate; a damaged file (zero
bytes, truncated) is set aside, never deleted, and the fit is sampled again with a warning.
Gate of Vehtari et al. (2021), doi:10.1214/20-BA1221; the netCDF file is what
arviz.InferenceData.to_netcdf writes."""

from __future__ import annotations

import numpy as np
import pymc as pm
import pytest

from assess.updating.cache import cached_posterior, content_hash, posterior_path
from assess.updating.gate import require_convergence
from assess.updating.models import sample_posterior


class Fit:
    def __init__(self, idata, gate=None):
        self.idata = idata
        self.gate = gate or require_convergence(idata, ["mu"], what="test mean")


def model():
    with pm.Model() as m:
        mu = pm.Normal("mu", 0.0, 10.0)
        pm.Normal("y", mu, 1.0, observed=np.array([0.3, -0.2, 0.5, 0.1]))
    return m


@pytest.fixture(scope="module")
def stored(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cache")
    calls = []

    def sample():
        calls.append(1)
        return Fit(sample_posterior(model(), draws=500, tune=300, seed=3))

    first = cached_posterior(folder, "test", {"case": 1}, sample=sample, rebuild=Fit,
                             parameter_names=["mu"], what="test mean")
    return folder, first, sample, calls


def test_a_stored_fit_is_read_back_through_the_gate(stored):
    folder, first, sample, calls = stored
    assert not first.reused and first.path.is_file()
    before = len(calls)  # the damaged-file tests may have sampled again (test order varies)
    again = cached_posterior(folder, "test", {"case": 1}, sample=sample, rebuild=Fit,
                             parameter_names=["mu"], what="test mean")
    assert again.reused and len(calls) == before and again.fit.gate.passed
    np.testing.assert_array_equal(again.fit.idata.posterior["mu"].values,
                                  first.fit.idata.posterior["mu"].values)  # same seed


@pytest.mark.parametrize("damage", ["empty", "truncated"])
def test_a_damaged_file_is_set_aside_and_sampled_again(stored, damage):
    folder, first, sample, calls = stored
    path = posterior_path(folder, "test", content_hash("test", {"case": 1}))
    data = path.read_bytes()
    path.write_bytes(b"" if damage == "empty" else data[: len(data) // 3])
    before = len(calls)
    with pytest.warns(UserWarning, match="could not be read"):
        again = cached_posterior(folder, "test", {"case": 1}, sample=sample, rebuild=Fit,
                                 parameter_names=["mu"], what="test mean")
    assert len(calls) == before + 1 and not again.reused and path.is_file()
    kept = list(path.parent.glob(f"{path.name}.damaged-*"))
    assert kept, "the damaged file is kept under a .damaged- name"


def test_hash_sees_every_value_of_a_long_table():
    """A long table differing in one middle value gets another hash (str() would abbreviate)."""
    import numpy as np
    import pandas as pd

    from assess.updating.cache import content_hash

    values = np.linspace(1.0, 2.0, 5000)
    changed = values.copy()
    changed[2500] += 0.5
    for make in (lambda v: pd.DataFrame({"value": v}), pd.Series, np.asarray):
        assert content_hash("x", {"data": make(values)}) != content_hash(
            "x", {"data": make(changed)}
        )
