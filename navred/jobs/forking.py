"""(edge) Work shared among forked processes, in order, with every warning kept.

Two jobs are long enough to share among a machine's cores and split cleanly into independent
pieces: drawing thousands of plotting sheets, and reducing a long log block by block for
``navred reduce --csv``. :func:`forked_map` runs ``function(context, item)`` for each item in
processes forked from this one (they inherit ``context`` as it is, nothing is pickled but the
item and the result), yields the results in the items' order with a few pieces ahead at most
(memory stays bounded), and re-issues here every warning a piece raised, so that the command
prints it. Where the system cannot fork, or one piece is all there is, this process does the
work; should a forked process die (out of memory, killed), the pieces not yet handed back are
done here. The results are those this process would give (tested for both jobs). A forked process
ends itself when the process that forked it is gone (a run stopped by a signal leaves no worker behind).
"""

from __future__ import annotations

import functools
import itertools
import multiprocessing
import os
import sys
import warnings
from collections import deque
from collections.abc import Callable, Iterable, Iterator
from typing import Any

#: what the forked processes work with: set before they are forked, cleared after
_CONTEXT: dict = {}
#: at most this many processes, however many cores there are
MAX_WORKERS = 8


def cores() -> int:
    """The cores this process may use."""
    return len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else (os.cpu_count() or 1)


def can_fork() -> bool:
    return "fork" in multiprocessing.get_all_start_methods()


#: how often (seconds) a forked process looks whether the process that forked it is still there
PARENT_CHECK_S = 0.5


def _end_with_parent(parent: int) -> None:
    """In a forked process: end it as soon as the process that forked it has gone (stopped by a signal, or
    killed), rather than leave it drawing or reducing for no one (a watch thread looks every
    :data:`PARENT_CHECK_S`)."""
    import threading
    import time

    def watch() -> None:
        while os.getppid() == parent:
            time.sleep(PARENT_CHECK_S)
        os._exit(1)

    threading.Thread(target=watch, name="navred-parent-watch", daemon=True).start()


def _run(function: Callable[[Any, Any], Any], item: Any) -> tuple[Any, list[Warning]]:
    """One piece in a forked process: its result and the warnings it raised."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = function(_CONTEXT["context"], item)
    return result, [w.message for w in caught]


def forked_map(function: Callable[[Any, Any], Any], items: Iterable[Any], *, context: Any,
               workers: int) -> Iterator[Any]:
    """``function(context, item)`` for each item, in order, worked by up to ``workers`` forked processes.

    ``function`` must be a module-level function (it is sent by name); ``context`` is inherited by
    the processes, never sent. ``items`` is taken as it comes (an iterator's next item only when a process is
    free for it, or a few ahead), so an item may be found while the first ones are worked."""
    following = iter(items)
    handed: list = []  # the items handed to the processes, in order
    done = 0
    workers = max(1, min(int(workers), MAX_WORKERS, len(items) if hasattr(items, "__len__") else MAX_WORKERS))
    if workers > 1 and can_fork():
        from concurrent.futures import ProcessPoolExecutor
        from concurrent.futures.process import BrokenProcessPool

        _CONTEXT["context"] = context
        pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context("fork"),
                                   initializer=_end_with_parent, initargs=(os.getpid(),))
        try:
            pending: deque = deque()
            for item in following:
                handed.append(item)
                pending.append(pool.submit(_run, function, item))
                if len(pending) > workers:
                    break
            while pending:
                result, raised = pending.popleft().result()
                for message in raised:
                    warnings.warn(message, stacklevel=2)
                done += 1
                yield result
                for item in following:  # one more handed out for each one handed back
                    handed.append(item)
                    pending.append(pool.submit(_run, function, item))
                    break
        except BrokenProcessPool:
            pass  # a process died: the rest here
        finally:
            # the pieces not yet started are dropped when the reader stops early (a closed pipe, an error)
            pool.shutdown(wait=True, cancel_futures=True)
            _CONTEXT.clear()
    for item in itertools.chain(handed[done:], following):
        yield function(context, item)


def give_back_memory() -> None:
    """Hand the memory this process has freed back to the system, where the C library can (glibc's
    ``malloc_trim``; nothing elsewhere). A process that works piece after piece otherwise keeps the pages its
    largest piece needed: the allocator keeps freed memory for reuse, and a few objects left among it keep
    the rest from being released (measured after a million-row DataFrame's reduction: about 100 MB kept by
    the first process). Not worth it between the pieces of a worker: the next piece asks for the pages again
    (a worker's 20 MB saved for 12 % more processor time)."""
    trim = _malloc_trim()
    if trim is not None:
        trim(0)


@functools.cache
def _malloc_trim():
    """glibc's ``malloc_trim``, or None where the C library has none (musl, macOS, Windows)."""
    if not sys.platform.startswith("linux"):
        return None
    try:
        import ctypes

        return ctypes.CDLL(None).malloc_trim
    except (OSError, AttributeError):
        return None


__all__ = ["forked_map", "cores", "can_fork", "give_back_memory", "MAX_WORKERS"]
