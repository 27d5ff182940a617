"""plots.py, the public face of the drawings: the names its callers use, and no pyplot.

The drawings themselves are tested in test_plan.py and test_contours.py.
"""
from __future__ import annotations

import subprocess
import sys

from hingeline.outputs import contours, plan, plots
from hingeline.outputs.result_json import PLOT_KINDS


def test_plots_gives_the_functions_callers_look_up_by_name():
    # result_json looks the functions up by the names in PLOT_KINDS; the calculation record
    # calls plot_pattern, plot_deflection and plot_utilisation
    for name in PLOT_KINDS.values():
        assert callable(getattr(plots, name))
    assert plots.plot_pattern is plan.plot_pattern
    assert plots.plot_deflection is contours.plot_deflection
    assert plots.plot_deflection_3d is contours.plot_deflection_3d
    assert plots.plot_utilisation is contours.plot_utilisation
    assert all(hasattr(plots, name) for name in plots.__all__)


def test_drawing_never_loads_pyplot():
    # pyplot keeps global figure state and may pick a display backend; the drawings use a
    # Figure with the Agg canvas only (matplotlib's documented way for non-interactive use)
    code = ("import sys\n"
            "from hingeline.outputs import plots\n"
            "from hingeline.outputs.drawing import add_caution_footer, file_figure, new_axes\n"
            "new_axes(); new_axes('3d'); fig = file_figure(); add_caution_footer(fig); fig.canvas.draw()\n"
            "print('matplotlib.pyplot' in sys.modules)\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "False"
