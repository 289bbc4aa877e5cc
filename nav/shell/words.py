"""The words of a shell line: tokens, option words and their values, positions.

A line is split into words (whitespace; a double-quoted word may hold spaces). A command takes
some positional words, then option words each followed by its value (``limb lower``,
``at 20:55:00``, ``eye 8 ft``): a value runs to the next option word, and ``note`` takes the rest
of the line as typed. Every value goes through the parser the batch commands use
(:mod:`nav.fields`, :mod:`nav.angles`, :mod:`nav.timekeeping`), so a value the CSV reader
accepts the shell accepts, with the same message when it does not.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Mapping

from ..angles import parse_height_m, parse_lat, parse_lon
from ..errors import NavInputError
from ..fields import SIGHT_FIELD_BY_NAME, parse_body, parse_horizon, parse_limb, parse_note
from ..timekeeping import parse_watch_error, parse_zone_description

NUMERIC_START = tuple("0123456789+-.\u2212")
POSITION_BASES = ("dr", "ep", "gps", "visual", "other")
PLOT_EXTENSIONS = (".png", ".pdf")
EXPORT_FORMATS = ("gpx", "geojson", "csv")


# ---------------------------------------------------------------- words

@dataclass(frozen=True)
class Token:
    text: str
    start: int
    end: int
    quoted: bool = False


def tokenize(line: str) -> list[Token]:
    """Words of a line with their places (so that a note keeps its text as typed)."""
    out, i, n = [], 0, len(line)
    while i < n:
        if line[i].isspace():
            i += 1
            continue
        if line[i] == '"':
            j = line.find('"', i + 1)
            if j < 0:
                raise NavInputError("a double quote is not closed", field="line",
                                    example='import "deck log.csv"')
            out.append(Token(line[i + 1:j], i, j + 1, True))
            i = j + 1
            continue
        j = i
        while j < n and not line[j].isspace():
            j += 1
        out.append(Token(line[i:j], i, j))
        i = j
    return out


@dataclass(frozen=True)
class Option:
    """An option word of a command: its completion kind, an example value and its help."""

    word: str
    kind: str
    example: str
    help: str
    parse: Callable[[str, str], dict] | None = None   # value -> entry fields (None: a time)


def _spec(name: str):
    return SIGHT_FIELD_BY_NAME[name].parse


def _typed(raw: str, parsed: str, parser) -> Callable[[str, str], dict]:
    return lambda text, fld: {raw: text, parsed: parser(text, fld)}


def _watch(text: str, fld: str) -> dict:
    seconds = parse_watch_error(text, fld).total_seconds()
    if abs(seconds) > 86_400:
        raise NavInputError(f"'{text}' is more than a day; check the zone description instead",
                            field=fld, example="12 fast or 3 slow")
    return {"watch_error": text, "watch_error_s": seconds}


def _zone(text: str, fld: str) -> dict:
    return {"zone_description": text,
            "zone_description_h": parse_zone_description(text, fld).total_seconds() / 3600.0}


def _basis(text: str, fld: str) -> dict:
    key = text.strip().lower()
    if key not in POSITION_BASES:
        raise NavInputError(f"'{text}' is not a basis of a position", field=fld,
                            example=", ".join(POSITION_BASES))
    return {"position_basis": key}


def _limb(text: str, fld: str) -> dict:
    return {"limb": parse_limb(text, fld)}


def _horizon(text: str, fld: str) -> dict:
    return {"horizon": parse_horizon(text, fld)}


def _sigma(text: str, fld: str) -> dict:
    return {"sigma_arcmin": _spec("sigma_arcmin")(text, fld)}


def _note(text: str, fld: str) -> dict:
    return {"note": parse_note(text, fld)}


def body_fields(text: str, fld: str) -> dict:
    return {"body": parse_body(text, fld)}


def hs_fields(text: str, fld: str) -> dict:
    return {"hs": text, "hs_deg": _spec("hs")(text, fld)}


def position_fields(text: str, fld: str) -> dict:
    lat_text, lon_text = split_position(text, fld)
    return {"lat": lat_text, "lat_deg": parse_lat(lat_text, "lat"),
            "lon": lon_text, "lon_deg": parse_lon(lon_text, "lon")}


OPTIONS: dict[str, Option] = {o.word: o for o in (
    Option("eye", "height", "2.5 or 8 ft", "height of eye (m, or ft)",
           _typed("eye_height", "eye_height_m", parse_height_m)),
    Option("ie", "number", "1.5", "index error, arcmin, + when the sextant reads high (on the arc)",
           _typed("index_error", "index_error_arcmin", _spec("index_error"))),
    Option("watch", "watch", "12 fast or 3 slow", "watch error (a fast watch is subtracted)",
           _watch),
    Option("zone", "zone", "+3", "zone description: UTC = ZT + ZD (west longitude +)", _zone),
    Option("temp", "number", "15", "air temperature, °C",
           _typed("temperature", "temperature_c", _spec("temperature_c"))),
    Option("pressure", "number", "1013", "air pressure, hPa",
           _typed("pressure", "pressure_hpa", _spec("pressure_hpa"))),
    Option("horizon", "horizon", "sea", "sea, artificial or bubble", _horizon),
    Option("limb", "limb", "lower", "lower, upper or center (Sun and Moon)", _limb),
    Option("sigma", "number", "1.0", "expected error of the sight (1σ), arcmin", _sigma),
    Option("at", "time", "20:55:00 or 2026-06-14T20:55:00Z", "UTC time (ISO 8601, or HH:MM:SS)"),
    Option("zt", "zt", "17:55:12 or 2026-06-14 17:55:12", "zone time read on the watch"),
    Option("course", "number", "245", "course, degrees true",
           _typed("course", "course_deg", _spec("course_deg"))),
    Option("speed", "number", "6.5", "speed, knots",
           _typed("speed", "speed_kn", _spec("speed_kn"))),
    Option("basis", "basis", "dr", "what the position rests on: " + ", ".join(POSITION_BASES),
           _basis),
    Option("note", "text", "hazy horizon", "free text to the end of the line", _note),
    Option("body", "body", "Vega", "body observed", body_fields),
    Option("hs", "number", "34 12.3", "sextant altitude", hs_fields),
    Option("position", "position", "41 12.5 N 032 07.1 W", "a position, latitude then longitude",
           position_fields),
    Option("text", "text", "reefed at dusk", "the text of a note",
           lambda t, f: {"text": parse_note(t, f)}),
    Option("lat", "text", "26 S", "latitude with its name (triangle)"),
    Option("dec", "text", "12 03.4 S", "declination with its name (triangle)"),
    Option("lha", "number", "315", "local hour angle (triangle)"),
    Option("ho", "number", "44 12.3", "observed altitude, for the intercept (triangle)"),
)}
SETTING_WORDS = ("eye", "ie", "watch", "zone", "temp", "pressure", "horizon")
SIGHT_WORDS = ("limb", "at", "zt", "ie", "eye", "temp", "pressure", "horizon", "sigma", "note")
DR_WORDS = ("course", "speed", "at", "zt", "basis", "note")
REST_WORDS = ("note", "text")
CORRECTABLE = {  # kind of entry -> the fields `correct` may change (option words)
    "sight": ("body", "hs", "limb", "at", "zt", "ie", "eye", "temp", "pressure", "horizon",
              "sigma", "note"),
    "dr": ("position", "course", "speed", "at", "zt", "basis", "note"),
    "setting": SETTING_WORDS,
    "note": ("text",),
}


def split_words(line: str, tokens: list[Token], words, *, command: str):
    """Positional tokens, and {option word: value text} (a rest word takes the line's rest)."""
    positional, options = [], {}
    current, values = None, []

    def close():
        if current is None:
            return
        if not values:
            opt = OPTIONS[current]
            raise NavInputError(f"'{current}' needs a value", field=current,
                                example=f"{current} {opt.example}")
        options[current] = " ".join(t.text for t in values)

    for tok in tokens:
        key = tok.text.lower()
        if key in words and not tok.quoted:
            close()
            if key in options or key == current:
                raise NavInputError(f"'{key}' is given twice", field=key,
                                    example=f"{command} ... {key} {OPTIONS[key].example}")
            if key in REST_WORDS:
                rest = line[tok.end:].strip()
                if not rest:
                    raise NavInputError(f"'{key}' needs its text", field=key,
                                        example=f"{key} {OPTIONS[key].example}")
                options[key] = rest
                return positional, options
            current, values = key, []
        elif current is None:
            positional.append(tok)
        else:
            values.append(tok)
    close()
    return positional, options


def option_fields(options: Mapping[str, str], skip=("at", "zt")) -> dict:
    out: dict = {}
    for word, text in options.items():
        if word not in skip:
            out.update(OPTIONS[word].parse(text, word))
    return out


def split_position(text: str, fld: str = "position") -> tuple[str, str]:
    """Latitude text and longitude text of a typed position (each parsed by nav.angles)."""
    example = "41 12.5 N 032 07.1 W, or 41.2083 -32.118"
    letters = [c for c in text.upper() if c in "NSEW"]
    if len(letters) == 2 and letters[0] in "EW" and letters[1] in "NS" and "," not in text:
        raise NavInputError(f"'{text}' gives the longitude first: are the latitude and longitude "
                            "swapped? Write the latitude first", field=fld, example=example)
    if "," in text:
        parts = [p.strip() for p in text.split(",")]
        if len(parts) != 2 or not all(parts):
            raise NavInputError(f"'{text}' is not a latitude and a longitude", field=fld,
                                example=example)
        return parts[0], parts[1]
    toks = text.split()
    ends = [i for i, t in enumerate(toks[:-1]) if t[-1] in "NSns"]
    starts = [i for i, t in enumerate(toks) if i > 0 and t[0] in "EWew"]
    if not ends and toks and toks[-1][-1] in "NSns" and not starts:
        raise NavInputError(f"'{text}' has a latitude but no longitude", field=fld,
                            example=example)
    if ends:
        k = ends[0] + 1
    elif starts:
        k = starts[0]
    elif len(toks) in (2, 4):
        k = len(toks) // 2
    else:
        raise NavInputError(f"'{text}' is not a latitude and a longitude (write N/S and E/W, or "
                            "put a comma between them)", field=fld, example=example)
    lat_text, lon_text = " ".join(toks[:k]), " ".join(toks[k:])
    hemi = [any(c in "NSEWnsew" for c in part) for part in (lat_text, lon_text)]
    if hemi[0] != hemi[1]:   # "N41 12.5" must not pass as 41° N, 12.5° E
        raise NavInputError(f"'{text}': give the hemisphere of both the latitude and the "
                            "longitude, or signed decimal degrees for both", field=fld,
                            example=example)
    return lat_text, lon_text
