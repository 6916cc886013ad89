"""Speed of dust-map lookups, as ratios against baselines timed in the same run (best of several).

Writes to a temporary folder a full-sky NSIDE 1024 HEALPix map (RING, galactic,
float32, ~50 MB), and a distance-resolved map of 30 distances at NSIDE 512
(~380 MB) with a 2D map of the same NSIDE, opens them memory-mapped with
redcorr and times, for the same random positions:

* ``lookup`` nearest-pixel, positions in the map's frame, against
  ``astropy_healpix.lonlat_to_healpix`` alone (target <= 1.2x);
* ``lookup`` bilinear (the default), positions in the map's frame, against
  ``astropy_healpix.bilinear_interpolation_weights`` plus the gather of the four
  neighbours' values from the same memory-mapped column (target <= 1.3x);
* ``lookup`` bilinear with positions in ICRS (adds the frame transformation; no target);
* the distance-resolved ``lookup`` bilinear at one exact distance per position
  against the 2D bilinear ``lookup`` of the same positions at the same NSIDE
  (target <= 1.5x); and, for information, with a distance distribution of 16 nodes
  per position (on a tenth of the positions).

Each case runs ``--repeat`` times (default 3) and its best wall-clock time counts;
the CPU time of the process (all threads) is printed beside it, so that a run on a
machine shared with other work can be told apart from a slow lookup. Both
sides work through the positions in chunks of the same size so that memory stays
modest. The baselines run in one thread, as the library calls do; a HEALPix
lookup samples up to ``redcorr.maps._base._MAX_THREADS`` chunks at once on as
many usable CPUs (the count is printed), so its ratios shrink with the CPUs and
grow when other work shares them.
Usage: ``python benchmarks/bench_maps.py [--rows N] [--nside N] [--nside-3d N] [--repeat N]``.
"""

import argparse
import sys
import tempfile
import time
from pathlib import Path

import astropy_healpix
import numpy as np
from astropy import units as u
from astropy.io import fits

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this checkout's redcorr
from redcorr.io import open_map  # noqa: E402
from redcorr.maps import DistanceSamples, parse_frame, transform_lonlat  # noqa: E402
from redcorr.maps._base import _CHUNK, _MAX_THREADS, _usable_cpus  # noqa: E402

N_DISTANCES = 30
DISTANCES_PC = np.linspace(100.0, 3000.0, N_DISTANCES)


def _pattern(start, stop, nside):
    """A smooth column density at pixels start..stop, float32, and the latitude factor for 3D."""
    lon, lat = astropy_healpix.healpix_to_lonlat(np.arange(start, stop), nside)
    s = np.abs(np.sin(lat.to_value(u.rad)))
    column = 0.05 + 0.5 * np.exp(-s * 8) * (1 + 0.3 * np.cos(lon.to_value(u.rad)))
    return column.astype(np.float32), s


def _write_map(path, nside, distances=None):
    """A full-sky RING galactic map; with ``distances`` a cumulative profile per pixel and a DISTANCES table."""
    npix = 12 * nside**2
    per_row = 1024 if distances is None else distances.size
    values = np.empty((npix // per_row, per_row) if distances is None else (npix, per_row), dtype=np.float32)
    flat = values.reshape(-1) if distances is None else values
    step = 1 << 20
    for start in range(0, npix, step):  # written without holding float64 copies of the whole map
        stop = min(start + step, npix)
        column, s = _pattern(start, stop, nside)
        if distances is None:
            flat[start:stop] = column
        else:  # an exponential disk of scale height 150 pc: E(d) = column·(1 − exp(−d·s/150))
            flat[start:stop] = column[:, None] * -np.expm1(-distances[None, :] * (s[:, None] + 0.01) / 150.0)
    fmt = f"{per_row}E"
    hdus = [fits.PrimaryHDU(), fits.BinTableHDU.from_columns([fits.Column(name="EBV", format=fmt, array=values)])]
    for key, value in {"PIXTYPE": "HEALPIX", "ORDERING": "RING", "COORDSYS": "G", "NSIDE": nside}.items():
        hdus[1].header[key] = value
    if distances is not None:
        column = fits.Column(name="DISTANCE", format="D", unit="pc", array=distances)
        hdus.append(fits.BinTableHDU.from_columns([column], name="DISTANCES"))
    fits.HDUList(hdus).writeto(path)


def _best(func, repeat):
    """Best wall-clock and best CPU (process, all threads) seconds of ``repeat`` runs."""
    wall, cpu = [], []
    for _ in range(repeat):
        start, start_cpu = time.perf_counter(), time.process_time()
        func()
        wall.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    return min(wall), min(cpu)


def _chunked(rows, func):
    def run():
        for start in range(0, rows, _CHUNK):
            func(slice(start, start + _CHUNK))

    return run


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=10_000_000)
    parser.add_argument("--nside", type=int, default=1024)
    parser.add_argument("--nside-3d", type=int, default=512)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args(argv)
    rng = np.random.default_rng(12345)
    lon = rng.uniform(0, 360, args.rows)
    lat = np.degrees(np.arcsin(rng.uniform(-1, 1, args.rows)))
    distance = rng.uniform(0.0, 1.1 * DISTANCES_PC[-1], args.rows)
    few = args.rows // 10
    nodes = np.clip(distance[:few, None] * rng.normal(1.0, 0.2, (few, 16)), 0.0, None)
    samples = DistanceSamples(nodes, np.full(nodes.shape, 1 / 16))
    ra, dec = transform_lonlat(lon, lat, parse_frame("galactic"), parse_frame("icrs"))
    lon_q = u.Quantity(lon, u.deg, copy=False)
    lat_q = u.Quantity(lat, u.deg, copy=False)
    with tempfile.TemporaryDirectory() as tmp:
        paths = {name: Path(tmp) / f"{name}.fits" for name in ("2d", "2d_small", "3d")}
        _write_map(paths["2d"], args.nside)
        _write_map(paths["2d_small"], args.nside_3d)
        _write_map(paths["3d"], args.nside_3d, DISTANCES_PC)
        maps = {name: open_map(path) for name, path in paths.items()}
        column = maps["2d"].values

        def index_only(part):
            astropy_healpix.lonlat_to_healpix(lon_q[part], lat_q[part], args.nside)

        def weights_and_gather(part):
            index, _ = astropy_healpix.bilinear_interpolation_weights(lon_q[part], lat_q[part], args.nside)
            column[index]

        rows = [
            # (case, function, baseline name, target)
            ("baseline: lonlat_to_healpix", _chunked(args.rows, index_only), None, None),
            ("baseline: bilinear weights + gather", _chunked(args.rows, weights_and_gather), None, None),
            ("lookup nearest, galactic in", lambda: maps["2d"].lookup(lon, lat, "galactic", "nearest"),
             "baseline: lonlat_to_healpix", 1.2),
            ("lookup bilinear, galactic in", lambda: maps["2d"].lookup(lon, lat, "galactic"),
             "baseline: bilinear weights + gather", 1.3),
            ("lookup bilinear, ICRS in", lambda: maps["2d"].lookup(ra, dec, "icrs"),
             "baseline: bilinear weights + gather", None),
            (f"baseline: 2D bilinear at NSIDE {args.nside_3d}", lambda: maps["2d_small"].lookup(lon, lat, "galactic"),
             None, None),
            (f"3D lookup, {N_DISTANCES} distances, exact",
             lambda: maps["3d"].lookup(lon, lat, "galactic", distance=distance),
             f"baseline: 2D bilinear at NSIDE {args.nside_3d}", 1.5),
        ]
        threads = min(_MAX_THREADS, _usable_cpus())
        sizes = ", ".join(f"{name} {path.stat().st_size / 1e6:.0f} MB" for name, path in paths.items())
        print(f"# {args.rows:,} positions; maps {sizes} (memory-mapped); lookups on {threads} thread(s), "
              f"baselines on one; best of {args.repeat}")
        print(f"{'case':40s} {'seconds':>8s} {'rows/s':>12s} {'ratio':>6s} {'target':>7s} "
              f"{'CPU s':>7s} {'CPU ratio':>9s}")
        best = {}
        for name, func, against, target in rows:
            best[name] = seconds, cpu = _best(func, args.repeat)
            ratio = f"{seconds / best[against][0]:6.2f}" if against else f"{'':6s}"
            cpu_ratio = f"{cpu / best[against][1]:9.2f}" if against else ""
            goal = f"<= {target:g}" if target else ""
            print(f"{name:40s} {seconds:8.2f} {args.rows / seconds:12,.0f} {ratio} {goal:>7s} "
                  f"{cpu:7.2f} {cpu_ratio:>9s}")
        seconds, cpu = _best(lambda: maps["3d"].lookup(lon[:few], lat[:few], "galactic", distance=samples,
                                                       return_error=True), args.repeat)
        print(f"{'3D lookup, 16-node distributions':40s} {seconds:8.2f} {few / seconds:12,.0f} {'':14s} {cpu:7.2f}"
              f"  (on {few:,} positions; mean and standard deviation)")
        print("ratio: the case's best wall-clock time over its baseline's (the line it names in the docstring); "
              "CPU ratio: the same in CPU time (work done, whatever else runs on the machine)")


if __name__ == "__main__":
    main()
