"""Generate the invented demo site "Tanners Yard car park" and the truth behind it.

Everything in the demo site is invented: the structure, its members, the test
results. The numbers are drawn from a documented generating model with a fixed
seed, and every "true" parameter the draws came from is written to
``truth.json`` so that later work can check that Bayesian updating recovers it.

Usage
-----
::

    python demo_sites/generate_demo.py [--out demo_sites/tanners-yard] [--seed 20261202]

The same seed regenerates the same folder byte for byte (CSV, TOML, JSON and,
with fixed workbook timestamps, XLSX). Only numpy, scipy and openpyxl are used.

Scenario
--------
A four-level multi-storey car park, exposed to the elements from 1 October 1974
(``EXPOSURE_START``). Zones L1 (enclosed lower level, "internal"), L2 (covered
deck, "sheltered soffit"), L3 (covered deck with open sides, "exposed deck") and
L4 (roof deck, "exposed deck"). Ten members: one-way slabs, downstand beams and
flat-slab column connections; several slabs and beams continuous over their
supports with top bars there. Each member is designed to the code of its time,
CP 110:1972 in simplified form (``design_check.py``), with a governing utilisation
of 0.67-0.90; the check is printed and written to truth.json (``design``). Three
inspection campaigns (2009, 2017, 2025), each a folder with ``campaign.toml`` and
test files of several kinds; every reading states the face it was taken on.

Generating model
----------------
Ages t are in years since ``EXPOSURE_START`` (age of each row from its date).

Concrete strength (hierarchical lognormal; JCSS Probabilistic Model Code Part
3.1, in-situ strength lognormal with job log-mean M and log-std Sigma):
    mu_zone ~ N(mu_site, tau), ln f_is = mu_zone + sigma_log_fc * U, U ~ N(0, 1).
    A core of diameter d and tested length l is reported "as tested":
    f_core = f_is / (F_l/d * F_dia * F_mc * F_dd), with the factor chain the
    readers use by default (``inspection_io.cores``): ASTM C42/C42M l/d factors
    1.00 -> 0.87, 1.25 -> 0.93, 1.50 -> 0.96, 1.75 -> 0.98, 2.00 -> 1.00 (linear
    interpolation; from memory), and Bartlett & MacGregor (1994) diameter
    (100 mm -> 1.00), moisture (as-received -> 1.00) and drilling-damage (1.06)
    factors (from memory). Correcting a core with the same chain recovers f_is.
    A core with a bar across it is reported a further ``BAR_IN_CORE_FACTOR``
    weaker, a core damaged in drilling ``DAMAGED_CORE_FACTOR`` weaker; both are
    flagged in the file (invented factors: such cores are to be left out).

Steel yield (JCSS PMC Part 3.2): normal, mean = f_yk + 2 * 30 MPa plus a drawn
    mill deviation N(0, 15 MPa), standard deviation 30 MPa. Tensile strength =
    yield * N(1.18, 0.04); elongation N(15 %, 2 %) (invented, common practice).

Cover (JCSS PMC Part 3.10 advises a bounded-below distribution): gamma per zone
    and face with true mean/sd, the deck top (top bars: ``cover_mean``) and the
    soffit (bottom bars of slabs: ``faces.bottom``, own random stream); cover-meter
    readings add N(0, 3 mm) error (BS 1881-204 accuracy of a few mm, from memory).
    Chloride and carbonation values of a zone hold on both faces where the soffit
    is sampled (L1, L2: sheltered on both faces).

Chloride (Fick's second law, error-function solution; fib Bulletin 34 (2006)
    ageing form, from memory):
    C(x, t) = C0 + (Cs - C0) * erfc(x / (2 sqrt(D_app(t) t))),
    D_app(t) = D_ref (t_ref / t)^a.
    Per zone: Cs lognormal around an exposure median, D_ref lognormal,
    a ~ Beta(mean 0.30, sd 0.12) (fib 34, CEM I, from memory), C0 site-wide.
    t_ref = 10 years: D_ref is a field-scale apparent coefficient (fib 34 anchors
    D_RCM,0 at 28 days instead; the functional form is the same). No convection
    zone (Delta x = 0). A grinding increment [x1, x2] reports the mean of C over
    the increment (exact integral of erfc) times a lognormal error (sigma 0.10).

Carbonation (square-root law, fib 34 inspection shortcut): x_c = k sqrt(t) per
    zone; a reading is k sqrt(t) * LN(0, 0.15) (local variation) + N(0, 1 mm).

Corrosion (two-phase model, Tuutti 1982):
    - initiation at a point of cover c when C(c, t) >= Ccrit or k sqrt(t) >= c;
      Ccrit per zone ~ Beta(mean 0.6, sd 0.15) on [0.2, 2.0] % binder (fib 34,
      from memory). ``initiation_time`` in truth.json is at the zone mean cover.
    - uniform penetration P = 0.0116 * i_corr * t_p [mm] (Faraday: 1 uA/cm2 ~
      11.6 um/yr), t_p = years since local initiation; i_corr per zone lognormal
      around an exposure median (Andrade & Alonso 1996 classes, from memory).
    - max pit depth = R * P with the pitting factor R Gumbel (EV-I) over the
      break-out length (Stewart 2004; Stewart & Al-Harthy 2008; Val & Melchers
      1997 for the pitting factor; from memory): scale 0.98 (alpha = 1.02 for
      125 mm bars), location per zone such that the mean is the zone's
      ``pitting_factor`` ~ U(4, 8). Break-outs are opened at the top bars over the
      supports of continuous slabs and at the top bars of column connections
      (bottom bars of a slab in a zone without top bars), where corrosion is
      worst: at bars whose cover lies in the lowest ``BREAKOUT_COVER_QUANTILE`` of
      that face's depassivated cover; they report residual diameter
      (D0 - 2P + N(0, 0.1 mm)) and max pit depth (+ N(0, 0.1 mm)).
    - half-cell potential (Faber & Soerensen 2002 indicator model, illustrative
      numbers): active ~ N(-420, 60) mV CSE, passive ~ N(-150, 60) mV CSE; a
      grid point is active when its local cover (drawn from the zone's gamma)
      has depassivated, so the active fraction grows with time.

References
----------
.. [1] Joint Committee on Structural Safety, "Probabilistic Model Code", 2001,
   Parts 3.1, 3.2, 3.10.
.. [2] fib, "Model Code for Service Life Design", Bulletin 34, 2006.
.. [3] ASTM C42/C42M, "Standard Test Method for Obtaining and Testing Drilled
   Cores and Sawed Beams of Concrete".
.. [4] F. M. Bartlett and J. G. MacGregor, ACI Materials Journal 91(3), 1994.
.. [5] K. Tuutti, "Corrosion of steel in concrete", CBI 4:82, 1982.
.. [6] C. Andrade and C. Alonso, Constr. Build. Mater. 10(5):315-328, 1996.
.. [7] M. G. Val and R. E. Melchers, J. Struct. Eng. 123(12):1638-1644, 1997
   (pitting factor).
.. [8] M. H. Faber and J. D. Soerensen, Struct. Saf. 24:377-396, 2002.
.. [9] M. G. Stewart, "Spatial variability of pitting corrosion and its influence
   on structural fragility and reliability of RC beams in flexure", Struct. Saf.
   26:453-470, 2004 (from memory).
.. [10] CP 110:1972, "The structural use of concrete", British Standards
   Institution (design check, from memory; see design_check.py).
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import importlib.util
import io
import json
import math
import zipfile
from pathlib import Path

import numpy as np
from scipy import special, stats

GENERATOR_VERSION = "2.0.0"
DEFAULT_SEED = 20261202
SITE_FOLDER = "tanners-yard"
EXPOSURE_START = dt.date(1974, 10, 1)
DAYS_PER_YEAR = 365.25
#: Uniform penetration per unit corrosion current [mm/yr per uA/cm2] (Faraday's law).
PENETRATION_PER_ICORR = 0.0116
#: ASTM C42/C42M l/d -> factor to l/d = 2 (from memory); same as ``inspection_io.cores``.
CORE_LD_FACTORS = ((1.00, 0.87), (1.25, 0.93), (1.50, 0.96), (1.75, 0.98), (2.00, 1.00))
#: Bartlett & MacGregor (1994) factors for a 100 mm, as-received core (from memory).
CORE_DIAMETER_FACTOR_100MM = 1.00
CORE_MOISTURE_FACTOR_AS_RECEIVED = 1.00
CORE_DRILLING_DAMAGE_FACTOR = 1.06
#: Extra weakening of a core with a bar across it, and of a core damaged in drilling [-] (invented).
BAR_IN_CORE_FACTOR = 0.92
DAMAGED_CORE_FACTOR = 0.60
FIXED_XLSX_TIME = dt.datetime(2025, 10, 1, 9, 0, 0)
ZIP_TIME = (2025, 10, 1, 9, 0, 0)

#: Site-level values of the concrete hierarchy and the steel model.
SITE_MODEL = {
    "mu_log_fc_site": 3.62,          # [ln MPa] site mean of zone log-means (e^3.62 = 37.3 MPa)
    "tau_log_fc": 0.06,              # [-] spread of zone log-means around the site mean
    "sigma_log_fc": 0.13,            # [-] within-zone log-std of in-situ strength
    "steel_nominal": 410.0,          # [MPa] S410 characteristic yield
    "steel_sd": 30.0,                # [MPa] JCSS PMC 3.2
    "steel_mill_sd": 15.0,           # [MPa] spread of the drawn mill mean
    "tensile_ratio_mean": 1.18,      # [-] f_u / f_y
    "tensile_ratio_sd": 0.04,
    "elongation_mean": 15.0,         # [%]
    "elongation_sd": 2.0,
    "C0": 0.05,                      # [% binder] initial chloride
    "t_ref": 10.0,                   # [years]
    "D_ref_median": 18.0,            # [mm2/yr] = 0.57e-12 m2/s at t_ref
    "D_ref_cov": 0.25,
    "ageing_exponent_mean": 0.30,    # fib 34 CEM I (from memory)
    "ageing_exponent_sd": 0.12,
    "Ccrit_mean": 0.6, "Ccrit_sd": 0.15, "Ccrit_lower": 0.2, "Ccrit_upper": 2.0,
    "pitting_factor_lower": 4.0, "pitting_factor_upper": 8.0,
    # Gumbel (EV-I) pitting factor R = max pit / uniform penetration over a bar length L0:
    # F(R) = exp(-exp(-(R - u) / s)); s = 1 / alpha with alpha = 1.02 for L0 = 125 mm
    # (Stewart 2004; Stewart & Al-Harthy 2008, from memory); the location u of each zone is
    # set so that the mean u + 0.5772 s equals the zone's pitting_factor.
    "pitting_gumbel_scale": 0.98,
    "pitting_reference_length_mm": 125.0,
    "breakout_exposed_length_mm": 125.0,
    # soffit (bottom-face) cover: nominal bottom cover + N(3, 2) mm, sd U(4, 7) mm
    "bottom_cover_offset_mean": 3.0, "bottom_cover_offset_sd": 2.0,
    "bottom_cover_sd_lower": 4.0, "bottom_cover_sd_upper": 7.0,
}
#: Euler-Mascheroni constant: mean of a standard Gumbel variable (Abramowitz & Stegun 6.1.3).
EULER_GAMMA = 0.5772156649015329

#: Measurement and local-variation settings used for every file.
MEASUREMENT = {
    "cover_error_sd_mm": 3.0,
    "chloride_error_log_sd": 0.10,
    "carbonation_local_log_sd": 0.15,
    "carbonation_reading_sd_mm": 1.0,
    "halfcell_active_mean_mV_CSE": -420.0,
    "halfcell_passive_mean_mV_CSE": -150.0,
    "halfcell_sd_mV": 60.0,
    "section_loss_diameter_error_sd_mm": 0.1,
    "pit_depth_error_sd_mm": 0.1,
    "core_strength_rounding_MPa": 0.1,
    "chloride_rounding_percent": 0.001,
}

#: The zones and the medians the per-zone truth is drawn around.
ZONES = {
    "L1": {"description": "Level 1, enclosed lower level under the L2 deck; dry, no salt run-off",
           "exposure": "internal", "temperature": 12.0, "nominal_top_cover": 25.0, "nominal_bottom_cover": 25.0,
           "Cs_median": 0.7, "k_median": 4.0, "icorr_median": 0.15},
    "L2": {"description": "Level 2 deck, covered by L3; soffit sheltered, some salt from tyres",
           "exposure": "sheltered soffit", "temperature": 11.0, "nominal_top_cover": 30.0, "nominal_bottom_cover": 25.0,
           "Cs_median": 1.6, "k_median": 3.0, "icorr_median": 0.4},
    "L3": {"description": "Level 3 deck, covered, open sides; wind-driven rain and salt run-off",
           "exposure": "exposed deck", "temperature": 10.0, "nominal_top_cover": 30.0, "nominal_bottom_cover": 25.0,
           "Cs_median": 3.2, "k_median": 1.3, "icorr_median": 1.0},
    "L4": {"description": "Level 4 roof deck, open to the sky; de-icing salt every winter",
           "exposure": "exposed deck", "temperature": 9.5, "nominal_top_cover": 35.0, "nominal_bottom_cover": 25.0,
           "Cs_median": 4.2, "k_median": 1.1, "icorr_median": 1.5},
}

#: The members (site.toml [members.*]); keys as in docs/data-formats.md and inspection_io.site.
#: Slabs and beams marked ``continuous`` are one span of a run of ``span_count`` equal spans
#: with top bars over the supports. Each member is designed to CP 110:1972 (design_check.py)
#: with a governing utilisation of 0.67-0.90 (design_check.py).
MEMBERS = {
    "S1-03": {"zone": "L1", "kind": "one-way slab", "span": 5.0, "depth": 200, "width": 1000,
              "cover": 25, "bar_diameter": 16, "bar_spacing": 200,
              "shear_reinforcement": False, "tension_face": "bottom"},
    "B1-02": {"zone": "L1", "kind": "beam", "span": 7.5, "depth": 600, "width": 300,
              "cover": 35, "bar_diameter": 25, "steel_area": 1963,
              "shear_reinforcement": True, "tension_face": "bottom",
              "tributary_width": 3.0, "slab_depth": 200},
    "S2-05": {"zone": "L2", "kind": "one-way slab", "span": 4.8, "depth": 180, "width": 1000,
              "cover": 25, "bar_diameter": 12, "bar_spacing": 225,
              "shear_reinforcement": False, "tension_face": "bottom",
              "continuous": True, "span_count": 4, "span_position": "interior",
              "top_bar_diameter": 12, "top_bar_spacing": 125, "top_cover": 30},
    "C2-B3": {"zone": "L2", "kind": "flat-slab column connection", "depth": 275, "width": 1000,
              "cover": 30, "bar_diameter": 20, "bar_spacing": 125,
              "shear_reinforcement": False, "tension_face": "top",
              "column_size": [400, 400], "position": "interior", "span_x": 7.2, "span_y": 6.0},
    "S3-02": {"zone": "L3", "kind": "one-way slab", "span": 5.4, "depth": 200, "width": 1000,
              "cover": 25, "bar_diameter": 16, "bar_spacing": 250,
              "shear_reinforcement": False, "tension_face": "bottom",
              "continuous": True, "span_count": 3, "span_position": "end",
              "top_bar_diameter": 12, "top_bar_spacing": 125, "top_cover": 30},
    "B3-04": {"zone": "L3", "kind": "beam", "span": 7.8, "depth": 600, "width": 300,
              "cover": 35, "bar_diameter": 25, "steel_area": 1473,
              "shear_reinforcement": True, "tension_face": "bottom",
              "tributary_width": 3.0, "slab_depth": 200,
              "continuous": True, "span_count": 3, "span_position": "end",
              "top_bar_diameter": 25, "top_steel_area": 1963, "top_cover": 40},
    "C3-C4": {"zone": "L3", "kind": "flat-slab column connection", "depth": 300, "width": 1000,
              "cover": 30, "bar_diameter": 20, "bar_spacing": 100,
              "shear_reinforcement": False, "tension_face": "top",
              "column_size": [450, 450], "position": "interior", "span_x": 7.2, "span_y": 7.2},
    "S4-01": {"zone": "L4", "kind": "one-way slab", "span": 5.4, "depth": 225, "width": 1000,
              "cover": 25, "bar_diameter": 12, "bar_spacing": 150,
              "shear_reinforcement": False, "tension_face": "bottom",
              "continuous": True, "span_count": 3, "span_position": "end",
              "top_bar_diameter": 12, "top_bar_spacing": 125, "top_cover": 35},
    "B4-03": {"zone": "L4", "kind": "beam", "span": 7.8, "depth": 650, "width": 300,
              "cover": 40, "bar_diameter": 20, "steel_area": 1257,
              "shear_reinforcement": True, "tension_face": "bottom",
              "tributary_width": 3.0, "slab_depth": 225,
              "continuous": True, "span_count": 4, "span_position": "interior",
              "top_bar_diameter": 25, "top_steel_area": 1963, "top_cover": 45},
    "C4-A2": {"zone": "L4", "kind": "flat-slab column connection", "depth": 300, "width": 1000,
              "cover": 35, "bar_diameter": 20, "bar_spacing": 100,
              "shear_reinforcement": False, "tension_face": "top",
              "column_size": [450, 300], "position": "edge", "span_x": 7.2, "span_y": 6.0},
}
#: Shear links of the beams (not a site-file key; used by the design check only): legs,
#: diameter [mm], spacing [mm] of mild-steel links.
LINKS = {m: {"legs": 2, "diameter": 10, "spacing": 200} for m in ("B1-02", "B3-04", "B4-03")}

SITE_TABLES = {
    "site": {"name": "Tanners Yard car park (invented)", "year_built": 1974,
             "assessment_date": dt.date(2026, 11, 30), "structure": "multi-storey car park"},
    "target": {"consequence_class": "CC2", "reference_period": 1, "cost_of_safety": "normal"},
    "materials": {"concrete_class": "C30", "production": "ready-mixed", "steel_grade": "S410",
                  "cement_type": "CEM I", "binder_content": 350, "concrete_density": 2400,
                  "water_cement_ratio": 0.50},
    "loads": {"superimposed_dead": 1.2, "imposed_category": "F", "imposed_characteristic": 2.5,
              "concrete_unit_weight": 25.0},
}

#: The three campaigns: folder, campaign.toml, and the files with their options.
CAMPAIGNS = (
    {"folder": "2009-first-survey", "tag": "09", "name": "2009 first survey",
     "date": dt.date(2009, 6, 16),
     "description": "Condition survey after leaks through the roof deck: cores on every level, "
                    "rebar samples, cover, carbonation, chloride dust samples, half-cell grid",
     "files": (
         ("cores.csv", "cores", {"zones": ("L1", "L2", "L3", "L4"), "n": 3, "load": False,
                                 "strength_unit": "MPa", "bar_in_core": (5,)}),
         ("tensile.csv", "tensile", {"members": ("B1-02", "S2-05", "S3-02", "C4-A2"),
                                     "unit": "MPa"}),
         ("cover.csv", "cover", {"zones": ("L1", "L2", "L3", "L4"), "n": 14, "n_bottom": 6}),
         ("carbonation.csv", "carbonation", {"zones": ("L1", "L2", "L3", "L4"), "n": 6,
                                             "soffit": {"L1": 2, "L2": 2}}),
         ("chloride.csv", "chloride", {"zones": ("L1", "L2", "L3", "L4"), "n": 3,
                                       "unit": "% concrete", "soffit": ("L1", "L2")}),
         ("halfcell.csv", "halfcell", {"zones": ("L2", "L3", "L4"), "n": 25, "unit": "mV CSE"}),
         ("section_loss.csv", "section_loss", {"zones": ("L3", "L4"), "n": 4}),
     )},
    {"folder": "2017-condition-survey", "tag": "17", "name": "2017 condition survey",
     "date": dt.date(2017, 5, 9),
     "description": "Follow-up on levels 2 to 4: cores (lab sheet as workbook), chloride "
                    "profiles, half-cell survey with a calomel electrode, break-outs",
     "files": (
         ("cores.xlsx", "cores", {"zones": ("L2", "L3", "L4"), "n": 3, "load": True,
                                  "strength_unit": "kN", "damaged": (4,)}),
         ("carbonation.csv", "carbonation", {"zones": ("L1", "L2", "L3", "L4"), "n": 5,
                                             "soffit": {"L1": 2, "L2": 2}}),
         ("chloride.csv", "chloride", {"zones": ("L1", "L2", "L3", "L4"), "n": 3,
                                       "unit": "% cement", "soffit": ("L2",)}),
         ("halfcell.csv", "halfcell", {"zones": ("L1", "L2", "L3", "L4"), "n": 25,
                                       "unit": "mV SCE"}),
         ("section_loss.csv", "section_loss", {"zones": ("L2", "L3", "L4"), "n": 4}),
     )},
    {"folder": "2025-principal-inspection", "tag": "25", "name": "2025 principal inspection",
     "date": dt.date(2025, 9, 23),
     "description": "Principal inspection before the structural assessment: all test kinds "
                    "on all levels",
     "files": (
         ("cores.csv", "cores", {"zones": ("L1", "L2", "L3", "L4"), "n": 3, "load": False,
                                 "strength_unit": "N/mm2", "full_columns": True}),
         ("tensile.csv", "tensile", {"members": ("B1-02", "C2-B3", "S3-02", "B3-04", "S4-01"),
                                     "unit": "N/mm2"}),
         ("cover.xlsx", "cover", {"zones": ("L1", "L2", "L3", "L4"), "n": 10, "n_bottom": 5}),
         ("carbonation.csv", "carbonation", {"zones": ("L1", "L2", "L3", "L4"), "n": 6,
                                             "soffit": {"L1": 2, "L2": 2}}),
         ("chloride.csv", "chloride", {"zones": ("L1", "L2", "L3", "L4"), "n": 3,
                                       "unit": "% binder", "soffit": ("L1", "L2")}),
         ("halfcell.csv", "halfcell", {"zones": ("L1", "L2", "L3", "L4"), "n": 30,
                                       "unit": "mV CSE", "second_day": True}),
         ("section_loss.csv", "section_loss", {"zones": ("L1", "L2", "L3", "L4"), "n": 4}),
     )},
)

CHLORIDE_INCREMENTS = ((0, 10), (10, 20), (20, 30), (30, 40), (40, 50), (50, 60))
#: Smallest depassivated fraction of a zone for which break-outs are opened [-].
MIN_ACTIVE_FRACTION_FOR_BREAKOUT = 0.05
#: Break-outs are opened at bars whose cover lies in this lowest quantile of the zone [-].
BREAKOUT_COVER_QUANTILE = 0.20


def design_check_module():
    """The design check (demo_sites/design_check.py), loaded from beside this script."""
    path = Path(__file__).resolve().parent / "design_check.py"
    spec = importlib.util.spec_from_file_location("demo_design_check", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


# --------------------------------------------------------------------------- small helpers
def _sig(value: float, digits: int = 4) -> float:
    """Round to `digits` significant digits (truth values are stored and used rounded)."""
    return float(f"{value:.{digits}g}")


def _fmt(value: float, decimals: int) -> str:
    """Fixed-point text without a negative zero."""
    text = f"{value:.{decimals}f}"
    return text.lstrip("-") if float(text) == 0.0 else text


def _lognormal(rng: np.random.Generator, median: float, cov: float, size=None):
    """Lognormal draws with the given median and coefficient of variation [-]."""
    return median * np.exp(math.sqrt(math.log1p(cov ** 2)) * rng.standard_normal(size))


def _beta_scaled(rng: np.random.Generator, mean: float, sd: float, lower: float,
                 upper: float) -> float:
    """One draw from a beta distribution on [lower, upper] with given mean and sd."""
    m = (mean - lower) / (upper - lower)
    v = (sd / (upper - lower)) ** 2
    total = m * (1.0 - m) / v - 1.0
    return lower + (upper - lower) * rng.beta(m * total, (1.0 - m) * total)


def age_years(date: dt.date) -> float:
    """Age since `EXPOSURE_START` [years]."""
    return (date - EXPOSURE_START).days / DAYS_PER_YEAR


def core_ld_factor(length_to_diameter):
    """ASTM C42/C42M factor to an l/d = 2 cylinder, linear interpolation [-] (from memory)."""
    points, factors = zip(*CORE_LD_FACTORS)
    return np.interp(length_to_diameter, points, factors)


# --------------------------------------------------------------------------- deterioration model
def apparent_diffusion(zone: dict, t):
    """D_app(t) = D_ref (t_ref / t)^a [mm2/yr] (fib Bulletin 34 ageing form, from memory)."""
    return zone["D_ref"] * (zone["t_ref"] / np.asarray(t, float)) ** zone["ageing_exponent"]


def chloride_at(zone: dict, x, t):
    """C(x, t) = C0 + (Cs - C0) erfc(x / (2 sqrt(D_app(t) t))) [% binder], x [mm], t [years]."""
    spread = 2.0 * np.sqrt(apparent_diffusion(zone, t) * t)
    return zone["C0"] + (zone["Cs"] - zone["C0"]) * special.erfc(np.asarray(x, float) / spread)


def chloride_increment_mean(zone: dict, x1, x2, t):
    """Mean of C(x, t) over a grinding increment [x1, x2] [% binder] (exact integral of erfc)."""
    spread = 2.0 * np.sqrt(apparent_diffusion(zone, t) * t)

    def antiderivative(z):
        return z * special.erfc(z) - np.exp(-z * z) / math.sqrt(math.pi)

    z1, z2 = np.asarray(x1, float) / spread, np.asarray(x2, float) / spread
    mean_erfc = spread * (antiderivative(z2) - antiderivative(z1)) / (np.asarray(x2) - x1)
    return zone["C0"] + (zone["Cs"] - zone["C0"]) * mean_erfc


def chloride_front(zone: dict, t):
    """Depth where C(x, t) = Ccrit [mm]; 0 when Cs <= Ccrit (never depassivates)."""
    ratio = (zone["Ccrit"] - zone["C0"]) / (zone["Cs"] - zone["C0"])
    if ratio >= 1.0:
        return np.zeros_like(np.asarray(t, float))
    return 2.0 * np.sqrt(apparent_diffusion(zone, t) * t) * special.erfcinv(ratio)


def depassivation_depth(zone: dict, t):
    """Deepest depassivated bar position at age t: max(chloride front, k sqrt(t)) [mm]."""
    return np.maximum(chloride_front(zone, t), zone["carbonation_k"] * np.sqrt(t))


def initiation_time_chloride(zone: dict, cover):
    """Age at which C(cover, t) reaches Ccrit [years]; inf if Cs <= Ccrit.

    From erfc(c / (2 sqrt(D_ref t_ref^a t^(1-a)))) = (Ccrit - C0) / (Cs - C0):
    t = [(c / (2 z*))^2 / (D_ref t_ref^a)]^(1 / (1 - a)), z* = erfcinv(ratio).
    """
    cover = np.asarray(cover, float)
    ratio = (zone["Ccrit"] - zone["C0"]) / (zone["Cs"] - zone["C0"])
    if ratio >= 1.0:
        return np.full_like(cover, np.inf)
    a = zone["ageing_exponent"]
    z_star = special.erfcinv(ratio)
    return ((cover / (2.0 * z_star)) ** 2
            / (zone["D_ref"] * zone["t_ref"] ** a)) ** (1.0 / (1.0 - a))


def initiation_time(zone: dict, cover):
    """Earlier of chloride and carbonation initiation at depth `cover` [years]."""
    carbonation = (np.asarray(cover, float) / zone["carbonation_k"]) ** 2
    return np.minimum(initiation_time_chloride(zone, cover), carbonation)


def cover_distribution(zone: dict, face: str = "top"):
    """Frozen scipy gamma distribution of the cover on one face of a zone [mm].

    "top": the deck-top cover (``cover_mean``, ``cover_sd``); "bottom": the soffit cover
    (``faces.bottom``).
    """
    values = zone if face == "top" else zone["faces"][face]
    shape = (values["cover_mean"] / values["cover_sd"]) ** 2
    return stats.gamma(shape, scale=values["cover_sd"] ** 2 / values["cover_mean"])


def active_fraction(zone: dict, t) -> float:
    """Share of the zone's bar positions depassivated at age t [-]."""
    return float(cover_distribution(zone).cdf(depassivation_depth(zone, t)))


# --------------------------------------------------------------------------- truth
def draw_truth(rng: np.random.Generator) -> dict:
    """Draw every per-zone true parameter (rounded to 4 significant digits).

    Returns
    -------
    dict
        ``{"site": {...}, "zones": {zone_id: {...}}}``; units in `TRUTH_UNITS`.
    """
    m = SITE_MODEL
    site = {
        "mu_log_fc_site": m["mu_log_fc_site"], "tau_log_fc": m["tau_log_fc"],
        "sigma_log_fc": m["sigma_log_fc"],
        "steel_nominal": m["steel_nominal"],
        "steel_mean": _sig(m["steel_nominal"] + 2.0 * m["steel_sd"]
                           + m["steel_mill_sd"] * rng.standard_normal()),
        "steel_sd": m["steel_sd"],
        "tensile_ratio_mean": m["tensile_ratio_mean"], "tensile_ratio_sd": m["tensile_ratio_sd"],
        "elongation_mean": m["elongation_mean"], "elongation_sd": m["elongation_sd"],
    }
    zones = {}
    for zone_id, spec in ZONES.items():
        zone = {
            "exposure": spec["exposure"],
            "mu_log_fc": _sig(m["mu_log_fc_site"] + m["tau_log_fc"] * rng.standard_normal()),
            "sigma_log_fc": m["sigma_log_fc"],
            "steel_mean": site["steel_mean"],
            "steel_sd": site["steel_sd"],
            "cover_mean": _sig(spec["nominal_top_cover"] + rng.normal(4.0, 2.0)),
            "cover_sd": _sig(rng.uniform(5.0, 8.0)),
            "Cs": _sig(float(_lognormal(rng, spec["Cs_median"], 0.15))),
            "D_ref": _sig(float(_lognormal(rng, m["D_ref_median"], m["D_ref_cov"]))),
            "ageing_exponent": _sig(_beta_scaled(rng, m["ageing_exponent_mean"],
                                                 m["ageing_exponent_sd"], 0.0, 1.0)),
            "t_ref": m["t_ref"],
            "C0": m["C0"],
            "Ccrit": _sig(_beta_scaled(rng, m["Ccrit_mean"], m["Ccrit_sd"], m["Ccrit_lower"],
                                       m["Ccrit_upper"])),
            "carbonation_k": _sig(float(_lognormal(rng, spec["k_median"], 0.20))),
            "i_corr": _sig(float(_lognormal(rng, spec["icorr_median"], 0.30))),
            "pitting_factor": _sig(rng.uniform(m["pitting_factor_lower"],
                                               m["pitting_factor_upper"])),
        }
        zone["cover_distribution"] = "gamma"
        t_cl = float(initiation_time_chloride(zone, zone["cover_mean"]))
        t_ca = (zone["cover_mean"] / zone["carbonation_k"]) ** 2
        zone["initiation_time_chloride"] = None if math.isinf(t_cl) else _sig(t_cl)
        zone["initiation_time_carbonation"] = _sig(t_ca)
        zone["initiation_time"] = _sig(min(t_cl, t_ca))
        zones[zone_id] = zone
    return {"site": site, "zones": zones}


def draw_face_truth(rng: np.random.Generator, truth: dict) -> None:
    """Add the soffit cover and the Gumbel pitting parameters to every zone (in place).

    Drawn from a stream of their own, so that the zone values of `draw_truth` do not
    depend on them. ``faces.top`` repeats the zone's deck-top cover; ``faces.bottom`` is
    the soffit cover over the bottom bars of the slabs. Chloride and carbonation values
    of a zone hold for every face sampled (soffit samples are taken in L1 and L2 only,
    sheltered on both faces).
    """
    m = SITE_MODEL
    scale = m["pitting_gumbel_scale"]
    for zone_id, zone in truth["zones"].items():
        bottom_mean = ZONES[zone_id]["nominal_bottom_cover"] + rng.normal(
            m["bottom_cover_offset_mean"], m["bottom_cover_offset_sd"])
        zone["faces"] = {
            "top": {"cover_mean": zone["cover_mean"], "cover_sd": zone["cover_sd"]},
            "bottom": {"cover_mean": _sig(bottom_mean),
                       "cover_sd": _sig(rng.uniform(m["bottom_cover_sd_lower"],
                                                    m["bottom_cover_sd_upper"]))},
        }
        zone["pitting_gumbel_location"] = _sig(zone["pitting_factor"] - EULER_GAMMA * scale)
        zone["pitting_gumbel_scale"] = scale


TRUTH_UNITS = {
    "mu_log_fc": "ln(MPa), in-situ cylinder strength", "sigma_log_fc": "-", "tau_log_fc": "-",
    "steel_mean": "MPa", "steel_sd": "MPa", "cover_mean": "mm", "cover_sd": "mm",
    "Cs": "% by mass of binder", "C0": "% by mass of binder", "Ccrit": "% by mass of binder",
    "D_ref": "mm2/yr (1e-12 m2/s = 31.56 mm2/yr)", "t_ref": "years", "ageing_exponent": "-",
    "initiation_time": "years since exposure_start, at cover_mean",
    "carbonation_k": "mm/sqrt(yr)", "i_corr": "uA/cm2", "pitting_factor": "-",
    "pitting_gumbel_location": "-", "pitting_gumbel_scale": "-",
    "faces": "face -> cover_mean, cover_sd [mm] (top = deck top, bottom = soffit)",
    "age": "years since exposure_start",
}


# --------------------------------------------------------------------------- campaign files
def _members_in(zone_id: str, kinds=("one-way slab", "flat-slab column connection")) -> list:
    return [m for m, spec in MEMBERS.items() if spec["zone"] == zone_id and spec["kind"] in kinds]


def _cycle(items: list, n: int) -> list:
    return [items[i % len(items)] for i in range(n)]


def _soffit_members(zone_id: str) -> list:
    """Members whose soffit (bottom bars) is surveyed: the zone's slabs, else any member."""
    return _members_in(zone_id, ("one-way slab",)) or _members_in(zone_id)


def breakout_sites(zone_id: str) -> list:
    """(member, face, bar diameter [mm]) where a zone's break-outs are opened.

    The top bars over the supports of continuous slabs and the top bars of column
    connections, where chloride from the deck reaches first; a zone without top bars
    (L1: simply supported slab) is opened at the bottom bars of its slabs.
    """
    sites = []
    for member_id, spec in MEMBERS.items():
        if spec["zone"] != zone_id:
            continue
        if spec["kind"] == "one-way slab" and spec.get("continuous"):
            sites.append((member_id, "top", float(spec["top_bar_diameter"])))
        elif spec["kind"] == "flat-slab column connection":
            sites.append((member_id, "top", float(spec["bar_diameter"])))
    if not sites:
        sites = [(m, "bottom", float(MEMBERS[m]["bar_diameter"]))
                 for m in _members_in(zone_id, ("one-way slab",))]
    return sites


def make_cores(rng, truth, campaign, options):
    """Cores: in-situ strength of the zone, reported as tested (see module notes)."""
    tag = campaign["tag"]
    area = math.pi * 100.0 ** 2 / 4.0
    full = options.get("full_columns", False)
    if options["load"]:
        header = ["core_id", "zone", "member", "diameter [mm]", "length [mm]",
                  "failure_load [kN]", "damaged", "note"]
    elif full:
        header = ["core_id", "zone", "member", "date", "diameter [mm]", "length [mm]",
                  f"strength [{options['strength_unit']}]", "moisture", "direction",
                  "bar_in_core", "damaged", "note"]
    else:
        header = ["core_id", "zone", "member", "diameter [mm]", "length [mm]",
                  f"strength [{options['strength_unit']}]", "bar_in_core", "note"]
    rows, flagged = [], {}
    zone_list = [z for z in options["zones"] for _ in range(options["n"])]
    n = len(zone_list)
    u = rng.standard_normal(n)
    ld = rng.uniform(1.0, 2.0, n)
    lengths = np.round(100.0 * ld)
    for i, zone_id in enumerate(zone_list):
        zone = truth["zones"][zone_id]
        insitu = math.exp(zone["mu_log_fc"] + zone["sigma_log_fc"] * u[i])
        factor = (float(core_ld_factor(lengths[i] / 100.0)) * CORE_DIAMETER_FACTOR_100MM
                  * CORE_MOISTURE_FACTOR_AS_RECEIVED * CORE_DRILLING_DAMAGE_FACTOR)
        tested = insitu / factor
        core_id = f"C{tag}-{i + 1:02d}"
        members = _members_in(zone_id)
        member = members[i % len(members)]
        bar = i in options.get("bar_in_core", ())
        damaged = i in options.get("damaged", ())
        note = ""
        if bar:
            tested *= BAR_IN_CORE_FACTOR
            note = "12 mm bar across the core at mid-length"
            flagged[core_id] = "bar_in_core"
        if damaged:
            tested *= DAMAGED_CORE_FACTOR
            note = "core cracked along its axis during drilling"
            flagged[core_id] = "damaged"
        yes_no = {True: "yes", False: "no"}
        if options["load"]:
            rows.append([core_id, zone_id, member, 100.0, float(lengths[i]),
                         round(tested * area / 1000.0, 1), yes_no[damaged], note])
        elif full:
            day = campaign["date"] + dt.timedelta(days=i // 6)
            rows.append([core_id, zone_id, member, day.isoformat(), "100", _fmt(lengths[i], 0),
                         _fmt(tested, 1), "as-received", "vertical", yes_no[bar],
                         yes_no[damaged], note])
        else:
            rows.append([core_id, zone_id, member, "100", _fmt(lengths[i], 0), _fmt(tested, 1),
                         yes_no[bar], note])
    return header, rows, {"flagged_cores": flagged}


def make_tensile(rng, truth, campaign, options):
    """Rebar tensile tests: yield ~ N(steel_mean, steel_sd), JCSS PMC 3.2."""
    site = truth["site"]
    members = options["members"]
    n = len(members)
    fy = rng.normal(site["steel_mean"], site["steel_sd"], n)
    fu = fy * rng.normal(site["tensile_ratio_mean"], site["tensile_ratio_sd"], n)
    elongation = rng.normal(site["elongation_mean"], site["elongation_sd"], n)
    unit = options["unit"]
    header = ["specimen_id", "zone", "member", "diameter [mm]", f"yield_strength [{unit}]",
              f"tensile_strength [{unit}]", "elongation [%]"]
    rows = [[f"T{campaign['tag']}-{i + 1:02d}", MEMBERS[m]["zone"], m,
             str(MEMBERS[m]["bar_diameter"]), _fmt(fy[i], 0), _fmt(fu[i], 0),
             _fmt(elongation[i], 1)] for i, m in enumerate(members)]
    return header, rows, {}


def _face_counts(rows: list, zone_column: int, face_column: int) -> dict:
    """zone -> face -> number of rows (recorded in truth.json for each file)."""
    counts: dict = {}
    for row in rows:
        zone = counts.setdefault(row[zone_column], {})
        zone[row[face_column]] = zone.get(row[face_column], 0) + 1
    return counts


def make_cover(rng, truth, campaign, options):
    """Cover-meter survey of the deck top (top bars) and the soffit (bottom bars of slabs).

    Each face's gamma cover (``cover_mean``/``cover_sd`` on top, ``faces.bottom`` on the
    soffit) + N(0, 3 mm) reading error.
    """
    tag = campaign["tag"]
    header = ["location_id", "zone", "member", "cover [mm]", "face"]
    rows = []
    for zone_id in options["zones"]:
        zone = truth["zones"][zone_id]
        number = 0
        for face, n, members in (("top", options["n"], _members_in(zone_id)),
                                 ("bottom", options.get("n_bottom", 0), _soffit_members(zone_id))):
            if n == 0:
                continue
            true_cover = cover_distribution(zone, face).rvs(size=n, random_state=rng)
            reading = np.maximum(
                true_cover + rng.normal(0.0, MEASUREMENT["cover_error_sd_mm"], n), 0.0)
            members = _cycle(members, n)
            for i in range(n):
                number += 1
                rows.append([f"CV{tag}-{zone_id}-{number:02d}", zone_id, members[i],
                             _fmt(reading[i], 0), face])
    return header, rows, {"faces": _face_counts(rows, 1, 4)}


def make_carbonation(rng, truth, campaign, options):
    """Phenolphthalein depths: k sqrt(t) with local variation and reading error.

    Taken on the deck top, and on the soffit in the zones of ``options["soffit"]`` (the
    zone's k holds on both faces there).
    """
    tag, n = campaign["tag"], options["n"]
    t = age_years(campaign["date"])
    header = ["location_id", "zone", "member", "carbonation_depth [mm]", "face"]
    rows = []
    for zone_id in options["zones"]:
        zone = truth["zones"][zone_id]
        local = np.exp(MEASUREMENT["carbonation_local_log_sd"] * rng.standard_normal(n))
        depth = zone["carbonation_k"] * math.sqrt(t) * local + rng.normal(
            0.0, MEASUREMENT["carbonation_reading_sd_mm"], n)
        depth = np.maximum(depth, 0.0)
        soffit = options.get("soffit", {}).get(zone_id, 0)
        faces = ["top"] * (n - soffit) + ["bottom"] * soffit
        members = _cycle(_members_in(zone_id), n - soffit) + _cycle(_soffit_members(zone_id),
                                                                   soffit)
        rows += [[f"CB{tag}-{zone_id}-{i + 1:02d}", zone_id, members[i], _fmt(depth[i], 0),
                  faces[i]] for i in range(n)]
    return header, rows, {"faces": _face_counts(rows, 1, 4)}


def make_chloride(rng, truth, campaign, options):
    """Chloride profiles: increment means of the erfc profile times a lognormal error.

    Profiles are ground from the deck top; in the zones of ``options["soffit"]`` the last
    profile is ground from the soffit (the zone's chloride values hold on both faces there).
    """
    tag, n, unit = campaign["tag"], options["n"], options["unit"]
    t = age_years(campaign["date"])
    materials = SITE_TABLES["materials"]
    to_unit = (materials["binder_content"] / materials["concrete_density"]
               if unit == "% concrete" else 1.0)
    header = ["profile_id", "zone", "member", "depth_from [mm]", "depth_to [mm]",
              f"chloride [{unit}]", "face"]
    x1 = np.array([a for a, _ in CHLORIDE_INCREMENTS], float)
    x2 = np.array([b for _, b in CHLORIDE_INCREMENTS], float)
    rows = []
    for zone_id in options["zones"]:
        zone = truth["zones"][zone_id]
        mean = chloride_increment_mean(zone, x1, x2, t)
        members = _cycle(_members_in(zone_id), n)
        for p in range(n):
            face = "bottom" if zone_id in options.get("soffit", ()) and p == n - 1 else "top"
            member = _soffit_members(zone_id)[0] if face == "bottom" else members[p]
            value = mean * np.exp(MEASUREMENT["chloride_error_log_sd"]
                                  * rng.standard_normal(len(x1))) * to_unit
            rows += [[f"P{tag}-{zone_id}-{p + 1}", zone_id, member, _fmt(x1[j], 0),
                      _fmt(x2[j], 0), _fmt(value[j], 3), face] for j in range(len(x1))]
    return header, rows, {"faces": _face_counts(rows[::len(x1)], 1, 6)}


def make_halfcell(rng, truth, campaign, options):
    """Half-cell grid on the deck top: active where the local top cover has depassivated."""
    tag, n, unit = campaign["tag"], options["n"], options["unit"]
    offset = {"mV CSE": 0.0, "mV SCE": 75.0}[unit]   # E_SCE = E_CSE + 75 mV (common practice)
    second_day = options.get("second_day", False)
    header = (["location_id", "zone"] + (["date"] if second_day else [])
              + [f"potential [{unit}]", "face"])
    rows = []
    for zone_id in options["zones"]:
        zone = truth["zones"][zone_id]
        days = [campaign["date"] + dt.timedelta(days=1 if second_day and zone_id in ("L3", "L4")
                                                else 0)] * n
        ages = np.array([age_years(d) for d in days])
        cover = cover_distribution(zone).rvs(size=n, random_state=rng)
        active = cover < depassivation_depth(zone, ages)
        potential = np.where(active,
                             rng.normal(MEASUREMENT["halfcell_active_mean_mV_CSE"],
                                        MEASUREMENT["halfcell_sd_mV"], n),
                             rng.normal(MEASUREMENT["halfcell_passive_mean_mV_CSE"],
                                        MEASUREMENT["halfcell_sd_mV"], n)) + offset
        for i in range(n):
            date = [days[i].isoformat()] if second_day else []
            rows.append([f"H{tag}-{zone_id}-{i + 1:02d}", zone_id] + date
                        + [_fmt(potential[i], 0), "top"])
    return header, rows, {"faces": _face_counts(rows, 1, len(header) - 1)}


def gumbel_pitting_factor(zone: dict, rng: np.random.Generator, n: int):
    """Pitting factors R = max pit / uniform penetration over one break-out [-].

    Gumbel (EV-I) with the zone's location and scale at the reference length L0; a
    break-out exposing length L has location u + s ln(L / L0) (maximum of L / L0
    independent lengths; Stewart 2004, from memory). R is at least 1 (a pit is never
    shallower than the uniform loss).
    """
    m = SITE_MODEL
    location = zone["pitting_gumbel_location"] + zone["pitting_gumbel_scale"] * math.log(
        m["breakout_exposed_length_mm"] / m["pitting_reference_length_mm"])
    return np.maximum(rng.gumbel(location, zone["pitting_gumbel_scale"], n), 1.0)


def make_section_loss(rng, truth, campaign, options):
    """Break-outs at corroding bars: residual diameter and max pit depth.

    Opened at the top bars over the supports of continuous slabs and at the top bars of
    column connections (`breakout_sites`), where corrosion is worst: bars whose cover is
    in the lowest quantile of the depassivated cover of that face. Uniform penetration
    from Faraday's law, the deepest pit R times it with R Gumbel (`gumbel_pitting_factor`).
    """
    tag, n = campaign["tag"], options["n"]
    t = age_years(campaign["date"])
    header = ["breakout_id", "zone", "member", "bar_diameter [mm]", "residual_diameter [mm]",
              "max_pit_depth [mm]", "face"]
    rows = []
    for zone_id in options["zones"]:
        zone = truth["zones"][zone_id]
        sites = _cycle(breakout_sites(zone_id), n)
        face = sites[0][1]
        distribution = cover_distribution(zone, face)
        reach = float(depassivation_depth(zone, t))
        if distribution.cdf(reach) < MIN_ACTIVE_FRACTION_FOR_BREAKOUT:
            continue
        # break-outs go where corrosion is worst (most negative potentials, spalls): bars with
        # the least cover, i.e. the face's gamma truncated to its lowest depassivated quantile
        upper = min(BREAKOUT_COVER_QUANTILE, float(distribution.cdf(reach)))
        cover = distribution.ppf(rng.uniform(0.0, upper, n))
        t_p = np.maximum(t - initiation_time(zone, cover), 0.0)
        penetration = PENETRATION_PER_ICORR * zone["i_corr"] * t_p
        d0 = np.array([d for _, _, d in sites], float)
        residual = d0 - 2.0 * penetration + rng.normal(
            0.0, MEASUREMENT["section_loss_diameter_error_sd_mm"], n)
        pit = (gumbel_pitting_factor(zone, rng, n) * penetration
               + rng.normal(0.0, MEASUREMENT["pit_depth_error_sd_mm"], n))
        residual = np.clip(residual, 0.0, d0)
        pit = np.clip(pit, 0.0, d0)
        rows += [[f"BO{tag}-{zone_id}-{i + 1}", zone_id, sites[i][0], _fmt(d0[i], 0),
                  _fmt(residual[i], 1), _fmt(pit[i], 1), sites[i][1]]
                 for i in range(n)]
    return header, rows, {"faces": _face_counts(rows, 1, 6)}


MAKERS = {"cores": make_cores, "tensile": make_tensile, "cover": make_cover,
          "carbonation": make_carbonation, "chloride": make_chloride,
          "halfcell": make_halfcell, "section_loss": make_section_loss}


# --------------------------------------------------------------------------- writers
def write_csv(path: Path, header: list, rows: list) -> None:
    """Write a CSV with "\\n" line ends; every cell already formatted as text."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    writer.writerows([[str(c) for c in row] for row in rows])
    path.write_bytes(buffer.getvalue().encode("utf-8"))


def write_xlsx(path: Path, sheets: list) -> None:
    """Write a workbook with fixed timestamps so that its bytes are reproducible.

    Parameters
    ----------
    sheets : list of (name, rows)
        Sheets in order; ``rows`` are lists of cell values (numbers stay numbers).
    """
    from openpyxl import Workbook
    from openpyxl.writer.excel import ExcelWriter

    workbook = Workbook()
    workbook.remove(workbook.active)
    for name, rows in sheets:
        sheet = workbook.create_sheet(name)
        for row in rows:
            sheet.append(row)
    workbook.properties.creator = "demo_sites/generate_demo.py"
    workbook.properties.created = FIXED_XLSX_TIME
    workbook.properties.modified = FIXED_XLSX_TIME
    raw = io.BytesIO()
    archive = zipfile.ZipFile(raw, "w", zipfile.ZIP_DEFLATED)
    ExcelWriter(workbook, archive).save()           # closes the archive
    # openpyxl stamps each zip entry with the current time: repack with a fixed one
    fixed = io.BytesIO()
    with zipfile.ZipFile(raw) as source, zipfile.ZipFile(fixed, "w", zipfile.ZIP_DEFLATED) as out:
        for info in source.infolist():
            entry = zipfile.ZipInfo(info.filename, date_time=ZIP_TIME)
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.external_attr = 0o644 << 16
            out.writestr(entry, source.read(info.filename))
    path.write_bytes(fixed.getvalue())


def _xlsx_notes(kind: str, campaign: dict) -> list:
    return [["Notes"],
            [f"Invented demo data: {kind} of the {campaign['name']} (Tanners Yard car park)."],
            ["Generated by demo_sites/generate_demo.py; see truth.json for the true values."],
            ["This sheet is not data: the reader uses the sheet named after the record kind."]]


def _toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, float):
        return repr(value)
    return str(value)


def site_toml() -> str:
    """The site file text (schema: docs/data-formats.md, checked by inspection_io.site)."""
    lines = ["# Site file of the invented demo site. Generated by demo_sites/generate_demo.py;",
             "# every name and number is invented. Lengths in mm, spans in m, loads in kN/m2.", ""]
    for table, body in SITE_TABLES.items():
        lines.append(f"[{table}]")
        lines += [f"{key} = {_toml_value(value)}" for key, value in body.items()]
        lines.append("")
    for zone_id, spec in ZONES.items():
        lines.append(f"[zones.{zone_id}]")
        lines.append(f"description = {_toml_value(spec['description'])}")
        lines.append(f"exposure = {_toml_value(spec['exposure'])}")
        lines.append(f"mean_annual_temperature = {_toml_value(spec['temperature'])}")
        lines.append("")
    for member_id, spec in MEMBERS.items():
        lines.append(f"[members.{member_id}]")
        lines += [f"{key} = {_toml_value(value)}" for key, value in spec.items()]
        lines.append("")
    return "\n".join(lines)


def campaign_toml(campaign: dict) -> str:
    return (f"name = {_toml_value(campaign['name'])}\n"
            f"date = {campaign['date'].isoformat()}\n"
            f"description = {_toml_value(campaign['description'])}\n")


# --------------------------------------------------------------------------- main job
def generate(out: str | Path, seed: int = DEFAULT_SEED) -> dict:
    """Write the whole demo site folder and return the truth record.

    Parameters
    ----------
    out : str or Path
        Site folder to (re)write: ``site.toml``, ``truth.json``, ``campaigns/*``.
    seed : int
        Seed of the numpy random generator; the same seed gives the same files.

    Returns
    -------
    dict
        The content of ``truth.json``.
    """
    out = Path(out)
    # one stream for the zone truth, one per campaign, one for the face and pitting truth
    # (spawned last, so that the earlier streams are those of generator version 1)
    streams = np.random.SeedSequence(seed).spawn(2 + len(CAMPAIGNS))
    truth = draw_truth(np.random.default_rng(streams[0]))
    draw_face_truth(np.random.default_rng(streams[-1]), truth)
    checker = design_check_module()
    design = checker.check_all(MEMBERS, SITE_TABLES["loads"], LINKS)
    (out / "campaigns").mkdir(parents=True, exist_ok=True)
    (out / "site.toml").write_bytes(site_toml().encode("utf-8"))

    campaigns_record, flagged = {}, {}
    for campaign, stream in zip(CAMPAIGNS, streams[1:1 + len(CAMPAIGNS)]):
        rng = np.random.default_rng(stream)
        folder = out / "campaigns" / campaign["folder"]
        folder.mkdir(parents=True, exist_ok=True)
        (folder / "campaign.toml").write_bytes(campaign_toml(campaign).encode("utf-8"))
        files = {}
        for file_name, kind, options in campaign["files"]:
            header, rows, extra = MAKERS[kind](rng, truth, campaign, options)
            flagged.update(extra.get("flagged_cores", {}))
            if file_name.endswith(".xlsx"):
                data = [kind, [header] + rows]
                notes = ["notes", _xlsx_notes(kind, campaign)]
                sheets = [data, notes] if kind == "cores" else [notes, data]
                write_xlsx(folder / file_name, sheets)
            else:
                write_csv(folder / file_name, header, rows)
            files[file_name] = {"kind": kind, "rows": len(rows),
                                **({"unit": options["unit"]} if "unit" in options else {}),
                                **({"faces": extra["faces"]} if "faces" in extra else {})}
        t = age_years(campaign["date"])
        campaigns_record[campaign["folder"]] = {
            "name": campaign["name"], "date": campaign["date"].isoformat(), "age": _sig(t, 6),
            "files": files,
            "active_fraction": {z: _sig(active_fraction(truth["zones"][z], t))
                                for z in ZONES},
            "chloride_front": {z: _sig(float(chloride_front(truth["zones"][z], t)))
                               for z in ZONES},
        }

    record = {
        "generator": {"script": "demo_sites/generate_demo.py", "version": GENERATOR_VERSION,
                      "seed": seed},
        "exposure_start": EXPOSURE_START.isoformat(),
        "days_per_year": DAYS_PER_YEAR,
        "units": TRUTH_UNITS,
        "site": truth["site"] | {"hierarchy": "mu_zone ~ N(mu_log_fc_site, tau_log_fc); "
                                              "ln f_is ~ N(mu_zone, sigma_log_fc)"},
        "zones": truth["zones"],
        "core_conversion": {
            "as_tested": "f_core = f_insitu / (F_l/d * F_diameter * F_moisture * F_drilling)",
            "length_to_diameter": [p for p, _ in CORE_LD_FACTORS],
            "factor_l_d": [f for _, f in CORE_LD_FACTORS],
            "factor_l_d_source": "ASTM C42/C42M (from memory), linear interpolation",
            "factor_diameter_100mm": CORE_DIAMETER_FACTOR_100MM,
            "factor_moisture_as_received": CORE_MOISTURE_FACTOR_AS_RECEIVED,
            "factor_drilling_damage": CORE_DRILLING_DAMAGE_FACTOR,
            "factor_source": "Bartlett & MacGregor 1994 (from memory); defaults of "
                             "inspection_io.cores",
            "bar_in_core_extra_factor": BAR_IN_CORE_FACTOR,
            "damaged_core_extra_factor": DAMAGED_CORE_FACTOR,
            "flagged_cores": flagged,
        },
        "chloride_model": {
            "profile": "C(x,t) = C0 + (Cs - C0) erfc(x / (2 sqrt(D_app(t) t)))",
            "ageing": "D_app(t) = D_ref (t_ref / t)^ageing_exponent",
            "increment_value": "mean of C over the grinding increment (exact integral)",
            "convection_zone_mm": 0.0,
        },
        "corrosion_model": {
            "initiation": "C(cover, t) >= Ccrit or carbonation_k sqrt(t) >= cover",
            "penetration_mm_per_year_per_uA_cm2": PENETRATION_PER_ICORR,
            "max_pit_depth": "R * penetration, R ~ Gumbel(pitting_gumbel_location + "
                             "pitting_gumbel_scale ln(L / L0), pitting_gumbel_scale), R >= 1; "
                             "mean of R at L0 = pitting_factor",
            "pitting_reference_length_mm": SITE_MODEL["pitting_reference_length_mm"],
            "breakout_exposed_length_mm": SITE_MODEL["breakout_exposed_length_mm"],
            "pitting_source": "Gumbel pitting factor, Stewart 2004 and Stewart & Al-Harthy "
                              "2008 (alpha = 1.02 for 125 mm bars, from memory)",
            "breakout_min_active_fraction": MIN_ACTIVE_FRACTION_FOR_BREAKOUT,
            "breakout_sites": {z: [[m, f, d] for m, f, d in breakout_sites(z)] for z in ZONES},
            "breakout_cover": "the face's gamma truncated to quantiles [0, min("
                              "breakout_cover_quantile, active_fraction of that face)]",
            "breakout_cover_quantile": BREAKOUT_COVER_QUANTILE,
        },
        "measurement_error": MEASUREMENT,
        "design": {
            "code": "CP 110:1972 limit-state design, simplified (demo_sites/design_check.py; "
                    "rules from memory, v_c in the closed form of BS 8110-1 Table 3.8)",
            "partial_factors": {"dead": checker.GAMMA_F_DEAD,
                                "imposed": checker.GAMMA_F_IMPOSED,
                                "concrete": checker.GAMMA_M_CONCRETE,
                                "steel": checker.GAMMA_M_STEEL},
            "f_cu": checker.F_CU, "f_y": checker.F_Y, "f_yv": checker.F_YV,
            "links": LINKS,
            "utilisation": design,
        },
        "campaigns": campaigns_record,
    }
    text = json.dumps(record, indent=2, sort_keys=False, allow_nan=False) + "\n"
    (out / "truth.json").write_bytes(text.encode("utf-8"))
    return record


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--out", type=Path, default=Path(__file__).parent / SITE_FOLDER,
                        help="site folder to write (default: demo_sites/tanners-yard)")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED,
                        help=f"random seed (default {DEFAULT_SEED})")
    args = parser.parse_args(argv)
    record = generate(args.out, args.seed)
    print(f"Design check ({record['design']['code']}):")
    print(design_check_module().utilisation_table(record["design"]["utilisation"]))


if __name__ == "__main__":
    main()
