"""What the terminal UI remembers between runs: the last choices on every screen.

The values are kept as text (strings for numbers), as committed in the
fields; the screens validate them through the core functions before use, and
the app saves only the values a screen has accepted (see
`redcorr.tui.app.RedcorrApp.accept`), so a refused value is never restored.
"""

import dataclasses

from redcorr.io.settings import load_settings, save_settings

__all__ = ["Session"]


@dataclasses.dataclass
class Session:
    """The UI's shared, remembered state.

    Attributes
    ----------
    law : str
        Curve spec given to `redcorr.io.load_curve` (law, grain model or ``file:PATH``).
    r_v : str
        R_V as typed; empty for the law's default.
    amount : str
        The dust column as typed, in the unit ``amount_kind``.
    amount_kind : str
        ``"A_V"`` or ``"E(B-V)"``.
    dust_u : str
        The Dust screen's emission view: U, the scale of the interstellar radiation field, as typed.
    bands : list of str
        Band specs for `redcorr.io.filters.load_band` (default: the demo's KW-CAM set).
    sed : str
        Source spectrum spec for `redcorr.io.spectra.load_sed`.
    band_output : str
        Where the Bands screen exports its table (``.ecsv`` or ``.csv``).
    band_dir : str
        Folder shown in the Bands screen's file tree (empty: the working folder).
    plan_instrument, plan_mag, plan_mag_band, plan_sed, plan_goal, plan_goal_value, plan_limit_snr, \
    plan_av_grid : str
        The Plan screen's inputs (defaults: the demo's invented target, demo/plan_target.toml).
    plan_list, plan_list_dust, plan_list_map, plan_list_max_time, plan_list_output : str
        The Plan screen's target list: its path (empty: none), its dust (``"av"``: the Dust screen's
        A_V; ``"map"``: the dust map ``plan_list_map``), the time limit in s (empty: none) and where
        Ctrl+S writes the plan.
    cat_input, cat_dir, cat_bands, cat_colour, cat_red_kind, cat_red_value, cat_spectrum, cat_teff, \
    cat_output, cat_overwrite
        The Catalog screen's inputs: file, folder of the file tree, bands (comma-separated),
        colour B1,B2, reddening source and value, source temperature, output and overwrite.
    cat_dist_kind, cat_dist_col, cat_dist_err : str
        For a distance-resolved map: ``"distance"`` (pc) or ``"parallax"`` (mas), its column
        and its error column (empty: none).
    cat_diagram : str
        The colour–colour diagram of a fit from the photometry: bands ``b1,b2,b3``
        (b1−b2 against b2−b3) or ``b1,b2,b3,b4``; empty for the first three bands.
    screen : str
        The screen shown last.
    """

    law: str = "f99"
    r_v: str = "3.1"
    amount: str = "1.0"
    amount_kind: str = "A_V"
    dust_u: str = "1"
    bands: list = dataclasses.field(default_factory=lambda: ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"])
    sed: str = "blackbody:5800"
    band_output: str = "band_table.ecsv"
    band_dir: str = ""
    plan_instrument: str = "demo"
    plan_mag: str = "19.0"
    plan_mag_band: str = "kw-v"
    plan_sed: str = "blackbody:5800"
    plan_goal: str = "S/N"
    plan_goal_value: str = "50"
    plan_limit_snr: str = "5"
    plan_av_grid: str = "0, 1, 2, 2.5, 4, 6"
    plan_list: str = ""
    plan_list_dust: str = "av"
    plan_list_map: str = ""
    plan_list_max_time: str = ""
    plan_list_output: str = ""
    cat_input: str = ""
    cat_dir: str = ""
    cat_bands: str = "kw-b,kw-v,kw-r,kw-i"
    cat_colour: str = "kw-b,kw-v"
    cat_red_kind: str = "ebv_column"
    cat_red_value: str = ""
    cat_spectrum: str = "fixed"
    cat_teff: str = "7000"
    cat_output: str = ""
    cat_overwrite: bool = False
    cat_dist_kind: str = "distance"
    cat_dist_col: str = ""
    cat_dist_err: str = ""
    cat_diagram: str = ""
    screen: str = "dust"

    @classmethod
    def load(cls, folder=None):
        """The remembered session; defaults for anything missing or of the wrong type."""
        saved = load_settings(folder)
        out = cls()
        for field in dataclasses.fields(cls):
            value = saved.get(field.name)
            if isinstance(value, type(getattr(out, field.name))):
                setattr(out, field.name, value)
        return out

    def save(self, folder=None):
        """Remember this session in the user's config folder."""
        return save_settings(dataclasses.asdict(self), folder)
