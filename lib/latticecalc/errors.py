"""One error family for the whole kit.

Every error the kit raises on purpose is a :class:`LatticeCalcError`.  Each subclass also
inherits the built-in exception it means (``ValueError`` for a bad value, ``TypeError`` for a
wrong unit), so callers that catch the built-ins keep working.  Errors carry structured fields
(which input, what was expected, what was got, where it came from) and build one message a
practising engineer can act on.
"""

from __future__ import annotations


class LatticeCalcError(Exception):
    """Base class of every error the kit raises on purpose.

    Parameters
    ----------
    message:
        What went wrong, in one sentence.
    input_name:
        The input, argument or column concerned (``"cell.width"``, ``"diameter"``).
    expected:
        What was expected (a unit, a dimension, a range, a list of names).
    got:
        What was found instead.
    file, line:
        Where the value came from, when known.
    hint:
        What to do next.
    """

    def __init__(
        self,
        message: str,
        *,
        input_name: str | None = None,
        expected: str | None = None,
        got: str | None = None,
        file: str | None = None,
        line: int | None = None,
        hint: str | None = None,
    ) -> None:
        self.message = message
        self.input_name = input_name
        self.expected = expected
        self.got = got
        self.file = file
        self.line = line
        self.hint = hint
        super().__init__(self._compose())

    def _compose(self) -> str:
        parts = []
        where = ""
        if self.file:
            where = f"{self.file}"
            if self.line:
                where += f", line {self.line}"
            where += ": "
        head = where
        if self.input_name:
            head += f"{self.input_name}: "
        parts.append(head + self.message)
        if self.expected is not None:
            parts.append(f"expected {self.expected}")
        if self.got is not None:
            parts.append(f"got {self.got}")
        text = "; ".join(parts)
        if self.hint:
            text += f". {self.hint}"
        return text


class InputError(LatticeCalcError, ValueError):
    """A value is missing, malformed, or outside its allowed range."""


class DimensionError(LatticeCalcError, TypeError):
    """A quantity has the wrong physical dimension (for example a length where a stress belongs)."""


class RecordError(LatticeCalcError, ValueError):
    """A measured record (CSV, .npy) cannot be used as it stands."""


class ProjectError(LatticeCalcError, RuntimeError):
    """A project folder is not in a state the command can work with (missing, stale, not run)."""


class NotebookError(ProjectError):
    """A notebook cell failed during a headless run."""


class ModelError(LatticeCalcError, ValueError):
    """A numerical model cannot be built or solved as specified (mechanism, bad mesh, bad geometry)."""


class KernelDiedError(NotebookError):
    """The notebook kernel stopped (crashed, exited or was killed) while a notebook was running."""


class RunTimeoutError(NotebookError):
    """A cell, or the whole run, took longer than allowed; the kernel was stopped."""


class RunInterruptedError(NotebookError):
    """The run was stopped by a signal (SIGINT or SIGTERM); the kernel was stopped.

    ``signal_name`` is the signal's name (``"SIGTERM"``), for a command that exits with 128 + its number.
    """

    signal_name: str | None = None
