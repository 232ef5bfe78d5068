"""Seabed: gridded depth, bilinear interpolation, demo terrain and grounding.

Conventions
-----------
* Depth is positive down in metres below the grid's datum (the still water
  level of the scenario); negative depth is dry land above the datum.
* The grid lies on NED world-frame axes: ``north_m`` (rows) and ``east_m``
  (columns), both strictly increasing.
* Queries are batched over a leading trial axis: ``north_m``, ``east_m`` of
  shape (n_trials,).
* **Outside the grid** a query returns ``fill_depth_m`` of the grid, which is
  NaN unless set. NaN depths make :func:`depth_under_keel` NaN and
  :func:`grounded` False (unknown is not reported as grounded); give a
  fill depth (e.g. 0 m, "treat off-chart as land") for a conservative
  policy. Malformed grids (non-monotonic axes, wrong shapes, NaN depths)
  raise :class:`ParameterError` when they are built or loaded.

Files: :func:`save_seabed` / :func:`load_seabed` write and read NetCDF
through xarray with CF-style ``units``/``positive``/``long_name``
attributes. Unless an engine is named, ``"h5netcdf"`` is used when its
``h5py`` backend is importable, else ``"netcdf4"``.

The synthetic bay of :func:`synthetic_bay` is invented demo terrain (our own
design, not a real place): see :class:`SyntheticBayParams`.
"""

from __future__ import annotations

import importlib.util
import math
import os
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..core.errors import ParameterError
from ..core.params import Params, bounded

__all__ = [
    "SeabedGrid",
    "SyntheticBayParams",
    "depth_at",
    "depth_under_keel",
    "grounded",
    "load_seabed",
    "save_seabed",
    "seabed_from_dataset",
    "seabed_to_dataset",
    "synthetic_bay",
]

_METRE_UNITS = ("m", "metre", "metres", "meter", "meters")


def _axis(name: str, values: Any) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    if arr.ndim != 1 or arr.size < 2:
        raise ParameterError(name, arr, "must be a 1-D array with at least 2 points")
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, arr, "must be finite")
    if not np.all(np.diff(arr) > 0):
        raise ParameterError(name, arr, "must be strictly increasing")
    arr = arr.copy()
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True)
class SeabedGrid:
    """Depth on a regular NED grid.

    Parameters
    ----------
    north_m : ndarray of shape (n_north,)
        Strictly increasing north coordinates of the rows [m].
    east_m : ndarray of shape (n_east,)
        Strictly increasing east coordinates of the columns [m].
    depth_m : ndarray of shape (n_north, n_east)
        Depth below the datum [m], positive down; finite.
    fill_depth_m : float or None
        Depth returned for queries outside the grid; None gives NaN.

    Raises
    ------
    ParameterError
        For malformed axes, a depth array of the wrong shape, non-finite
        depths or a non-finite fill depth.

    Examples
    --------
    >>> bed = SeabedGrid(north_m=[0.0, 10.0], east_m=[0.0, 10.0],
    ...                  depth_m=[[10.0, 12.0], [14.0, 16.0]])
    >>> depth_at(bed, [5.0, 50.0], [5.0, 0.0]).tolist()
    [13.0, nan]
    """

    north_m: np.ndarray
    east_m: np.ndarray
    depth_m: np.ndarray
    fill_depth_m: float | None = None

    def __post_init__(self) -> None:
        n = _axis("north_m", self.north_m)
        e = _axis("east_m", self.east_m)
        d = np.asarray(self.depth_m, dtype=float)
        if d.shape != (n.size, e.size):
            raise ParameterError(
                "depth_m", d, f"must have shape (n_north, n_east) = {(n.size, e.size)}"
            )
        if not np.all(np.isfinite(d)):
            raise ParameterError(
                "depth_m", d, "must be finite", "fill missing cells first, e.g. ds.fillna(...)"
            )
        d = d.copy()
        d.setflags(write=False)
        fill = self.fill_depth_m
        if fill is not None:
            if isinstance(fill, bool) or not np.isscalar(fill) or not math.isfinite(fill):
                raise ParameterError("fill_depth_m", fill, "must be a finite number or None")
            fill = float(fill)
        object.__setattr__(self, "north_m", n)
        object.__setattr__(self, "east_m", e)
        object.__setattr__(self, "depth_m", d)
        object.__setattr__(self, "fill_depth_m", fill)


def _query(north_m: Any, east_m: Any) -> tuple[np.ndarray, np.ndarray]:
    n = np.atleast_1d(np.asarray(north_m, dtype=float))
    e = np.atleast_1d(np.asarray(east_m, dtype=float))
    if n.ndim != 1:
        raise ParameterError("north_m", n, "must be a scalar or a 1-D array of shape (n_trials,)")
    if e.ndim != 1:
        raise ParameterError("east_m", e, "must be a scalar or a 1-D array of shape (n_trials,)")
    try:
        return tuple(np.broadcast_arrays(n, e))  # type: ignore[return-value]
    except ValueError:
        raise ParameterError(
            "east_m", e, f"must have the same length as north_m ({n.size})"
        ) from None


def depth_at(seabed: SeabedGrid, north_m: Any, east_m: Any) -> np.ndarray:
    """Bilinearly interpolated depth at query points.

    Parameters
    ----------
    seabed : SeabedGrid
    north_m, east_m : ndarray of shape (n_trials,)
        Query positions [m] (NED).

    Returns
    -------
    ndarray of shape (n_trials,)
        Depth [m], positive down; ``seabed.fill_depth_m`` (NaN by default)
        outside the grid or at non-finite query positions.

    Notes
    -----
    With ``w_n, w_e`` the fractional positions in the enclosing cell:
    ``d = (1 - w_n)((1 - w_e) d00 + w_e d01) + w_n((1 - w_e) d10 + w_e d11)``.
    Points on the grid's edges are inside.
    """
    n, e = _query(north_m, east_m)
    gn, ge, grid = seabed.north_m, seabed.east_m, seabed.depth_m
    inside = (n >= gn[0]) & (n <= gn[-1]) & (e >= ge[0]) & (e <= ge[-1])  # False for NaN
    nq = np.where(inside, n, gn[0])
    eq = np.where(inside, e, ge[0])
    i0 = np.clip(np.searchsorted(gn, nq, side="right") - 1, 0, gn.size - 2)
    j0 = np.clip(np.searchsorted(ge, eq, side="right") - 1, 0, ge.size - 2)
    wn = (nq - gn[i0]) / (gn[i0 + 1] - gn[i0])
    we = (eq - ge[j0]) / (ge[j0 + 1] - ge[j0])
    low = (1.0 - we) * grid[i0, j0] + we * grid[i0, j0 + 1]
    high = (1.0 - we) * grid[i0 + 1, j0] + we * grid[i0 + 1, j0 + 1]
    d = (1.0 - wn) * low + wn * high
    fill = np.nan if seabed.fill_depth_m is None else seabed.fill_depth_m
    return np.where(inside, d, fill)


def _finite(name: str, value: Any, *, nonnegative: bool = False) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or (nonnegative and np.any(arr < 0)):
        allowed = "must be finite and >= 0" if nonnegative else "must be finite"
        raise ParameterError(name, value if arr.ndim else float(arr), allowed)
    return arr


def depth_under_keel(
    seabed: SeabedGrid,
    north_m: Any,
    east_m: Any,
    draft_m: Any,
    wave_heave_m: Any = 0.0,
    *,
    water_level_m: Any = 0.0,
) -> np.ndarray:
    """Under-keel clearance: water between the keel and the seabed.

    Parameters
    ----------
    seabed : SeabedGrid
    north_m, east_m : ndarray of shape (n_trials,)
        Craft positions [m].
    draft_m : float or ndarray of shape (n_trials,)
        Static draft [m], >= 0 (for an underwater vehicle: the depth of its
        lowest point).
    wave_heave_m : float or ndarray of shape (n_trials,)
        Wave-induced vertical displacement of the keel [m], positive DOWN
        (NED), e.g. heave plus pitch/roll sinkage at the lowest point.
    water_level_m : float or ndarray of shape (n_trials,)
        Water level above the grid's datum [m] (e.g. tide height).

    Returns
    -------
    ndarray of shape (n_trials,)
        ``depth + water_level - draft - wave_heave`` [m]; NaN outside the
        grid unless the grid has a fill depth.
    """
    d = depth_at(seabed, north_m, east_m)
    draft = _finite("draft_m", draft_m, nonnegative=True)
    heave = _finite("wave_heave_m", wave_heave_m)
    level = _finite("water_level_m", water_level_m)
    return d + level - draft - heave


def grounded(
    seabed: SeabedGrid,
    north_m: Any,
    east_m: Any,
    draft_m: Any,
    wave_heave_m: Any = 0.0,
    *,
    water_level_m: Any = 0.0,
    clearance_m: float = 0.0,
) -> np.ndarray:
    """Grounding test per trial: under-keel clearance at or below ``clearance_m``.

    Parameters
    ----------
    seabed, north_m, east_m, draft_m, wave_heave_m, water_level_m
        As for :func:`depth_under_keel`.
    clearance_m : float
        Required margin [m], >= 0 (0: the keel touches the seabed).

    Returns
    -------
    ndarray of bool, shape (n_trials,)
        True where ``depth_under_keel <= clearance_m``; False where the
        clearance is unknown (NaN outside a grid without fill depth).

    Examples
    --------
    >>> bed = SeabedGrid(north_m=[0.0, 100.0], east_m=[0.0, 100.0],
    ...                  depth_m=[[3.0, 3.0], [9.0, 9.0]])
    >>> grounded(bed, [0.0, 100.0, 500.0], [50.0, 50.0, 50.0], draft_m=4.0).tolist()
    [True, False, False]
    """
    margin = _finite("clearance_m", clearance_m, nonnegative=True)
    ukc = depth_under_keel(
        seabed, north_m, east_m, draft_m, wave_heave_m, water_level_m=water_level_m
    )
    return ukc <= margin  # NaN compares False


# ---------------------------------------------------------------------------
# Synthetic demo bay (invented terrain)
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class SyntheticBayParams(Params):
    """Invented demo terrain: a shelving bay with a winding channel and shoals.

    Our own design, for demos and tests of grounding/terrain navigation; it
    does not model a real place. The grid spans ``north`` in
    ``[0, length_north_m]`` and ``east`` in ``[0, width_east_m]``. The head of
    the bay (the shore) is the south edge, the mouth is the north edge.

    * Shelving bed: ``head + (mouth - head) s**0.7 sqrt(1 - |2 e/W - 1|**4)``
      with ``s = north/L``: deepening toward the mouth, shoaling to the head
      depth at the east and west shores.
    * Channel: ``+ channel_depth exp(-((e - e_c(n))/channel_width)**2)``
      along a winding axis ``e_c(n) = W/2 + A sin(pi s + phase)``, with
      ``A = W (0.075 .. 0.15)`` and the phase drawn from the generator.
    * Shoals: ``n_shoals`` Gaussian bumps
      ``- h exp(-r**2 / (2 rho**2))`` with centres uniform in
      ``[0.25 L, 0.9 L] x [0.15 W, 0.85 W]``, heights
      ``shoal_height (0.6 .. 1.0)`` and radii ``shoal_radius (0.7 .. 1.3)``.
      A shoal may break the surface (negative depth: an islet).

    Parameters
    ----------
    length_north_m, width_east_m : float
        Extent of the grid [m], > 0.
    resolution_m : float
        Grid spacing [m], > 0.
    head_depth_m : float
        Depth at the head of the bay and along the shores [m].
    mouth_depth_m : float
        Depth in mid-mouth, without channel [m], > 0.
    channel_depth_m : float
        Extra depth on the channel axis [m], >= 0.
    channel_width_m : float
        e-folding half-width of the channel [m], > 0.
    n_shoals : int
        Number of shoals, >= 0.
    shoal_height_m : float
        Nominal rise of a shoal above the surrounding bed [m], >= 0.
    shoal_radius_m : float
        Nominal radius (Gaussian sigma) of a shoal [m], > 0.
    """

    length_north_m: float = bounded(3000.0, gt=0.0, unit="m", doc="extent north")
    width_east_m: float = bounded(2000.0, gt=0.0, unit="m", doc="extent east")
    resolution_m: float = bounded(20.0, gt=0.0, unit="m", doc="grid spacing")
    head_depth_m: float = bounded(2.0, unit="m", doc="depth at the head and shores")
    mouth_depth_m: float = bounded(40.0, gt=0.0, unit="m", doc="depth in mid-mouth")
    channel_depth_m: float = bounded(8.0, ge=0.0, unit="m", doc="extra depth of the channel")
    channel_width_m: float = bounded(120.0, gt=0.0, unit="m", doc="channel half-width")
    n_shoals: int = bounded(4, ge=0, integer=True, doc="number of shoals")
    shoal_height_m: float = bounded(25.0, ge=0.0, unit="m", doc="nominal shoal rise")
    shoal_radius_m: float = bounded(150.0, gt=0.0, unit="m", doc="nominal shoal radius")

    def _check(self) -> None:
        for f in (
            "length_north_m",
            "width_east_m",
            "resolution_m",
            "head_depth_m",
            "mouth_depth_m",
            "channel_depth_m",
            "channel_width_m",
            "n_shoals",
            "shoal_height_m",
            "shoal_radius_m",
        ):
            if np.ndim(getattr(self, f)) != 0:
                raise ParameterError(f, getattr(self, f), "must be a scalar (one bay per campaign)")
        object.__setattr__(self, "n_shoals", int(self.n_shoals))
        n_points = (self.length_north_m / self.resolution_m + 1) * (
            self.width_east_m / self.resolution_m + 1
        )
        if n_points > 4e6:
            raise ParameterError(
                "resolution_m", self.resolution_m, "gives more than 4 million grid points"
            )
        if n_points < 4 or self.resolution_m > min(self.length_north_m, self.width_east_m):
            raise ParameterError(
                "resolution_m", self.resolution_m, "must be at most the smaller extent"
            )


def synthetic_bay(params: SyntheticBayParams, rng: np.random.Generator) -> SeabedGrid:
    """Generate invented demo terrain (see :class:`SyntheticBayParams`).

    Parameters
    ----------
    params : SyntheticBayParams
    rng : numpy.random.Generator
        Source of the channel and shoal layout (the same generator state
        gives the same bay).

    Returns
    -------
    SeabedGrid

    Examples
    --------
    >>> bay = synthetic_bay(SyntheticBayParams(), np.random.default_rng(1))
    >>> bay.depth_m.shape
    (151, 101)
    """
    if not isinstance(rng, np.random.Generator):
        raise ParameterError("rng", rng, "must be a numpy.random.Generator")
    p = params
    north = np.linspace(0.0, p.length_north_m, round(p.length_north_m / p.resolution_m) + 1)
    east = np.linspace(0.0, p.width_east_m, round(p.width_east_m / p.resolution_m) + 1)
    nn, ee = np.meshgrid(north, east, indexing="ij")
    s = nn / p.length_north_m
    lateral = np.sqrt(np.clip(1.0 - np.abs(2.0 * ee / p.width_east_m - 1.0) ** 4, 0.0, 1.0))
    depth = p.head_depth_m + (p.mouth_depth_m - p.head_depth_m) * s**0.7 * lateral
    amp = p.width_east_m * rng.uniform(0.075, 0.15)
    phase = rng.uniform(0.0, 2.0 * np.pi)
    axis = 0.5 * p.width_east_m + amp * np.sin(np.pi * s + phase)
    depth = depth + p.channel_depth_m * np.exp(-(((ee - axis) / p.channel_width_m) ** 2))
    k = p.n_shoals
    centres_n = rng.uniform(0.25, 0.9, k) * p.length_north_m
    centres_e = rng.uniform(0.15, 0.85, k) * p.width_east_m
    heights = p.shoal_height_m * rng.uniform(0.6, 1.0, k)
    radii = p.shoal_radius_m * rng.uniform(0.7, 1.3, k)
    for cn, ce, h, r in zip(centres_n, centres_e, heights, radii, strict=True):
        depth = depth - h * np.exp(-((nn - cn) ** 2 + (ee - ce) ** 2) / (2.0 * r * r))
    return SeabedGrid(north_m=north, east_m=east, depth_m=depth)


# ---------------------------------------------------------------------------
# xarray / NetCDF
# ---------------------------------------------------------------------------

_FILL_ATTR = "fill_depth_m"


def _netcdf_engine(engine: str | None) -> str | None:
    """The engine to use: the one named, else h5netcdf (with h5py), else netcdf4."""
    if engine is not None:
        return engine
    for module, name in (("h5py", "h5netcdf"), ("netCDF4", "netcdf4")):
        if importlib.util.find_spec(module) is not None:
            return name
    return None  # let xarray choose (e.g. scipy, NetCDF-3)


def seabed_to_dataset(seabed: SeabedGrid) -> Any:
    """The grid as an :class:`xarray.Dataset` with CF-style attributes.

    Parameters
    ----------
    seabed : SeabedGrid

    Returns
    -------
    xarray.Dataset
        Variable ``depth`` on dims ``(north, east)`` [m, positive down];
        the fill depth, if any, as the global attribute ``fill_depth_m``.
    """
    import xarray as xr

    attrs: dict[str, Any] = {"title": "wavebench seabed depth grid", "Conventions": "CF-1.8"}
    if seabed.fill_depth_m is not None:
        attrs[_FILL_ATTR] = seabed.fill_depth_m
    return xr.Dataset(
        {
            "depth": (
                ("north", "east"),
                np.array(seabed.depth_m),
                {"units": "m", "positive": "down", "long_name": "depth below the datum"},
            )
        },
        coords={
            "north": (
                "north",
                np.array(seabed.north_m),
                {"units": "m", "long_name": "north (NED)"},
            ),
            "east": ("east", np.array(seabed.east_m), {"units": "m", "long_name": "east (NED)"}),
        },
        attrs=attrs,
    )


def seabed_from_dataset(
    ds: Any,
    *,
    variable: str = "depth",
    positive: str | None = None,
    fill_depth_m: float | None = None,
) -> SeabedGrid:
    """Build a :class:`SeabedGrid` from an :class:`xarray.Dataset`.

    Parameters
    ----------
    ds : xarray.Dataset
        Holds ``variable`` on dims ``(north, east)`` or ``(y, x)`` (any
        order) with 1-D coordinates in metres (increasing or decreasing).
    variable : str
        Name of the depth or elevation variable.
    positive : {"down", "up"}, optional
        ``"down"`` for depth (positive down), ``"up"`` for elevation
        (depth = -elevation). Default: the variable's CF ``positive``
        attribute, else ``"down"``.
    fill_depth_m : float, optional
        Depth for queries outside the grid; default: the dataset's
        ``fill_depth_m`` attribute, else NaN.

    Returns
    -------
    SeabedGrid

    Raises
    ------
    ParameterError
        For a missing variable, wrong dimensions, missing or non-metre
        coordinates, non-monotonic coordinates or NaN depths.
    """
    if variable not in ds.data_vars:
        raise ParameterError(
            "variable",
            variable,
            f"not in the dataset; data variables are {sorted(map(str, ds.data_vars))}",
        )
    var = ds[variable]
    dims = tuple(map(str, var.dims))
    pair = next((p for p in (("north", "east"), ("y", "x")) if set(dims) == set(p)), None)
    if pair is None:
        raise ParameterError(
            "dims",
            dims,
            "the depth variable needs exactly the dims ('north', 'east') or ('y', 'x')",
        )
    if positive is None:
        positive = str(var.attrs.get("positive", "down"))
    if positive not in ("down", "up"):
        raise ParameterError("positive", positive, "must be 'down' (depth) or 'up' (elevation)")
    axes = []
    for dim in pair:
        if dim not in ds.coords:
            raise ParameterError(
                f"coords.{dim}", None, f"dimension '{dim}' needs a coordinate in metres"
            )
        units = ds[dim].attrs.get("units")
        if units is not None and str(units) not in _METRE_UNITS:
            raise ParameterError(f"coords.{dim}.units", units, "coordinates must be in metres")
        axes.append(np.asarray(ds[dim].values, dtype=float))
    values = np.asarray(var.transpose(*pair).values, dtype=float)
    if positive == "up":
        values = -values
    for k in range(2):
        if axes[k].size > 1 and np.all(np.diff(axes[k]) < 0):
            axes[k] = axes[k][::-1]
            values = np.flip(values, axis=k)
    if fill_depth_m is None and _FILL_ATTR in ds.attrs:
        fill_depth_m = float(ds.attrs[_FILL_ATTR])
    return SeabedGrid(north_m=axes[0], east_m=axes[1], depth_m=values, fill_depth_m=fill_depth_m)


def save_seabed(
    seabed: SeabedGrid, path: str | os.PathLike[str], *, engine: str | None = None
) -> None:
    """Write a grid to a NetCDF file (see :func:`seabed_to_dataset`).

    Parameters
    ----------
    seabed : SeabedGrid
    path : str or path-like
        Output file.
    engine : str, optional
        xarray NetCDF engine (``"h5netcdf"`` or ``"netcdf4"``); default:
        h5netcdf if ``h5py`` is importable, else netcdf4.
    """
    seabed_to_dataset(seabed).to_netcdf(path, engine=_netcdf_engine(engine))


def load_seabed(
    path: str | os.PathLike[str],
    *,
    variable: str = "depth",
    positive: str | None = None,
    fill_depth_m: float | None = None,
    engine: str | None = None,
) -> SeabedGrid:
    """Read a grid from a NetCDF file (see :func:`seabed_from_dataset`).

    Parameters
    ----------
    path : str or path-like
        Input file.
    variable, positive, fill_depth_m
        As for :func:`seabed_from_dataset`.
    engine : str, optional
        xarray engine; default as for :func:`save_seabed`.

    Returns
    -------
    SeabedGrid
    """
    import xarray as xr

    with xr.open_dataset(path, engine=_netcdf_engine(engine)) as ds:
        ds.load()
        return seabed_from_dataset(
            ds, variable=variable, positive=positive, fill_depth_m=fill_depth_m
        )
