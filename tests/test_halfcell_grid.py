"""Half-cell readings on a grid: coordinates in the reader, effective number of readings,
a tempered likelihood and the check that a finer grid over the same area barely narrows
the initiation posterior.

References: the effective number of correlated readings n_eff = n^2 / sum_ij rho_ij is the
number of independent readings whose mean has the same variance (e.g. Cressie,
*Statistics for Spatial Data*, rev. ed., 1993, sect. 1.3; from memory); the exponential
correlation rho(h) = exp(-h / L) (common practice for potential fields); the power
(tempered) likelihood, posterior ~ prior x L^w (e.g. Holmes & Walker, *Biometrika* 104,
2017; from memory).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import integrate, stats

from assess.deterioration.defaults import HALF_CELL_LIKELIHOOD
from assess.deterioration.halfcell import (
    condition_likelihood,
    potential_log_likelihood,
    with_reading_error,
)
from assess.updating.corrosion import (
    CorrosionFit,
    HalfCellData,
    ZoneCorrosionPrior,
    corrosion_model,
    half_cell_log_likelihood,
    prepare_half_cell,
)
from assess.updating.spatial import effective_number, grid_coordinates
from inspection_io.errors import InputError
from inspection_io.readers import read_campaign_file


def write_csv(tmp_path, text, name="file.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_reader_keeps_grid_coordinates_in_metres(tmp_path):
    path = write_csv(tmp_path, "location_id,zone,potential [mV CSE],x [m],y [mm]\n"
                               "H1,L1,-200,0.5,250\nH2,L1,-310,1.0,250\n")
    rows = read_campaign_file(path).observations
    extra = [json.loads(text) for text in rows["extra"]]
    assert (extra[0]["x_m"], extra[0]["y_m"]) == (0.5, 0.25)  # 250 mm = 0.25 m
    assert (extra[1]["x_m"], extra[1]["y_m"]) == (1.0, 0.25)


def test_reader_without_coordinates_still_reads(tmp_path):
    path = write_csv(tmp_path, "location_id,zone,potential [mV CSE]\nH1,L1,-200\n")
    assert "x_m" not in json.loads(read_campaign_file(path).observations["extra"].iloc[0])


@pytest.mark.parametrize("text, row, column, message", [
    ("location_id,zone,potential [mV CSE],x [m]\nH1,L1,-200,0.5\n", 1, "x [m]",
     "needs its partner 'y [m]'"),
    ("location_id,zone,potential [mV CSE],x [m],y [m]\nH1,L1,-200,0.5,\n", 2, "y [m]",
     "empty grid coordinate"),
    ("location_id,zone,potential [mV CSE],x [m],y [m]\nH1,L1,-200,0.5,abc\n", 2, "y [m]",
     "abc"),
    ("location_id,zone,potential [mV CSE],x [ft],y [m]\nH1,L1,-200,0.5,1\n", 1, "x [ft]",
     "ft"),
])
def test_reader_refuses_bad_coordinates_naming_row_and_column(tmp_path, text, row, column,
                                                              message):
    path = write_csv(tmp_path, text)
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert message in info.value.message
    assert info.value.row == row and info.value.column == column


# --- effective number of readings -------------------------------------------------------

def test_two_readings_effective_number_closed_form():
    # n_eff = n^2 / sum_ij rho_ij = 4 / (2 + 2 exp(-d/L)) for two readings d apart
    for d, length in ((0.3, 1.0), (1.0, 1.0), (2.5, 0.5)):
        expected = 4.0 / (2.0 + 2.0 * math.exp(-d / length))
        assert effective_number([0.0, d], [0.0, 0.0], length) == pytest.approx(expected,
                                                                               rel=1e-12)
    assert effective_number([0.0], [0.0]) == 1.0
    # far apart: independent
    assert effective_number([0.0, 1e3, 2e3], [0.0, 0.0, 0.0]) == pytest.approx(3.0)


def test_dense_grid_effective_number_saturates_with_area():
    # n_eff -> A / (2 pi L^2) for a dense grid (integral of exp(-r/L) over the plane); edge
    # effects make a finite patch worth a little more, so the dense limit is a lower bound
    # and a 4x denser grid over the same area changes it by a few per cent only.
    length = 0.5
    coarse = effective_number(*grid_coordinates(21 * 21, 0.25), length)   # 5 m x 5 m
    fine = effective_number(*grid_coordinates(41 * 41, 0.125), length)    # same area
    limit = 25.0 / (2.0 * math.pi * length**2)
    assert limit < fine < 1.6 * limit
    assert abs(fine / coarse - 1.0) < 0.1


# --- tempered likelihood: a finer grid over the same area barely narrows t_i ----------

PRIOR_MEDIAN, PRIOR_LOG_SD, SCATTER, AGE = 30.0, 0.5, 0.7, 40.0  # [yr], [-], [-], [yr]


def survey(duplicate: bool, seed=5):
    """Synthetic test input: 25 potentials on a 5 x 5 grid at 0.5 m; with ``duplicate``
    each reading is repeated at the four points of a 0.25 m grid over the same cell."""
    rng = np.random.default_rng(seed)
    active = rng.random(25) < 0.6
    e = np.where(active, rng.normal(-400.0, 75.0, 25), rng.normal(-150.0, 75.0, 25))
    x, y = grid_coordinates(25, 0.5)
    if not duplicate:
        return e, x, y
    shifts = np.array([[-0.125, -0.125], [-0.125, 0.125], [0.125, -0.125], [0.125, 0.125]])
    return (np.repeat(e, 4), (x[:, None] + shifts[:, 0]).ravel(),
            (y[:, None] + shifts[:, 1]).ravel())


def posterior_sd_of_log_ti(e, x, y, correlation_length_m):
    """Quadrature posterior sd of ln t_i: normal prior x tempered mixture likelihood."""
    data = HalfCellData(np.full(e.size, AGE), e, np.zeros(e.size, int), x, y)
    prepared = prepare_half_cell(data, ["Z"], correlation_length_m=correlation_length_m)
    grid = np.linspace(math.log(PRIOR_MEDIAN) - 4.0, math.log(PRIOR_MEDIAN) + 4.0, 4001)
    log_post = (stats.norm.logpdf(grid, math.log(PRIOR_MEDIAN), PRIOR_LOG_SD)
                + half_cell_log_likelihood(prepared, grid[:, None], [SCATTER])[:, 0])
    w = np.exp(log_post - log_post.max())
    w /= integrate.trapezoid(w, grid)
    mean = integrate.trapezoid(grid * w, grid)
    return math.sqrt(integrate.trapezoid((grid - mean) ** 2 * w, grid))


def test_finer_grid_over_the_same_area_barely_narrows_the_initiation_posterior():
    coarse = posterior_sd_of_log_ti(*survey(False), correlation_length_m=1.0)
    fine = posterior_sd_of_log_ti(*survey(True), correlation_length_m=1.0)
    # four times the readings, the same information: the sd shrinks by less than 5 %
    assert fine / coarse > 0.95
    # the check can fail: readings taken as independent (tiny correlation length) shrink
    # the sd markedly when duplicated (towards 1/2 for a data-dominated posterior)
    coarse_iid = posterior_sd_of_log_ti(*survey(False), correlation_length_m=1e-6)
    fine_iid = posterior_sd_of_log_ti(*survey(True), correlation_length_m=1e-6)
    assert fine_iid / coarse_iid < 0.8


def test_pymc_half_cell_term_equals_the_numpy_likelihood():
    e, x, y = survey(False)
    data = HalfCellData(np.full(e.size, AGE), e, np.zeros(e.size, int), x, y)
    prior = ZoneCorrosionPrior(0.1, 1.0, PRIOR_MEDIAN, PRIOR_LOG_SD)
    model = corrosion_model(["Z"], priors={"Z": prior}, half_cell=data, spatial_log_sd=SCATTER)
    prepared = prepare_half_cell(data, ["Z"])
    logp = model.compile_logp(jacobian=False)
    for log_ti, log_rate in ((3.2, -2.0), (3.9, -1.0)):
        point = {"log_initiation_time": np.array([log_ti]),
                 "log_corrosion_rate": np.array([log_rate])}
        priors = (stats.norm.logpdf(log_ti, math.log(PRIOR_MEDIAN), PRIOR_LOG_SD)
                  + stats.norm.logpdf(log_rate, math.log(0.1), 1.0))
        expected = priors + half_cell_log_likelihood(prepared, [[log_ti]], [SCATTER])[0, 0]
        assert float(logp(point)) == pytest.approx(expected, rel=1e-9)
    # the weights are the survey's n_eff / n
    assert prepared.weights == pytest.approx(np.full(25, prepared.surveys[0]["n_eff"] / 25))


def test_reading_error_widens_both_states_in_quadrature():
    p = with_reading_error(HALF_CELL_LIKELIHOOD, 5.0)
    assert p["active_sd_mv"] == pytest.approx(math.hypot(HALF_CELL_LIKELIHOOD["active_sd_mv"],
                                                         5.0))
    assert p["passive_mean_mv"] == HALF_CELL_LIKELIHOOD["passive_mean_mv"]


def test_dry_concrete_potentials_carry_no_evidence():
    # RILEM TC 154-EMC (from memory): the same range for dry carbonated and non-carbonated
    # concrete, so the likelihood ratio is 1 and the posterior equals the prior
    params = condition_likelihood("dry")
    e = np.array([-300.0, 0.0, 150.0])
    assert potential_log_likelihood(e, "active", params) == pytest.approx(
        potential_log_likelihood(e, "passive", params))


# --- how much the half-cell readings moved t_i -------------------------------------------

def test_half_cell_effect_recovers_the_prior_by_reweighting():
    """Draws from the exact (quadrature) posterior, reweighted by 1/L, give the prior back:
    the prior median is exp(m) (closed form); tolerance from the reweighted ESS."""
    import arviz as az

    e, x, y = survey(False)
    data = HalfCellData(np.full(e.size, AGE), e, np.zeros(e.size, int), x, y)
    prepared = prepare_half_cell(data, ["Z"])
    grid = np.linspace(math.log(PRIOR_MEDIAN) - 4.0, math.log(PRIOR_MEDIAN) + 4.0, 8001)
    log_post = (stats.norm.logpdf(grid, math.log(PRIOR_MEDIAN), PRIOR_LOG_SD)
                + half_cell_log_likelihood(prepared, grid[:, None], [SCATTER])[:, 0])
    cdf = np.cumsum(np.exp(log_post - log_post.max()))
    cdf /= cdf[-1]
    rng = np.random.default_rng(11)
    log_ti = np.interp(rng.random(8000), cdf, grid)
    t_i = np.exp(log_ti).reshape(4, 2000, 1)
    idata = az.from_dict(posterior={"initiation_time": t_i,
                                    "corrosion_rate": np.full_like(t_i, 0.1)},
                         coords={"zone": ["Z"]}, dims={"initiation_time": ["zone"],
                                                       "corrosion_rate": ["zone"]})
    prior = ZoneCorrosionPrior(0.1, 1.0, PRIOR_MEDIAN, PRIOR_LOG_SD)
    fit = CorrosionFit(idata, None, ("Z",), {"Z": prior}, {"Z": SCATTER}, 1,
                       half_cell=prepared)
    effect = fit.half_cell_effect("Z")
    without = effect["without_half_cell_years"]["median"]
    # sd of a sample median of ln t: sqrt(pi/2) sigma / sqrt(ESS); 4 of them
    tolerance = 4.0 * math.sqrt(math.pi / 2.0) * PRIOR_LOG_SD / math.sqrt(
        effect["reweighting_ess"])
    assert abs(math.log(without) - math.log(PRIOR_MEDIAN)) < tolerance
    assert effect["median_shift_years"] == pytest.approx(
        effect["with_half_cell_years"]["median"] - without)
    assert effect["readings"] == 25 and 1.0 < effect["effective_readings"] < 25.0


def test_report_shows_the_half_cell_effect_table():
    """The life section lists, per zone, t_i with and without the readings (numbers given
    here, not computed: the table only shows them)."""
    import types

    from assess.report.assemble import _half_cell_effect_table
    from assess.report.document import ReportDocument

    effect = {"readings": 25, "effective_readings": 6.2, "calibrated": False,
              "with_half_cell_years": {"p05": 18.0, "median": 24.0, "p95": 31.0},
              "without_half_cell_years": {"p05": 13.0, "median": 27.5, "p95": 46.0}}
    life = types.SimpleNamespace(corrosion={
        "L3": types.SimpleNamespace(half_cell_effect=effect),
        "L1": types.SimpleNamespace(half_cell_effect=None)})
    doc = ReportDocument("t")
    _half_cell_effect_table(doc.add_section("life"), life)
    html = doc.to_html()
    assert "with and without the half-cell" in html
    assert "27.5" in html and "13-46" in html and "no (defaults)" in html
    assert "L1" not in html.split("with and without the half-cell")[1]
