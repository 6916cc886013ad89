"""One line under a screen's inputs that says what is wrong, or what to beware of."""

from textual.reactive import reactive
from textual.widgets import Static

__all__ = ["StatusLine"]


class StatusLine(Static):
    """Shows the latest validation error or warnings; empty when all is well."""

    DEFAULT_CSS = """
    StatusLine {
        height: auto;
        min-height: 1;
        padding: 0 1;
        color: $text-muted;
    }
    StatusLine.-error { color: $error; text-style: bold; }
    StatusLine.-warning { color: $warning; }
    """

    message = reactive("")
    """The text shown."""
    severity = reactive("information")
    """``"information"``, ``"warning"`` or ``"error"``."""

    def show(self, message, severity="information"):
        """Show ``message`` with a severity."""
        self.severity = severity
        self.message = message

    def show_outcome(self, outcome, done=""):
        """Show a guarded call's error, else its warnings, else ``done``."""
        if outcome.error:
            self.show(outcome.error, "error")
        elif outcome.warnings:
            self.show("warning: " + "; ".join(outcome.warnings), "warning")
        else:
            self.show(done)

    def watch_message(self, message):
        self.update(message)

    def watch_severity(self, severity):
        self.set_class(severity == "error", "-error")
        self.set_class(severity == "warning", "-warning")
