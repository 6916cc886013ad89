"""``redcorr mie``: Mie efficiencies of homogeneous spheres."""

from redcorr.cli._common import finite_float, print_json, print_table
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

COLUMNS = ["x", "q_ext", "q_sca", "q_abs", "q_back", "g"]
"""Keys of each JSON object and columns of the table, in order."""


def _complex(text):
    """Parse a refractive index such as ``1.5+0.01j`` (``i`` is accepted for ``j``)."""
    cleaned = text.strip().replace(" ", "").replace("i", "j").replace("J", "j")
    try:
        return complex(cleaned)
    except ValueError:
        raise InputError(f"--m={text!r} is not a complex number such as 1.5+0.01j") from None


def add_parser(sub):
    p = sub.add_parser(
        "mie",
        help="Mie efficiencies Q_ext, Q_sca, Q_abs, Q_back and g of spheres",
        description=(
            "Mie theory for a homogeneous sphere of refractive index m = n + ik (k >= 0 "
            "absorbs) and size parameter x = 2πa/λ: extinction, scattering, absorption "
            "and backscattering efficiencies and the asymmetry parameter g, one row per x."
        ),
    )
    p.add_argument("--m", required=True, metavar="M", help="refractive index, e.g. 1.5+0.01j")
    p.add_argument("--x", required=True, nargs="+", type=finite_float, metavar="X", help="size parameters 2πa/λ")
    p.add_argument(
        "--convention",
        choices=["n+ik", "n-ik"],
        default="n+ik",
        help="sign convention of --m (default n+ik: a positive imaginary part absorbs)",
    )
    p.add_argument("--json", action="store_true", help="print a JSON list, one object per x")
    p.set_defaults(func=run)


def run(args):
    import numpy as np  # heavy: loaded on use

    from redcorr.mie import sphere

    m = _complex(args.m)
    x = np.asarray(args.x, dtype=float)
    res = sphere(m, x, convention=args.convention)
    rows = [
        {
            "x": float(xi),
            "q_ext": float(res.q_ext[i]),
            "q_sca": float(res.q_sca[i]),
            "q_abs": float(res.q_abs[i]),
            "q_back": float(res.q_back[i]),
            "g": float(res.g[i]),
        }
        for i, xi in enumerate(x)
    ]
    if args.json:
        print_json(rows)
    else:
        print(f"# Mie, homogeneous sphere, m = {m.real:g}{m.imag:+g}i ({args.convention})")
        print_table(rows, COLUMNS, formats={c: ".6g" for c in COLUMNS})
    return 0
