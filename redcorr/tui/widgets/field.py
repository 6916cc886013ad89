"""A labelled text input whose value counts once committed: Enter, or leaving the field."""

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.message import Message
from textual.widgets import Input, Label

__all__ = ["CommitInput", "Field"]


class CommitInput(Input):
    """An `Input` that posts `CommitInput.Committed` on Enter, or on leaving it with a changed value.

    The screens compute from committed values only, so that a value on its
    way (``2`` while typing ``21`` → ``20``) is never taken; nothing the
    screen does rewrites the text while it is typed, so no key is lost.
    Its text is not selected when it gets the focus: the app selects it when
    a key moves here (`redcorr.tui.app.RedcorrApp.on_event`), in the order of
    the keys typed.
    """

    class Committed(Message):
        """The value typed was committed (``input``, ``value``)."""

        def __init__(self, field, value):
            super().__init__()
            self.input = field
            self.value = value

        @property
        def control(self):
            return self.input

    def __init__(self, value="", **kwargs):
        super().__init__(value, select_on_focus=False, **kwargs)
        self.committed = value
        """The value last committed (or set by the screen)."""

    def commit(self, force=True, value=None):
        """Post `Committed` for ``value`` (default: the text now); unless ``force``, only when it changed."""
        value = self.value if value is None else value
        if force or value != self.committed:
            self.committed = value
            self.post_message(self.Committed(self, value))

    def show_value(self, value):
        """Set the text as the screen's own value (not a user's edit: nothing is committed)."""
        with self.prevent(Input.Changed):
            self.value = value
        self.committed = value

    def on_input_submitted(self, event):
        self.commit(value=event.value)

    def on_input_blurred(self, event):
        self.commit(force=False, value=event.value)


class Field(Horizontal):
    """``label`` beside a `CommitInput` whose id is ``input_id``.

    The screen validates the committed text through the core and gives the
    input the class ``-refused`` (outlined in red) while the value is refused.
    """

    DEFAULT_CSS = """
    Field { height: 3; width: auto; }
    Field > Label { padding: 1 1 0 1; width: auto; min-width: 8; }
    Field > Input { width: 16; }
    Field > Input.-refused { border: tall $error; }
    """

    def __init__(self, label, value, *, input_id, placeholder="", width=None, **kwargs):
        super().__init__(**kwargs)
        self._label = label
        self._value = value
        self._input_id = input_id
        self._placeholder = placeholder
        self._width = width

    def compose(self) -> ComposeResult:
        yield Label(self._label)
        field = CommitInput(self._value, id=self._input_id, placeholder=self._placeholder)
        if self._width:
            field.styles.width = self._width
        yield field
