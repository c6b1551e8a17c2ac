"""springsynth: inverse design of springs and flexures from a target force curve.

Public API::

    import springsynth as ss
    study = ss.load_study("studies/latch-preload.toml")
    result = ss.synthesize(study, seed=1)
    result.to_frame()                 # the Pareto table
    ss.evaluate_design(result.designs[0], [0.0, 1.0, 2.0]).force_N

Names are imported on first use, so that the command line and the element kernels
start without loading the search and plotting libraries.
"""

from __future__ import annotations

import importlib

__version__ = "0.1.0"

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

_HOME = {
    "Design": "._assembly", "Element": "._assembly", "Envelope": "._assembly", "Response": "._assembly",
    "evaluate_design": "._assembly", "design_to_toml": "._designio", "load_design": "._designio",
    "InputError": "._errors", "Material": "._materials", "catalogue": "._materials", "Study": "._study",
    "load_study": "._study", "Synthesis": "._synthesis", "synthesize": "._synthesis", "Target": "._target",
    "load_target": "._target", "ElementKind": ".elements", "Param": ".elements", "registry": ".elements",
}


def __getattr__(name: str):
    if name in _HOME:
        return getattr(importlib.import_module(_HOME[name], __name__), name)
    raise AttributeError(f"module 'springsynth' has no attribute {name!r}")


def __dir__():
    return sorted(__all__)
