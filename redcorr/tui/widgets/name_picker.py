"""A searchable list of names (laws, grain models, filters) with a one-line description each."""

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.message import Message
from textual.widgets import Input, OptionList
from textual.widgets.option_list import Option

__all__ = ["NamePicker"]


class NamePicker(Vertical):
    """A search box over an `OptionList`; posts `NamePicker.Picked` when a name is chosen.

    A name is chosen with Enter (in the search box: the highlighted name, else
    the first one shown) or a click; moving through the list only highlights.

    Parameters
    ----------
    entries : list of (str, str)
        ``(name, description)`` pairs; the search matches either, case-insensitively.
    accept : tuple of str
        Prefixes (e.g. ``"file:"``) of specs that are not in the list but may be
        typed in the search box and chosen with Enter.
    """

    DEFAULT_CSS = """
    NamePicker { height: 1fr; }
    NamePicker > Input { margin-bottom: 0; }
    NamePicker > OptionList { height: 1fr; }
    """

    class Picked(Message):
        """A name was chosen with Enter or a click."""

        def __init__(self, picker, name):
            super().__init__()
            self.picker = picker
            self.name = name

        @property
        def control(self):
            return self.picker

    def __init__(self, entries, *, placeholder="search…", accept=(), **kwargs):
        super().__init__(**kwargs)
        self._entries = list(entries)
        self._accept = tuple(accept)
        self._placeholder = placeholder

    def compose(self) -> ComposeResult:
        yield Input(placeholder=self._placeholder, classes="picker-search")
        yield OptionList(*self._options(""), classes="picker-list")

    def _options(self, text):
        text = text.strip().lower()
        return [
            Option(f"{name}  [dim]{desc}[/]", id=name)
            for name, desc in self._entries
            if not text or text in name.lower() or text in desc.lower()
        ]

    def _refilter(self):
        options = self.query_one(OptionList)
        options.clear_options()
        options.add_options(self._options(self.query_one(Input).value))

    def highlight(self, name):
        """Highlight ``name`` in the list if it is shown."""
        options = self.query_one(OptionList)
        try:
            options.highlighted = options.get_option_index(name)
        except Exception:  # noqa: BLE001 - a name filtered out or unknown is simply not highlighted
            pass

    def on_input_changed(self, event):
        event.stop()
        self._refilter()

    def on_input_submitted(self, event):
        event.stop()
        text = event.value.strip()
        if self._accept and text.startswith(self._accept):
            self.post_message(self.Picked(self, text))
            return
        options = self.query_one(OptionList)
        if not options.option_count:
            return
        if options.highlighted is None:
            options.highlighted = 0
        self.post_message(self.Picked(self, options.get_option_at_index(options.highlighted).id))

    def on_option_list_option_selected(self, event):
        event.stop()
        self.post_message(self.Picked(self, event.option.id))
