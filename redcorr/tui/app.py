"""The Textual application: routes between the screens, global key bindings, styling."""

from textual.app import App
from textual.binding import Binding

from redcorr.tui._guard import capture_warnings, guarded
from redcorr.tui.screens import BandsScreen, CatalogScreen, DustScreen, HelpScreen, PlanScreen
from redcorr.tui.state import Session

__all__ = ["RedcorrApp"]


class RedcorrApp(App):
    """redcorr's terminal UI.

    Parameters
    ----------
    config_dir : path-like, optional
        Where the last settings are remembered; the user's config folder
        (see `redcorr.io.settings.config_dir`) if omitted. They are saved
        shortly after any change and when the app exits, however it exits.
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

    SAVE_DELAY = 1.0
    """Seconds of quiet after the last change before the settings are saved."""

    def __init__(self, config_dir=None):
        super().__init__()
        self.config_dir = config_dir
        self.session = Session.load(config_dir)
        self._save_timer = None

    def on_load(self):
        self._capture = capture_warnings()
        self._capture.__enter__()

    def on_unmount(self):
        self.save_session()  # every way out of the app (Ctrl+Q, exit(), an error) passes here
        self._capture.__exit__(None, None, None)

    def on_mount(self):
        self.switch_mode(self.session.screen if self.session.screen in self.MODES else "dust")

    # -- remembering the settings -----------------------------------------------------------------
    def remember(self):
        """The session changed: save it once nothing has changed for `SAVE_DELAY` seconds."""
        if self._save_timer is not None:
            self._save_timer.stop()
        self._save_timer = self.set_timer(self.SAVE_DELAY, self.save_session)

    def save_session(self):
        """Save the session now (atomically, see `redcorr.io.settings.save_settings`)."""
        if self._save_timer is not None:
            self._save_timer.stop()
            self._save_timer = None
        if self.current_mode in self.MODES:
            self.session.screen = self.current_mode
        saved = guarded(self.session.save, self.config_dir)
        if not saved.ok:  # e.g. a read-only config folder: say so, never stop the app
            self.notify(f"settings not saved: {saved.error}", severity="warning")

    # Field changes bubble up from every screen; other changes call remember() themselves.
    def on_input_changed(self):
        self.remember()

    def on_select_changed(self):
        self.remember()

    def on_checkbox_changed(self):
        self.remember()

    def on_name_picker_picked(self):
        self.remember()

    def switch_mode(self, mode):
        self.remember()
        return super().switch_mode(mode)

    def action_help(self):
        if isinstance(self.screen, HelpScreen):
            return
        screens = [(name, cls.HELP) for name, cls in self.MODES.items()]
        keys = [(b.key, b.description) for b in self.BINDINGS]
        keys += [(b.key, b.description) for b in getattr(self.screen, "BINDINGS", ())]
        self.push_screen(HelpScreen(screens, keys))
