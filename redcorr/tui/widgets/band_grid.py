"""A table of band-integrated extinction: λ_eff, A_b, A_b/A_V, A_b/E(B-V)."""

from textual.widgets import DataTable

from redcorr.band_summary import BAND_SUMMARY_COLUMNS

__all__ = ["BandGrid"]

_HEADERS = {
    "band": "band",
    "lambda_eff_um": "λ_eff [µm]",
    "A_band": "A_b [mag]",
    "A_over_AV": "A_b/A_V",
    "A_over_EBV": "A_b/E(B-V)",
}


class BandGrid(DataTable):
    """Shows the rows of `redcorr.band_summary.band_summary` as they are; :attr:`rows_shown` keeps them."""

    DEFAULT_CSS = """
    BandGrid { height: auto; max-height: 12; }
    """

    def __init__(self, **kwargs):
        super().__init__(cursor_type="row", zebra_stripes=True, **kwargs)
        self.rows_shown = []

    def on_mount(self):
        for key in BAND_SUMMARY_COLUMNS:
            self.add_column(_HEADERS[key], key=key)

    def show_rows(self, rows):
        """Replace the table's rows (dicts keyed by `BAND_SUMMARY_COLUMNS`)."""
        self.rows_shown = [dict(r) for r in rows]
        self.clear()
        for row in self.rows_shown:
            self.add_row(
                row["band"],
                f"{row['lambda_eff_um']:.4f}",
                f"{row['A_band']:.4f}",
                f"{row['A_over_AV']:.4f}",
                f"{row['A_over_EBV']:.4f}",
            )
