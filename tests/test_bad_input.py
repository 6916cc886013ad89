"""Bad input on the command line, for every command: refused cleanly and at once.

Each case runs ``redcorr.cli.main`` in-process and checks that the command

* exits with status 2, the usage-error status (common practice, no source);
* writes one line on stderr (argparse's usage lines aside), which names what
  is wrong: the argument and/or the value, as listed with the case;
* shows no traceback, no warning and no numpy repr (``array(...)``);
* leaves no file behind and every input file byte-identical.

The catalog readers' own checks are in ``tests/test_catalog_bad_input.py``;
here ``correct`` is fed bad options only. Arguments are chosen so that no
case computes a grain model or a large grid: the whole file runs in seconds.
"""

import hashlib
import shlex
import shutil

import pytest
from _synthetic_maps import healpix_values, write_healpix
from catalog_helpers import intrinsic

from redcorr.cli import main

PLAN = "plan --instrument demo --mag 19 --av 2"
COEFFS = "coeffs --sed flat --band kw-v --law ccm89"
CURVE = "curve ccm89"
EBV = "ebv --map m.fits"
CORRECT = "correct in.csv out.csv --band kw-b --band kw-v"
CORRECT_EBV = CORRECT + " --ebv 0.1"
MIE = "mie --m 1.5"

# (arguments, strings the error line must contain)
CASES = [
    # plan: the goal
    (f"{PLAN} --time 0", ["--time", "'0'", "> 0"]),
    (f"{PLAN} --time -5", ["--time", "'-5'", "> 0"]),
    (f"{PLAN} --time nan", ["--time", "'nan'", "finite"]),
    (f"{PLAN} --time inf", ["--time", "'inf'", "finite"]),
    (f"{PLAN} --time x", ["--time", "'x'", "not a number"]),
    (f"{PLAN} --snr 0", ["--snr", "'0'", "> 0"]),
    (f"{PLAN} --snr -1", ["--snr", "'-1'", "> 0"]),
    (f"{PLAN} --snr nan", ["--snr", "'nan'"]),
    (f"{PLAN} --snr 10 --time 5", ["--time", "--snr"]),
    (PLAN, ["--snr", "--time", "required"]),
    (f"{PLAN} --snr 10 --limit-snr 0", ["--limit-snr", "'0'", "> 0"]),
    # plan: inputs beyond one exposure of a point source (bounds in redcorr.exposure; they would overflow)
    (f"{PLAN} --snr 1e300", ["snr=1e+300", "at most 1e+06"]),
    (f"{PLAN} --snr 2e6", ["snr=2e+06", "at most 1e+06"]),
    (f"{PLAN} --snr 10 --limit-snr 1e300", ["limit_snr=1e+300", "at most 1e+06"]),
    (f"{PLAN} --time 10 --limit-snr 1e200", ["limit_snr=1e+200", "at most 1e+06"]),
    (f"{PLAN} --time 1e300", ["time=1e+300 s", "at most 1e+06 s"]),
    (f"{PLAN} --time 1.1e6", ["time=1.1e+06 s", "at most 1e+06 s"]),
    ("plan --instrument demo --mag=-1e300 --av 2 --time 10", ["mag=-1e+300", "no brighter than AB -30"]),
    ("plan --instrument demo --mag=-31 --av 2 --snr 10", ["mag=-31", "no brighter than AB -30"]),
    ("plan --instrument demo --mag=-1e300 --mag-band kw-v --av 2 --snr 10", ["mag=-1e+300", "AB -30"]),
    ("plan --instrument demo --mag 1e300 --av 2 --snr 10", ["snr=10", "source AB 1e+300"]),
    ("plan --instrument demo --mag 19 --av 1e300 --snr 10", ["snr=10", "A_band 9.35e+299 mag"]),
    (f"{PLAN} --snr 10 --limit-snr -3", ["--limit-snr", "'-3'"]),
    # plan: the source and the dust
    ("plan --instrument demo --mag x --av 2 --snr 10", ["--mag", "'x'"]),
    ("plan --instrument demo --mag inf --av 2 --snr 10", ["--mag", "'inf'"]),
    ("plan --instrument demo --av 2 --snr 10", ["--mag", "--calibrated"]),
    ("plan --instrument demo --mag 19 --av -2 --snr 10", ["a_v", "-2", "[0, inf]"]),
    ("plan --instrument demo --mag 19 --ebv -2 --snr 10", ["--ebv", "-2", ">= 0"]),
    ("plan --instrument demo --mag 19 --av nan --snr 10", ["--av", "'nan'"]),
    ("plan --instrument demo --mag 19 --av 2 --ebv 1 --snr 10", ["--ebv", "--av"]),
    ("plan --instrument demo --mag 19 --snr 10", ["--av", "--ebv", "required"]),
    (f"{PLAN} --snr 10 --av-grid -1 2", ["a_v", ">= 0; found -1"]),
    (f"{PLAN} --snr 10 --av-grid x", ["--av-grid", "'x'"]),
    (f"{PLAN} --snr 10 --av-grid nan", ["--av-grid", "'nan'"]),
    (f"{PLAN} --snr 10 --mag-band kw-v --calibrated", ["--calibrated", "--mag"]),
    (f"{PLAN} --snr 10 --law zz", ["law='zz'", "choose from"]),
    (f"{PLAN} --snr 10 --law ''", ["law=''"]),
    (f"{PLAN} --snr 10 --law ccm", ["law='ccm'", "did you mean 'ccm89'"]),
    (f"{PLAN} --snr 10 --rv 0", ["r_v=0.0", "[1.8, 6]"]),
    (f"{PLAN} --snr 10 --rv 100", ["r_v=100.0", "[1.8, 6]"]),
    (f"{PLAN} --snr 10 --rv inf", ["--rv", "'inf'"]),
    (f"{PLAN} --snr 10 --grain zz", ["'zz'", "not known"]),
    (f"{PLAN} --snr 10 --grain mrn77 --rv 3", ["--rv", "grain"]),
    (f"{PLAN} --snr 10 --grain mrn77 --law ccm89", ["--law", "--grain"]),
    (f"{PLAN} --snr 10 --sed blackbody:0", ["sed='blackbody:0'", "temperature=0.0", "> 0"]),
    (f"{PLAN} --snr 10 --sed blackbody:-1", ["sed='blackbody:-1'", "> 0"]),
    (f"{PLAN} --snr 10 --sed blackbody:x", ["sed='blackbody:x'", "not a number"]),
    (f"{PLAN} --snr 10 --sed blackbody:nan", ["sed='blackbody:nan'", "finite"]),
    (f"{PLAN} --snr 10 --sed blackbody", ["sed='blackbody'", "temperature"]),
    (f"{PLAN} --snr 10 --sed powerlaw:x", ["sed='powerlaw:x'", "alpha"]),
    (f"{PLAN} --snr 10 --sed powerlaw:inf", ["sed='powerlaw:inf'", "finite"]),
    (f"{PLAN} --snr 10 --sed powerlaw:1e6", ["sed='powerlaw:1e6'", "[-50, 50]"]),
    (f"{PLAN} --snr 10 --sed zz", ["sed='zz'", "blackbody:T"]),
    (f"{PLAN} --snr 10 --sed ''", ["sed=''", "blackbody:T"]),
    (f"{PLAN} --snr 10 --sed file:nope.ecsv", ["'nope.ecsv'", "does not exist"]),
    (f"{PLAN} --snr 10 --sed file:adir", ["'adir'", "folder"]),
    (f"{PLAN} --snr 10 --sed file:empty.txt", ["'empty.txt'", ".ecsv"]),
    (f"{PLAN} --snr 10 --sed file:in.csv", ["'in.csv'", "wavelength_um"]),
    ("plan --instrument demo --calibrated --av 2 --snr 10", ["--calibrated", "--sed='flat'"]),
    (f"{PLAN} --snr 10 --mag-band zz", ["band='zz'", "not known"]),
    (f"{PLAN} --snr 10 --mag-band tophat:0.55:-0.1", ["band='tophat:0.55:-0.1'", "width_um=-0.1", "> 0"]),
    # plan: the instrument, bands and output files
    (f"{PLAN} --snr 10 --band zz", ["band='zz'", "'kw-v'"]),
    (f"{PLAN} --snr 10 --band ''", ["band=''", "'kw-v'"]),
    ("plan --instrument nope.toml --mag 19 --av 2 --snr 10", ["'nope.toml'", "does not exist"]),
    ("plan --instrument adir --mag 19 --av 2 --snr 10", ["'adir'", "folder"]),
    ("plan --instrument '' --mag 19 --av 2 --snr 10", ["instrument", "empty"]),
    ("plan --instrument empty.txt --mag 19 --av 2 --snr 10", ["'empty.txt'", "aperture_m"]),
    ("plan --mag 19 --av 2 --snr 10", ["--instrument", "required"]),
    (f"{PLAN} --snr 10 --plot nodir/x.png", ["--plot='nodir/x.png'", "folder 'nodir' does not exist"]),
    (f"{PLAN} --snr 10 --plot adir", ["--plot='adir'", "folder"]),
    (f"{PLAN} --snr 10 --plot ''", ["--plot=''", "empty"]),
    (f"{PLAN} --snr 10 --av-plot nodir/x.png", ["--av-plot='nodir/x.png'", "does not exist"]),
    (f"{PLAN} --snr 10 --av-plot adir", ["--av-plot='adir'", "folder"]),
    (f"{PLAN} --snr 10 --bogus", ["--bogus"]),
    # curve
    (f"{CURVE} --wave 0", ["--wave=0", "> 0"]),
    (f"{CURVE} --wave -1", ["--wave=-1", "> 0"]),
    (f"{CURVE} --wave 0 --unit 1/um", ["--wave=0 1/um", "> 0"]),
    (f"{CURVE} --wave 0.5 0", ["--wave=0", "> 0"]),
    (f"{CURVE} --wave nan", ["--wave", "'nan'", "finite"]),
    (f"{CURVE} --wave inf", ["--wave", "'inf'"]),
    (f"{CURVE} --wave x", ["--wave", "'x'", "not a number"]),
    (f"{CURVE} --wave ''", ["--wave", "''"]),
    (f"{CURVE} --wave 100", ["wave=100", "[0.1, 3.33333]", "--extrapolate"]),
    (f"{CURVE} --wave 5000 --unit AA --rv 0", ["r_v=0.0", "[2.1, 6.1]"]),
    (f"{CURVE} --wave 0.5 --rv -1", ["r_v=-1.0", "[2.1, 6.1]"]),
    (f"{CURVE} --wave 0.5 --rv 50", ["r_v=50.0"]),
    (f"{CURVE} --wave 0.5 --rv x", ["--rv", "'x'"]),
    (f"{CURVE} --wave 0.5 --unit pc", ["--unit", "'pc'", "'um'"]),
    ("curve zz --wave 0.5", ["law='zz'", "choose from"]),
    ("curve ccm --wave 0.5", ["law='ccm'", "did you mean 'ccm89'"]),
    ("curve '' --wave 0.5", ["LAW", "missing"]),
    ("curve --wave 0.5", ["LAW", "missing"]),
    (CURVE, ["--wave", "missing"]),
    ("curve file:nope.ecsv --wave 0.5", ["'nope.ecsv'", "does not exist"]),
    ("curve file:adir --wave 0.5", ["'adir'", "folder"]),
    ("curve file: --wave 0.5", ["curve file ''", "empty"]),
    ("curve file:empty.txt --wave 0.5", ["'empty.txt'", "A_over_AV"]),
    ("curve file:in.csv --wave 0.5", ["'in.csv'", "A_over_AV"]),
    ("curve grain:nope.toml --wave 0.5", ["'nope.toml'", "does not exist"]),
    ("curve grain:adir --wave 0.5", ["'adir'", "folder"]),
    ("curve calzetti00 --wave 0.5 --rv 9", ["r_v=9.0"]),
    (f"{CURVE} --wave 0.5 --plot nodir/x.png", ["--plot='nodir/x.png'", "folder 'nodir' does not exist"]),
    (f"{CURVE} --wave 0.5 --plot adir", ["--plot='adir'", "folder"]),
    (f"{CURVE} --wave 0.5 --plot ''", ["--plot=''", "empty"]),
    (f"{CURVE} --wave 0.5 --plot ' '", ["--plot=' '", "empty"]),
    (f"{CURVE} --wave 1e999", ["--wave", "'1e999'", "finite"]),
    (f"{CURVE} --wave 1e-320", ["wave=1e-320", "not a positive wavelength"]),
    (f"{CURVE} --wave 1e300 --unit 1/um", ["wave=1e-300", "--extrapolate"]),
    (f"{CURVE} --wave 0.5 --rv ''", ["--rv", "''", "not a number"]),
    ("curve --list zz", ["--list", "LAW='zz'"]),
    ("curve ccm89 --wave 0.5 --list", ["--list", "LAW='ccm89'", "--wave"]),
    # bands and band specs
    ("bands zz", ["band='zz'", "not known"]),
    ("bands ''", ["band=''", "empty"]),
    ("bands ' '", ["band=''", "empty"]),
    ("bands kw-v zz", ["band='zz'"]),
    ("bands kw-vv", ["band='kw-vv'", "did you mean", "'kw-v'"]),
    ("bands tophat:0.55:-0.1", ["band='tophat:0.55:-0.1'", "width_um=-0.1", "> 0"]),
    ("bands tophat:0.55:2", ["band='tophat:0.55:2'", "width_um=2", "twice centre_um=0.55"]),
    ("bands tophat:0:0.1", ["band='tophat:0:0.1'", "centre_um=0.0", "> 0"]),
    ("bands tophat:-1:0.1", ["band='tophat:-1:0.1'", "centre_um=-1.0"]),
    ("bands tophat:x:0.1", ["band='tophat:x:0.1'", "'x'", "not a number"]),
    ("bands tophat:0.55", ["band='tophat:0.55'", "tophat:CENTRE_UM:WIDTH_UM"]),
    ("bands tophat:0.55:0.1:3", ["band='tophat:0.55:0.1:3'", "tophat:CENTRE_UM:WIDTH_UM"]),
    ("bands tophat:", ["band='tophat:'", "tophat:CENTRE_UM:WIDTH_UM"]),
    ("bands tophat:nan:0.1", ["band='tophat:nan:0.1'", "finite"]),
    ("bands tophat:0.55:inf", ["band='tophat:0.55:inf'", "finite"]),
    ("bands gauss:0.55:0.5", ["band='gauss:0.55:0.5'", "fwhm_um=0.5", "< 0.1375"]),
    ("bands gauss:0.55:0", ["band='gauss:0.55:0'", "fwhm_um=0.0", "> 0"]),
    ("bands gauss:0.55:-1", ["band='gauss:0.55:-1'", "fwhm_um=-1.0"]),
    ("bands gauss:0.55", ["band='gauss:0.55'", "gauss:CENTRE_UM:FWHM_UM"]),
    ("bands file:nope.csv", ["'nope.csv'", "does not exist"]),
    ("bands file:adir", ["'adir'", "folder"]),
    ("bands file:", ["filter file ''", "empty"]),
    ("bands file:empty.txt", ["'empty.txt'", "no numbers"]),
    ("bands file:in.csv", ["'in.csv'", "'response'"]),
    ("bands kw-v*zz", ["band='zz'", "not known"]),
    ("bands kw-v*", ["band='kw-v*'", "'*'"]),
    ("bands '*kw-v'", ["band='*kw-v'", "'*'"]),
    ("bands --list zz", ["--list", "'zz'"]),
    ("bands gauss:1e300:1", ["band 'gauss:1e300:1'", "outside [0.0001, 100000] µm"]),
    ("bands tophat:1e300:1", ["band 'tophat:1e300:1'", "outside [0.0001, 100000] µm"]),
    ("bands tophat:1e-300:1e-301", ["band 'tophat:1e-300:1e-301'", "outside [0.0001, 100000] µm"]),
    ("bands", ["NAME", "missing"]),
    ("bands --bogus", ["--bogus"]),
    # coeffs
    (f"{COEFFS} --av 1 --law zz", ["law='zz'"]),
    ("coeffs --sed flat --band kw-v --av 1 --law ''", ["law=''"]),
    ("coeffs --sed flat --band kw-v --av 1 --grain zz", ["'zz'", "not known"]),
    (f"{COEFFS} --av 1 --grain mrn77", ["--grain", "--law"]),
    ("coeffs --sed flat --band kw-v --av 1 --grain mrn77 --rv 3", ["--rv", "--grain"]),
    ("coeffs --sed flat --band kw-v --av 1", ["--law", "--grain", "required"]),
    (f"{COEFFS} --av -1", ["A_V=-1", ">= 0"]),
    (f"{COEFFS} --ebv -1", ["--ebv", ">= 0"]),
    (f"{COEFFS} --av nan", ["--av", "'nan'"]),
    (f"{COEFFS} --av x", ["--av", "'x'"]),
    (f"{COEFFS} --av 1 --ebv 1", ["--ebv", "--av"]),
    (COEFFS, ["--av", "--ebv", "required"]),
    (f"{COEFFS} --av 1 --rv 0", ["r_v=0.0", "[2.1, 6.1]"]),
    (f"{COEFFS} --av 1 --rv inf", ["--rv", "'inf'"]),
    ("coeffs --sed flat --band zz --av 1 --law ccm89", ["band='zz'"]),
    ("coeffs --sed flat --band '' --av 1 --law ccm89", ["band=''", "empty"]),
    ("coeffs --sed flat --band tophat:0.55:-0.1 --av 1 --law ccm89", ["band='tophat:0.55:-0.1'", "width_um=-0.1"]),
    ("coeffs --sed flat --band tophat:20:1 --av 1 --law ccm89", ["'tophat:20:1'", "--extrapolate"]),
    ("coeffs --sed flat --av 1 --law ccm89", ["--band", "required"]),
    ("coeffs --band kw-v --av 1 --law ccm89", ["--sed", "required"]),
    ("coeffs --sed blackbody:0 --band kw-v --av 1 --law ccm89", ["sed='blackbody:0'", "> 0"]),
    ("coeffs --sed blackbody: --band kw-v --av 1 --law ccm89", ["sed='blackbody:'", "not a number"]),
    ("coeffs --sed powerlaw:1e6 --band kw-v --av 1 --law ccm89", ["sed='powerlaw:1e6'", "[-50, 50]"]),
    ("coeffs --sed powerlaw:-1e6 --band kw-v --av 1 --law ccm89", ["sed='powerlaw:-1e6'", "[-50, 50]"]),
    ("coeffs --sed zz --band kw-v --av 1 --law ccm89", ["sed='zz'"]),
    ("coeffs --sed blackbody:1e-300 --band kw-v --av 1 --law ccm89", ["'blackbody:1e-300'", "no signal"]),
    ("coeffs --sed file:adir --band kw-v --av 1 --law ccm89", ["'adir'", "folder"]),
    ("coeffs --sed file: --band kw-v --av 1 --law ccm89", ["spectrum file ''", "empty"]),
    ("coeffs --sed file:nope.ecsv --band kw-v --av 1 --law ccm89", ["'nope.ecsv'", "does not exist"]),
    ("coeffs --sed file:empty.txt --band kw-v --av 1 --law ccm89", ["'empty.txt'", ".ecsv"]),
    (f"{COEFFS} --av 1 --law file:nope.csv", ["'nope.csv'", "does not exist"]),
    (f"{COEFFS} --av 1 --grid nodir/g.ecsv", ["--grid='nodir/g.ecsv'", "folder 'nodir' does not exist"]),
    (f"{COEFFS} --av 1 --grid adir", ["--grid='adir'", "folder"]),
    (f"{COEFFS} --av 1 --grid ''", ["--grid=''", "empty"]),
    (f"{COEFFS} --av 1 --plot nodir/p.png", ["--plot='nodir/p.png'", "does not exist"]),
    (f"{COEFFS} --av 1 --plot adir", ["--plot='adir'", "folder"]),
    (f"{COEFFS} --av 1 --plot ''", ["--plot=''", "empty"]),
    # mie
    ("mie --m 1.5+0.01j", ["--x", "required"]),
    ("mie --x 1", ["--m", "required"]),
    ("mie --m x --x 1", ["--m='x'", "complex"]),
    ("mie --m '' --x 1", ["--m=''", "complex"]),
    ("mie --m inf --x 1", ["--m='inf'"]),
    ("mie --m nan --x 1", ["m=(nan+0j)", "finite"]),
    ("mie --m 0 --x 1", ["m=0j", "real part > 0"]),
    ("mie --m -1.5 --x 1", ["m=(-1.5+0j)", "real part > 0"]),
    ("mie --m 1.5-0.1j --x 1", ["m=(1.5-0.1j)", "--convention n-ik"]),
    ("mie --m 1.5+0.1j --x 1 --convention n-ik", ["m=(1.5+0.1j)", "convention"]),
    (f"{MIE} --x 0", ["x=0.0", "[1e-30, 1e+06]"]),
    (f"{MIE} --x -1", ["x=-1.0", "[1e-30, 1e+06]"]),
    (f"{MIE} --x 1e9", ["x=1000000000.0", "[1e-30, 1e+06]"]),
    (f"{MIE} --x nan", ["--x", "'nan'"]),
    (f"{MIE} --x x", ["--x", "'x'"]),
    (f"{MIE} --x 1 --convention zz", ["--convention", "'zz'", "'n+ik'"]),
    (f"{MIE} --x 1e-31", ["x=1e-31", "[1e-30, 1e+06]"]),
    # grain (no model is computed: each case fails before)
    ("grain zz --wave 0.55", ["grain model='zz'", "'mrn77'"]),
    ("grain mrn7 --wave 0.55", ["grain model='mrn7'", "did you mean 'mrn77'"]),
    ("grain '' --wave 0.55", ["MODEL", "missing"]),
    ("grain --wave 0.55", ["MODEL", "missing"]),
    ("grain mrn77", ["--wave", "missing"]),
    ("grain mrn77 --wave 0", ["--wave=0", "> 0"]),
    ("grain mrn77 --wave -1", ["--wave=-1", "> 0"]),
    ("grain mrn77 --wave 0 --unit 1/um", ["--wave=0 1/um", "> 0"]),
    ("grain mrn77 --wave x", ["--wave", "'x'"]),
    ("grain mrn77 --wave nan", ["--wave", "'nan'"]),
    ("grain mrn77 --wave 0.55 --unit pc", ["--unit", "'pc'"]),
    ("grain mrn77 --wave 1e9", ["wave=1e+09", "[0.001, 1000]"]),
    ("grain grain:nope.toml --wave 0.55", ["'nope.toml'", "does not exist"]),
    ("grain grain:adir --wave 0.55", ["'adir'", "folder"]),
    ("grain grain:empty.txt --wave 0.55", ["'empty.txt'", "[[component]]"]),
    ("grain mrn77 --plot nodir/x.png", ["--plot='nodir/x.png'", "folder 'nodir' does not exist"]),
    ("grain mrn77 --plot adir", ["--plot='adir'", "folder"]),
    ("grain mrn77 --plot ''", ["--plot=''", "empty"]),
    ("grain mrn77 --wave 0.55 --plot nodir/x.png", ["--plot='nodir/x.png'"]),
    ("grain --list mrn77", ["--list", "MODEL='mrn77'"]),
    ("grain --list --wave 1", ["--list", "--wave"]),
    ("grain mrn77 --wave 0.55 --unit ''", ["--unit", "''"]),
    # ebv
    (EBV, ["--ra", "--l"]),
    (f"{EBV} --ra 10", ["--dec", "missing"]),
    (f"{EBV} --l 5", ["--b", "missing"]),
    (f"{EBV} --ra 10 --dec 100", ["--dec=100.0", "[-90, 90]"]),
    (f"{EBV} --ra 10 --dec -100", ["--dec=-100.0", "[-90, 90]"]),
    (f"{EBV} --l 5 --b 95", ["--b=95.0", "[-90, 90]"]),
    (f"{EBV} --ra x --dec 10", ["--ra='x'", "not a number"]),
    (f"{EBV} --ra nan --dec 10", ["--ra='nan'", "finite"]),
    (f"{EBV} --ra ,, --dec 10", ["--ra", "no values"]),
    (f"{EBV} --ra 10 --dec 10 --l 5 --b 5", ["--ra", "--l", "not both"]),
    (f"{EBV} --ra 10 --dec 10 --b 5", ["--ra", "--b", "not both"]),
    (f"{EBV} --ra 10 --dec 10 --rv nan", ["--rv", "'nan'"]),
    ("ebv --map m.fits m.fits --ra 10 --dec 10", ["'m.fits'", "HEALPix"]),
    ("ebv --map nope.fits --ra 10 --dec 10", ["'nope.fits'", "does not exist"]),
    ("ebv --map adir --ra 10 --dec 10", ["'adir'", "folder"]),
    ("ebv --map '' --ra 10 --dec 10", ["map file ''", "empty"]),
    ("ebv --map empty.txt --ra 10 --dec 10", ["'empty.txt'", "FITS"]),
    ("ebv --map in.csv --ra 10 --dec 10", ["'in.csv'", "FITS"]),
    ("ebv --ra 10 --dec 10", ["--map", "required"]),
    (f"{EBV} --ra 10 --dec 10 --frame zz", ["--frame='zz'", "'galactic'"]),
    (f"{EBV} --ra 10 --dec 10 --frame ''", ["--frame=''"]),
    (f"{EBV} --ra 10 --dec 10 --interpolation zz", ["--interpolation", "'zz'", "'nearest'"]),
    (f"{EBV} --ra 10 --dec 10 --scale -1", ["scale=-1.0", "> 0"]),
    (f"{EBV} --ra 10 --dec 10 --scale 0", ["scale=0.0", "> 0"]),
    (f"{EBV} --ra 10 --dec 10 --scale nan", ["--scale", "'nan'"]),
    (f"{EBV} --ra 10 --dec 10 --unit zz", ["--unit", "'zz'"]),
    (f"{EBV} --ra 10 --dec 10 --unit A_V", ["A_V", "r_v"]),
    (f"{EBV} --ra 10 --dec 10 --unit A_V --rv 0", ["r_v=0.0", "> 0"]),
    (f"{EBV} --ra 10 --dec 10 --rv -3", ["r_v=-3.0", "> 0"]),
    (f"{EBV} --ra 10 --dec 10 --column zz", ["column='zz'", "'EBV'"]),
    (f"{EBV} --ra 10 --dec 10 --column 99", ["column='99'", "0-0"]),
    (f"{EBV} --ra 10 --dec 10 --column ''", ["column=''", "'EBV'"]),
    # correct: options only (the readers' checks are in test_catalog_bad_input.py)
    (f"{CORRECT} --ebv 0.1 --law zz", ["law='zz'"]),
    (f"{CORRECT} --ebv nan", ["--ebv", "'nan'"]),
    (f"{CORRECT} --ebv x", ["--ebv", "'x'"]),
    (f"{CORRECT} --ebv 0.1 --av 0.3", ["'ebv'", "'av'"]),
    ("correct in.csv out.csv --band zz --ebv 0.1", ["band='zz'"]),
    ("correct in.csv out.csv --band kw-b --band kw-b --ebv 0.1", ["['kw-b', 'kw-b']", "twice"]),
    ("correct in.csv out.csv --band '' --ebv 0.1", ["band=''", "empty"]),
    ("correct in.csv out.csv --band tophat:0.55:-0.1 --ebv 0.1", ["band='tophat:0.55:-0.1'", "width_um=-0.1"]),
    ("correct in.csv out.csv --ebv 0.1", ["--band", "required"]),
    ("correct in.csv out.csv --band kw-v --ebv 0.1 --comment ab", ["comment='ab'", "one character"]),
    ("correct in.csv out.csv --band kw-v --ebv 0.1 --comment ab --engine dask", ["comment='ab'", "one character"]),
    ("correct in.csv out.csv --band kw-v --ebv 0.1 --hdu 1", ["hdu=1", "FITS input"]),
    ("correct in.csv --band kw-v --ebv 0.1", ["OUTPUT", "required"]),
    ("correct in.csv in.csv --band kw-b --band kw-v --ebv 0.1", ["'in.csv'", "input"]),
    ("correct in.csv '' --band kw-b --band kw-v --ebv 0.1", ["OUTPUT=''", "empty"]),
    ("correct '' out.csv --band kw-b --band kw-v --ebv 0.1", ["INPUT=''", "empty"]),
    ("correct in.csv nodir/out.csv --band kw-b --band kw-v --ebv 0.1", ["'nodir/out.csv'", "does not exist"]),
    ("correct in.csv out.zz --band kw-b --band kw-v --ebv 0.1", ["'out.zz'", ".csv"]),
    (f"{CORRECT_EBV} --rv 0", ["r_v=0.0", "[1.8, 6]"]),
    (f"{CORRECT_EBV} --rv x", ["--rv", "'x'"]),
    (f"{CORRECT_EBV} --rv 3.1 --rv-col ebv", ["r_v", "rv_column"]),
    (f"{CORRECT_EBV} --rv-err -1", ["rv_error=-1.0", ">= 0"]),
    (f"{CORRECT_EBV} --rv-err nan", ["--rv-err", "'nan'"]),
    (f"{CORRECT_EBV} --red-err -1", ["reddening_error=-1.0", ">= 0"]),
    (f"{CORRECT_EBV} --mag zz", ["--mag", "'zz'", "BAND=COLUMN"]),
    (f"{CORRECT_EBV} --mag kw-b=", ["--mag", "'kw-b='"]),
    (f"{CORRECT_EBV} --mag zz=Bmag", ["'zz'", "['kw-b', 'kw-v']"]),
    (f"{CORRECT_EBV} --mag kw-b=nocol", ["'nocol'", "columns"]),
    (f"{CORRECT_EBV} --err kw-b", ["--err", "'kw-b'"]),
    (f"{CORRECT_EBV} --colour kw-b", ["--colour", "'kw-b'", "BAND1,BAND2"]),
    (f"{CORRECT_EBV} --colour kw-b,zz", ["'zz'", "['kw-b', 'kw-v']"]),
    (f"{CORRECT_EBV} --colour kw-b,kw-b", ["'kw-b'", "two different bands"]),
    (f"{CORRECT} --ebv-col nocol", ["ebv_column='nocol'"]),
    (f"{CORRECT} --ebv-col ''", ["ebv_column=''"]),
    (f"{CORRECT_EBV} --teff 0", ["temperature=0.0", "> 0"]),
    (f"{CORRECT_EBV} --teff -1", ["temperature=-1.0", "> 0"]),
    (f"{CORRECT_EBV} --teff x", ["--teff", "'x'"]),
    (f"{CORRECT_EBV} --solve-colour kw-b", ["--solve-colour", "'kw-b'"]),
    (f"{CORRECT_EBV} --solve-colour zz,kw-v", ["'zz'"]),
    (f"{CORRECT_EBV} --teff-col ebv --solve-colour kw-b,kw-v", ["--teff-col", "--solve-colour"]),
    (f"{CORRECT_EBV} --colour-offset nan", ["--colour-offset", "'nan'"]),
    (f"{CORRECT_EBV} --chunk-rows 0", ["--chunk-rows", "'0'", ">= 1"]),
    (f"{CORRECT_EBV} --chunk-rows -5", ["--chunk-rows", "'-5'"]),
    (f"{CORRECT_EBV} --chunk-rows 1.5", ["--chunk-rows", "'1.5'", "whole number"]),
    (f"{CORRECT_EBV} --delimiter ''", ["delimiter=''", "one character"]),
    (f"{CORRECT_EBV} --delimiter ab", ["delimiter='ab'", "one character"]),
    (f"{CORRECT_EBV} --in-format zz", ["--in-format", "'zz'"]),
    (f"{CORRECT_EBV} --out-format zz", ["--out-format", "'zz'"]),
    (f"{CORRECT_EBV} --keep nocol", ["['nocol']"]),
    (f"{CORRECT_EBV} --suffix ''", ["suffix"]),
    (f"{CORRECT_EBV} --engine zz", ["--engine", "'zz'"]),
    (f"{CORRECT_EBV} --scheduler tcp://x:1", ["--scheduler", "--engine dask"]),
    (f"{CORRECT_EBV} --frame galactic", ["--frame", "--map"]),
    (f"{CORRECT_EBV} --map-scale 2", ["--map-scale", "--map"]),
    (f"{CORRECT_EBV} --lon-col ra --lat-col dec", ["--lon-col, --lat-col", "--map"]),
    (f"{CORRECT} --map nope.fits", ["'nope.fits'", "does not exist"]),
    (f"{CORRECT} --map m.fits --map-scale -1", ["map_scale=-1.0", "> 0"]),
    (f"{CORRECT} --map m.fits --lon-col ebv", ["lon_column", "lat_column"]),
    (f"{CORRECT_EBV} --law file:nope.csv", ["'nope.csv'", "does not exist"]),
    (f"{CORRECT_EBV} --law grain:nope.toml", ["'nope.toml'", "does not exist"]),
    # demo, tui and the command itself
    ("demo x", ["unrecognized", "x"]),
    ("demo --bogus", ["--bogus"]),
    ("tui x", ["x"]),
    ("tui --bogus", ["--bogus"]),
    ("nosuchcommand", ["'nosuchcommand'", "'bands'"]),
    ("--bogus", ["COMMAND", "required"]),
    ("", ["COMMAND", "required"]),
]


@pytest.fixture(scope="module")
def template(tmp_path_factory):
    """A small catalog, a HEALPix map, an empty file and a sub-folder, made once."""
    folder = tmp_path_factory.mktemp("bad_input")
    frame = intrinsic(5).rename(columns={"kw_b": "Bmag", "kw_v": "Vmag", "e_kw_b": "Bmag_err", "e_kw_v": "Vmag_err"})
    frame.to_csv(folder / "in.csv", index=False)
    write_healpix(folder / "m.fits", healpix_values(8, "nested"), 8, "NESTED")
    (folder / "empty.txt").write_bytes(b"")
    (folder / "adir").mkdir()
    return folder


@pytest.fixture
def workspace(template, tmp_path, monkeypatch):
    """A fresh copy of the template files in ``tmp_path``, made the current folder."""
    shutil.copytree(template, tmp_path, dirs_exist_ok=True)
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _snapshot(folder):
    """Relative path → SHA-256 of every file under ``folder`` (folders as None)."""
    return {
        str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest() if p.is_file() else None
        for p in sorted(folder.rglob("*"))
    }


def test_enough_cases():
    assert len(CASES) >= 150
    assert len({argv for argv, _ in CASES}) == len(CASES)  # no case listed twice


@pytest.mark.parametrize(("argv", "needles"), CASES, ids=[argv or "(nothing)" for argv, _ in CASES])
def test_refused_cleanly(workspace, capsys, argv, needles):
    before = _snapshot(workspace)
    status = main(shlex.split(argv))
    out, err = capsys.readouterr()
    assert status == 2, (out, err)
    lines = [line for line in err.splitlines() if line and not line.startswith(("usage:", " "))]
    assert len(lines) == 1, err
    line = lines[0]
    assert line.startswith("redcorr") and "error:" in line, line
    for needle in needles:
        assert needle in line, (needle, line)
    for leak in ("Traceback", "array(", "np.float64", "warning"):
        assert leak not in err, err
    assert out == ""
    assert _snapshot(workspace) == before  # nothing left behind, inputs byte-identical


# ======================================================================= ebv: distances and parallaxes
# (distance-resolved maps) The command line checks these before it opens the map, so the template's 2D map serves;
# a 2D map given a good distance only warns (tests/test_cli_ebv.py).
EBV_AT = f"{EBV} --ra 10 --dec 10"

EBV_DISTANCE_CASES = [
    (f"{EBV_AT} --distance -5", ["--distance=-5.0", "> 0"]),
    (f"{EBV_AT} --distance 0", ["--distance=0.0", "> 0"]),
    (f"{EBV_AT} --distance x", ["--distance='x'", "not a number"]),
    (f"{EBV_AT} --distance nan", ["--distance='nan'", "finite"]),
    (f"{EBV_AT} --distance inf", ["--distance='inf'", "finite"]),
    (f"{EBV_AT} --distance ,,", ["--distance", "no values"]),
    (f"{EBV_AT} --distance 100 --parallax 2", ["--parallax", "--distance"]),
    (f"{EBV_AT} --distance-err 10", ["--distance-err", "give --distance"]),
    (f"{EBV_AT} --distance 100 --distance-err 0", ["--distance-err=0.0", "> 0"]),
    (f"{EBV_AT} --distance 100 --distance-err -10", ["--distance-err=-10.0", "> 0"]),
    (f"{EBV_AT} --distance 100 --distance-err nan", ["--distance-err='nan'", "finite"]),
    (f"{EBV_AT} --distance 100,200 --distance-err 1,2,3", ["--distance-err has 3 values", "--distance 2"]),
    ("ebv --map m.fits --ra 1,2 --dec 10 --distance 100 --distance-err 1,2,3",
     ["--distance-err has 3 values for 2 positions"]),
    ("ebv --map m.fits --ra 1,2,3 --dec 10 --distance 100,200", ["--distance has 2 values for 3 positions"]),
    (f"{EBV_AT} --parallax-err 0.1", ["--parallax-err", "give --parallax"]),
    (f"{EBV_AT} --parallax -0.5", ["--parallax=-0.5", "without an error", "--parallax-err"]),
    (f"{EBV_AT} --parallax 0", ["--parallax=0.0", "> 0", "--parallax-err"]),
    (f"{EBV_AT} --parallax x", ["--parallax='x'", "not a number"]),
    (f"{EBV_AT} --parallax inf --parallax-err 0.1", ["--parallax='inf'", "finite"]),
    (f"{EBV_AT} --parallax 1 --parallax-err 0", ["--parallax-err=0.0", "> 0"]),
    (f"{EBV_AT} --parallax 1 --parallax-err -0.2", ["--parallax-err=-0.2", "> 0"]),
    (f"{EBV_AT} --parallax 1,2 --parallax-err 1,2,3", ["--parallax-err has 3 values", "--parallax 2"]),
    (f"{EBV_AT} --parallax 1 --prior-length 500", ["--prior-length=500", "--parallax-err"]),
    (f"{EBV_AT} --parallax 1 --parallax-err 0.1 --prior-length 0", ["--prior-length", "'0'", "> 0"]),
    (f"{EBV_AT} --parallax 1 --parallax-err 0.1 --prior-length=-1e3", ["--prior-length", "'-1e3'", "> 0"]),
    (f"{EBV_AT} --parallax 1 --parallax-err 0.1 --prior-length nan", ["--prior-length", "'nan'", "finite"]),
]


def test_ebv_distance_cases_are_new():
    assert len({argv for argv, _ in EBV_DISTANCE_CASES}) == len(EBV_DISTANCE_CASES)
    assert not {argv for argv, _ in EBV_DISTANCE_CASES} & {argv for argv, _ in CASES}


@pytest.mark.parametrize(("argv", "needles"), EBV_DISTANCE_CASES, ids=[argv for argv, _ in EBV_DISTANCE_CASES])
def test_ebv_distance_refused_cleanly(workspace, capsys, argv, needles):
    test_refused_cleanly(workspace, capsys, argv, needles)  # the same checks as every case above


# ======================================================================= fit: per-star reddening from photometry
# Options are checked before the model grid is built, but for --keep (checked against the file's columns). The
# template's B and V columns are guessed for bessell-B and bessell-V; kw-b is a band the colour table lacks.
FIT = "fit in.csv out.csv --band bessell-B --band bessell-V"

FIT_CASES = [
    ("fit in.csv out.csv --band bessell-B", ["bands=['bessell-B']", "at least 2"]),
    (f"{FIT} --band bessell-B", ["'bessell-B'", "twice"]),
    (f"{FIT} --rv-range 2,5", ["--rv-range 2,5", "only with --rv-free"]),
    (f"{FIT} --rv-free --rv 3.1", ["--rv", "not allowed with argument --rv-free"]),
    (f"{FIT} --rv-free --rv-range 5,2", ["r_v_range=(5.0, 2.0)", "increasing", "1.8-6"]),
    (f"{FIT} --rv-free --rv-range 1,9", ["r_v_range=(1.0, 9.0)", "within the law's 1.8-6"]),
    (f"{FIT} --rv-free --rv-range 2,2", ["r_v_range=(2.0, 2.0)", "increasing"]),
    (f"{FIT} --rv-free --rv-range x", ["--rv-range", "'x'", "LOW,HIGH"]),
    (f"{FIT} --rv-free --rv-range 3", ["--rv-range", "'3'", "LOW,HIGH"]),
    (f"{FIT} --teff-col ebv", ["--teff-col", "needs --teff-err-col"]),
    (f"{FIT} --teff-err-col e_ebv", ["--teff-err-col", "needs --teff-col"]),
    (f"{FIT} --teff-col nocol --teff-err-col nocol2", ["teff_column='nocol'", "not a column", "'ebv'"]),
    (f"{FIT} --floor -1", ["--floor", "'-1'", ">= 0"]),
    (f"{FIT} --floor nan", ["--floor", "'nan'", "finite"]),
    (f"{FIT} --floor x", ["--floor", "'x'", "not a number"]),
    (f"{FIT} --ebv-max 0", ["ebv_max=0.0", "> 0"]),
    (f"{FIT} --ebv-max -1", ["ebv_max=-1.0", "> 0"]),
    (f"{FIT} --ebv-max inf", ["--ebv-max", "'inf'", "finite"]),
    (f"{FIT} --prior-map-err 0.1", ["--prior-map-err", "only with --prior-map"]),
    (f"{FIT} --distance-col d", ["--distance-col", "only with --prior-map"]),
    (f"{FIT} --lon-col ra", ["--lon-col", "only with --prior-map"]),
    (f"{FIT} --prior-map nope.fits", ["'nope.fits'", "does not exist"]),
    (f"{FIT} --prior-map m.fits --prior-map-err -1", ["prior_error=-1.0", ">= 0"]),
    (f"{FIT} --prior-map m.fits --distance-col d --parallax-col p",
     ["--distance-col d", "--parallax-col p", "not both"]),
    (f"{FIT} --prior-map m.fits --prior-length 100", ["prior_length=100.0", "parallax_error_column"]),
    (f"{FIT} --colours empty.txt", ["'empty.txt'", "ECSV"]),
    (f"{FIT} --colours nope.ecsv", ["'nope.ecsv'", "does not exist"]),
    (f"{FIT} --colours adir", ["'adir'", "folder"]),
    (f"{FIT} --colours zz", ["colours='zz'", "'dwarfs'"]),
    (f"{FIT} --law zz", ["law='zz'", "choose from", "'f99'"]),
    (f"{FIT} --rv 0", ["r_v=0.0", "[1.8, 6]"]),
    ("fit in.csv in.csv --band bessell-B --band bessell-V", ["output='in.csv'", "is an input file"]),
    ("fit in.csv '' --band bessell-B --band bessell-V", ["OUTPUT=''", "empty"]),
    (f"{FIT} --keep nocol", ["['nocol']", "not columns of the input"]),
    (f"{FIT} --mag bessell-B=nocol", ["bessell-B='nocol'", "not a column"]),
    ("fit in.csv out.csv --band bessell-B --band bessell-I --mag bessell-I=id",
     ["['bessell-I']", "no error column", "--err bessell-I=COLUMN"]),
    ("fit in.csv out.csv --band bessell-B --band kw-b --mag kw-b=Vmag --err kw-b=Vmag_err",
     ["band='kw-b'", "intrinsic-colour table 'dwarfs'", "bessell-B", "wise2010-W4"]),
    (f"{FIT} --band qqqqqqqq", ["band='qqqqqqqq'", "redcorr bands --list"]),
]


def test_fit_cases_are_new():
    assert len({argv for argv, _ in FIT_CASES}) == len(FIT_CASES)
    assert not {argv for argv, _ in FIT_CASES} & {argv for argv, _ in CASES}


@pytest.mark.parametrize(("argv", "needles"), FIT_CASES, ids=[argv for argv, _ in FIT_CASES])
def test_fit_refused_cleanly(workspace, capsys, argv, needles):
    test_refused_cleanly(workspace, capsys, argv, needles)  # the same checks as every case above


# ======================================================================= emission-map: column or optical-depth maps
# The template's m.fits serves as INPUT (a HEALPix map). Every case fails before a grain model is computed.
EMISSION = "emission-map m.fits o.fits"

EMISSION_CASES = [
    ("emission-map", ["INPUT and OUTPUT are needed"]),
    ("emission-map m.fits", ["INPUT and OUTPUT are needed"]),
    ("emission-map --list m.fits", ["--list takes no INPUT"]),
    ("emission-map nope.fits o.fits", ["'nope.fits'", "does not exist"]),
    ("emission-map adir o.fits", ["'adir'", "folder"]),
    ("emission-map empty.txt o.fits", ["'empty.txt'", "not a readable FITS file"]),
    ("emission-map in.csv o.fits", ["'in.csv'", "not a readable FITS file"]),
    ("emission-map m.fits o.txt", ["output='o.txt'", "not a FITS file name", ".fits"]),
    ("emission-map m.fits ''", ["output=''", "empty"]),
    ("emission-map m.fits nodir/o.fits", ["'nodir/o.fits'", "does not exist"]),
    ("emission-map m.fits m.fits", ["output='m.fits'", "is an input file"]),
    ("emission-map m.fits m.fits --overwrite", ["output='m.fits'", "is an input file"]),
    (f"{EMISSION} --ratio zz", ["ratio='zz'", "choose from", "'bsd78'"]),
    (f"{EMISSION} --ratio liszt14", ["--ratio liszt14", "N(HI)", "N_H"]),
    (f"{EMISSION} --quantity hi --ratio bsd78", ["--ratio bsd78", "N_H", "N(HI)"]),
    (f"{EMISSION} --quantity hi", ["--quantity hi", "liszt14"]),
    (f"{EMISSION} --quantity tau", ["--quantity tau", "--wave"]),
    (f"{EMISSION} --quantity tau --wave 250", ["--quantity tau", "--grain", "--per-ebv"]),
    (f"{EMISSION} --wave 250", ["optical depth", "--grain", "--per-av"]),
    (f"{EMISSION} --wave 250 --ratio bsd78", ["--ratio bsd78", "optical depth"]),
    (f"{EMISSION} --wave 0 --per-ebv 1", ["--wave", "'0'", "> 0"]),
    (f"{EMISSION} --wave -5 --per-ebv 1", ["--wave", "'-5'", "> 0"]),
    (f"{EMISSION} --wave nan --per-ebv 1", ["--wave", "'nan'", "finite"]),
    (f"{EMISSION} --wave x --per-ebv 1", ["--wave", "'x'", "not a number"]),
    (f"{EMISSION} --quantity nh --wave 250 --per-ebv 1", ["--wave=250", "--quantity nh"]),
    (f"{EMISSION} --quantity nh --grain wd01-rv3.1", ["--grain wd01-rv3.1", "column"]),
    (f"{EMISSION} --grain wd01-rv3.1", ["--quantity tau", "--wave"]),
    (f"{EMISSION} --grain wd01-rv3.1 --wave 250 --rv 3.1", ["--rv=3.1", "own R_V"]),
    (f"{EMISSION} --grain zz --wave 250", ["'zz'", "not known"]),
    (f"{EMISSION} --per-ebv 0", ["--per-ebv", "'0'", "> 0"]),
    (f"{EMISSION} --per-av -1", ["--per-av", "'-1'", "> 0"]),
    (f"{EMISSION} --per-ebv inf", ["--per-ebv", "'inf'", "finite"]),
    (f"{EMISSION} --per-ebv 1 --per-av 2", ["--per-av", "not allowed with argument --per-ebv"]),
    (f"{EMISSION} --ratio bsd78 --grain wd01-rv3.1", ["--grain", "not allowed with argument --ratio"]),
    (f"{EMISSION} --to zz", ["--to", "'zz'", "'ebv'", "'av'"]),
    (f"{EMISSION} --to av", ["bsd78 gives E(B-V)", "r_v", "A_V"]),
    (f"{EMISSION} --ratio guver-ozel09", ["guver-ozel09 gives A_V", "r_v", "E(B-V)"]),
    (f"{EMISSION} --rv 3.1", ["r_v=3.1", "not used", "E(B-V) directly"]),
    (f"{EMISSION} --to av --rv 0", ["--rv", "'0'", "> 0"]),
    (f"{EMISSION} --scale 0", ["--scale", "'0'", "> 0"]),
    (f"{EMISSION} --scale nan", ["--scale", "'nan'", "finite"]),
    (f"{EMISSION} --negative zz", ["--negative", "'zz'", "'mask'"]),
    (f"{EMISSION} --quantity zz", ["--quantity", "'zz'", "'tau'"]),
    (f"{EMISSION} --column zz", ["column='zz'", "not in", "'m.fits'"]),
    (f"{EMISSION} --column 5", ["column='5'", "columns 0-0"]),
    (f"{EMISSION} --hdu 7", ["hdu=7", "has 2 HDUs"]),
]


def test_emission_cases_are_new():
    assert len({argv for argv, _ in EMISSION_CASES}) == len(EMISSION_CASES)
    assert not {argv for argv, _ in EMISSION_CASES} & {argv for argv, _ in CASES}


@pytest.mark.parametrize(("argv", "needles"), EMISSION_CASES, ids=[argv for argv, _ in EMISSION_CASES])
def test_emission_refused_cleanly(workspace, capsys, argv, needles):
    test_refused_cleanly(workspace, capsys, argv, needles)  # the same checks as every case above


# ======================================================================= thermal: grain temperatures and emission
# Every case fails before a grain is heated: options first, then the model's name or file, then the wavelengths
# (refused by the optical constants' range before any Mie sum).
THERMAL = "thermal mrn77"

THERMAL_CASES = [
    ("thermal", ["MODEL", "missing"]),
    ("thermal ''", ["MODEL", "missing"]),
    ("thermal zz", ["grain model='zz'", "'mrn77'"]),
    ("thermal mrn7", ["grain model='mrn7'", "did you mean 'mrn77'"]),
    ("thermal grain:nope.toml", ["'nope.toml'", "does not exist"]),
    ("thermal grain:adir", ["'adir'", "folder"]),
    ("thermal grain:empty.txt", ["'empty.txt'", "[[component]]"]),
    (f"{THERMAL} --scale 0", ["--scale", "'0'", "> 0"]),
    (f"{THERMAL} --scale -2", ["--scale", "'-2'", "> 0"]),
    (f"{THERMAL} --scale nan", ["--scale", "'nan'", "finite"]),
    (f"{THERMAL} --scale x", ["--scale", "'x'", "not a number"]),
    (f"{THERMAL} --star-temp 5000", ["--star-temp=5000", "--dilution", "(0, 1]"]),
    (f"{THERMAL} --dilution 0.5", ["--dilution=0.5", "--star-temp"]),
    (f"{THERMAL} --star-temp 5000 --dilution 2", ["dilution=2.0", "(0, 1]"]),
    (f"{THERMAL} --star-temp 5000 --dilution 0", ["dilution=0.0", "(0, 1]"]),
    (f"{THERMAL} --star-temp 5000 --dilution=-1e-3", ["dilution=-0.001", "(0, 1]"]),
    (f"{THERMAL} --star-temp 5000 --dilution inf", ["--dilution", "'inf'", "finite"]),
    (f"{THERMAL} --star-temp 0 --dilution 0.1", ["--star-temp", "'0'", "> 0"]),
    (f"{THERMAL} --star-temp x --dilution 0.1", ["--star-temp", "'x'", "not a number"]),
    (f"{THERMAL} --scale 2 --star-temp 5000 --dilution 0.1", ["--scale=2", "--star-temp", "one or the other"]),
    (f"{THERMAL} --wave 0", ["--wave=0", "> 0"]),
    (f"{THERMAL} --wave -100", ["--wave=-100", "> 0"]),
    (f"{THERMAL} --wave 100 0 --unit 1/um", ["--wave=0 1/um", "> 0"]),
    (f"{THERMAL} --wave x", ["--wave", "'x'", "not a number"]),
    (f"{THERMAL} --wave nan", ["--wave", "'nan'", "finite"]),
    (f"{THERMAL} --wave 1e9", ["wave=1e+09", "[0.001, 1000]"]),
    (f"{THERMAL} --wave 100 --unit pc", ["--unit", "'pc'", "'um'"]),
    (f"{THERMAL} --plot nodir/x.png", ["--plot='nodir/x.png'", "folder 'nodir' does not exist"]),
    (f"{THERMAL} --plot adir", ["--plot='adir'", "folder"]),
    (f"{THERMAL} --plot ''", ["--plot=''", "empty"]),
    (f"{THERMAL} --bogus", ["--bogus"]),
]


def test_thermal_cases_are_new():
    assert len({argv for argv, _ in THERMAL_CASES}) == len(THERMAL_CASES)
    assert not {argv for argv, _ in THERMAL_CASES} & {argv for argv, _ in CASES}


@pytest.mark.parametrize(("argv", "needles"), THERMAL_CASES, ids=[argv for argv, _ in THERMAL_CASES])
def test_thermal_refused_cleanly(workspace, capsys, argv, needles):
    test_refused_cleanly(workspace, capsys, argv, needles)  # the same checks as every case above
