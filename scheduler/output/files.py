"""Writing outputs without ever losing anything.

Before any work starts, :func:`check_outputs` rejects every output path that would
destroy or fail: the same file as an input (also through links), two outputs on one
file, a directory, a special file (a device, a pipe), a folder that does not exist or
cannot be written.  A symbolic link is written through: the link stays and its target
gets the new content.

At the end, :func:`write_all` writes every output of a command or none: each is staged
in a temporary file beside its destination (written, flushed, synced), then all are
renamed into place with Ctrl-C held back; if any rename fails, or Ctrl-C came during
the renames, the files already replaced are restored and the error (or the interrupt)
is raised.
"""

from __future__ import annotations

import os
import signal
import stat
import tempfile
from dataclasses import dataclass
from pathlib import Path

from scheduler.model.errors import Gather


@dataclass(frozen=True)
class OutputPath:
    """An output: the option that named it, the path as given, and where its bytes land
    (the target of a symbolic link)."""

    option: str
    given: str
    target: Path


def _same(a: Path, b: Path) -> bool:
    try:
        return a.exists() and b.exists() and os.path.samefile(a, b)
    except OSError:
        return False


def same_file(a: str | Path, b: str | Path) -> bool:
    """Whether two paths name one file (through links), existing or not."""
    return _same(Path(a), Path(b)) or os.path.realpath(a) == os.path.realpath(b)


def _check_one(option: str, given: str, g: Gather) -> OutputPath | None:
    path = Path(given)
    target = Path(os.path.realpath(path))  # through every link; the path itself if none
    if target.exists():
        mode = target.stat().st_mode
        if stat.S_ISDIR(mode):
            g.add(option, "", f"{given} is a directory, not a file")
            return None
        if not stat.S_ISREG(mode):
            g.add(option, "", f"{given} is a special file (device, pipe or socket); "
                  "opdplan writes regular files only")  # fmt: skip
            return None
    if _writable_folder(option, target.parent, str(target.parent), g) is None:
        return None
    return OutputPath(option, given, target)


def _writable_folder(option: str, folder: Path, named: str, g: Gather) -> Path | None:
    if not folder.is_dir():
        g.add(option, "", f"the folder {named} does not exist")
        return None
    if not os.access(folder, os.W_OK | os.X_OK):
        g.add(option, "", f"the folder {named} is not writable")
        return None
    return folder


def check_folder(option: str, given: str, g: Gather) -> Path | None:
    """A folder to write several files into: it must exist and be writable."""
    if _writable_folder(option, Path(os.path.realpath(given)), given, g) is None:
        return None
    return Path(given)


def check_outputs(outputs: dict[str, str | None], inputs: list[str | Path],
                  g: Gather) -> list[OutputPath]:  # fmt: skip
    """The outputs to write (option -> path, None where not asked for), each checked;
    problems go to ``g``.  ``inputs`` are every file the command reads."""
    checked: list[OutputPath] = []
    for option, given in outputs.items():
        if given is None:
            continue
        out = _check_one(option, given, g)
        if out is None:
            continue
        clash = [str(i) for i in inputs if _same(out.target, Path(i))
                 or Path(os.path.realpath(i)) == out.target]  # fmt: skip
        if clash:
            g.add(option, "", f"{given} is the input {clash[0]}; an output never replaces "
                  "an input")  # fmt: skip
            continue
        twin = next((o for o in checked if o.target == out.target), None)
        if twin is not None:
            g.add(option, "", f"{given} is also the output of {twin.option}")
            continue
        checked.append(out)
    return checked


def _stage(target: Path, data: bytes) -> Path:
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o666 & ~mask)  # a new file's usual mode, not mkstemp's 0600
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return Path(tmp)


def _backup(target: Path) -> Path | None:
    """A hard link to the file about to be replaced, so that it can be restored."""
    if not target.exists():
        return None
    name = tempfile.mktemp(prefix=f".{target.name}.", suffix=".old", dir=target.parent)
    os.link(target, name)
    return Path(name)


def _commit(staged: list[tuple[Path, Path]]) -> None:
    """Rename every staged file into place; on any failure restore what was replaced."""
    done: list[tuple[Path, Path | None]] = []
    backups: list[Path | None] = []
    try:
        for target, tmp in staged:
            backup = _backup(target)
            backups.append(backup)
            os.replace(tmp, target)
            done.append((target, backup))
        if signal.SIGINT in signal.sigpending():
            raise KeyboardInterrupt
    except BaseException:
        for target, backup in reversed(done):
            if backup is not None:
                os.replace(backup, target)
            else:
                target.unlink(missing_ok=True)
        raise
    finally:
        for b in backups:
            if b is not None:
                b.unlink(missing_ok=True)


def write_all(items: list[tuple[OutputPath, bytes]]) -> None:
    """Write every ``(output, bytes)`` or none (see the module docstring)."""
    staged: list[tuple[Path, Path]] = []
    try:
        for out, data in items:
            staged.append((out.target, _stage(out.target, data)))
        old = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
        try:
            _commit(staged)
        finally:
            signal.pthread_sigmask(signal.SIG_SETMASK, old)
    finally:
        for _, tmp in staged:
            tmp.unlink(missing_ok=True)


def write_one(path: str | Path, data: bytes) -> None:
    """Write one file atomically (no checks beyond those of :func:`write_all`)."""
    write_all([(OutputPath("", str(path), Path(os.path.realpath(path))), data)])
