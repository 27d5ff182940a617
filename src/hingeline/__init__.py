"""hingeline: yield-line analysis of reinforced-concrete slabs by discontinuity layout optimisation.

Public API::

    model = hingeline.read_model("floor.toml")
    result = hingeline.solve(model)
    result.load_factor, result.yield_lines, result.mechanism
    hingeline.check_mechanism(model, result.mechanism)   # independent re-check

Units: m, kN, kNm/m, kPa. The load factor is an upper bound (collapse mechanism).
"""
from .cases import solve_cases
from .errors import HingelineError, ModelError, SolverError, UnstableSlabError
from .model import Model, model_from_toml, parse_model, read_model
from .result import Result
from .solve import solve
from .upper.certificate import check_mechanism

__all__ = [
    "HingelineError", "Model", "ModelError", "Result", "SolverError", "UnstableSlabError",
    "check_mechanism", "model_from_toml", "parse_model", "read_model", "solve", "solve_cases",
]
