"""Demo section: how to explore the same scenario in the terminal UI, and its key map."""

from redcorr.cli._common import print_table


def section(scn, demo_dir):
    from redcorr.tui.app import RedcorrApp  # noqa: PLC0415 - textual only for this section
    from redcorr.tui.keys import KEYS, by_screen  # noqa: PLC0415

    cloud, field = scn["cloud"], scn["field"]
    print("## The same scenario in the terminal UI: redcorr tui")
    keys = {k.actions["app"]: k.shown for k in by_screen()["app"]}
    rows = [
        {"key": keys[f"switch_mode('{name}')"], "screen": name, "what": screen.HELP}
        for name, screen in RedcorrApp.MODES.items()
    ]
    print_table(rows, ["key", "screen", "what"], wrap={"what": 80})
    print("Keys (each means the same on every screen where it works; F1 shows this list in the app):")
    rows = [
        {"key": k.shown, "on": "all" if "app" in k.actions else ", ".join(k.screens), "kind": k.kind, "does": k.doc}
        for k in KEYS
    ]
    print_table(rows, ["key", "on", "kind", "does"], wrap={"on": 22, "does": 56})
    print(
        f"Try: on Dust pick {cloud['law']}, R_V = {cloud['r_v']:g}, A_V = {cloud['a_v_typical']:g} (Enter "
        f"or leaving a field applies it); on Catalog open demo/brume_catalog.csv ({field['name']}) and run "
        "(Ctrl+S); on Plan keep the instrument 'demo'."
    )
