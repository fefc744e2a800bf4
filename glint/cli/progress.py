"""What long runs show on a terminal: a progress bar (tqdm) over the rows of
a map, the first-run kernel compilation notice, and the command line that
is recorded in every output."""

from __future__ import annotations

import importlib
import shlex
import sys
from pathlib import Path
from types import TracebackType
from typing import Any, TextIO

import click

__all__ = ["RowProgress", "PROGRESS_MIN_PIXELS", "command_line", "kernels_cached",
           "notice_compiling"]

#: Smallest grid (pixels per scene time) that shows a progress bar: smaller
#: runs take a second or two and a bar would only flicker.
PROGRESS_MIN_PIXELS = 4_000_000

#: The compiled (numba, cached on disk) loops every map run calls, as
#: (module, name); helpers inlined into them have no cache of their own.
_KERNELS = (("glint.physics.kernel", "_nb_kernel"), ("glint.physics.sun", "_observer_kernel"),
            ("glint.engine.compute", "_classify_loop"), ("glint.geo.lattice", "_bilinear_loop"))


class RowProgress:
    """A progress bar over the rows of a grid, for ``progress=`` callbacks.

    Shown on standard error only when it is a terminal, ``quiet`` is 0 and
    the grid has at least ``min_pixels`` pixels; otherwise every call does
    nothing. Called as ``progress(done_rows, total_rows)``; a call whose
    ``done_rows`` goes back starts a new bar (the next scene time). tqdm
    shows the rows done, the rate and the time left.
    """

    def __init__(self, *, pixels: int, label: str, quiet: int = 0,
                 stream: TextIO | None = None, min_pixels: int = PROGRESS_MIN_PIXELS) -> None:
        self.stream = sys.stderr if stream is None else stream
        isatty = getattr(self.stream, "isatty", None)
        self.enabled = bool(quiet == 0 and pixels >= min_pixels and callable(isatty) and isatty())
        self.label = label
        self._bar: Any = None
        self._done = 0

    def __call__(self, done: int, total: int) -> None:
        if not self.enabled:
            return
        from tqdm import tqdm

        if self._bar is None or done < self._done:
            self.close()
            self._bar = tqdm(total=total, desc=self.label, unit="row", file=self.stream,
                             dynamic_ncols=True, leave=False)
            self._done = 0
        self._bar.update(done - self._done)
        self._done = done

    def close(self) -> None:
        """Remove the bar from the terminal."""
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __enter__(self) -> RowProgress:
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        self.close()


def command_line() -> str:
    """The command as typed (``glint map scene.toml -o out ...``), for the
    outputs' records."""
    return shlex.join(["glint", *sys.argv[1:]])


def kernels_cached() -> bool:
    """Whether every compiled kernel of a run is in numba's on-disk cache.

    False after installing (or changing) glint: the first run then spends
    about ten seconds compiling. Unknown cache layouts count as cached (no
    notice rather than a wrong one).
    """
    for module_name, name in _KERNELS:
        try:
            obj = getattr(importlib.import_module(module_name), name)
        except (ImportError, AttributeError):
            continue
        cache = getattr(obj, "_cache", None)
        index = getattr(getattr(cache, "_cache_file", None), "_index_path", None)
        if index is not None and not Path(index).exists():
            return False
    return True


def notice_compiling(quiet: int) -> None:
    """Say "compiling kernels (first run only)" on standard error when the
    kernels are not cached yet (not with ``-qq``)."""
    if quiet < 2 and not kernels_cached():
        click.echo("compiling kernels (first run only; about 10 s) ...", err=True)
