"""``edl map`` of a rectangle: --rectangle W×H with the axes kappa_h and aspect_ratio (a 3 x 3 map at accuracy
1e-4), and an aspect ratio refused for a slit in one line with exit code 2."""

from __future__ import annotations

from pathlib import Path

import xarray as xr

from tests.helpers import run

RECTANGLE = ["--rectangle", "200nm×40nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta", "-50mV",
             "--accuracy", "1e-4"]


def test_edl_map_of_a_rectangle_over_kappa_h_and_aspect_ratio(tmp_path: Path) -> None:
    out = tmp_path / "map.h5"
    code, text, err = run(["map", *RECTANGLE, "--x", "kappa_h:0.5:2:3", "--y", "aspect_ratio:1:4:3", "-o", str(out)])
    assert code == 0, err
    assert text.startswith("validity map of aspect_ratio x kappa_h: 9 cases, 9 converged")
    with xr.open_dataset(out, engine="h5netcdf") as data:
        assert data["thin_layer_flow_rate_error"].shape == (3, 3)
        assert data["geometry.aspect_ratio"].values.tolist() == [1.0, 2.0, 4.0]


def test_edl_map_refuses_an_aspect_ratio_for_a_slit(tmp_path: Path) -> None:
    slit = ["--slit", "40nm", *RECTANGLE[2:]]
    code, _, err = run(["map", *slit, "--x", "kappa_h:1:10:3", "--y", "aspect_ratio:1:16:3",
                        "-o", str(tmp_path / "map.h5")])
    assert code == 2 and err.count("\n") == 1 and "Traceback" not in err, err
    assert "aspect_ratio: the base case is a slit, expected a rectangle" in err
    assert list(tmp_path.iterdir()) == []
