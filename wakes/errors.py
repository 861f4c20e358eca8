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
