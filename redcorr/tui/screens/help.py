"""The help screen: what each screen is for and every key binding."""

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Markdown

__all__ = ["HelpScreen"]

HELP = """\
# redcorr — terminal UI

Move between screens with the function keys (or click them in the footer).
Tab / Shift+Tab move between fields; the mouse works everywhere.
A value the program cannot use is marked in red with a message saying what
is allowed; the previous result stays on screen until the value is fixed.
Your last choices are remembered in your configuration folder.

## Screens
{screens}

## Keys
{keys}

Press **Escape** or **F1** to close this help.
"""


class HelpScreen(ModalScreen):
    """Lists the screens and the key bindings of the app and of the screen below."""

    BINDINGS = [Binding("escape,f1", "app.pop_screen", "Close help")]

    def __init__(self, screens, bindings):
        super().__init__()
        self._screen_list = screens
        self._keys = bindings

    def compose(self) -> ComposeResult:
        screens = "\n".join(f"- **{name}** — {text}" for name, text in self._screen_list)
        keys = "\n".join(f"- `{key}` — {text}" for key, text in self._keys)
        with VerticalScroll(id="help-body"):
            yield Markdown(HELP.format(screens=screens, keys=keys))
