"""The schema of the passage log (format ``nav-passage-log``): fields, kinds and their checks,
and the codec of one line (values -> JSON, entry -> line in the fixed key order, line -> object).

Split from :mod:`nav.logbook`, which stores and loads; this module only says what a valid entry
is and how it is spelt. Every message names the field; the loader adds the line.

A new kind of entry is one more row of :data:`SCHEMA` (its fields, in the order they are
written); a kind that is bookkeeping rather than navigation is named in :data:`META_KINDS`.

Two fields belong to the line rather than to its kind, and come last: ``batch`` (on the first
entry of an import: how many entries, itself included, were written together) and ``check``.

The check (format version 2): every line ends with ``"check": "<32 hex digits>"``, the first
128 bits of SHA-256 over the previous line's check, a newline, and the entry's canonical JSON
(the object without ``check``, keys sorted, no spaces, UTF-8). The header's previous check is
empty. It finds an edited, deleted, moved or added line; it is no signature (anyone can
compute it), so it shows damage and careless editing, not a determined forger.

Typed values: on load, a value as typed (``hs``) is read again with nav's own parser and
compared with the number stored beside it (``hs_deg``), see :func:`typed_mismatch`.
"""

from __future__ import annotations

import json
import math
import numbers
import re
from dataclasses import dataclass
from datetime import datetime
from typing import Any, Mapping

import hashlib

from .errors import NavInputError
from .fields import HORIZONS, LIMBS
from .units import ARCMIN_DEG
from .timekeeping import ISO_EXAMPLE, UTC, parse_utc

MAX_LINE_BYTES = 64 * 1024
MAX_TEXT, MAX_NOTE, MAX_LIST = 200, 4000, 200
ID_RE = re.compile(r"^e(\d{4,9})$")
COMMON = ("id", "kind", "logged_utc")
CHECK, CHECK_HEX = "check", 32
BATCH, MAX_BATCH = "batch", 100_000
# kinds that are bookkeeping of the log itself, not navigation: left out of the effective view
META_KINDS = ("passage", "strike", "correct")
POSITION_BASES = ("dr", "ep", "gps", "visual", "other")
_UTC_Z = re.compile(r"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(?:\.\d{1,6})?Z$")
_BAD_TEXT = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\ud800-\udfff]")
_BAD_NOTE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\ud800-\udfff]")


@dataclass(frozen=True)
class Field:
    type: str                     # text note hex id utc num int enum ids texts object
    required: bool = False
    lo: float | None = None
    hi: float | None = None
    hi_open: bool = False
    choices: tuple = ()
    max_len: int = MAX_TEXT
    raw_of: str | None = None     # a value as typed: names the parsed field beside it


def _typed(raw: str, parsed: str, lo: float, hi: float, *, required: bool = False,
           hi_open: bool = False) -> dict:
    """A value as typed (text, e.g. ``hs``) beside its parsed number (``hs_deg``)."""
    return {raw: Field("text", required, raw_of=parsed),
            parsed: Field("num", required, lo, hi, hi_open=hi_open)}


_NOTE = Field("note", max_len=1000)
_INSTRUMENT = {**_typed("index_error", "index_error_arcmin", -60, 60),
               **_typed("eye_height", "eye_height_m", 0, 100),
               **_typed("temperature", "temperature_c", -80, 60),
               **_typed("pressure", "pressure_hpa", 800, 1100),
               "horizon": Field("enum", choices=HORIZONS)}
_WATCH = {**_typed("zone_description", "zone_description_h", -14, 14),
          **_typed("watch_error", "watch_error_s", -86400, 86400)}

SCHEMA: dict[str, dict[str, Field]] = {
    "passage": {"format": Field("text", True), "format_version": Field("int", True, 1, 10**6),
                "passage_uid": Field("hex", True, max_len=16),
                "vessel": Field("text", True, max_len=120), "title": Field("text", True),
                "software": Field("text")},
    "setting": {**_INSTRUMENT, **_WATCH, "vessel": Field("text", max_len=120),
                "title": Field("text"), "note": _NOTE},
    "dr": {"utc": Field("utc", True), "time_text": Field("text"),
           **_typed("lat", "lat_deg", -90, 90), **_typed("lon", "lon_deg", -180, 180),
           **_typed("course", "course_deg", 0, 360, hi_open=True),
           **_typed("speed", "speed_kn", 0, 100),
           "position_basis": Field("enum", choices=POSITION_BASES), "note": _NOTE},
    "sight": {"body": Field("text", True, max_len=40), "utc": Field("utc", True),
              "time_source": Field("enum", True, choices=("utc", "watch")),
              "time_text": Field("text"), **_WATCH,
              **_typed("hs", "hs_deg", -1, 180, required=True),
              "limb": Field("enum", choices=LIMBS), **_INSTRUMENT,
              "sigma_arcmin": Field("num", lo=0, hi=60),
              **_typed("dr_lat", "dr_lat_deg", -90, 90),
              **_typed("dr_lon", "dr_lon_deg", -180, 180),
              "source": Field("text"), "note": _NOTE},
    "fix": {"utc": Field("utc", True), "lat_deg": Field("num", True, -90, 90),
            "lon_deg": Field("num", True, -180, 180),
            "fix_kind": Field("enum", True, choices=("fix", "running_fix")),
            "sight_ids": Field("ids", True), "method": Field("text"),
            "ellipse_semi_major_nmi": Field("num", lo=0, hi=10_000),
            "ellipse_semi_minor_nmi": Field("num", lo=0, hi=10_000),
            "ellipse_orientation_deg": Field("num", lo=0, hi=180, hi_open=True),
            "ellipse_confidence": Field("num", lo=0, hi=1),
            "warnings": Field("texts"), "note": _NOTE,
            "set_drift": Field("object")},      # issue 10: {set_deg, drift_kn, since_utc}
    "note": {"text": Field("note", True, max_len=MAX_NOTE), "utc": Field("utc")},
    # A compass check (issue 9): a body's true bearing against the compass, with the ship's
    # head by that compass, so the deviation can be listed per heading over the passage.
    "compass_check": {"utc": Field("utc", True), "time_text": Field("text"),
                      "body": Field("text", True, max_len=40),
                      "method": Field("enum", True, choices=("azimuth", "amplitude")),
                      "horizon": Field("enum", choices=("celestial", "visible")),
                      "compass_bearing_deg": Field("num", True, 0, 360, hi_open=True),
                      "heading_deg": Field("num", True, 0, 360, hi_open=True),
                      "zn_deg": Field("num", True, 0, 360, hi_open=True),
                      "compass_error_deg": Field("num", True, -180, 180),
                      "variation_deg": Field("num", lo=-180, hi=180),
                      "deviation_deg": Field("num", lo=-180, hi=180),
                      "lat_deg": Field("num", True, -90, 90),
                      "lon_deg": Field("num", True, -180, 180), "note": _NOTE},
    # issue 10: a current in force from a time on (entered, or applied from a fix), and a
    # comparison of a watch with a reference time
    "current": {"utc": Field("utc", True), "time_text": Field("text"),
                **_typed("set", "set_deg", 0, 360, required=True, hi_open=True),
                **_typed("drift", "drift_kn", 0, 20, required=True),
                "source": Field("text"), "note": _NOTE},
    "watch_check": {"utc": Field("utc", True), "watch_reading": Field("text", True),
                    "watch_error_s": Field("num", True, -3600, 3600),
                    "reference": Field("enum", True, choices=("time signal", "gps", "reference")),
                    "watch": Field("text", max_len=40), "note": _NOTE},
    "strike": {"target": Field("id", True), "reason": Field("text", True, max_len=500)},
    "correct": {"target": Field("id", True), "reason": Field("text", True, max_len=500),
                "replacement": Field("object", True)},
    "repair": {"side_file": Field("text", True, max_len=300),
               "torn_line": Field("int", True, 1, 10**9),
               "torn_bytes": Field("int", True, 1, MAX_LINE_BYTES * (MAX_BATCH + 1)),
               "torn_sha256": Field("hex", True, max_len=64), "note": _NOTE},
}
_RAW_FIELDS = {n: f.raw_of for spec in SCHEMA.values() for n, f in spec.items() if f.raw_of}
_PAIRS = {"dr": ("lat_deg", "lon_deg"), "sight": ("dr_lat_deg", "dr_lon_deg"),
          "fix": ("ellipse_semi_major_nmi", "ellipse_semi_minor_nmi")}


def _rules(kind: str, o: Mapping) -> tuple[str | None, str] | None:
    """Checks across fields (presence and order only: the log does no navigation)."""
    a, b = _PAIRS.get(kind, ("", ""))
    if (a in o) != (b in o):
        return (b if a in o else a), f"is missing: {a} and {b} go together"
    if kind == "setting" and not set(o) - set(COMMON) - {"note"}:
        return None, "a setting entry must set at least one value, such as eye_height_m"
    if kind == "dr" and not {"lat_deg", "course_deg", "speed_kn"} & set(o):
        return None, "a dr entry needs a position (lat_deg, lon_deg), a course_deg or a speed_kn"
    if kind == "sight" and o.get("time_source") == "watch":
        for name in ("zone_description_h", "watch_error_s"):
            if name not in o:
                return name, "is missing: a time read on a watch needs its ZD and watch error"
    if kind == "fix" and "set_drift" in o:
        sd = o["set_drift"]
        spec = {"set_deg": Field("num", True, 0, 360, hi_open=True),
                "drift_kn": Field("num", True, 0, 100), "since_utc": Field("utc", True)}
        if not isinstance(sd, Mapping) or set(sd) != set(spec):
            return "set_drift", "must hold set_deg, drift_kn and since_utc"
        for name, f in spec.items():
            msg = _check_value(f, sd[name])
            if msg:
                return f"set_drift.{name}", msg
    if kind == "fix":
        if {"ellipse_orientation_deg", "ellipse_confidence"} & set(o) and a not in o:
            return a, "is missing: the ellipse needs its semi-axes"
        if o.get(b, 0) > o.get(a, math.inf):
            return b, f"is larger than {a}"
    return None


def _check_value(f: Field, v: Any) -> str | None:
    t = f.type
    if t in ("num", "int"):
        if isinstance(v, bool) or not isinstance(v, (int, float) if t == "num" else int):
            return "must be a number" if t == "num" else "must be a whole number"
        if isinstance(v, float) and not math.isfinite(v):
            return "must be a finite number"
        if v < f.lo or v > f.hi or f.hi_open and v == f.hi:
            return f"is {v}, outside {f.lo:g} to {f.hi:g}" + (" (exclusive)" if f.hi_open else "")
    elif t in ("ids", "texts"):
        if not isinstance(v, list) or not (v or t == "texts") or len(v) > MAX_LIST:
            return f"must be a list of {int(t == 'ids')} to {MAX_LIST} items"
        item = Field("id") if t == "ids" else Field("text", True)
        return next((f"item {i} {m}" for i, x in enumerate(v, 1) if (m := _check_value(item, x))),
                    None)
    elif t == "object":
        return None if isinstance(v, dict) else "must be a JSON object"
    elif not isinstance(v, str):
        return "must be text (a JSON string)"
    elif t == "id" and not ID_RE.match(v):
        return "must be an entry id such as e0042"
    elif t == "enum" and v not in f.choices:
        return "must be one of: " + ", ".join(f.choices)
    elif t == "hex" and not (len(v) == f.max_len and re.fullmatch("[0-9a-f]+", v)):
        return f"must be {f.max_len} lower-case hexadecimal digits"
    elif t == "utc":
        if not _UTC_Z.match(v):
            return "must be an ISO 8601 UTC time ending in Z, such as 2026-03-20T18:42:10Z"
        try:
            parse_utc(v)
        except NavInputError as err:
            return err.reason
    elif t in ("text", "note"):
        if len(v) > f.max_len:
            return f"is {len(v)} characters long; the limit is {f.max_len}"
        if f.required and not v.strip():
            return "must not be empty"
        bad = (_BAD_NOTE if t == "note" else _BAD_TEXT).search(v)
        if bad:
            return f"holds the control or invisible character U+{ord(bad.group()):04X}"
    return None


def _check_entry(o: Mapping, replacement_of: str | None = None) -> tuple[str | None, str] | None:
    """Schema check of one entry, or of a correction's replacement fields for a kind."""
    kind = replacement_of
    if kind is None:
        for name in COMMON:
            if name not in o:
                return name, "is missing"
        kind = o["kind"]
        if not isinstance(kind, str) or kind not in SCHEMA:
            return "kind", f"unknown kind {str(kind)[:40]!r}; known kinds: " + ", ".join(SCHEMA)
        for name, f in (("id", Field("id")), ("logged_utc", Field("utc")),
                        *(((CHECK, Field("hex", max_len=CHECK_HEX)),) if CHECK in o else ()),
                        *(((BATCH, Field("int", lo=2, hi=MAX_BATCH)),) if BATCH in o else ())):
            msg = _check_value(f, o[name])
            if msg:
                return name, msg
    spec = SCHEMA[kind]
    for name in o:
        if name not in spec and (replacement_of or name not in (*COMMON, BATCH, CHECK)):
            return str(name)[:40], f"is not a field of a {kind} entry"
    for name, f in spec.items():
        if name not in o:
            if f.required:
                return name, "is missing"
            continue
        msg = _check_value(f, o[name])
        if msg:
            return name, msg
        if f.raw_of and f.raw_of not in o:
            return f.raw_of, f"is missing ('{name}' as typed is given)"
    return _rules(kind, o)


# ---------------------------------------------------------------- the line codec

def _normalise(v: Any, name: str) -> Any:
    """Caller values -> JSON values (aware datetimes -> ISO 8601 Z); None values are left out."""
    if isinstance(v, datetime):
        if v.tzinfo is None:
            raise NavInputError("a time without a time zone", field=name, example=ISO_EXAMPLE)
        v = v.astimezone(UTC)
        return v.strftime("%Y-%m-%dT%H:%M:%S") + v.strftime(".%f").rstrip("0").rstrip(".") + "Z"
    if isinstance(v, numbers.Number) and not isinstance(v, bool):
        return int(v) if isinstance(v, numbers.Integral) else float(v)
    if isinstance(v, Mapping):
        if not all(isinstance(k, str) for k in v):
            raise NavInputError("field names must be text", field=name)
        return {k: _normalise(x, k) for k, x in v.items() if x is not None}
    if isinstance(v, (list, tuple)):
        return [_normalise(x, name) for x in v]
    if v is None or isinstance(v, (str, bool)):
        return v
    raise NavInputError(f"a {type(v).__name__} cannot be stored in the log", field=name)


def _encode(o: dict, replacement_kind: str | None = None) -> bytes:
    """The line of an entry: fixed key order, UTF-8, no NaN, newline-terminated."""
    out = {k: o[k] for k in (*COMMON, *SCHEMA[o["kind"]], BATCH, CHECK) if k in o}
    if replacement_kind:
        out["replacement"] = {k: o["replacement"][k] for k in SCHEMA[replacement_kind]
                              if k in o["replacement"]}
    return (json.dumps(out, ensure_ascii=False, allow_nan=False, separators=(", ", ": "))
            + "\n").encode("utf-8")


def _no_dupes(pairs):
    if len({k for k, _ in pairs}) != len(pairs):
        raise ValueError("a key appears twice in one object")
    return dict(pairs)


def _no_constant(name):
    raise ValueError(f"{name} is not a number JSON allows")


def _decode_line(raw: bytes) -> tuple[dict | None, str | None]:
    """One line -> object, or why it is not a JSON object in UTF-8."""
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as err:
        return None, f"not UTF-8 text (byte 0x{raw[err.start]:02x} at column {err.start + 1})"
    if not text.strip():
        return None, "an empty line"
    try:
        obj = json.loads(text, object_pairs_hook=_no_dupes, parse_constant=_no_constant)
    except json.JSONDecodeError as err:
        return None, f"not valid JSON ({err.msg} at column {err.colno})"
    except (ValueError, RecursionError) as err:
        return None, f"not valid JSON ({err})"
    return (obj, None) if isinstance(obj, dict) else (None, "not a JSON object")


# ---------------------------------------------------------------- the check (hash chain)

def canonical(o: Mapping) -> bytes:
    """The entry's content as the check covers it: without ``check``, keys sorted, compact."""
    return json.dumps({k: v for k, v in o.items() if k != CHECK}, sort_keys=True,
                      ensure_ascii=False, allow_nan=False, separators=(",", ":")).encode("utf-8")


def chain_check(previous: str, o: Mapping) -> str:
    """The check of an entry that follows a line whose check is ``previous`` ("" for line 1)."""
    return hashlib.sha256(previous.encode("ascii") + b"\n" + canonical(o)).hexdigest()[:CHECK_HEX]


# ---------------------------------------------------------------- typed against parsed

def _typed_parsers() -> dict:
    """raw field -> function(text) -> the number the log stores beside it (nav's own parsers)."""
    from .angles import parse_angle, parse_height_m, parse_lat, parse_lon, parse_number

    def hours(text):
        from .timekeeping import parse_zone_description
        return parse_zone_description(text).total_seconds() / 3600.0

    def seconds(text):
        from .timekeeping import parse_watch_error
        return parse_watch_error(text).total_seconds()

    def number(text):
        return parse_number(text, "value")

    return {"hs": lambda t: parse_angle(t, "hs", min_deg=-1.0, max_deg=180.0),
            "lat": parse_lat, "lon": parse_lon, "dr_lat": parse_lat, "dr_lon": parse_lon,
            "eye_height": parse_height_m, "index_error": number, "temperature": number,
            "pressure": number, "course": lambda t: number(t) % 360.0, "speed": number,
            "zone_description": hours, "watch_error": seconds}


_PARSERS: dict = {}
# How far a stored number may be from its typed text read again: a hundredth of a tenth of an
# arcminute for angles (a number written by hand to 4 decimals of a degree still agrees; one
# changed digit in the third decimal does not), a thousandth of the unit for the rest.
TYPED_TOLERANCE_DEG = 0.005 * ARCMIN_DEG
TYPED_TOLERANCE_OTHER = 1e-3


def typed_mismatch(kind: str, o: Mapping) -> tuple[str, str, str] | None:
    """(field, message, severity) where a value as typed does not give the number stored
    beside it: an "error" when it reads as another number (the number or the text was changed
    after logging), a "note" when today's parser no longer reads the text at all."""
    if not _PARSERS:
        _PARSERS.update(_typed_parsers())
    for raw, f in SCHEMA.get(kind, {}).items():
        if not f.raw_of or raw not in o or f.raw_of not in o or raw not in _PARSERS:
            continue
        text, stored = o[raw], o[f.raw_of]
        try:
            value = float(_PARSERS[raw](text))
        except (NavInputError, ValueError, OverflowError) as err:
            reason = getattr(err, "reason", str(err))
            return (raw, f"'{text[:40]}' as typed no longer reads ({reason}); the stored "
                    f"{f.raw_of} {stored} is kept", "note")
        tol = TYPED_TOLERANCE_DEG if f.raw_of.endswith("_deg") else TYPED_TOLERANCE_OTHER
        # an artificial horizon's reading is the double altitude: stored as read, or halved
        halves = raw == "hs" and o.get("horizon") == "artificial"
        if not abs(value - stored) <= tol and not (halves and abs(value / 2 - stored) <= tol):
            return (f.raw_of, f"is {stored}, but '{text[:40]}' as typed reads {value:.10g}: "
                    "one of them was changed after it was logged", "error")
    return None
