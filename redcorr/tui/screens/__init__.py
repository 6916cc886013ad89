"""One screen per task; the app routes between them (see redcorr/tui/app.py)."""

from redcorr.tui.screens.bands import BandsScreen
from redcorr.tui.screens.catalog import CatalogScreen
from redcorr.tui.screens.dust import DustScreen
from redcorr.tui.screens.help import HelpScreen
from redcorr.tui.screens.plan import PlanScreen

__all__ = ["BandsScreen", "CatalogScreen", "DustScreen", "HelpScreen", "PlanScreen"]
