"""Log entries in navigator notation, for `log` and `show`: one line each, every field in full,
a correction's history with the values as typed, and the fixes that rest on a sight since
corrected or struck (with how far each moves when computed again).

No field name of the log (``hs_deg``, ``fix_kind`` ...) reaches the user: each has its label here.
"""

from __future__ import annotations

from ..angles import format_arcmin, format_dm, format_lat, format_lon
from ..errors import NavInputError
from ..timekeeping import format_date_hms, format_hms, parse_utc
from .times import watch_text, zone_text

LIMB_WORD = {"lower": "lower limb", "upper": "upper limb", "center": "centre"}
BASIS_WORD = {"dr": "DR", "ep": "EP", "gps": "GPS", "visual": "visual", "other": "other"}


def _utc(text: str) -> str:
    return f"{format_date_hms(parse_utc(text))} UTC"


def _typed(d, raw: str, shown: str, value=None) -> str:
    """`shown`, with the value as typed beside it where that says more than the number."""
    typed = d.get(raw)
    if typed is None:
        return shown
    text = str(typed).strip()
    plain = {shown} | ({f"{value:g}", f"{value:+g}"} if isinstance(value, (int, float)) else set())
    return shown if text in plain else f"{shown} (typed {typed})"


def _east_west(deg: float) -> str:
    """A compass error, variation or deviation in the trade's words (nav.compass.ew)."""
    from ..compass import ew

    return ew(deg)


# field -> (label, how it is shown); a value as typed rides beside its parsed twin
FIELDS: dict[str, tuple[str, object]] = {
    "vessel": ("vessel", lambda d, k: d[k]),
    "title": ("passage", lambda d, k: d[k]),
    "utc": ("time", lambda d, k: _utc(d[k]) + (f" (typed {d['time_text']})"
                                               if d.get("time_text") not in (None, "now") and
                                               d.get("time_source") != "watch" else "")),
    "body": ("body", lambda d, k: d[k]),
    "limb": ("limb", lambda d, k: LIMB_WORD.get(d[k], d[k])),
    "hs_deg": ("Hs", lambda d, k: _typed(d, "hs", format_dm(d[k]), d[k])),
    "lat_deg": ("position", lambda d, k: f"{format_lat(d[k])} {format_lon(d['lon_deg'])}"),
    "dr_lat_deg": ("DR given", lambda d, k: f"{format_lat(d[k])} {format_lon(d['dr_lon_deg'])}"),
    "position_basis": ("basis", lambda d, k: BASIS_WORD.get(d[k], d[k])),
    "course_deg": ("course", lambda d, k: _typed(d, "course", f"{d[k]:05.1f}°", d[k])),
    "speed_kn": ("speed", lambda d, k: _typed(d, "speed", f"{d[k]:g} kn", d[k])),
    "eye_height_m": ("height of eye", lambda d, k: _typed(d, "eye_height", f"{d[k]:.2f} m", d[k])),
    "index_error_arcmin": ("index error", lambda d, k: _typed(d, "index_error",
                                                              format_arcmin(d[k]), d[k])),
    "watch_error_s": ("watch error", lambda d, k: _typed(d, "watch_error", watch_text(d[k]),
                                                         d[k])),
    "zone_description_h": ("zone", lambda d, k: _typed(d, "zone_description", zone_text(d[k]),
                                                       d[k])),
    "temperature_c": ("temperature", lambda d, k: _typed(d, "temperature", f"{d[k]:g} °C", d[k])),
    "pressure_hpa": ("pressure", lambda d, k: _typed(d, "pressure", f"{d[k]:g} hPa", d[k])),
    "horizon": ("horizon", lambda d, k: d[k]),
    "sigma_arcmin": ("expected error", lambda d, k: f"{d[k]:g}′ (1σ)"),
    "fix_kind": ("kind", lambda d, k: d[k].replace("_", " ")),
    "compass_bearing_deg": ("compass bearing", lambda d, k: f"{d[k]:05.1f}°"),
    "heading_deg": ("heading", lambda d, k: f"{d[k]:05.1f}° by compass"),
    "zn_deg": ("Zn", lambda d, k: f"{d[k]:05.1f}°"),
    "compass_error_deg": ("compass error", lambda d, k: _east_west(d[k])),
    "variation_deg": ("variation", lambda d, k: _east_west(d[k])),
    "deviation_deg": ("deviation", lambda d, k: _east_west(d[k])),
    "sight_ids": ("from sights", lambda d, k: " ".join(d[k])),
    "ellipse_semi_major_nmi": ("error ellipse", lambda d, k: (
        f"{d[k]:.1f} × {d['ellipse_semi_minor_nmi']:.1f} nmi (semi-axes)"
        + (f", major axis {d['ellipse_orientation_deg']:05.1f}°"
           if "ellipse_orientation_deg" in d else "")
        + (f", {d['ellipse_confidence']:.0%} confidence" if "ellipse_confidence" in d else ""))),
    "method": ("method", lambda d, k: d[k]),
    "warnings": ("warnings", lambda d, k: "; ".join(d[k]) if d[k] else "none"),
    "source": ("entered from", lambda d, k: {"shell": "the shell"}.get(d[k], d[k])),
    "text": ("text", lambda d, k: d[k]),
    "note": ("note", lambda d, k: d[k]),
    "side_file": ("set aside in", lambda d, k: d[k]),
    "torn_line": ("torn line", lambda d, k: str(d[k])),
    "torn_bytes": ("bytes", lambda d, k: str(d[k])),
    "format": ("format", lambda d, k: f"{d[k]} version {d.get('format_version', '?')}"),
    "software": ("written by", lambda d, k: d[k]),
}
# shown through their twin, or not at all
HIDDEN = {"id", "kind", "logged_utc", "hs", "lat", "lon", "lon_deg", "dr_lat", "dr_lon",
          "dr_lon_deg", "course", "speed", "eye_height", "index_error", "watch_error",
          "zone_description", "temperature", "pressure", "time_text", "time_source",
          "ellipse_semi_minor_nmi", "ellipse_orientation_deg", "ellipse_confidence",
          "format_version", "passage_uid", "torn_sha256"}
# a field as typed -> the field it is shown as (for a correction's history)
TWIN = {"hs": "hs_deg", "lat": "lat_deg", "lon": "lat_deg", "lon_deg": "lat_deg",
        "dr_lat": "dr_lat_deg", "dr_lon": "dr_lat_deg", "dr_lon_deg": "dr_lat_deg",
        "course": "course_deg", "speed": "speed_kn", "eye_height": "eye_height_m",
        "index_error": "index_error_arcmin", "watch_error": "watch_error_s",
        "zone_description": "zone_description_h", "temperature": "temperature_c",
        "pressure": "pressure_hpa", "time_text": "utc", "time_source": "utc",
        "ellipse_semi_minor_nmi": "ellipse_semi_major_nmi",
        "ellipse_orientation_deg": "ellipse_semi_major_nmi",
        "ellipse_confidence": "ellipse_semi_major_nmi"}


def field_lines(data, indent: str = "  ") -> list[str]:
    """Every field of an entry, labelled, in navigator notation."""
    out = []
    for k in data:
        if k in HIDDEN:
            continue
        label, show = FIELDS.get(k, (k.replace("_", " "), lambda d, k: str(d[k])))
        out.append(f"{indent}{label:<14} {show(data, k)}")
    return out


def shown_value(data, key: str) -> str:
    """One field as `show` has it (by the field it is shown as), or ``(none)``."""
    key = TWIN.get(key, key)
    if key not in data:
        return "(none)"
    if key == "utc" and data.get("time_source") == "watch":
        return (f"watch {data.get('time_text', '?')}, ZD {zone_text(data['zone_description_h'])}"
                f" -> {_utc(data['utc'])}")
    return FIELDS.get(key, ("", lambda d, k: str(d[k])))[1](data, key)


def changed_labels(keys) -> str:
    """The fields a correction names, as the user knows them."""
    return ", ".join(dict.fromkeys(FIELDS.get(TWIN.get(k, k), (k.replace("_", " "),))[0]
                                   for k in keys))


def changes(before, after) -> list[str]:
    """What a correction changed, as shown and as typed:
    ``Hs: 52°08.4′ (typed 52 08.4) -> 52°18.4′ (typed 52 18.4)``."""
    keys = [k for k in dict.fromkeys([*before, *after]) if k not in ("id", "kind", "logged_utc")
            and before.get(k) != after.get(k)]
    shown = list(dict.fromkeys(TWIN.get(k, k) for k in keys))
    return [f"{FIELDS.get(k, (k.replace('_', ' '),))[0]}: {shown_value(before, k)} -> "
            f"{shown_value(after, k)}" for k in shown]


# ---------------------------------------------------------------- one line each

_SETTING_WORDS = (  # field -> how the summary shows it
    ("eye_height_m", lambda v: f"eye {v:.2f} m"),
    ("index_error_arcmin", lambda v: f"IE {format_arcmin(v)}"),
    ("watch_error_s", lambda v: f"watch {watch_text(v)}"),
    ("zone_description_h", lambda v: f"zone {zone_text(v)}"),
    ("temperature_c", lambda v: f"temp {v:g} °C"),
    ("pressure_hpa", lambda v: f"pressure {v:g} hPa"),
    ("horizon", lambda v: f"horizon {v}"),
    ("vessel", lambda v: f"vessel {v}"),
    ("title", lambda v: f"passage title {v}"),
)


def setting_summary(data) -> str:
    return ", ".join(show(data[name]) for name, show in _SETTING_WORDS if name in data)


def dr_summary(data) -> str:
    bits = []
    if "lat_deg" in data:
        bits.append(f"{format_lat(data['lat_deg'])} {format_lon(data['lon_deg'])}"
                    + (f" ({data['position_basis'].upper()})" if data.get("position_basis",
                                                                          "dr") != "dr" else ""))
    if "course_deg" in data:
        bits.append(f"course {data['course_deg']:05.1f}°")
    if "speed_kn" in data:
        bits.append(f"speed {data['speed_kn']:g} kn")
    return ", ".join(bits)


def sight_summary(data) -> str:
    limb = f" {LIMB_WORD[data['limb']]}" if data.get("limb") else ""
    return (f"{data['body']}{limb} Hs {format_dm(data['hs_deg'])} at "
            f"{format_hms(parse_utc(data['utc']))}")


def summary(e) -> str:
    d = e.data
    if e.kind == "setting":
        return setting_summary(d)
    if e.kind == "dr":
        return dr_summary(d)
    if e.kind == "sight":
        return sight_summary(d)
    if e.kind == "fix":
        size = (f", ellipse {d['ellipse_semi_major_nmi']:.1f} × {d['ellipse_semi_minor_nmi']:.1f}"
                " nmi" if "ellipse_semi_major_nmi" in d else "")
        warn = f", {len(d.get('warnings', ()))} warning(s)" if d.get("warnings") else ""
        return (f"{d['fix_kind'].replace('_', ' ')} {format_lat(d['lat_deg'])} "
                f"{format_lon(d['lon_deg'])} from {' '.join(d['sight_ids'])}{size}{warn}")
    if e.kind == "note":
        text = " ".join(d["text"].split())
        return text if len(text) <= 60 else text[:57] + "..."
    if e.kind == "compass_check":
        from .sky_cmds import compass_summary

        return compass_summary(d)
    if e.kind == "strike":
        return f"strikes {d['target']}: {d['reason']}"
    if e.kind == "correct":
        return f"corrects {d['target']}: {d['reason']}"
    if e.kind == "repair":
        return f"torn line {d['torn_line']} set aside in {d['side_file']}"
    if e.kind in ("current", "watch_check"):        # issue 10
        from .checks_cmds import entry_text

        return entry_text(e.kind, d)
    return ""


# ---------------------------------------------------------------- fixes on sights since changed

def changed_sights(log, fix) -> list[tuple[str, str, str]]:
    """(sight id, 'corrected' or 'struck', by which entry) for each sight of `fix` corrected or
    struck after the fix was logged."""
    limit = int(fix.id[1:])
    out = []
    for sid in fix["sight_ids"]:
        try:
            later = [h for h in log.history_of(sid)[1:] if int(h.id[1:]) > limit]
        except NavInputError:
            continue
        for h in later:
            out.append((sid, "corrected" if h.kind == "correct" else "struck", h.id))
    return out


def stale_note(st, fix) -> str | None:
    """Why a logged fix no longer stands as computed, and how far it moves computed again with
    the sights as they now stand (None: its sights are as they were)."""
    from ..passage import passage_before
    from ..sailing import rhumb_line

    changed = changed_sights(st.log, fix)
    if not changed:
        return None
    cache = st.__dict__.setdefault("_stale_cache", {})
    key = (fix.id, len(st.log.entries))
    if key in cache:
        return cache[key]
    what = ", ".join(f"{sid} {how} by {by}" for sid, how, by in changed)
    standing = [sid for sid in fix["sight_ids"] if st.log.effective_by_id(sid) is not None]
    try:
        result, _ = passage_before(st.passage, fix.id).fix_from(standing)
        _, moved = rhumb_line(fix["lat_deg"], fix["lon_deg"], result.fix.lat_deg,
                              result.fix.lon_deg)
        again = (f"computed again from {' '.join(standing)} it moves {float(moved):.1f} nmi, to "
                 f"{format_lat(result.fix.lat_deg)} {format_lon(result.fix.lon_deg)}")
    except NavInputError as err:
        again = f"it cannot be computed again ({err.reason})"
    note = f"rests on {what}; {again}"
    cache[key] = note
    return note
