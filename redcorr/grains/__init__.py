"""Grain models from first principles: materials, size distributions, Mie theory.

Named models::

    >>> from redcorr.grains import get_grain_model, list_grain_models
    >>> [m["name"] for m in list_grain_models()]
    ['mrn77', 'wd01-rv3.1', 'wd01-rv4.0', 'wd01-rv5.5']

``get_grain_model(name).curve()`` is a :class:`~redcorr.curves.DustCurve`;
:func:`redcorr.io.load_curve` also resolves these names and ``grain:PATH.toml``.

Packaged materials are listed by :func:`list_materials`; their tables are
read through :mod:`redcorr.io.grains`.
"""

from pathlib import Path

from redcorr._validate import check_choice
from redcorr.exceptions import InputError
from redcorr.grains.materials import Material, OpticalConstants
from redcorr.grains.model import (
    DEFAULT_WAVE_UM,
    Component,
    GrainCurve,
    GrainModel,
    GrainOptics,
    PAHBlend,
)
from redcorr.grains.pah import pah_cross_section, pah_fraction
from redcorr.grains.sizes import (
    LogNormal,
    PowerLaw,
    PowerLawCutoff,
    SizeDistribution,
    TabulatedSizes,
    WD01Carbonaceous,
    WD01Silicate,
    mrn77,
)

__all__ = [
    "Material",
    "OpticalConstants",
    "Component",
    "GrainModel",
    "GrainOptics",
    "GrainCurve",
    "PAHBlend",
    "DEFAULT_WAVE_UM",
    "SizeDistribution",
    "PowerLaw",
    "PowerLawCutoff",
    "LogNormal",
    "WD01Silicate",
    "WD01Carbonaceous",
    "TabulatedSizes",
    "mrn77",
    "pah_cross_section",
    "pah_fraction",
    "MATERIALS",
    "GRAIN_MODELS",
    "get_material",
    "list_materials",
    "wd01_sizes",
    "get_grain_model",
    "list_grain_models",
    "build_component",
]

_D03 = "Draine 2003, ApJ, 598, 1026 (doi:10.1086/379123)"
_LD93 = "Laor & Draine 1993, ApJ, 402, 441 (doi:10.1086/172149)"

MATERIALS = {
    "silicate-d03": {
        "sets": [(None, [(1.0, "silicate_d03")])],
        "density": 3.5,
        "carbon": False,
        "citation": f"astronomical silicate, {_D03}",
    },
    "graphite-d03": {
        "sets": [
            (0.01, [(1 / 3, "graphite_par_d03_a0.01"), (2 / 3, "graphite_perp_d03_a0.01")]),
            (0.10, [(1 / 3, "graphite_par_d03_a0.10"), (2 / 3, "graphite_perp_d03_a0.10")]),
        ],
        "density": 2.24,
        "carbon": True,
        "citation": f"graphite, 1/3 E∥c + 2/3 E⊥c, tables for a = 0.01 and 0.1 µm, {_D03}",
    },
    "silicate-ld93": {
        "sets": [(None, [(1.0, "silicate_ld93")])],
        "density": 3.5,
        "carbon": False,
        "citation": f"astronomical silicate, {_LD93}",
    },
    "graphite-ld93": {
        "sets": [(None, [(1 / 3, "graphite_par_ld93"), (2 / 3, "graphite_perp_ld93")])],
        "density": 2.24,
        "carbon": True,
        "citation": f"graphite, 1/3 E∥c + 2/3 E⊥c, {_LD93}",
    },
}
"""Packaged materials: orientation weights and table stems per grain radius (µm), density (g cm⁻³)."""


def get_material(name):
    """A packaged material by name (see :func:`list_materials`)."""
    from redcorr.io.grains import packaged_optical_constants  # noqa: PLC0415

    key = check_choice("material", name, sorted(MATERIALS))
    spec = MATERIALS[key]
    sets = [(r, [(w, packaged_optical_constants(stem)) for w, stem in parts]) for r, parts in spec["sets"]]
    if len(sets) == 1:
        return Material(key, sets[0][1], density=spec["density"], citation=spec["citation"], carbon=spec["carbon"])
    return Material(key, density=spec["density"], citation=spec["citation"], radius_sets=sets, carbon=spec["carbon"])


def list_materials():
    """Describe the packaged materials: name, density, carbonaceous or not, citation."""
    return [
        {"name": k, "density": v["density"], "carbon": v["carbon"], "citation": v["citation"]}
        for k, v in sorted(MATERIALS.items())
    ]


def wd01_sizes(r_v, b_c, case="A", *, scale=1.0):
    """The WD01 Milky Way carbonaceous and silicate distributions for one Table 1 row.

    Parameters
    ----------
    r_v : float
        3.1, 4.0 or 5.5.
    b_c : float
        C atoms per H in the log-normal very small grains (0 to 6e-5 for
        R_V = 3.1; 0 to 4e-5 for 4.0; 0 to 3e-5 for 5.5), a Table 1 value.
    case : {"A", "B"}
        WD01's case (B exists for R_V = 4.0 and 5.5).
    scale : float
        Multiplies both distributions.

    Returns
    -------
    (WD01Carbonaceous, WD01Silicate)

    References
    ----------
    .. [1] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296, Table 1.
       doi:10.1086/318651
    """
    from redcorr.io.grains import wd01_table  # noqa: PLC0415

    table = wd01_table()
    rows = [
        r for r in table
        if abs(r["r_v"] - float(r_v)) < 1e-6 and abs(r["b_c"] - float(b_c)) < 1e-9 and r["case"] == str(case).upper()
    ]
    if not rows:
        have = sorted({(float(r["r_v"]), float(r["b_c"]), str(r["case"])) for r in table})
        raise InputError(
            f"WD01 Table 1 has no row for r_v={r_v!r}, b_c={b_c!r}, case={case!r}; rows are "
            + ", ".join(f"({a:g}, {b:g}, {c})" for a, b, c in have)
        )
    r = rows[0]
    carbon = WD01Carbonaceous(r["alpha_g"], r["beta_g"], r["a_t_g"], r["a_c_g"], r["C_g"], float(b_c), scale=scale)
    silicate = WD01Silicate(r["alpha_s"], r["beta_s"], r["a_t_s"], 0.1, r["C_s"], scale=scale)
    return carbon, silicate


_WD01_CITE = (
    "Weingartner & Draine 2001, ApJ, 548, 296, Milky Way R_V = {r_v}, b_C = {bc:g}e-5, case A, "
    "renormalized by {s} (Draine 2003, ARA&A, 41, 241); Draine 2003 optical constants; "
    "PAHs after Li & Draine 2001"
)


def _wd01_model(r_v, b_c, scale):
    def build():
        carbon, silicate = wd01_sizes(r_v, b_c, "A", scale=scale)
        return GrainModel(
            [
                Component(get_material("silicate-d03"), silicate),
                Component(get_material("graphite-d03"), carbon, pah=PAHBlend()),
            ],
            name=f"wd01-rv{r_v}",
            citation=_WD01_CITE.format(r_v=r_v, bc=b_c * 1e5, s=scale),
        )

    return build


def _mrn_model():
    return GrainModel(
        [
            Component(get_material("silicate-ld93"), mrn77("silicate")),
            Component(get_material("graphite-ld93"), mrn77("graphite")),
        ],
        name="mrn77",
        citation=(
            "Mathis, Rumpl & Nordsieck 1977, ApJ, 217, 425 (a^-3.5, 0.005-0.25 µm), normalized as "
            "Draine & Lee 1984; Laor & Draine 1993 optical constants"
        ),
    )


GRAIN_MODELS = {
    "mrn77": (_mrn_model, "MRN power law, silicate + graphite (Laor & Draine 1993 constants)"),
    "wd01-rv3.1": (_wd01_model("3.1", 6.0e-5, 0.93), "WD01 Milky Way R_V=3.1, b_C=6.0e-5, ×0.93 (Draine 2003)"),
    "wd01-rv4.0": (_wd01_model("4.0", 4.0e-5, 1.18), "WD01 Milky Way R_V=4.0 A, b_C=4.0e-5, ×1.18 (Draine 2003)"),
    "wd01-rv5.5": (_wd01_model("5.5", 3.0e-5, 1.42), "WD01 Milky Way R_V=5.5 A, b_C=3.0e-5, ×1.42 (Draine 2003)"),
}
"""Named grain models: name → (builder, one-line description)."""


def get_grain_model(name):
    """A named grain model (case-insensitive), or ``grain:PATH.toml`` for a user model."""
    if isinstance(name, str) and name.startswith("grain:"):
        from redcorr.io.grains import read_grain_model  # noqa: PLC0415

        return read_grain_model(name[len("grain:"):])
    key = check_choice("grain model", name, sorted(GRAIN_MODELS))
    return GRAIN_MODELS[key][0]()


def list_grain_models():
    """Describe the named grain models: ``name`` and ``description``."""
    return [{"name": k, "description": v[1]} for k, v in sorted(GRAIN_MODELS.items())]


_SIZE_KEYS = {
    "mrn": ({"component"}, set()),
    "power-law": ({"amplitude", "q", "a_min", "a_max"}, set()),
    "power-law-cutoff": ({"amplitude", "q", "a_c", "a_min"}, {"a_max"}),
    "log-normal": ({"a0", "sigma"}, {"amplitude", "volume", "a_min", "a_max"}),
    "wd01-silicate": (set(), {"r_v", "b_c", "case", "scale", "alpha", "beta", "a_t", "a_c", "c"}),
    "wd01-carbonaceous": (set(), {"r_v", "b_c", "case", "scale", "alpha", "beta", "a_t", "a_c", "c"}),
    "table": ({"file"}, {"a_min", "a_max"}),
}


def _build_sizes(spec, base_dir):
    if not isinstance(spec, dict) or "type" not in spec:
        raise InputError(f"sizes={spec!r} must be a table with a 'type' key, one of {sorted(_SIZE_KEYS)}")
    kind = check_choice("sizes.type", spec["type"], sorted(_SIZE_KEYS))
    need, optional = _SIZE_KEYS[kind]
    keys = set(spec) - {"type"}
    if need - keys:
        raise InputError(f"sizes of type {kind!r} need key(s) {sorted(need - keys)}")
    if keys - need - optional:
        raise InputError(
            f"sizes of type {kind!r}: unknown key(s) {sorted(keys - need - optional)}; "
            f"allowed: {sorted(need | optional)}"
        )
    args = {k: v for k, v in spec.items() if k != "type"}
    if kind == "mrn":
        return mrn77(args["component"])
    if kind == "power-law":
        return PowerLaw(**args)
    if kind == "power-law-cutoff":
        return PowerLawCutoff(**args)
    if kind == "log-normal":
        return LogNormal(**args)
    if kind == "table":
        from redcorr.io.grains import read_size_table  # noqa: PLC0415

        return read_size_table(Path(base_dir) / args["file"], args.get("a_min"), args.get("a_max"))
    scale = args.pop("scale", 1.0)
    if "r_v" in args:
        extra = set(args) - {"r_v", "b_c", "case"}
        if extra:
            raise InputError(
                f"sizes of type {kind!r}: give r_v/b_c/case or explicit parameters, not both ({sorted(extra)})"
            )
        carbon, silicate = wd01_sizes(args["r_v"], args.get("b_c", 0.0), args.get("case", "A"), scale=scale)
        return carbon if kind == "wd01-carbonaceous" else silicate
    explicit = {"alpha", "beta", "a_t", "a_c", "c"}
    if explicit - set(args):
        raise InputError(f"sizes of type {kind!r} need r_v (and b_c) or all of {sorted(explicit)}")
    if kind == "wd01-carbonaceous":
        return WD01Carbonaceous(
            args["alpha"], args["beta"], args["a_t"], args["a_c"], args["c"], args.get("b_c", 0.0), scale=scale
        )
    if "b_c" in args:
        raise InputError("sizes of type 'wd01-silicate' take no b_c")
    return WD01Silicate(args["alpha"], args["beta"], args["a_t"], args["a_c"], args["c"], scale=scale)


def build_component(spec, base_dir="."):
    """A `Component` from a dict (one ``[[component]]`` of a TOML model file).

    Keys: ``material`` (packaged name or ``file:PATH``), ``sizes`` (a table
    with ``type``), optional ``abundance``, ``pah`` (table with
    ``ionized_fraction``, ``q_gra``, ``a_xi_um``), ``n_sizes``, and for a file
    material ``density`` (g cm⁻³, required) and ``carbon`` (bool).
    """
    if not isinstance(spec, dict):
        raise InputError(f"component={spec!r} must be a table")
    allowed = {"material", "sizes", "abundance", "pah", "n_sizes", "density", "carbon"}
    if set(spec) - allowed:
        raise InputError(f"unknown key(s) {sorted(set(spec) - allowed)}; allowed: {sorted(allowed)}")
    if "material" not in spec or "sizes" not in spec:
        raise InputError("a component needs 'material' and 'sizes'")
    mat = spec["material"]
    if isinstance(mat, str) and mat.startswith("file:"):
        from redcorr.io.grains import read_optical_constants  # noqa: PLC0415

        if "density" not in spec:
            raise InputError(f"material={mat!r} needs density (g/cm3)")
        table = read_optical_constants(Path(base_dir) / mat[len("file:"):])
        material = Material(
            table.name, [(1.0, table)], density=spec["density"], citation=table.citation,
            carbon=bool(spec.get("carbon", False)),
        )
    else:
        if "density" in spec or "carbon" in spec:
            raise InputError(f"density and carbon apply only to file materials, not {mat!r}")
        material = get_material(mat)
    pah = spec.get("pah")
    if pah is not None:
        if not isinstance(pah, dict) or set(pah) - {"ionized_fraction", "q_gra", "a_xi_um"}:
            raise InputError(f"pah={pah!r} must be a table with keys among ionized_fraction, q_gra, a_xi_um")
        pah = PAHBlend(**pah)
    return Component(
        material,
        _build_sizes(spec["sizes"], base_dir),
        spec.get("abundance", 1.0),
        pah=pah,
        n_sizes=spec.get("n_sizes", 150),
    )
