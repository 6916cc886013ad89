"""The Textual application: routes between the screens, global key bindings, styling."""

import copy

from textual import events
from textual.app import App
from textual.widgets import Input

from redcorr.tui._guard import capture_warnings, guarded
from redcorr.tui.keys import bindings
from redcorr.tui.screens import BandsScreen, CatalogScreen, DustScreen, HelpScreen, PlanScreen
from redcorr.tui.state import Session
from redcorr.tui.widgets import CommitInput

__all__ = ["RedcorrApp"]


class RedcorrApp(App):
    """redcorr's terminal UI.

    Parameters
    ----------
    config_dir : path-like, optional
        Where the last settings are remembered; the user's config folder
        (see `redcorr.io.settings.config_dir`) if omitted. Only values a
        screen has accepted (see :meth:`accept`) are saved, shortly after they
        change and when the app exits, however it exits.
    """

    TITLE = "redcorr"
    CSS_PATH = "redcorr.tcss"
    MODES = {"dust": DustScreen, "bands": BandsScreen, "catalog": CatalogScreen, "plan": PlanScreen}
    BINDINGS = bindings("app")
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-normal"), (180, "-wide")]
    VERTICAL_BREAKPOINTS = [(0, "-short"), (40, "-tall")]

    SAVE_DELAY = 1.0
    """Seconds of quiet after the last change before the settings are saved."""

    def __init__(self, config_dir=None):
        super().__init__()
        self.config_dir = config_dir
        self.session = Session.load(config_dir)
        self._accepted = copy.deepcopy(self.session)
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
    def accept(self, *names):
        """The screen computed its result from these session fields: they are valid, remember them."""
        for name in names:
            value = getattr(self.session, name)
            setattr(self._accepted, name, list(value) if isinstance(value, list) else value)
        self.remember()

    def remember(self):
        """The session changed: save it once nothing has changed for `SAVE_DELAY` seconds."""
        if self._save_timer is not None:
            self._save_timer.stop()
        self._save_timer = self.set_timer(self.SAVE_DELAY, self.save_session)

    def save_session(self):
        """Save the accepted values now (atomically, see `redcorr.io.settings.save_settings`)."""
        if self._save_timer is not None:
            self._save_timer.stop()
            self._save_timer = None
        if self.current_mode in self.MODES:
            self._accepted.screen = self.current_mode
        saved = guarded(self._accepted.save, self.config_dir)
        if not saved.ok:  # e.g. a read-only config folder: say so, never stop the app
            self.notify(f"settings not saved: {saved.error}", severity="warning")

    # -- keys, in the order they come ------------------------------------------------------------
    async def on_event(self, event):
        """Keys for a focused text field are handled here, each in turn, in the order typed.

        Textual inserts a character in the field at once but runs a bound key
        (Backspace, Enter, Tab) only after the key has passed up through every
        container, and a paste only once the field reads its own messages, so
        keys typed fast could be reordered or lost (``Backspace 4`` giving
        ``94``; a key typed after a paste landing before it). Here all of them
        happen on arrival, with
        Textual's precedence: the app's priority keys, then a character, then
        the bindings from the field up to the app. A key that moves to another
        field (Tab) selects its text at once, so the next keys replace it.
        """
        typed = isinstance(event, (events.Key, events.Paste)) and not event.is_forwarded
        field = self.focused if typed else None
        if not isinstance(field, Input) or self.screen.maximized is not None:
            await super().on_event(event)
            return
        self.app_focus = True
        if isinstance(event, events.Paste):  # its first line, as the field would, but in turn with the keys
            if event.text:
                _type_text(field, event.text.splitlines()[0])
            return
        if await self._check_bindings(event.key, priority=True):
            return
        if event.is_printable:
            _type_text(field, event.character)
            return
        await self._check_bindings(event.key)
        if self.focused is not field and isinstance(self.focused, CommitInput):
            self.focused.action_select_all()

    def switch_mode(self, mode):
        self.remember()
        return super().switch_mode(mode)

    def action_help(self):
        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen([(name, cls.HELP) for name, cls in self.MODES.items()]))


def _type_text(field, text):
    """Put ``text`` in ``field`` as typing does: at the cursor, or in place of the selected text."""
    selection = field.selection
    if selection.is_empty:
        field.insert_text_at_cursor(text)
    else:
        field.replace(text, *selection)
