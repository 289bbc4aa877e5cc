"""Rebuild nav/data/ut1_utc.csv, the UT1−UTC table nav's time scale uses.

Source: the IERS Rapid Service / Prediction Centre file ``finals2000A.all`` (IERS Bulletin A:
measured daily UT1−UTC since 1973-01-02, and about a year of predictions), as shipped by the PyPI
package ``astropy-iers-data`` (installed with the test extra; nav never needs it at run time).

skyfield's own bundled table (its ``iers.npz``) is frozen at skyfield's release; a newer
``astropy-iers-data`` brings newer measurements, so the table is rebuilt from it and shipped in
nav/data. Run:  python tools/build_ut1_table.py  (the output is byte-identical on a rerun with the
same astropy-iers-data version; the version is written into the file's first lines).
"""

from __future__ import annotations

import io
import sys
from importlib import metadata
from pathlib import Path

OUT = Path(__file__).resolve().parents[1] / "nav" / "data" / "ut1_utc.csv"


def build(out: Path = OUT) -> Path:
    import astropy_iers_data
    from skyfield.data.iers import parse_x_y_dut1_from_finals_all

    src = Path(astropy_iers_data.__file__).parent / "data" / "finals2000A.all"
    with open(src, "rb") as fh:
        data = parse_x_y_dut1_from_finals_all(fh)
    mjd, dut1 = data["utc_mjd"], data["dut1"]
    version = metadata.version("astropy-iers-data")
    buf = io.StringIO()
    buf.write(f"# UT1-UTC (s) by UTC MJD, from IERS finals2000A.all (Bulletin A) in astropy-iers-data {version}\n")
    buf.write(f"# {len(mjd)} days, MJD {int(mjd[0])} to {int(mjd[-1])}; rebuilt by tools/build_ut1_table.py\n")
    buf.write("utc_mjd,ut1_minus_utc_s\n")
    for m, d in zip(mjd, dut1):
        buf.write(f"{int(m)},{d:.7f}\n")
    out.write_text(buf.getvalue(), encoding="ascii")
    return out


if __name__ == "__main__":
    path = build(Path(sys.argv[1]) if len(sys.argv) > 1 else OUT)
    print(f"wrote {path}")
