"""Writing files whole or not at all, and checking output paths before any work starts.

:func:`write_whole` writes through a temporary file in the target folder and renames it onto
the target, so a reader never sees half a file; on any failure or interruption the temporary
file is removed. :func:`check_run_paths` is called by the command line before a run reads
anything: it refuses an output that is one of the inputs or another output of the same run,
and an output that could not be written (a folder, a missing or unwritable folder, a name
too long), each with one line naming the path and the fix.
"""
from __future__ import annotations

import contextlib
import errno
import os
import signal
import stat
import tempfile
from pathlib import Path
from typing import Callable, Iterable, Iterator, Mapping, Sequence

from pitfalls.errors import PitfallsInputError

_HELD_SIGNALS = {signal.SIGINT, signal.SIGTERM}
_PART_SUFFIX = ".part"
_PREFIX_CHARS = 40
"""Characters of the target's name kept in the temporary file's name, so a long name still fits."""


@contextlib.contextmanager
def _signals_held() -> Iterator[None]:
    """Hold SIGINT/SIGTERM while a temporary file is created, renamed or removed.

    The signals are delivered (and their handlers run) as soon as the block ends, so an
    interruption can never fall between creating a temporary file and recording its name.
    """
    if not hasattr(signal, "pthread_sigmask"):
        yield
        return
    try:
        previous = signal.pthread_sigmask(signal.SIG_BLOCK, _HELD_SIGNALS)
    except (ValueError, OSError):  # not the main interpreter, or no signal support
        yield
        return
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


def _temporary_in(folder: Path, name: str) -> str:
    handle, temporary = tempfile.mkstemp(prefix=f".{name[:_PREFIX_CHARS]}.", suffix=_PART_SUFFIX, dir=folder)
    os.close(handle)
    return temporary


def write_whole(path: str | os.PathLike, write_into: Callable[[Path], object]) -> None:
    """Call ``write_into(temporary_path)`` and move the result onto ``path`` only if it succeeds.

    The temporary file sits in the target's folder, so the final rename is atomic; on any
    failure, SIGINT or SIGTERM included, it is removed and ``path`` is left as it was. The
    file gets the usual mode (0666 less the umask) rather than mkstemp's 0600.
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    with _signals_held():
        temporary = _temporary_in(folder, path.name)
    try:
        write_into(Path(temporary))
        with _signals_held():
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(temporary, 0o666 & ~umask)
            os.replace(temporary, path)
    except BaseException:
        with _signals_held():
            if os.path.lexists(temporary):
                os.remove(temporary)
        raise


def _real(path: str) -> str:
    return os.path.normcase(os.path.realpath(os.path.abspath(path)))


def _same_file(a: str, b: str) -> bool:
    if _real(a) == _real(b):
        return True
    try:
        return os.path.samefile(a, b)  # hard links
    except OSError:
        return False


def _listed(paths: str | os.PathLike | Sequence[str | os.PathLike] | None) -> list[str]:
    if paths is None:
        return []
    if isinstance(paths, (str, os.PathLike)):
        return [os.fspath(paths)]
    return [os.fspath(p) for p in paths if p is not None]


def check_output_file(path: str | os.PathLike, option: str = "") -> None:
    """Refuse an output file that could not be written whole; see :func:`check_run_paths`."""
    path = os.fspath(path)
    label = f"{option} " if option else ""
    if not path or not os.path.basename(path.rstrip(os.sep)) or path.endswith(os.sep):
        raise PitfallsInputError(path or "''", "", f"{label}needs a file name, not a folder",
                                 "give a file name such as report.json")
    if os.path.isdir(path):
        raise PitfallsInputError(path, "", f"{label}names an existing folder, not a file",
                                 "give a file name inside it, such as " + os.path.join(path, "report.json"))
    if os.path.lexists(path):
        mode = os.stat(path).st_mode if os.path.exists(path) else os.lstat(path).st_mode
        if not stat.S_ISREG(mode) and not stat.S_ISLNK(mode):
            raise PitfallsInputError(path, "", f"{label}is not a regular file (a device, pipe or socket), "
                                     "so it cannot be replaced whole",
                                     "give a file path; leave out the option to print to the screen")
    folder = os.path.dirname(os.path.abspath(path))
    _check_folder(folder, path, label, os.path.basename(path))


def _check_folder(folder: str, path: str, label: str, name: str | None) -> None:
    if not os.path.exists(folder):
        raise PitfallsInputError(path, "", f"{label}cannot be written: the folder {folder} does not exist",
                                 "create the folder first or choose another path")
    if not os.path.isdir(folder):
        raise PitfallsInputError(path, "", f"{label}cannot be written: {folder} is a file, not a folder",
                                 "choose a path inside a folder")
    if name is not None:
        try:
            limit = os.pathconf(folder, "PC_NAME_MAX")
        except (OSError, ValueError, AttributeError):
            limit = 255
        if len(os.fsencode(name)) > limit:
            raise PitfallsInputError(path, "", f"{label}has a file name of {len(os.fsencode(name))} bytes, "
                                     f"longer than this folder allows ({limit})", "choose a shorter file name")
    try:
        with _signals_held():
            probe = _temporary_in(Path(folder), name or "probe")
            os.remove(probe)
    except OSError as err:
        reason = {errno.EROFS: "the file system is read-only", errno.EACCES: "permission denied",
                  errno.EPERM: "permission denied", errno.ENOSPC: "the disk is full",
                  errno.ENOENT: "the folder does not accept new files",
                  errno.ENAMETOOLONG: "the name is too long"}.get(err.errno, err.strerror or str(err))
        raise PitfallsInputError(path, "", f"{label}cannot be written in {folder} ({reason})",
                                 "choose a folder you can write to") from None


def check_output_folder(path: str | os.PathLike, option: str = "") -> None:
    """Refuse an output folder that is a file or cannot be created or written into."""
    path = os.fspath(path)
    label = f"{option} " if option else ""
    if os.path.lexists(path) and not os.path.isdir(path):
        raise PitfallsInputError(path, "", f"{label}names an existing file, not a folder",
                                 "give a new or existing folder; the file is left as it is")
    target = os.path.abspath(path)
    while not os.path.exists(target):  # makedirs will create the missing part from the nearest existing folder
        parent = os.path.dirname(target)
        if parent == target:
            break
        target = parent
    if os.path.exists(target) and not os.path.isdir(target):
        raise PitfallsInputError(path, "", f"{label}cannot be created: {target} is a file, not a folder",
                                 "choose a folder path")
    _check_folder(target, path, label, None)


def check_run_paths(inputs: Mapping[str, str | os.PathLike | Sequence[str | os.PathLike] | None],
                    outputs: Mapping[str, str | os.PathLike | None],
                    repeatable: Iterable[str] = ()) -> None:
    """Refuse, before any work, output paths that would overwrite an input or each other or cannot be written.

    Parameters
    ----------
    inputs : Mapping
        Option name (``"SECTION"``, ``"--picks"``, ``"--rules"``...) -> the path or paths
        given; None where the option was not used.
    outputs : Mapping
        Option name (``"--output"``, ``"--figure"``...) -> the output file, or None.
    repeatable : iterable of str
        Input options whose paths must not be given twice (``"--picks"``).

    Raises
    ------
    PitfallsInputError
        When an output is also an input (same resolved real path, so links and ``./``
        tricks are caught, or the same file through a hard link), two outputs share a path,
        an input of a repeatable option is given twice, or an output cannot be written.
    """
    given_inputs = [(option, path) for option, paths in inputs.items() for path in _listed(paths)]
    for option in repeatable:
        seen: list[str] = []
        for path in _listed(inputs.get(option)):
            if any(_same_file(path, earlier) for earlier in seen):
                raise PitfallsInputError(path, "", f"is given twice with {option}, which would count every "
                                         "pick twice", "give each file once")
            seen.append(path)
    chosen: list[tuple[str, str]] = []
    for option, path in outputs.items():
        if path is None:
            continue
        path = os.fspath(path)
        for input_option, input_path in given_inputs:
            if _same_file(path, input_path):
                raise PitfallsInputError(path, "", f"{option} is also the {input_option} input file; "
                                         "inputs are never overwritten", f"write {option} somewhere else")
        for other_option, other in chosen:
            if _same_file(path, other):
                raise PitfallsInputError(path, "", f"{option} and {other_option} name the same file, "
                                         "so one would overwrite the other", "give each output its own path")
        check_output_file(path, option)
        chosen.append((option, path))
