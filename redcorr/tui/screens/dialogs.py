"""Small dialogs: confirm an action that writes a file, and ask for a file's path."""

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

__all__ = ["AskPath", "Confirm"]


class Confirm(ModalScreen[bool]):
    """Say what an action will do; dismissed with True (Enter, y, the button) or False (Escape, n).

    Parameters
    ----------
    what : str
        What will happen (e.g. the file that will be written).
    verb : str
        The label of the button that goes ahead.
    """

    BINDINGS = [Binding("escape,n", "dismiss(False)", "Cancel"), Binding("y", "dismiss(True)", "Go ahead")]

    def __init__(self, what, verb):
        super().__init__()
        self._what = what
        self._verb = verb

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self._what, id="confirm-what")
            with Horizontal(classes="dialog-buttons"):
                yield Button(self._verb, id="confirm-yes", variant="primary")
                yield Button("Cancel (Esc)", id="confirm-no")

    def on_mount(self):
        self.query_one("#confirm-yes").focus()

    def on_button_pressed(self, event):
        event.stop()
        self.dismiss(event.button.id == "confirm-yes")


class AskPath(ModalScreen[str]):
    """Ask for a file's path; dismissed with the path typed (Enter) or None (Escape)."""

    BINDINGS = [Binding("escape", "dismiss(None)", "Cancel")]

    def __init__(self, question, value="", placeholder="path"):
        super().__init__()
        self._question = question
        self._value = value
        self._placeholder = placeholder

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(self._question)
            yield Input(self._value, placeholder=self._placeholder, id="ask-path")
            yield Label("Enter opens it, Escape cancels", classes="dim")

    def on_mount(self):
        self.query_one("#ask-path").focus()

    def on_input_submitted(self, event):
        event.stop()
        if event.value.strip():
            self.dismiss(event.value.strip())
