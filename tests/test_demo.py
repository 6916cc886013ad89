"""``redcorr demo`` runs end to end on the bundled scenario (once per session: see ``demo_output`` in conftest.py)."""


def test_demo_runs(demo_output):
    assert "Brume Field" in demo_output
    assert "kw-v" in demo_output


def test_demo_tables_fit_a_wide_terminal(demo_output):
    # A table's rule line (dashes under the header) is as wide as the table; 100 characters fit a
    # laptop terminal beside nothing else (common practice, no source). Prose lines wrap in any terminal.
    rules = [line for line in demo_output.splitlines() if line.startswith("---")]
    assert rules and max(len(line) for line in rules) <= 100
