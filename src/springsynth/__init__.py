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

from springsynth.model.version import __version__

__all__ = [
    "__version__",
    "Design",
    "Duty",
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
    "fatigue_design",
    "load_design",
    "load_study",
    "load_target",
    "registry",
    "synthesize",
]

_HOME = {
    "Design": "springsynth.assembly.design", "Element": "springsynth.assembly.design", "Envelope": "springsynth.model.study", "Response": "springsynth.assembly.evaluate",
    "evaluate_design": "springsynth.assembly.evaluate", "design_to_toml": "springsynth.io.design_toml", "load_design": "springsynth.io.design_toml",
    "InputError": "springsynth.model.errors", "Material": "springsynth.model.materials", "catalogue": "springsynth.model.materials", "Study": "springsynth.model.study",
    "load_study": "springsynth.io.study_toml", "Synthesis": "springsynth.search.synthesis", "synthesize": "springsynth.search.synthesis", "Target": "springsynth.model.target",
    "load_target": "springsynth.io.target_csv", "Duty": "springsynth.model.study",
    "fatigue_design": "springsynth.checks.fatigue", "ElementKind": "springsynth.elements", "Param": "springsynth.elements", "registry": "springsynth.elements",
}


def __getattr__(name: str):
    if name in _HOME:
        return getattr(importlib.import_module(_HOME[name]), name)
    raise AttributeError(f"module 'springsynth' has no attribute {name!r}")


def __dir__():
    return sorted(__all__)
