"""A second Python process for the slow imports and the pictures of a plan: trimesh (the mesh check) and
the charts and back-plots.

A plan spends most of its time in the CAD kernel on one core.  Importing trimesh (scipy under it) costs
about a second more, so `Plan.verify` starts this helper first: it imports it on the other core while the
kernel works, draws study.svg, the band chart and the back-plots when asked and integrates the written
STL files.
The helper runs the very same functions the plan would run itself (`verify.mesh_web_from_files`,
`plots.study_svg`), and numbers cross the pipe as JSON, whose floats round-trip exactly, so the files are
byte for byte what an in-process run writes.  If the helper cannot start, or fails, or gives a wrong
answer shape, the work is done in-process instead: the sidecar is a speed-up, never a dependency.

Protocol: one JSON object per line each way.  {"op": "mesh", ...} -> {"ok": true, "mass": ..., ...};
{"op": "svg", "study": {...}} -> {"ok": true, "svg": "..."}; {"op": "band_svg", "band": {...},
"contributions": [...], "tolerance_points": ...} -> {"ok": true, "svg": "..."}; {"op": "backplot", "pickle":
base64 of the pickled (program, simulated moves)} -> {"ok": true, "svg": "..."}; EOF ends the helper.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
from contextlib import contextmanager, suppress

import numpy as np

from .massprops import MassProps

_ACTIVE: Sidecar | None = None


class Sidecar:
    """The helper process, started at once; its imports run while the caller works."""

    def __init__(self, *, forked: bool = False) -> None:
        self.proc: subprocess.Popen | _Forked = (
            _Forked() if forked else
            subprocess.Popen([sys.executable, "-m", "geomgen.sidecar"], stdin=subprocess.PIPE,
                             stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True, bufsize=1))
        #: request lines sent ahead whose answers are not read yet, in the order sent (answers come back
        #: in that order), and answers read but not yet asked for
        self._pending: list[str] = []
        self._answers: dict[str, dict | None] = {}
        self._writer = None          # the thread writing a line sent ahead, while it writes
        self._broken = False         # a write failed: the helper is gone
        # a thread reads every answer line as it comes, so the helper never waits on a full pipe while
        # this process is still writing it a long request (which would wait on the helper: a deadlock)
        import queue
        import threading

        self._lines: queue.Queue = queue.Queue()
        threading.Thread(target=self._drain, daemon=True).start()

    def _drain(self) -> None:
        try:
            for line in self.proc.stdout:
                self._lines.put(line)
        except (OSError, ValueError):
            pass
        with suppress(OSError):
            self.proc.stdout.close()
        self._lines.put("")          # end of output: the helper is gone

    def _send(self, line: str, *, wait: bool = True) -> bool:
        """Write one request line.  A long line fills the pipe until the helper reads it (it may still be
        importing), so a line sent ahead (`wait=False`) is written by a thread; every later write waits
        for that thread first, which keeps the requests in order."""
        self._join_writer()
        if not wait:
            import threading

            self._writer = threading.Thread(target=self._write, args=(line,), daemon=True)
            self._writer.start()
            return True
        return self._write(line)

    def _write(self, line: str) -> bool:
        try:
            self.proc.stdin.write(line + "\n")
            self.proc.stdin.flush()
        except (OSError, ValueError):
            self._broken = True
            return False
        return True

    def _join_writer(self) -> None:
        if self._writer is not None:
            self._writer.join()
            self._writer = None

    def _read(self) -> dict | None:
        line = self._lines.get()
        if not line:
            self._lines.put("")      # every later read sees the end too
            return None
        try:
            answer = json.loads(line)
        except ValueError:
            return None
        return answer if isinstance(answer, dict) and answer.get("ok") else None

    def prefetch(self, request: dict) -> None:
        """Send a request now and keep its answer for the `ask` of the same request later: the helper
        works on it while the caller goes on (the study figure, drawn while the solids are built)."""
        line = json.dumps(request, sort_keys=True)
        if line not in self._pending and line not in self._answers and self._send(line, wait=False):
            self._pending.append(line)

    def ask(self, request: dict) -> dict | None:
        """The helper's answer, or None if it is gone or failed (the caller then does the work itself)."""
        line = json.dumps(request, sort_keys=True)
        if line not in self._pending and line not in self._answers:
            if not self._send(line):
                return None
            self._pending.append(line)
        self._join_writer()
        if self._broken:
            return None
        while line not in self._answers and self._pending:
            self._answers[self._pending.pop(0)] = self._read()
        return self._answers.pop(line, None)

    def close(self) -> None:
        """End of input: the helper leaves on its own.  Its exit (tearing down scipy)
        takes a few tenths of a second that the caller need not wait for; one that is still there after
        that is killed, so no helper outlives its work for long."""
        self._join_writer()
        with suppress(OSError):
            self.proc.stdin.close()
        if self.proc.poll() is None:
            import threading

            threading.Thread(target=self._reap, daemon=True).start()

    def _reap(self) -> None:
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()


class _Forked:
    """The helper as a fork of the calling process, with the face of `subprocess.Popen` that `Sidecar` uses.

    geomgen.kernel_child's child forks its helper this way before it loads the kernel: numpy and geomgen's
    own modules are already in memory, so the helper goes straight to trimesh (a fresh interpreter would
    spend a fifth of a second on them first, on a core the kernel's import needs).  The helper keeps only
    its two pipes (as standard input and output) and closes every other descriptor it was given, so the
    caller's own pipes still see their end when the caller closes them."""

    def __init__(self) -> None:
        req_r, req_w = os.pipe()
        ans_r, ans_w = os.pipe()
        pid = os.fork()
        if pid == 0:                                   # the helper: never returns
            try:
                os.dup2(req_r, 0)
                os.dup2(ans_w, 1)
                try:
                    open_fds = [int(n) for n in os.listdir("/proc/self/fd")]
                except OSError:
                    open_fds = list(range(3, 256))
                for fd in open_fds:
                    if fd > 2:
                        with suppress(OSError):
                            os.close(fd)
                sys.stdin = open(0, encoding="utf-8", closefd=False)  # noqa: SIM115  (the helper's whole life)
                sys.stdout = open(1, "w", encoding="utf-8", closefd=False)  # noqa: SIM115
                _serve(charts=False)
                sys.stdout.flush()
            finally:
                os._exit(0)
        os.close(req_r)
        os.close(ans_w)
        self.pid = pid
        self.returncode: int | None = None
        self.stdin = open(req_w, "w", encoding="utf-8", buffering=1)  # noqa: SIM115  (closed by Sidecar.close)
        self.stdout = open(ans_r, encoding="utf-8")  # noqa: SIM115  (closed by Sidecar._drain)

    def poll(self) -> int | None:
        if self.returncode is None:
            with suppress(ChildProcessError):
                pid, status = os.waitpid(self.pid, os.WNOHANG)
                if pid:
                    self.returncode = os.waitstatus_to_exitcode(status)
        return self.returncode

    def wait(self, timeout: float | None = None) -> int:
        import time

        end = None if timeout is None else time.monotonic() + timeout
        while self.poll() is None:
            if end is not None and time.monotonic() > end:
                raise subprocess.TimeoutExpired(f"sidecar {self.pid}", timeout)
            time.sleep(0.02)
        return self.returncode

    def kill(self) -> None:
        with suppress(OSError):
            os.kill(self.pid, signal.SIGKILL)


@contextmanager
def started():
    """Run the block with a helper process at hand (or without one, if it cannot be started)."""
    global _ACTIVE
    try:
        side = Sidecar()
    except OSError:
        side = None
    _ACTIVE = side
    try:
        yield side
    finally:
        _ACTIVE = None
        if side is not None:
            side.close()


def start_helper() -> Sidecar | None:
    """Start a helper, forked from this process (see `_Forked`), and make it the active one for the rest of
    this process (geomgen.kernel_child's child, which owns it for its whole short life); None if it cannot
    be started.  That helper only checks meshes: the charts are drawn by the command line's own process."""
    global _ACTIVE
    try:
        _ACTIVE = Sidecar(forked=hasattr(os, "fork"))
    except OSError:
        _ACTIVE = None
    return _ACTIVE


def stop_helper(side: Sidecar | None) -> None:
    """The end of `start_helper`'s helper."""
    global _ACTIVE
    _ACTIVE = None
    if side is not None:
        side.close()


def active() -> Sidecar | None:
    return _ACTIVE


def massprops_to_json(p: MassProps) -> dict:
    return {"mass": p.mass, "first": [float(v) for v in p.first_moment],
            "second": [float(v) for v in np.asarray(p.second_moment).ravel()], "volume": p.volume}


def massprops_from_json(d: dict) -> MassProps:
    return MassProps(float(d["mass"]), np.array(d["first"], dtype=float),
                     np.array(d["second"], dtype=float).reshape(3, 3), float(d["volume"]))


def _serve(*, charts: bool = True) -> None:
    """The helper's side: warm the imports, then answer each request line.  trimesh (scipy under it,
    about a second) is imported by a thread while the loop already answers: a chart asked for first is
    drawn at once, and the first mesh request waits on the import's module lock until trimesh is in.
    `charts=False` (a helper that will only be asked for meshes) leaves the chart library unloaded until
    a chart is asked for."""
    import threading

    # the caller's kernel import (or its child's) is the long pole of a plan: this helper takes what CPU
    # is left over, and still has its answers ready long before they are asked for
    with suppress(OSError):
        os.nice(10)

    def warm_mesh() -> None:
        import trimesh  # noqa: F401  (the point: imported while the caller works)

    threading.Thread(target=warm_mesh, daemon=True).start()
    from . import plots, verify

    if charts:
        plots.warm_up()
    for line in sys.stdin:
        try:
            request = json.loads(line)
            if request["op"] == "mesh":
                props = verify.mesh_web_from_files(request["stl"], request["density"], request.get("plugs_stl"),
                                                   [tuple(p) for p in request.get("plugs", [])])
                answer = {"ok": True, **massprops_to_json(props)}
            elif request["op"] == "svg":
                answer = {"ok": True, "svg": plots.study_svg(request["study"]).decode("utf-8")}
            elif request["op"] == "band_svg":
                answer = {"ok": True, "svg": plots.band_svg(request["band"], request["contributions"],
                                                            tolerance_points=request["tolerance_points"],
                                                            title=request.get("title", "")).decode("utf-8")}
            elif request["op"] == "backplot":
                import base64
                import pickle

                from .nc.backplot import svg as backplot_svg

                # the caller's own objects, pickled by the caller: this process trusts only its parent
                prog, checked = pickle.loads(base64.b64decode(request["pickle"]))
                answer = {"ok": True, "svg": backplot_svg(prog, checked).decode("utf-8")}
            else:
                answer = {"ok": False}
        except Exception as exc:  # noqa: BLE001  any failure: the caller does the work itself
            answer = {"ok": False, "error": f"{type(exc).__name__}: {exc}"}
        sys.stdout.write(json.dumps(answer) + "\n")
        sys.stdout.flush()


if __name__ == "__main__":
    _serve()
