"""Writing results: whole or not at all, and never over the user's files.

A command first checks its output folder (`check_target`), does all its
work, and writes everything into a hidden staging folder beside the target
(`staged`); only when every file is written is the staging folder moved into
place.  A failure on the way leaves the target as it was.
"""

from __future__ import annotations

import contextlib
import shutil
import tempfile
from pathlib import Path

from .errors import BadInput


def check_target(out_dir, *, force: bool) -> Path:
    """The output folder, refused if it holds anything and `force` is not given."""
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise BadInput(f"--out {out}: exists and is not a folder")
    if out.is_dir() and any(out.iterdir()) and not force:
        raise BadInput(f"--out {out}: folder exists and is not empty; choose another or add --force to replace it")
    return out


@contextlib.contextmanager
def staged(out_dir, *, force: bool):
    """Yield a fresh folder to write into; on success it becomes `out_dir`."""
    out = check_target(out_dir, force=force).resolve()
    parent = out.parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise BadInput(f"--out {out}: cannot create its parent folder ({exc})") from None
    stage = Path(tempfile.mkdtemp(prefix=f".{out.name}.writing-", dir=parent))
    try:
        yield stage
    except BaseException:
        shutil.rmtree(stage, ignore_errors=True)
        raise
    old = None
    if out.exists():
        old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-", dir=parent))
        out.rename(old / "previous")
    try:
        stage.rename(out)
    except OSError:
        if old is not None:
            (old / "previous").rename(out)
        shutil.rmtree(stage, ignore_errors=True)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def write_files(folder: Path, files: dict[str, bytes]) -> None:
    for name, data in files.items():
        (folder / name).write_bytes(data)
