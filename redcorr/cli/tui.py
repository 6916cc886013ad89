"""``redcorr tui``: start the terminal UI."""

__all__ = ["add_parser", "run"]


def add_parser(sub):
    p = sub.add_parser(
        "tui",
        help="start the terminal UI (dust, bands, catalogs, planning)",
        description=(
            "Start the interactive terminal UI. F1 shows the help; your last choices are "
            "remembered in your configuration folder."
        ),
    )
    p.set_defaults(func=run)


def run(args):
    from redcorr.tui import RedcorrApp  # noqa: PLC0415 - textual only when the UI is asked for

    RedcorrApp().run()
    return 0
