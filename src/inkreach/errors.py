"""The one exception type for mistakes a user can fix."""

__all__ = ["InkreachError"]


class InkreachError(ValueError):
    """A problem with the user's input: a picture, an arm file or an option.

    The message is one line that says what is wrong and what to do about it.
    The command line prints it without a traceback and exits non-zero; the
    web page returns it as a 4xx JSON error.

    Examples
    --------
    >>> raise InkreachError("style 'wavy' is unknown; use one of outline, hatch")
    Traceback (most recent call last):
    ...
    inkreach.errors.InkreachError: style 'wavy' is unknown; use one of outline, hatch
    """
