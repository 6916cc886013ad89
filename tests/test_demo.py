"""``redcorr demo`` runs end to end on the bundled scenario (once per session: see ``demo_output`` in conftest.py)."""


def test_demo_runs(demo_output):
    assert "Brume Field" in demo_output
    assert "kw-v" in demo_output
