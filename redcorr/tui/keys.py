"""The terminal UI's key map, written down once: every key, what it does and on which screens.

Each key has one meaning in the whole app, of one kind (:data:`KINDS`): a key
that moves to a field on one screen never writes a file on another. The
app's and the screens' Textual bindings, the help screen (F1) and the demo's
key table are all made from :data:`KEYS`.
"""

import dataclasses

from textual.binding import Binding

__all__ = ["KEYS", "KINDS", "SCREENS", "Key", "bindings", "by_screen"]

SCREENS = ("dust", "bands", "catalog", "plan")
"""The app's screens (its Textual modes), in the order of their function keys."""

KINDS = {
    "app": "the app: help, screens, quit",
    "focus": "moves to a field or list (changes nothing)",
    "edit": "changes a choice on the screen",
    "read": "reads a file",
    "write": "writes a file (shows what it will write and asks first)",
    "stop": "stops what is running",
}
"""What a key may do; a key has one kind everywhere."""


@dataclasses.dataclass(frozen=True)
class Key:
    """One entry of the key map.

    Attributes
    ----------
    key : str
        Textual key name(s), comma-separated (``"ctrl+s"``).
    label : str
        What it does, in a word or two (the footer shows it).
    doc : str
        What it does, in a sentence (the help and the demo show it).
    kind : str
        One of :data:`KINDS`.
    actions : dict
        Screen name (or ``"app"``) → Textual action run on that screen.
    priority : bool
        Taken before the focused widget sees the key (Quit).
    """

    key: str
    label: str
    doc: str
    kind: str
    actions: dict
    priority: bool = False

    @property
    def screens(self):
        """The screens the key works on (all of them for an app key)."""
        return SCREENS if "app" in self.actions else tuple(s for s in SCREENS if s in self.actions)

    @property
    def shown(self):
        """The key as the help and the demo print it: ``Ctrl+S``, ``F1``."""
        return ", ".join("+".join(p.capitalize() for p in k.split("+")) for k in self.key.split(","))


KEYS = (
    Key("f1", "Help", "this help: every key, by screen", "app", {"app": "help"}),
    Key("f2", "Dust", "the Dust screen", "app", {"app": "switch_mode('dust')"}),
    Key("f3", "Bands", "the Bands screen", "app", {"app": "switch_mode('bands')"}),
    Key("f4", "Catalog", "the Catalog screen", "app", {"app": "switch_mode('catalog')"}),
    Key("f5", "Plan", "the Plan screen", "app", {"app": "switch_mode('plan')"}),
    Key("ctrl+q", "Quit", "quit (the last valid choices are remembered)", "app", {"app": "quit"}, priority=True),
    Key("ctrl+f", "Find", "to the search box of the list", "focus",
        {"dust": "focus('#dust-picker .picker-search')", "bands": "focus('#bands-picker .picker-search')"}),
    Key("ctrl+r", "R_V", "to the R_V field", "focus", {"dust": "focus('#r-v')"}),
    Key("ctrl+g", "A_V", "to the dust column field (A_V or E(B-V))", "focus", {"dust": "focus('#amount')"}),
    Key("ctrl+l", "Emission", "show the grain model's temperatures and emission in the interstellar field "
        "times U, and to the U field; again: back to the curve", "edit", {"dust": "toggle_emission"}),
    Key("ctrl+b", "Bands", "to the bands field (Bands: a band to add; Plan: the band of the magnitude)", "focus",
        {"bands": "focus('#band-spec')", "catalog": "focus('#cat-bands')", "plan": "focus('#plan-mag-band')"}),
    Key("ctrl+y", "Source", "to the source spectrum field (Catalog: its temperature)", "focus",
        {"bands": "focus('#sed')", "catalog": "focus('#cat-teff')", "plan": "focus('#plan-sed')"}),
    Key("ctrl+t", "Files", "to the file tree", "focus",
        {"bands": "focus('#bands-tree')", "catalog": "focus('#cat-tree')"}),
    Key("delete", "Remove", "remove the band highlighted in the chosen list", "edit", {"bands": "remove_band"}),
    Key("ctrl+o", "Open…", "open a file (Bands: a filter curve; Catalog: the catalog; Plan: a target list); "
        "asks for the path when none is given", "read", {"bands": "open", "catalog": "open", "plan": "open"}),
    Key("ctrl+s", "Write…", "write the result (Bands: export the table; Catalog: run the correction; Plan: the "
        "target list's plan); says what it will write and asks first", "write",
        {"bands": "export", "catalog": "run", "plan": "write_list"}),
    Key("escape", "Cancel run", "cancel the running correction (nothing is written)", "stop", {"catalog": "cancel"}),
)
"""The key map of the whole app."""


def bindings(screen):
    """The Textual bindings of ``screen`` (a name of :data:`SCREENS`, or ``"app"``) from :data:`KEYS`.

    A focused widget keeps its own use of a key (Delete in a field), except
    for a key with ``priority`` (Quit).
    """
    return [
        Binding(k.key, k.actions[screen], k.label, priority=k.priority)
        for k in KEYS
        if screen in k.actions
    ]


def by_screen():
    """``{screen: [Key, ...]}``: the keys that work on each screen (``"app"`` holds those of every screen)."""
    out = {"app": [k for k in KEYS if "app" in k.actions]}
    for screen in SCREENS:
        out[screen] = [k for k in KEYS if screen in k.actions]
    return out
