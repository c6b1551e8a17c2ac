"""springsynth: inverse design of springs and flexures from a target force curve.

Public API::

    import springsynth as ss
    study = ss.load_study("studies/latch-preload.toml")
    result = ss.synthesize(study, seed=1)
    result.to_frame()                 # the Pareto table
    ss.evaluate_design(result.designs[0], [0.0, 1.0, 2.0]).force_N
"""

__version__ = "0.1.0"

from ._assembly import Design, Element, Envelope, Response, evaluate_design  # noqa: E402
from ._designio import design_to_toml, load_design  # noqa: E402
from ._errors import InputError  # noqa: E402
from ._materials import Material, catalogue  # noqa: E402
from ._study import Study, load_study  # noqa: E402
from ._synthesis import Synthesis, synthesize  # noqa: E402
from ._target import Target, load_target  # noqa: E402
from .elements import ElementKind, Param, registry  # noqa: E402

__all__ = [
    "__version__",
    "Design",
    "Element",
    "ElementKind",
    "Envelope",
    "InputError",
    "Material",
    "Param",
    "Response",
    "Study",
    "Synthesis",
    "Target",
    "catalogue",
    "design_to_toml",
    "evaluate_design",
    "load_design",
    "load_study",
    "load_target",
    "registry",
    "synthesize",
]
