"""Tests of the seabed block (wavebench.sea.seabed)."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr
from scipy.interpolate import RegularGridInterpolator

from wavebench.core.errors import ParameterError
from wavebench.core.params import params_from_dict
from wavebench.sea.seabed import (
    SeabedGrid,
    SyntheticBayParams,
    depth_at,
    depth_under_keel,
    grounded,
    load_seabed,
    save_seabed,
    seabed_from_dataset,
    seabed_to_dataset,
    synthetic_bay,
)


def _random_grid(seed: int = 0) -> SeabedGrid:
    rng = np.random.default_rng(seed)
    north = np.cumsum(rng.uniform(5.0, 40.0, 12)) - 100.0  # non-uniform spacing
    east = np.cumsum(rng.uniform(5.0, 40.0, 9))
    depth = rng.uniform(2.0, 60.0, (north.size, east.size))
    return SeabedGrid(north_m=north, east_m=east, depth_m=depth)


def _inside_points(bed: SeabedGrid, n: int, seed: int = 1) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    return (
        rng.uniform(bed.north_m[0], bed.north_m[-1], n),
        rng.uniform(bed.east_m[0], bed.east_m[-1], n),
    )


# ---------------------------------------------------------------------------
# Interpolation
# ---------------------------------------------------------------------------


def test_bilinear_matches_scipy_regular_grid_interpolator() -> None:
    # Reference library: scipy.interpolate.RegularGridInterpolator(method="linear").
    bed = _random_grid()
    n, e = _inside_points(bed, 500)
    ref = RegularGridInterpolator((bed.north_m, bed.east_m), bed.depth_m, method="linear")
    np.testing.assert_allclose(depth_at(bed, n, e), ref(np.column_stack([n, e])), rtol=1e-13)
    # grid nodes and the upper edges are inside
    nodes_n, nodes_e = np.meshgrid(bed.north_m, bed.east_m, indexing="ij")
    np.testing.assert_allclose(
        depth_at(bed, nodes_n.ravel(), nodes_e.ravel()), bed.depth_m.ravel(), rtol=1e-15
    )


def test_bilinear_reproduces_a_plane_exactly() -> None:
    # Property of bilinear interpolation: exact for d = a + b n + c e.
    bed0 = _random_grid(2)
    nn, ee = np.meshgrid(bed0.north_m, bed0.east_m, indexing="ij")
    bed = SeabedGrid(north_m=bed0.north_m, east_m=bed0.east_m, depth_m=20.0 + 0.05 * nn - 0.02 * ee)
    n, e = _inside_points(bed, 300, seed=3)
    np.testing.assert_allclose(depth_at(bed, n, e), 20.0 + 0.05 * n - 0.02 * e, rtol=0, atol=1e-12)


def test_outside_policy_nan_or_fill() -> None:
    bed = _random_grid()
    out_n = np.array([bed.north_m[0] - 1.0, bed.north_m[-1] + 1.0, 0.0, np.nan])
    out_e = np.array([bed.east_m[0], bed.east_m[0], bed.east_m[-1] + 1.0, bed.east_m[0]])
    assert np.all(np.isnan(depth_at(bed, out_n, out_e)))
    filled = SeabedGrid(
        north_m=bed.north_m, east_m=bed.east_m, depth_m=bed.depth_m, fill_depth_m=-1.0
    )
    np.testing.assert_array_equal(depth_at(filled, out_n, out_e), -1.0)
    # unknown clearance is not reported as grounded; a land fill is grounded
    assert not grounded(bed, out_n, out_e, draft_m=1.0).any()
    assert grounded(filled, out_n, out_e, draft_m=1.0).all()


def test_trial_alone_equals_trial_in_batch_of_50() -> None:
    # Architecture principle 4 (batch slicing), for the deterministic queries.
    bed = _random_grid()
    n, e = _inside_points(bed, 50)
    batch = depth_under_keel(bed, n, e, 1.5, np.linspace(-1, 1, 50))
    for i in (0, 31, 49):
        alone = depth_under_keel(bed, n[i : i + 1], e[i : i + 1], 1.5, np.linspace(-1, 1, 50)[i])
        assert np.array_equal(alone[0], batch[i])


# ---------------------------------------------------------------------------
# Malformed grids
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"north_m": [0.0, 2.0, 1.0]}, "north_m"),
        ({"east_m": [0.0]}, "east_m"),
        ({"east_m": [0.0, np.inf]}, "east_m"),
        ({"depth_m": np.zeros((3, 3))}, "depth_m"),
        ({"depth_m": [[1.0, np.nan], [1.0, 1.0], [1.0, 1.0]]}, "depth_m"),
        ({"fill_depth_m": float("nan")}, "fill_depth_m"),
    ],
)
def test_malformed_grid_is_rejected(kwargs, field) -> None:
    good = {"north_m": [0.0, 1.0, 2.0], "east_m": [0.0, 1.0], "depth_m": np.ones((3, 2))}
    with pytest.raises(ParameterError) as exc:
        SeabedGrid(**{**good, **kwargs})
    assert exc.value.field == field


# ---------------------------------------------------------------------------
# NetCDF / xarray
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("engine", ["netcdf4", "h5netcdf", None])
def test_netcdf_round_trip(tmp_path, engine) -> None:
    # Round trip through a real NetCDF file on disk with xarray.
    if engine == "h5netcdf":
        pytest.importorskip("h5py", reason="h5netcdf needs h5py to write NetCDF-4 files")
    bed = _random_grid(4)
    bed = SeabedGrid(north_m=bed.north_m, east_m=bed.east_m, depth_m=bed.depth_m, fill_depth_m=0.0)
    path = tmp_path / f"bed_{engine}.nc"
    save_seabed(bed, path, engine=engine)
    back = load_seabed(path, engine=engine)
    np.testing.assert_array_equal(back.north_m, bed.north_m)
    np.testing.assert_array_equal(back.east_m, bed.east_m)
    np.testing.assert_array_equal(back.depth_m, bed.depth_m)
    assert back.fill_depth_m == 0.0
    with xr.open_dataset(path, engine=engine) as ds:
        assert ds["depth"].attrs["units"] == "m"
        assert ds["depth"].attrs["positive"] == "down"


def test_elevation_on_yx_dims_with_decreasing_rows(tmp_path) -> None:
    # An elevation (positive up) grid on (x, y) dims with y decreasing, as a GIS raster
    # is often stored: depth = -elevation; compared with scipy on the original layout.
    bed = _random_grid(5)
    elevation = -bed.depth_m
    ds = xr.Dataset(
        {"elev": (("x", "y"), elevation.T[:, ::-1], {"positive": "up", "units": "m"})},
        coords={"y": ("y", bed.north_m[::-1], {"units": "m"}), "x": ("x", bed.east_m)},
    )
    path = tmp_path / "elev.nc"
    ds.to_netcdf(path, engine="netcdf4")
    back = load_seabed(path, variable="elev")
    np.testing.assert_array_equal(back.depth_m, bed.depth_m)
    n, e = _inside_points(bed, 100)
    ref = RegularGridInterpolator((bed.north_m, bed.east_m), bed.depth_m)
    np.testing.assert_allclose(depth_at(back, n, e), ref(np.column_stack([n, e])), rtol=1e-13)
    # the explicit argument overrides the attribute
    flipped = seabed_from_dataset(ds, variable="elev", positive="down")
    np.testing.assert_array_equal(flipped.depth_m, -bed.depth_m)


def test_dataset_errors_name_the_problem() -> None:
    good = seabed_to_dataset(_random_grid())
    with pytest.raises(ParameterError) as exc:
        seabed_from_dataset(good, variable="bathymetry")
    assert exc.value.field == "variable"
    bad = good.rename({"north": "lat", "east": "lon"})
    with pytest.raises(ParameterError) as exc:
        seabed_from_dataset(bad)
    assert exc.value.field == "dims"
    km = good.assign_coords(north=good["north"].assign_attrs(units="km"))
    with pytest.raises(ParameterError) as exc:
        seabed_from_dataset(km)
    assert exc.value.field == "coords.north.units"
    holey = good.copy(deep=True)
    holey["depth"][0, 0] = np.nan
    with pytest.raises(ParameterError) as exc:
        seabed_from_dataset(holey)
    assert exc.value.field == "depth_m"
    with pytest.raises(ParameterError) as exc:
        seabed_from_dataset(good, positive="sideways")
    assert exc.value.field == "positive"


# ---------------------------------------------------------------------------
# Under-keel clearance and grounding
# ---------------------------------------------------------------------------


def _shoal_grid() -> SeabedGrid:
    # flat 20 m bed with a Gaussian shoal rising to 2 m at (500, 300), on a node
    north = np.arange(0.0, 1001.0, 10.0)
    east = np.arange(0.0, 601.0, 10.0)
    nn, ee = np.meshgrid(north, east, indexing="ij")
    r2 = (nn - 500.0) ** 2 + (ee - 300.0) ** 2
    return SeabedGrid(north_m=north, east_m=east, depth_m=20.0 - 18.0 * np.exp(-r2 / 7200.0))


def test_grounding_mask_over_a_shoal() -> None:
    # Under-keel clearance (nautical definition): water depth minus the keel's depth
    # below the surface, here UKC = depth - draft - heave (heave positive down, NED).
    # Depths at grid nodes from the shoal formula d = 20 - 18 exp(-r^2 / 7200).
    bed = _shoal_grid()
    north = np.array([500.0, 510.0, 800.0, 500.0])
    east = np.array([300.0, 300.0, 300.0, 50.0])
    d_hand = np.array(
        [
            2.0,  # crest
            20.0 - 18.0 * np.exp(-(10.0**2) / 7200.0),  # 10 m off: 2.248 m
            20.0 - 18.0 * np.exp(-(300.0**2) / 7200.0),  # 300 m off: ~20 m
            20.0 - 18.0 * np.exp(-(250.0**2) / 7200.0),  # 250 m off: ~20 m
        ]
    )
    ukc = depth_under_keel(bed, north, east, draft_m=2.5)
    np.testing.assert_allclose(ukc, d_hand - 2.5, rtol=1e-12)
    mask = grounded(bed, north, east, draft_m=2.5)
    assert mask.dtype == bool and mask.shape == (4,)
    assert mask.tolist() == [True, True, False, False]
    # heave: down 0.6 m grounds a 1.5 m draft over the 2 m crest, up 0.6 m does not
    down = grounded(bed, [500.0], [300.0], draft_m=1.5, wave_heave_m=0.6)
    up = grounded(bed, [500.0], [300.0], draft_m=1.5, wave_heave_m=-0.6)
    assert down.tolist() == [True] and up.tolist() == [False]
    # a required clearance of 1 m flags the 2.248 m spot for a 1.5 m draft
    ring = grounded(bed, [510.0], [300.0], draft_m=1.5, clearance_m=1.0)
    assert ring.tolist() == [True]
    # a 0.6 m tide lifts the craft clear of the crest
    assert not grounded(bed, [500.0], [300.0], draft_m=2.5, water_level_m=0.6)[0]


def test_bad_keel_inputs() -> None:
    bed = _shoal_grid()
    with pytest.raises(ParameterError) as exc:
        depth_under_keel(bed, [0.0], [0.0], draft_m=-1.0)
    assert exc.value.field == "draft_m"
    with pytest.raises(ParameterError) as exc:
        depth_under_keel(bed, [0.0], [0.0], draft_m=1.0, wave_heave_m=np.nan)
    assert exc.value.field == "wave_heave_m"
    with pytest.raises(ParameterError) as exc:
        depth_at(bed, [0.0, 1.0, 2.0], [0.0, 1.0])
    assert exc.value.field == "east_m"


# ---------------------------------------------------------------------------
# Synthetic demo bay (invented terrain)
# ---------------------------------------------------------------------------


def test_synthetic_bay_is_reproducible_from_the_generator() -> None:
    p = SyntheticBayParams(length_north_m=1000.0, width_east_m=800.0, resolution_m=10.0)
    a = synthetic_bay(p, np.random.default_rng(12))
    b = synthetic_bay(p, np.random.default_rng(12))
    c = synthetic_bay(p, np.random.default_rng(13))
    assert a.depth_m.shape == (101, 81)
    np.testing.assert_array_equal(a.depth_m, b.depth_m)
    assert not np.array_equal(a.depth_m, c.depth_m)
    assert a.north_m[-1] == 1000.0 and a.east_m[-1] == 800.0


def test_synthetic_bay_round_trips_and_grounds(tmp_path) -> None:
    bay = synthetic_bay(SyntheticBayParams(), np.random.default_rng(0))
    save_seabed(bay, tmp_path / "bay.nc")
    back = load_seabed(tmp_path / "bay.nc")
    np.testing.assert_array_equal(back.depth_m, bay.depth_m)
    i, j = np.unravel_index(np.argmin(bay.depth_m[20:, 10:-10]), bay.depth_m[20:, 10:-10].shape)
    n, e = bay.north_m[20 + i], bay.east_m[10 + j]
    shallowest = bay.depth_m[20 + i, 10 + j]
    assert grounded(back, [n], [e], draft_m=max(shallowest, 0.0) + 0.1)[0]


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"resolution_m": -5.0}, "resolution_m"),
        ({"resolution_m": 0.1}, "resolution_m"),
        ({"n_shoals": 1.5}, "n_shoals"),
        ({"channel_depth_m": np.nan}, "channel_depth_m"),
        ({"mouth_depth_m": 0.0}, "mouth_depth_m"),
    ],
)
def test_bad_bay_parameters(kwargs, field) -> None:
    with pytest.raises(ParameterError) as exc:
        SyntheticBayParams(**kwargs)
    assert exc.value.field == field


def test_unknown_key_via_params_from_dict() -> None:
    with pytest.raises(ParameterError) as exc:
        params_from_dict(SyntheticBayParams, {"n_shoal": 3}, "seabed")
    assert exc.value.field == "seabed.n_shoal"
    assert "n_shoals" in str(exc.value)
