"""Names of output files and the disk-space check shared by every workflow.

Every file of a scene time is named ``<stem>_<YYYYmmddTHHMMSSZ><suffix>``,
the stem being the scene's ``outputs.stem`` (or the slug of its name) and
the time formatted by :func:`glint.times.format_time` (style ``"stamp"``),
so that outputs of other times sit side by side.
"""

from __future__ import annotations

import os
import shutil
from typing import Any, Protocol

from glint.errors import OutputError
from glint.times import format_time

__all__ = ["output_stem", "check_free_space"]


class _Named(Protocol):
    """Anything with a file-name stem (a :class:`glint.scene.Scene`)."""

    @property
    def file_stem(self) -> str: ...


def output_stem(scene: _Named, time: Any) -> str:
    """File-name stem of one scene time: ``<scene stem>_YYYYmmddTHHMMSSZ``.

    Examples
    --------
    >>> import numpy as np
    >>> class S:
    ...     file_stem = "bay"
    >>> output_stem(S(), np.datetime64("2026-06-14T10:30:00"))
    'bay_20260614T103000Z'
    """
    return f"{scene.file_stem}_{format_time(time, 'stamp')}"


def check_free_space(directory: str | os.PathLike[str], nbytes: int) -> None:
    """Raise :class:`~glint.errors.OutputError` if ``directory`` has less than
    ``nbytes`` bytes free.

    Examples
    --------
    >>> check_free_space(".", 1)
    """
    free = shutil.disk_usage(directory).free
    if free < nbytes:
        raise OutputError(
            f"not enough disk space in {str(directory)!r}: about {nbytes / 1e6:,.1f} MB "
            f"needed, {free / 1e6:,.1f} MB free"
        )
