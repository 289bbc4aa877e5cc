"""A small fixed slice of the reliability harness (tools/reliability/), run in CI.

The full run, whose figures are in the README's "Reliability" section, tries thousands of inputs
and 1,100 kills; this slice runs the same code on a few dozen generated inputs per way in and a
few kills, with fixed seeds. The pass criteria are the project's reliability contract (issue 7,
common practice for a navigation log, no source): no traceback or hang on any input, no confirmed
entry lost, no partial import, no log left unusable.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

TOOLS = Path(__file__).resolve().parents[1] / "tools" / "reliability"


def _load(name: str):
    spec = importlib.util.spec_from_file_location(f"reliability_{name}", TOOLS / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_fuzz_slice_gives_no_traceback_and_no_hang():
    figures = _load("fuzz").run(examples=40, seed=20261202)
    assert figures["inputs_tried"] == 120
    assert figures["tracebacks"] == 0 and figures["hangs"] == 0, figures["samples"]
    assert figures["other_exits"] == 0, figures["samples"]


def test_crash_slice_loses_nothing_and_leaves_no_partial_import():
    figures = _load("crash").run(shell_kills=4, import_kills=4, seed=20261202)
    shell, imports = figures["shell"], figures["imports"]
    assert shell["kills"] == 4 and shell["confirmed_entries"] > 0
    assert shell["entries_lost"] == 0 and shell["logs_unusable"] == 0
    assert shell["process_failures"] == 0
    assert imports["partial_imports"] == 0 and imports["logs_unusable"] == 0
    assert imports["all_kept"] + imports["none_kept"] == 4
