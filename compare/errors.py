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
