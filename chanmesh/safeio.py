"""Safe writes: nothing appears under its final name until it is complete.

``atomic_write_bytes`` / ``atomic_write_text`` write a temporary file in the target folder and
rename it into place (``os.replace`` is atomic on one file system). ``StagedOutput`` does the
same for a set of files: they are written into a hidden staging folder inside the output
folder, the old manifest is removed first, the files are renamed into place, and the manifest
is renamed last, so a folder whose manifest exists is complete.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path
from types import TracebackType

from chanmesh.errors import OutputError

STAGE_PREFIX = ".chanmesh-stage-"


def ensure_folder(folder: Path) -> Path:
    """Create ``folder`` (and parents) and check that it can be written."""
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"output folder {str(folder)!r} is a file, not a folder")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"output folder {str(folder)!r} cannot be created: {exc.strerror}") from None
    if not folder.is_dir():
        raise OutputError(f"output folder {str(folder)!r} is a file, not a folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise OutputError(f"output folder {str(folder)!r} is not writable; choose another with --out")
    return folder


def atomic_write_bytes(path: Path, data: bytes) -> Path:
    path = Path(path)
    ensure_folder(path.parent)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException as exc:
        Path(tmp).unlink(missing_ok=True)
        if isinstance(exc, OSError):
            raise OutputError(f"cannot write {str(path)!r}: {exc.strerror}") from None
        raise
    return path


def atomic_write_text(path: Path, text: str) -> Path:
    return atomic_write_bytes(path, text.encode("utf-8"))


class StagedOutput:
    """Context manager: write into ``.stage``, then ``commit(manifest_name)`` moves files into
    ``folder``. Leaving the block without commit (error, interrupt) deletes the stage and leaves
    whatever complete output was there before untouched."""

    def __init__(self, folder: Path) -> None:
        self.folder = ensure_folder(Path(folder))
        self.stage = Path(tempfile.mkdtemp(prefix=STAGE_PREFIX, dir=self.folder))
        self._committed = False

    def __enter__(self) -> "StagedOutput":
        return self

    def commit(self, manifest_name: str) -> list[Path]:
        """Rename staged files into place, the manifest last; returns the final paths."""
        names = sorted(p.name for p in self.stage.iterdir() if p.name != manifest_name)
        final = []
        try:
            (self.folder / manifest_name).unlink(missing_ok=True)
            for name in names:
                target = self.folder / name
                if (self.stage / name).is_dir() and target.is_dir():  # a folder output (a solver case):
                    os.replace(target, self.stage / f".previous-{name}")  # moved aside, deleted with the stage
                os.replace(self.stage / name, target)
                final.append(self.folder / name)
            os.replace(self.stage / manifest_name, self.folder / manifest_name)
            final.append(self.folder / manifest_name)
        except OSError as exc:
            raise OutputError(f"cannot move outputs into {str(self.folder)!r}: {exc.strerror}") from None
        self._committed = True
        return final

    def __exit__(
        self, exc_type: type[BaseException] | None, exc: BaseException | None, tb: TracebackType | None
    ) -> None:
        shutil.rmtree(self.stage, ignore_errors=True)
        if exc is not None and isinstance(exc, OSError) and not isinstance(exc, OutputError):
            raise OutputError(f"cannot write outputs in {str(self.folder)!r}: {exc.strerror or exc}") from exc
