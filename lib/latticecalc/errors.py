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


# --- files ---------------------------------------------------------------------------------------
# Raised by latticecalc.files (every file the kit reads) and latticecalc.project.atomic
# (every file it writes).  Each names the input that gave the path (when there is one), the file
# and, where known, the line; none quotes more of the file than a short, escaped excerpt of the
# offending line of a text input, and none quotes a measured record.


class FileError(InputError):
    """A file the kit was given cannot be read as it stands (base of the file errors below)."""


class MissingFileError(FileError):
    """No file at the path (or a link to nothing)."""


class FileReadError(FileError):
    """The file is there but cannot be read (permission denied, input/output error)."""


class FolderError(FileError):
    """A folder was given where a file belongs."""


class SpecialFileError(FileError):
    """A FIFO, device or socket was given where a regular file belongs; it is refused before it is opened."""


class FileTooLargeError(FileError):
    """The file (or the array it holds) is larger than the cap of its kind; the message states the cap."""


class FileEncodingError(FileError):
    """A text file is not UTF-8 (UTF-16, Latin-1, Windows-1252, ...)."""


class BinaryFileError(FileError):
    """A text file holds binary content (a NUL byte)."""


class DuplicateKeyError(FileError):
    """A TOML key or table is given twice."""


class FileFormatError(FileError):
    """A TOML or JSON file is not valid TOML or JSON."""


class SymlinkError(FileError):
    """The kit would write at a path that is a symbolic link; nothing is written."""


class FileWriteError(LatticeCalcError, OSError):
    """Writing a file failed (disk full, permission denied, read-only file system).

    Nothing is left half-written: the previous file, if any, is unchanged.  ``errno`` is the
    operating system's error number (``errno.ENOSPC``, ``errno.EACCES``).
    """

    def __str__(self) -> str:
        return self._compose()      # OSError would print "[Errno 28] ..." once errno is set
