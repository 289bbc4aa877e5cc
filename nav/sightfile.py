"""The batch sight file (CSV): read, validate every cell, resolve each sight's DR.

The contract (README, "Batch sight files"): a header row, column names case-insensitive; columns
``utc``, ``body`` and ``hs`` are required; the others are optional and take the defaults of
:data:`nav.fields.SIGHT_FIELDS`. Rows are in time order. A row without a DR takes the previous
row's DR advanced by the course and speed in force to its time; the first row must have one.

A file from someone else is data only: it is size-limited, must be UTF-8 text, and every bad cell
is reported with its row, column, reason and an accepted example; nothing is computed from a
partly valid file unless the caller asks to skip bad rows (and then every skipped row is listed).
"""

from __future__ import annotations

import csv
import difflib
import io
from dataclasses import dataclass, field, replace
from types import MappingProxyType
from typing import Mapping
from datetime import datetime

from .errors import NavInputError
from .fields import SIGHT_FIELD_BY_NAME, SIGHT_FIELDS, check_limb

MAX_FILE_BYTES = 20 * 1024 * 1024
MAX_ROWS = 1_000_000
REQUIRED = tuple(f.name for f in SIGHT_FIELDS if f.required)
ALIASES = {"index_error_arcmin": "index_error", "ie": "index_error", "lat": "dr_lat", "lon": "dr_lon",
           "course": "course_deg", "speed": "speed_kn", "eye_height": "eye_height_m",
           "time": "utc", "temperature": "temperature_c", "pressure": "pressure_hpa"}


@dataclass(frozen=True)
class SightRow:
    """One validated sight of a batch file. ``row`` counts data rows from 1 (the header is row 0)."""

    row: int
    utc: datetime
    body: str
    hs_deg: float
    hs_text: str
    limb: str | None
    index_error_arcmin: float
    eye_height_m: float
    temperature_c: float
    pressure_hpa: float
    horizon: str
    dr_lat_deg: float
    dr_lon_deg: float
    dr_given: bool
    course_deg: float | None
    speed_kn: float | None
    sigma_arcmin: float
    note: str
    cells: Mapping[str, str] = field(default_factory=dict, compare=False)
    """The row's non-empty cells as typed, by field name (what a passage log keeps as typed)."""


@dataclass(frozen=True)
class SightFile:
    rows: tuple[SightRow, ...]
    errors: tuple[NavInputError, ...] = field(default_factory=tuple)
    skipped_rows: tuple[int, ...] = field(default_factory=tuple)


def _decode(data: bytes, source: str) -> str:
    if len(data) > MAX_FILE_BYTES:
        raise NavInputError(f"{source} is larger than {MAX_FILE_BYTES // (1024 * 1024)} MB",
                            field="file", example="a CSV file of sights")
    if data[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise NavInputError(f"{source} is UTF-16 text; save it as UTF-8", field="file",
                            example="a CSV file of sights saved as UTF-8 text")
    if b"\x00" in data:
        raise NavInputError(f"{source} is not a text file (it holds NUL bytes)", field="file",
                            example="a CSV file of sights saved as UTF-8 text")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        raise NavInputError(f"{source} is not UTF-8 text (byte {err.start})", field="file",
                            example="a CSV file of sights saved as UTF-8 text") from None


def read_sight_file(path: str, *, skip_bad_rows: bool = False) -> SightFile:
    """Read a batch sight file from disk (see :func:`parse_sight_csv`)."""
    from .files import read_input      # regular files only: a FIFO is refused, not read

    data = read_input(path, MAX_FILE_BYTES, field="file", example="sights.csv")
    return parse_sight_csv(_decode(data, path), skip_bad_rows=skip_bad_rows)


def _header(names: list[str]) -> list[str | None]:
    """Map header cells to field names; unknown columns are an error (never silently ignored)."""
    out: list[str | None] = []
    seen: set[str] = set()
    for raw in names:
        key = raw.strip().lower().replace(" ", "_")
        key = ALIASES.get(key, key)
        if key not in SIGHT_FIELD_BY_NAME:
            near = difflib.get_close_matches(key, list(SIGHT_FIELD_BY_NAME), n=1)
            hint = f"; did you mean '{near[0]}'?" if near else ""
            raise NavInputError(f"unknown column '{raw}'{hint}", field="header", row=0,
                                example=",".join(f.name for f in SIGHT_FIELDS[:6]))
        if key in seen:
            raise NavInputError(f"column '{raw}' appears twice", field="header", row=0,
                                example="utc,body,hs")
        seen.add(key)
        out.append(key)
    missing = [r for r in REQUIRED if r not in seen]
    if missing:
        raise NavInputError(f"missing required column(s): {', '.join(missing)}", field="header",
                            row=0, example="utc,body,hs,dr_lat,dr_lon")
    if ("dr_lat" in seen) != ("dr_lon" in seen):
        raise NavInputError("dr_lat and dr_lon go together", field="header", row=0,
                            example="...,dr_lat,dr_lon")
    return out


def _parse_cells(row_no: int, cells: dict[str, str]) -> tuple[dict, list[NavInputError]]:
    values: dict = {}
    errors: list[NavInputError] = []
    for spec in SIGHT_FIELDS:
        text = (cells.get(spec.name) or "").strip()
        if not text:
            if spec.required:
                errors.append(NavInputError("a value is required", field=spec.name, row=row_no,
                                            example=spec.example))
            values[spec.name] = spec.default
            continue
        try:
            values[spec.name] = spec.parse(text, spec.name)
        except NavInputError as err:
            errors.append(err.at_row(row_no))
    values["hs_text"] = (cells.get("hs") or "").strip()
    values["cells"] = MappingProxyType({k: v.strip() for k, v in cells.items() if v and v.strip()})
    if "body" in values and values.get("body") and not any(e.field == "limb" for e in errors):
        try:
            values["limb"] = check_limb(values["body"], values.get("limb"))
        except NavInputError as err:
            errors.append(err.at_row(row_no))
    if (values.get("dr_lat") is None) != (values.get("dr_lon") is None) and not any(
            e.field in ("dr_lat", "dr_lon") for e in errors):
        errors.append(NavInputError("give both dr_lat and dr_lon, or neither", field="dr_lat",
                                    row=row_no, example="41 12.5 N, 032 07.1 W"))
    return values, errors


def parse_sight_csv(text: str, *, skip_bad_rows: bool = False) -> SightFile:
    """Validate a whole batch file. Raises the first header error; cell errors are all collected.

    Without `skip_bad_rows`, any cell error leaves ``rows`` empty and ``errors`` full, so that
    nothing is computed from a partly valid file. With it, valid rows are kept and the skipped
    row numbers are listed.
    """
    from .sailing import dr_position

    reader = csv.reader(io.StringIO(text))
    try:
        header = next(reader)
    except StopIteration:
        raise NavInputError("the file is empty", field="file", example="utc,body,hs") from None
    except csv.Error as err:
        raise NavInputError(f"not a CSV file: {err}", field="file", example="utc,body,hs") from None
    columns = _header(header)
    parsed: list[tuple[int, dict]] = []
    errors: list[NavInputError] = []
    skipped: list[int] = []
    try:
        for row_no, cells in enumerate(reader, start=1):
            if row_no > MAX_ROWS:
                raise NavInputError(f"more than {MAX_ROWS:,} rows", field="file", row=row_no,
                                    example="split the file")
            if not any(c.strip() for c in cells):
                continue  # a blank line carries nothing
            if len(cells) != len(columns):
                errors.append(NavInputError(f"{len(cells)} cells where the header has {len(columns)}",
                                            field="row", row=row_no, example="one cell per column"))
                skipped.append(row_no)
                continue
            values, row_errors = _parse_cells(row_no, dict(zip(columns, cells)))
            if row_errors:
                errors.extend(row_errors)
                skipped.append(row_no)
                continue
            parsed.append((row_no, values))
    except csv.Error as err:
        raise NavInputError(f"not a CSV file: {err}", field="file", example="utc,body,hs") from None
    if errors and not skip_bad_rows:
        return SightFile(rows=(), errors=tuple(errors), skipped_rows=tuple(skipped))

    rows: list[SightRow] = []
    prev: SightRow | None = None
    for row_no, v in parsed:
        if prev is not None and v["utc"] < prev.utc:
            errors.append(NavInputError(f"time {v['utc']:%Y-%m-%d %H:%M:%S}Z is before the row above",
                                        field="utc", row=row_no, example="rows in time order"))
            skipped.append(row_no)
            continue
        course = v["course_deg"] if v["course_deg"] is not None else (prev.course_deg if prev else None)
        speed = v["speed_kn"] if v["speed_kn"] is not None else (prev.speed_kn if prev else None)
        if speed and course is None:  # else the DR would silently stay put
            errors.append(NavInputError("a speed needs a course (in this row or a row above)",
                                        field="course_deg", row=row_no, example="245"))
            skipped.append(row_no)
            continue
        if v["dr_lat"] is not None:
            lat, lon, given = v["dr_lat"], v["dr_lon"], True
        elif prev is None:
            errors.append(NavInputError("the first sight needs a DR (dr_lat, dr_lon)", field="dr_lat",
                                        row=row_no, example="41 12.5 N, 032 07.1 W"))
            skipped.append(row_no)
            continue
        else:
            hours = (v["utc"] - prev.utc).total_seconds() / 3600.0
            if prev.course_deg is not None and prev.speed_kn:
                try:
                    lat, lon = dr_position(prev.dr_lat_deg, prev.dr_lon_deg, prev.course_deg,
                                           prev.speed_kn, hours)
                except NavInputError as err:  # a run over a pole
                    errors.append(NavInputError(f"the DR cannot be carried to this row: {err.reason}",
                                                field="dr_lat", row=row_no,
                                                example="41 12.5 N, 032 07.1 W"))
                    skipped.append(row_no)
                    continue
                lat, lon = float(lat), float(lon)
            else:
                lat, lon = prev.dr_lat_deg, prev.dr_lon_deg
            given = False
        row = SightRow(
            row=row_no, utc=v["utc"], body=v["body"], hs_deg=v["hs"], hs_text=v["hs_text"],
            limb=v["limb"], index_error_arcmin=v["index_error"], eye_height_m=v["eye_height_m"],
            temperature_c=v["temperature_c"], pressure_hpa=v["pressure_hpa"], horizon=v["horizon"],
            dr_lat_deg=lat, dr_lon_deg=lon, dr_given=given, course_deg=course, speed_kn=speed,
            sigma_arcmin=v["sigma_arcmin"], note=v["note"], cells=v["cells"])
        rows.append(row)
        prev = row
    if errors and not skip_bad_rows:
        return SightFile(rows=(), errors=tuple(errors), skipped_rows=tuple(skipped))
    if not rows and not errors:
        raise NavInputError("the file has a header but no sights", field="file", row=1,
                            example="utc,body,hs,dr_lat,dr_lon")
    return SightFile(rows=tuple(rows), errors=tuple(errors), skipped_rows=tuple(sorted(set(skipped))))


def with_dr(row: SightRow, lat_deg: float, lon_deg: float) -> SightRow:
    return replace(row, dr_lat_deg=lat_deg, dr_lon_deg=lon_deg)
