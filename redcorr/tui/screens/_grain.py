"""Screens that use the Dust screen's choice wait for a grain model in a worker thread, never on the UI thread."""

import contextlib

from textual import work

from redcorr.tui import _cache
from redcorr.tui._guard import guarded
from redcorr.tui._inputs import is_grain
from redcorr.tui.widgets import StatusLine

__all__ = ["GrainWait"]


class GrainWait:
    """Mixin for a `Screen` with a `StatusLine`, reading the app's remembered ``session``.

    :meth:`grain_pending` is asked before any core call that needs the
    curve; while a grain model is computed (Mie theory, seconds the first
    time) the screen says so and stays usable, and :meth:`grain_ready` is
    called on the UI thread once the model is there.
    """

    _grain_waiting = None
    _seen = None

    @property
    def session(self):
        """The app's `redcorr.tui.state.Session` (the settings every screen shares)."""
        return self.app.session

    def _shared(self):
        s = self.session
        return s.law, s.r_v, s.amount, s.amount_kind, tuple(s.bands), s.sed

    def on_screen_resume(self):
        """Back on this screen: redraw if another screen changed the dust, bands or source (not after a dialog).

        The screen's redraw sets ``_seen`` to the `_shared` values it drew with.
        """
        if self._seen != self._shared():
            self.redraw()

    def redraw(self):
        """Recompute the view from the session (`refresh_view`, unless the screen says otherwise)."""
        return self.refresh_view()

    def grain_pending(self, law):
        """True while ``law`` is a grain model not computed yet; starts (once) the worker that computes it."""
        if not is_grain(law) or _cache.grain_ready(law):
            return False
        self.query_one(StatusLine).show(f"computing grain model {law} with Mie theory … (the screen stays usable)",
                                        "warning")
        if self._grain_waiting != law:
            self._grain_waiting = law
            self.compute_grain(law)
        return True

    @work(thread=True, exclusive=True, group="grain")
    def compute_grain(self, law):
        """Compute a grain model's curve off the UI thread, then hand over to :meth:`grain_ready`."""
        outcome = guarded(_cache.grain_curve, law)
        with contextlib.suppress(RuntimeError):  # the app may have closed meanwhile
            self.app.call_from_thread(self._grain_done, law, outcome)

    def _grain_done(self, law, outcome):
        if self._grain_waiting == law:
            self._grain_waiting = None
        if not outcome.ok:
            self.query_one(StatusLine).show_outcome(outcome)
        elif law == self.session.law:
            return self.grain_ready()
        return None

    def grain_ready(self):
        """Redraw with the computed model (screens override this when redrawing is more than `refresh_view`)."""
        return self.refresh_view()
