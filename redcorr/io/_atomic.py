"""Atomic output: nothing half-written is ever seen under an output's name.

Data are written to a temporary file in the target's folder and placed
under the target's name only when complete. On Linux the temporary file
is opened with ``O_TMPFILE``: it has no name, so it vanishes with the
process however that ends (even SIGKILL), and it is linked into place at
the end (``linkat`` through ``/proc/self/fd``; open(2), common practice,
no source). Where ``O_TMPFILE`` is unsupported, or a library needs a real
file name, the temporary is named ``.NAME.redcorr-PID-xxxxxx.part…``; a
later run in the same folder removes such names whose process is gone.

Without overwriting, the final placement is a hard link, which fails if
the target appeared meanwhile (POSIX ``link`` never replaces, common
practice, no source): two runs writing one output cannot silently replace
each other's file. With overwriting it is a rename (``os.replace``).

Files are created with mode 0666 less the umask, like any file a program
opens (0644 under the usual umask 022).

Outputs that belong together (a catalog and its summary) are placed
together through an :func:`output_group`: both are written first, then
placed in order; if placing the second fails, the first is removed again.
When overwriting, the files being replaced are first moved aside to
``.NAME.redcorr-PID-xxxxxx.old`` in their folder and removed only once
every new file is placed; on a failure they are moved back, so the old
outputs are never lost. (If the process is killed in between, a later run
moves such a file back when its name is free, else removes it.) While the
group is placed the targets are briefly absent.

Temporaries of redcorr versions before the PID was recorded in their names
(``.NAME.<8 random characters>.part…``, from ``tempfile``) are not removed: such a name
tells nothing of the process that made it, which may be an older redcorr
still writing, so removing it could break that run. A SIGKILLed run of such
a version leaves them for the user to delete by hand.
"""

import contextlib
import errno
import os
import re
import secrets
import shutil
from pathlib import Path

from redcorr.exceptions import InputError

__all__ = [
    "atomic_folder", "atomic_path", "check_output_path", "environment_error", "error_code", "output_group",
    "remove_stale",
]

ENVIRONMENT_ERRNOS = frozenset(
    code for code in (errno.ENOSPC, getattr(errno, "EDQUOT", None), errno.EACCES, errno.EPERM, errno.EROFS,
                      errno.EIO, errno.EFBIG, errno.EMFILE, errno.ENFILE) if code is not None
)
"""errno values that describe the environment (disk, permissions), not the user's input."""

_STALE = re.compile(r"^\.(?P<name>.+)\.redcorr-(?P<pid>\d+)-[0-9a-f]+\.(?P<kind>part|spool|old)")
_NO_LINK = frozenset({errno.EPERM, errno.EOPNOTSUPP, errno.ENOTSUP, errno.EXDEV, errno.EMLINK})


def _temp_name(target, kind, suffix=""):
    """A temporary name beside ``target`` that records the owner's PID."""
    return target.parent / f".{target.name}.redcorr-{os.getpid()}-{secrets.token_hex(3)}.{kind}{suffix}"


def _alive(pid):
    """True if process ``pid`` exists (signal 0 probes without sending; common practice, no source).

    Elsewhere than POSIX (where signal 0 means something else) every process counts as alive.
    """
    if os.name != "posix":
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # exists, owned by someone else
        return True
    return True


def remove_stale(folder):
    """Remove temporaries left in ``folder`` by redcorr processes that no longer run.

    Only names of the form ``.NAME.redcorr-PID-xxxxxx.part…`` (also
    ``.spool`` and ``.old``) whose PID is not a live process are touched.
    An ``.old`` file is an output moved aside while an :func:`output_group`
    was placed: it is moved back to ``NAME`` if that name is free (the run
    died before placing the new output), else removed.

    Parameters
    ----------
    folder : path-like
    """
    with contextlib.suppress(OSError), os.scandir(folder or ".") as entries:
        for entry in entries:
            match = _STALE.match(entry.name)
            if match is None or int(match.group("pid")) == os.getpid() or _alive(int(match.group("pid"))):
                continue
            if match.group("kind") == "old" and _restore(entry.path, os.path.join(folder or ".", match.group("name"))):
                continue
            _remove(entry.path)


def _remove(path):
    """Remove a file or folder; a missing one is no error."""
    if os.path.isdir(path) and not os.path.islink(path):
        shutil.rmtree(path, ignore_errors=True)
    else:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(path)


def _restore(old, target):
    """Move ``old`` back to ``target`` unless something is there; True if moved."""
    if os.path.lexists(target):
        return False
    try:
        os.rename(old, target)
    except OSError:
        return False
    return True


def _exists_error(target, name="output"):
    return InputError(f"{name}={str(target)!r} exists; choose another name or allow overwriting "
                      "(overwrite=True; --overwrite on the command line)")


def environment_error(exc, path):
    """``exc`` as an OSError naming ``path``, if it reports a problem of the environment; else None.

    pyarrow reports failed writes as ``OSError`` with the errno only in the
    message (``[errno 28] No space left on device``) and without the path.
    """
    code = error_code(exc)
    if code not in ENVIRONMENT_ERRNOS:
        return None
    return OSError(code, os.strerror(code), str(path))


def error_code(exc):
    """The errno of an OSError, also when pyarrow gives it only in the message; None otherwise."""
    if not isinstance(exc, OSError):
        return None
    if exc.errno is not None:
        return exc.errno
    found = re.search(r"\[errno (\d+)\]", str(exc), re.IGNORECASE)
    return int(found.group(1)) if found else None


def check_output_path(path, *, overwrite=True, inputs=(), name="output"):
    """Validate an output path before any work is done.

    Also removes stale temporaries of dead redcorr processes from the
    output's folder (:func:`remove_stale`).

    Parameters
    ----------
    path : path-like
        Where the output will go.
    overwrite : bool
        If False, an existing file is refused.
    inputs : iterable of path-like
        Input files; the output may never be one of them.
    name : str
        What the path is called in messages (an argument or option name).

    Returns
    -------
    pathlib.Path
    """
    out = Path(path)
    for src in inputs:
        if Path(src).exists() and out.exists() and os.path.samefile(out, src):
            raise InputError(f"{name}={str(path)!r} is an input file; redcorr never writes over its input")
    if out.exists() and not overwrite:
        raise _exists_error(path, name)
    if not out.parent.exists():
        raise InputError(f"{name}={str(path)!r}: folder {str(out.parent)!r} does not exist")
    remove_stale(out.parent)
    return out


class _Pending:
    """A complete temporary file waiting to be placed under its target's name."""

    def __init__(self, target, suffix, overwrite, named):
        self.target, self.overwrite, self.fd, self.tmp = target, overwrite, None, None
        folder = str(target.parent)
        flag = getattr(os, "O_TMPFILE", None)
        if not named and flag is not None and os.path.isdir("/proc/self/fd"):
            try:
                self.fd = os.open(folder, flag | os.O_RDWR, 0o666)
            except OSError as exc:  # file system or kernel without O_TMPFILE
                if exc.errno not in (errno.EOPNOTSUPP, errno.EISDIR, errno.EINVAL, errno.ENOTSUP):
                    raise
        if self.fd is None:
            self.tmp = _temp_name(target, "part", suffix)
            os.close(os.open(self.tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666))

    @property
    def path(self):
        """Where the writer writes: ``/proc/self/fd/N`` for an unnamed file, else the temporary name."""
        return Path(f"/proc/self/fd/{self.fd}") if self.fd is not None else self.tmp

    def _link(self, source, dest):
        """Hard-link ``source`` to ``dest``; an unnamed file through ``linkat(AT_SYMLINK_FOLLOW)``.

        ``os.link`` calls plain ``link`` (which does not follow the
        ``/proc/self/fd`` link) unless a directory descriptor is given.
        """
        if self.fd is None:
            os.link(source, dest)
            return
        proc = os.open("/proc", os.O_RDONLY | os.O_DIRECTORY)
        try:
            os.link(f"self/fd/{self.fd}", dest, src_dir_fd=proc, follow_symlinks=True)
        finally:
            os.close(proc)

    def place(self):
        """Put the file under the target's name; without overwriting, refuse an existing target."""
        source = self.path
        if self.fd is not None and self.overwrite:  # a name first, so that the rename replaces atomically
            self.tmp = _temp_name(self.target, "part")
            self._link(source, self.tmp)
            source = self.tmp
        if self.overwrite:
            os.replace(source, self.target)
        else:
            try:
                self._link(source, self.target)
            except FileExistsError:
                raise _exists_error(self.target) from None
            except OSError as exc:  # no hard links here: check, then rename (a small race remains)
                if exc.errno not in _NO_LINK or self.fd is not None:
                    raise
                if self.target.exists():
                    raise _exists_error(self.target) from None
                os.replace(source, self.target)
        self.discard()

    def discard(self):
        """Drop the temporary file (a no-op once placed)."""
        if self.fd is not None:
            os.close(self.fd)
            self.fd = None
        if self.tmp is not None:
            with contextlib.suppress(FileNotFoundError):
                os.unlink(self.tmp)
            self.tmp = None


class _PendingFolder:
    """A complete temporary folder waiting to be placed under its target's name."""

    def __init__(self, target, overwrite):
        self.target, self.overwrite = target, overwrite
        self.tmp = _temp_name(target, "part")
        self.tmp.mkdir()

    def place(self):
        """Rename the folder onto the target; an existing target is replaced only if overwriting."""
        if self.target.exists():
            if not self.overwrite:
                raise _exists_error(self.target)
            old = _temp_name(self.target, "old")
            os.replace(self.target, old)
            os.replace(self.tmp, self.target)
            shutil.rmtree(old, ignore_errors=True)
        else:
            os.replace(self.tmp, self.target)
        self.tmp = None

    def discard(self):
        """Drop the temporary folder (a no-op once placed)."""
        if self.tmp is not None:
            shutil.rmtree(self.tmp, ignore_errors=True)
            self.tmp = None


class _Group:
    """Outputs written apart and placed together (see :func:`output_group`)."""

    def __init__(self):
        self.pending = []

    def place(self):
        """Place every pending output, or none: on a failure the folder is put back as it was.

        Outputs being overwritten are moved aside first and removed only
        once every new one is placed; on a failure the new ones are removed
        and the old ones moved back.
        """
        aside, placed, current = [], [], None
        try:
            for item in self.pending:
                current = item.target
                if item.overwrite and os.path.lexists(current):
                    old = _temp_name(current, "old")
                    os.replace(current, old)
                    aside.append((current, old))
            for item in self.pending:
                current = item.target
                item.place()
                placed.append(current)
        except BaseException as exc:
            for target in placed:
                _remove(target)
            for target, old in reversed(aside):
                with contextlib.suppress(OSError):  # else a later run moves it back (remove_stale)
                    os.replace(old, target)
            problem = environment_error(exc, current)
            if problem is not None:
                raise problem from exc
            raise
        finally:
            self.discard()
        for _, old in aside:
            _remove(old)

    def discard(self):
        for item in self.pending:
            item.discard()
        self.pending.clear()


@contextlib.contextmanager
def output_group():
    """Place several outputs together, or none of them.

    Pass the yielded object as ``group=`` to :func:`atomic_path`: each file
    is then written but not placed. When the block ends without error they
    are placed in the order written; if one cannot be placed (it appeared
    meanwhile, the disk is full), those already placed are removed again.
    If the block raises, nothing is placed.
    """
    group = _Group()
    try:
        yield group
    except BaseException:
        group.discard()
        raise
    group.place()


@contextlib.contextmanager
def _placed(pending, target, group):
    """Run the block; then place ``pending`` (or hand it to ``group``); discard it on any failure.

    A failure of the environment (disk full, permissions) is re-raised naming ``target``.
    """
    try:
        yield
        if group is None:
            pending.place()
        else:
            group.pending.append(pending)
    except BaseException as exc:
        pending.discard()
        problem = environment_error(exc, target)
        if problem is not None:
            raise problem from exc
        raise


@contextlib.contextmanager
def atomic_path(path, suffix=None, *, overwrite=True, group=None, named=False):
    """Yield a temporary path for ``path``; place it under ``path`` on success.

    If the block raises (including KeyboardInterrupt), the temporary file is
    removed and ``path`` is left untouched, so no partial output is ever seen.

    Parameters
    ----------
    path : path-like
        The target.
    suffix : str, optional
        Suffix of a named temporary (default the target's), for libraries
        that choose a format from it.
    overwrite : bool
        Replace an existing target. If False and the target exists when the
        file is placed, :class:`~redcorr.exceptions.InputError` is raised
        and the new file is dropped.
    group : object from :func:`output_group`, optional
        Place the file when the group ends instead of at the end of this block.
    named : bool
        Give the temporary a real name even where ``O_TMPFILE`` works (for
        writers that delete, or reopen, their path).

    Raises
    ------
    OSError
        With the target's path, when the environment refuses the write
        (disk full, permission denied, read-only file system).
    """
    target = Path(path)
    suffix = target.suffix if suffix is None else suffix
    remove_stale(target.parent)
    try:
        pending = _Pending(target, suffix, overwrite, named)
    except OSError as exc:
        problem = environment_error(exc, target)
        if problem is not None:
            raise problem from exc
        raise
    with _placed(pending, target, group):
        yield pending.path


@contextlib.contextmanager
def atomic_folder(path, *, overwrite=False, group=None):
    """Yield a temporary folder beside ``path``; move it onto ``path`` on success.

    Used for Parquet datasets written by several workers. An existing
    ``path`` is refused unless ``overwrite``; then it is replaced only after
    the new folder is complete. The temporary folder's name records the
    owner's PID, so that a later run removes it if the process was killed.

    Parameters
    ----------
    path : path-like
        The target folder.
    overwrite : bool
        Replace an existing target.
    group : object from :func:`output_group`, optional
        Place the folder when the group ends instead of at the end of this block.
    """
    target = Path(path)
    if target.exists() and not overwrite:
        raise _exists_error(path)
    if not target.parent.exists():
        raise InputError(f"output={str(path)!r}: folder {str(target.parent)!r} does not exist")
    remove_stale(target.parent)
    pending = _PendingFolder(target, overwrite)
    with _placed(pending, target, group):
        yield pending.tmp
