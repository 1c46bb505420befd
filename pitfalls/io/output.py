"""Writing files whole or not at all: a temporary file in the target folder, then a rename."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Callable


def write_whole(path: str | os.PathLike, write_into: Callable[[Path], object]) -> None:
    """Call ``write_into(temporary_path)`` and move the result onto ``path`` only if it succeeds.

    The temporary file sits in the target's folder, so the final rename is atomic; on any
    failure it is removed and ``path`` is left as it was. The file gets the usual mode
    (0666 less the umask) rather than mkstemp's 0600.
    """
    path = Path(path)
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent or ".")
    os.close(handle)
    try:
        write_into(Path(temporary))
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temporary, 0o666 & ~umask)
        os.replace(temporary, path)
    except BaseException:
        if os.path.exists(temporary):
            os.remove(temporary)
        raise
