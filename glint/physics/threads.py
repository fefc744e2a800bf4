"""How many threads a compiled parallel loop gets for a given amount of work.

numba's parallel loops start their whole thread team for every call. For a
small call (a lattice of a few thousand nodes, a scene of a batch of small
scenes, the pixels of one strip of a small map) waking and joining the team
costs more than the loop, and in a batch where each worker process already
keeps one core busy, a second thread per process only competes with the
other worker. :func:`threads_for` runs such calls on the calling thread
alone and leaves large calls on the whole team.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator

import numba

__all__ = ["SERIAL_BELOW", "threads_for"]

#: Calls over fewer points than this run on one thread (measured on two
#: cores: below about 64 k points the team's start-up and join cost more than
#: the second thread saves).
SERIAL_BELOW = 65536


@contextlib.contextmanager
def threads_for(points: int) -> Iterator[None]:
    """Run the compiled parallel calls in the block on one thread when
    ``points`` is below :data:`SERIAL_BELOW`, else on the current team.

    The thread count of the calling thread is restored afterwards.

    Examples
    --------
    >>> import numba
    >>> before = numba.get_num_threads()
    >>> with threads_for(10):
    ...     numba.get_num_threads()
    1
    >>> numba.get_num_threads() == before
    True
    """
    if points >= SERIAL_BELOW:
        yield
        return
    before = numba.get_num_threads()
    numba.set_num_threads(1)
    try:
        yield
    finally:
        numba.set_num_threads(before)
