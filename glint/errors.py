"""Exceptions and warnings raised by glint.

Every exception derives from :class:`GlintError` and also from the built-in
exception a caller would expect (``ValueError`` for bad values, ``OSError``
for files), so ``except ValueError`` keeps working. Messages name the bad
value with ``!r`` and say what is allowed.
"""

from __future__ import annotations

__all__ = [
    "GlintError",
    "InputError",
    "GridError",
    "SceneError",
    "SensorError",
    "OutputError",
    "MemoryLimitError",
    "InputFileError",
    "RunStopped",
    "GlintWarning",
    "ValidityWarning",
]


class GlintError(Exception):
    """Root of every error raised by glint."""


class InputError(GlintError, ValueError):
    """A physical or numerical input is outside what a function accepts."""


class GridError(GlintError, ValueError):
    """A grid (CRS, transform, shape) cannot be built or does not match."""


class SensorError(GlintError, ValueError):
    """A sensor description cannot describe a real viewing geometry."""


class SceneError(GlintError, ValueError):
    """A scene description has one or more problems.

    Parameters
    ----------
    problems : list of str
        One line per problem, each starting with the key path
        (``surface.wind_speed: ...``).
    source : str, optional
        The file the scene came from, named in the message.
    """

    def __init__(self, problems: list[str] | str, source: str | None = None):
        if isinstance(problems, str):
            problems = [problems]
        self.problems = list(problems)
        self.source = source
        head = f"invalid scene{f' {source!s}' if source else ''}"
        if len(self.problems) == 1:
            msg = f"{head}: {self.problems[0]}"
        else:
            msg = f"{head} ({len(self.problems)} problems):\n" + "\n".join(
                f"  - {p}" for p in self.problems
            )
        super().__init__(msg)


class InputFileError(GlintError, OSError):
    """An input file is missing, unreadable or does not match the grid."""


class OutputError(GlintError, OSError):
    """An output cannot be written (exists, directory not writable, disk)."""


class MemoryLimitError(GlintError, MemoryError):
    """A job would need more memory than the machine has available; raised
    before computing, instead of the system stopping the process."""


class RunStopped(KeyboardInterrupt):
    """The run was stopped by a signal (SIGINT from Ctrl-C, SIGTERM from a
    scheduler or ``timeout``).

    A ``KeyboardInterrupt`` (hence a ``BaseException``), so that ``except
    Exception`` clauses in workflows do not swallow a stop; ``finally``
    blocks and context managers still run and remove temporary files.

    Parameters
    ----------
    signum : int
        The signal number.
    """

    def __init__(self, signum: int):
        import signal

        self.signum = int(signum)
        try:
            self.signal_name = signal.Signals(self.signum).name
        except ValueError:
            self.signal_name = f"signal {self.signum}"
        super().__init__(f"stopped by {self.signal_name}")

    @property
    def exit_code(self) -> int:
        """The conventional shell exit status, 128 + the signal number
        (130 after SIGINT, 143 after SIGTERM)."""
        return 128 + self.signum


class GlintWarning(UserWarning):
    """Root of every warning issued by glint."""


class ValidityWarning(GlintWarning):
    """An input lies outside the range where a published method was fitted
    or validated; the result is an extrapolation."""
