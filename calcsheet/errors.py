"""User-facing errors: each knows where in the input it points and how the command should exit."""

from __future__ import annotations

EXIT_OK = 0
EXIT_CHECK_FAILED = 1
EXIT_INPUT_ERROR = 2


class CalcsheetError(Exception):
    """An error the user can act on; never shown as a traceback."""

    exit_code = EXIT_INPUT_ERROR

    def __init__(self, message: str, key: str = "", file: str = ""):
        super().__init__(message)
        self.message = message
        self.key = key
        self.file = file

    def located(self, file: str = "", key: str = "") -> "CalcsheetError":
        """Fill in the file and key where the raiser could not know them."""
        if not self.file:
            self.file = file
        if not self.key:
            self.key = key
        return self

    def __str__(self) -> str:
        parts = [p for p in (self.file, self.key) if p]
        return ": ".join(parts + [self.message])


class InputError(CalcsheetError):
    """The input file is malformed, inconsistent or unsafe."""


class ModelRefused(CalcsheetError):
    """The stated model is valid but not a first-order linear ODE, so it cannot be solved here."""
