"""geomgen: balance study, correction geometry and verified solids for pressed-up crank webs.

The Python API (geomgen.api) is re-exported here: load_job, study, plan, build,
trim, inspect and their results.  Importing geomgen loads no CAD kernel and no
plotting library; the functions import what they need when they run.

`geomgen.study` and `geomgen.inspect` are always the API's functions, also
after the modules geomgen/study.py and geomgen/inspect.py are
imported (Python would otherwise put each module in its function's place on
the package); reach those modules by their full names, e.g.
`from geomgen.study import study_of`.
"""

import sys as _sys
import types as _types

__version__ = "0.1.0"

from . import api as _api  # noqa: E402
from .api import (  # noqa: E402
    Figures,
    Inspection,
    Plan,
    PlannedWeb,
    Verified,
    VerifiedWeb,
    build,
    inspect,
    load_job,
    plan,
    study,
    trim,
    write_study,
)
from .errors import BadInput, GeomgenError, Infeasible, VerificationFailed  # noqa: E402

#: API functions that share their name with a module of the package
_SHADOWED = ("study", "inspect")


def _api_function(name: str) -> property:
    def get(package):
        return getattr(_api, name)

    def put(package, value):
        # the import system binds a freshly imported submodule on its parent; the function stays
        pass

    return property(get, put, doc=getattr(_api, name).__doc__)


class _Package(_types.ModuleType):
    """The geomgen package, its API functions kept in front of same-named submodules."""


for _name in _SHADOWED:
    setattr(_Package, _name, _api_function(_name))
_sys.modules[__name__].__class__ = _Package

__all__ = ["__version__", "Figures", "Inspection", "Plan", "PlannedWeb", "Verified", "VerifiedWeb", "build",
           "inspect", "load_job", "plan", "study", "trim", "write_study", "BadInput", "GeomgenError", "Infeasible",
           "VerificationFailed"]
