"""The redcorr terminal UI (Textual): one screen per task over the same core as the CLI.

Start it with ``redcorr tui``; see :class:`redcorr.tui.app.RedcorrApp`.
"""

from redcorr.tui.app import RedcorrApp

__all__ = ["RedcorrApp"]
