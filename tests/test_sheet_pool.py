"""Plots drawn in worker processes (nav/commands/sheet_pool.py): the files are written, and a
file that cannot be written is refused in one line, as the plot itself refuses it.

Reference: the PNG signature (ISO/IEC 15948, the first 8 bytes of every PNG file)."""

from __future__ import annotations

import pytest

from nav.commands.sheet_pool import SheetPool
from nav.errors import NavInputError
from nav.export import ExportPoint
from nav.timekeeping import parse_utc

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _track():
    # an invented day's run of the ketch Marram Light, 3 DR points
    return [ExportPoint(parse_utc(f"2026-05-0{d}T12:00:00Z"), 44.0 + 0.3 * d, -9.0 - 0.4 * d,
                        "dr", "") for d in (1, 2, 3)]


@pytest.mark.parametrize("workers", [1, 2])
def test_plots_are_written_by_the_pool(tmp_path, workers):
    pool = SheetPool(workers)
    paths = [tmp_path / f"p{i}.png" for i in range(3)]
    for p in paths:
        pool.draw("plot_passage", _track(), [], title="Marram Light (invented)", path=p)
    pool.close()
    for p in paths:
        assert p.read_bytes()[:8] == PNG_SIGNATURE


@pytest.mark.parametrize("workers", [1, 2])
def test_a_plot_that_cannot_be_written_is_refused(tmp_path, workers):
    blocked = tmp_path / "taken.png"
    blocked.mkdir()                                   # a folder where the file should go
    pool = SheetPool(workers)
    with pytest.raises(NavInputError) as err:
        pool.draw("plot_passage", _track(), [], title="Marram Light (invented)", path=blocked)
        pool.close()
    pool.abandon()
    assert err.value.field == "plot" and "is a folder" in str(err.value)   # nav.files' rule
    assert blocked.is_dir()                                                 # left as it was
