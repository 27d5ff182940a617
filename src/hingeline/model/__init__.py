"""The model: what the user wrote in the model file, read and validated.

Public names: `read_model`, `model_from_toml`, `parse_model` (file / text / dict -> `Model`),
the frozen dataclasses of a model, and `model_for_case`. Every error is a `ModelError` that
names the offending item. Units: m, kN, kNm/m, kPa; angles in degrees in the file.
Modules: `types` (the dataclasses), `read` (entry points and the order of the sections),
`slab`, `capacity`, `loads`, `supports` (one per section of the file), `polygons` and `values`
(shared checks and message wording), `eurocode` (bar schedules), `criterion` (Johansen).
May import: numpy, shapely, tomllib, `hingeline.errors`. Nothing downstream.
"""
from .read import model_for_case, model_from_toml, parse_model, read_model, resolution_replacement
from .types import (
                    EDGE_KINDS,
                    OLD_RESOLUTION_NODES,
                    Analysis,
                    AreaLoad,
                    Capacity,
                    LineLoad,
                    LoadCase,
                    Model,
                    PointLoad,
                    Slab,
                    Support,
                    Zone,
)

__all__ = [
    "EDGE_KINDS", "OLD_RESOLUTION_NODES", "Analysis", "AreaLoad", "Capacity", "LineLoad", "LoadCase", "Model",
    "PointLoad", "Slab", "Support", "Zone", "model_for_case", "model_from_toml", "parse_model",
    "read_model", "resolution_replacement",
]
