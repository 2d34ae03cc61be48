"""Safe writes: nothing appears under its final name until it is complete.

``atomic_write_bytes`` / ``atomic_write_text`` write a temporary file in the target folder and
rename it into place (``os.replace`` is atomic on one file system). ``StagedOutput`` does the
same for a set of files: they are written into a hidden staging folder inside the output
folder and renamed into place with the manifest last, so a folder whose manifest exists is
complete; the previous output is moved aside meanwhile and comes back if anything fails.
Every output gets the permission bits a plain write would give (the umask).
"""

from __future__ import annotations

import json
import os
import shutil
import stat
import tempfile
from pathlib import Path
from types import TracebackType

from chanmesh.errors import OutputError

STAGE_PREFIX = ".chanmesh-stage-"
BACKUP_PREFIX = ".chanmesh-previous-"
MANIFEST_NAMES = ("manifest.json", "section.json")
"""Names ``commit`` is called with (a build's manifest, a cut's record): how a backup left by
a killed commit is recognised."""


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


def plain_file_mode(path: Path) -> int:
    """The permission bits a plain ``open(path, "w")`` would leave: the existing file's own
    mode if there is one, else 0o666 less the process umask."""
    try:
        return stat.S_IMODE(os.stat(path).st_mode)
    except OSError:
        return 0o666 & ~_umask()


def _umask() -> int:
    try:  # Linux reports it without changing it
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def atomic_write_bytes(path: Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temporary file renamed into place; the file gets the
    mode a plain write would give (``mkstemp`` alone would leave it readable by its owner only)."""
    path = Path(path)
    ensure_folder(path.parent)
    mode = plain_file_mode(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fchmod(fh.fileno(), mode)
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


def _listed_names(manifest: Path) -> list[str]:
    """Every string ``name`` under the manifest's ``files`` (none if it is missing or unreadable)."""
    try:
        data = json.loads(manifest.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return []
    entries = data.get("files") if isinstance(data, dict) else None
    names = (e.get("name") if isinstance(e, dict) else None for e in (entries if isinstance(entries, list) else []))
    return [n for n in names if isinstance(n, str)]


def listed_files(manifest: Path) -> list[str]:
    """Names of the files a manifest lists under ``files`` (plain names only; none if the
    manifest is missing or unreadable)."""
    return [n for n in _listed_names(manifest) if n and n == Path(n).name and n not in (".", "..")]


def listed_folders(manifest: Path) -> list[str]:
    """Top-level folders a manifest lists files in (``openfoam`` for ``openfoam/0/U``): outputs
    written as a whole folder, such as a solver case."""
    out = [Path(n).parts[0] for n in _listed_names(manifest)
           if len(Path(n).parts) > 1 and Path(n).parts[0] not in (".", "..", "/") and not Path(n).is_absolute()]
    return list(dict.fromkeys(out))


class StagedOutput:
    """Context manager: write into ``.stage``, then ``commit(manifest_name)`` moves files into
    ``folder``. Leaving the block without commit (error, interrupt) deletes the stage and leaves
    whatever complete output was there before untouched.

    ``commit`` keeps the previous output complete until the new one is: the old manifest, the
    files it lists and any file a new one replaces are first moved into a hidden backup folder,
    the new files are renamed in, the new manifest last, and only then is the backup deleted.
    A failure or an interrupt on the way moves everything back. Files of the previous build
    that the new one does not write are thereby removed too (only files the old manifest
    listed: a user's own files in the folder are never touched). A backup left by a killed
    process is restored (folder without a manifest) or deleted (manifest present) next time.
    """

    def __init__(self, folder: Path) -> None:
        self.folder = ensure_folder(Path(folder))
        _recover_backups(self.folder)
        self.stage = Path(tempfile.mkdtemp(prefix=STAGE_PREFIX, dir=self.folder))
        self._committed = False

    def __enter__(self) -> "StagedOutput":
        return self

    def commit(self, manifest_name: str) -> list[Path]:
        """Rename staged files into place, the manifest last; returns the final paths."""
        names = sorted(p.name for p in self.stage.iterdir() if p.name != manifest_name)
        manifest = self.folder / manifest_name
        old = [n for n in listed_files(manifest) if n != manifest_name]
        old_folders = listed_folders(manifest)  # folder outputs of the previous build (a solver case)
        for name in names:
            if (self.folder / name).is_dir() and not (self.folder / name).is_symlink() and name not in old_folders:
                raise OutputError(f"cannot write {str(self.folder / name)!r}: a folder of that name is in the way; "
                                  "move it or choose another --out (the previous output was kept)")
        aside = [n for n in dict.fromkeys([*old, *old_folders, *names])
                 if _is_file(self.folder / n) or (n in old_folders and (self.folder / n).is_dir())]
        backup = Path(tempfile.mkdtemp(prefix=BACKUP_PREFIX, dir=self.folder))
        moved_aside: list[str] = []  # in the backup, to move back on failure
        moved_in: list[str] = []  # new names in place, to take out on failure
        try:
            if os.path.lexists(manifest):
                os.replace(manifest, backup / manifest_name)  # from here the folder is not "complete"
                moved_aside.append(manifest_name)
            for name in aside:
                os.replace(self.folder / name, backup / name)
                moved_aside.append(name)
            for name in names:
                os.replace(self.stage / name, self.folder / name)
                moved_in.append(name)
            os.replace(self.stage / manifest_name, manifest)
        except BaseException as exc:
            _roll_back(self.folder, backup, moved_in, moved_aside)
            if isinstance(exc, OSError):
                raise OutputError(f"cannot move outputs into {str(self.folder)!r}: {exc.strerror or exc}; "
                                  "the previous output was kept") from None
            raise
        shutil.rmtree(backup, ignore_errors=True)
        self._committed = True
        return [self.folder / n for n in names] + [manifest]

    def __exit__(
        self, exc_type: type[BaseException] | None, exc: BaseException | None, tb: TracebackType | None
    ) -> None:
        shutil.rmtree(self.stage, ignore_errors=True)
        if exc is not None and isinstance(exc, OSError) and not isinstance(exc, OutputError):
            raise OutputError(f"cannot write outputs in {str(self.folder)!r}: {exc.strerror or exc}") from exc


def _is_file(path: Path) -> bool:
    """A file or a symbolic link (what commit may move aside), not a folder."""
    return path.is_symlink() or path.is_file()


def _roll_back(folder: Path, backup: Path, moved_in: list[str], moved_aside: list[str]) -> None:
    """Undo a partial commit: new files out, the previous ones (manifest last) back in."""
    for name in moved_in:
        try:
            if (folder / name).is_dir() and not (folder / name).is_symlink():
                shutil.rmtree(folder / name)  # a folder output (solver case)
            else:
                os.unlink(folder / name)
        except OSError:
            pass
    manifest_first = moved_aside[:1]
    for name in moved_aside[1:] + manifest_first:
        try:
            os.replace(backup / name, folder / name)
        except OSError:
            return  # keep the backup: the next StagedOutput restores it
    shutil.rmtree(backup, ignore_errors=True)


def _recover_backups(folder: Path) -> None:
    """A backup left by a process killed during ``commit``: if it holds a manifest that the
    folder lacks, the commit never finished, so the previous output is put back; otherwise the
    new output is complete and the backup is deleted."""
    for backup in sorted(folder.glob(f"{BACKUP_PREFIX}*")):
        if not backup.is_dir():
            continue
        inside = [p.name for p in backup.iterdir()]
        unfinished = any(n in MANIFEST_NAMES and not os.path.lexists(folder / n) for n in inside)
        if unfinished:
            for n in inside:
                os.replace(backup / n, folder / n)
        shutil.rmtree(backup, ignore_errors=True)
