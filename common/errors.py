"""The error type for bad user input: its message is one line naming the field and the expected form."""


class InputError(ValueError):
    """Bad spec, design row or command-line value; the CLI prints it and exits with code 2."""
