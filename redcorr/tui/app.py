"""The Textual application: routes between the screens, global key bindings, styling."""

from textual.app import App
from textual.binding import Binding

from redcorr.tui._guard import capture_warnings
from redcorr.tui.screens import BandsScreen, CatalogScreen, DustScreen, HelpScreen, PlanScreen
from redcorr.tui.state import Session

__all__ = ["RedcorrApp"]


class RedcorrApp(App):
    """redcorr's terminal UI.

    Parameters
    ----------
    config_dir : path-like, optional
        Where the last settings are remembered; the user's config folder
        (see `redcorr.io.settings.config_dir`) if omitted.
    """

    TITLE = "redcorr"
    CSS_PATH = "redcorr.tcss"
    MODES = {"dust": DustScreen, "bands": BandsScreen, "catalog": CatalogScreen, "plan": PlanScreen}
    BINDINGS = [
        Binding("f1", "help", "Help"),
        Binding("f2", "switch_mode('dust')", "Dust"),
        Binding("f3", "switch_mode('bands')", "Bands"),
        Binding("f4", "switch_mode('catalog')", "Catalog"),
        Binding("f5", "switch_mode('plan')", "Plan"),
        Binding("ctrl+q", "quit", "Quit", priority=True),
    ]

    def __init__(self, config_dir=None):
        super().__init__()
        self.config_dir = config_dir
        self.session = Session.load(config_dir)

    def on_load(self):
        self._capture = capture_warnings()
        self._capture.__enter__()

    def on_unmount(self):
        self._capture.__exit__(None, None, None)

    def on_mount(self):
        self.switch_mode(self.session.screen if self.session.screen in self.MODES else "dust")

    def action_help(self):
        if isinstance(self.screen, HelpScreen):
            return
        screens = [(name, cls.HELP) for name, cls in self.MODES.items()]
        keys = [(b.key, b.description) for b in self.BINDINGS]
        keys += [(b.key, b.description) for b in getattr(self.screen, "BINDINGS", ())]
        self.push_screen(HelpScreen(screens, keys))

    async def action_quit(self):
        self.session.screen = self.current_mode
        self.session.save(self.config_dir)
        self.exit()
