"""Grain models and materials by name, and grain models described in TOML.

The packaged materials (:data:`MATERIALS`) are optical-constant tables in
``redcorr/data/`` with a density and a citation; the named grain models
(:data:`GRAIN_MODELS`) are built from them and from WD01 Table 1 by the
builders of :mod:`redcorr.grains.published`. A model of one's own is a TOML
file (:func:`read_grain_model`), named ``grain:PATH.toml`` wherever a grain
model or a law is expected.
"""

from pathlib import Path

from redcorr._validate import check_choice
from redcorr.exceptions import InputError
from redcorr.grains import (
    Component,
    GrainModel,
    LogNormal,
    Material,
    PAHBlend,
    PowerLaw,
    PowerLawCutoff,
    WD01Carbonaceous,
    WD01Silicate,
    mrn77,
    mrn77_model,
    wd01_distributions,
    wd01_model,
)
from redcorr.io._toml import load_toml
from redcorr.io.grains.tables import packaged_optical_constants, read_optical_constants, read_size_table, wd01_table

__all__ = [
    "MATERIALS",
    "GRAIN_MODELS",
    "get_material",
    "list_materials",
    "wd01_sizes",
    "get_grain_model",
    "list_grain_models",
    "build_component",
    "read_grain_model",
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
    """A packaged material by name (see :func:`list_materials`), its tables read once per process."""
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


def _wd01_row(r_v, b_c, case):
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
    return rows[0]


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
        From :func:`redcorr.grains.wd01_distributions` with the row of the
        packaged Table 1.

    References
    ----------
    .. [1] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296, Table 1.
       doi:10.1086/318651
    """
    return wd01_distributions(_wd01_row(r_v, b_c, case), b_c, scale=scale)


_WD01_CITE = (
    "Weingartner & Draine 2001, ApJ, 548, 296, Milky Way R_V = {r_v}, b_C = {bc:g}e-5, case A, "
    "renormalized by {s} (Draine 2003, ARA&A, 41, 241); Draine 2003 optical constants; "
    "PAHs after Li & Draine 2001"
)


def _wd01_model(r_v, b_c, scale):
    def build():
        return wd01_model(
            _wd01_row(r_v, b_c, "A"),
            b_c,
            get_material("silicate-d03"),
            get_material("graphite-d03"),
            scale=scale,
            name=f"wd01-rv{r_v}",
            citation=_WD01_CITE.format(r_v=r_v, bc=b_c * 1e5, s=scale),
        )

    return build


def _mrn_model():
    return mrn77_model(
        get_material("silicate-ld93"),
        get_material("graphite-ld93"),
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
    """A named grain model (case-insensitive), or ``grain:PATH.toml`` for a user model.

    Parameters
    ----------
    name : str
        A name of :func:`list_grain_models`, or ``grain:`` and the path of a
        TOML description (:func:`read_grain_model`).

    Returns
    -------
    GrainModel
        Its cross sections are computed when asked for; pass the disk
        cache (:func:`redcorr.io.grains.default_cache`) to its methods to
        keep them.
    """
    if isinstance(name, str) and name.startswith("grain:"):
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
    material ``density`` (g cm⁻³, required) and ``carbon`` (bool). Relative
    paths are taken from ``base_dir``.
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


def read_grain_model(path):
    """Build a grain model from a TOML description.

    Parameters
    ----------
    path : path-like
        A TOML file::

            name = "my-dust"                  # optional; the file name by default
            citation = "my notes"             # optional

            [[component]]
            material = "silicate-d03"         # a packaged material or "file:PATH"
            abundance = 1.0                   # optional, multiplies the sizes
            sizes = { type = "wd01-silicate", r_v = 3.1, b_c = 6.0e-5 }

            [[component]]
            material = "file:my_carbon.csv"   # wavelength_um, n, k
            density = 1.8                     # g/cm3, required for a file
            carbon = true                     # optional: may take PAHs
            sizes = { type = "power-law-cutoff", amplitude = 1e-14, q = 3.5, a_c = 0.2, a_min = 0.005 }
            pah = { ionized_fraction = 0.5 }  # optional

        Size types and their keys (radii in µm, amplitudes per H nucleon):
        ``mrn`` (component = "silicate" | "graphite"); ``power-law``
        (amplitude, q, a_min, a_max); ``power-law-cutoff`` (amplitude, q, a_c,
        a_min, a_max optional); ``log-normal`` (a0, sigma, amplitude or
        volume, a_min and a_max optional); ``wd01-silicate`` and
        ``wd01-carbonaceous`` (r_v, b_c, case = "A", scale = 1; or explicit
        alpha, beta, a_t, a_c, c [, b_c]); ``table`` (file = PATH; a_min and
        a_max optional, inside the table's radii).
        Relative paths are taken from the TOML file's folder.

    Returns
    -------
    GrainModel
    """
    path = Path(path)
    doc = load_toml(path, "grain-model file")
    comps = doc.get("component")
    if not isinstance(comps, list) or not comps:
        raise InputError(f"grain-model file {str(path)!r} has no [[component]] table")
    unknown = set(doc) - {"name", "citation", "description", "component"}
    if unknown:
        raise InputError(
            f"grain-model file {str(path)!r}: unknown key(s) {sorted(unknown)}; "
            "allowed: name, citation, description, component"
        )
    components = []
    for i, spec in enumerate(comps, 1):
        try:
            components.append(build_component(spec, base_dir=path.parent))
        except InputError as exc:
            raise type(exc)(f"grain-model file {str(path)!r}, component {i}: {exc}") from None
    return GrainModel(
        components,
        name=str(doc.get("name", f"grain:{path.name}")),
        citation=str(doc.get("citation", f"user grain model {path.name}")),
        description=str(doc.get("description", "")),
    )
