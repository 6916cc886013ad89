"""Demo section: plan the night's whole Brume Field target list behind the dust, to each target's distance."""

import textwrap

import numpy as np

from redcorr._format import human_time
from redcorr.cli._common import print_table
from redcorr.exposure import CAUTION
from redcorr.io import load_curve
from redcorr.io.instrument import load_instrument
from redcorr.io.maps import open_map
from redcorr.io.targets import read_targets
from redcorr.target_plan import TARGET_FLAGS, plan_targets

SNR = 50.0
"""The S/N wanted for every target (the demo's choice)."""

MAX_TIME = 3600.0
"""The longest exposure the night allows, s (the demo's choice)."""


def _say(text):
    print(textwrap.fill(text, 100))


def _flag_names(bits):
    return ", ".join(name for name, bit in TARGET_FLAGS.items() if bits & bit) or "-"


def section(scn, demo_dir):
    cloud = scn["cloud"]
    instrument = load_instrument(demo_dir / "instrument.toml")
    curve = load_curve(cloud["law"], r_v=cloud["r_v"])
    dust_map = open_map(demo_dir / "brume_ebv_3d.fits")
    targets = read_targets(demo_dir / "brume_targets.csv", instrument, curve=curve, reddening={"dust_map": dust_map})
    plan = plan_targets(instrument, instrument.band_names, targets.mag, mag_band=targets.mag_band,
                        sed=targets.sed, a_v=targets.a_v, curve=curve, snr=SNR, max_time=MAX_TIME,
                        flags=targets.flags, names=targets.names)
    summary = plan.summary()

    print(f"## A night's target list: {len(plan.names)} {scn['field']['name']} targets behind the {cloud['name']}")
    _say(
        f"{instrument.name}; goal S/N {SNR:g} in at most {MAX_TIME:g} s per exposure; A_V from the invented "
        f"distance-resolved map to each target's parallax distance ({curve.name}, R_V = {curve.r_v:g}). "
        "Spectral types are planned as blackbodies of their T_eff. 'best' is the cheapest band within the "
        "limit; a target with none shows its fastest band's time."
    )
    rows = []
    for i, name in enumerate(plan.names):
        j = int(plan.best[i])
        t = plan.t_dust_s[i]
        k = j if j >= 0 else int(np.argmin(np.where(np.isfinite(t), t, np.inf)))  # the fastest band, over the limit
        rows.append({
            "target": str(name),
            "sed": targets.sed_specs[i],
            "A_V": float(plan.a_v[i]),
            "best": plan.bands[j] if j >= 0 else "-",
            "t_dust_s": float(t[k]),
            "factor": float(plan.time_factor[i, k]),
            "flags": _flag_names(int(plan.flags[i, k])),
        })
    print_table(rows, list(rows[0]), formats={"A_V": ".2f", "t_dust_s": ".0f", "factor": ".1f"},
                wrap={"flags": 30})
    print("Time per band over the targets it can take within the limit:")
    print_table([{"band": b, "targets": v["targets"], "total_s": v["total_s"],
                  "cheapest_for": summary["best_counts"][b]} for b, v in summary["bands"].items()],
                ["band", "targets", "total_s", "cheapest_for"], formats={"total_s": ".0f"})
    total = summary["best_total_s"]
    print(f"Each target in its cheapest band: {total:.0f} s ({human_time(total)}) in all.")
    if summary["missed"]:
        _say(f"Beyond {MAX_TIME:g} s in every band: {', '.join(summary['missed'])}.")
    if summary["no_plan"]:
        _say(f"No plan (no parallax, so no distance into the 3D map): {', '.join(summary['no_plan'])}; "
             "the 2D map (--map demo/brume_av_map.toml) gives them the whole column.")
    print("The same from the command line, one row per target and band written to a file:")
    print("  redcorr plan --instrument demo --targets demo/brume_targets.csv \\")
    print("      --map demo/brume_ebv_3d.fits \\")
    print(f"      --law {curve.name} --rv {curve.r_v:g} --snr {SNR:g} --max-time {MAX_TIME:g} -o plan.csv")
    print(CAUTION)

