"""A general terminal plot of several named series: lines (S/N against time), points (a CMD), or both."""

from textual_plotext import PlotextPlot

__all__ = ["XYPlot"]


class XYPlot(PlotextPlot):
    """Draw named series as lines or points; keeps what it drew in :attr:`series` and :attr:`points`."""

    DEFAULT_CSS = """
    XYPlot { height: 1fr; min-height: 10; border: round $primary-darken-2; }
    """

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.series = []
        self.points = []
        self._figure = None  # the last draw()'s options: plotext rebuilds the figure from them at each render

    def render(self):
        """Build the figure afresh, then render it (plotext would apply a log scale again to kept data)."""
        if self._figure is not None:
            self._build(**self._figure)
        return super().render()

    def draw(self, series, *, xlabel="", ylabel="", title="", xlog=False, ylog=False, points=False,
             invert_y=False, hline=None):
        """Replace the plot.

        Parameters
        ----------
        series : sequence of (str, array_like, array_like) or (str, array_like, array_like, bool)
            ``(label, x, y)``, or ``(label, x, y, as_points)`` to choose the
            style of that series; non-finite points are left out.
        xlabel, ylabel, title : str
        xlog, ylog : bool
            Logarithmic axes.
        points : bool
            Scatter points instead of lines (for series without their own choice).
        invert_y : bool
            Larger y downwards (magnitudes).
        hline : float, optional
            A horizontal reference line (e.g. the target S/N).
        """
        series = [tuple(s) if len(s) == 4 else (*s, points) for s in series]
        self.series = [(str(n), [float(v) for v in x], [float(v) for v in y]) for n, x, y, _ in series]
        self.points = [bool(s[3]) for s in series]
        self._figure = dict(xlabel=xlabel, ylabel=ylabel, title=title, xlog=xlog, ylog=ylog, invert_y=invert_y,
                            hline=hline)
        self._build(**self._figure)
        self.refresh()

    def _build(self, *, xlabel, ylabel, title, xlog, ylog, invert_y, hline):
        """Give plotext the figure of :attr:`series` from a clean slate."""
        plt = self.plt
        plt.clear_data()
        plt.clear_figure()
        plt.xscale("log" if xlog else "linear")
        plt.yscale("log" if ylog else "linear")
        for (name, x, y), as_points in zip(self.series, self.points, strict=True):
            keep = [
                (a, b)
                for a, b in zip(x, y, strict=True)
                if a == a and b == b and (not xlog or a > 0) and (not ylog or b > 0)
            ]
            if not keep:
                continue
            xs, ys = zip(*keep, strict=True)
            if as_points:
                plt.scatter(xs, ys, label=name, marker="dot")
            else:
                plt.plot(xs, ys, label=name, marker="braille")
        if hline is not None:
            plt.horizontal_line(hline, color="gray")
        if invert_y:
            plt.yreverse(True)
        plt.xlabel(xlabel)
        plt.ylabel(ylabel)
        plt.title(title)
