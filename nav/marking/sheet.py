"""The worked-sheet CSV contract: one row per student per sight, and the plotted-fixes file.

Cells are as a student writes them: angles ``ddd mm.m`` with N/S/E/W where they apply, signed
corrections in arcminutes as applied, ``ie`` in the trade's words (``2.4 off``), ``eye_height``
with its unit, Z as ``S 134.7 E``, the intercept unsigned with ``T``/``A``. A blank cell is a step
not attempted. Inside nav a sheet row is a dict of figure → value: angles in decimal degrees
(signed N/E +), corrections in arcminutes, UTC as an aware datetime, ZT as a time of day, ZD and
watch error as hours and seconds.
"""

from __future__ import annotations

import csv
import io
from datetime import date, datetime, timedelta

from ..angles import format_dm, norm360, parse_altitude, parse_angle, parse_lat, parse_lon, parse_number
from ..errors import NavInputError
from ..fields import parse_index_error
from ..timekeeping import (UTC, format_watch_error, parse_clock_time, parse_ship_date,
                           parse_watch_error, parse_zone_description)
from .triangle import format_z, parse_z

SHEET_COLUMNS = (
    "student", "exercise", "sight", "body", "limb", "ship_date", "watch_time", "watch_error", "zt",
    "zd", "utc_date", "utc_time", "gha_hour", "gha_incr", "v", "v_corr", "gha_aries", "sha", "gha",
    "dec_hour", "d", "d_corr", "dec", "hp", "dr_lat", "dr_lon", "ap_lat", "ap_lon", "lha", "hs",
    "ie", "index_corr", "eye_height", "dip", "ha", "refraction", "sd", "parallax", "main_corr",
    "add_corr", "ho", "hc", "z", "zn", "intercept", "t_a")
FIX_COLUMNS = ("student", "exercise", "fix", "zt", "sights", "lat", "lon", "note")
TEXT = ("student", "exercise", "sight", "body", "limb", "note", "fix")
MAX_BYTES = 5 * 1024 * 1024

ANGLE360 = ("gha_hour", "gha_incr", "gha_aries", "sha", "gha", "lha")
LATLIKE = ("dec_hour", "dec", "dr_lat", "ap_lat", "lat")
LONLIKE = ("dr_lon", "ap_lon", "lon")
ALTITUDE = ("hs", "ha", "ho", "hc")
ARCMIN = ("v", "v_corr", "d", "d_corr", "hp", "index_corr", "dip", "refraction", "sd", "parallax",
          "main_corr", "add_corr")
CLOCK = ("watch_time", "zt", "utc_time")
EXAMPLES = {"gha": "283 07.9", "dec": "20 30.1 N", "lon": "151 26.1 W", "hs": "34 12.3",
            "arcmin": "-2.4", "z": "S 134.7 E"}


def parse_cell(name: str, text: str):
    """One sheet cell → its value (see the module doc); None for a blank cell."""
    s = str(text).strip()
    if s.startswith("'"):          # a cell neutralised against spreadsheet formulas
        s = s[1:].strip()
    if not s:
        return None
    if name in TEXT:
        return s[:40]
    if name in ANGLE360:
        return float(norm360(parse_angle(s, name, min_deg=0.0, max_deg=360.0)))
    if name in LATLIKE:
        return parse_lat(s, name)
    if name in LONLIKE:
        return parse_lon(s, name)
    if name in ALTITUDE:
        if name == "hs":
            return parse_altitude(s, name)
        return parse_angle(s, name, min_deg=-90.0, max_deg=90.0)
    if name in ARCMIN:
        return parse_number(s.replace("\u2212", "-").rstrip("′'"), name, min_value=-120.0,
                            max_value=120.0, example=EXAMPLES["arcmin"])
    if name in CLOCK:
        return parse_clock_time(s, name)
    if name in ("ship_date", "utc_date"):
        return parse_ship_date(s, name)
    if name == "watch_error":
        return parse_watch_error(s, name).total_seconds()
    if name == "zd":
        return parse_zone_description(s, name).total_seconds() / 3600.0
    if name == "ie":
        return parse_index_error(s, name)
    if name == "eye_height":
        from ..angles import parse_height_m

        return parse_height_m(s, name)
    if name == "z":
        return parse_z(s, name)
    if name == "zn":
        return parse_number(s.rstrip("°"), name, min_value=0.0, max_value=360.0, example="225.3")
    if name == "intercept":
        return parse_number(s, name, min_value=0.0, max_value=10800.0, example="3.4")
    if name == "t_a":
        word = s.upper()
        if word not in ("T", "A"):
            raise NavInputError(f"'{s}' is not T or A", field=name, example="T (toward) or A (away)")
        return word
    if name == "sights":
        return tuple(s.split())
    raise NavInputError(f"unknown column '{name}'", field="header", example=",".join(SHEET_COLUMNS[:5]))


def _dm(value_deg: float, width: int) -> str:
    text = format_dm(abs(value_deg), deg_width=width, wrap360=width == 3)
    return text.replace("°", " ").replace("′", "")


def format_cell(name: str, value) -> str:
    """A value → the cell a careful student writes (inverse of :func:`parse_cell`)."""
    if value is None:
        return ""
    if name in TEXT:
        return str(value)
    if name in ANGLE360:
        return _dm(float(norm360(value)), 3)
    if name in LATLIKE:
        if name == "ap_lat" and float(value) == round(float(value)):
            return f"{abs(int(round(value)))} {'S' if value < 0 else 'N'}"
        return f"{_dm(value, 2)} {'S' if value < 0 else 'N'}"
    if name in LONLIKE:
        return f"{_dm(value, 3)} {'W' if value < 0 else 'E'}"
    if name in ALTITUDE:
        return ("\u2212" if value < 0 else "") + _dm(value, 2)
    if name in ARCMIN:
        return "0.0" if round(value, 1) == 0 else f"{value:+.1f}"
    if name in CLOCK:
        seconds = int(round(value.total_seconds())) % 86400
        return f"{seconds // 3600:02d}:{seconds % 3600 // 60:02d}:{seconds % 60:02d}"
    if name in ("ship_date", "utc_date"):
        return value.isoformat()
    if name == "watch_error":
        return format_watch_error(value)
    if name == "zd":
        return f"{value:+g}" if value else "0"
    if name == "ie":
        return f"{abs(value):.1f} {'on' if value > 0 else 'off'}" if value else "0.0"
    if name == "eye_height":
        return str(value)
    if name == "z":
        return format_z(*value)
    if name == "zn":
        return f"{value:05.1f}"
    if name == "intercept":
        return f"{value:.1f}"
    if name == "t_a":
        return value
    if name == "sights":
        return " ".join(value)
    raise KeyError(name)


def utc_of(fig: dict) -> datetime | None:
    """The UTC a sheet row states (utc_date + utc_time), or None if either is blank."""
    if fig.get("utc_date") is None or fig.get("utc_time") is None:
        return None
    return datetime.combine(fig["utc_date"], datetime.min.time(), tzinfo=UTC) + fig["utc_time"]


def split_utc(t: datetime) -> tuple[date, timedelta]:
    t = t.astimezone(UTC)
    return t.date(), timedelta(hours=t.hour, minutes=t.minute, seconds=t.second)


def _read(text: str, columns: tuple[str, ...], what: str, required: tuple[str, ...]) -> list[dict]:
    reader = csv.reader(io.StringIO(text))
    try:
        header = [h.strip().lower() for h in next(reader)]
    except StopIteration:
        raise NavInputError(f"the {what} file is empty", field="file",
                            example=",".join(columns[:6])) from None
    unknown = [h for h in header if h not in columns]
    if unknown:
        raise NavInputError(f"unknown column '{unknown[0]}' in the {what} file", field="header",
                            row=0, example=",".join(columns[:6]))
    missing = [c for c in required if c not in header]
    if missing:
        raise NavInputError(f"missing column(s) {', '.join(missing)} in the {what} file",
                            field="header", row=0, example=",".join(required))
    rows = []
    for row_no, cells in enumerate(reader, start=1):
        if not any(c.strip() for c in cells):
            continue
        if len(cells) != len(header):
            raise NavInputError(f"{len(cells)} cells where the header has {len(header)}",
                                field="row", row=row_no, example="one cell per column")
        fig: dict = {"_row": row_no, "_cells": dict(zip(header, (c.strip() for c in cells)))}
        for name, cell in zip(header, cells):
            try:
                fig[name] = parse_cell(name, cell)
            except NavInputError as err:
                raise err.at_row(row_no) from None
        for name in required:
            if not fig.get(name):
                raise NavInputError("a value is required", field=name, row=row_no,
                                    example="Ana" if name == "student" else "1")
        rows.append(fig)
    return rows


def parse_sheets(text: str) -> list[dict]:
    """Every row of a sheets file (one student or a class). Bad cells raise NavInputError."""
    return _read(text, SHEET_COLUMNS, "sheets", ("student", "sight"))


def parse_fixes(text: str) -> list[dict]:
    """Every row of a plotted-fixes file."""
    return _read(text, FIX_COLUMNS, "fixes", ("student", "fix", "sights", "lat", "lon"))


def read_text(path: str) -> str:
    """A file from someone else: size-limited, UTF-8 text only."""
    try:
        with open(path, "rb") as fh:
            data = fh.read(MAX_BYTES + 1)
    except OSError as err:
        raise NavInputError(f"cannot read {path}: {err.strerror}", field="file",
                            example="sheets.csv") from None
    if len(data) > MAX_BYTES or b"\x00" in data:
        raise NavInputError(f"{path} is not a small text file", field="file", example="sheets.csv")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise NavInputError(f"{path} is not UTF-8 text", field="file", example="sheets.csv") from None


def sheets_csv(rows: list[dict], columns: tuple[str, ...] = SHEET_COLUMNS) -> str:
    """Sheet rows → CSV text in the contract (cells neutralised against spreadsheet formulas)."""
    from ..export import neutralise_cell

    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(columns)
    for fig in rows:
        writer.writerow([neutralise_cell(format_cell(c, fig.get(c))) for c in columns])
    return out.getvalue()
