"""Re-check a written result from the files alone: the model file and OUTDIR/result.json.

For a checking engineer (and for the tests): nothing is solved. The mechanism stored in
result.json is re-checked by the work equation (certificate.py), and the lower-bound moment
field, when present, by fieldcheck.py; both from the model and the stored numbers only.

Units: m, kN, kNm/m; load factors dimensionless.
"""
from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import ModelError
from .geometry.domain import build_domain
from .lower import FieldCheck, MomentField, check_field
from .model import Model, model_for_case
from .result import CertificateCheck, Mechanism
from .stored import model_differences, number_errors, pattern_errors, yield_line_errors
from .upper.certificate import CERTIFICATE_RTOL, certificate_agrees, check_mechanism

# Relative agreement required between a stored load factor and its re-check.
RTOL = CERTIFICATE_RTOL


@dataclass(frozen=True)
class Verification:
    """upper: load factor stored; upper_check: CertificateCheck of the stored mechanism;
    lower: lower bound stored (None if none); lower_check: FieldCheck of the stored field at
    the stored solver optimum `solved` (None without a field); proven: the load factor the
    field proves (solved / max(1, yield ratio) when in equilibrium, else None);
    w_max: largest |w| of the stored mechanism, m/kNm; stored_errors: every other stored
    number that disagrees with its re-check (yield lines, certificate, work, gap; see
    stored.py), one message each."""

    upper: float
    upper_check: CertificateCheck
    lower: float | None
    solved: float | None
    lower_check: FieldCheck | None
    proven: float | None
    w_max: float
    stored_errors: tuple[str, ...] = ()

    @property
    def upper_agrees(self) -> bool:
        return certificate_agrees(self.upper, self.upper_check, self.w_max)

    @property
    def lower_holds(self) -> bool:
        """True without a stored lower bound; else the field proves at least the stored value."""
        if self.lower is None:
            return True
        return self.proven is not None and self.lower <= self.proven * (1 + RTOL) and self.lower <= self.upper * (1 + RTOL)

    @property
    def ok(self) -> bool:
        return self.upper_agrees and self.lower_holds and not self.stored_errors


def read_result(path: str | Path) -> dict:
    """result.json as a dict; ModelError naming the file when it cannot be read."""
    try:
        return json.loads(Path(path).read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise ModelError(f"result file '{path}': cannot be read as JSON ({exc})") from None


class ForeignResult(ModelError):
    """The result was solved for another model than the one given (`verify` exit 1)."""


def verify_result(model: Model, data: dict, where: str = "result.json") -> Verification:
    """Re-check the result `data` (result.json as a dict) of `model` (the model file as read;
    the governing load case is taken from data["case"]). Raises ForeignResult when the
    model stored in the result is not `model`, ModelError when `data` is not a result."""
    try:
        if data.get("case") is not None:
            case = next((c for c in model.cases if c.name == data["case"]), None)
            if case is None:
                raise ModelError(f"{where}: load case {data['case']!r} is not in the model file")
            model = model_for_case(model, case)
        mech = data["mechanism"]
        mechanism = Mechanism(np.array(mech["vertices"], float).reshape(-1, 2),
                              np.array(mech["triangles"], int).reshape(-1, 3), np.array(mech["w"], float))
        upper = float(data["load_factor"])
        lb = data.get("lower_bound")
        field = None
        if lb and lb.get("field"):
            f = lb["field"]
            field = MomentField(np.array(f["nodes"], float).reshape(-1, 2), np.array(f["triangles"], int).reshape(-1, 3),
                                np.array(f["moments"], float).reshape(-1, 6, 3))
        mesh_size = float(data["stats"]["mesh_size"])
    except (KeyError, TypeError, ValueError) as exc:
        raise ModelError(f"{where}: not a hingeline result ({type(exc).__name__}: {exc})") from None

    foreign = model_differences(model, data.get("model"))
    if foreign:
        raise ForeignResult(f"{where}: {foreign[0]}")
    upper_check = check_mechanism(model, mechanism)
    stored = (*yield_line_errors(model, mechanism, data.get("yield_lines") or [], RTOL),
              *number_errors(data, upper_check, RTOL), *pattern_errors(model, data, RTOL))
    lower = solved = lower_check = proven = None
    if lb and lb.get("load_factor") is not None:
        lower, solved = float(lb["load_factor"]), float(lb["solved"])
    if field is not None and solved is not None:
        lower_check = check_field(model, build_domain(model, margin=mesh_size), field, solved)
        if lower_check.in_equilibrium:
            proven = solved / max(1.0, lower_check.yield_ratio)
    w_max = float(np.abs(mechanism.w).max(initial=0.0))
    return Verification(upper, upper_check, lower, solved, lower_check, proven, w_max, stored)
