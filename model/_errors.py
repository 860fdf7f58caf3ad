"""Errors raised by :mod:`model`.

The hierarchy::

    ValueError
    └── ModelError                 anything the model refuses to compute
        ├── ParameterError         an input is out of its accepted range (names the field)
        ├── NoBigBangError         the parameters describe a universe with no big bang
        ├── MeasurementFormatError a measurement file is malformed (names line and column;
        │                          defined in _measurements)
        └── FitError               a quick fit cannot be set up or ends without a big bang
                                   (defined in _fit)
"""

__all__ = ["ModelError", "ParameterError", "NoBigBangError"]


class ModelError(ValueError):
    """Base class of every error the model raises on purpose."""


class ParameterError(ModelError):
    """An input value is not accepted.

    Attributes
    ----------
    field : str
        Name of the offending argument (``"omega_m"``, ``"m_nu"``, ``"z"``...).
    value : object
        The value that was given.
    expected : str
        Human-readable statement of what would be accepted.
    """

    def __init__(self, field, value, expected, reason=None):
        self.field = field
        self.value = value
        self.expected = expected
        self.reason = reason
        what = reason if reason else f"{value!r} is not accepted"
        super().__init__(f"{field}: {what}; expected {expected}")


class NoBigBangError(ModelError):
    """The expansion rate vanishes in the past: the model bounces instead of starting hot.

    Attributes
    ----------
    redshift : float
        Redshift at which, going back in time, H^2 would reach zero.
    """

    def __init__(self, redshift, message):
        self.redshift = redshift
        self.field = "model"
        super().__init__(message)
