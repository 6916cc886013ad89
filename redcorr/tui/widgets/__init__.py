"""Reusable pieces of the terminal UI, each with its own DEFAULT_CSS."""

from redcorr.tui.widgets.band_grid import BandGrid
from redcorr.tui.widgets.curve_plot import CurvePlot
from redcorr.tui.widgets.field import CommitInput, Field
from redcorr.tui.widgets.file_tree import FileTree
from redcorr.tui.widgets.mapping import ColumnMapping
from redcorr.tui.widgets.name_picker import NamePicker
from redcorr.tui.widgets.status import StatusLine
from redcorr.tui.widgets.xy_plot import XYPlot

__all__ = [
    "BandGrid", "ColumnMapping", "CommitInput", "CurvePlot", "Field", "FileTree", "NamePicker", "StatusLine", "XYPlot",
]
