"""Speed of dust-map lookups: rows per second against the bare astropy-healpix index computation.

Writes a full-sky NSIDE 1024 HEALPix map (RING, galactic, float32, ~50 MB) to a
temporary folder, opens it memory-mapped with redcorr, and times for the same
random positions, in the same run:

* baseline: ``astropy_healpix.lonlat_to_healpix`` alone (pixel index only);
* ``ReddeningMap.lookup`` nearest-pixel, positions in the map's frame (target <= 2x);
* ``ReddeningMap.lookup`` bilinear (the default), positions in the map's frame;
* ``ReddeningMap.lookup`` bilinear, positions in ICRS (adds the frame transformation);
* for reference, ``astropy_healpix.bilinear_interpolation_weights`` alone, the
  floor of any bilinear lookup that uses astropy-healpix.

Both sides work through the positions in chunks of the same size so that memory
stays modest. The baseline runs in one thread, as the library call does; a
lookup samples up to ``redcorr.maps._base._MAX_THREADS`` chunks at once on as many
usable CPUs (the count is printed), so its ratio shrinks with the CPUs.
Usage: ``python benchmarks/bench_maps.py [--rows N] [--nside N]``.
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
from redcorr.maps import parse_frame, transform_lonlat  # noqa: E402
from redcorr.maps._base import _CHUNK, _MAX_THREADS, _usable_cpus  # noqa: E402


def _write_map(path, nside):
    npix = 12 * nside**2
    values = np.empty(npix, dtype=np.float32)
    step = 1 << 22
    for start in range(0, npix, step):  # a smooth pattern, written without holding float64 copies
        lon, lat = astropy_healpix.healpix_to_lonlat(np.arange(start, min(start + step, npix)), nside)
        values[start : start + step] = 0.05 + 0.5 * np.exp(-np.abs(np.sin(lat.to_value(u.rad))) * 8) * (
            1 + 0.3 * np.cos(lon.to_value(u.rad))
        )
    table = fits.BinTableHDU.from_columns([fits.Column(name="EBV", format="1024E", array=values.reshape(-1, 1024))])
    for key, value in {"PIXTYPE": "HEALPIX", "ORDERING": "RING", "COORDSYS": "G", "NSIDE": nside}.items():
        table.header[key] = value
    fits.HDUList([fits.PrimaryHDU(), table]).writeto(path)


def _time(func):
    start = time.perf_counter()
    func()
    return time.perf_counter() - start


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=10_000_000)
    parser.add_argument("--nside", type=int, default=1024)
    args = parser.parse_args(argv)
    rng = np.random.default_rng(12345)
    lon = rng.uniform(0, 360, args.rows)
    lat = np.degrees(np.arcsin(rng.uniform(-1, 1, args.rows)))
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench_map.fits"
        _write_map(path, args.nside)
        dust_map = open_map(path)
        ra, dec = transform_lonlat(lon, lat, parse_frame("galactic"), parse_frame("icrs"))

        def baseline():
            for start in range(0, args.rows, _CHUNK):
                part = slice(start, start + _CHUNK)
                astropy_healpix.lonlat_to_healpix(
                    u.Quantity(lon[part], u.deg, copy=False), u.Quantity(lat[part], u.deg, copy=False), args.nside
                )

        def weights_only():
            for start in range(0, args.rows, _CHUNK):
                part = slice(start, start + _CHUNK)
                astropy_healpix.bilinear_interpolation_weights(
                    u.Quantity(lon[part], u.deg, copy=False), u.Quantity(lat[part], u.deg, copy=False), args.nside
                )

        cases = [
            ("bare bilinear_interpolation_weights", weights_only),
            ("lookup nearest, galactic in", lambda: dust_map.lookup(lon, lat, "galactic", "nearest")),
            ("lookup bilinear, galactic in", lambda: dust_map.lookup(lon, lat, "galactic", "bilinear")),
            ("lookup bilinear, ICRS in", lambda: dust_map.lookup(ra, dec, "icrs", "bilinear")),
        ]
        base = _time(baseline)
        threads = min(_MAX_THREADS, _usable_cpus())
        print(f"# {args.rows:,} positions, NSIDE {args.nside} RING map ({path.stat().st_size / 1e6:.0f} MB, "
              f"memory-mapped); lookups on {threads} thread(s), baseline and bare weights on one")
        print(f"{'case':36s} {'seconds':>8s} {'rows/s':>12s} {'x baseline':>10s}")
        print(f"{'baseline: lonlat_to_healpix':36s} {base:8.2f} {args.rows / base:12,.0f} {1.0:10.2f}")
        for name, func in cases:
            seconds = _time(func)
            print(f"{name:36s} {seconds:8.2f} {args.rows / seconds:12,.0f} {seconds / base:10.2f}")
        print("target: lookup <= 2x baseline; a bilinear lookup costs at least the bare weights line "
              "divided by the threads")


if __name__ == "__main__":
    main()
