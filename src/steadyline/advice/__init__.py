"""Results -> plain sentences under the charts: the face of the advice package.

sentences.py holds the Finding and its words; series.py the run and control charts' findings;
cautions.py the rules of thumb; pareto.py the vital few; gauge.py measurement studies.
"""

from . import cautions, gauge, pareto, sentences, series

# The face hands on each module's own __all__ (the pages call them as advice.<name>).
from .cautions import *  # noqa: F403
from .gauge import *  # noqa: F403
from .pareto import *  # noqa: F403
from .sentences import *  # noqa: F403
from .series import *  # noqa: F403

__all__ = [*cautions.__all__, *gauge.__all__, *pareto.__all__, *sentences.__all__, *series.__all__]
