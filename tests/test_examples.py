"""Every bundled model solves, and its result.json is a certificate that re-checks.

The check reads only the written files: the model file and OUTDIR/result.json.
It recomputes internal work from the slope jumps of the P1 field and the load
work by exact integration (certificate.py), and requires the load factor to
agree with the solver's to 1e-6 relative and w = 0 on every supported edge.
"""
import json
from importlib import resources
from pathlib import Path

import numpy as np
import pytest

import hingeline
from hingeline.upper.certificate import slab_region
from hingeline.outputs.result_json import write_outputs
from hingeline.result import Mechanism
from hingeline.verify import verify_result

ROOT = Path(__file__).resolve().parents[1]
MODELS = sorted(ROOT.glob("examples/*.toml")) + [Path(str(resources.files("hingeline") / "data" / "demo.toml"))]


@pytest.mark.parametrize("path", MODELS, ids=[p.stem for p in MODELS])
def test_example_certificate(path, tmp_path):
    model = hingeline.read_model(path)
    result = hingeline.solve_cases(model)
    assert result.load_factor > 0
    write_outputs(result, tmp_path)
    data = json.loads((tmp_path / "result.json").read_text())

    # Only the model file and result.json (verify.py; with load cases, the governing case's loads).
    v = verify_result(hingeline.read_model(path), data)
    assert v.upper_check.load_factor == pytest.approx(data["load_factor"], rel=1e-6)
    assert v.upper_check.factored == pytest.approx(1.0, rel=1e-6)
    field = Mechanism(np.array(data["mechanism"]["vertices"], float), np.array(data["mechanism"]["triangles"], int),
                      np.array(data["mechanism"]["w"], float))
    assert v.upper_check.max_support_w <= 1e-9 * np.abs(field.w).max()

    # The triangulation covers the slab and nothing else: its area is the slab's.
    slab = slab_region(model)
    P = field.vertices[field.triangles]
    d1, d2 = P[:, 1] - P[:, 0], P[:, 2] - P[:, 0]
    area = 0.5 * np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]).sum()
    assert area == pytest.approx(slab.area, rel=1e-9)

    # Reported yield lines carry the internal work of the mechanism.
    dissipation = sum(line["dissipation"] for line in data["yield_lines"])
    assert dissipation == pytest.approx(data["work"]["internal"], rel=1e-6)

    # The lower bound re-checks from result.json alone: the stored moment field is in
    # equilibrium with the solver's optimum and inside the capacities, so the reported bound
    # holds, and it lies below the load factor (lower- and upper-bound theorems).
    lb = data["lower_bound"]
    assert lb is not None and lb["load_factor"] is not None, data["warnings"]
    assert 0 < lb["load_factor"] <= data["load_factor"] * (1 + 1e-6)
    assert v.lower_check.in_equilibrium and v.lower_holds and v.ok
    assert lb["load_factor"] <= v.proven * (1 + 1e-12)
    nodes, tris = np.array(lb["field"]["nodes"], float), np.array(lb["field"]["triangles"], int)
    P = nodes[tris]
    d1, d2 = P[:, 1] - P[:, 0], P[:, 2] - P[:, 0]
    assert 0.5 * np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]).sum() == pytest.approx(slab.area, rel=1e-9)
