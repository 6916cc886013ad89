"""The help screen: what each screen is for and the whole key map, grouped by screen."""

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Markdown

from redcorr.tui.keys import KINDS, by_screen

__all__ = ["HelpScreen", "help_text"]

HELP = """\
# redcorr — terminal UI

Move between screens with the function keys (or click them in the footer).
Tab / Shift+Tab move between fields and lists; the mouse works everywhere.
A value is used once you press **Enter** or leave its field; one the program
cannot use is marked in red with a message saying what is allowed, and the
previous result stays on screen until it is fixed. Your last valid choices
are remembered in your configuration folder.

## Screens
{screens}

## Keys
Every key means the same on every screen where it works. Kinds: {kinds}.

{keys}

Press **Escape** or **F1** to close this help.
"""


def help_text(screens):
    """The help as Markdown; ``screens`` is ``[(name, what it is for), ...]``."""
    kinds = "; ".join(f"*{kind}* {text}" for kind, text in KINDS.items())
    groups = []
    for screen, keys in by_screen().items():
        title = "Everywhere" if screen == "app" else f"{screen.capitalize()} screen"
        rows = "\n".join(f"| `{k.shown}` | {k.doc} | {k.kind} |" for k in keys)
        groups.append(f"### {title}\n\n| key | does | kind |\n|---|---|---|\n{rows}\n")
    listed = "\n".join(f"- **{name}** — {text}" for name, text in screens)
    return HELP.format(screens=listed, kinds=kinds, keys="\n".join(groups))


class HelpScreen(ModalScreen):
    """Lists the screens and every key of the app (see `redcorr.tui.keys`)."""

    BINDINGS = [Binding("escape,f1", "app.pop_screen", "Close help")]

    def __init__(self, screens):
        super().__init__()
        self._screen_list = screens

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="help-body"):
            yield Markdown(help_text(self._screen_list))
