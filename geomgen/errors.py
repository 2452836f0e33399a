"""The one error hierarchy of geomgen.

Every error a user can fix is a `GeomgenError`; the command line prints its
message as one line on stderr and exits with its `exit_code`.  The message
names the key or file, what is wrong and what is allowed.
"""


class GeomgenError(Exception):
    """A problem the user can fix.  Exit code 2 (bad input)."""

    exit_code = 2


class BadInput(GeomgenError):
    """A job, file or option that is wrong: exit code 2."""

    exit_code = 2


class Infeasible(GeomgenError):
    """The target cannot be reached within the constraints: exit code 3.

    The message gives the reachable range and the constraint that binds; `reach` (g*mm, when known) is
    the most correction the search found, along the direction asked.
    """

    exit_code = 3

    def __init__(self, message: str, reach: float | None = None):
        super().__init__(message)
        self.reach = reach


class VerificationFailed(GeomgenError):
    """The solid and the prediction disagree beyond tolerance: exit code 4."""

    exit_code = 4


def warn_all(lines) -> None:
    """Print each warning as one line on stderr: things a job allows but a builder should look at."""
    import sys

    for line in lines:
        print(f"geomgen: warning: {line}", file=sys.stderr)
