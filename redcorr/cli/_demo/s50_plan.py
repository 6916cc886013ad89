"""Demo section: plan exposures of a Brume Field star behind the Brume Cloud."""

from redcorr.cli._common import print_table
from redcorr.exposure import CAUTION, plan_exposure, time_vs_av
from redcorr.io import load_curve
from redcorr.io._toml import load_toml
from redcorr.io.instrument import load_instrument
from redcorr.io.spectra import load_sed


def section(scn, demo_dir):
    cloud = scn["cloud"]
    target = load_toml(demo_dir / "plan_target.toml", what="demo planning target")["target"]
    instrument = load_instrument(demo_dir / "instrument.toml")
    curve = load_curve(cloud["law"], r_v=cloud["r_v"])
    sed = load_sed(target["sed"])
    mag_band = instrument.channel(target["mag_band"]).band
    bands = instrument.band_names
    common = dict(curve=curve, sed=sed, mag_band=mag_band)
    plans = plan_exposure(instrument, bands, target["mag"], a_v=target["a_v"], snr=target["snr"], **common)

    print(f"## Exposure planning: {target['name']} behind the {cloud['name']}")
    print(
        f"{instrument.name}; {target['mag_band']} = {target['mag']:g} AB without dust, SED {sed.name}; "
        f"A_V = {target['a_v']:g} ({curve.name}, R_V = {curve.r_v:g}); goal S/N {target['snr']:g}."
    )
    rows = [
        {
            "band": p.band,
            "mag": p.mag,
            "A_band": p.A_band,
            "t_clear_s": p.t_clear_s,
            "t_dust_s": p.t_dust_s,
            "time_factor": p.time_factor,
            "limiting_mag": p.limiting_mag,
            "noise": p.noise,
        }
        for p in plans
    ]
    print_table(rows, list(rows[0]), formats={"mag": ".2f", "A_band": ".2f", "t_clear_s": ".1f",
                                             "t_dust_s": ".1f", "time_factor": ".2f", "limiting_mag": ".2f"})
    best, worst = plans[0], plans[-1]
    print(
        f"Best use of the night: {best.band} ({best.t_dust_s:.0f} s); the dust costs {worst.band} a factor "
        f"{worst.time_factor:.0f} in time."
    )
    grid, times, _ = time_vs_av(instrument, bands, target["mag"], a_v=target["a_v_grid"], snr=target["snr"],
                                **common)
    print(f"Time (s) to reach S/N {target['snr']:g} as the cloud thickens:")
    av_rows = [{"A_V": float(a), **{b: float(times[b][i]) for b in bands}} for i, a in enumerate(grid)]
    print_table(av_rows, ["A_V", *bands], formats={"A_V": ".1f", **{b: ".4g" for b in bands}})
    print(CAUTION)
