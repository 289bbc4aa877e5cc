"""nav never touches the network and leaks no warning.

In-process, tests/conftest.py refuses every socket connection. For a whole `nav almanac` process
the guard is a sitecustomize module put first on PYTHONPATH: it installs an audit hook (PEP 578)
that refuses every socket operation and every open of skyfield-data's finals2000A.all (the
Earth-orientation file skyfield-data ships and nav deliberately never reads, because skyfield-data
warns that it has expired; nav reads the one astropy-iers-data ships). The processes run with `-W error`, so any warning, at any time up to exit, shows.
Each guard is shown to bite (a control), so these tests can fail.
"""

from __future__ import annotations

import socket
import subprocess
import sys
import textwrap
import warnings
from datetime import datetime
from pathlib import Path

import numpy as np
import pytest

from nav import almanac as al
from nav import ephemeris as eph
from nav.timekeeping import UTC

REPO = Path(__file__).resolve().parent.parent
UTC_TEXT = "2026-03-20T18:42:10Z"

GUARD = textwrap.dedent('''
    import sys

    def _nav_offline_guard(event, args):
        if event.startswith("socket.") or event.startswith("urllib."):
            sys.stderr.write(f"OFFLINE GUARD: {event}\\n")
            raise RuntimeError(f"network use refused by the offline guard: {event}")
        if (event == "open" and args and "finals2000A" in str(args[0])
                and "skyfield_data" in str(args[0])):
            sys.stderr.write(f"OFFLINE GUARD: opened {args[0]}\\n")
            raise RuntimeError("finals2000A.all opened")

    sys.addaudithook(_nav_offline_guard)
''')


@pytest.fixture(scope="module")
def guarded_env(tmp_path_factory):
    import os

    site = tmp_path_factory.mktemp("offline_site")
    (site / "sitecustomize.py").write_text(GUARD, encoding="utf-8")
    env = {k: v for k, v in os.environ.items() if not k.startswith(("HTTP", "HTTPS", "http", "https"))}
    env["PYTHONPATH"] = str(site)
    env.pop("PYTHONWARNINGS", None)
    return env


def run(env, *args, cwd=None):
    return subprocess.run([sys.executable, "-W", "error", *args], capture_output=True, text=True,
                          env=env, cwd=cwd or REPO.parent, timeout=120)


# ---------------------------------------------------------------- the guards bite (controls)

def test_control_the_subprocess_guard_refuses_sockets(guarded_env):
    proc = run(guarded_env, "-c", "import socket; socket.create_connection(('127.0.0.1', 9), timeout=1)")
    assert proc.returncode != 0
    assert "OFFLINE GUARD: socket." in proc.stderr


def test_control_the_subprocess_guard_refuses_finals(guarded_env):
    code = ("import os, skyfield_data; "
            "open(os.path.join(os.path.dirname(skyfield_data.__file__), 'data', 'finals2000A.all'))")
    proc = run(guarded_env, "-c", code)
    assert proc.returncode != 0 and "OFFLINE GUARD: opened" in proc.stderr


def test_control_skyfield_data_path_lookup_would_warn(guarded_env):
    # The warning nav avoids is real: skyfield_data.get_skyfield_data_path() checks the expiry of
    # finals2000A.all and warns; under -W error that is a failing process.
    proc = run(guarded_env, "-c", "import skyfield_data; skyfield_data.get_skyfield_data_path()")
    assert proc.returncode != 0 and "finals2000A.all" in proc.stderr


def test_control_conftest_refuses_sockets_in_process():
    with pytest.raises(RuntimeError, match="network"):
        socket.create_connection(("127.0.0.1", 9), timeout=1)


# ---------------------------------------------------------------- nav under the guards

def test_nav_almanac_process_is_offline_and_silent(guarded_env, tmp_path):
    for argv in (["Sun", "Moon", "Venus", "Sirius", "Polaris", "--utc", UTC_TEXT],
                 ["all", "--from", "2026-03-20T00:00Z", "--to", "2026-03-20T06:00Z", "--step", "1h", "--json"]):
        proc = run(guarded_env, "-m", "nav", "almanac", *argv, cwd=tmp_path)
        assert proc.returncode == 0, proc.stderr
        assert proc.stderr == "", proc.stderr
        assert proc.stdout


def test_engine_in_a_fresh_process_is_offline_and_silent(guarded_env, tmp_path):
    code = textwrap.dedent('''
        import warnings
        from datetime import datetime, timezone
        import numpy as np
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            from nav import almanac as al
            t = datetime(2026, 3, 20, 18, 42, 10, tzinfo=timezone.utc)
            al.almanac(al.body_names(), t)
            t64 = np.arange(np.datetime64("1900-01-01"), np.datetime64("2051-01-01"),
                            np.timedelta64(365, "D")).astype("datetime64[us]")
            al.almanac(al.body_names(), t64)
            al.equation_of_time_min(t64)
            al.meridian_passage("Sun", -45.0, t)
        assert not caught, [str(w.message) for w in caught]
        print("OK")
    ''')
    proc = run(guarded_env, "-c", code, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip() == "OK" and proc.stderr == ""


def test_engine_in_process_records_no_warning():
    # Load everything afresh (the caches would hide a warning given on first load).
    eph.ephemeris.cache_clear()
    eph.timescale.cache_clear()
    al._star_vectors.cache_clear()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        t = datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)
        al.almanac(al.body_names(), t)
        al.almanac(["Moon", "Sirius"], np.array(["1900-01-01T00:00", "2050-12-31T23:59:59"],
                                                dtype="datetime64[us]"))
        al.equation_of_time_min(t)
    assert [str(w.message) for w in caught] == []


def test_astropy_is_offline_in_the_tests():
    # conftest sets astropy to its bundled IERS tables, with downloads refused.
    from astropy.utils import iers
    from astropy.utils.data import conf as data_conf

    assert iers.conf.auto_download is False
    assert data_conf.allow_internet is False


def test_registering_the_commands_imports_nothing_heavy():
    # `nav --version` and `nav --help` build the parser of every subcommand: that must not import
    # numpy, skyfield, matplotlib or prompt_toolkit (they are imported inside the commands).
    code = ("import sys; from nav.cli import build_parser; build_parser(); "
            "heavy = [m for m in ('numpy', 'skyfield', 'matplotlib', 'prompt_toolkit', 'astropy')"
            " if m in sys.modules]; print(heavy); sys.exit(1 if heavy else 0)")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    proc = subprocess.run([sys.executable, "-m", "nav", "--version"], capture_output=True,
                          text=True, cwd=REPO)
    assert proc.returncode == 0 and proc.stdout.startswith("nav ")
