"""Outputs appear whole or not at all: signals, races, disk full, permissions, exit statuses.

The subprocess tests run the real ``redcorr`` command on an invented
catalog big enough to be mid-write when signalled. "Mid-write" is seen
from outside through ``/proc/PID/fd``: an unnamed (``O_TMPFILE``) file in
the output folder shows as ``FOLDER/#INODE (deleted)``, a named temporary
as ``.NAME.redcorr-PID-….part…``; once it holds bytes the run is writing.
(proc(5) and open(2), common practice, no source.)
"""

import errno
import os
import signal
import subprocess
import sys
import time

import matplotlib
import numpy as np
import pytest

from redcorr.exceptions import InputError
from redcorr.io import _atomic
from redcorr.io._atomic import atomic_folder, atomic_path, check_output_path, output_group

matplotlib.use("Agg")

ARGS = ["--band", "kw-b", "--band", "kw-v", "--mag", "kw-b=Bmag", "--mag", "kw-v=Vmag", "--ebv-col", "ebv",
        "--quiet"]
REDCORR = [sys.executable, "-m", "redcorr"]


def _catalog(path, rows):
    """An invented CSV catalog of ``rows`` rows (a block of 10 000 random rows, repeated)."""
    rng = np.random.default_rng(1)
    block = min(rows, 10_000)
    b = rng.uniform(12.0, 19.0, block)
    lines = "".join(f"{i},{x:.4f},{x - 0.5:.4f},{e:.4f}\n"
                    for i, x, e in zip(range(block), b, rng.uniform(0.0, 1.0, block), strict=True))
    with open(path, "w") as f:
        f.write("id,Bmag,Vmag,ebv\n")
        for _ in range(rows // block):
            f.write(lines)
    return path


def _start(src, out, *extra):
    return subprocess.Popen([*REDCORR, "correct", str(src), str(out), *ARGS, *extra],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def _writing(proc, folder, timeout=60.0):
    """Wait until ``proc`` holds a non-empty temporary file in ``folder``; False if it ended first."""
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline and proc.poll() is None:
        try:
            fds = os.listdir(f"/proc/{proc.pid}/fd")
        except FileNotFoundError:
            break
        for fd in fds:
            try:
                link = os.readlink(f"/proc/{proc.pid}/fd/{fd}")
                if link.startswith(f"{folder}/") and ("(deleted)" in link or ".part" in link):
                    if os.stat(f"/proc/{proc.pid}/fd/{fd}").st_size > 0:
                        return True
            except OSError:  # the descriptor closed meanwhile
                continue
        time.sleep(0.01)
    return False


@pytest.fixture(scope="module")
def big(tmp_path_factory):
    """A 600 000-row catalog: several seconds of writing, even on a fast machine."""
    return _catalog(tmp_path_factory.mktemp("big") / "in.csv", 600_000)


@pytest.mark.skipif(not os.path.isdir("/proc/self/fd"), reason="needs /proc to see the run writing")
@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM, signal.SIGHUP], ids=lambda s: s.name)
def test_signal_mid_write_leaves_nothing_and_exits_130(big, tmp_path, sig):
    out = tmp_path / "out.csv"
    proc = _start(big, out)
    assert _writing(proc, tmp_path), proc.communicate()
    proc.send_signal(sig)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130
    assert err == "redcorr: interrupted\n"  # one line, no traceback
    assert os.listdir(tmp_path) == []


@pytest.mark.skipif(not os.path.isdir("/proc/self/fd"), reason="needs /proc to see the run writing")
def test_sigkill_mid_write_leaves_nothing_stale(big, tmp_path):
    out = tmp_path / "out.csv"
    proc = _start(big, out)
    assert _writing(proc, tmp_path), proc.communicate()
    proc.kill()
    proc.communicate(timeout=60)
    # an unnamed (O_TMPFILE) file vanishes with the process; a named one carries the dead PID
    left = os.listdir(tmp_path)
    assert all(f".redcorr-{proc.pid}-" in name for name in left), left
    small = _catalog(tmp_path / "small.csv", 100)
    done = subprocess.run([*REDCORR, "correct", str(small), str(out), *ARGS], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert sorted(os.listdir(tmp_path)) == ["out.csv", "out.csv.summary.json", "small.csv"]


@pytest.mark.skipif(not os.path.isdir("/proc/self"), reason="needs /proc to see the run loading numpy")
def test_sigint_while_loading_prints_no_traceback(big, tmp_path):
    proc = _start(big, tmp_path / "out.csv")
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and proc.poll() is None:  # numpy is imported inside main()
        with open(f"/proc/{proc.pid}/maps") as maps:
            if "numpy" in maps.read():
                break
        time.sleep(0.005)
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130 and err == "redcorr: interrupted\n"
    assert os.listdir(tmp_path) == []


def test_two_runs_one_output_one_wins_whole(tmp_path):
    src = _catalog(tmp_path / "in.csv", 200_000)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    out = out_dir / "out.csv"
    runs = [_start(src, out), _start(src, out)]
    results = [(p.wait(timeout=120), p.stderr.read()) for p in runs]
    assert sorted(code for code, _ in results) == [0, 2], results
    loser = next(err for code, err in results if code == 2)
    assert "exists" in loser and str(out) in loser and len(loser.splitlines()) == 1
    with open(out) as f:
        assert sum(1 for _ in f) == 200_001  # header and every row: the winner's file, whole
    assert sorted(os.listdir(out_dir)) == ["out.csv", "out.csv.summary.json"]


def test_placement_refuses_a_file_that_appeared_meanwhile(tmp_path):
    target = tmp_path / "out.csv"
    with pytest.raises(InputError, match="exists"), atomic_path(target, overwrite=False) as tmp:
        tmp.write_text("ours\n")
        target.write_text("theirs\n")  # another process, between our check and our placement
    assert target.read_text() == "theirs\n"
    assert os.listdir(tmp_path) == ["out.csv"]


@pytest.mark.parametrize("named", [False, True], ids=["unnamed", "named"])
def test_output_and_summary_appear_together_or_not_at_all(tmp_path, named):
    out, side = tmp_path / "out.csv", tmp_path / "out.csv.summary.json"
    with pytest.raises(InputError, match="summary.json"), output_group() as group:
        with atomic_path(out, overwrite=False, group=group, named=named) as tmp:
            tmp.write_text("a,b\n1,2\n")
        with atomic_path(side, overwrite=False, group=group, named=named) as tmp:
            tmp.write_text("{}\n")
        side.write_text("theirs\n")  # the summary cannot be placed: the output is taken back
    assert os.listdir(tmp_path) == ["out.csv.summary.json"]
    with output_group() as group:
        for path in (out, tmp_path / "other.json"):
            with atomic_path(path, overwrite=False, group=group, named=named) as tmp:
                tmp.write_text("x\n")
        assert not out.exists()  # nothing is placed before the group ends
    assert out.read_text() == "x\n" and len(os.listdir(tmp_path)) == 3


def test_dataset_folder_and_summary_appear_together_or_not_at_all(tmp_path):
    out, side = tmp_path / "out", tmp_path / "out.summary.json"
    with pytest.raises(InputError, match="summary.json"), output_group() as group:
        with atomic_folder(out, group=group) as tmp:
            (tmp / "part.0.parquet").write_text("x")
        with atomic_path(side, overwrite=False, group=group) as tmp:
            tmp.write_text("{}\n")
        side.write_text("theirs\n")
    assert os.listdir(tmp_path) == ["out.summary.json"]


@pytest.mark.parametrize("named", [False, True], ids=["unnamed", "named"])
def test_overwriting_keeps_the_old_outputs_until_every_new_one_is_placed(tmp_path, monkeypatch, named):
    """The summary cannot be placed after the catalog was: the old catalog and summary come back as they were."""
    out, side = tmp_path / "out.csv", tmp_path / "out.csv.summary.json"
    old_out, old_side = b"id,kw_v\n1,15.0\n", b'{"rows": 1}\n'
    out.write_bytes(old_out)
    side.write_bytes(old_side)
    real, placing = _atomic._Pending.place, []

    def place(self):
        placing.append(self.target)
        if len(placing) == 2:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
        real(self)

    monkeypatch.setattr(_atomic._Pending, "place", place)
    with pytest.raises(OSError, match="summary.json"), output_group() as group:
        for path, text in ((out, "id,kw_v\n2,16.0\n"), (side, "{}\n")):
            with atomic_path(path, overwrite=True, group=group, named=named) as tmp:
                tmp.write_text(text)
    assert placing == [out, side]  # the catalog was placed, then taken back
    assert out.read_bytes() == old_out and side.read_bytes() == old_side
    assert sorted(os.listdir(tmp_path)) == ["out.csv", "out.csv.summary.json"]  # no temporary left
    monkeypatch.setattr(_atomic._Pending, "place", real)
    with output_group() as group:  # and without a failure, both are replaced
        for path in (out, side):
            with atomic_path(path, overwrite=True, group=group, named=named) as tmp:
                tmp.write_text("new\n")
    assert out.read_text() == side.read_text() == "new\n"
    assert sorted(os.listdir(tmp_path)) == ["out.csv", "out.csv.summary.json"]


def test_an_output_moved_aside_by_a_killed_run_is_moved_back(tmp_path):
    dead = subprocess.Popen([sys.executable, "-c", "pass"])
    dead.wait()
    aside = tmp_path / f".out.csv.redcorr-{dead.pid}-0a1b2c.old"
    aside.write_text("the old catalog\n")
    replaced = tmp_path / f".kept.csv.redcorr-{dead.pid}-3d4e5f.old"
    replaced.write_text("older\n")
    (tmp_path / "kept.csv").write_text("placed\n")  # its new file was placed: the old one goes
    check_output_path(tmp_path / "other.csv", overwrite=False)
    assert (tmp_path / "out.csv").read_text() == "the old catalog\n"
    assert (tmp_path / "kept.csv").read_text() == "placed\n"
    assert sorted(os.listdir(tmp_path)) == ["kept.csv", "out.csv"]


def test_stale_temporaries_of_dead_processes_are_removed(tmp_path):
    dead = subprocess.Popen([sys.executable, "-c", "pass"])
    dead.wait()  # reaped: its PID names no process (until reused, which a test run will not see)
    stale = [tmp_path / f".out.csv.redcorr-{dead.pid}-0a1b2c.part.csv",
             tmp_path / f".out.csv.redcorr-{dead.pid}-3d4e5f.spool"]
    stale[0].write_text("half")
    stale[1].mkdir()
    (stale[1] / "000000.parquet").write_text("x")
    alive = tmp_path / f".out.csv.redcorr-{os.getppid()}-0a1b2c.part.csv"  # a live process's: kept
    alive.write_text("busy")
    legacy = tmp_path / ".out.csv.k3j_9xqz.part.csv"  # an older version's (tempfile): its owner is unknown, kept
    legacy.write_text("maybe busy")
    check_output_path(tmp_path / "out.csv", overwrite=False)
    assert sorted(os.listdir(tmp_path)) == sorted([alive.name, legacy.name])


def test_disk_full_exits_3_naming_the_path_and_leaves_nothing(big, tmp_path):
    if os.geteuid() != 0:
        pytest.skip("mounting a small tmpfs needs root")
    folder = tmp_path / "small-disk"
    folder.mkdir()
    mounted = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=2m", "tmpfs", str(folder)], capture_output=True)
    if mounted.returncode != 0:
        pytest.skip(f"cannot mount a tmpfs here: {mounted.stderr.decode().strip()}")
    try:
        out = folder / "out.csv"
        done = subprocess.run([*REDCORR, "correct", str(big), str(out), *ARGS], capture_output=True, text=True)
        assert done.returncode == 3
        assert done.stderr == f"redcorr correct: error: {str(out)!r}: No space left on device\n"
        assert os.listdir(folder) == []
    finally:
        subprocess.run(["umount", str(folder)], check=True)


def test_new_files_follow_the_umask(tmp_path):
    from matplotlib.figure import Figure

    from redcorr.cli import main
    from redcorr.coefficients import coefficient_grid
    from redcorr.curves import get_curve
    from redcorr.io.figures import save_figure
    from redcorr.io.filters import load_band
    from redcorr.io.grids import write_coefficient_grid
    from redcorr.io.settings import save_settings

    src = _catalog(tmp_path / "in.csv", 10)
    old = os.umask(0o022)
    try:
        assert main(["correct", str(src), str(tmp_path / "out.csv"), *ARGS]) == 0
        assert main(["correct", str(src), str(tmp_path / "out.fits"), *ARGS]) == 0
        save_figure(Figure(figsize=(1, 1)), tmp_path / "plot.png")
        grid = coefficient_grid(get_curve("f99", r_v=3.1), [load_band("kw-b"), load_band("kw-v")],
                                temperatures=[5000, 8000], a_v=[0, 1])
        write_coefficient_grid(grid, tmp_path / "grid.ecsv")
        settings = save_settings({"law": "f99"}, tmp_path / "config")
    finally:
        os.umask(old)
    files = ["out.csv", "out.csv.summary.json", "out.fits", "out.fits.summary.json", "plot.png", "grid.ecsv"]
    modes = {name: oct(os.stat(tmp_path / name).st_mode & 0o777) for name in files}
    modes["settings"] = oct(os.stat(settings).st_mode & 0o777)
    assert set(modes.values()) == {"0o644"}, modes  # 0666 less umask 022 (open(2), common practice, no source)


def test_unreadable_input_exits_3_naming_the_path(tmp_path):
    src = _catalog(tmp_path / "in.csv", 10)
    src.chmod(0)
    try:
        if os.access(src, os.R_OK):
            pytest.skip("this user (root) reads files whatever their mode")
        done = subprocess.run([*REDCORR, "correct", str(src), str(tmp_path / "out.csv"), *ARGS],
                              capture_output=True, text=True)
    finally:
        src.chmod(0o644)
    assert done.returncode == 3 and str(src) in done.stderr and "ermission denied" in done.stderr
    assert len(done.stderr.splitlines()) == 1


def test_permission_denied_while_reading_is_the_environment(tmp_path, monkeypatch, capsys):
    import redcorr.io.batch
    from redcorr.cli import main

    src = _catalog(tmp_path / "in.csv", 10)

    def refuse(path, **options):  # what open(2) reports for a file without read permission
        raise PermissionError(13, "Permission denied", str(path))

    monkeypatch.setattr(redcorr.io.batch, "open_catalog", refuse)
    assert main(["correct", str(src), str(tmp_path / "out.csv"), *ARGS]) == 3
    assert capsys.readouterr().err == f"redcorr correct: error: {str(src)!r}: Permission denied\n"
    assert os.listdir(tmp_path) == ["in.csv"]


def test_a_second_signal_cannot_cut_the_clean_up_short():
    # After the first SIGINT/SIGTERM/SIGHUP the others are ignored until main() restores the
    # handlers, so the clean-up that removes temporaries runs to its end (POSIX signal
    # semantics; common practice, no source).
    from redcorr import cli

    previous = cli._catch_signals()
    try:
        with pytest.raises(KeyboardInterrupt):
            os.kill(os.getpid(), signal.SIGTERM)
            time.sleep(1.0)  # the handler runs at the next bytecode boundary
        assert all(signal.getsignal(sig) is signal.SIG_IGN for sig in previous)
        os.kill(os.getpid(), signal.SIGHUP)  # ignored: nothing is raised
    finally:
        for sig, handler in previous.items():
            signal.signal(sig, handler)
