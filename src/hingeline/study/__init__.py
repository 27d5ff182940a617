"""Parameter studies: one base model, an opening moved over a grid of positions and any
numeric value of the model swept over a list, every variant solved and tabulated.

Stages, one module each:

- `file.py`     read and validate the study file (TOML) -> `Study`
- `paths.py`    plain paths ("load.imposed.value") to numeric values of a model's data
- `variants.py` grid positions, skip reasons (shapely predicates), the variant model data
- `order.py`    the order variants are solved in, each after a solved neighbour whose lines it reuses
- `run.py`      fingerprints, the resume store, local or Dask execution -> `Row`s
- `outputs.py`  study.csv, map.png, line plots and study.html (Jinja2 template)

Units: m, kN, kNm/m, kPa, as in the model file.
May import: `hingeline.model`, `hingeline.solve`, `hingeline.outputs`, `hingeline.result`,
`hingeline.errors`; Dask only lazily, inside `run.py`.
"""
from .file import Study, StudyError, read_study
from .run import Row, SolveOptions, run_study
from .variants import Skipped, Variant, build_variants

__all__ = ["Row", "Skipped", "SolveOptions", "Study", "StudyError", "Variant", "build_variants",
           "read_study", "run_study"]
