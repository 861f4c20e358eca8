"""Errors a user can cause, all subclasses of one :class:`WakesError`."""


class WakesError(ValueError):
    """Base class of every error a user of ``wakes`` can cause.

    It subclasses :class:`ValueError` so callers that already catch
    ``ValueError`` keep working. Messages name the offending input, show the
    bad value and say what is accepted.
    """


class InputError(WakesError):
    """An argument has the wrong shape, type, range or name."""


class CaseError(WakesError):
    """A case file is malformed, names an unknown key or holds a bad value."""


class NumericalError(WakesError):
    """A computation went unstable or did not converge.

    Raised with the step, the time and the likely cause; the last good
    state is kept by whoever raised it.
    """


class MemoryBudgetError(WakesError):
    """A run would need more memory than it may use."""


class UnstableRunError(NumericalError):
    """The run went unstable; the message names step, time, element, cause and remedy."""


class PolarRangeError(InputError):
    """An angle of attack or a Mach number fell outside what a polar covers.

    Attributes
    ----------
    index : int
        Index of the first offending section in the evaluated array.
    alpha_deg : float
        The angle of attack there [deg].
    mach : float or None
        The Mach number there, if the polar was evaluated at one.
    """

    def __init__(self, message: str, index: int, alpha_deg: float, mach: float | None = None):
        super().__init__(message)
        self.index = index
        self.alpha_deg = alpha_deg
        self.mach = mach


class TrimError(WakesError):
    """A trim did not meet its targets; the message names each target missed and its residual."""


class CheckpointError(WakesError):
    """A run folder holds no checkpoint, or one that cannot be read."""
