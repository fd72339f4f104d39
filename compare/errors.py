"""Exceptions that the command line maps to exit codes.

``InputError`` is bad input (exit status 2): its message is already the one line the user sees, naming the file or
option, the key, what was expected and what was given. ``InputErrors`` carries several such lines at once (every
problem in one scenario file). Anything else that escapes is an unexpected failure (exit status 1).
"""

from __future__ import annotations


class InputError(ValueError):
    """Bad input; the message is one line, ready to print after ``error: ``."""


class InputErrors(InputError):
    """Several input problems reported together, one line each."""

    def __init__(self, messages: list[str]):
        self.messages = list(messages)
        super().__init__("\n".join(self.messages))


def printable(text) -> str:
    """``text`` with every control or format character (escape sequences, line breaks, direction overrides) written
    as a visible escape (``\\x1b``, ``\\n``, ``\\u202e``), so that text from input can neither drive a terminal nor
    forge a second line.

    Examples
    --------
    >>> printable("a\\nerror: b\\x1b[2J")
    'a\\\\nerror: b\\\\x1b[2J'
    """
    import unicodedata

    text = str(text)
    if text.isprintable():
        return text
    out = []
    for c in text:
        if unicodedata.category(c) in ("Cc", "Cf", "Zl", "Zp", "Cs", "Co", "Cn"):
            out.append(c.encode("unicode_escape").decode("ascii"))
        else:
            out.append(c)
    return "".join(out)
