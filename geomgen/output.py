"""Writing results: whole or not at all, and never over the user's files.

A command first checks its output folder (`check_target`), does all its
work, and writes everything into a hidden staging folder beside the target
(`staged`); only when every file is written is the staging folder moved into
place.  A failure on the way leaves the target as it was.

The staging folder is named `.NAME.writing-PID-RANDOM` (NAME the target's
name, PID the writing process, RANDOM eight random characters).  Ctrl-C, SIGTERM and any exception remove it;
a process killed outright (SIGKILL, a crash of the interpreter) cannot, so the
next run into the same target removes every such folder whose process is gone.
"""

from __future__ import annotations

import contextlib
import os
import re
import shutil
import signal
import sys
import tempfile
import threading
from pathlib import Path

from .errors import BadInput


class Terminated(BaseException):
    """SIGTERM arrived while a result was being written: unwind so the staging folder goes.

    A BaseException, like KeyboardInterrupt, so that no `except Exception` on the way swallows it.
    """


def check_target(out_dir, *, force: bool) -> Path:
    """The output folder, refused if it holds anything and `force` is not given."""
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise BadInput(f"--out {out}: exists and is not a folder")
    if out.is_dir() and any(out.iterdir()) and not force:
        raise BadInput(f"--out {out}: folder exists and is not empty; choose another or add --force to replace it")
    return out


def _stage_prefix(out: Path) -> str:
    return f".{out.name}.writing-"


def _process_alive(pid: int) -> bool:
    """True if a process `pid` exists (or might: one we may not signal is counted as alive)."""
    if pid <= 0:
        return True  # 0 and negatives name process groups, never a writer: leave such a folder alone
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    # a killed process not yet reaped by its parent (a zombie) still answers kill(pid, 0)
    try:
        stat = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return True  # no /proc (not Linux) or it went meanwhile: count it as alive, the safe side
    return stat[stat.rfind(")") + 1:].split()[:1] not in (["Z"], ["X"])


def remove_stale_stages(out_dir) -> list[Path]:
    """Remove the staging folders of `out_dir` left by runs that were killed; returns them.

    Only folders named by `staged` for this very target, whose writing process no longer exists, are
    touched; each removal is said on stderr.
    """
    out = Path(out_dir).resolve()
    pattern = re.compile(re.escape(_stage_prefix(out)) + r"(\d+)-[A-Za-z0-9_]+")
    removed = []
    try:
        entries = list(out.parent.iterdir())
    except OSError:
        return removed
    for entry in sorted(entries):
        m = pattern.fullmatch(entry.name)
        if not m or entry.is_symlink() or not entry.is_dir() or _process_alive(int(m[1])):
            continue
        shutil.rmtree(entry, ignore_errors=True)
        if not entry.exists():
            print(f"geomgen: removed a staging folder left by an earlier run that was killed: {entry}",
                  file=sys.stderr)
            removed.append(entry)
    return removed


@contextlib.contextmanager
def _sigterm_raises():
    """While inside, SIGTERM raises Terminated (main thread only: Python runs handlers there)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def _raise(signum, frame):
        raise Terminated()

    previous = signal.signal(signal.SIGTERM, _raise)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


@contextlib.contextmanager
def staged(out_dir, *, force: bool):
    """Yield a fresh folder to write into; on success it becomes `out_dir`.

    SIGTERM inside raises `Terminated` after the staging folder is removed.
    """
    out = check_target(out_dir, force=force).resolve()
    parent = out.parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise BadInput(f"--out {out}: cannot create its parent folder ({exc})") from None
    remove_stale_stages(out)
    with _sigterm_raises():
        stage = Path(tempfile.mkdtemp(prefix=f"{_stage_prefix(out)}{os.getpid()}-", dir=parent))
        try:
            yield stage
        except BaseException:
            shutil.rmtree(stage, ignore_errors=True)
            raise
        old = None
        try:
            if out.exists():
                old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-", dir=parent))
                out.rename(old / "previous")
            stage.rename(out)
        except BaseException:
            if old is not None:
                if (old / "previous").exists() and not out.exists():
                    (old / "previous").rename(out)
                if not (old / "previous").exists():
                    shutil.rmtree(old, ignore_errors=True)
            shutil.rmtree(stage, ignore_errors=True)
            raise
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)


def write_files(folder: Path, files: dict[str, bytes]) -> None:
    for name, data in files.items():
        (folder / name).write_bytes(data)
