"""Fixtures of the output tests: the notched panel the plot tests draw, solved once."""
import pytest
from plot_scene import NOTCHED_PANEL

from hingeline import solve
from hingeline.model import model_from_toml


@pytest.fixture(scope="session")
def notched_result():
    """The notched panel of plot_scene.py, solved on a uniform mesh of 150 nodes (with its lower bound)."""
    return solve(model_from_toml(NOTCHED_PANEL))
