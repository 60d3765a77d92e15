"""busyhour: teletraffic engineering from Python.

The closed-form formulas (Erlang B and C, Erlang A, Engset, overflow
moments with the equivalent random method, Kaufman-Roberts) and the
discrete-event simulation with replications and 95% confidence intervals
of the busyhour library, called directly: every figure is computed by the
Rust library, the same code as the ``busyhour`` command.

>>> import busyhour as bh
>>> bh.erlang_b_servers(traffic=10.0, grade=0.01)
18

Every figure is an estimate under the model's stated assumptions
(:data:`CAUTION`).
"""

from ._busyhour import CAUTION, VERSION as __version__
from .formulas import *  # noqa: F401,F403
from .formulas import __all__ as _formulas
from .simulation import *  # noqa: F401,F403
from .simulation import __all__ as _simulation

__all__ = ["CAUTION", "__version__"] + list(_formulas) + list(_simulation)
