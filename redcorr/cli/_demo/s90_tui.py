"""Demo section: how to explore the same scenario in the terminal UI."""

from redcorr.cli._common import print_table


def section(scn, demo_dir):
    from redcorr.tui.app import RedcorrApp  # noqa: PLC0415 - textual only for this section

    cloud, field = scn["cloud"], scn["field"]
    print("## The same scenario in the terminal UI: redcorr tui")
    keys = {b.action: b.key.upper() for b in RedcorrApp.BINDINGS}
    rows = [
        {"key": keys.get(f"switch_mode('{name}')", "?"), "screen": name, "what": screen.HELP}
        for name, screen in RedcorrApp.MODES.items()
    ]
    print_table(rows, ["key", "screen", "what"], wrap={"what": 80})
    print(
        f"Try: on Dust pick {cloud['law']}, R_V = {cloud['r_v']:g}, A_V = {cloud['a_v_typical']:g}; on Catalog "
        f"open demo/brume_catalog.csv ({field['name']}) and run; on Plan keep the instrument 'demo'. "
        "F1 lists every key."
    )
