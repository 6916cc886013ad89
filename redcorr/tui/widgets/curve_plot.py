"""A terminal plot of A(λ)/A(V) against 1/λ, with bands marked."""

from textual_plotext import PlotextPlot

__all__ = ["CurvePlot"]


class CurvePlot(PlotextPlot):
    """Plot one curve and mark wavelengths (e.g. band pivots) on it.

    The data drawn last is kept in :attr:`series` and :attr:`marks` so that
    tests and screenshots can check what is on screen.
    """

    DEFAULT_CSS = """
    CurvePlot { height: 1fr; min-height: 12; border: round $primary-darken-2; }
    """

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.series = None
        self.marks = []

    def draw(self, label, x, y, marks=(), *, title=""):
        """Replace the plot.

        Parameters
        ----------
        label : str
            Legend of the curve.
        x, y : array_like
            Wavenumber 1/λ (µm⁻¹) and A(λ)/A(V).
        marks : sequence of (str, float, float)
            ``(name, x, y)`` points to mark and name.
        title : str
            Plot title.
        """
        self.series = (label, list(map(float, x)), list(map(float, y)))
        self.marks = [(str(n), float(mx), float(my)) for n, mx, my in marks]
        plt = self.plt
        plt.clear_data()
        plt.clear_figure()
        plt.plot(self.series[1], self.series[2], label=label, marker="braille")
        if self.marks:
            plt.scatter([m[1] for m in self.marks], [m[2] for m in self.marks], marker="o", color="orange")
            for name, mx, my in self.marks:
                plt.text(name, mx, my, color="orange")
        plt.xlabel("1/λ [µm⁻¹]")
        plt.ylabel("A(λ)/A(V)")
        plt.title(title)
        self.refresh()
