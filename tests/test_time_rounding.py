"""One rule rounds a time everywhere it is shown (issue 7 item 11): to the nearest second, half a
second up, and a label to the minute rounds that second again, half a minute up (common
practice, no source). The same sight's time then reads alike on screens, in files and on sheets.
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import numpy as np

from nav.timekeeping import (format_date_hm, format_date_hms, format_hm, format_hms, format_utc,
                             round_to_second, to_datetime64)

UTC = timezone.utc
T = datetime(2026, 6, 14, 22, 54, 29, tzinfo=UTC)


def test_the_rule():
    assert round_to_second(T + timedelta(microseconds=499_999)) == T
    assert round_to_second(T + timedelta(microseconds=500_000)) == T + timedelta(seconds=1)
    t = T + timedelta(microseconds=600_000)                        # 22:54:29.6
    assert format_utc(t) == "2026-06-14T22:54:30Z"
    assert format_date_hms(t) == "2026-06-14 22:54:30" and format_hms(t) == "22:54:30 UTC"
    # the minute of the second shown: 22:54:30 goes up (half up), as a navigator reads it
    assert format_hm(t) == "22:55" and format_date_hm(t) == "2026-06-14 22:55"
    assert format_hm(T + timedelta(microseconds=400_000)) == "22:54"
    zoned = datetime(2026, 6, 14, 19, 54, 29, 600_000, tzinfo=timezone(timedelta(hours=-3)))
    assert format_utc(zoned) == "2026-06-14T22:54:30Z"


def test_screens_files_and_sheets_agree_for_one_sight():
    from nav import almanac  # noqa: F401 - the chain below needs the ephemeris
    from nav.plotting import when
    from nav.render import reduction_dict, sight_title, utc_strings
    from nav.sightfile import SightRow
    from nav.workflow import reduce_rows

    t = T + timedelta(microseconds=600_000)
    row = SightRow(row=1, utc=t, body="Vega", hs_deg=40.0, hs_text="40 00.0", limb=None,
                   index_error_arcmin=0.0, eye_height_m=2.5, temperature_c=10.0,
                   pressure_hpa=1010.0, horizon="sea", dr_lat_deg=41.0, dr_lon_deg=-32.0,
                   dr_given=True, course_deg=None, speed_kn=None, sigma_arcmin=1.0, note="")
    red = reduce_rows([row]).sight(0)
    assert sight_title(red).endswith("2026-06-14 22:54:30 UTC")          # the screen
    assert reduction_dict(red)["utc"] == "2026-06-14T22:54:30Z"          # JSON and files
    assert utc_strings(np.array([to_datetime64(t)]))[0] == "2026-06-14T22:54:30Z"
    assert when(t) == "22:55" and when(t, "day") == "14 Jun 22:55"       # the sheet
