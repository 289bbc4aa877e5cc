"""The batch sight file (CSV): read, validate every cell, resolve each sight's DR.

The contract (README, "Batch sight files"): a header row, column names case-insensitive; columns
``body`` and ``hs`` are required, and the time as ``utc`` or as the watch read it (``date``,
``watch_time``, ``watch_error``, ``zone``: each row has one or the other); the others are optional and take the defaults of
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
import re
from dataclasses import dataclass, field, replace
from types import MappingProxyType
from typing import Mapping
from datetime import date, datetime, timedelta

from .errors import NavInputError
from .fields import SIGHT_FIELD_BY_NAME, SIGHT_FIELDS, WATCH_TIME_FIELDS, check_hs_horizon, check_limb

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
    line: int | None = None
    """The file's line where the row starts, as an editor numbers it (the header is line 1)."""
    dr_age_h: float = 0.0
    """Hours since the DR was last set from a position (a row's typed DR, a log's anchor)."""
    sight_id: str = ""
    """The sight's id on a worked sheet (column ``sight``); the row number when not given."""
    method: str | None = None
    """``ap`` (the tables' AP) or ``dr``, when the row says; None leaves it to the command."""
    gha_override_deg: float | None = None
    """GHA prescribed by the file (column ``gha``), replacing the ephemeris' for this sight."""
    dec_override_deg: float | None = None
    """Dec prescribed by the file (column ``dec``), replacing the ephemeris' for this sight."""
    ship_date: date | None = None
    """The ship's (zone) date when the time was given as the watch read it, else None."""
    watch_time: timedelta | None = None
    """The watch's reading (time since the ship's midnight), else None."""
    watch_error_s: float | None = None
    """Watch error in seconds, + fast (subtracted from the reading), else None."""
    zone_h: float | None = None
    """Zone description in hours, UTC = ZT + ZD (+ in west longitude), else None."""


@dataclass(frozen=True)
class SightFile:
    rows: tuple[SightRow, ...]
    errors: tuple[NavInputError, ...] = field(default_factory=tuple)
    skipped_rows: tuple[int, ...] = field(default_factory=tuple)
    warnings: tuple[str, ...] = field(default_factory=tuple)
    """Things computed on but worth a look (the same sight in two rows)."""


def _decode(data: bytes, source: str) -> str:
    if len(data) > MAX_FILE_BYTES:
        raise NavInputError(f"{source} is larger than {MAX_FILE_BYTES // (1024 * 1024)} MB",
                            field="file", example="a CSV file of sights")
    if data[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise NavInputError(f"{source} is UTF-16 text; save it as UTF-8", field="file",
                            example="a CSV file of sights saved as UTF-8 text")
    if b"\x00" in data:
        raise NavInputError(f"{source} is not a text file (it holds NUL bytes)", field="file",
                            line=data[:data.index(b"\x00")].count(b"\n") + 1,
                            example="a CSV file of sights saved as UTF-8 text")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise NavInputError(f"{source} is not UTF-8 text (byte {err.start})", field="file",
                            line=line,
                            example="a CSV file of sights saved as UTF-8 text") from None


# Control characters a text file of sights never holds (tab and the line ends are allowed).
_CONTROL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def _text_lines(text: str) -> str:
    """The text with CR LF and CR-only line ends made LF (read as an editor shows them), after
    refusing control characters with the lines that hold them."""
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    bad: dict[str, list[int]] = {}
    for m in _CONTROL.finditer(text):
        line = text.count("\n", 0, m.start()) + 1
        bad.setdefault(f"U+{ord(m.group(0)):04X}", [])
        if line not in bad[f"U+{ord(m.group(0)):04X}"]:
            bad[f"U+{ord(m.group(0)):04X}"].append(line)
        if sum(map(len, bad.values())) >= MAX_LISTED:
            break
    if bad:
        lines = sorted({n for v in bad.values() for n in v})
        raise NavInputError(f"the file holds control characters ({', '.join(sorted(bad))}), which "
                            f"a file of sights never does: {_lines_text(lines)}", field="file",
                            line=lines[0] if len(lines) == 1 else None,
                            example="a CSV file saved as plain UTF-8 text")
    return text


MAX_LISTED = 20


def _lines_text(lines) -> str:
    lines = list(lines)
    head = ", ".join(map(str, lines[:MAX_LISTED]))
    more = f" and {len(lines) - MAX_LISTED} more" if len(lines) > MAX_LISTED else ""
    return f"line{'s' if len(lines) > 1 else ''} {head}{more}"


def summarise_errors(errors) -> list[str]:
    """One line per distinct message: an error that repeats across rows is said once, with the
    list of its lines (or rows)."""
    groups: dict[str, list] = {}
    for err in errors:
        key = err.detail() if isinstance(err, NavInputError) else str(err)
        groups.setdefault(key, []).append(err)
    out = []
    for key, errs in groups.items():
        if len(errs) == 1:
            out.append(str(errs[0]))
            continue
        lines = [e.line for e in errs if getattr(e, "line", None) is not None]
        rows = [e.row for e in errs if getattr(e, "row", None) is not None]
        if len(lines) == len(errs):
            where = _lines_text(lines)
        elif len(rows) == len(errs):
            where = f"rows {', '.join(map(str, rows[:MAX_LISTED]))}" + (
                f" and {len(rows) - MAX_LISTED} more" if len(rows) > MAX_LISTED else "")
        else:
            where = f"{len(errs)} times"
        out.append(f"{where}: {key}")
    return out


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
            raise NavInputError(f"unknown column '{raw}'{hint}", field="header", row=0, line=1,
                                example=",".join(f.name for f in SIGHT_FIELDS[:6]))
        if key in seen:
            raise NavInputError(f"column '{raw}' appears twice", field="header", row=0, line=1,
                                example="utc,body,hs")
        seen.add(key)
        out.append(key)
    missing = [r for r in REQUIRED if r not in seen]
    if "utc" not in seen:
        missing += [w for w in WATCH_TIME_FIELDS if w not in seen] if seen & set(WATCH_TIME_FIELDS) \
            else ["utc (or date, watch_time, watch_error, zone)"]
    if missing:
        raise NavInputError(f"missing required column(s): {', '.join(missing)}", field="header",
                            row=0, line=1, example="utc,body,hs,dr_lat,dr_lon")
    if "utc" in seen and not set(WATCH_TIME_FIELDS) <= seen and seen & set(WATCH_TIME_FIELDS):
        raise NavInputError("the watch-time columns go together: date, watch_time, watch_error, zone",
                            field="header", row=0, line=1,
                            example="...,date,watch_time,watch_error,zone")
    if ("dr_lat" in seen) != ("dr_lon" in seen):
        raise NavInputError("dr_lat and dr_lon go together", field="header", row=0, line=1,
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
    if values.get("hs") is not None and not any(e.field in ("hs", "horizon") for e in errors):
        try:
            check_hs_horizon(values["hs"], values.get("horizon") or "sea")
        except NavInputError as err:
            errors.append(err.at_row(row_no))
    values["hs_text"] = (cells.get("hs") or "").strip()
    values["cells"] = MappingProxyType({k: v.strip() for k, v in cells.items() if v and v.strip()})
    if "body" in values and values.get("body") and not any(e.field == "limb" for e in errors):
        try:
            values["limb"] = check_limb(values["body"], values.get("limb"))
        except NavInputError as err:
            errors.append(err.at_row(row_no))
    _sight_time(row_no, cells, values, errors)
    if (values.get("dr_lat") is None) != (values.get("dr_lon") is None) and not any(
            e.field in ("dr_lat", "dr_lon") for e in errors):
        errors.append(NavInputError("give both dr_lat and dr_lon, or neither", field="dr_lat",
                                    row=row_no, example="41 12.5 N, 032 07.1 W"))
    return values, errors


def _sight_time(row_no: int, cells: dict[str, str], values: dict, errors: list) -> None:
    """Set ``values["utc"]`` from the watch-time cells when the row has them instead of ``utc``.

    A row has either ``utc`` or all four of date, watch_time, watch_error and zone (never both,
    never part): UTC = (watch − fast error) + ZD, on the ship's date.
    """
    from .ephemeris import check_range
    from .timekeeping import UTC, to_datetime64

    given = [w for w in WATCH_TIME_FIELDS if (cells.get(w) or "").strip()]
    has_utc = bool((cells.get("utc") or "").strip())
    if any(e.field in ("utc",) + WATCH_TIME_FIELDS for e in errors):
        return
    rated = [w for w in ("watch_rate_s_per_day", "watch_error_date") if (cells.get(w) or "").strip()]
    if len(rated) == 1:                   # issue 10: the rate and its date go together
        other = ({"watch_rate_s_per_day", "watch_error_date"} - set(rated)).pop()
        errors.append(NavInputError(f"{rated[0]} needs {other} beside it", field=other,
                                    row=row_no, example=SIGHT_FIELD_BY_NAME[other].example))
        return
    if rated and has_utc:
        errors.append(NavInputError("a watch rate applies to a time read on the watch (date, "
                                    "watch_time, watch_error, zone), not to utc",
                                    field="watch_rate_s_per_day", row=row_no,
                                    example="leave watch_rate_s_per_day empty on a utc row"))
        return
    if has_utc and given:
        errors.append(NavInputError("give the time as utc or as date, watch_time, watch_error and "
                                    "zone, not both", field="utc", row=row_no,
                                    example="2026-03-20T18:42:10Z, or leave utc empty"))
    elif not has_utc and len(given) < len(WATCH_TIME_FIELDS):
        missing = [w for w in WATCH_TIME_FIELDS if w not in given]
        errors.append(NavInputError("the time is needed: utc, or " + ", ".join(missing) +
                                    (" with the rest" if given else ""),
                                    field=missing[0] if given else "utc", row=row_no,
                                    example=SIGHT_FIELD_BY_NAME[missing[0] if given else "utc"].example))
    elif not has_utc:
        zt = datetime.combine(values["date"], datetime.min.time()) + values["watch_time"]
        utc = (zt - timedelta(seconds=values["watch_error"]) +
               timedelta(hours=values["zone"])).replace(tzinfo=UTC)
        if rated:   # issue 10: error = watch_error + rate × (sight − watch_error_date) in days
            from .watch import error_with_rate

            values["watch_error"] = error_with_rate(values["watch_error"],
                                                    values["watch_rate_s_per_day"],
                                                    values["watch_error_date"], utc)
            utc = (zt - timedelta(seconds=values["watch_error"]) +
                   timedelta(hours=values["zone"])).replace(tzinfo=UTC)
        try:
            check_range(to_datetime64(utc), "date")
        except NavInputError as err:
            errors.append(err.at_row(row_no))
            return
        values["utc"] = utc


def parse_sight_csv(text: str, *, skip_bad_rows: bool = False) -> SightFile:
    """Validate a whole batch file. Raises the first header error; cell errors are all collected.

    Without `skip_bad_rows`, any cell error leaves ``rows`` empty and ``errors`` full, so that
    nothing is computed from a partly valid file. With it, valid rows are kept and the skipped
    row numbers are listed.
    """
    from .sailing import dr_position

    reader = csv.reader(io.StringIO(_text_lines(text), newline=""), strict=True)
    start = 1

    def csv_error(err: csv.Error) -> NavInputError:
        why = str(err)
        if "unexpected end of data" in why:
            why = ("a double quote opened in the row starting here is never closed, so the rest "
                   "of the file would be read as one cell")
        return NavInputError(f"not read as CSV: {why}", field="file", line=start,
                             example='cells with commas in double quotes: "hazy, low cloud"')

    try:
        header = next(reader)
    except StopIteration:
        raise NavInputError("the file is empty", field="file", example="utc,body,hs") from None
    except csv.Error as err:
        raise csv_error(err) from None
    columns = _header(header)
    parsed: list[tuple[int, dict]] = []
    errors: list[NavInputError] = []
    skipped: list[int] = []
    line_of: dict[int, int] = {}
    row_no = 0
    while True:
        start = reader.line_num + 1
        try:
            cells = next(reader)
        except StopIteration:
            break
        except csv.Error as err:
            raise csv_error(err) from None
        row_no += 1
        line_of[row_no] = start
        if row_no > MAX_ROWS:
            raise NavInputError(f"more than {MAX_ROWS:,} rows", field="file", line=start,
                                example="split the file")
        if not any(c.strip() for c in cells):
            continue  # a blank line carries nothing
        if len(cells) != len(columns):
            errors.append(NavInputError(f"{len(cells)} cells where the header has {len(columns)}",
                                        field="row", row=row_no, line=start,
                                        example="one cell per column"))
            skipped.append(row_no)
            continue
        values, row_errors = _parse_cells(row_no, dict(zip(columns, cells)))
        if row_errors:
            errors.extend(e.at_line(start) for e in row_errors)
            skipped.append(row_no)
            continue
        parsed.append((row_no, values))
    if errors and not skip_bad_rows:
        return SightFile(rows=(), errors=tuple(errors), skipped_rows=tuple(skipped))

    rows: list[SightRow] = []
    prev: SightRow | None = None
    dr_set_utc = None
    for row_no, v in parsed:
        n_errors = len(errors)
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
        if given:
            dr_set_utc = v["utc"]
        row = SightRow(
            row=row_no, utc=v["utc"], body=v["body"], hs_deg=v["hs"], hs_text=v["hs_text"],
            limb=v["limb"], index_error_arcmin=v["index_error"], eye_height_m=v["eye_height_m"],
            temperature_c=v["temperature_c"], pressure_hpa=v["pressure_hpa"], horizon=v["horizon"],
            dr_lat_deg=lat, dr_lon_deg=lon, dr_given=given, course_deg=course, speed_kn=speed,
            sigma_arcmin=v["sigma_arcmin"], note=v["note"], cells=v["cells"],
            line=line_of[row_no],
            dr_age_h=(v["utc"] - dr_set_utc).total_seconds() / 3600.0,
            sight_id=v["sight"] or str(row_no), method=v["method"], gha_override_deg=v["gha"],
            dec_override_deg=v["dec"], ship_date=v["date"], watch_time=v["watch_time"],
            watch_error_s=v["watch_error"], zone_h=v["zone"])
        rows.append(row)
        prev = row
    for err in errors:
        if err.line is None and err.row in line_of:
            err.at_line(line_of[err.row])
    if errors and not skip_bad_rows:
        return SightFile(rows=(), errors=tuple(errors), skipped_rows=tuple(skipped))
    if not rows and not errors:
        raise NavInputError("the file has a header but no sights", field="file", line=2,
                            example="utc,body,hs,dr_lat,dr_lon")
    return SightFile(rows=tuple(rows), errors=tuple(errors), skipped_rows=tuple(sorted(set(skipped))),
                     warnings=duplicate_warnings(rows))


def duplicate_warnings(rows) -> tuple[str, ...]:
    """One warning per sight that two or more rows hold (same body, UTC and Hs): it would count
    as two observations in a fix, and make its ellipse look smaller than it is."""
    from .angles import format_dm

    seen: dict[tuple, list] = {}
    for r in rows:
        seen.setdefault((r.body, r.utc, round(r.hs_deg, 9)), []).append(r)
    out = []
    for (body, utc, hs), same in seen.items():
        if len(same) > 1:
            where = _lines_text([r.line if r.line is not None else r.row for r in same])
            out.append(f"{where} hold the same sight ({body} at {utc:%Y-%m-%d %H:%M:%S} UTC, Hs "
                       f"{format_dm(hs)}): it would count {len(same)} times in a fix; keep one")
    return tuple(out)


def with_dr(row: SightRow, lat_deg: float, lon_deg: float) -> SightRow:
    return replace(row, dr_lat_deg=lat_deg, dr_lon_deg=lon_deg)
