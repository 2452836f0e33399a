"""The CAD kernel loaded while the plan is worked out: a child process forked when the command line starts.

Importing the kernel (OpenCascade, through geomgen.occ) takes one and a half seconds on one core and cannot run in a
thread beside the planning (the import holds the interpreter's lock).  So `cli.run`, for `plan`, `build`
and `trim`, forks this child first.  The child starts its own helper process for the mesh check
(geomgen.sidecar), imports the kernel, then waits.  Meanwhile the parent reads the job, plans and works out
the band.  `Plan.verify` then hands the child the job and the planned webs (pickled) and gets back what
`pipeline.solid_files` gives in-process: the verification of each web and the bytes of every STEP, STL
and web-<name>.json.  It is the very same function on the very same objects, so the files are byte for
byte those of an in-process run.

The child is a speed-up, never a dependency: if it cannot be forked, or dies, or its work raises
anything (a wall the solid check refuses, a verification that fails), or the webs cannot be pickled (a
3D model web holds kernel shapes), the parent does the work itself and so reports any error exactly
as it would have.  The child writes nothing but its own temporary folder, prints nothing (its standard
streams go to /dev/null), and is killed, with the mesh helper it forked (they share a process group),
when the parent is done with it, refuses the job or exits.

Only the console entry forks; `cli.main` and the Python API run in one process as before.
"""

from __future__ import annotations

import os
import pickle
import signal
import sys
from contextlib import suppress

_CHILD: KernelChild | None = None


def _read_all(fd: int) -> bytes:
    chunks = []
    while True:
        chunk = os.read(fd, 1 << 20)
        if not chunk:
            return b"".join(chunks)
        chunks.append(chunk)


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        view = view[os.write(fd, view):]


class KernelChild:
    """The forked child, from the parent's side."""

    def __init__(self) -> None:
        req_r, req_w = os.pipe()
        ans_r, ans_w = os.pipe()
        pid = os.fork()
        if pid == 0:                                   # the child: never returns
            with suppress(OSError):
                os.setpgid(0, 0)                       # its own group, with the mesh helper it forks
            os.close(req_w)
            os.close(ans_r)
            _child(req_r, ans_w)
        with suppress(OSError):                        # set from both sides, so it holds whichever runs first
            os.setpgid(pid, pid)
        os.close(req_r)
        os.close(ans_w)
        self.pid: int | None = pid
        self._req, self._ans = req_w, ans_r

    def solid_files(self, job, works, meanwhile=None) -> tuple[list[dict], dict[str, bytes]] | None:
        """`pipeline.solid_files(job, works)` done by the child, or None (the caller then does it).
        `meanwhile`, if given, is called once the request is sent, while the child works: what the
        caller can get ready without the solids (its own imports, the charts)."""
        try:
            request = pickle.dumps((job, works), protocol=pickle.HIGHEST_PROTOCOL)
        except Exception:  # noqa: BLE001  e.g. a 3D model web's kernel shapes: done in-process
            self.release()
            return None
        try:
            _write_all(self._req, request)
            os.close(self._req)
            self._req = None
            if meanwhile is not None:
                meanwhile()
            answer = pickle.loads(_read_all(self._ans))
        except Exception:  # noqa: BLE001  the child is gone or said nothing usable
            answer = None
        self.release()
        if isinstance(answer, tuple) and len(answer) == 3 and answer[0] == "ok":
            return answer[1], answer[2]
        return None

    def release(self) -> None:
        """Kill the child and its mesh helper (if they still run) and close the pipes."""
        if self.pid is not None:
            with suppress(OSError):
                os.killpg(self.pid, signal.SIGKILL)
            with suppress(OSError):
                os.kill(self.pid, signal.SIGKILL)
            with suppress(OSError):
                os.waitpid(self.pid, 0)
            self.pid = None
        for name in ("_req", "_ans"):
            fd = getattr(self, name)
            if fd is not None:
                with suppress(OSError):
                    os.close(fd)
                setattr(self, name, None)


def _child(req_r: int, ans_w: int) -> None:
    """The child's side: the mesh helper, the kernel's import, then one request answered; always os._exit."""
    try:
        devnull = os.open(os.devnull, os.O_RDWR)
        for fd in (0, 1, 2):
            os.dup2(devnull, fd)
        signal.signal(signal.SIGINT, signal.SIG_DFL)
        signal.signal(signal.SIGTERM, signal.SIG_DFL)
        from . import sidecar

        side = sidecar.start_helper()        # its trimesh import runs while the kernel loads here
        try:
            # the point: the kernel and the modules that build, export and verify, loaded while the parent plans
            from . import export, occ, solid, verify  # noqa: F401
            from .pipeline import solid_files

            request = _read_all(req_r)
            if not request:                  # the parent refused the job or is gone
                return

            job, works = pickle.loads(request)
            verified, files = solid_files(job, works)
            answer = pickle.dumps(("ok", verified, files), protocol=pickle.HIGHEST_PROTOCOL)
        except BaseException:  # noqa: BLE001  anything at all: the parent does the work and reports it
            answer = pickle.dumps(("redo",))
        finally:
            sidecar.stop_helper(side)
        with suppress(OSError):
            _write_all(ans_w, answer)
    finally:
        with suppress(Exception):
            sys.stdout.flush()
        os._exit(0)


def start() -> None:
    """Fork the child (the console entry calls this for plan, build and trim); quietly nothing where the
    system cannot fork."""
    global _CHILD
    if _CHILD is None and hasattr(os, "fork"):
        try:
            _CHILD = KernelChild()
        except OSError:
            _CHILD = None


def take() -> KernelChild | None:
    """The child for its one request (it is no longer registered after this)."""
    global _CHILD
    child, _CHILD = _CHILD, None
    return child


def release() -> None:
    """Kill the child if it was not used (a refused job, a 3D model web planned with the kernel here)."""
    child = take()
    if child is not None:
        child.release()
