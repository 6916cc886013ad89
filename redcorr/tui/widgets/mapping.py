"""Column mapping: for each band, its magnitude and error columns, chosen from the file's columns."""

from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.widgets import Label, Select

__all__ = ["ColumnMapping"]


class ColumnMapping(Vertical):
    """One row per band: a magnitude-column and an error-column `Select` (blank error = none)."""

    DEFAULT_CSS = """
    ColumnMapping { height: auto; padding: 0 1; }
    ColumnMapping > Horizontal { height: 3; }
    ColumnMapping Label { width: 12; padding: 1 1 0 0; }
    ColumnMapping Select { width: 24; }
    """

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self._columns = []
        self._mapping = {}

    async def set_mapping(self, columns, mapping):
        """Show ``mapping`` (band → (mag column or None, error column or None)) over ``columns``."""
        self._columns = list(columns)
        self._mapping = dict(mapping)
        await self.remove_children()
        rows = []
        options = [(c, c) for c in self._columns]
        for i, (band, (mag, err)) in enumerate(self._mapping.items()):
            rows.append(
                Horizontal(
                    Label(band),
                    Select(options, value=mag if mag else Select.NULL, prompt="magnitude column", id=f"map-mag-{i}"),
                    Select(options, value=err if err else Select.NULL, prompt="no error column", id=f"map-err-{i}"),
                )
            )
        await self.mount_all(rows)

    def compose(self) -> ComposeResult:
        return iter(())

    @property
    def mapping(self):
        """The current choice: band → (mag column or None, error column or None)."""
        out = {}
        for i, band in enumerate(self._mapping):
            values = []
            for kind in ("mag", "err"):
                try:
                    value = self.query_one(f"#map-{kind}-{i}", Select).value
                except Exception:  # noqa: BLE001 - rows not mounted yet: keep the given mapping
                    value = self._mapping[band][0 if kind == "mag" else 1]
                values.append(None if value in (Select.NULL, None) else value)
            out[band] = tuple(values)
        return out
