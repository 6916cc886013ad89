"""Write the invented far-infrared optical-depth map of the Brume Cloud, as its (fictional) observers derived it.

Everything here is invented for the demo: the Brume Cloud does not exist.
The dust is that of demo/make_map.py (the same A_V pattern, ``brume_av``),
with absorption optical depth at 250 µm τ_250 = TAU_PER_AV · A_V, and its
temperature varies across the cloud and along each sight line:

* the background column (``brume_av`` less its filament and core) is half a
  warm skin, lit by an invented star to the north-east (T_SKIN_SW = 16 K on
  the south-west side up to T_SKIN_NE = 26 K on the north-east side), and
  half a cooler interior at T_INTERIOR = 14 K;
* the filament is at T_FILAMENT = 12 K and the core at T_CORE = 9 K.

Each part emits as an optically thin modified blackbody, I_ν = τ_250
(λ/250 µm)^-β B_ν(T) with β = BETA. The observers had two bands, 250 and
500 µm; they fitted one temperature per pixel (β fixed at 2) to the ratio
of the two and divided the 250 µm intensity by B_ν at that temperature.
The map written holds that τ_250: too low wherever warm and cold dust share
a sight line, most on the cold core behind its warm envelope and on the
warm side, where the skin outshines the interior. It is the honest
caution of ``redcorr emission-map``: one temperature per sight line, then
one ratio, carry such errors straight into the reddening. The same small
masked disc as the A_V map stands for a bright-star artefact. The script is
deterministic: running it again gives a byte-identical file.

Output (in the folder given, default: this folder)
--------------------------------------------------
brume_tau250_zea.fits
    HDU 0: τ_250 as the observers derived it, on the 121 x 121 zenithal
    equal-area grid of brume_av_zea.fits (ICRS, 0.01 deg pixels); masked
    pixels are NaN. HDU 1 (TDUST): the temperature they fitted, K.

Usage: ``python demo/make_emission_map.py [OUTDIR]``
"""

import sys
from pathlib import Path

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this checkout's redcorr
from make_map import DEC0, RA0, _masked, brume_av, zea_image  # noqa: E402  (the same invented sky)

from redcorr.io import atomic_path  # noqa: E402

WAVE_UM = 250.0  # the map's wavelength
WAVE2_UM = 500.0  # the observers' second band
TAU_PER_AV = 1.36e-4  # tau_250/A_V of demo/brume_grains.toml (redcorr.grains.emission.optical_depth_ratios), rounded
BETA = 2.0  # emissivity index of the invented dust, and the one the observers assumed
T_SKIN_SW, T_SKIN_NE = 16.0, 26.0  # K: the background's lit skin, south-west and north-east sides
T_INTERIOR = 14.0  # K: the background's interior
T_FILAMENT = 12.0  # K
T_CORE = 9.0  # K
HC_OVER_K_UM_K = 14387.77  # hc/k in µm K (CODATA 2018: h c / k = 1.438777e-2 m K)


def parts(ra_deg, dec_deg):
    """(A_V, T) of each part of the invented sight lines: [skin, interior, filament, core]."""
    total = brume_av(ra_deg, dec_deg)
    dx = (np.asarray(ra_deg) - RA0) * np.cos(np.radians(DEC0))
    dy = np.asarray(dec_deg) - DEC0
    filament = 0.7 * np.exp(-0.5 * ((dy - 0.4 * dx + 0.05) / 0.07) ** 2)  # as in demo/make_map.py
    core = 2.75 * np.exp(-0.5 * ((dx - 0.12) ** 2 + (dy + 0.02) ** 2) / 0.06**2)
    background = total - filament - core
    lit = 1.0 / (1.0 + np.exp(-(dx + dy) / 0.2))  # 0 to the south-west, 1 to the north-east
    t_skin = T_SKIN_SW + (T_SKIN_NE - T_SKIN_SW) * lit
    ones = np.ones_like(total)
    return [
        (0.5 * background, t_skin),
        (0.5 * background, T_INTERIOR * ones),
        (filament, T_FILAMENT * ones),
        (core, T_CORE * ones),
    ]


def planck_nu(wave_um, t_k):
    """B_ν(T) up to a constant factor (ν³/(exp(hν/kT) − 1), with ν in 1/µm)."""
    nu = 1.0 / wave_um
    return nu**3 / np.expm1(HC_OVER_K_UM_K * nu / t_k)


def intensity(wave_um, ra_deg, dec_deg):
    """I_ν at ``wave_um`` (arbitrary units) of the invented, optically thin sight lines."""
    return sum(
        TAU_PER_AV * a_v * (wave_um / WAVE_UM) ** -BETA * planck_nu(wave_um, t) for a_v, t in parts(ra_deg, dec_deg)
    )


def fitted(ra_deg, dec_deg):
    """The observers' (T, tau_250): one modified blackbody (β = BETA) through the 250 and 500 µm intensities.

    The ratio I_250/I_500 grows with T; it is solved for T by bisection on 3-100 K.
    """
    i1, i2 = intensity(WAVE_UM, ra_deg, dec_deg), intensity(WAVE2_UM, ra_deg, dec_deg)
    target = i1 / i2

    def ratio(t):
        return (WAVE2_UM / WAVE_UM) ** BETA * planck_nu(WAVE_UM, t) / planck_nu(WAVE2_UM, t)

    lo, hi = np.full_like(target, 3.0), np.full_like(target, 100.0)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        low = ratio(mid) < target
        lo, hi = np.where(low, mid, lo), np.where(low, hi, mid)
    t_fit = 0.5 * (lo + hi)
    return t_fit, i1 / planck_nu(WAVE_UM, t_fit)


def tau_image():
    grid = zea_image()[0]  # the A_V map's grid and WCS
    header = grid.header.copy()
    n = grid.data.shape[0]
    wcs = WCS(header)
    y, x = np.mgrid[0:n, 0:n]
    ra, dec = wcs.pixel_to_world_values(x, y)
    t_fit, tau = fitted(ra, dec)
    masked = _masked(ra, dec)
    tau = tau.astype(np.float32)
    tau[masked] = np.nan
    t_fit = t_fit.astype(np.float32)
    t_fit[masked] = np.nan
    header["BUNIT"] = ""
    del header["COMMENT"]
    header["COMMENT"] = "Invented 250 um optical depth of the Brume Cloud (redcorr demo); not real data."
    header["COMMENT"] = "Derived as its fictional observers did: one temperature per pixel fitted to"
    header["COMMENT"] = "250/500 um intensities (beta 2), by demo/make_emission_map.py."
    header["WAVELEN"] = (WAVE_UM, "[um] wavelength of the optical depth")
    t_header = wcs.to_header()
    t_header["BUNIT"] = "K"
    t_header["COMMENT"] = "The temperature the fictional observers fitted (invented)."
    return fits.HDUList([fits.PrimaryHDU(tau, header=header), fits.ImageHDU(t_fit, header=t_header, name="TDUST")])


def main(out_dir):
    path = Path(out_dir) / "brume_tau250_zea.fits"
    with atomic_path(path) as tmp:
        tau_image().writeto(tmp, overwrite=True)
    print(f"wrote {path}")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else Path(__file__).resolve().parent)
