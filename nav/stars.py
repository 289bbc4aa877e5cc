"""The navigational star table: the 57 navigational stars and Polaris.

The table is ``nav/data/stars.csv``, built reproducibly by ``tools/build_star_table.py`` from
the Hipparcos new reduction (van Leeuwen 2007, CDS I/311). Positions are ICRS right ascension
and declination in degrees at the catalogue epoch J1991.25, with proper motions
(``pm_ra_cosdec`` is mu_alpha times cos dec) in mas/yr, parallax in mas, and the Hipparcos
magnitude Hp (not Johnson V). Rows come in order of right ascension.

The file is read once, on first use, through ``importlib.resources``; nothing here touches the
network or imports anything heavy.
"""

from __future__ import annotations

import csv
import difflib
import io
import unicodedata
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources

from nav.errors import NavInputError, UnknownBodyError

__all__ = ["StarRecord", "star_table", "find_star", "star_names", "normalise_name"]

COLUMNS = ("name", "aliases", "hip", "ra_deg", "dec_deg", "epoch_jyear",
           "pm_ra_cosdec_mas_per_yr", "pm_dec_mas_per_yr", "parallax_mas", "hp_mag", "bayer")

_FLOAT_COLUMNS = ("ra_deg", "dec_deg", "epoch_jyear", "pm_ra_cosdec_mas_per_yr",
                  "pm_dec_mas_per_yr", "parallax_mas", "hp_mag")

#: Characters that a star name lookup ignores (besides case): blanks, apostrophes, dots, hyphens.
_IGNORED = frozenset(" \t'\u2018\u2019\u02bc`.-\u2010\u2011\u2012\u2013\u2014")

_DATA_FILE = "stars.csv"


@dataclass(frozen=True)
class StarRecord:
    """One row of the star table (ICRS, catalogue epoch ``epoch_jyear``)."""

    name: str
    aliases: tuple[str, ...]
    hip: int
    ra_deg: float
    dec_deg: float
    epoch_jyear: float
    pm_ra_cosdec_mas_per_yr: float
    pm_dec_mas_per_yr: float
    parallax_mas: float
    hp_mag: float
    bayer: str


def normalise_name(s: str) -> str:
    """The lookup key of a star name: case-folded, without blanks, apostrophes, dots, hyphens.

    >>> normalise_name("Al Na'ir") == normalise_name("alnair")
    True
    """
    if not isinstance(s, str):
        raise NavInputError(f"a star name must be text, not {type(s).__name__}",
                            field="body", example="Sirius")
    text = unicodedata.normalize("NFKC", s).casefold()
    return "".join(c for c in text if c not in _IGNORED)


def _parse_row(row: dict[str, str], rownum: int) -> StarRecord:
    values: dict[str, object] = {}
    for column in _FLOAT_COLUMNS:
        text = row[column]
        try:
            values[column] = float(text)
        except ValueError:
            raise NavInputError(f"{_DATA_FILE}: not a number: {text!r}", field=column,
                                row=rownum, example="101.2885410521") from None
    try:
        values["hip"] = int(row["hip"])
    except ValueError:
        raise NavInputError(f"{_DATA_FILE}: not a HIP number: {row['hip']!r}", field="hip",
                            row=rownum, example="32349") from None
    name = row["name"].strip()
    if not name:
        raise NavInputError(f"{_DATA_FILE}: empty star name", field="name", row=rownum,
                            example="Sirius")
    ra_deg, dec_deg = values["ra_deg"], values["dec_deg"]
    if not 0.0 <= ra_deg < 360.0:  # type: ignore[operator]
        raise NavInputError(f"{_DATA_FILE}: right ascension {ra_deg} outside [0, 360)",
                            field="ra_deg", row=rownum, example="101.2885410521")
    if not -90.0 <= dec_deg <= 90.0:  # type: ignore[operator]
        raise NavInputError(f"{_DATA_FILE}: declination {dec_deg} outside [-90, 90]",
                            field="dec_deg", row=rownum, example="-16.7131430626")
    aliases = tuple(a.strip() for a in row["aliases"].split("|") if a.strip())
    return StarRecord(name=name, aliases=aliases, bayer=row["bayer"].strip(),
                      **values)  # type: ignore[arg-type]


def parse_star_csv(text: str) -> tuple[StarRecord, ...]:
    """Parse the star table's CSV text; a bad cell raises NavInputError naming field and row."""
    reader = csv.DictReader(io.StringIO(text))
    if tuple(reader.fieldnames or ()) != COLUMNS:
        raise NavInputError(f"{_DATA_FILE}: header is {reader.fieldnames}, expected "
                            f"{','.join(COLUMNS)}", field="header", row=0,
                            example=",".join(COLUMNS))
    records = []
    for rownum, row in enumerate(reader, start=1):
        if None in row or any(v is None for v in row.values()):
            raise NavInputError(f"{_DATA_FILE}: expected {len(COLUMNS)} cells",
                                field="row", row=rownum, example=",".join(COLUMNS))
        records.append(_parse_row(row, rownum))
    return tuple(records)


def _build_index(table: tuple[StarRecord, ...]) -> dict[str, StarRecord]:
    index: dict[str, StarRecord] = {}
    for rownum, star in enumerate(table, start=1):
        for spelling in (star.name, *star.aliases):
            key = normalise_name(spelling)
            other = index.get(key)
            if other is not None and other is not star:
                raise NavInputError(f"{_DATA_FILE}: name {spelling!r} is also {other.name}",
                                    field="aliases", row=rownum)
            index[key] = star
    return index


@lru_cache(maxsize=1)
def _loaded() -> tuple[tuple[StarRecord, ...], dict[str, StarRecord]]:
    text = resources.files("nav").joinpath("data", _DATA_FILE).read_text(encoding="utf-8")
    table = parse_star_csv(text)
    return table, _build_index(table)


def star_table() -> tuple[StarRecord, ...]:
    """All rows of the star table, in order of right ascension."""
    return _loaded()[0]


def star_names() -> list[str]:
    """The canonical star names, in the table's order (right ascension)."""
    return [star.name for star in star_table()]


def find_star(name: str) -> StarRecord:
    """Look a star up by its name or an alias.

    Case, blanks, apostrophes, dots and hyphens are ignored (``"al nair"``, ``"ALNA'IR"`` and
    ``"Al Na'ir"`` are one star). An unknown name raises UnknownBodyError whose ``suggestions``
    hold the nearest canonical names.
    """
    table, index = _loaded()
    key = normalise_name(name)
    if not key:
        raise UnknownBodyError("no star name given", suggestions=[])
    star = index.get(key)
    if star is not None:
        return star
    suggestions: list[str] = []
    for match in difflib.get_close_matches(key, list(index), n=6, cutoff=0.6):
        canonical = index[match].name
        if canonical not in suggestions:
            suggestions.append(canonical)
    suggestions = suggestions[:3]
    message = f"unknown star {name!r}"
    if suggestions:
        message += "; did you mean " + " or ".join(suggestions) + "?"
    else:
        message += f"; the table holds {len(table)} navigational stars (see the star list)"
    raise UnknownBodyError(message, suggestions=suggestions)


BRIGHT_FILE = "bright_stars.csv"


@lru_cache(maxsize=1)
def bright_star_table() -> tuple[StarRecord, ...]:
    """The other stars of Hp <= 3.5 (``nav/data/bright_stars.csv``, built by
    tools/build_star_table.py): candidates for identifying a star, not for the almanac."""
    text = resources.files("nav").joinpath("data", BRIGHT_FILE).read_text(encoding="utf-8")
    return parse_star_csv(text)
