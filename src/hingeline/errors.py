"""Named exceptions of hingeline.

Every error meant for the user carries a message that names the offending item
and says what to do; the command line prints it and exits with code 2.
"""


class HingelineError(Exception):
    """Base class of all errors raised on purpose by hingeline."""


class ModelError(HingelineError):
    """The model (file or data) is invalid: malformed, inconsistent or incomplete."""


class UnstableSlabError(HingelineError):
    """The slab can collapse without resisting (zero or negative load factor)."""


class HeldLoadCollapse(UnstableSlabError):
    """The slab collapses under its held loads alone. `result`, when set by solve, is the
    mechanism of the held loads alone (load factor on them below 1), for drawing and storing."""

    result = None


class SolverError(HingelineError):
    """The linear program could not be solved (a fault of hingeline or HiGHS, not of the model)."""
