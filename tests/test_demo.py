"""``redcorr demo`` runs end to end on the bundled scenario."""

from redcorr.cli import main


def test_demo_runs(capsys):
    assert main(["demo"]) == 0
    out = capsys.readouterr().out
    assert "Brume Field" in out
    assert "kw-v" in out
