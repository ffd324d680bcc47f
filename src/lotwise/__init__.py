"""lotwise: exact sampling plans for lot acceptance for incoming inspection.

The Python API (imported on first use, so ``import lotwise`` stays cheap):
:func:`design`, :func:`check`, :func:`parse_plan`, the plan classes
(:class:`SinglePlan`, :class:`DoublePlan`, :class:`MultiplePlan`,
:class:`SequentialPlan`, :class:`ChainPlan`, :class:`SkipLotPlan`,
:class:`VariablesPlan`), :class:`Scope`, :class:`Targets` and
:class:`Assessment`. See :mod:`lotwise.api`.
"""

from lotwise.core.version import __version__

_EXPORTS = {
    "design": "lotwise.api", "check": "lotwise.api", "Result": "lotwise.api",
    "parse_plan": "lotwise.families.base", "Plan": "lotwise.families.base",
    "Assessment": "lotwise.analysis.assess", "assess": "lotwise.analysis.assess",
    "Scope": "lotwise.core.types", "Targets": "lotwise.core.types",
    "InputError": "lotwise.core.quantities", "Infeasible": "lotwise.core.quantities",
    "SinglePlan": "lotwise.families.single", "DoublePlan": "lotwise.families.double",
    "MultiplePlan": "lotwise.families.multiple", "SequentialPlan": "lotwise.families.sequential",
    "ChainPlan": "lotwise.families.chain", "SkipLotPlan": "lotwise.families.skiplot",
    "VariablesPlan": "lotwise.families.variables",
}

__all__ = ["__version__", *_EXPORTS]


def __getattr__(name):
    if name in _EXPORTS:
        import importlib

        value = getattr(importlib.import_module(_EXPORTS[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'lotwise' has no attribute {name!r}")


def __dir__():
    return sorted(__all__)
