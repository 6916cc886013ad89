"""A labelled text input: a caption beside an Input that the screen validates."""

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Input, Label

__all__ = ["Field"]


class Field(Horizontal):
    """``label`` beside an `Input` whose id is ``input_id``.

    The screen validates the text through the core and gives the input the
    class ``-refused`` (outlined in red) while the value is refused.
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
        field = Input(self._value, id=self._input_id, placeholder=self._placeholder)
        if self._width:
            field.styles.width = self._width
        yield field
