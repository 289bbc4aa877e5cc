"""Draw many plots (plotting sheets, passage plots) to files, in worker processes when asked.

A command that writes many PNGs (`nav demo`) hands each plot here as the plotting function's
name and arguments. With ``workers`` > 1 (and where the platform can fork) the plots are drawn in
that many forked processes while the caller goes on computing; each worker keeps one figure and
draws every plot it gets on it again (:func:`nav.plotting.plot_fix_sheet`'s ``figure``). With
one worker they are drawn here, in order, on one figure. :meth:`SheetPool.close` waits for all
of them and raises the first error (a file that cannot be written) as the plot itself would.
"""

from __future__ import annotations

import multiprocessing
from concurrent.futures import ProcessPoolExecutor

from ..errors import NavInputError

_FIGURE = {}                # per process: the one figure that its plots are drawn on


def _warm():
    """Import what drawing needs (in a worker, while the caller computes its first plots)."""
    from matplotlib.backends import backend_agg  # noqa: F401

    from .. import plotting  # noqa: F401


def _draw(name: str, args: tuple, kwargs: dict):
    """Draw one plot on this process' figure; an input error comes back as its fields."""
    from .. import plotting

    try:
        _FIGURE["fig"] = getattr(plotting, name)(*args, figure=_FIGURE.get("fig"), **kwargs)
    except NavInputError as err:
        return err.reason, err.field, err.example
    return None


class SheetPool:
    def __init__(self, workers: int = 1):
        self._pool = None
        self._pending = []
        if workers > 1 and "fork" in multiprocessing.get_all_start_methods():
            self._pool = ProcessPoolExecutor(workers, mp_context=multiprocessing.get_context("fork"))
            for _ in range(workers):        # start the workers now: they import matplotlib
                self._pending.append(self._pool.submit(_warm))     # while the caller computes

    def draw(self, name: str, *args, **kwargs) -> None:
        if self._pool is None:
            self._raise(_draw(name, args, kwargs))
        else:
            self._pending.append(self._pool.submit(_draw, name, args, kwargs))

    def close(self) -> None:
        if self._pool is None:
            _FIGURE.pop("fig", None)
            return
        try:
            for future in self._pending:
                self._raise(future.result())
        finally:
            self._pool.shutdown(cancel_futures=True)
            self._pool = None

    def abandon(self) -> None:
        """Stop the workers without waiting for plots not yet begun (after an error)."""
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None
        _FIGURE.pop("fig", None)

    @staticmethod
    def _raise(error) -> None:
        if error is not None:
            reason, field, example = error
            raise NavInputError(reason, field=field, example=example)
