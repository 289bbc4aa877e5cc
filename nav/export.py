"""Exports to open standards: GPX 1.1, GeoJSON (RFC 7946) and CSV (RFC 4180).

Inputs are :class:`ExportPoint` (or plain dicts with the same fields); nothing here reads or
writes files, the caller writes the returned text. Coordinates are decimal degrees, latitude
north +, longitude east + (normalised to [-180, 180), as GPX requires), to 6 decimals (0.1 m).

Every export that shows positions carries :data:`nav.CAUTION` (GPX metadata ``desc``, a GeoJSON
foreign member ``caution``).

CSV cells that a spreadsheet would run as a formula (first character ``=`` ``+`` ``-`` ``@``,
tab or carriage return, or their full-width forms) get a leading single quote, so they show as
text. A plain decimal number (``-12.5``, ``+3``, ``1e-05``) is left alone so it stays a number:
a spreadsheet reads it as a number, not as a formula. Everything else is left as it is.

The sights of a passage log go out as two CSV files (:func:`export_sights`):

- a *batch file* with exactly the columns of the batch contract (:data:`SIGHT_CSV_COLUMNS`, the
  fields of :mod:`nav.fields` that ``nav reduce``, ``nav fix`` and ``nav import`` read), holding
  the values each reduction used: the settings in force and the DR at the sight's time filled
  in, so that ``nav reduce`` on the file gives the log's intercepts again. ``hs`` is as typed; a
  typed altitude that would need the formula quote (``-0 03.1``) is written with the minus sign
  U+2212 instead, which the angle parser reads and no spreadsheet runs. A note keeps its quote.
- a *reductions* table (:data:`REDUCTION_CSV_COLUMNS`): the log's ids and typed times, the same
  inputs with unit suffixes, and Ho, GHA, Dec, LHA, Hc, Zn and the intercept (decimal degrees,
  nmi) with the reduction's warnings. It is an output, not an input: nothing reads it back.
"""

from __future__ import annotations

import csv
import io
import math
import re
import xml.etree.ElementTree as ET
from dataclasses import dataclass, fields
from datetime import datetime
from decimal import Decimal
from typing import Any, Iterable, Mapping, Sequence

from . import CAUTION, __version__
from .angles import MINUS, format_lat, format_lon, parse_altitude
from .errors import NavInputError
from .fields import SIGHT_FIELDS, default_limb
from .timekeeping import ISO_EXAMPLE, format_utc, parse_utc

GPX_NS = "http://www.topografix.com/GPX/1/1"
KINDS = {"fix": "Fix", "running_fix": "Running fix", "dr": "DR", "ep": "EP", "gps": "GPS",
         "visual": "Visual", "other": "Position"}
COORD_DECIMALS = 6
_XML_BAD = re.compile("[^\t\n\r\u0020-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "\uff1d", "\uff0b", "\uff0d", "\uff20")
_PLAIN_NUMBER = re.compile(r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$")
MAX_LABEL = 200


@dataclass(frozen=True)
class ExportPoint:
    """A position at an instant: a fix, a running fix, or a point of the DR/fix track."""

    utc: datetime
    lat_deg: float
    lon_deg: float
    kind: str = "fix"
    label: str = ""
    ellipse_semi_major_nmi: float | None = None
    ellipse_semi_minor_nmi: float | None = None
    ellipse_orientation_deg: float | None = None    # of the major axis, true, 0-180
    warnings: tuple[str, ...] = ()


_ELLIPSE = ("ellipse_semi_major_nmi", "ellipse_semi_minor_nmi", "ellipse_orientation_deg")


def as_point(p: ExportPoint | Mapping, where: str = "point") -> ExportPoint:
    """Check an ExportPoint or a dict (unknown keys refused) and normalise its longitude."""
    if isinstance(p, ExportPoint):
        p = {f.name: getattr(p, f.name) for f in fields(ExportPoint)}
    if not isinstance(p, Mapping):
        raise NavInputError(f"{where} is not a point", field=where,
                            example="ExportPoint(utc, lat_deg, lon_deg, kind, label)")
    unknown = set(p) - {f.name for f in fields(ExportPoint)}
    if unknown:
        raise NavInputError(f"{where} has unknown fields: {', '.join(sorted(map(str, unknown)))}",
                            field=where)
    utc = p.get("utc")
    if isinstance(utc, str):
        utc = parse_utc(utc, field=f"{where}.utc")
    if not isinstance(utc, datetime) or utc.tzinfo is None:
        raise NavInputError(f"{where} needs a UTC time with its zone", field=f"{where}.utc",
                            example=ISO_EXAMPLE)
    lat, lon = _number(p.get("lat_deg"), f"{where}.lat_deg"), _number(p.get("lon_deg"),
                                                                       f"{where}.lon_deg")
    if not -90.0 <= lat <= 90.0:
        raise NavInputError(f"{where}: latitude {lat} is outside -90 to 90", field=f"{where}.lat_deg")
    if not -180.0 <= lon <= 180.0:
        raise NavInputError(f"{where}: longitude {lon} is outside -180 to 180",
                            field=f"{where}.lon_deg")
    kind = p.get("kind", "fix")
    if kind not in KINDS:
        raise NavInputError(f"{where}: kind {kind!r} is not one of {', '.join(KINDS)}",
                            field=f"{where}.kind")
    label = str(p.get("label") or "")
    if len(label) > MAX_LABEL:
        raise NavInputError(f"{where}: the label is longer than {MAX_LABEL} characters",
                            field=f"{where}.label")
    ellipse = {k: None if p.get(k) is None else _number(p[k], f"{where}.{k}") for k in _ELLIPSE}
    warnings = p.get("warnings") or ()
    if isinstance(warnings, str) or not all(isinstance(w, str) for w in warnings):
        raise NavInputError(f"{where}: warnings must be a list of texts", field=f"{where}.warnings")
    return ExportPoint(utc, lat, _lon_180(lon), kind, label, **ellipse, warnings=tuple(warnings))


def _number(v: Any, field: str) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
        raise NavInputError(f"{v!r} is not a finite number", field=field, example="41.2083")
    return float(v)


def _lon_180(lon_deg: float) -> float:
    """Longitude in [-180, 180) after rounding to COORD_DECIMALS (180° E is written -180)."""
    lon = round(lon_deg, COORD_DECIMALS)
    return lon - 360.0 if lon >= 180.0 else lon + 0.0      # + 0.0: no signed zero


def _coord(x: float) -> str:
    return f"{round(x, COORD_DECIMALS) + 0.0:.{COORD_DECIMALS}f}"


def _xml_text(s: str) -> str:
    """Text that XML 1.0 can hold (control characters become U+FFFD); escaping is ElementTree's."""
    return _XML_BAD.sub("\ufffd", str(s))


def _sub(parent: ET.Element, tag: str, text: str) -> ET.Element:
    el = ET.SubElement(parent, tag)
    el.text = _xml_text(text)
    return el


def _describe(p: ExportPoint) -> str:
    """Human text for a point, in navigator notation."""
    parts = [f"{format_lat(p.lat_deg)} {format_lon(p.lon_deg)}"]
    if p.label:
        parts.insert(0, p.label)
    if p.ellipse_semi_major_nmi is not None:
        axis = "" if p.ellipse_orientation_deg is None else \
            f", major axis {p.ellipse_orientation_deg:05.1f}° true"
        parts.append(f"error ellipse {p.ellipse_semi_major_nmi:.1f} × "
                     f"{p.ellipse_semi_minor_nmi:.1f} nmi{axis}")
    return "; ".join(parts)


def _points(seq: Iterable, what: str) -> list[ExportPoint]:
    return [as_point(p, f"{what}[{i}]") for i, p in enumerate(seq)]


def fixes_to_gpx(fixes: Sequence, track: Sequence = (), *, name: str,
                 created_utc: datetime | None = None) -> str:
    """GPX 1.1: a waypoint per fix / running fix, and one track (time-ordered) for the DR/fix
    track. Element order follows the GPX 1.1 schema (metadata, wpt*, rte*, trk*)."""
    fix_points, track_points = _points(fixes, "fixes"), _points(track, "track")
    root = ET.Element("gpx", {"xmlns": GPX_NS, "version": "1.1", "creator": f"nav {__version__}"})
    meta = ET.SubElement(root, "metadata")
    _sub(meta, "name", name)
    _sub(meta, "desc", CAUTION)
    if created_utc is not None:
        _sub(meta, "time", format_utc(created_utc))
    for p in fix_points:
        wpt = ET.SubElement(root, "wpt", {"lat": _coord(p.lat_deg), "lon": _coord(p.lon_deg)})
        _sub(wpt, "time", format_utc(p.utc))
        _sub(wpt, "name", f"{KINDS[p.kind]} {format_utc(p.utc)[:-1].replace('T', ' ')} UTC")
        if p.warnings:
            _sub(wpt, "cmt", "; ".join(p.warnings))
        _sub(wpt, "desc", _describe(p))
        _sub(wpt, "type", KINDS[p.kind])
    if track_points:
        trk = ET.SubElement(root, "trk")
        _sub(trk, "name", f"{name} track")
        _sub(trk, "desc", CAUTION)
        seg = ET.SubElement(trk, "trkseg")
        for p in sorted(track_points, key=lambda q: q.utc):
            pt = ET.SubElement(seg, "trkpt", {"lat": _coord(p.lat_deg), "lon": _coord(p.lon_deg)})
            _sub(pt, "time", format_utc(p.utc))
            _sub(pt, "name", f"{KINDS[p.kind]} {format_utc(p.utc)}")
            _sub(pt, "type", KINDS[p.kind])
    ET.indent(root)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


def _position(p: ExportPoint) -> list[float]:
    return [round(p.lon_deg, COORD_DECIMALS) + 0.0, round(p.lat_deg, COORD_DECIMALS) + 0.0]


def _split_at_antimeridian(coords: list[list[float]]) -> list[list[list[float]]]:
    """Cut a line where a leg crosses 180° (RFC 7946 §3.1.9), interpolating the crossing
    latitude linearly in longitude (a short leg; plotting accuracy only)."""
    parts, cur = [], [coords[0]]
    for a, b in zip(coords, coords[1:]):
        if abs(b[0] - a[0]) > 180.0:
            edge = 180.0 if a[0] > 0 else -180.0
            b_lon = b[0] + (360.0 if edge > 0 else -360.0)
            t = (edge - a[0]) / (b_lon - a[0])
            lat_x = round(a[1] + t * (b[1] - a[1]), COORD_DECIMALS)
            cur.append([edge, lat_x])
            parts.append(cur)
            cur = [[-edge, lat_x]]
        cur.append(b)
    parts.append(cur)
    return parts


def fixes_to_geojson(fixes: Sequence, track: Sequence = (), *, name: str) -> dict:
    """A GeoJSON FeatureCollection (RFC 7946: positions are [lon, lat]): a Point per fix with
    utc/kind/label (and the ellipse when given), and the track as a LineString (a
    MultiLineString where it crosses 180°)."""
    features = []
    for p in _points(fixes, "fixes"):
        props = {"utc": format_utc(p.utc), "kind": p.kind, "label": p.label}
        props.update({k: getattr(p, k) for k in _ELLIPSE if getattr(p, k) is not None})
        if p.warnings:
            props["warnings"] = list(p.warnings)
        features.append({"type": "Feature", "geometry": {"type": "Point",
                                                         "coordinates": _position(p)},
                         "properties": props})
    pts = sorted(_points(track, "track"), key=lambda q: q.utc)
    if pts:
        coords = [_position(p) for p in pts]
        parts = _split_at_antimeridian(coords) if len(coords) > 1 else []
        geometry = {"type": "Point", "coordinates": coords[0]} if len(coords) == 1 else \
            {"type": "LineString", "coordinates": parts[0]} if len(parts) == 1 else \
            {"type": "MultiLineString", "coordinates": parts}
        features.append({"type": "Feature", "geometry": geometry, "properties": {
            "kind": "track", "label": f"{name} track", "utc_start": format_utc(pts[0].utc),
            "utc_end": format_utc(pts[-1].utc), "points": len(pts),
            "point_utc": [format_utc(p.utc) for p in pts],
            "point_kinds": [p.kind for p in pts]}})
    return {"type": "FeatureCollection", "name": name, "caution": CAUTION, "features": features}


def neutralise_cell(text: str) -> str:
    """A CSV cell that cannot start a spreadsheet formula (see the module doc)."""
    if text.startswith(_FORMULA_START) and not _PLAIN_NUMBER.match(text):
        return "'" + text
    return text


def _cell(v: Any, column: str, row: int) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        if not math.isfinite(v):
            raise NavInputError(f"{v!r} is not a finite number", field=column, row=row)
        return repr(v) if isinstance(v, float) else str(v)
    if isinstance(v, datetime):
        return format_utc(v)
    if isinstance(v, str):
        return v
    raise NavInputError(f"a {type(v).__name__} cannot go into a CSV cell", field=column, row=row)


def sights_to_csv(rows: Iterable[Mapping], columns: Sequence[str]) -> str:
    """CSV (RFC 4180, CRLF line ends) with a header row of ``columns``; a row's keys outside
    ``columns`` are not exported (a column selection); cells are neutralised (module doc)."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow([neutralise_cell(str(c)) for c in columns])
    for i, row in enumerate(rows, 1):
        writer.writerow([neutralise_cell(_cell(row.get(c), c, i)) for c in columns])
    return out.getvalue()


SIGHT_CSV_COLUMNS = tuple(f.name for f in SIGHT_FIELDS)     # the batch contract, in its order
REDUCTION_CSV_COLUMNS = (
    "row", "id", "revised_by", "utc", "time_source", "time_text", "body", "limb", "hs", "hs_deg",
    "index_error_arcmin", "eye_height_m", "temperature_c", "pressure_hpa", "horizon",
    "dr_lat_deg", "dr_lon_deg", "dr_basis", "ho_deg", "gha_deg", "dec_deg", "lha_deg", "hc_deg",
    "zn_deg", "intercept_nmi", "warnings", "note")
REDUCED = ("ho_deg", "gha_deg", "dec_deg", "lha_deg", "hc_deg", "zn_deg", "intercept_nmi")
REDUCED_DECIMALS = 7                   # as nav reduce --json: 1e-7° is 0.0004″


@dataclass(frozen=True)
class SightExport:
    """The sights of a passage log, in time order: the batch file's rows (keys
    :data:`SIGHT_CSV_COLUMNS`), the reductions table's rows (keys :data:`REDUCTION_CSV_COLUMNS`),
    and notes for the user (a sight with no DR, a sight the chain refuses)."""

    rows: tuple[dict, ...]
    reductions: tuple[dict, ...]
    notes: tuple[str, ...]


def _decimal(v: float | None) -> str:
    """A number as positional decimals that read back exactly (the angle parsers take no
    exponent): ``-0.00001``, never ``-1e-05``."""
    return "" if v is None else format(Decimal(repr(float(v))), "f")


def _batch_hs(typed: str, hs_deg: float) -> str:
    """The typed Hs for the batch file: as typed, unless the formula quote would make it
    unreadable (then a leading ``-`` becomes U+2212 and a ``+`` is dropped); decimal degrees
    if even that does not read back as the logged value."""
    text = typed.strip()
    if neutralise_cell(text) != text:
        text = MINUS + text[1:] if text.startswith("-") else text.lstrip("+")
    try:
        if abs(parse_altitude(text) - hs_deg) <= 1e-9 and neutralise_cell(text) == text:
            return text
    except NavInputError:
        pass
    return _decimal(hs_deg)


def export_sights(log) -> SightExport:
    """The effective sights of a loaded passage log for the two CSV files (module doc)."""
    from .workflow import reduce_rows

    from .passage import Passage

    passage = Passage(log)
    for_sight = passage.reduction_view
    entries = sorted(passage.sight_entries, key=lambda e: parse_utc(e["utc"]))
    notes: list[str] = []
    pairs = []                                        # (entry, SightRow or None, passage)
    for i, e in enumerate(entries, 1):
        p = for_sight(e)
        try:
            pairs.append((e, p.sight_row(e, number=i), p))
        except NavInputError as err:
            pairs.append((e, None, p))
            notes.append(f"{e.id} ({e['body']} {e['utc']}): {err.reason}; its DR cells are "
                         "blank and it is not reduced")
    ok = [r for _, r, _ in pairs if r is not None]
    reduced: dict[int, object] = {}
    try:
        red = reduce_rows(ok) if ok else None
        reduced = {r.row: red.sight(k) for k, r in enumerate(ok)}
    except NavInputError:                              # find the sights the chain refuses
        for r in ok:
            try:
                reduced[r.row] = reduce_rows([r]).sight(0)
            except NavInputError as err:
                reduced[r.row] = err
    labels = _fix_labels(passage, notes)
    rows, table = [], []
    for i, (e, r, p) in enumerate(pairs, 1):
        s = reduced.get(i)
        if isinstance(s, NavInputError):
            notes.append(f"{e.id} ({e['body']} {e['utc']}): not reduced: {s.reason}")
        rows.append(dict(_batch_row(e, r), fix=labels.get(e.id, "")))
        table.append(_reduction_row(i, e, r, p, s))
    return SightExport(tuple(rows), tuple(table), tuple(notes))


def _fix_labels(passage, notes: list[str]) -> dict[str, str]:
    """sight id -> the id of the effective logged fix it went into, the batch file's ``fix``
    label (a sight in no fix: no label). A sight in two fixes goes with the later one; a note
    says so, as a batch row belongs to one fix only."""
    out: dict[str, str] = {}
    for f in sorted(passage.fix_entries, key=lambda f: parse_utc(f["utc"])):
        for sid in f["sight_ids"]:
            if sid in out:
                notes.append(f"{sid} went into fixes {out[sid]} and {f.id}; the batch file "
                             f"labels it {f.id} only")
            out[sid] = f.id
    return out


def _batch_row(e, r) -> dict:
    row = {"utc": e["utc"], "body": e["body"], "hs": _batch_hs(str(e["hs"]), e["hs_deg"]),
           "note": e.get("note", "")}
    if r is None:
        return row
    course = r.course_deg
    row.update(limb=r.limb if r.limb is not None else default_limb(r.body) or "",
               index_error=_decimal(r.index_error_arcmin), eye_height_m=_decimal(r.eye_height_m),
               temperature_c=_decimal(r.temperature_c), pressure_hpa=_decimal(r.pressure_hpa),
               horizon=r.horizon, dr_lat=_decimal(r.dr_lat_deg), dr_lon=_decimal(r.dr_lon_deg),
               course_deg=_decimal(course), sigma_arcmin=_decimal(r.sigma_arcmin), note=r.note,
               speed_kn=_decimal(r.speed_kn) if course is not None and r.speed_kn is not None
               else "")
    return row


def _reduction_row(i: int, e, r, p, s) -> dict:
    out = {"row": i, "id": e.id, "revised_by": e.revised_by, "utc": e["utc"],
           "time_source": e.get("time_source"), "time_text": e.get("time_text"),
           "body": e["body"], "limb": e.get("limb"), "hs": e["hs"], "hs_deg": e["hs_deg"],
           "note": e.get("note", "")}
    if r is None:
        return out
    out.update(limb=r.limb if r.limb is not None else default_limb(r.body),
               index_error_arcmin=r.index_error_arcmin, eye_height_m=r.eye_height_m,
               temperature_c=r.temperature_c, pressure_hpa=r.pressure_hpa, horizon=r.horizon,
               dr_lat_deg=r.dr_lat_deg, dr_lon_deg=r.dr_lon_deg,
               dr_basis="given with the sight" if r.dr_given else p.where(r.utc).describe())
    if isinstance(s, NavInputError):
        out["warnings"] = f"not reduced: {s.reason}"
    elif s is not None:
        out.update({k: round(float(getattr(s, k)), REDUCED_DECIMALS) for k in REDUCED})
        out["warnings"] = "; ".join(s.warnings)
    return out


def sight_rows(log) -> list[dict]:
    """The effective sights of a loaded passage log as rows of the batch file, in time order
    (:data:`SIGHT_CSV_COLUMNS`; see :func:`export_sights`)."""
    return list(export_sights(log).rows)


def reduction_rows(log) -> list[dict]:
    """The effective sights with their reductions (:data:`REDUCTION_CSV_COLUMNS`)."""
    return list(export_sights(log).reductions)


def points_from_log(log) -> tuple[list[ExportPoint], list[ExportPoint]]:
    """(fixes, track) from a loaded passage log: the effective fixes and running fixes, and the
    track of every effective DR position and fix, in time order."""
    fixes = [ExportPoint(parse_utc(e["utc"]), e["lat_deg"], e["lon_deg"], e["fix_kind"], e.id,
                         *(e.get(k) for k in _ELLIPSE), warnings=tuple(e.get("warnings", ())))
             for e in log.effective_entries("fix")]
    track = [ExportPoint(parse_utc(e["utc"]), e["lat_deg"], e["lon_deg"],
                         e.get("position_basis", "dr"), e.id)
             for e in log.effective_entries("dr") if "lat_deg" in e.data]
    return fixes, sorted(track + fixes, key=lambda p: p.utc)
