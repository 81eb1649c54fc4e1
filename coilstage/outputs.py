"""Files a command writes: all or nothing, never over one of the user's inputs.

Every output goes first to a hidden temporary file in its target folder (same file system, so the
final :func:`os.replace` is atomic on POSIX and Windows) and is renamed into place only when the
whole command has succeeded. A failed run (a bad drawing, a full disk, Ctrl-C) therefore leaves an
earlier report as it was and no half-written file behind.

Inputs (the drawing, the user's own tables) are recognised by identity (device and inode, as
:func:`os.path.samefile` does), not by name: a hard link, a symbolic link or ``./x/../drawing.toml``
is still the drawing.

A target that exists and is not a regular file (``/dev/null``, ``/dev/stdout``, a named pipe) is a
stream: it is written in place, since it cannot be renamed over and holds nothing to lose.

The meaning of ``-o`` across commands: a *file* for a command that writes one report (``check``),
a *folder* for a command that writes several files (``waveforms``, ``descent``, ``field``). A folder
is created if its parent exists; a missing parent is an error, not a silent ``mkdir -p``.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
import tempfile
from collections.abc import Iterable, Iterator
from pathlib import Path

from coilstage.errors import CoilstageError


class OutputError(CoilstageError):
    """An output that cannot be written: ``reason`` says which file and why. The CLI prints it and
    exits 2 (like bad input); nothing is left behind."""

    def __init__(self, path: str | os.PathLike, reason: str) -> None:
        self.path = str(path)
        self.reason = reason
        super().__init__(f"{self.path}: {reason}")


_REASONS = {
    errno.ENOSPC: "the disk is full",
    errno.EDQUOT: "the disk quota is exhausted",
    errno.EACCES: "permission denied",
    errno.EPERM: "operation not permitted",
    errno.EROFS: "the file system is read-only",
    errno.ENOENT: "the folder does not exist",
    errno.ENOTDIR: "a part of the path is not a folder",
    errno.EISDIR: "it is a folder, not a file",
    errno.ENAMETOOLONG: "the name is too long",
    errno.EXDEV: "the temporary file is on another file system",
}


def describe(exc: OSError) -> str:
    """Plain words for an operating-system error (no errno numbers, no traceback)."""
    return _REASONS.get(exc.errno or -1, exc.strerror or type(exc).__name__)


def same_file(a: str | os.PathLike, b: str | os.PathLike) -> bool:
    """True if ``a`` and ``b`` are the same file on disk (device and inode); False if either does not
    exist. Follows symbolic links, so a link to the drawing is the drawing."""
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def _is_stream(path: Path) -> bool:
    """An existing target that is not a regular file (a device, a pipe, a socket)."""
    try:
        mode = os.stat(path).st_mode
    except OSError:
        return False
    return not stat.S_ISREG(mode) and not stat.S_ISDIR(mode)


def check_target(path: str | os.PathLike, protected: Iterable[str | os.PathLike] = ()) -> Path:
    """``path`` as a file to be written, or :class:`OutputError` with the reason: it is one of the
    ``protected`` inputs (by identity), a folder, or its folder is missing or not a folder."""
    p = Path(path)
    for q in protected:
        if same_file(p, q):
            raise OutputError(p, f"this is the input {q} itself (the same file on disk); choose another name")
    if p.is_dir():
        raise OutputError(p, "it is a folder; give a file name (for example report.json inside it)")
    if _is_stream(p):
        return p
    folder = p.parent
    if not folder.exists():
        raise OutputError(p, f"the folder {folder} does not exist")
    if not folder.is_dir():
        raise OutputError(p, f"{folder} is not a folder")
    return p


def check_folder(folder: str | os.PathLike) -> tuple[Path, bool]:
    """``folder`` as an output folder and whether it must still be created; :class:`OutputError`
    if it is a file, or its parent is missing."""
    f = Path(folder)
    if f.exists():
        if not f.is_dir():
            raise OutputError(f, "it is a file, not a folder (this command writes several files into a folder)")
        return f, False
    parent = f.parent
    if not parent.is_dir():
        raise OutputError(f, f"its parent folder {parent} does not exist (create it first)")
    return f, True


def _mode_for(target: Path) -> int:
    """Permissions of the final file: those of the file it replaces, else 0o666 less the umask."""
    try:
        return stat.S_IMODE(os.stat(target).st_mode)
    except OSError:
        mask = os.umask(0)
        os.umask(mask)
        return 0o666 & ~mask


class Staging:
    """Temporary files for a set of targets, committed together (see :func:`staged`)."""

    def __init__(self, targets: list[Path]) -> None:
        self.targets = targets
        self.temps: list[Path] = []
        self._streams: list[bool] = []

    def _make(self) -> None:
        for t in self.targets:
            if _is_stream(t):
                self.temps.append(t)
                self._streams.append(True)
                continue
            # keep the extension last: writers such as matplotlib choose the format from it
            try:
                fd, name = tempfile.mkstemp(prefix=f".{t.stem}.", suffix=t.suffix or ".part", dir=t.parent)
            except OSError as exc:
                raise OutputError(t, f"cannot write here: {describe(exc)}") from None
            os.close(fd)
            self.temps.append(Path(name))
            self._streams.append(False)

    def _commit(self) -> None:
        for tmp, target, stream in zip(self.temps, self.targets, self._streams, strict=True):
            if stream:
                continue
            try:
                with open(tmp, "rb+") as fh:
                    os.fsync(fh.fileno())
                os.chmod(tmp, _mode_for(target))
                os.replace(tmp, target)
            except OSError as exc:
                raise OutputError(target, f"cannot write it: {describe(exc)}") from None

    def _discard(self) -> None:
        for tmp, stream in zip(self.temps, self._streams, strict=False):
            if not stream:
                with contextlib.suppress(OSError):
                    os.unlink(tmp)


@contextlib.contextmanager
def staged(targets: Iterable[str | os.PathLike], protected: Iterable[str | os.PathLike] = ()) -> Iterator[list[Path]]:
    """Temporary paths for ``targets``, renamed onto them when the block ends without an exception.

    On any exception (including KeyboardInterrupt) every temporary file is removed and the targets
    are left as they were. An :class:`OSError` raised inside the block (a full disk) becomes an
    :class:`OutputError` naming the target. Each temporary path keeps its target's extension.

    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp()); out = d / "r.txt"
    >>> with staged([out]) as (tmp,):
    ...     _ = tmp.write_text("hello")
    >>> out.read_text(), sorted(p.name for p in d.iterdir())
    ('hello', ['r.txt'])
    """
    prot = list(protected)
    paths = [check_target(t, prot) for t in targets]
    s = Staging(paths)
    try:
        s._make()
        try:
            yield list(s.temps)
        except OSError as exc:
            named = exc.filename
            which = next((t for t, tmp in zip(paths, s.temps, strict=False) if named and same_name(named, tmp)), None)
            target = which or (paths[0] if len(paths) == 1 else paths[0].parent)
            raise OutputError(target, f"cannot write it: {describe(exc)}") from None
        s._commit()
    except BaseException:
        s._discard()
        raise


def same_name(a: str | os.PathLike, b: str | os.PathLike) -> bool:
    return os.path.abspath(a) == os.path.abspath(b)


def write_text(target: str | os.PathLike, text: str, protected: Iterable[str | os.PathLike] = ()) -> Path:
    """Write ``text`` (UTF-8) to ``target`` all or nothing; the written path."""
    with staged([target], protected) as (tmp,):
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
    return Path(target)


@contextlib.contextmanager
def folder_outputs(
    folder: str | os.PathLike, names: list[str], protected: Iterable[str | os.PathLike] = ()
) -> Iterator[list[Path]]:
    """Temporary paths for ``names`` inside ``folder`` (created if its parent exists), committed
    together at the end; a folder this call created is removed again if the block fails."""
    f, create = check_folder(folder)
    prot = list(protected)
    targets = [f / n for n in names]
    for t in targets:  # refuse before creating anything
        for q in prot:
            if same_file(t, q):
                raise OutputError(t, f"this is the input {q} itself (the same file on disk); choose another folder")
    if create:
        try:
            f.mkdir()
        except OSError as exc:
            raise OutputError(f, f"cannot create the folder: {describe(exc)}") from None
    try:
        with staged(targets, prot) as temps:
            yield temps
    except BaseException:
        if create:
            with contextlib.suppress(OSError):
                f.rmdir()
        raise
